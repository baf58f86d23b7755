"""The noise model of a photometer's luminance readings, and the least-squares weights it gives a transfer fit.

A reading ``L`` (cd/m²) has standard error ``σ = relative·|L| + floor``: a part proportional to the reading (the
instrument's repeatability) and a part that is not (its dark noise), so that near-black readings keep a finite
weight. Both defaults are common practice for a spot photometer, not a published standard; they set the fits'
relative weights (:mod:`stimlab.colorimetry.transfer_models`) and the tolerance for falling readings, never a
pass/fail limit of their own.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

__all__ = ["READING_RELATIVE_ERROR", "READING_FLOOR_CD_M2", "reading_sigma", "fit_weights"]

READING_RELATIVE_ERROR = 0.003
"""Standard error of a luminance reading as a fraction of the reading (0.3 %): a default, common practice for a
spot photometer's repeatability; it sets the fit's relative weights, not a pass/fail limit."""

READING_FLOOR_CD_M2 = 0.002
"""Standard error of a reading that does not scale with it (cd/m²): a default, common practice; it keeps the
weights finite where the reading is near zero (a display with a very dark black)."""

_NORMALISED_FLOOR = 1e-4
"""The floor of :func:`fit_weights`' default σ, in normalised output (fraction of full drive): a default."""


def reading_sigma(luminance: ArrayLike, relative: float = READING_RELATIVE_ERROR,
                  floor: float = READING_FLOOR_CD_M2) -> NDArray[np.float64]:
    """Standard error of each luminance reading under the fit's noise model, ``relative·|L| + floor``.

    Parameters
    ----------
    luminance
        Readings, cd/m², any shape.
    relative
        Error proportional to the reading, as a fraction, ≥ 0 (default 0.003, common practice).
    floor
        Error independent of the reading, cd/m², ≥ 0 (default 0.002, common practice).

    Returns
    -------
    ndarray of float64
        cd/m², > 0, the shape of ``luminance``.

    Raises
    ------
    ValueError
        If ``relative`` or ``floor`` is negative, or both are 0.

    Examples
    --------
    >>> reading_sigma([0.0, 10.0]).round(6).tolist()
    [0.002, 0.032]
    """
    luminance = np.asarray(luminance, dtype=float)
    if relative < 0 or floor < 0 or relative + floor <= 0:
        raise ValueError(f"reading errors must be ≥ 0 and not both 0, got relative={relative!r}, floor={floor!r}")
    return relative * np.abs(luminance) + floor


def fit_weights(y: ArrayLike, sigma: ArrayLike | None = None) -> NDArray[np.float64]:
    """Least-squares weights ``1/σ`` of normalised transfer readings.

    Parameters
    ----------
    y
        Normalised output of each reading, fraction of the full-drive reading above black (0..1), shape (N,).
    sigma
        Standard error of each ``y`` in the same normalised units, finite and > 0, broadcastable to ``y``;
        ``None`` assumes 0.3 % of the value plus 1e-4 of full scale (the relative part of :func:`reading_sigma`
        with a normalised floor; defaults, common practice).

    Returns
    -------
    ndarray of float64, shape of ``y``
        Weights, 1/(normalised output), > 0: each residual is multiplied by its weight.

    Raises
    ------
    ValueError
        If any ``sigma`` is not finite and positive.

    Examples
    --------
    >>> fit_weights([0.0, 1.0], [0.01, 0.02]).tolist()
    [100.0, 50.0]
    """
    y = np.asarray(y, dtype=float)
    if sigma is None:
        sigma = READING_RELATIVE_ERROR * np.abs(y) + _NORMALISED_FLOOR
    sigma = np.broadcast_to(np.asarray(sigma, dtype=float), y.shape)
    if not np.all(np.isfinite(sigma) & (sigma > 0)):
        raise ValueError("sigma must be finite and positive for every point")
    return 1.0 / sigma
