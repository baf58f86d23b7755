"""How far a direction can go from a background before it leaves the display's RGB cube.

For a background ``RGB_0`` inside the cube and a direction ``ΔRGB``, the largest ``t ≥ 0`` with
``0 ≤ RGB_0 + t·ΔRGB ≤ 1`` is the smallest, over channels, of ``(1 − RGB_0)/ΔRGB`` where ``ΔRGB > 0`` and
``RGB_0/|ΔRGB|`` where ``ΔRGB < 0``: exact, no search.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np
from numpy.typing import ArrayLike, NDArray

if TYPE_CHECKING:  # for annotations only: the limits need nothing of the display but its matrix
    from .display import DisplayModel

__all__ = ["scale_limit", "max_scale_in_gamut", "DKL_axis_limits", "plane_gamut_polygon"]


def scale_limit(RGB_0: ArrayLike, delta_RGB: ArrayLike) -> tuple[NDArray[np.float64], NDArray[np.int_]]:
    """Largest scale of ``delta_RGB`` from ``RGB_0`` that stays in the cube, and the channel that stops it.

    Parameters
    ----------
    RGB_0
        Background linear RGB, shape (3,), inside 0..1.
    delta_RGB
        Directions in linear RGB, shape (..., 3), any finite values.

    Returns
    -------
    scale : ndarray of float64, shape (...)
        The in-gamut scale, ≥ 0 (0 when the background already sits on the face the direction leaves by);
        ``inf`` for a zero direction.
    channel : ndarray of int, shape (...)
        0, 1, 2 for red, green, blue (−1 for a zero direction).

    Raises
    ------
    ValueError
        If a direction contains NaN or infinity.

    Examples
    --------
    >>> scale, channel = scale_limit([0.5, 0.5, 0.5], [0.25, -0.1, 0.0])
    >>> float(scale), int(channel)
    (2.0, 0)
    """
    RGB_0 = np.asarray(RGB_0, dtype=float)
    delta = np.asarray(delta_RGB, dtype=float)
    if not np.all(np.isfinite(delta)):
        raise ValueError("direction contains NaN or infinity")
    with np.errstate(divide="ignore", invalid="ignore"):
        room = np.where(delta > 0, (1.0 - RGB_0) / delta, np.where(delta < 0, -RGB_0 / delta, np.inf))
    room = np.clip(room, 0.0, None)
    channel = np.argmin(room, axis=-1)
    scale = np.take_along_axis(room, channel[..., None], axis=-1)[..., 0]
    return scale, np.where(np.isinf(scale), -1, channel)


def max_scale_in_gamut(model: DisplayModel, RGB_0: ArrayLike, delta_LMS: ArrayLike) -> NDArray[np.float64]:
    """Largest scale of a cone-excitation change ``delta_LMS`` from background ``RGB_0`` on ``model``'s display.

    Parameters
    ----------
    model
        A :class:`stimlab.colorimetry.display.DisplayModel` (only its ``M_LMS_inverse`` is used).
    RGB_0
        Background linear RGB, shape (3,), inside 0..1.
    delta_LMS
        Changes of cone excitation from the background, shape (..., 3), in the model's LMS units.

    Returns
    -------
    ndarray of float64, shape (...)
        The in-gamut scale, ≥ 0; ``inf`` for a zero change. A stimulus is in gamut exactly when this is ≥ 1 for
        its own ``delta_LMS``.

    Raises
    ------
    ValueError
        If a change contains NaN or infinity.
    """
    delta_RGB = np.asarray(delta_LMS, dtype=float) @ model.M_LMS_inverse.T
    return scale_limit(RGB_0, delta_RGB)[0]


def DKL_axis_limits(model: DisplayModel, RGB_0: ArrayLike, D: ArrayLike) -> NDArray[np.float64]:
    """Gamut limits along each DKL axis, in units of ``D``'s columns.

    Parameters
    ----------
    model
        A :class:`stimlab.colorimetry.display.DisplayModel`.
    RGB_0
        Background linear RGB, shape (3,), inside 0..1.
    D
        DKL directions in ΔLMS, shape (3, 3), one axis per column
        (:func:`stimlab.colorimetry.spaces.matrix_DKL_directions`).

    Returns
    -------
    ndarray of float64, shape (3, 2)
        Rows lum, L−M, S; columns: the limit in the negative direction (≤ 0) and in the positive one (≥ 0). With
        Brainard's normalisation of ``D`` the limits are in pooled cone contrast.
    """
    positive = max_scale_in_gamut(model, RGB_0, D.T)
    negative = max_scale_in_gamut(model, RGB_0, -D.T)
    return np.stack([-negative, positive], axis=-1)


def plane_gamut_polygon(RGB_0: ArrayLike, u_RGB: ArrayLike, v_RGB: ArrayLike) -> NDArray[np.float64]:
    """Where the plane ``RGB_0 + a·u + b·v`` cuts the RGB cube: the polygon's vertices (a, b), anticlockwise.

    Parameters
    ----------
    RGB_0
        Background linear RGB, shape (3,), inside 0..1.
    u_RGB, v_RGB
        The plane's two directions in linear RGB, shape (3,), not parallel (a DKL plane's axes, say).

    Returns
    -------
    ndarray of float64, shape (K, 2)
        Vertices (a, b) in units of ``u`` and ``v``, anticlockwise from the one with the smallest angle above −π
        about their centroid; shape (0, 2) if the plane misses the cube.

    Notes
    -----
    Each face of the cube (a channel at 0 or 1) is a line in the plane; the polygon's vertices are the pairwise
    intersections of those lines that satisfy every other face.

    Examples
    --------
    >>> plane_gamut_polygon([0.5, 0.5, 0.5], [1, 0, 0], [0, 1, 0]).round(6).tolist()
    [[-0.5, -0.5], [0.5, -0.5], [0.5, 0.5], [-0.5, 0.5]]
    """
    RGB_0, u, v = (np.asarray(x, dtype=float) for x in (RGB_0, u_RGB, v_RGB))
    # Faces as rows of A·(a, b) ≤ c: channel ≤ 1 and −channel ≤ 0.
    A = np.concatenate([np.stack([u, v], axis=1), -np.stack([u, v], axis=1)])
    c = np.concatenate([1 - RGB_0, RGB_0])
    vertices = []
    for i in range(6):
        for j in range(i + 1, 6):
            M = A[[i, j]]
            if abs(np.linalg.det(M)) < 1e-12:
                continue
            point = np.linalg.solve(M, c[[i, j]])
            if np.all(A @ point <= c + 1e-9):
                vertices.append(point)
    if not vertices:
        return np.zeros((0, 2))
    vertices = np.unique(np.round(np.array(vertices), 12), axis=0)
    centre = vertices.mean(axis=0)
    order = np.argsort(np.arctan2(vertices[:, 1] - centre[1], vertices[:, 0] - centre[0]))
    return vertices[order]
