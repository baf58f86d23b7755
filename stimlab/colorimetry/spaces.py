"""Colour spaces relative to a background: cone contrast, DKL and MacLeod–Boynton.

All functions are vectorised over arrays of shape (..., 3) and take the background cone excitations ``LMS_0``
and the observer's luminance weights explicitly; nothing here knows about a display except the
"fraction of display maximum" DKL normalisation, which takes the gamut limits as an argument.

References
----------
- Derrington, A. M., Krauskopf, J., & Lennie, P. (1984). Chromatic mechanisms in lateral geniculate nucleus of
  macaque. Journal of Physiology, 357, 241–265.
- Brainard, D. H. (1996). Cone contrast and opponent modulation color spaces. In P. K. Kaiser & R. M. Boynton,
  Human Color Vision (2nd ed.), 563–579 (the construction and normalisation used here).
- MacLeod, D. I. A., & Boynton, R. M. (1979). JOSA, 69, 1183–1186; scaling of CIE 170-2:2015.
"""

from __future__ import annotations

import numpy as np

__all__ = [
    "as_triplets",
    "LMS_to_cone_contrast",
    "cone_contrast_to_LMS",
    "matrix_DKL_directions",
    "matrix_DKL_mechanisms",
    "LMS_to_DKL",
    "DKL_to_LMS",
    "LMS_to_MacLeod_Boynton",
    "MacLeod_Boynton_to_LMS",
]



def as_triplets(values, name: str) -> np.ndarray:
    """``values`` as a float array of shape (..., 3), refusing NaN and infinity with ``name`` in the message."""
    values = np.asarray(values, dtype=float)
    if values.shape[-1:] != (3,):
        raise ValueError(f"{name} must have shape (..., 3), got {values.shape}")
    if not np.all(np.isfinite(values)):
        raise ValueError(f"{name} contains NaN or infinity")
    return values


def _background(LMS_0) -> np.ndarray:
    LMS_0 = as_triplets(LMS_0, "LMS_0")
    if LMS_0.ndim != 1:
        raise ValueError(f"LMS_0 must be one background of shape (3,), got {LMS_0.shape}")
    if np.any(LMS_0 <= 0):
        raise ValueError(f"background cone excitations LMS_0 must all be positive, got {LMS_0.tolist()}")
    return LMS_0


def LMS_to_cone_contrast(LMS, LMS_0) -> np.ndarray:
    """Cone contrast ``(LMS − LMS_0) / LMS_0``.

    Parameters
    ----------
    LMS
        Cone excitations, shape (..., 3).
    LMS_0
        Background cone excitations, shape (3,), all > 0.

    Examples
    --------
    >>> np.round(LMS_to_cone_contrast([1.1, 0.9, 2.0], [1.0, 1.0, 1.0]), 12).tolist()
    [0.1, -0.1, 1.0]
    """
    LMS_0 = _background(LMS_0)
    return (as_triplets(LMS, "LMS") - LMS_0) / LMS_0


def cone_contrast_to_LMS(contrast, LMS_0) -> np.ndarray:
    """Cone excitations from cone contrast, ``LMS_0 · (1 + c)``."""
    LMS_0 = _background(LMS_0)
    return LMS_0 * (1.0 + as_triplets(contrast, "cone contrast"))


def matrix_DKL_directions(LMS_0, w_L: float, w_M: float, limits=None) -> np.ndarray:
    """Matrix ``D`` whose columns are the unit DKL directions in ΔLMS: ``ΔLMS = D · (lum, lm, s)``.

    Parameters
    ----------
    LMS_0
        Background cone excitations, shape (3,).
    w_L, w_M
        The observer's luminance weights.
    limits
        ``None`` for Brainard's normalisation (each unit direction has pooled cone contrast 1); otherwise the
        largest in-gamut scale of each pooled-unit direction, shape (3,), which makes 1 the display's maximum
        along each positive axis ("display_maximum").

    Notes
    -----
    Isolating directions: luminance ∝ LMS_0; L−M ∝ (w_M, −w_L, 0), which leaves luminance and S unchanged;
    S ∝ (0, 0, 1). Signs: +L−M raises L (reddish), +S raises S (violet), +lum raises luminance.

    Examples
    --------
    >>> D = matrix_DKL_directions([1.0, 1.0, 1.0], 0.5, 0.5)
    >>> np.round(D[:, 0], 6).tolist()
    [0.57735, 0.57735, 0.57735]
    """
    LMS_0 = _background(LMS_0)
    directions = np.array([LMS_0, [w_M, -w_L, 0.0], [0.0, 0.0, 1.0]]).T
    pooled = np.sqrt(np.sum((directions / LMS_0[:, None]) ** 2, axis=0))
    D = directions / pooled
    if limits is not None:
        limits = np.asarray(limits, dtype=float)
        if limits.shape != (3,) or not np.all(np.isfinite(limits) & (limits > 0)):
            raise ValueError(f"limits must be three positive gamut scales, got {limits!r}")
        D = D * limits
    return D


