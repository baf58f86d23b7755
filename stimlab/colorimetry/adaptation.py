"""Predicted after-images and induction from von Kries gain control.

Each cone class's gain is proportional to 1 / (its adapting excitation)^k, with exponent k from 0 (no adaptation)
to 1 (complete adaptation; the worst case for gamut). After adapting to a field of cone contrast c (against the
background), the background looks like a stimulus of cone contrast ``(1 + c)^(−k) − 1`` (the after-image), and
the test that cancels it has cone contrast ``(1 + c)^k − 1`` (the null). A centre of contrast c_t seen on a
surround of contrast c_s looks like ``(1 + c_t)·(1 + c_s)^(−k) − 1`` on the background (the match).

References
----------
- von Kries, J. (1902). Chromatic adaptation. Festschrift der Albrecht-Ludwigs-Universität.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

__all__ = ["after_image_cone_contrast", "null_cone_contrast", "induced_match_cone_contrast"]


def _check(contrast, exponent):
    contrast = np.asarray(contrast, dtype=float)
    if not np.all(np.isfinite(contrast)):
        raise ValueError("cone contrast contains NaN or infinity")
    if np.any(contrast <= -1):
        raise ValueError("cone contrast must be above −1 (no cone excitation can be negative)")
    if not 0 <= exponent <= 1:
        raise ValueError(f"adaptation exponent must lie in 0..1, got {exponent!r}")
    return contrast


def after_image_cone_contrast(adapter_contrast: ArrayLike, exponent: float = 1.0) -> NDArray[np.float64]:
    """Cone contrast of the after-image seen on the background, ``(1 + c)^(−k) − 1``.

    Parameters
    ----------
    adapter_contrast
        Cone contrast c of the adapting field against the background, L, M, S in the last axis, shape (..., 3)
        (any shape works: each value is a cone class on its own). Each value above −1.
    exponent
        Adaptation exponent k, 0..1: 0 is no adaptation, 1 complete von Kries adaptation.

    Returns
    -------
    ndarray of float64, same shape as ``adapter_contrast``
        Cone contrast of the background as it looks after adaptation, above −1.

    Raises
    ------
    ValueError
        If a contrast is −1 or below, NaN or infinite, or the exponent lies outside 0..1.

    Notes
    -----
    Domain: c in (−1, ∞), k in [0, 1]. Range: (−1, ∞).

    The after-image has the opposite sign to the adapter. With k = 1 it is the contrast that takes the adapter
    back to the background: +25 % leaves −20 %, −20 % leaves +25 %.

    References
    ----------
    von Kries, J. (1902). Chromatic adaptation. Festschrift der Albrecht-Ludwigs-Universität.

    Examples
    --------
    >>> np.round(after_image_cone_contrast([0.25, -0.2, 0.0]), 6).tolist()
    [-0.2, 0.25, 0.0]
    >>> np.round(after_image_cone_contrast([0.21, 0.0, 0.0], 0.5), 6).tolist()  # 1/1.1 − 1
    [-0.090909, 0.0, 0.0]
    """
    return (1.0 + _check(adapter_contrast, exponent)) ** (-exponent) - 1.0


def null_cone_contrast(adapter_contrast: ArrayLike, exponent: float = 1.0) -> NDArray[np.float64]:
    """Cone contrast of the test that cancels the after-image, ``(1 + c)^k − 1``.

    Parameters
    ----------
    adapter_contrast
        Cone contrast c of the adapting field against the background, shape (..., 3), each value above −1.
    exponent
        Adaptation exponent k, 0..1.

    Returns
    -------
    ndarray of float64, same shape as ``adapter_contrast``
        Cone contrast of the test that looks like the background after adaptation. With k = 1 it is the
        adapter itself; with k = 0 it is zero.

    Raises
    ------
    ValueError
        If a contrast is −1 or below, NaN or infinite, or the exponent lies outside 0..1.

    Notes
    -----
    The null cancels the after-image exactly: ``(1 + null)·(1 + c)^(−k) = 1`` in every cone class.

    References
    ----------
    von Kries, J. (1902). Chromatic adaptation. Festschrift der Albrecht-Ludwigs-Universität.

    Examples
    --------
    >>> np.round(null_cone_contrast([0.21, 0.0, -0.19], 0.5), 6).tolist()
    [0.1, 0.0, -0.1]
    """
    return (1.0 + _check(adapter_contrast, exponent)) ** exponent - 1.0


def induced_match_cone_contrast(test_contrast: ArrayLike, surround_contrast: ArrayLike,
                                exponent: float = 1.0) -> NDArray[np.float64]:
    """Cone contrast on the background that matches a centre seen on a surround, ``(1 + c_t)·(1 + c_s)^(−k) − 1``.

    Parameters
    ----------
    test_contrast
        Cone contrast c_t of the centre against the background, shape (..., 3), each value above −1.
    surround_contrast
        Cone contrast c_s of the surround against the background, broadcastable with ``test_contrast``, each
        value above −1.
    exponent
        Adaptation exponent k, 0..1, applied to the surround only.

    Returns
    -------
    ndarray of float64, the broadcast shape
        Cone contrast that, shown on the background itself, looks like the centre on its surround.

    Raises
    ------
    ValueError
        If a contrast is −1 or below, NaN or infinite, or the exponent lies outside 0..1.

    References
    ----------
    von Kries, J. (1902). Chromatic adaptation. Festschrift der Albrecht-Ludwigs-Universität.

    Examples
    --------
    >>> np.round(induced_match_cone_contrast([0.0, 0.0, 0.0], [0.25, 0.0, 0.0]), 6).tolist()
    [-0.2, 0.0, 0.0]
    >>> np.round(induced_match_cone_contrast([0.1, 0.0, 0.0], [0.21, 0.0, 0.0], 0.5), 6).tolist()
    [0.0, 0.0, 0.0]
    """
    test = _check(test_contrast, 0.0)
    return (1.0 + test) * (1.0 + _check(surround_contrast, exponent)) ** (-exponent) - 1.0
