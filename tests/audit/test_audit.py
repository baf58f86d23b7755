"""The audit: every demo protocol passes on the demo display, and a protocol that breaks each check fails it
with the right amount."""

import datetime as dt

import numpy as np
import pytest

from stimlab.audit.preflight import audit_protocol
from stimlab.colorimetry.stimulus import Background
from stimlab.experiment.compile import compile_protocol
from stimlab.experiment.protocol import CAUTION, validate_protocol

TODAY = dt.date(2026, 11, 25)  # the demo display was measured the day before


def audit(protocol, profile):
    protocol = validate_protocol(protocol)
    return audit_protocol(compile_protocol(protocol, profile), protocol, profile, today=TODAY)


def found(report, kind, severity):
    return [f for f in report["findings"] if f["kind"] == kind and f["severity"] == severity]


@pytest.mark.parametrize("name", ["afterimage_null", "contrast_match", "afterimage_duration", "detection_staircase"])
def test_demo_protocols_audit_cleanly(demo, protocol_named, name):
    report = audit(protocol_named(name), demo)
    assert report["passed"], [f["message"] for f in report["findings"] if f["severity"] == "fail"]
    assert report["counts"]["warn"] == 0, [f["message"] for f in report["findings"] if f["severity"] == "warn"]
    assert report["caution"] is None  # nothing flickers


def test_out_of_gamut_adapter_names_channel_and_amount(demo, demo_model, protocol_named):
    protocol = protocol_named("afterimage_duration")
    protocol["conditions"]["variables"]["adapter"] = {"strong": [0, 0.3, 0]}
    report = audit(protocol, demo)
    assert not report["passed"]
    (failure,) = [f for f in found(report, "gamut", "fail") if f["values"]["modulation"] == 1.0]
    # Hand computation: linear RGB of the adapter, and how far each channel leaves 0..1.
    background = Background(demo_model, [0.5, 0.5, 0.5])
    RGB = demo_model.LMS_to_RGB_linear(background.colour_to_LMS("dkl", [0, 0.3, 0]))
    expected = {c: float(v - 1 if v > 1 else v) for c, v in zip(("red", "green", "blue"), RGB) if not 0 <= v <= 1}
    assert failure["values"]["overshoot"] == pytest.approx(expected, abs=1e-6)
    assert failure["values"]["in_gamut_scale"] == pytest.approx(background.DKL_limits[1, 1] / 0.3)


def test_adjustment_range_leaving_the_gamut_reports_the_amount(demo, demo_model, protocol_named):
    protocol = protocol_named("afterimage_null")
    response = protocol["trial"][2]["response"]
    response.update(axis=[0, 1, 0], limits=[-0.3, 0.3], step_fine=0.01, start_jitter=0)
    protocol["conditions"]["variables"] = {"axis": {"L-M": [0, 0.06, 0]}, "polarity": {"plus": 1}}
    report = audit(protocol, demo)
    # Hand computation of the gamut edge along +L−M from the grey background: the first channel to reach 0 or 1.
    background = Background(demo_model, [0.5, 0.5, 0.5])
    step = demo_model.M_LMS_inverse @ background.D[:, 1]
    edge = min((1 - 0.5) / d if d > 0 else 0.5 / -d for d in step)
    upper = [f for f in found(report, "gamut", "fail") if f["values"].get("limit") == 0.3]
    assert len(upper) == 1
    assert upper[0]["values"]["gamut_edge"] == pytest.approx(edge)
    assert upper[0]["values"]["excess"] == pytest.approx(0.3 - edge)
    assert f"by {0.3 - edge:.4f}" in upper[0]["message"]


def test_fine_steps_below_one_digital_level_are_flagged(demo, protocol_named):
    protocol = protocol_named("afterimage_null")
    protocol["trial"][2]["response"]["step_fine"] = 0.002
    protocol["trial"][2]["response"]["step_coarse"] = 0.1
    report = audit(protocol, demo)
    warnings = found(report, "bit_depth", "warn")
    assert warnings and all(w["values"]["repeated_steps"] > 0 for w in warnings)
    assert report["passed"]  # coarse grain is a warning, not a failure


def _indistinct(report):
    return [f for f in found(report, "bit_depth", "warn") if "cannot tell these conditions apart" in f["message"]]


def test_conditions_a_display_quantises_to_the_same_levels_warn(demo, protocol_named):
    protocol = protocol_named("afterimage_duration")
    # Two adapters 1e-5 apart in L−M contrast: far below one 10-bit level, so both compile to the same device levels.
    protocol["conditions"]["variables"] = {"adapter": {"a": [0, 0.05, 0], "b": [0, 0.05001, 0]}}
    (warning,) = _indistinct(audit(protocol, demo))
    assert warning["values"]["same_as"] == "adapter=a"


def test_out_of_gamut_conditions_are_not_called_indistinguishable(demo, protocol_named):
    protocol = protocol_named("afterimage_null")
    protocol["conditions"]["variables"]["axis"] = {"L-M": [0, 0.2, 0]}  # both polarities leave the gamut
    report = audit(protocol, demo)
    assert found(report, "gamut", "fail")  # the gamut check reports them
    assert _indistinct(report) == []  # no device levels to compare: not "the same device values"


