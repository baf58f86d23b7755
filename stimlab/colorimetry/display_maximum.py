"""DKL's second normalisation: coordinates as fractions of the display's limit along each positive axis.

Brainard's (1996) DKL coordinates are in pooled cone contrast. For stimuli meant to use a display's range, a lab
often writes them instead as fractions of how far the display can go from the background along each axis: 1 is
the gamut's edge along the positive lum, L−M or S direction (common practice). The limits come exactly from the
RGB cube (:func:`stimlab.colorimetry.gamut.DKL_axis_limits`).

A background with a channel at 0 or full drive can sit on that edge already: the positive limit is 0 and the
coordinate is undefined along that axis. Such a background is legitimate; only 0 is accepted as input along a
*blocked* axis, the coordinate of any colour there is NaN (``null`` in JSON), and :meth:`DisplayMaximum.note` says
why in words.

References
----------
Brainard, D. H. (1996). Cone contrast and opponent modulation color spaces. In P. K. Kaiser & R. M. Boynton,
Human Color Vision (2nd ed.), 563–579.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .display import CHANNELS, DisplayModel
from .gamut import DKL_axis_limits, scale_limit
from .spaces import DKL_AXES, as_triplets

__all__ = ["DisplayMaximum", "BLOCKED_SCALE"]

BLOCKED_SCALE = 1e-12
"""A positive-axis gamut limit at or below this (pooled cone contrast) means no room at all: the axis is blocked."""


class DisplayMaximum:
    """The display-maximum normalisation of DKL at one background.

    Parameters
    ----------
    model
        The display seen by the observer.
    RGB_0
        Background linear RGB, shape (3,), each 0..1.
    D
        DKL unit directions in ΔLMS, shape (3, 3), one axis per column
        (:func:`stimlab.colorimetry.spaces.matrix_DKL_directions`, Brainard 1996).

    Attributes
    ----------
    limits : ndarray (3, 2)
        Gamut limits along each DKL axis (rows lum, L−M, S; columns negative side ≤ 0 and positive side ≥ 0), in
        pooled cone contrast.
    blocked_axes : tuple of int
        Axes (0 lum, 1 L−M, 2 S) whose positive limit is 0: the coordinate is undefined along them.
    scale : ndarray (3,)
        Pooled cone contrast of coordinate 1 along each axis: the positive limits, 0 along blocked axes.

    Examples
    --------
    >>> from stimlab.colorimetry.display import CHANNELS, DisplayModel
    >>> from stimlab.colorimetry.spaces import matrix_DKL_directions
    >>> profile = {"name": "Example", "bits": 8, "sha256": "0" * 64,
    ...            "transfer": {c: {"model": "power", "parameters": {"gamma": 2.2}} for c in CHANNELS},
    ...            "primaries": {"kind": "chromaticities", "red": (0.64, 0.33, 21.26), "green": (0.30, 0.60, 71.52),
    ...                          "blue": (0.15, 0.06, 7.22), "black": (0.3127, 0.3290, 0.2)}}
    >>> model = DisplayModel(profile)
    >>> RGB_0 = [0.5, 1.0, 0.5]  # green at full drive: no room towards more luminance
    >>> D = matrix_DKL_directions(model.RGB_linear_to_LMS(RGB_0), model.observer.w_L, model.observer.w_M)
    >>> maximum = DisplayMaximum(model, RGB_0, D)
    >>> maximum.blocked_axes, np.round(maximum.scale, 4).tolist()
    ((0,), [0.0, 0.0915, 0.7933])
    >>> np.round(maximum.from_DKL([0.0, 0.0915, -0.7933]), 4).tolist()
    [nan, 1.0, -1.0]
    """

    def __init__(self, model: DisplayModel, RGB_0: ArrayLike, D: ArrayLike):
        self.model = model
        self.RGB_0 = np.asarray(RGB_0, dtype=float)
        self.D = np.asarray(D, dtype=float)
        self.limits = DKL_axis_limits(model, self.RGB_0, self.D)
        self.blocked_axes = tuple(int(a) for a in np.flatnonzero(self.limits[:, 1] <= BLOCKED_SCALE))
        scale = self.limits[:, 1].copy()
        scale[list(self.blocked_axes)] = 0.0
        self.scale = scale

    def to_DKL(self, values: ArrayLike) -> NDArray[np.float64]:
        """Pooled-cone-contrast DKL of coordinates given as fractions of the display maximum.

        Parameters
        ----------
        values
            lum, L−M, S as fractions of the positive gamut limit along each axis, shape (..., 3); 1 is the
            gamut's edge, |value| ≤ 1 on the positive side is in gamut along the axis alone. Only 0 along a
            blocked axis.

        Returns
        -------
        ndarray of float64, shape (..., 3)
            DKL coordinates in pooled cone contrast (Brainard 1996).

        Raises
        ------
        ValueError
            For a bad shape, NaN or infinity, or a non-zero value along a blocked axis (saying why, with the fix).
        """
        values = as_triplets(values, "DKL (fraction of display maximum)")
        for axis in self.blocked_axes:
            if np.any(values[..., axis] != 0):
                raise ValueError(f"DKL {DKL_AXES[axis]} as a fraction of the display maximum is undefined here: "
                                 f"{self.note()}; give this colour in DKL or cone contrast")
        return values * self.scale

    def from_DKL(self, DKL: ArrayLike) -> NDArray[np.float64]:
        """Fractions of the display maximum of pooled-cone-contrast DKL coordinates, the inverse of :meth:`to_DKL`.

        Parameters
        ----------
        DKL
            lum, L−M, S in pooled cone contrast (Brainard 1996), shape (..., 3).

        Returns
        -------
        ndarray of float64, shape (..., 3)
            Fractions of the positive gamut limit along each axis (1 at the edge); NaN along blocked axes, where
            the coordinate is undefined.
        """
        DKL = np.asarray(DKL, dtype=float)
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.where(self.scale > 0, DKL / np.where(self.scale > 0, self.scale, 1.0), np.nan)

    def note(self) -> str | None:
        """Why the coordinate is undefined along some axes, or ``None`` if it is defined along all three.

        Returns
        -------
        str or None
            One sentence naming each blocked axis and the channel already at 0 or full drive there; ``None``
            when no axis is blocked.
        """
        if not self.blocked_axes:
            return None
        parts = []
        for axis in self.blocked_axes:
            delta_RGB = self.model.M_LMS_inverse @ self.D[:, axis]
            _, channel = scale_limit(self.RGB_0, delta_RGB)
            channel = int(channel)
            edge = "full drive" if delta_RGB[channel] > 0 else "0"
            parts.append(f"+{DKL_AXES[axis]} ({CHANNELS[channel]} channel already at {edge})")
        return ("the background lies on the gamut's edge along " + ", ".join(parts)
                + ": the display maximum there is 0, so the fraction of it is undefined")
