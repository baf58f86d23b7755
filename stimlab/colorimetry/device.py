"""Linear RGB to the digital levels a display is driven with, and back, at its bit depth.

The nearest level is chosen in *light*, not in drive: for each channel the level whose modelled output is
closest to the requested linear value (thresholds half way between neighbouring levels' outputs), so the
choice is exact for any transfer model. Colours outside the gamut are never clipped silently: conversion refuses
them unless the caller clips first with :func:`clip_to_gamut`, which says what it clipped.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

__all__ = [
    "RGB_linear_to_device_or_none",
    "GAMUT_TOLERANCE",
    "is_within_gamut",
    "clip_to_gamut",
    "RGB_linear_to_device",
    "device_to_RGB_linear",
    "quantisation_cone_contrast",
]

GAMUT_TOLERANCE = 1e-9
"""Linear values this far outside 0..1 count as inside: floating-point noise, not a real excursion."""


def is_within_gamut(RGB: ArrayLike, tolerance: float = GAMUT_TOLERANCE) -> NDArray[np.bool_]:
    """Whether each linear RGB colour lies inside the display's cube 0..1.

    Parameters
    ----------
    RGB
        Linear RGB, shape (..., 3): each channel the fraction of its primary's full-drive radiance above black.
    tolerance
        How far outside 0..1 a value may lie and still count as inside (default :data:`GAMUT_TOLERANCE`).

    Returns
    -------
    ndarray of bool, shape (...,)
        True where all three channels lie in ``[−tolerance, 1 + tolerance]``. NaN counts as outside.

    Examples
    --------
    >>> is_within_gamut([[0.2, 0.5, 1.0], [0.2, -0.01, 0.5]]).tolist()
    [True, False]
    """
    RGB = np.asarray(RGB, dtype=float)
    return np.all((RGB >= -tolerance) & (RGB <= 1.0 + tolerance), axis=-1)


def clip_to_gamut(RGB: ArrayLike) -> tuple[NDArray[np.float64], NDArray[np.bool_]]:
    """Clip linear RGB into 0..1 and say which colours were changed.

    Parameters
    ----------
    RGB
        Linear RGB, shape (..., 3), any real values.

    Returns
    -------
    clipped : ndarray of float64, shape (..., 3)
        Each channel clipped to 0..1 on its own (the hue of a clipped colour can change).
    was_clipped : ndarray of bool, shape (...,)
        True for each colour that lay outside the gamut by more than :data:`GAMUT_TOLERANCE`.

    Notes
    -----
    Clipping changes the stimulus; callers report ``was_clipped`` wherever they clip, never clip silently.

    Examples
    --------
    >>> clipped, was_clipped = clip_to_gamut([[0.2, 1.2, -0.1], [0.5, 0.5, 0.5]])
    >>> clipped.tolist(), was_clipped.tolist()
    ([[0.2, 1.0, 0.0], [0.5, 0.5, 0.5]], [True, False])
    """
    RGB = np.asarray(RGB, dtype=float)
    return np.clip(RGB, 0.0, 1.0), ~is_within_gamut(RGB)


def _thresholds(level_outputs: np.ndarray) -> np.ndarray:
    return 0.5 * (level_outputs[:, 1:] + level_outputs[:, :-1])


def _refuse_out_of_gamut(RGB: np.ndarray) -> None:
    """Raise unless every value is finite and inside the cube (two reductions: cheap on whole images)."""
    if RGB.size and RGB.min() >= -GAMUT_TOLERANCE and RGB.max() <= 1.0 + GAMUT_TOLERANCE:
        return
    if not np.all(np.isfinite(RGB)):
        raise ValueError("linear RGB contains NaN or infinity")
    if RGB.size == 0:
        return
    outside = ~np.all((RGB >= -GAMUT_TOLERANCE) & (RGB <= 1.0 + GAMUT_TOLERANCE), axis=0)
    raise ValueError(f"{int(outside.sum())} colour(s) lie outside the display gamut (linear RGB outside 0..1); "
                     "reduce the contrast, or clip explicitly and report it")


def channel_first_to_device(RGB: NDArray[np.float64], level_outputs: NDArray[np.float64]) -> NDArray[np.intp]:
    """Device levels of linear RGB laid out channel-first, shape (3, N), returned as an (N, 3) view.

    The fast path for whole images: each channel is one contiguous row for ``np.searchsorted``, and the result
    is handed back transposed without a copy.

    Parameters
    ----------
    RGB
        Linear RGB 0..1, a float array of shape (3, N), channel-first (red, green, blue rows).
    level_outputs
        Normalised output of every level of every channel, 0..1, shape (3, 2^bits), increasing along each row.

    Returns
    -------
    ndarray of intp, shape (N, 3)
        Device levels 0..2^bits − 1, a transposed view of a channel-first array.

    Raises
    ------
    ValueError
        If any value lies outside the gamut or is NaN or infinite.

    Examples
    --------
    >>> outputs = np.tile((np.arange(256) / 255.0) ** 2, (3, 1))
    >>> channel_first_to_device(np.array([[0.25, 0.0], [0.5, 1.0], [1.0, 0.01]]), outputs).tolist()
    [[127, 180, 255], [0, 255, 25]]
    """
    _refuse_out_of_gamut(RGB)
    thresholds = _thresholds(level_outputs)
    device = np.empty(RGB.shape, dtype=np.intp)
    for channel in range(3):
        device[channel] = _nearest_levels(thresholds[channel], RGB[channel])
    return device.T


def _nearest_levels(thresholds: np.ndarray, values: np.ndarray) -> np.ndarray:
    """``np.searchsorted(thresholds, values)``, exactly, but through a table of bins.

    A binary search per value is slow on unsorted image data (cache and branch misses). Instead the unit
    interval is cut into bins; where a bin holds no threshold its level is known, where it holds one a single
    comparison settles it, and only values in the few bins holding several thresholds (the steep start of the
    curve just above black) fall back to the binary search.
    """
    bins = min(16 * (thresholds.size + 1), 2**20)
    if values.size < 4 * bins:  # too few values to pay for the table
        return np.searchsorted(thresholds, values)
    edges = np.arange(bins + 1) / bins
    first = np.searchsorted(thresholds, edges[:-1])
    count = np.searchsorted(thresholds, edges[1:]) - first
    inside = np.where(count == 1, thresholds[np.minimum(first, thresholds.size - 1)], np.inf)
    crowded = count > 1
    index = (values * bins).astype(np.intp)
    np.clip(index, 0, bins - 1, out=index)
    levels = first[index]
    levels += values > inside[index]
    if crowded.any():
        fallback = np.flatnonzero(crowded[index])
        levels[fallback] = np.searchsorted(thresholds, values[fallback])
    return levels


def RGB_linear_to_device(RGB: ArrayLike, level_outputs: NDArray[np.float64]) -> NDArray[np.intp]:
    """Device levels whose output is nearest to linear RGB.

    Parameters
    ----------
    RGB
        Linear RGB, shape (..., 3), inside the gamut: 0..1 within :data:`GAMUT_TOLERANCE`.
    level_outputs
        Normalised output of every level of every channel, 0..1, shape (3, 2^bits), increasing along each row
        (:attr:`stimlab.colorimetry.display.DisplayModel.level_outputs`).

    Returns
    -------
    ndarray of int, shape (..., 3)
        Device levels 0..2^bits − 1.

    Raises
    ------
    ValueError
        If any colour lies outside the gamut (clip first, and report it, if that is really wanted), or contains
        NaN or infinity.

    Notes
    -----
    The level is nearest in light, not in drive: each channel's level is the one whose modelled output is
    closest to the requested linear value (ties go to the lower level), which is exact for any transfer model.

    Examples
    --------
    >>> outputs = np.tile((np.arange(256) / 255.0) ** 2, (3, 1))
    >>> RGB_linear_to_device([0.25, 0.0, 1.0], outputs).tolist()  # 127²/255² is nearer 0.25 than 128²/255²
    [127, 0, 255]
    """
    RGB = np.asarray(RGB, dtype=float)
    if RGB.shape[-1:] != (3,):
        raise ValueError(f"linear RGB must have shape (..., 3), got {RGB.shape}")
    return channel_first_to_device(np.ascontiguousarray(RGB.reshape(-1, 3).T), level_outputs).reshape(RGB.shape)


def RGB_linear_to_device_or_none(RGB: ArrayLike,
                                 level_outputs: NDArray[np.float64]) -> tuple[list[list[int] | None], NDArray[np.bool_]]:
    """Device levels of each colour that is in gamut, ``None`` for each that is not (never clipped).

    Parameters
    ----------
    RGB
        Linear RGB, shape (..., 3); in-gamut values are 0..1 within :data:`GAMUT_TOLERANCE`.
    level_outputs
        The display's modelled output of every digital level of each channel, shape (3, 2^bits), 0..1.

    Returns
    -------
    device : list of (list of int or None)
        A flat list with, per colour, its ``[r, g, b]`` digital levels (0..2^bits − 1) or ``None``.
    inside : ndarray of bool, shape (...,)
        Whether each colour is in gamut.

    Examples
    --------
    >>> outputs = np.tile((np.arange(256) / 255.0) ** 2, (3, 1))
    >>> device, inside = RGB_linear_to_device_or_none([[0.25, 0.5, 1.0], [1.1, 0.5, 0.5]], outputs)
    >>> device, inside.tolist()
    ([[127, 180, 255], None], [True, False])
    """
    RGB = np.asarray(RGB, dtype=float)
    inside = is_within_gamut(RGB)
    device = np.zeros(RGB.shape, dtype=np.int64)
    if inside.any():
        device[inside] = RGB_linear_to_device(np.clip(RGB[inside], 0, 1), level_outputs)
    return [row.tolist() if ok else None for row, ok in zip(device.reshape(-1, 3), inside.reshape(-1))], inside


def device_to_RGB_linear(device: ArrayLike, level_outputs: NDArray[np.float64]) -> NDArray[np.float64]:
    """Linear RGB that device levels produce.

    Parameters
    ----------
    device
        Device levels, shape (..., 3), whole numbers 0..2^bits − 1 (integers, or floats with integral values).
    level_outputs
        Normalised output of every level of every channel, 0..1, shape (3, 2^bits).

    Returns
    -------
    ndarray of float64, shape (..., 3)
        Linear RGB 0..1: the modelled output of each channel at its level.

    Raises
    ------
    ValueError
        If a level is not a whole number, is NaN or infinite, or lies outside 0..2^bits − 1.

    Examples
    --------
    >>> outputs = np.tile((np.arange(256) / 255.0) ** 2, (3, 1))
    >>> np.round(device_to_RGB_linear([128, 0, 255], outputs), 6).tolist()  # 128²/255² = 0.251965
    [0.251965, 0.0, 1.0]
    """
    device = np.asarray(device)
    d_max = level_outputs.shape[1] - 1
    if not np.issubdtype(device.dtype, np.integer):
        if not np.all(np.isfinite(device)) or np.any(device != np.round(device)):
            raise ValueError("digital levels must be whole numbers")
        device = device.astype(np.int64)
    if np.any(device < 0) or np.any(device > d_max):
        raise ValueError(f"digital levels must lie in 0..{d_max}")
    return np.stack([level_outputs[c][device[..., c]] for c in range(3)], axis=-1)


def quantisation_cone_contrast(device: ArrayLike, level_outputs: NDArray[np.float64], M_LMS: NDArray[np.float64],
                               LMS_0: ArrayLike) -> NDArray[np.float64]:
    """The cone-contrast grain of the display at given device levels.

    For each cone class, the largest change of its contrast (against ``LMS_0``) that a one-level step of any
    single channel makes at these levels (the step up, or down at full drive).

    Parameters
    ----------
    device
        Device levels, shape (..., 3), whole numbers 0..2^bits − 1.
    level_outputs
        Normalised output of every level of every channel, 0..1, shape (3, 2^bits).
    M_LMS
        Cone excitations of each primary at full drive above black, shape (3, 3): rows L, M, S, columns red,
        green, blue, in stimlab's cone units (``w_L·L + w_M·M`` in cd/m²).
    LMS_0
        Background cone excitations in the same units, shape (3,), each positive.

    Returns
    -------
    ndarray of float64, shape (..., 3)
        Cone contrast of one level, ≥ 0, for L, M and S.

    Notes
    -----
    The grain is ``max over channels of |M_LMS[cone, channel]·Δ_channel| / LMS_0[cone]``, Δ being the change of
    normalised output from the level to the next one up (at full drive, from the level below).

    Examples
    --------
    >>> outputs = np.tile((np.arange(256) / 255.0) ** 2, (3, 1))
    >>> np.round(quantisation_cone_contrast([128, 128, 128], outputs, np.eye(3), [0.25, 0.25, 0.25]), 6).tolist()
    [0.015809, 0.015809, 0.015809]
    """
    device = np.asarray(device, dtype=np.int64)
    d_max = level_outputs.shape[1] - 1
    upper = np.minimum(device + 1, d_max)
    lower = upper - 1
    step = np.stack([level_outputs[c][upper[..., c]] - level_outputs[c][lower[..., c]] for c in range(3)],
                    axis=-1)
    # delta[..., cone, channel] = M_LMS[cone, channel] * step[..., channel] / LMS_0[cone]
    delta = M_LMS[None, :, :] * step.reshape(-1, 1, 3) / np.asarray(LMS_0, dtype=float)[None, :, None]
    return np.abs(delta).max(axis=-1).reshape(device.shape)
