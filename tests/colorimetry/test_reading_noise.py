"""The photometer noise model and the fit weights it gives."""

import numpy as np
import pytest

from stimlab.colorimetry.reading_noise import fit_weights, reading_sigma


def test_reading_sigma_is_relative_plus_floor():
    # The fit's stated noise model: 0.3 % of the reading plus 0.002 cd/m² (common practice defaults).
    assert reading_sigma([0.0, 1.0, 100.0]).tolist() == pytest.approx([0.002, 0.005, 0.302])
    with pytest.raises(ValueError):
        reading_sigma([1.0], relative=0.0, floor=0.0)


def test_fit_weights_are_reciprocal_sigma_with_a_default():
    # Default σ: 0.3 % of the normalised value plus 1e-4 (common practice defaults, as reading_sigma).
    assert fit_weights([0.0, 1.0]).tolist() == pytest.approx([1e4, 1 / 0.0031])
    assert fit_weights(np.zeros((2, 3)), 0.01).shape == (2, 3)


@pytest.mark.parametrize("sigma", [0.0, -0.1, np.nan, np.inf])
def test_fit_weights_refuse_unusable_sigma(sigma):
    with pytest.raises(ValueError, match="sigma must be finite and positive"):
        fit_weights([0.5, 0.6], [0.01, sigma])
