"""Linear RGB to the digital levels a display is driven with, and back, at its bit depth.

The nearest level is chosen in *light*, not in drive: for each channel the level whose modelled output is
closest to the requested linear value (thresholds half way between neighbouring levels' outputs), so the
choice is exact for any transfer model. Colours outside the gamut are never clipped silently: conversion refuses
them unless the caller clips first with :func:`clip_to_gamut`, which says what it clipped.
"""

from __future__ import annotations

import numpy as np

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


def is_within_gamut(RGB, tolerance: float = GAMUT_TOLERANCE) -> np.ndarray:
    """Whether linear RGB lies inside the display's cube, shape (...,).

    Examples
    --------
    >>> is_within_gamut([[0.2, 0.5, 1.0], [0.2, -0.01, 0.5]]).tolist()
    [True, False]
    """
    RGB = np.asarray(RGB, dtype=float)
    return np.all((RGB >= -tolerance) & (RGB <= 1.0 + tolerance), axis=-1)


def clip_to_gamut(RGB) -> tuple[np.ndarray, np.ndarray]:
    """Clip linear RGB into 0..1 and say which colours were changed.

    Returns
    -------
    clipped : ndarray (..., 3)
    was_clipped : ndarray (...,) of bool
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


def channel_first_to_device(RGB: np.ndarray, level_outputs: np.ndarray) -> np.ndarray:
    """Digital levels of linear RGB laid out channel-first, shape (3, N), returned as an (N, 3) view.

    The fast path for whole images: each channel is one contiguous row for ``np.searchsorted``, and the result
    is handed back transposed without a copy.
    """
    _refuse_out_of_gamut(RGB)
    thresholds = _thresholds(level_outputs)
    levels = np.empty(RGB.shape, dtype=np.intp)
    for channel in range(3):
        levels[channel] = _nearest_levels(thresholds[channel], RGB[channel])
    return levels.T


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


def RGB_linear_to_device(RGB, level_outputs: np.ndarray) -> np.ndarray:
    """Digital levels whose output is nearest to linear RGB.

    Parameters
    ----------
    RGB
        Linear RGB, shape (..., 3), inside the gamut.
    level_outputs
        Normalised output of every level of every channel, shape (3, 2^bits)
        (:attr:`stimlab.colorimetry.display.DisplayModel.level_outputs`).

    Returns
    -------
    ndarray of int, shape (..., 3)
        Levels 0..2^bits − 1.

    Raises
    ------
    ValueError
        If any colour lies outside the gamut (clip first, and report it, if that is really wanted), or contains
        NaN or infinity.

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


def RGB_linear_to_device_or_none(RGB, level_outputs: np.ndarray) -> tuple[list, np.ndarray]:
    """Device levels of each colour that is in gamut, ``None`` for each that is not (never clipped).

    Parameters
    ----------
    RGB
        Linear RGB, shape (..., 3); in-gamut values are 0..1 within :data:`GAMUT_TOLERANCE`.
    level_outputs
        The display's modelled output of every digital level, shape (3, levels), 0..1.

    Returns
    -------
    tuple
        A flat list with, per colour, its ``[r, g, b]`` device levels or ``None``; and the boolean in-gamut
        array of shape (...).
    """
    RGB = np.asarray(RGB, dtype=float)
    inside = is_within_gamut(RGB)
    levels = np.zeros(RGB.shape, dtype=np.int64)
    if inside.any():
        levels[inside] = RGB_linear_to_device(np.clip(RGB[inside], 0, 1), level_outputs)
    return [row.tolist() if ok else None for row, ok in zip(levels.reshape(-1, 3), inside.reshape(-1))], inside


def device_to_RGB_linear(levels, level_outputs: np.ndarray) -> np.ndarray:
    """Linear RGB that digital levels produce, shape (..., 3)."""
    levels = np.asarray(levels)
    d_max = level_outputs.shape[1] - 1
    if not np.issubdtype(levels.dtype, np.integer):
        if not np.all(np.isfinite(levels)) or np.any(levels != np.round(levels)):
            raise ValueError("digital levels must be whole numbers")
        levels = levels.astype(np.int64)
    if np.any(levels < 0) or np.any(levels > d_max):
        raise ValueError(f"digital levels must lie in 0..{d_max}")
    return np.stack([level_outputs[c][levels[..., c]] for c in range(3)], axis=-1)


def quantisation_cone_contrast(levels, level_outputs: np.ndarray, M_LMS: np.ndarray, LMS_0) -> np.ndarray:
    """The cone-contrast grain of the display at given levels.

    For each cone class, the largest change of its contrast (against ``LMS_0``) that a one-level step of any
    single channel makes at these levels (the step up, or down at full drive).

    Parameters
    ----------
    levels
        Digital levels, shape (..., 3).
    level_outputs
        Normalised output of every level, shape (3, 2^bits).
    M_LMS
        Cone excitations of each primary, columns red, green, blue.
    LMS_0
        Background cone excitations, shape (3,).

    Returns
    -------
    ndarray, shape (..., 3)
        Cone contrast of one level, for L, M and S.
    """
    levels = np.asarray(levels, dtype=np.int64)
    d_max = level_outputs.shape[1] - 1
    upper = np.minimum(levels + 1, d_max)
    lower = upper - 1
    step = np.stack([level_outputs[c][upper[..., c]] - level_outputs[c][lower[..., c]] for c in range(3)],
                    axis=-1)
    # delta[..., cone, channel] = M_LMS[cone, channel] * step[..., channel] / LMS_0[cone]
    delta = M_LMS[None, :, :] * step.reshape(-1, 1, 3) / np.asarray(LMS_0, dtype=float)[None, :, None]
    return np.abs(delta).max(axis=-1).reshape(levels.shape)
