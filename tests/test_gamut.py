"""Gamut along a direction: exact scale limits from the RGB cube."""

import numpy as np
import pytest

from stimlab.colorimetry.device import is_within_gamut
from stimlab.colorimetry.gamut import scale_limit
from stimlab.colorimetry.stimulus import Background


def test_hand_computed_limit():
    # From (0.2, 0.5, 0.9) along (0.1, 0.1, 0.1): blue reaches 1 after 1.0 of a unit; red and green later.
    scale, channel = scale_limit([0.2, 0.5, 0.9], [0.1, 0.1, 0.1])
    assert float(scale) == pytest.approx(1.0)
    assert int(channel) == 2
    # Along (-0.4, 0, 0): red reaches 0 after 0.5.
    scale, channel = scale_limit([0.2, 0.5, 0.9], [-0.4, 0.0, 0.0])
    assert float(scale) == pytest.approx(0.5) and int(channel) == 0


def test_zero_direction_is_unbounded():
    scale, channel = scale_limit([0.5, 0.5, 0.5], [0.0, 0.0, 0.0])
    assert np.isinf(scale) and channel == -1


def test_dkl_axis_limits_land_exactly_on_the_cube_surface(demo_model):
    background = Background(demo_model, [0.5, 0.4, 0.6])
    for axis in range(3):
        for side, limit in zip((0, 1), background.DKL_limits[axis]):
            point = np.zeros(3)
            point[axis] = limit
            RGB = demo_model.LMS_to_RGB_linear(background.colour_to_LMS("dkl", point))
            assert is_within_gamut(RGB)
            assert np.min(np.minimum(RGB, 1 - RGB)) == pytest.approx(0.0, abs=1e-12)
            point[axis] = limit * 1.001
            assert not is_within_gamut(demo_model.LMS_to_RGB_linear(background.colour_to_LMS("dkl", point)))


def test_vectorised_over_directions(demo_model):
    rng = np.random.default_rng(8)
    directions = rng.standard_normal((5, 7, 3))
    scale, _ = scale_limit([0.5, 0.5, 0.5], directions)
    assert scale.shape == (5, 7)
    assert scale[3, 4] == scale_limit([0.5, 0.5, 0.5], directions[3, 4])[0]


def test_max_scale_in_describe_is_one_at_the_edge(demo_model):
    background = Background(demo_model, [0.5, 0.5, 0.5])
    edge = background.DKL_limits[1, 1]
    described = background.describe(background.colour_to_LMS("dkl", [0, edge, 0]))
    assert described["max_scale_in_gamut"] == pytest.approx(1.0)
    assert described["in_gamut"]
