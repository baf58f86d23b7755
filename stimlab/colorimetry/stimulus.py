"""One colour on one background on one display: every space at once, with the gamut and bit-depth verdict.

This is the hub the command line, the web app and the protocol compiler share, so a colour reads the same
everywhere: :class:`Background` fixes the adapting point, :meth:`Background.colour_to_LMS` turns a colour given
in any supported space into cone excitations, and :meth:`Background.describe` reports it in all of them
(:mod:`~stimlab.colorimetry.description`; the display maximum of DKL: :mod:`~stimlab.colorimetry.display_maximum`).

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

References
----------
- Brainard, D. H. (1996). Cone contrast and opponent modulation color spaces. Human Color Vision, 2nd ed. (DKL).
- MacLeod, D. I. A., & Boynton, R. M. (1979). JOSA, 69, 1183–1186; CIE 170-2:2015 for the scaling used.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ..errors import InputError
from .description import describe_colour, rod_figures
from .device import RGB_linear_to_device, channel_first_to_device, is_within_gamut
from .display import DisplayModel
from .display_maximum import DisplayMaximum
from .gamut import scale_limit
from .spaces import (
    DKL_AXES,  # exported here too: the display summary imports it with Background
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
    LMS_0 : ndarray (3,)
        Background cone excitations. ``D`` : ndarray (3, 3), the DKL unit directions in ΔLMS (columns).
    display_maximum : DisplayMaximum
        The display-maximum normalisation of DKL here. ``DKL_limits`` (ndarray (3, 2): gamut limits along lum,
        L−M, S, negative and positive side, pooled cone contrast) and ``blocked_DKL_axes`` (axes with no room on
        the positive side, :meth:`display_maximum_note`) are its ``limits`` and ``blocked_axes``.

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
        self.display_maximum = DisplayMaximum(model, RGB_0, self.D)
        self.DKL_limits = self.display_maximum.limits
        self.blocked_DKL_axes = self.display_maximum.blocked_axes

    @classmethod
    def from_LMS(cls, model: DisplayModel, LMS_0: ArrayLike, field: str = "background") -> Background:
        """The background with given cone excitations.

        Parameters
        ----------
        model
            The display seen by the observer.
        LMS_0
            Background cone excitations, shape (3,), scaled so that ``w_L·L + w_M·M`` is luminance in cd/m².
        field
            Name to use in error messages for where the background came from.

        Returns
        -------
        Background
            The background at linear RGB ``model.LMS_to_RGB_linear(LMS_0)``.

        Raises
        ------
        InputError
            If that linear RGB lies outside 0..1 (out of gamut) or is not finite, naming ``field``.
        """
        return cls(model, model.LMS_to_RGB_linear(LMS_0), field)

    @classmethod
    def from_MacLeod_Boynton(cls, model: DisplayModel, l: float, s: float, luminance: float,
                             field: str = "background") -> Background:
        """The background at MacLeod–Boynton ``(l, s)`` and luminance.

        Parameters
        ----------
        model, field
            As for :class:`Background`.
        l, s, luminance
            MacLeod–Boynton chromaticity (MacLeod & Boynton 1979, CIE 170-2:2015 scaling: l in 0..1, s ≥ 0) and
            luminance in cd/m², > 0.

        Returns
        -------
        Background
            The background with those cone excitations.

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

    def _conversions(self, space: str):
        """``(to_LMS, from_LMS)`` for ``space``."""
        obs = self.model.observer
        w, LMS_0 = (obs.w_L, obs.w_M), self.LMS_0
        table = {
            "cone_contrast": (lambda v: cone_contrast_to_LMS(v, LMS_0), lambda v: LMS_to_cone_contrast(v, LMS_0)),
            "dkl": (lambda v: DKL_to_LMS(v, LMS_0, *w), lambda v: LMS_to_DKL(v, LMS_0, *w)),
            "dkl_display_maximum": (lambda v: DKL_to_LMS(self.display_maximum.to_DKL(v), LMS_0, *w),
                                    lambda v: self.display_maximum.from_DKL(LMS_to_DKL(v, LMS_0, *w))),
            "macleod_boynton": (lambda v: MacLeod_Boynton_to_LMS(v, *w, obs.k_S),
                                lambda v: LMS_to_MacLeod_Boynton(v, *w, obs.k_S)),
            "lms": (lambda v: np.asarray(v, dtype=float), lambda v: np.asarray(v, dtype=float)),
            "rgb_linear": (self.model.RGB_linear_to_LMS, self.model.LMS_to_RGB_linear),
        }
        if space not in table:
            raise ValueError(f"unknown colour space {space!r}; choose one of: {', '.join(COLOUR_SPACES)}")
        return table[space]

    def display_maximum_note(self) -> str | None:
        """Why DKL as a fraction of the display maximum is undefined along some axes, or ``None`` if it is not.

        A background with a channel at 0 or full drive can sit on the gamut's edge already; such a background is
        legitimate, only the fraction of the (zero) limit is undefined along those axes.

        Returns
        -------
        str or None
            One sentence naming each blocked axis and the channel at its edge
            (:meth:`stimlab.colorimetry.display_maximum.DisplayMaximum.note`); ``None`` when none is blocked.
        """
        return self.display_maximum.note()

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
        """Coordinates in ``space`` of cone excitations, the inverse of :meth:`colour_to_LMS`.

        Parameters
        ----------
        space
            One of :data:`COLOUR_SPACES` (units in the module's Notes).
        LMS
            Cone excitations, shape (..., 3), scaled so that ``w_L·L + w_M·M`` is luminance in cd/m².

        Returns
        -------
        ndarray of float64, shape (..., 3)
            Coordinates in ``space``; ``dkl_display_maximum`` is NaN along blocked axes, where it is undefined.

        Raises
        ------
        ValueError
            For an unknown space (listing the valid ones), NaN or infinity, or a bad shape.
        """
        return self._conversions(space)[1](LMS)

    def affine_to_RGB_linear(self, space: str) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        """``(A, b)`` with ``RGB = values @ A.T + b`` for the spaces linear in cone excitations.

        Composing the chain into one affine map makes whole images cheap: one matrix product per pixel.

        Parameters
        ----------
        space
            One of :data:`COLOUR_SPACES` except ``macleod_boynton``.

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
            return M_inverse @ (self.D * self.display_maximum.scale), self.RGB_0
        if space == "cone_contrast":
            return M_inverse * self.LMS_0[None, :], self.RGB_0
        if space == "lms":
            return M_inverse, -M_inverse @ self.model.LMS_black
        if space == "rgb_linear":
            return np.eye(3), np.zeros(3)
        raise ValueError(f"{space!r} is not linear in cone excitations; use colour_to_LMS")

    def to_RGB_linear(self, space: str, values: ArrayLike) -> NDArray[np.float64]:
        """Linear RGB of colours given in ``space``.

        Parameters
        ----------
        space, values
            As for :meth:`colour_to_LMS`: one of :data:`COLOUR_SPACES` and coordinates of shape (..., 3).

        Returns
        -------
        ndarray of float64, shape (..., 3)
            Linear RGB, fraction of each primary's full drive above black; 0..1 in gamut and possibly outside.
            Nothing is clipped: check with :func:`stimlab.colorimetry.device.is_within_gamut`.

        Raises
        ------
        ValueError
            As :meth:`colour_to_LMS`.
        """
        if space == "macleod_boynton":
            return self.model.LMS_to_RGB_linear(self.colour_to_LMS(space, values))
        if space == "dkl_display_maximum":
            self.display_maximum.to_DKL(values)  # refuses a value along a blocked axis
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
            self.display_maximum.to_DKL(values)  # refuses a value along a blocked axis
        A, b = self.affine_to_RGB_linear(space)
        RGB = A @ values.reshape(-1, 3).T  # channel-first (3, N): contiguous rows for the level search
        RGB += b[:, None]
        return channel_first_to_device(RGB, self.model.level_outputs).reshape(values.shape)

    def in_gamut_scale(self, LMS: ArrayLike) -> tuple[NDArray[np.float64], NDArray[np.int_]]:
        """In-gamut scale of each colour's difference from the background, and the limiting channel.

        Parameters
        ----------
        LMS
            Cone excitations of the colours, shape (..., 3), scaled so that ``w_L·L + w_M·M`` is cd/m².

        Returns
        -------
        scale : ndarray of float64, shape (...)
            How far each difference from the background can be multiplied before a channel leaves 0..1: ≥ 0,
            ≥ 1 exactly for colours in gamut, ``inf`` for the background itself
            (:func:`stimlab.colorimetry.gamut.scale_limit`).
        channel : ndarray of int, shape (...)
            The channel that stops it: 0, 1, 2 for red, green, blue (−1 for none).

        Raises
        ------
        ValueError
            For a bad shape, NaN or infinity.
        """
        delta_RGB = self.model.LMS_to_RGB_linear(LMS) - self.RGB_0
        return scale_limit(self.RGB_0, delta_RGB)

    def rods(self, RGB: ArrayLike) -> dict:
        """Rod contrast against this background and scotopic luminance of one colour.

        Parameters
        ----------
        RGB
            Linear RGB of the colour, shape (3,), 0..1 in gamut.

        Returns
        -------
        dict
            ``rod_contrast`` (dimensionless, > −1), ``scotopic_luminance_cd_m2`` (scotopic cd/m²) and
            ``background_scotopic_luminance_cd_m2``, each ``None`` with the reason in ``rods_note`` for a profile
            given as xyY (:func:`stimlab.colorimetry.description.rod_figures`).

        Raises
        ------
        ValueError
            If the background's scotopic luminance (CIE 1951 V′(λ), :mod:`~stimlab.colorimetry.rods`) is 0.
        """
        return rod_figures(self.model, RGB, self.RGB_0)

    def describe(self, LMS: ArrayLike) -> dict:
        """One colour in every space, with its device levels, gamut verdict and quantisation grain.

        Parameters
        ----------
        LMS
            Cone excitations of one colour, shape (3,), scaled so that ``w_L·L + w_M·M`` is cd/m².

        Returns
        -------
        dict
            JSON-able, keys as the ``stimlab convert --json`` contract: every space of :data:`COLOUR_SPACES`,
            ``rgb_device`` (device levels, ``None`` out of gamut), the in-gamut scale and the rod figures; units
            and ranges in :func:`stimlab.colorimetry.description.describe_colour`.
        """
        return describe_colour(self.model, self.RGB_0, self.display_maximum, LMS)
