"""Spectral functions on a measurement's grid: exact at table nodes, Sprague between them, zero outside."""

import numpy as np
import pytest

from stimlab.colorimetry._colour import colour
from stimlab.colorimetry.spectral import integration_grid, resample, smooth_on_grid


def test_table_nodes_are_taken_exactly_from_the_cie_1931_table():
    # colour-science's CIE 1931 2° table: ȳ(555 nm) = 1.0 at 1 nm spacing; a 5 nm grid hits table nodes only.
    cmfs = colour.colorimetry.MSDS_CMFS_STANDARD_OBSERVER["CIE 1931 2 Degree Standard Observer"]
    grid = np.arange(400.0, 701.0, 5.0)
    on_grid = smooth_on_grid(cmfs.wavelengths, cmfs.values, grid)
    assert on_grid.shape == (grid.size, 3)
    assert np.array_equal(on_grid, cmfs.values[np.isin(cmfs.wavelengths, grid)])
    assert on_grid[grid == 555.0, 1][0] == pytest.approx(1.0, abs=1e-4)


def test_sprague_reproduces_a_quadratic_between_nodes():
    # Sprague's fifth-order interpolant is exact on polynomials of low degree (worked example, from memory).
    table = np.arange(400.0, 461.0, 5.0)
    values = (table - 400.0) ** 2
    grid = np.array([412.5, 431.0, 447.0])
    assert smooth_on_grid(table, values, grid) == pytest.approx((grid - 400.0) ** 2, rel=1e-9)


def test_zero_outside_the_table_and_column_shapes():
    table = np.arange(400.0, 421.0, 5.0)
    values = np.stack([np.ones(5), 2 * np.ones(5)], axis=1)
    out = smooth_on_grid(table, values, [395.0, 410.0, 425.0])
    assert out.tolist() == [[0.0, 0.0], [1.0, 2.0], [0.0, 0.0]]
    assert smooth_on_grid(table, np.ones(5), [410.0]).shape == (1,)


def test_integration_grid_keeps_every_measured_sample_inside_the_table():
    # A 1 nm measurement against a 5 nm table keeps all its samples in the table's range; step = 1 nm.
    grid, step = integration_grid(np.arange(380.0, 781.0, 1.0), np.arange(400.0, 701.0, 5.0))
    assert step == 1.0 and grid[0] == 400.0 and grid[-1] == 700.0 and grid.size == 301


def test_resample_is_linear_and_zero_outside():
    spectra = np.array([[0.0, 10.0], [1.0, 20.0], [2.0, 30.0]])
    out = resample([400.0, 410.0, 420.0], spectra, [405.0, 420.0, 430.0])
    assert out.tolist() == [[0.5, 15.0], [2.0, 30.0], [0.0, 0.0]]
