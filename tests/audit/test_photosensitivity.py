"""The photosensitivity audit on rendered frames, against WCAG 2.2 success criterion 2.3.1 and its definitions of
the general flash and red flash thresholds: cases just over and just under each threshold (relative luminance
change, flashes per second, flashing area, the darker-state limit), occlusion by a steady stimulus drawn on top,
and flashes made by phase changes alone."""

import copy
import datetime as dt

import numpy as np
import pytest

from stimlab.audit.photosensitivity import analyse_sequence
from stimlab.audit.preflight import audit_protocol
from stimlab.colorimetry.geometry import disc_solid_angle
from stimlab.experiment.compile import compile_protocol
from stimlab.experiment.protocol import CAUTION, validate_protocol

TODAY = dt.date(2026, 11, 25)

BASE = {
    "stimlab_protocol": 1,
    "about": {"title": "Flash thresholds", "observer": "ss2", "viewing_distance_cm": 57},
    "background": {"rgb_linear": [0.5, 0.5, 0.5]},
    "stimuli": [{"name": "patch", "shape": "disc", "size_deg": 10, "colour": {"cone_contrast": [0.5, 0.5, 0.5]},
                 "time_course": {"kind": "square", "frequency_hz": 5, "mode": "on_off"}}],
    "trial": [{"phase": "adapt", "stimuli": ["patch"], "duration_s": 3},
              {"phase": "respond", "timeout_s": 1, "response": {"method": "duration", "keys": [" "]}}],
    "conditions": {"repeats": 1, "order": "fixed"},
}


def protocol(**stimulus):
    p = copy.deepcopy(BASE)
    p["stimuli"][0].update(stimulus)
    return p


def analyse(p, profile):
    return analyse_sequence(compile_protocol(validate_protocol(p), profile))


def report(p, profile):
    p = validate_protocol(p)
    return audit_protocol(compile_protocol(p, profile), p, profile, today=TODAY)


def test_three_flashes_a_second_pass_and_four_fail(demo):
    # WCAG 2.2 SC 2.3.1: "does not contain anything that flashes more than three times in any one second period".
    three = analyse(protocol(time_course={"kind": "square", "frequency_hz": 3, "mode": "on_off"}), demo)
    four = analyse(protocol(time_course={"kind": "square", "frequency_hz": 4, "mode": "on_off"}), demo)
    assert three["general"]["max_flashes_per_second"] == 3 and not three["fails"]
    assert four["general"]["max_flashes_per_second"] == 4 and four["general"]["fails"]


@pytest.mark.parametrize("contrast, flashes", [(0.21, True), (0.19, False)])
def test_a_change_of_ten_percent_of_the_white_luminance(demo, contrast, flashes):
    # WCAG 2.2 definition: opposing changes in relative luminance of 10 % or more of the maximum. On the grey
    # background (relative luminance 0.5) an achromatic cone contrast c changes it by 0.5·c: 0.105 or 0.095.
    result = analyse(protocol(colour={"cone_contrast": [contrast] * 3}), demo)
    assert result["general"]["fails"] is flashes
    assert (result["general"]["max_flashes_per_second"] == 5) is flashes


@pytest.mark.parametrize("background, flashes", [(0.78, True), (0.85, False)])
def test_the_darker_state_must_be_below_point_eight(demo, background, flashes):
    # WCAG 2.2 definition: a general flash needs "the relative luminance of the darker image ... below 0.80".
    p = protocol(colour={"cone_contrast": [0.15] * 3})
    p["background"] = {"rgb_linear": [background] * 3}
    assert analyse(p, demo)["general"]["fails"] is flashes


@pytest.mark.parametrize("size_deg, fails", [(5.4, True), (4.6, False)])
def test_flashing_area_just_over_and_under_0006_sr(demo, size_deg, fails):
    # WCAG 2.2 definition: the combined area of flashes occurring concurrently must not exceed 0.006 sr within any
    # 10° visual field. A centred disc of diameter θ subtends 2π(1 − cos θ/2) sr: 0.0070 sr at 5.4°, 0.0051 at 4.6°.
    result = analyse(protocol(size_deg=size_deg), demo)["general"]
    assert result["max_flashes_per_second"] == 5
    assert result["flashing_area_sr"] == pytest.approx(disc_solid_angle(size_deg), rel=0.03)
    assert result["fails"] is fails


def test_the_area_counts_within_one_ten_degree_field(demo):
    # A 20° flashing disc is larger than any 10° field: the area is that of the field, 2π(1 − cos 5°) sr.
    result = analyse(protocol(size_deg=20), demo)["general"]
    assert result["flashing_area_sr"] == pytest.approx(disc_solid_angle(10), rel=0.03)


