"""The monotone table transfer model: the sRGB curve (IEC 61966-2-1) from 18 levels, refusal of bad tables."""

import numpy as np
import pytest

from stimlab.colorimetry.transfer import fit_transfer, sRGB_decode
from stimlab.colorimetry.transfer_table import TableTransfer


def test_table_model_represents_srgb_curve_from_18_levels_within_half_a_level():
    # IEC 61966-2-1 curve sampled at 18 levels, spaced more densely towards black as a technician would measure
    # (levels 255·(i/17)^1.5); the monotone table must invert every level's output to within 0.5 digital level.
    levels = np.unique(np.round(255 * np.linspace(0, 1, 18) ** 1.5))
    assert levels.size == 18
    transfer = fit_transfer(levels / 255, sRGB_decode(levels), "table").transfer
    all_levels = np.arange(256)
    recovered = transfer.inverse(sRGB_decode(all_levels)) * 255
    assert np.max(np.abs(recovered - all_levels)) <= 0.5


def test_non_monotone_table_is_refused_naming_the_point():
    with pytest.raises(ValueError, match="after point 2"):
        TableTransfer((0, 0.5, 0.7, 1), (0, 0.4, 0.3, 1))


def test_table_round_trip_and_n_dimensional_input():
    transfer = TableTransfer((0.0, 0.25, 0.5, 1.0), (0.0, 0.05, 0.2, 1.0))
    x = np.linspace(0, 1, 24).reshape(2, 3, 4)
    assert transfer.forward(x).shape == (2, 3, 4)
    assert np.allclose(transfer.inverse(transfer.forward(x)), x, atol=1e-4)


def test_table_passes_through_its_points_and_holds_its_ends():
    transfer = TableTransfer((0.0, 0.5, 1.0), (0.0, 0.2, 1.0))
    assert transfer.forward([0.0, 0.5, 1.0]).tolist() == pytest.approx([0.0, 0.2, 1.0])
    assert float(transfer.forward(1.5)) == pytest.approx(1.0)
    assert transfer.parameters() == {"x": [0.0, 0.5, 1.0], "y": [0.0, 0.2, 1.0]}


def test_table_refuses_unequal_counts_and_falling_levels():
    with pytest.raises(ValueError, match="equal count"):
        TableTransfer((0.0, 1.0), (0.0, 0.5, 1.0))
    with pytest.raises(ValueError, match="increase strictly"):
        TableTransfer((0.0, 0.6, 0.5, 1.0), (0.0, 0.1, 0.2, 1.0))


def test_table_inverse_refuses_nan():
    with pytest.raises(ValueError, match="y must be finite"):
        TableTransfer((0.0, 1.0), (0.0, 1.0)).inverse(np.nan)
