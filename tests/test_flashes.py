"""Flash counting against sequences built at the WCAG 2.2 limits (success criterion 2.3.1 and the definition of
general flash and red flash thresholds)."""

import numpy as np
import pytest

from stimlab.audit.flashes import (
    general_flash_transitions,
    max_flashes_per_second,
    red_flash_transitions,
    turning_points,
)

REFRESH = 60.0


def square(frequency_hz, low, high, seconds=3.0):
    frames = np.arange(int(seconds * REFRESH))
    half = int(round(REFRESH / (2 * frequency_hz)))
    return np.where((frames // half) % 2 == 0, high, low)


def general(signal):
    return max_flashes_per_second(general_flash_transitions(signal), REFRESH)[0]


def test_three_flashes_per_second_pass_and_four_fail():
    # WCAG 2.2 SC 2.3.1: "no more than three flashes in any one-second period".
    assert general(square(3.0, 0.1, 0.6)) == 3
    assert general(square(4.0, 0.1, 0.6)) == 4  # 4 > 3: fails the count (the area decides the rest)


def test_a_change_just_under_ten_percent_is_not_a_flash():
    # WCAG 2.2: a flash needs opposing changes of 10 % or more of the maximum relative luminance.
    assert general(square(10.0, 0.3, 0.3 + 0.0999)) == 0
    assert general(square(10.0, 0.3, 0.3 + 0.1)) == 10


def test_bright_flicker_above_the_dark_limit_is_not_a_general_flash():
    # WCAG 2.2: only when the darker image is below 0.80 relative luminance.
    assert general(square(10.0, 0.82, 1.0)) == 0
    assert general(square(10.0, 0.79, 1.0)) == 10


def test_steady_and_single_step_signals_have_no_flash():
    assert general(np.full(120, 0.5)) == 0
    assert general(np.r_[np.full(60, 0.1), np.full(60, 0.9)]) == 0  # one transition is half a flash


def test_turning_points_skip_plateaus_and_monotone_runs():
    assert turning_points([0, 0, 1, 2, 2, 1, 1, 3]).tolist() == [0, 3, 5, 7]


def red_sequence(frequency_hz, red_state, other_state, seconds=2.0):
    frames = np.arange(int(seconds * REFRESH))
    half = int(round(REFRESH / (2 * frequency_hz)))
    on = (frames // half) % 2 == 0
    return np.where(on[:, None], red_state, other_state)


def uv_of(RGB):
    # A simple stand-in for u'v': saturated red far from grey, enough for the 0.2 test.
    return np.where(RGB[:, :1] / np.maximum(RGB.sum(axis=1, keepdims=True), 1e-9) >= 0.8, [[0.45, 0.52]],
                    [[0.20, 0.47]])


@pytest.mark.parametrize("definition", ["wcag22", "harding"])
def test_red_flashes_need_a_saturated_red_state(definition):
    red = np.array([0.9, 0.05, 0.05])
    grey = np.array([0.3, 0.3, 0.3])
    RGB = red_sequence(5.0, red, grey)
    transitions = red_flash_transitions(RGB, uv_of(RGB), definition)
    assert max_flashes_per_second(transitions, REFRESH)[0] == 5
    desaturated = np.array([0.6, 0.3, 0.3])  # R/(R+G+B) = 0.5: not a saturated red
    RGB = red_sequence(5.0, desaturated, grey)
    assert max_flashes_per_second(red_flash_transitions(RGB, uv_of(RGB), definition), REFRESH)[0] == 0


def test_harding_needs_a_change_of_more_than_20():
    # (R − G − B)·320: 0.07·320 = 22.4 > 20 counts; 0.06·320 = 19.2 does not.
    black = np.zeros(3)
    for excess, expected in ((0.07, 5), (0.06, 0)):
        red = np.array([excess, 0.0, 0.0])
        RGB = red_sequence(5.0, red, black)
        assert max_flashes_per_second(red_flash_transitions(RGB, uv_of(RGB), "harding"), REFRESH)[0] == expected


def test_unknown_red_definition():
    with pytest.raises(ValueError, match="wcag22, harding"):
        red_flash_transitions(np.zeros((3, 3)), np.zeros((3, 2)), "iso")
