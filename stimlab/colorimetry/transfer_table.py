"""The monotone table transfer model: a piecewise-cubic Hermite curve through a channel's measured points.

Through the sRGB curve sampled at 18 levels, piecewise-linear interpolation misses by up to 1.07 levels (evenly
spaced) or 0.51 (spaced as 255·(i/17)^1.5); the monotone cubic stays under 0.3 with the latter spacing
(measured for DEVELOPERS.md; ``tests/test_transfer_table.py`` holds the cubic to half a level). With 18 *evenly*
spaced levels even the cubic misses by 0.92 levels near black: measure densely there. Forward, inverse,
parameters and fit as the parametric models (:mod:`stimlab.colorimetry.transfer_parametric`).

References
----------
- Fritsch, F. N., & Carlson, R. E. (1980). Monotone piecewise cubic interpolation. SIAM J. Numer. Anal., 17(2),
  238–246.
- IEC 61966-2-1:1999, the sRGB transfer curve used in the figures above.
"""

from __future__ import annotations

import dataclasses

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy.interpolate import PchipInterpolator

from .transfer_parametric import as_finite

__all__ = ["TableTransfer"]


@dataclasses.dataclass(frozen=True)
class TableTransfer:
    """Monotone curve through measured points ``(x_i, y_i)``: piecewise-cubic Hermite (Fritsch–Carlson, PCHIP).

    Parameters
    ----------
    x, y
        Normalised levels ``d / d_max`` (strictly increasing, at least two; 0 and 1 for a measured channel) and
        the normalised outputs at them (non-decreasing, 0..1).

    Raises
    ------
    ValueError
        If the counts differ or are below two, the levels do not increase, or the outputs decrease.

    It passes through every measured point and never reverses direction between them. Piecewise-linear
    interpolation would be simpler but bends too late near black: through the sRGB curve sampled at 18 levels it
    misses by over one digital level, the cubic by under 0.3 (see the module's notes).

    References
    ----------
    Fritsch & Carlson (1980), through scipy's PchipInterpolator.

    Examples
    --------
    >>> transfer = TableTransfer((0.0, 0.5, 1.0), (0.0, 0.2, 1.0))
    >>> float(transfer.forward(0.5)), round(float(transfer.inverse(0.2)), 6)
    (0.2, 0.5)
    """

    x: tuple
    y: tuple
    name = "table"

    def __post_init__(self):
        x, y = np.asarray(self.x, float), np.asarray(self.y, float)
        if x.shape != y.shape or x.size < 2:
            raise ValueError("a table transfer needs at least two (level, output) points of equal count")
        if np.any(np.diff(x) <= 0):
            raise ValueError("table levels must increase strictly")
        bad = np.flatnonzero(np.diff(y) < 0)
        if bad.size:
            raise ValueError(f"table output decreases after point {int(bad[0]) + 1}; "
                             "a transfer curve must be monotone")
        curve = PchipInterpolator(x, y, extrapolate=False)
        dense_x = np.linspace(x[0], x[-1], 65537)
        object.__setattr__(self, "_curve", curve)
        object.__setattr__(self, "_dense", (dense_x, curve(dense_x)))

    def forward(self, x: ArrayLike) -> NDArray[np.float64]:
        """Normalised output of normalised input, on the monotone cubic through the table.

        Parameters
        ----------
        x
            Normalised digital input ``d / d_max``, 0..1, any shape; held at the table's end levels outside them.

        Returns
        -------
        ndarray of float64, shape of ``x``
            Normalised output, 0..1 (within the table's outputs).

        Raises
        ------
        ValueError
            If ``x`` holds NaN or infinity.
        """
        x = np.clip(as_finite(x, "x"), self.x[0], self.x[-1])
        return self._curve(x)[()]

    def inverse(self, y: ArrayLike) -> NDArray[np.float64]:
        """Normalised input that gives normalised output ``y``, interpolated on a 65537-point grid of the curve.

        Parameters
        ----------
        y
            Normalised output, 0..1, any shape; held at the table's end outputs outside them.

        Returns
        -------
        ndarray of float64, shape of ``y``
            Normalised digital input ``d / d_max`` within the table's levels (0..1); inside a flat stretch, a level
            within it.

        Raises
        ------
        ValueError
            If ``y`` holds NaN or infinity.
        """
        # Flat stretches are ambiguous; np.interp on a non-decreasing table returns a level inside them.
        dense_x, dense_y = self._dense
        return np.interp(as_finite(y, "y"), dense_y, dense_x)

    def parameters(self) -> dict:
        """The table as saved in a profile.

        Returns
        -------
        dict
            ``{"x": [...], "y": [...]}``: normalised levels and outputs, each 0..1, as lists of float.
        """
        return {"x": list(self.x), "y": list(self.y)}

    @classmethod
    def fit(cls, x: ArrayLike, y: ArrayLike, sigma: ArrayLike | None = None) -> TableTransfer:
        """The table through every point.

        Parameters
        ----------
        x
            Normalised digital input ``d / d_max``, strictly increasing, 0..1, at least two.
        y
            Normalised output at each ``x``, non-decreasing, 0..1.
        sigma
            Accepted for the models' common signature and not used.

        Returns
        -------
        TableTransfer
            The curve through every ``(x_i, y_i)``.

        Raises
        ------
        ValueError
            As :class:`TableTransfer`.
        """
        return cls(tuple(float(v) for v in x), tuple(float(v) for v in y))
