"""Spectra and tabulated spectral functions on one wavelength grid, for integrating one against the other.

A measured spectrum is integrated on its own samples (:func:`integration_grid`): it is never interpolated, since
interpolation rings around the narrow emission lines of LCD and OLED primaries. The smooth tabulated functions
(cone fundamentals, V(λ), V′(λ), the CIE 1931 colour-matching functions) are brought to those samples instead,
exactly at their own nodes and by Sprague interpolation between them (:func:`smooth_on_grid`). :func:`resample`
moves measured spectra between grids linearly where that is needed.

References
----------
- Sprague, T. B. (1880). Explanation of a new formula for interpolation. J. Inst. Actuaries, 22, 270–285 (from
  memory).
- CIE 167:2005, Recommended practice for tabulating spectral data for use in colour computations (from memory).
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ._colour import colour

__all__ = ["smooth_on_grid", "integration_grid", "resample"]


def smooth_on_grid(table_wavelengths: ArrayLike, table_values: ArrayLike, grid: ArrayLike) -> NDArray[np.float64]:
    """A smooth tabulated function (cone fundamental, luminous efficiency, CMF) on ``grid``, zero outside its table.

    Grid points that are table nodes take the tabulated value exactly; other points are interpolated with Sprague's
    fifth-order interpolation (the CIE's recommendation for interpolating 5 nm colorimetric tables, CIE 167:2005,
    from memory), which suits these smooth functions and would not suit measured emission lines. Its ringing in
    the near-zero tails (about 1e-5 of the peak) is kept: clipping it would bias the tails' integrals.

    Parameters
    ----------
    table_wavelengths
        Evenly spaced wavelengths of the table, nm, shape (N,).
    table_values
        Values, shape (N,) or (N, K).
    grid
        Wavelengths wanted, nm, shape (G,).

    Returns
    -------
    ndarray of float64
        Shape (G,) or (G, K), in the units of ``table_values``; 0 outside the table's range.

    References
    ----------
    Sprague, T. B. (1880). J. Inst. Actuaries, 22, 270–285; CIE 167:2005 (both from memory).

    Examples
    --------
    >>> smooth_on_grid([400, 405, 410, 415, 420, 425], [0, 1, 4, 9, 16, 25], [395, 405, 420]).tolist()
    [0.0, 1.0, 16.0]
    """
    table_wavelengths = np.asarray(table_wavelengths, dtype=float)
    values = np.asarray(table_values, dtype=float)
    columns = values if values.ndim == 2 else values[:, None]
    grid = np.asarray(grid, dtype=float)
    out = np.zeros((grid.size, columns.shape[1]))
    inside = (grid >= table_wavelengths[0] - 1e-9) & (grid <= table_wavelengths[-1] + 1e-9)
    step = table_wavelengths[1] - table_wavelengths[0]
    position = (grid[inside] - table_wavelengths[0]) / step
    nodes = np.round(position)
    if np.allclose(position, nodes, atol=1e-6):
        out[inside] = columns[nodes.astype(int)]
    else:
        for k in range(columns.shape[1]):
            interpolator = colour.algebra.SpragueInterpolator(table_wavelengths, columns[:, k])
            out[inside, k] = interpolator(np.clip(grid[inside], table_wavelengths[0], table_wavelengths[-1]))
    return out if values.ndim == 2 else out[:, 0]


def integration_grid(measured_wavelengths: ArrayLike, table_wavelengths: ArrayLike) -> tuple[NDArray[np.float64], float]:
    """The wavelength grid a measured spectrum is integrated on: the measurement's own samples.

    Parameters
    ----------
    measured_wavelengths
        Evenly spaced wavelengths of the measurement, nm.
    table_wavelengths
        Wavelengths of the observer's table, nm (its range bounds the grid).

    Returns
    -------
    grid : ndarray of float64
        The measured wavelengths inside the table's range, nm.
    step : float
        Grid spacing, nm: the integral is ``step · Σ spectrum · function`` over the grid.

    Notes
    -----
    The measured samples are never interpolated; the smooth tabulated functions are brought to them
    (:func:`smooth_on_grid`). A 1 nm measurement against the 5 nm Smith & Pokorny table keeps all its samples
    (decimating it would drop 4 of every 5 and with them narrow emission lines); a 5 nm measurement against a 1 nm
    table is summed at its own 5 nm, where the table has nodes. For a smooth spectrum the two agree to about 1e-6
    (``tests/test_display.py``); resampling a 5 nm measurement linearly onto 1 nm instead misses by up to 1 %
    in the spectral tails.

    Examples
    --------
    >>> grid, step = integration_grid(np.arange(380.0, 801.0, 5.0), np.arange(390.0, 831.0, 1.0))
    >>> float(grid[0]), float(grid[-1]), step
    (390.0, 800.0, 5.0)
    """
    measured = np.asarray(measured_wavelengths, dtype=float)
    table = np.asarray(table_wavelengths, dtype=float)
    keep = (measured >= table[0] - 1e-9) & (measured <= table[-1] + 1e-9)
    return measured[keep], float(measured[1] - measured[0])


def resample(wavelengths: ArrayLike, values: ArrayLike, grid: ArrayLike) -> NDArray[np.float64]:
    """Linear interpolation of spectra onto ``grid``, zero outside the measured range.

    Linear rather than Sprague interpolation: measured spectra are noisy, and a higher-order interpolant would
    ring and go negative around narrow emission lines.

    Parameters
    ----------
    wavelengths
        Increasing wavelengths of the spectra, nm, shape (N,).
    values
        Spectra, shape (N,) or (N, K) (radiance in W·sr⁻¹·m⁻²·nm⁻¹, say).
    grid
        Wavelengths wanted, nm, shape (G,).

    Returns
    -------
    ndarray of float64
        Shape (G,) or (G, K), in the units of ``values``.

    Examples
    --------
    >>> resample([400, 410, 420], [0.0, 1.0, 2.0], [405, 415, 425]).tolist()
    [0.5, 1.5, 0.0]
    """
    values = np.asarray(values, dtype=float)
    columns = values if values.ndim == 2 else values[:, None]
    out = np.stack([np.interp(grid, wavelengths, c, left=0.0, right=0.0) for c in columns.T], axis=-1)
    return out if values.ndim == 2 else out[:, 0]