def matrix_DKL_mechanisms(LMS_0, w_L: float, w_M: float, limits=None) -> np.ndarray:
    """Mechanism rows on ΔLMS, each reading 1 on its own unit direction: ``(lum, lm, s) = R · ΔLMS``.

    Rows before scaling: luminance ``(w_L, w_M, 0)``; L−M ``(1, −L_0/M_0, 0)``; S−(L+M)
    ``(−w_L·S_0/V_0, −w_M·S_0/V_0, 1)`` with ``V_0 = w_L·L_0 + w_M·M_0``. Each row is zero on the other two
    isolating directions, so ``R = D⁻¹``.
    """
    LMS_0 = _background(LMS_0)
    L_0, M_0, S_0 = LMS_0
    V_0 = w_L * L_0 + w_M * M_0
    rows = np.array([[w_L, w_M, 0.0], [1.0, -L_0 / M_0, 0.0], [-w_L * S_0 / V_0, -w_M * S_0 / V_0, 1.0]])
    D = matrix_DKL_directions(LMS_0, w_L, w_M, limits)
    return rows / np.einsum("ij,ji->i", rows, D)[:, None]


def LMS_to_DKL(LMS, LMS_0, w_L: float, w_M: float, limits=None) -> np.ndarray:
    """DKL coordinates ``(lum, lm, s)`` of cone excitations relative to the background.

    Examples
    --------
    >>> np.round(LMS_to_DKL([1.1, 1.1, 1.1], [1.0, 1.0, 1.0], 0.5, 0.5), 6).tolist()
    [0.173205, -0.0, 0.0]
    """
    LMS_0 = _background(LMS_0)
    R = matrix_DKL_mechanisms(LMS_0, w_L, w_M, limits)
    return (as_triplets(LMS, "LMS") - LMS_0) @ R.T


def DKL_to_LMS(DKL, LMS_0, w_L: float, w_M: float, limits=None) -> np.ndarray:
    """Cone excitations of DKL coordinates ``(lum, lm, s)`` relative to the background."""
    LMS_0 = _background(LMS_0)
    D = matrix_DKL_directions(LMS_0, w_L, w_M, limits)
    return LMS_0 + as_triplets(DKL, "DKL") @ D.T


def LMS_to_MacLeod_Boynton(LMS, w_L: float, w_M: float, k_S: float) -> np.ndarray:
    """MacLeod–Boynton ``(l, s, luminance)``: ``l = w_L·L/V``, ``s = k_S·S/V``, ``V = w_L·L + w_M·M``.

    With stimlab's cone scaling, V is luminance in cd/m².

    Examples
    --------
    >>> np.round(LMS_to_MacLeod_Boynton([10.0, 5.0, 0.5], 0.68990272, 0.34832189, 0.0371598), 6).tolist()
    [0.79844, 0.00215, 8.640637]
    """
    LMS = as_triplets(LMS, "LMS")
    V = w_L * LMS[..., 0] + w_M * LMS[..., 1]
    if np.any(V <= 0):
        raise ValueError("MacLeod–Boynton chromaticity is undefined at zero luminance")
    return np.stack([w_L * LMS[..., 0] / V, k_S * LMS[..., 2] / V, V], axis=-1)


def MacLeod_Boynton_to_LMS(lsV, w_L: float, w_M: float, k_S: float) -> np.ndarray:
    """Cone excitations from MacLeod–Boynton ``(l, s, luminance)``."""
    lsV = as_triplets(lsV, "MacLeod–Boynton (l, s, luminance)")
    l, s, V = lsV[..., 0], lsV[..., 1], lsV[..., 2]
    if np.any(V <= 0):
        raise ValueError("MacLeod–Boynton luminance must be positive")
    return np.stack([l * V / w_L, (1.0 - l) * V / w_M, s * V / k_S], axis=-1)