def test_predicted_null_outside_the_limits_fails_with_the_margin(demo, protocol_named):
    protocol = protocol_named("afterimage_null")
    protocol["trial"][2]["response"]["limits"] = [-0.6, 0.6]
    report = audit(protocol, demo)
    failures = found(report, "prediction", "fail")
    assert len(failures) == 4  # every condition: with k = 1 the null sits at ±1 adapter units
    assert all(f["values"]["margin_to_limits"] == pytest.approx(-0.4) for f in failures)
    protocol["adaptation_model"]["exponent"] = 0.5
    report = audit(protocol, demo)
    # k = 0.5: the null is (1 + c)^0.5 − 1 per cone. For the +S adapter (DKL S 0.45 = S cone contrast 0.45, L and
    # M unchanged) that is S contrast √1.45 − 1, i.e. position (√1.45 − 1)/0.45 in adapter units; by hand.
    predictions = {f["where"].split(" / ")[0]: f["values"]["position"][0] for f in found(report, "prediction", "info")}
    assert predictions["axis=S, polarity=plus"] == pytest.approx((np.sqrt(1.45) - 1) / 0.45)
    assert predictions["axis=S, polarity=minus"] == pytest.approx((np.sqrt(0.55) - 1) / 0.45)
    assert 0.45 < predictions["axis=L-M, polarity=plus"] < 0.55


def flicker_protocol(protocol_named, size_deg, frequency_hz, luminance=0.5):
    protocol = protocol_named("afterimage_duration")
    protocol["stimuli"][0].update(size_deg=size_deg, time_course={"kind": "square", "frequency_hz": frequency_hz})
    protocol["conditions"]["variables"] = {"adapter": {"lum": [luminance, 0, 0]}}
    return protocol


def test_large_bright_flicker_fails_photosensitivity_with_the_caution(demo, protocol_named):
    report = audit(flicker_protocol(protocol_named, 10, 10), demo)
    failures = found(report, "photosensitivity", "fail")
    assert failures and failures[0]["values"]["max_flashes_per_second"] == 10
    assert failures[0]["values"]["flashing_area_sr"] > 0.006
    assert "acknowledgement" in failures[0]["message"] and CAUTION in failures[0]["message"]
    assert report["caution"] == CAUTION and not report["passed"]


def test_small_flicker_passes_on_area_and_slow_flicker_on_count(demo, protocol_named):
    small = audit(flicker_protocol(protocol_named, 2, 10), demo)  # a 2° disc is 0.00096 sr
    assert not found(small, "photosensitivity", "fail") and found(small, "photosensitivity", "warn")
    assert small["passed"]
    slow = audit(flicker_protocol(protocol_named, 10, 3), demo)  # 3 flashes a second is allowed
    assert slow["passed"] and slow["caution"] == CAUTION


def test_dim_flicker_under_ten_percent_is_not_a_flash(demo, demo_model, protocol_named):
    # A ±0.04 DKL luminance modulation changes relative luminance by 2·0.04/√3·(L0 share) < 10 %.
    report = audit(flicker_protocol(protocol_named, 10, 10, luminance=0.04), demo)
    assert report["passed"] and not found(report, "photosensitivity", "fail")


def test_stimulus_off_the_screen_fails_geometry(demo, protocol_named):
    protocol = protocol_named("contrast_match")
    protocol["stimuli"][1]["position_deg"] = [30, 0]
    assert found(audit(protocol, demo), "geometry", "fail")


def test_planned_on_another_display_warns(demo, protocol_named):
    protocol = protocol_named("afterimage_duration")
    protocol["about"]["planned_display"] = {"name": "Room 2 CRT"}
    assert found(audit(protocol, demo), "display", "warn")


def test_old_profile_warns(demo, protocol_named):
    protocol = validate_protocol(protocol_named("afterimage_duration"))
    report = audit_protocol(compile_protocol(protocol, demo), protocol, demo, today=TODAY + dt.timedelta(days=40))
    assert any("recalibrate" in f["message"] for f in found(report, "display", "warn"))


def test_timing_reports_frame_rounding(demo, protocol_named):
    protocol = protocol_named("afterimage_null")
    protocol["trial"][1]["duration_s"] = 0.26
    notes = found(audit(protocol, demo), "timing", "info")
    assert any("16 frames = 0.2667 s" in n["message"] for n in notes)


def test_a_phase_shorter_than_a_frame_warns(demo, protocol_named):
    protocol = protocol_named("afterimage_null")
    protocol["trial"][1]["duration_s"] = 0.003  # 60 Hz: 16.7 ms per frame
    warnings = found(audit(protocol, demo), "timing", "warn")
    assert any("shorter than one frame" in w["message"] and "16.7 ms" in w["message"] for w in warnings)


def test_square_flicker_is_reported_at_the_rate_shown(demo, protocol_named):
    protocol = protocol_named("flicker_photometry")
    protocol["stimuli"][0]["time_course"]["frequency_hz"] = 13  # 60/13 = 4.6 → 5 frames: 12 Hz shown
    warnings = found(audit(protocol, demo), "timing", "warn")
    assert any("runs at 12.000 Hz" in w["message"] for w in warnings)
