"""Linear RGB to digital levels: exact nearest level, no silent clipping, quantisation in cone contrast."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from stimlab.colorimetry.device import (
    RGB_linear_to_device,
    clip_to_gamut,
    device_to_RGB_linear,
    is_within_gamut,
    quantisation_cone_contrast,
)


def test_nearest_level_in_light_for_every_level(demo_model):
    outputs = demo_model.level_outputs
    levels = np.repeat(np.arange(1024)[:, None], 3, axis=1)
    back = RGB_linear_to_device(device_to_RGB_linear(levels, outputs), outputs)
    # Levels the model cannot tell apart (the gain-offset-gamma cut-off just above black gives several levels
    # zero output) come back as another level with the same output; every other level comes back as itself.
    assert np.array_equal(device_to_RGB_linear(back, outputs), device_to_RGB_linear(levels, outputs))
    distinct = np.diff(outputs, axis=1, prepend=-1.0).T > 0
    assert np.array_equal(back[distinct], levels[distinct])
    assert distinct.sum() > 3 * 980


def test_level_chosen_is_the_closest_output(demo_model):
    outputs = demo_model.level_outputs
    rng = np.random.default_rng(5)
    RGB = rng.random((2000, 3))
    levels = RGB_linear_to_device(RGB, outputs)
    for channel in range(3):
        distance = np.abs(outputs[channel][None, :] - RGB[:, channel][:, None])
        assert np.all(distance[np.arange(2000), levels[:, channel]] <= distance.min(axis=1) + 1e-15)


def test_out_of_gamut_is_refused_not_clipped(demo_model):
    with pytest.raises(ValueError, match="outside the display gamut"):
        RGB_linear_to_device([[0.5, 0.5, 0.5], [1.2, 0.5, 0.5]], demo_model.level_outputs)
    clipped, was_clipped = clip_to_gamut([[0.5, 0.5, 0.5], [1.2, 0.5, -0.1]])
    assert was_clipped.tolist() == [False, True]
    assert clipped[1].tolist() == [1.0, 0.5, 0.0]


def test_gamut_tolerance_is_floating_point_only():
    assert is_within_gamut([1.0 + 1e-12, 0.0, -1e-12])
    assert not is_within_gamut([1.0 + 1e-6, 0.0, 0.0])


def test_quantisation_matches_a_hand_computed_step(demo_model):
    outputs = demo_model.level_outputs
    levels = np.array([128, 100, 50])
    LMS_0 = demo_model.RGB_linear_to_LMS(device_to_RGB_linear(levels, outputs))
    grain = quantisation_cone_contrast(levels, outputs, demo_model.M_LMS, LMS_0)
    # Hand computation: one step of each channel alone, contrast against the background, largest per cone.
    steps = []
    for channel in range(3):
        up = levels.copy()
        up[channel] += 1
        LMS = demo_model.RGB_linear_to_LMS(device_to_RGB_linear(up, outputs))
        steps.append(np.abs(LMS - LMS_0) / LMS_0)
    assert grain == pytest.approx(np.max(steps, axis=0))


def test_quantisation_at_full_drive_uses_the_step_below(demo_model):
    outputs = demo_model.level_outputs
    grain = quantisation_cone_contrast(np.array([1023, 1023, 1023]), outputs, demo_model.M_LMS,
                                       demo_model.RGB_linear_to_LMS(np.ones(3)))
    assert np.all(grain > 0)


def test_device_levels_must_be_whole_and_in_range(demo_model):
    with pytest.raises(ValueError, match="0..1023"):
        device_to_RGB_linear(np.array([0, 1024, 3]), demo_model.level_outputs)
    with pytest.raises(ValueError, match="whole"):
        device_to_RGB_linear(np.array([0.5, 2.0, 3.0]), demo_model.level_outputs)


@settings(max_examples=200, deadline=None)
@given(st.lists(st.floats(0.0, 1.0, allow_nan=False), min_size=3, max_size=3))
def test_linear_device_linear_round_trip_within_one_step(demo_model, rgb):
    # Property: any in-gamut colour comes back within one quantisation step of each channel, indeed within half.
    outputs = demo_model.level_outputs
    levels = RGB_linear_to_device(np.array(rgb), outputs)
    back = device_to_RGB_linear(levels, outputs)
    for channel in range(3):
        step = np.max(np.diff(outputs[channel])[max(levels[channel] - 1, 0):levels[channel] + 1])
        assert abs(back[channel] - rgb[channel]) <= 0.5 * step + 1e-15


def test_binned_level_search_equals_binary_search_everywhere(demo_model):
    # The fast path must give exactly np.searchsorted's answer, including values on thresholds and at 0 and 1.
    from stimlab.colorimetry.device import _nearest_levels, _thresholds

    rng = np.random.default_rng(11)
    for bits_outputs in (demo_model.level_outputs, np.tile((np.arange(256) / 255.0) ** 2.4, (3, 1))):
        thresholds = _thresholds(bits_outputs)[0]
        values = np.concatenate([rng.random(200_000), rng.random(50_000) * 0.01, thresholds, [0.0, 1.0]])
        assert values.size >= 4 * 16 * thresholds.size  # large enough to take the binned path
        assert np.array_equal(_nearest_levels(thresholds, values), np.searchsorted(thresholds, values))
