"""DKL as fractions of the display maximum: limits from the RGB cube, blocked axes, round trips, refusals."""

import numpy as np
import pytest

from stimlab.colorimetry.display import DisplayModel
from stimlab.colorimetry.display_maximum import DisplayMaximum
from stimlab.colorimetry.gamut import DKL_axis_limits
from stimlab.colorimetry.spaces import matrix_DKL_directions


def _maximum(model, RGB_0):
    obs = model.observer
    D = matrix_DKL_directions(model.RGB_linear_to_LMS(RGB_0), obs.w_L, obs.w_M)
    return DisplayMaximum(model, RGB_0, D), D


def test_one_is_the_gamut_edge_along_each_positive_axis(demo_model):
    # Common practice: coordinate 1 along an axis is where a channel first reaches 0 or full drive.
    maximum, D = _maximum(demo_model, [0.5, 0.5, 0.5])
    assert maximum.blocked_axes == ()
    assert maximum.note() is None
    assert maximum.scale == pytest.approx(DKL_axis_limits(demo_model, [0.5, 0.5, 0.5], D)[:, 1])
    for axis in range(3):
        unit = np.zeros(3)
        unit[axis] = 1.0
        RGB = np.array([0.5, 0.5, 0.5]) + demo_model.M_LMS_inverse @ (D @ maximum.to_DKL(unit))
        assert np.min(np.minimum(RGB, 1.0 - RGB)) == pytest.approx(0.0, abs=1e-12)


def test_round_trip_and_n_dimensional_input(demo_model):
    maximum, _ = _maximum(demo_model, [0.4, 0.5, 0.6])
    values = np.random.default_rng(3).uniform(-1, 1, (2, 5, 3))
    assert maximum.to_DKL(values).shape == (2, 5, 3)
    assert maximum.from_DKL(maximum.to_DKL(values)) == pytest.approx(values)


def test_blocked_axis_is_nan_refuses_a_value_and_says_why(demo_model):
    # Green at full drive: no room towards more luminance (the cube's face green = 1).
    maximum, _ = _maximum(demo_model, [0.5, 1.0, 0.5])
    assert 0 in maximum.blocked_axes and maximum.scale[0] == 0.0
    assert np.isnan(maximum.from_DKL([0.01, 0.0, 0.0])[0])
    assert maximum.to_DKL([0.0, 0.2, 0.1])[0] == 0.0
    with pytest.raises(ValueError, match="lum as a fraction of the display maximum is undefined"):
        maximum.to_DKL([0.1, 0.0, 0.0])
    assert "green channel already at full drive" in maximum.note()


def test_nan_is_refused(demo_model):
    maximum, _ = _maximum(demo_model, [0.5, 0.5, 0.5])
    with pytest.raises(ValueError, match="NaN"):
        maximum.to_DKL([np.nan, 0.0, 0.0])


def test_crt_display_has_the_same_edge_rule(crt_profile):
    model = DisplayModel(crt_profile, "ss2")
    maximum, D = _maximum(model, [0.3, 0.3, 0.3])
    RGB = np.array([0.3, 0.3, 0.3]) + model.M_LMS_inverse @ (D @ maximum.to_DKL([0.0, 0.0, 1.0]))
    assert np.min(np.minimum(RGB, 1.0 - RGB)) == pytest.approx(0.0, abs=1e-12)
