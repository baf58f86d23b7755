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
    # One transition is half a flash; counted conservatively as a flash in progress (DEVELOPERS.md's reading of
    # WCAG 2.2), it is one flash, far below the limit of three.
    assert general(np.r_[np.full(60, 0.1), np.full(60, 0.9)]) == 1


@pytest.mark.parametrize("transitions, flashes", [(6, 3), (7, 4), (8, 4)])
def test_an_odd_transition_in_a_second_counts_as_a_flash(transitions, flashes):
    # WCAG 2.2 SC 2.3.1 allows no more than three flashes in any one-second period; a flash is a pair of opposing
    # changes (the definition of general flash and red flash thresholds). Read conservatively, a leftover odd
    # transition is a flash in progress: 6 transitions are 3 flashes (pass), 7 and 8 are 4 (more than three).
    # Transitions every 8 frames at 60 Hz, all inside one second: 0.1 ↔ 0.6 relative luminance.
    levels = np.where(np.arange(transitions + 1) % 2 == 0, 0.1, 0.6)
    signal = np.r_[np.repeat(levels, 8), np.full(60, levels[-1])]
    frames = general_flash_transitions(signal)
    assert frames.size == transitions
    assert max_flashes_per_second(frames, REFRESH)[0] == flashes
    assert (max_flashes_per_second(frames, REFRESH)[0] > 3) == (transitions > 6)


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


def test_wcag22_red_flash_found_from_chromaticity_when_R_minus_G_minus_B_is_constant(crt_profile):
    # WCAG 2.2 / ISO 9241-391 red flash: one state with R/(R+G+B) ≥ 0.8 and the two states more than 0.2 apart in
    # CIE 1976 u′v′. States (0.3, 0, 0) (pure red, ratio 1) and (1.0, 0, 0.7) (purple, ratio 0.59) have the same
    # R − G − B = 0.3, so the red content max(0, R − G − B)·320 never changes; their u′v′ on colour-science's
    # 'Typical CRT Brainard 1997' primaries (computed with colour.XYZ_to_xy / xy_to_Luv_uv) differ by more than 0.2.
    from stimlab.colorimetry._colour import colour
    from stimlab.colorimetry.display import DisplayModel

    model = DisplayModel(crt_profile)
    red, purple = np.array([0.3, 0.0, 0.0]), np.array([1.0, 0.0, 0.7])
    assert red[0] - red[1] - red[2] == pytest.approx(purple[0] - purple[1] - purple[2])
    RGB = red_sequence(5.0, red, purple)
    uv = colour.xy_to_Luv_uv(colour.XYZ_to_xy(model.RGB_linear_to_XYZ(RGB)))
    assert np.linalg.norm(uv[0] - uv[6]) > 0.2  # frames 0 and 6 are the two states
    assert max_flashes_per_second(red_flash_transitions(RGB, uv, "wcag22"), REFRESH)[0] == 5
    # The older Harding & Binnie definition is about the red content itself and stays as it is: no change, no flash.
    assert max_flashes_per_second(red_flash_transitions(RGB, uv, "harding"), REFRESH)[0] == 0
