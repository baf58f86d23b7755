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
from numpy.typing import ArrayLike, NDArray

__all__ = [
    "DKL_AXES",
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

DKL_AXES = ("lum", "L-M", "S")
"""Names of the DKL axes, in coordinate order (Brainard 1996's luminance, L−M and S directions)."""


def as_triplets(values: ArrayLike, name: str) -> NDArray[np.float64]:
    """Check and convert colour triplets: a float array of shape (..., 3) with no NaN or infinity.

    Parameters
    ----------
    values
        Any array-like with 3 in its last axis (cone excitations, linear RGB, coordinates of one space).
    name
        What to call ``values`` in an error message.

    Returns
    -------
    ndarray of float64, shape (..., 3)

    Raises
    ------
    ValueError
        If the last axis is not 3 long, or a value is NaN or infinite; the message names ``name``.

    Examples
    --------
    >>> as_triplets([1, 2, 3], "LMS").tolist()
    [1.0, 2.0, 3.0]
    """
    values = np.asarray(values, dtype=float)
    if values.shape[-1:] != (3,):
        raise ValueError(f"{name} must have shape (..., 3), got {values.shape}")
    if not np.all(np.isfinite(values)):
        raise ValueError(f"{name} contains NaN or infinity")
    return values


def _background(LMS_0: ArrayLike) -> NDArray[np.float64]:
    LMS_0 = as_triplets(LMS_0, "LMS_0")
    if LMS_0.ndim != 1:
        raise ValueError(f"LMS_0 must be one background of shape (3,), got {LMS_0.shape}")
    if np.any(LMS_0 <= 0):
        raise ValueError(f"background cone excitations LMS_0 must all be positive, got {LMS_0.tolist()}")
    return LMS_0


def LMS_to_cone_contrast(LMS: ArrayLike, LMS_0: ArrayLike) -> NDArray[np.float64]:
    """Cone contrast against the background, ``(LMS − LMS_0) / LMS_0`` in each cone class.

    Parameters
    ----------
    LMS
        Cone excitations, shape (..., 3), in the units of ``LMS_0`` (stimlab scales them so that
        ``w_L·L + w_M·M`` is luminance in cd/m²).
    LMS_0
        Background cone excitations, shape (3,), all > 0.

    Returns
    -------
    ndarray of float64, shape (..., 3)
        Cone contrast (dimensionless, 0 at the background, −1 at no excitation), L, M, S.

    Raises
    ------
    ValueError
        If a value is NaN or infinite, a shape is wrong, or a background excitation is 0 or negative.

    Notes
    -----
    Domain: LMS ≥ 0 for real lights (not enforced). Range: (−1, ∞) for real lights.

    References
    ----------
    Brainard, D. H. (1996). Cone contrast and opponent modulation color spaces. In Human Color Vision (2nd ed.).

    Examples
    --------
    >>> np.round(LMS_to_cone_contrast([1.1, 0.9, 2.0], [1.0, 1.0, 1.0]), 12).tolist()
    [0.1, -0.1, 1.0]
    """
    LMS_0 = _background(LMS_0)
    return (as_triplets(LMS, "LMS") - LMS_0) / LMS_0


def cone_contrast_to_LMS(contrast: ArrayLike, LMS_0: ArrayLike) -> NDArray[np.float64]:
    """Cone excitations of a cone contrast against the background, ``LMS_0 · (1 + c)``.

    Parameters
    ----------
    contrast
        Cone contrast, shape (..., 3), L, M, S; above −1 for a real light.
    LMS_0
        Background cone excitations, shape (3,), all > 0.

    Returns
    -------
    ndarray of float64, shape (..., 3)
        Cone excitations in the units of ``LMS_0``; the inverse of :func:`LMS_to_cone_contrast`.

    Raises
    ------
    ValueError
        If a value is NaN or infinite, a shape is wrong, or a background excitation is 0 or negative.

    Examples
    --------
    >>> np.round(cone_contrast_to_LMS([0.1, -0.1, 0.0], [2.0, 1.0, 0.5]), 12).tolist()
    [2.2, 0.9, 0.5]
    """
    LMS_0 = _background(LMS_0)
    return LMS_0 * (1.0 + as_triplets(contrast, "cone contrast"))


def matrix_DKL_directions(LMS_0: ArrayLike, w_L: float, w_M: float,
                          limits: ArrayLike | None = None) -> NDArray[np.float64]:
    """Matrix ``D`` whose columns are the unit DKL directions in ΔLMS: ``ΔLMS = D · (lum, lm, s)``.

    Parameters
    ----------
    LMS_0
        Background cone excitations, shape (3,), all > 0.
    w_L, w_M
        The observer's luminance weights (luminance in cd/m² is ``w_L·L + w_M·M``), > 0.
    limits
        ``None`` for Brainard's normalisation (each unit direction has pooled cone contrast 1); otherwise the
        largest in-gamut scale of each pooled-unit direction, shape (3,), all > 0, which makes 1 the display's
        maximum along each positive axis ("display_maximum").

    Returns
    -------
    ndarray of float64, shape (3, 3)
        Columns: ΔLMS of a unit step along lum, L−M and S, in the units of ``LMS_0``.

    Raises
    ------
    ValueError
        For a bad background or ``limits`` that are not three finite positive numbers.

    Notes
    -----
    Isolating directions: luminance ∝ LMS_0; L−M ∝ (w_M, −w_L, 0), which leaves luminance and S unchanged;
    S ∝ (0, 0, 1). Signs: +L−M raises L (reddish), +S raises S (violet), +lum raises luminance. Pooled cone
    contrast is ``√(c_L² + c_M² + c_S²)``.

    References
    ----------
    Derrington, A. M., Krauskopf, J., & Lennie, P. (1984). J. Physiol., 357, 241–265 (the axes).
    Brainard, D. H. (1996), in Human Color Vision (2nd ed.), 563–579 (the construction and the normalisation).

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


def matrix_DKL_mechanisms(LMS_0: ArrayLike, w_L: float, w_M: float,
                          limits: ArrayLike | None = None) -> NDArray[np.float64]:
    """Mechanism rows on ΔLMS, each reading 1 on its own unit direction: ``(lum, lm, s) = R · ΔLMS``.

    Parameters
    ----------
    LMS_0, w_L, w_M, limits
        As for :func:`matrix_DKL_directions`.

    Returns
    -------
    ndarray of float64, shape (3, 3)
        Rows: the luminance, L−M and S−(L+M) mechanisms; ``R = D⁻¹``.

    Raises
    ------
    ValueError
        As for :func:`matrix_DKL_directions`.

    Notes
    -----
    Rows before scaling: luminance ``(w_L, w_M, 0)``; L−M ``(1, −L_0/M_0, 0)``; S−(L+M)
    ``(−w_L·S_0/V_0, −w_M·S_0/V_0, 1)`` with ``V_0 = w_L·L_0 + w_M·M_0``. Each row is zero on the other two
    isolating directions, so ``R = D⁻¹``.

    References
    ----------
    Derrington, Krauskopf & Lennie (1984); Brainard (1996).

    Examples
    --------
    >>> R = matrix_DKL_mechanisms([1.0, 1.0, 1.0], 0.5, 0.5)
    >>> np.round(R @ matrix_DKL_directions([1.0, 1.0, 1.0], 0.5, 0.5), 12).tolist()
    [[1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]]
    """
    LMS_0 = _background(LMS_0)
    L_0, M_0, S_0 = LMS_0
    V_0 = w_L * L_0 + w_M * M_0
    rows = np.array([[w_L, w_M, 0.0], [1.0, -L_0 / M_0, 0.0], [-w_L * S_0 / V_0, -w_M * S_0 / V_0, 1.0]])
    D = matrix_DKL_directions(LMS_0, w_L, w_M, limits)
    return rows / np.einsum("ij,ji->i", rows, D)[:, None]


def LMS_to_DKL(LMS: ArrayLike, LMS_0: ArrayLike, w_L: float, w_M: float,
               limits: ArrayLike | None = None) -> NDArray[np.float64]:
    """DKL coordinates ``(lum, lm, s)`` of cone excitations relative to the background.

    Parameters
    ----------
    LMS
        Cone excitations, shape (..., 3), in the units of ``LMS_0``.
    LMS_0, w_L, w_M, limits
        As for :func:`matrix_DKL_directions`.

    Returns
    -------
    ndarray of float64, shape (..., 3)
        Lum, L−M, S: pooled cone contrast along each axis with ``limits=None``; fractions of the display maximum
        along each positive axis otherwise. 0 at the background.

    Raises
    ------
    ValueError
        If a value is NaN or infinite, a shape is wrong, or the background or limits are invalid.

    References
    ----------
    Derrington, Krauskopf & Lennie (1984); Brainard (1996).

    Examples
    --------
    >>> np.round(LMS_to_DKL([1.1, 1.1, 1.1], [1.0, 1.0, 1.0], 0.5, 0.5), 6).tolist()
    [0.173205, -0.0, 0.0]

    A 10 % step in every cone class has pooled cone contrast √3 · 0.1 and lies along the luminance axis.
    """
    LMS_0 = _background(LMS_0)
    R = matrix_DKL_mechanisms(LMS_0, w_L, w_M, limits)
    return (as_triplets(LMS, "LMS") - LMS_0) @ R.T


def DKL_to_LMS(DKL: ArrayLike, LMS_0: ArrayLike, w_L: float, w_M: float,
               limits: ArrayLike | None = None) -> NDArray[np.float64]:
    """Cone excitations of DKL coordinates ``(lum, lm, s)`` relative to the background.

    Parameters
    ----------
    DKL
        Lum, L−M, S, shape (..., 3): pooled cone contrast with ``limits=None``, fractions of the display maximum
        otherwise.
    LMS_0, w_L, w_M, limits
        As for :func:`matrix_DKL_directions`.

    Returns
    -------
    ndarray of float64, shape (..., 3)
        Cone excitations in the units of ``LMS_0``; the inverse of :func:`LMS_to_DKL`. Large coordinates can
        give negative excitations, which no light has.

    Raises
    ------
    ValueError
        If a value is NaN or infinite, a shape is wrong, or the background or limits are invalid.

    References
    ----------
    Derrington, Krauskopf & Lennie (1984); Brainard (1996).

    Examples
    --------
    >>> np.round(DKL_to_LMS([0.0, 0.0, 0.2], [1.0, 1.0, 1.0], 0.5, 0.5), 12).tolist()
    [1.0, 1.0, 1.2]
    """
    LMS_0 = _background(LMS_0)
    D = matrix_DKL_directions(LMS_0, w_L, w_M, limits)
    return LMS_0 + as_triplets(DKL, "DKL") @ D.T


def LMS_to_MacLeod_Boynton(LMS: ArrayLike, w_L: float, w_M: float, k_S: float) -> NDArray[np.float64]:
    """MacLeod–Boynton ``(l, s, luminance)``: ``l = w_L·L/V``, ``s = k_S·S/V``, ``V = w_L·L + w_M·M``.

    Parameters
    ----------
    LMS
        Cone excitations, shape (..., 3), scaled so that ``w_L·L + w_M·M`` is luminance in cd/m².
    w_L, w_M
        The observer's luminance weights, > 0.
    k_S
        The observer's S scaling, > 0 (:class:`stimlab.colorimetry.observers.Observer`).

    Returns
    -------
    ndarray of float64, shape (..., 3)
        l (0..1 for real lights), s (≥ 0; 1 at the spectrum's peak of S/V) and luminance V in cd/m².

    Raises
    ------
    ValueError
        If a value is NaN or infinite, the shape is wrong, or a luminance is 0 or negative (chromaticity is
        undefined there).

    Notes
    -----
    With stimlab's cone scaling, V is luminance in cd/m² and ``l + m = 1``.

    References
    ----------
    MacLeod, D. I. A., & Boynton, R. M. (1979). Chromaticity diagram showing cone excitation by stimuli of equal
    luminance. JOSA, 69, 1183–1186. CIE 170-2:2015 (the cone-fundamental-based MacLeod–Boynton diagram and its
    scaling).

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


def MacLeod_Boynton_to_LMS(lsV: ArrayLike, w_L: float, w_M: float, k_S: float) -> NDArray[np.float64]:
    """Cone excitations of MacLeod–Boynton ``(l, s, luminance)``.

    Parameters
    ----------
    lsV
        l (0..1), s (≥ 0) and luminance V (cd/m², > 0), shape (..., 3).
    w_L, w_M, k_S
        As for :func:`LMS_to_MacLeod_Boynton`.

    Returns
    -------
    ndarray of float64, shape (..., 3)
        L, M, S; the inverse of :func:`LMS_to_MacLeod_Boynton`.

    Raises
    ------
    ValueError
        If a value is NaN or infinite, the shape is wrong, or a luminance is 0 or negative.

    References
    ----------
    MacLeod & Boynton (1979); CIE 170-2:2015.

    Examples
    --------
    >>> np.round(MacLeod_Boynton_to_LMS([0.79844, 0.00215, 8.640637], 0.68990272, 0.34832189, 0.0371598), 3).tolist()
    [10.0, 5.0, 0.5]
    """
    lsV = as_triplets(lsV, "MacLeod–Boynton (l, s, luminance)")
    l, s, V = lsV[..., 0], lsV[..., 1], lsV[..., 2]
    if np.any(V <= 0):
        raise ValueError("MacLeod–Boynton luminance must be positive")
    return np.stack([l * V / w_L, (1.0 - l) * V / w_M, s * V / k_S], axis=-1)