def with_spot(size_deg, on_top=True):
    p = protocol(size_deg=8)
    p["stimuli"].append({"name": "spot", "shape": "disc", "size_deg": size_deg,
                         "colour": {"cone_contrast": [-0.2, -0.2, -0.2]}})
    p["trial"][0]["stimuli"] = ["patch", "spot"] if on_top else ["spot", "patch"]
    return p


def test_a_steady_spot_over_a_flickering_disc_leaves_the_visible_ring_flashing(demo):
    # 8° disc at 5 Hz with a steady 0.5° spot drawn over its centre: the visible flashing area is the ring,
    # 2π(1 − cos 4°) − 2π(1 − cos 0.25°) ≈ 0.0152 sr, well over 0.006 sr.
    over = analyse(with_spot(0.5), demo)["general"]
    expected = disc_solid_angle(8) - disc_solid_angle(0.5)
    assert over["fails"] and over["flashing_area_sr"] == pytest.approx(expected, rel=0.03)
    under = analyse(with_spot(0.5, on_top=False), demo)["general"]  # drawn underneath: the whole disc flashes
    assert under["fails"] and under["flashing_area_sr"] == pytest.approx(disc_solid_angle(8), rel=0.03)
    findings = report(with_spot(0.5), demo)["findings"]
    failure = next(f for f in findings if f["kind"] == "photosensitivity" and f["severity"] == "fail")
    assert "patch" in failure["where"] and CAUTION in failure["message"]


def test_a_large_steady_cover_leaves_too_little_flashing_to_fail(demo):
    # A steady 7.6° disc on top leaves a ring of 2π(1 − cos 4°) − 2π(1 − cos 3.8°) ≈ 0.0015 sr: under 0.006 sr.
    result = analyse(with_spot(7.6), demo)["general"]
    assert result["max_flashes_per_second"] == 5 and not result["fails"]
    assert result["flashing_area_sr"] == pytest.approx(disc_solid_angle(8) - disc_solid_angle(7.6), rel=0.1)


def test_phase_changes_alone_can_flash(demo):
    # Steady stimuli only: a bright disc for 3 frames, then 6 frames of background, trial after trial: 60/9 ≈ 6.7
    # on-off cycles a second, made only by the phase changes within and between trials.
    p = protocol(time_course={"kind": "steady"})
    p["trial"] = [{"phase": "adapt", "stimuli": ["patch"], "duration_s": 0.05},
                  {"phase": "gap", "duration_s": 0.05},
                  {"phase": "respond", "timeout_s": 0.05, "response": {"method": "duration", "keys": [" "]}}]
    p["conditions"]["repeats"] = 12
    result = analyse(p, demo)["general"]
    assert result["fails"] and result["max_flashes_per_second"] >= 6 and result["transition"]
    found = report(p, demo)
    failure = next(f for f in found["findings"] if f["kind"] == "photosensitivity" and f["severity"] == "fail")
    assert "change between phases" in failure["where"] and not found["passed"]


@pytest.mark.parametrize("definition", ["red_wcag22", "red_harding"])
def test_saturated_red_flicker_is_a_red_flash(demo, demo_model, definition):
    # WCAG 2.2 definition: a red flash is a pair of opposing transitions involving a saturated red,
    # R/(R + G + B) ≥ 0.8. A small disc alternating between a grey background and a saturated red flashes red;
    # the same disc alternating with a saturated green does not.
    def alternating_with(RGB):
        p = protocol(size_deg=4)
        p["background"] = {"rgb_linear": [0.2, 0.2, 0.2]}
        contrast = demo_model.RGB_linear_to_LMS(np.array(RGB)) / demo_model.RGB_linear_to_LMS(np.full(3, 0.2)) - 1
        p["stimuli"][0]["colour"] = {"cone_contrast": contrast.tolist()}
        return analyse(p, demo)

    red = alternating_with([0.6, 0.01, 0.01])[definition]
    assert red["max_flashes_per_second"] == 5 and red["stimulus"] == "patch"
    assert not red["fails"]  # 4° is 0.0038 sr: under the area limit
    assert alternating_with([0.01, 0.6, 0.01])[definition]["max_flashes_per_second"] == 0


def test_every_demo_protocol_passes_and_flicker_photometry_keeps_its_caution(demo, protocol_named):
    for name in ("afterimage_null", "contrast_match", "afterimage_duration", "detection_staircase"):
        assert not analyse(protocol_named(name), demo)["fails"], name
    photometry = report(protocol_named("flicker_photometry"), demo)
    assert photometry["passed"] and photometry["caution"] == CAUTION
    flashes = [f for f in photometry["findings"] if f["kind"] == "photosensitivity"]
    # the caution, and the pass stated as a note; no flash finding, as before
    assert [(f["where"], f["severity"]) for f in flashes] == [("protocol", "warn"), ("every frame of every trial", "info")]
    assert "passes WCAG 2.2 SC 2.3.1" in flashes[1]["message"]
