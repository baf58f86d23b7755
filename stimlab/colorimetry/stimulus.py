"""One colour on one background on one display: every space at once, with the gamut and bit-depth verdict.

This is the hub the command line, the web app and the protocol compiler share, so a colour reads the same
everywhere: :class:`Background` fixes the adapting point, :meth:`Background.colour_to_LMS` turns a colour given
in any supported space into cone excitations, and :meth:`Background.describe` reports it in all of them.

Notes
-----
=======================  ============================================================  =====================
Space                    Coordinates                                                   Relative to
=======================  ============================================================  =====================
``cone_contrast``        L, M, S contrast, above −1                                    the background
``dkl``                  lum, L−M, S in pooled cone contrast (Brainard 1996)           the background
``dkl_display_maximum``  lum, L−M, S as fractions of the gamut edge along each + axis  the background, gamut
``macleod_boynton``      l (0..1), s (≥ 0), luminance (cd/m²) (CIE 170-2:2015)         —
``lms``                  cone excitations, ``w_L·L + w_M·M`` in cd/m²                  —
``rgb_linear``           fraction of each primary's full drive above black, 0..1       —
=======================  ============================================================  =====================
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ..errors import InputError
from ._colour import colour
from .device import (
    RGB_linear_to_device,
    channel_first_to_device,
    is_within_gamut,
    quantisation_cone_contrast,
)
from .display import CHANNELS, DisplayModel
from .gamut import DKL_axis_limits, scale_limit
from .rods import NOT_AVAILABLE
from .spaces import (
    DKL_to_LMS,
    LMS_to_cone_contrast,
    LMS_to_DKL,
    LMS_to_MacLeod_Boynton,
    MacLeod_Boynton_to_LMS,
    as_triplets,
    cone_contrast_to_LMS,
    matrix_DKL_directions,
)

__all__ = ["Background", "COLOUR_SPACES", "DKL_AXES"]

COLOUR_SPACES = ("cone_contrast", "dkl", "dkl_display_maximum", "macleod_boynton", "lms", "rgb_linear")
"""Spaces a colour can be given in; the first five are relative to (or scaled by) the background."""

DKL_AXES = ("lum", "L-M", "S")
"""Names of the DKL axes, in coordinate order."""

_BLOCKED_SCALE = 1e-12
"""A positive-axis gamut scale at or below this (pooled cone contrast units) means no room at all."""


class Background:
    """The background (adapting point) on a display.

    Parameters
    ----------
    model
        The display seen by the observer.
    RGB_0
        Background linear RGB, shape (3,), each 0..1.
    field
        Name to use in error messages for where the background came from.

    Raises
    ------
    InputError
        If ``RGB_0`` is not three finite numbers or lies outside 0..1 (naming ``field``).

    Attributes
    ----------
    DKL_limits : ndarray (3, 2)
        Gamut limits along each DKL axis (rows lum, L−M, S; negative and positive side), in units of the
        pooled-cone-contrast unit directions.
    blocked_DKL_axes : tuple of int
        Axes whose positive limit is 0: the background sits on the gamut's edge there (a channel at 0 or full
        drive), so "fraction of the display maximum" is undefined along them (:meth:`display_maximum_note`).
    LMS_0 : ndarray (3,)
        Background cone excitations. ``D`` : ndarray (3, 3), the DKL unit directions in ΔLMS (columns).

    Examples
    --------
    >>> from stimlab.colorimetry.display import CHANNELS, DisplayModel
    >>> profile = {"name": "Example", "bits": 8, "sha256": "0" * 64,
    ...            "transfer": {c: {"model": "power", "parameters": {"gamma": 2.2}} for c in CHANNELS},
    ...            "primaries": {"kind": "chromaticities", "red": (0.64, 0.33, 21.26), "green": (0.30, 0.60, 71.52),
    ...                          "blue": (0.15, 0.06, 7.22), "black": (0.3127, 0.3290, 0.2)}}
    >>> background = Background(DisplayModel(profile), [0.5, 0.5, 0.5])
    >>> background.to_device("cone_contrast", [0.1, 0.1, 0.1]).tolist()  # 10 % brighter than mid-grey
    [194, 194, 194]
    >>> np.round(background.to_RGB_linear("dkl_display_maximum", [0.5, 0.0, 0.0]), 4).tolist()
    [0.75, 0.75, 0.75]
    >>> np.round(background.LMS_to_space("cone_contrast", background.colour_to_LMS("dkl", [0.1, 0, 0])), 6).tolist()
    [0.057735, 0.057735, 0.057735]
    """

    def __init__(self, model: DisplayModel, RGB_0: ArrayLike, field: str = "background"):
        RGB_0 = np.asarray(RGB_0, dtype=float)
        if RGB_0.shape != (3,) or not np.all(np.isfinite(RGB_0)):
            raise InputError("background must be three finite numbers", field=field)
        if not is_within_gamut(RGB_0):
            raise InputError(f"background linear RGB {np.round(RGB_0, 4).tolist()} lies outside the display gamut "
                             "0..1; choose a background the display can show", field=field)
        self.model = model
        self.RGB_0 = RGB_0
        self.LMS_0 = model.RGB_linear_to_LMS(RGB_0)
        obs = model.observer
        self.D = matrix_DKL_directions(self.LMS_0, obs.w_L, obs.w_M)
        self.DKL_limits = DKL_axis_limits(model, RGB_0, self.D)
        self.blocked_DKL_axes = tuple(int(a) for a in np.flatnonzero(self.DKL_limits[:, 1] <= _BLOCKED_SCALE))

    @classmethod
    def from_LMS(cls, model: DisplayModel, LMS_0: ArrayLike, field: str = "background") -> "Background":
        """The background with cone excitations ``LMS_0`` (shape (3,)); raises InputError if out of gamut."""
        return cls(model, model.LMS_to_RGB_linear(LMS_0), field)

    @classmethod
    def from_MacLeod_Boynton(cls, model: DisplayModel, l: float, s: float, luminance: float,
                             field: str = "background") -> "Background":
        """The background at MacLeod–Boynton ``(l, s)`` and luminance.

        Parameters
        ----------
        model, field
            As for :class:`Background`.
        l, s, luminance
            MacLeod–Boynton chromaticity (CIE 170-2:2015 scaling: l in 0..1, s ≥ 0) and luminance in cd/m², > 0.

        Raises
        ------
        InputError
            For a non-positive luminance or a colour outside the display's gamut, naming ``field``.
        """
        obs = model.observer
        try:
            LMS = MacLeod_Boynton_to_LMS([l, s, luminance], obs.w_L, obs.w_M, obs.k_S)
        except ValueError as error:
            raise InputError(str(error), field=field) from None
        return cls.from_LMS(model, LMS, field)

    # -- colours --------------------------------------------------------------------------------------------
    def _conversions(self, space: str):
        """``(to_LMS, from_LMS)`` for ``space``."""
        obs = self.model.observer
        w, LMS_0 = (obs.w_L, obs.w_M), self.LMS_0
        table = {
            "cone_contrast": (lambda v: cone_contrast_to_LMS(v, LMS_0), lambda v: LMS_to_cone_contrast(v, LMS_0)),
            "dkl": (lambda v: DKL_to_LMS(v, LMS_0, *w), lambda v: LMS_to_DKL(v, LMS_0, *w)),
            "dkl_display_maximum": (lambda v: DKL_to_LMS(self._display_maximum_to_DKL(v), LMS_0, *w),
                                    self._LMS_to_display_maximum),
            "macleod_boynton": (lambda v: MacLeod_Boynton_to_LMS(v, *w, obs.k_S),
                                lambda v: LMS_to_MacLeod_Boynton(v, *w, obs.k_S)),
            "lms": (lambda v: np.asarray(v, dtype=float), lambda v: np.asarray(v, dtype=float)),
            "rgb_linear": (self.model.RGB_linear_to_LMS, self.model.LMS_to_RGB_linear),
        }
        if space not in table:
            raise ValueError(f"unknown colour space {space!r}; choose one of: {', '.join(COLOUR_SPACES)}")
        return table[space]

    def _display_maximum_to_DKL(self, values) -> np.ndarray:
        """Pooled-normalisation DKL of coordinates given as fractions of the display maximum.

        Along a blocked axis (the background on the gamut's edge) only 0 is meaningful: there is no room at all.
        """
        values = as_triplets(values, "DKL (fraction of display maximum)")
        for axis in self.blocked_DKL_axes:
            if np.any(values[..., axis] != 0):
                raise ValueError(f"DKL {DKL_AXES[axis]} as a fraction of the display maximum is undefined here: "
                                 f"{self.display_maximum_note()}; give this colour in DKL or cone contrast")
        return values * self._display_maximum_scale()

    def _display_maximum_scale(self) -> np.ndarray:
        """The positive-axis gamut limits, with 0 along blocked axes."""
        limits = self.DKL_limits[:, 1].copy()
        limits[list(self.blocked_DKL_axes)] = 0.0
        return limits

    def _LMS_to_display_maximum(self, LMS) -> np.ndarray:
        """DKL as fractions of the display maximum; NaN along blocked axes, where it is undefined."""
        pooled = LMS_to_DKL(LMS, self.LMS_0, self.model.observer.w_L, self.model.observer.w_M)
        limits = self._display_maximum_scale()
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.where(limits > 0, pooled / np.where(limits > 0, limits, 1.0), np.nan)

    def display_maximum_note(self) -> str | None:
        """Why DKL as a fraction of the display maximum is undefined along some axes, or ``None`` if it is not.

        The normalisation puts 1 at the gamut's edge along each positive axis from the background. A background
        with a channel at 0 or at full drive can sit on that edge already: the limit is 0 and nothing can be
        expressed as a fraction of it. Such a background is legitimate; only these coordinates are undefined.
        """
        if not self.blocked_DKL_axes:
            return None
        parts = []
        for axis in self.blocked_DKL_axes:
            delta_RGB = self.model.M_LMS_inverse @ self.D[:, axis]
            _, channel = scale_limit(self.RGB_0, delta_RGB)
            channel = int(channel)
            edge = "full drive" if delta_RGB[channel] > 0 else "0"
            parts.append(f"+{DKL_AXES[axis]} ({CHANNELS[channel]} channel already at {edge})")
        return ("the background lies on the gamut's edge along " + ", ".join(parts)
                + ": the display maximum there is 0, so the fraction of it is undefined")

    def colour_to_LMS(self, space: str, values: ArrayLike) -> NDArray[np.float64]:
        """Cone excitations of colours given in ``space``.

        Parameters
        ----------
        space
            One of :data:`COLOUR_SPACES` (units in the module's Notes).
        values
            Coordinates in ``space``, shape (..., 3).

        Returns
        -------
        ndarray of float64, shape (..., 3)
            L, M, S, scaled so that ``w_L·L + w_M·M`` is luminance in cd/m².

        Raises
        ------
        ValueError
            For an unknown space (listing the valid ones), NaN or infinity, a bad shape, or a non-zero
            ``dkl_display_maximum`` coordinate along a blocked axis.
        """
        return self._conversions(space)[0](values)

    def LMS_to_space(self, space: str, LMS: ArrayLike) -> NDArray[np.float64]:
        """Coordinates in ``space`` of cone excitations ``LMS`` (shape (..., 3)), the inverse of :meth:`colour_to_LMS`.

        ``dkl_display_maximum`` is NaN along blocked axes, where it is undefined.
        """
        return self._conversions(space)[1](LMS)

    def affine_to_RGB_linear(self, space: str) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        """``(A, b)`` with ``RGB = values @ A.T + b`` for the spaces linear in cone excitations.

        Composing the chain into one affine map makes whole images cheap: one matrix product per pixel.

        Returns
        -------
        A : ndarray of float64, shape (3, 3)
            Linear RGB per unit of each coordinate of ``space``.
        b : ndarray of float64, shape (3,)
            Linear RGB of the zero coordinates (the background for the relative spaces).

        Raises
        ------
        ValueError
            For ``macleod_boynton`` (not linear in cone excitations) or an unknown space.
        """
        M_inverse = self.model.M_LMS_inverse
        if space == "dkl":
            return M_inverse @ self.D, self.RGB_0
        if space == "dkl_display_maximum":
            # Blocked axes get a zero column; to_RGB_linear and to_device refuse a non-zero value along them.
            return M_inverse @ (self.D * self._display_maximum_scale()), self.RGB_0
        if space == "cone_contrast":
            return M_inverse * self.LMS_0[None, :], self.RGB_0
        if space == "lms":
            return M_inverse, -M_inverse @ self.model.LMS_black
        if space == "rgb_linear":
            return np.eye(3), np.zeros(3)
        raise ValueError(f"{space!r} is not linear in cone excitations; use colour_to_LMS")

    def to_RGB_linear(self, space: str, values: ArrayLike) -> NDArray[np.float64]:
        """Linear RGB of colours given in ``space`` (shape (..., 3)), shape (..., 3); may lie outside 0..1.

        Nothing is clipped: check with :func:`stimlab.colorimetry.device.is_within_gamut`. Raises ValueError as
        :meth:`colour_to_LMS`.
        """
        if space == "macleod_boynton":
            return self.model.LMS_to_RGB_linear(self.colour_to_LMS(space, values))
        if space == "dkl_display_maximum":
            self._display_maximum_to_DKL(values)
        A, b = self.affine_to_RGB_linear(space)
        RGB = as_triplets(values, space) @ A.T
        RGB += b
        return RGB

    def to_device(self, space: str, values: ArrayLike) -> NDArray[np.int_]:
        """Device levels of colours given in ``space``.

        Parameters
        ----------
        space, values
            As for :meth:`colour_to_LMS`.

        Returns
        -------
        ndarray of int, shape (..., 3)
            Device levels, 0..2^bits − 1, through the inverse of each channel's transfer model.

        Raises
        ------
        ValueError
            If any colour lies outside the gamut (nothing is clipped here), or as :meth:`colour_to_LMS`.
        """
        if space == "macleod_boynton":
            return RGB_linear_to_device(self.to_RGB_linear(space, values), self.model.level_outputs)
        values = as_triplets(values, space)
        if space == "dkl_display_maximum":
            self._display_maximum_to_DKL(values)
        A, b = self.affine_to_RGB_linear(space)
        RGB = A @ values.reshape(-1, 3).T  # channel-first (3, N): contiguous rows for the level search
        RGB += b[:, None]
        return channel_first_to_device(RGB, self.model.level_outputs).reshape(values.shape)

    def in_gamut_scale(self, LMS: ArrayLike) -> tuple[NDArray[np.float64], NDArray[np.int_]]:
        """In-gamut scale of each colour's difference from the background, and the limiting channel.

        ``LMS`` has shape (..., 3); the scale (≥ 0, ``inf`` for the background itself) is ≥ 1 exactly for colours
        in gamut, and the channel is 0, 1, 2 for red, green, blue (−1 for none): see
        :func:`stimlab.colorimetry.gamut.scale_limit`.
        """
        delta_RGB = self.model.LMS_to_RGB_linear(LMS) - self.RGB_0
        return scale_limit(self.RGB_0, delta_RGB)

    def rods(self, RGB: ArrayLike) -> dict:
        """Rod contrast against this background and scotopic luminance of linear RGB ``RGB`` (shape (3,)).

        Returns
        -------
        dict
            ``rod_contrast`` (dimensionless), ``scotopic_luminance_cd_m2`` (scotopic cd/m²) and
            ``background_scotopic_luminance_cd_m2``, each ``None`` with the reason in ``rods_note`` for a profile
            given as xyY (rod excitation needs spectra and is never guessed).

        Raises
        ------
        ValueError
            If the background's scotopic luminance (CIE 1951 V′(λ), :mod:`~stimlab.colorimetry.rods`) is 0.
        """
        rods = self.model.rods
        if rods is None:
            return {"rod_contrast": None, "scotopic_luminance_cd_m2": None,
                    "background_scotopic_luminance_cd_m2": None, "rods_note": NOT_AVAILABLE}
        return {"rod_contrast": float(rods.rod_contrast(RGB, self.RGB_0)),
                "scotopic_luminance_cd_m2": float(rods.scotopic_luminance(RGB)),
                "background_scotopic_luminance_cd_m2": float(rods.scotopic_luminance(self.RGB_0)),
                "rods_note": None}

    def describe(self, LMS: ArrayLike) -> dict:
        """One colour in every space, with its device levels, gamut verdict and quantisation grain.

        Parameters
        ----------
        LMS
            Cone excitations of one colour, shape (3,).

        Returns
        -------
        dict
            JSON-able, keys as the ``stimlab convert --json`` contract: every space of :data:`COLOUR_SPACES`,
            ``luminance_cd_m2``, CIE ``xyY`` (Y in cd/m²) and ``lab`` (white = full drive), ``rgb_device`` (device
            levels, ``None`` out of gamut), ``out_of_gamut`` (how far each offending channel lies outside 0..1),
            ``quantisation_cone_contrast`` (one device level in cone contrast), ``max_scale_in_gamut``,
            ``limiting_channel``, the display and observer, and the rod figures of :meth:`rods`.
        """
        model, obs = self.model, self.model.observer
        LMS = np.asarray(LMS, dtype=float)
        RGB = model.LMS_to_RGB_linear(LMS)
        inside = bool(is_within_gamut(RGB))
        scale, channel = self.in_gamut_scale(LMS)
        XYZ = model.RGB_linear_to_XYZ(RGB)
        white = model.RGB_linear_to_XYZ(np.ones(3))
        result = {
            "rgb_linear": RGB.tolist(),
            "in_gamut": inside,
            "rgb_device": None,
            "out_of_gamut": None,
            "lms": LMS.tolist(),
            "cone_contrast": LMS_to_cone_contrast(LMS, self.LMS_0).tolist(),
            "dkl": LMS_to_DKL(LMS, self.LMS_0, obs.w_L, obs.w_M).tolist(),
            "dkl_display_maximum": [None if np.isnan(v) else float(v)
                                    for v in self.LMS_to_space("dkl_display_maximum", LMS)],
            "dkl_display_maximum_note": self.display_maximum_note(),
            "macleod_boynton": LMS_to_MacLeod_Boynton(LMS, obs.w_L, obs.w_M, obs.k_S)[:2].tolist(),
            "luminance_cd_m2": float(obs.w_L * LMS[0] + obs.w_M * LMS[1]),
            "xyY": colour.XYZ_to_xyY(XYZ).tolist(),
            "lab": colour.XYZ_to_Lab(XYZ / white[1], colour.XYZ_to_xy(white)).tolist(),
            "quantisation_cone_contrast": None,
            "max_scale_in_gamut": float(scale),
            "limiting_channel": CHANNELS[int(channel)] if channel >= 0 else None,
            "background_rgb_linear": self.RGB_0.tolist(),
            "observer": obs.key,
            "display_name": model.profile["name"],
            "display_hash": model.sha256,
            "approximate_primaries": model.is_approximate,
            **self.rods(RGB),
        }
        if inside:
            levels = RGB_linear_to_device(np.clip(RGB, 0.0, 1.0), model.level_outputs)
            result["rgb_device"] = levels.tolist()
            result["quantisation_cone_contrast"] = quantisation_cone_contrast(
                levels, model.level_outputs, model.M_LMS, self.LMS_0).tolist()
        else:
            result["out_of_gamut"] = {
                CHANNELS[c]: float(RGB[c] - 1.0 if RGB[c] > 1 else RGB[c])
                for c in range(3) if not 0.0 <= RGB[c] <= 1.0
            }
        return result
