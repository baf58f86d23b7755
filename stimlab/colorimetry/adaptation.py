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


def after_image_cone_contrast(adapter_contrast, exponent: float = 1.0) -> np.ndarray:
    """Cone contrast of the after-image seen on the background, ``(1 + c)^(−k) − 1``.

    Examples
    --------
    >>> np.round(after_image_cone_contrast([0.25, -0.2, 0.0]), 6).tolist()
    [-0.2, 0.25, 0.0]
    """
    return (1.0 + _check(adapter_contrast, exponent)) ** (-exponent) - 1.0


def null_cone_contrast(adapter_contrast, exponent: float = 1.0) -> np.ndarray:
    """Cone contrast of the test that cancels the after-image, ``(1 + c)^k − 1``.

    Examples
    --------
    >>> np.round(null_cone_contrast([0.21, 0.0, -0.19], 0.5), 6).tolist()
    [0.1, 0.0, -0.1]
    """
    return (1.0 + _check(adapter_contrast, exponent)) ** exponent - 1.0


def induced_match_cone_contrast(test_contrast, surround_contrast, exponent: float = 1.0) -> np.ndarray:
    """Cone contrast on the background that matches a centre seen on a surround.

    Examples
    --------
    >>> np.round(induced_match_cone_contrast([0.0, 0.0, 0.0], [0.25, 0.0, 0.0]), 6).tolist()
    [-0.2, 0.0, 0.0]
    """
    test = _check(test_contrast, 0.0)
    return (1.0 + test) * (1.0 + _check(surround_contrast, exponent)) ** (-exponent) - 1.0
