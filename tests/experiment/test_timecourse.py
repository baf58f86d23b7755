"""The time-course rule: whole frames per phase, square periods, exact sine periods, ramps, and the lookup the
runner uses, over a grid of rates at common refresh rates."""

import math
from fractions import Fraction

import numpy as np
import pytest

from stimlab.experiment.timecourse import (
    STEPS,
    course_plan,
    phase_frames,
    shown_frequency_hz,
    square_period_frames,
    steps_at,
    steps_for_phase,
)

REFRESH_RATES = (60, 100, 120, 144)  # common practice: the refresh rates of laboratory displays


def rate_grid(refresh):
    """1 Hz to half the refresh rate, in steps that include rates that do not divide the refresh rate."""
    return [f for f in np.arange(1.0, refresh / 2 + 1e-9, 0.5).tolist()] + [refresh / 2]


def test_phase_frames_round_half_up_and_keep_short_phases():
    assert phase_frames(0.26, 60) == 16  # 15.6 frames
    assert phase_frames(0.025, 60) == 2  # exactly 1.5 frames: half up, not to even
    assert phase_frames(0.003, 120) == 1  # shorter than a frame: one frame (the audit warns)
    assert phase_frames(0, 60) == 0


def test_twelve_hertz_square_flicker_at_sixty_hertz_runs_at_twelve_hertz():
    plan = course_plan({"kind": "square", "frequency_hz": 12}, 60, 60)
    assert plan["cycle"] == [STEPS, STEPS, STEPS, -STEPS, -STEPS]
    assert shown_frequency_hz({"kind": "square", "frequency_hz": 12}, 60) == 12.0
    steps = steps_for_phase(plan, 60)
    rises = np.flatnonzero(np.diff(steps) > 0)
    assert rises.size == 11 and set(np.diff(rises).tolist()) == {5}  # 12 cycles in 60 frames


@pytest.mark.parametrize("refresh", REFRESH_RATES)
def test_square_periods_are_the_nearest_whole_frames(refresh):
    for f in rate_grid(refresh):
        period = square_period_frames(f, refresh)
        assert period >= 2 and abs(period - refresh / f) <= 0.5
        cycle = course_plan({"kind": "square", "frequency_hz": f}, refresh, None)["cycle"]
        assert len(cycle) == period and cycle.count(STEPS) == math.ceil(period / 2)


@pytest.mark.parametrize("refresh", REFRESH_RATES)
@pytest.mark.parametrize("kind", ["sine", "counterphase"])
def test_sine_cycles_are_exact_periods(refresh, kind):
    for f in rate_grid(refresh):
        course = {"kind": kind, "frequency_hz": f}
        cycle = np.array(course_plan(course, refresh, None)["cycle"])
        assert cycle.size == (Fraction(str(f)) / refresh).denominator
        k = np.arange(3 * cycle.size)
        direct = np.floor(STEPS * np.sin(2 * np.pi * f * k / refresh) + 0.5)
        assert np.abs(cycle[k % cycle.size] - direct).max() <= 1  # same course; last-bit differences only
        assert shown_frequency_hz(course, refresh) == pytest.approx(f)


def test_on_off_mode_and_ramps():
    course = {"kind": "square", "frequency_hz": 15, "mode": "on_off", "ramp_on_ms": 50, "ramp_off_ms": 50}
    plan = course_plan(course, 60, 12)
    steps = [steps_at(plan, k, 12) for k in range(12)]
    assert steps == steps_for_phase(plan, 12).tolist()
    # 3 frames of ramp each way; square on 2, off 2 from frame 0.
    assert steps == [85, 170, 0, 0, 255, 255, 0, 0, 255, 255, 0, 0]
    open_ended = course_plan(course, 60, None)
    assert open_ended["tail"] == [] and [steps_at(open_ended, k, None) for k in range(5)] == [85, 170, 0, 0, 255]


def test_a_ramp_longer_than_the_phase():
    plan = course_plan({"kind": "steady", "ramp_on_ms": 500}, 60, 10)
    assert steps_for_phase(plan, 10).tolist() == [math.floor(255 * (k + 1) / 30 + 0.5) for k in range(10)]


def test_a_ramp_off_scales_the_last_frames():
    plan = course_plan({"kind": "steady", "ramp_off_ms": 50}, 60, 6)
    assert steps_for_phase(plan, 6).tolist() == [255, 255, 255, 255, 170, 85]  # (frames − k)/3
