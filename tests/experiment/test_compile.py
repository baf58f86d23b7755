"""Compiling protocols: frames, pixels, device levels, adjustment ladders and seeded trial lists."""

import json
import math

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from stimlab.colorimetry.stimulus import Background
from stimlab.errors import InputError
from stimlab.experiment.compile import compile_protocol
from stimlab.experiment.protocol import validate_protocol


def test_durations_round_to_whole_frames(demo, protocol_named):
    protocol = protocol_named("afterimage_null")
    protocol["trial"][1]["duration_s"] = 0.26
    schedule = compile_protocol(validate_protocol(protocol), demo).data["schedules"]
    gap = schedule["first"][1]
    assert gap["frames"] == 16 and gap["actual_s"] == pytest.approx(16 / 60)  # 0.26 s × 60 Hz = 15.6 → 16
    assert schedule["first"][0]["frames"] == 1800 and schedule["repeat"][0]["phase"] == "top_up"
    assert schedule["repeat"][0]["frames"] == 480


def test_sizes_and_positions_in_pixels(demo, protocol_named):
    data = compile_protocol(validate_protocol(protocol_named("contrast_match")), demo).data
    inducer = data["conditions"][0]["stimuli"]["inducer"]["geometry"]
    px_per_cm = 1920 / 53.1
    # Common practice: size 2·D·tan(θ/2), eccentricity D·tan(e).
    assert inducer["size_px"] == pytest.approx(2 * 57 * math.tan(math.radians(1)) * px_per_cm)
    assert inducer["surround_size_px"] == pytest.approx(2 * 57 * math.tan(math.radians(4)) * px_per_cm)
    assert inducer["position_px"][0] == pytest.approx(-57 * math.tan(math.radians(5)) * px_per_cm)


def test_compiled_device_values_equal_a_direct_conversion(demo, demo_model, protocol_named):
    data = compile_protocol(validate_protocol(protocol_named("afterimage_null")), demo).data
    background = Background(demo_model, [0.5, 0.5, 0.5])
    condition = next(c for c in data["conditions"] if c["label"] == "axis=S, polarity=minus")
    adapter = condition["stimuli"]["adapter"]["colour"]
    direct = background.describe(background.colour_to_LMS("dkl", [0, 0, -0.45]))
    assert adapter["device"] == direct["rgb_device"]
    assert adapter["cone_contrast"] == pytest.approx(direct["cone_contrast"])
    assert data["background"]["device"] == background.describe(background.LMS_0)["rgb_device"]


def test_adjustment_ladder_maps_positions_to_colours(demo, demo_model, protocol_named):
    data = compile_protocol(validate_protocol(protocol_named("afterimage_null")), demo).data
    response = data["conditions"][0]["response"]
    assert response["positions"] == {"low": -1.5, "step": 0.05, "count": 61, "dimensions": 1}
    background = Background(demo_model, [0.5, 0.5, 0.5])
    axis = np.array(response["axes"][0])
    for index in (0, 17, 30, 60):
        position = -1.5 + 0.05 * index
        LMS = np.array(response["origin_lms"]) + position * np.array(response["axis_lms"][0])
        assert LMS == pytest.approx(background.colour_to_LMS("dkl", position * axis))
        assert response["device"][index] == background.to_device("dkl", position * axis).tolist()


def test_seeded_trials_reproduce_and_latin_square_blocks_counterbalance(demo, protocol_named):
    protocol = validate_protocol(protocol_named("afterimage_null"))
    first = compile_protocol(protocol, demo, participant=1).data["trials"]
    again = compile_protocol(protocol, demo, participant=1).data["trials"]
    second = compile_protocol(protocol, demo, participant=2).data["trials"]
    assert first == again
    assert len(first) == 16
    block_axis = lambda trials: [t["condition"] // 2 for t in trials if t["index"] % 8 == 0]  # noqa: E731
    assert block_axis(first) != block_axis(second)  # blocks by axis, order from the participant's row
    assert [t["schedule"] for t in first[:2]] == ["first", "repeat"] and first[8]["schedule"] == "first"
    starts = {t["start"] for t in first}
    assert len(starts) > 3 and all(0 <= s < 61 for s in starts)  # jittered start positions on the ladder


def test_json_able(demo, protocol_named):
    for name in ("afterimage_null", "contrast_match", "afterimage_duration", "detection_staircase"):
        json.dumps(compile_protocol(validate_protocol(protocol_named(name)), demo).data, allow_nan=False)


def test_out_of_gamut_stimulus_compiles_with_no_device_values(demo, protocol_named):
    protocol = protocol_named("afterimage_duration")
    protocol["conditions"]["variables"]["adapter"]["+L-M"] = [0, 0.4, 0]
    data = compile_protocol(validate_protocol(protocol), demo).data
    adapter = data["conditions"][0]["stimuli"]["adapter"]["colour"]
    assert adapter["in_gamut"] is False and adapter["device"] is None
    assert all(v is None or isinstance(v, list) for v in adapter["modulation_table"])


def test_profile_without_screen_size_is_refused(demo, protocol_named):
    profile = dict(demo, size_cm=None)
    with pytest.raises(InputError, match="no screen size"):
        compile_protocol(validate_protocol(protocol_named("afterimage_null")), profile)


SHAPES = st.sampled_from([
    {"shape": "disc", "size_deg": 2},
    {"shape": "square", "size_deg": 3},
    {"shape": "annulus", "size_deg": 4, "inner_size_deg": 2},
    {"shape": "centre_surround", "size_deg": 1, "surround_size_deg": 5, "second_colour": {"dkl": [0, 0, 0.1]}},
    {"shape": "bipartite", "size_deg": 4, "second_colour": {"cone_contrast": [0.01, -0.01, 0]}},
    {"shape": "gaussian", "sigma_deg": 0.5},
    {"shape": "grating", "sigma_deg": 1, "cycles_per_deg": 2, "time_course": {"kind": "counterphase",
                                                                              "frequency_hz": 2}},
    {"shape": "uniform_field"},
])
COLOURS = st.one_of(
    st.lists(st.floats(-0.05, 0.05), min_size=3, max_size=3).map(lambda v: {"dkl": v}),
    st.lists(st.floats(-0.02, 0.02), min_size=3, max_size=3).map(lambda v: {"cone_contrast": v}),
    st.tuples(st.floats(0.66, 0.72), st.floats(0.015, 0.03), st.floats(20, 60)).map(
        lambda v: {"macleod_boynton": list(v)}),
)
COURSES = st.sampled_from([{"kind": "steady"}, {"kind": "square", "frequency_hz": 2},
                           {"kind": "sine", "frequency_hz": 7.5, "mode": "on_off"},
                           {"kind": "steady", "ramp_on_ms": 200, "ramp_off_ms": 100}])


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(shapes=st.lists(SHAPES, min_size=1, max_size=3), colours=st.lists(COLOURS, min_size=3, max_size=3),
       course=COURSES, durations=st.lists(st.floats(0, 3), min_size=3, max_size=3),
       repeats=st.integers(1, 4), order=st.sampled_from(["fixed", "shuffled", "latin_square"]))
def test_random_valid_protocols_compile(demo, shapes, colours, course, durations, repeats, order):
    stimuli = []
    for i, shape in enumerate(shapes):
        stimulus = {"name": f"s{i}", "colour": colours[i], **shape}
        if "time_course" not in stimulus and shape["shape"] != "grating":
            stimulus["time_course"] = course
        stimuli.append(stimulus)
    protocol = {
        "stimlab_protocol": 1,
        "about": {"title": "random", "observer": "ss2", "viewing_distance_cm": 57},
        "background": {"dkl": [0, 0, 0]},
        "stimuli": stimuli,
        "trial": [{"phase": "adapt", "stimuli": [s["name"] for s in stimuli], "duration_s": durations[0]},
                  {"phase": "gap", "duration_s": durations[1]},
                  {"phase": "test", "stimuli": [stimuli[0]["name"]], "duration_s": durations[2]},
                  {"phase": "respond", "response": {"method": "yes_no", "keys": ["y", "n"]}}],
        "conditions": {"variables": {"level": [1, 2]}, "repeats": repeats, "order": order, "seed": 3},
    }
    data = compile_protocol(validate_protocol(protocol), demo).data
    assert len(data["trials"]) == 2 * repeats
    for stimulus in data["conditions"][0]["stimuli"].values():
        colour = stimulus["colour"]
        assert (colour["device"] is not None) == colour["extremes"][-1]["in_gamut"]
    json.dumps(data, allow_nan=False)


def test_a_plane_adjustment_takes_limits_per_direction(demo, protocol_named):
    """Per-direction limits: the S direction reaches ±0.3, L−M only ±0.1; positions beyond a direction's own
    limits have no device levels (the runner stops there), and the audit checks each direction's own limits."""
    from stimlab.audit.preflight import audit_protocol
    from stimlab.experiment.protocol import validate_protocol

    protocol = protocol_named("contrast_match")
    response = protocol["trial"][1]["response"]
    response["limits"] = [[-0.1, 0.1], [-0.3, 0.3]]
    response["step_fine"] = 0.01
    compiled = compile_protocol(validate_protocol(protocol), demo)
    entry = compiled.data["conditions"][0]["response"]
    assert entry["limits_per_axis"] == [[-0.1, 0.1], [-0.3, 0.3]]
    count = entry["positions"]["count"]
    assert count == 61 and entry["positions"]["low"] == pytest.approx(-0.3)
    grid = np.array(entry["device"], dtype=object).reshape(count, count)
    # L−M index 0 (−0.3) is beyond its limit; S index 0 (−0.3) is within its own.
    assert grid[0, 30] is None and grid[30, 0] is not None and grid[20, 0] is not None
    for _ in range(20):
        first, second = compiled.responses[0].start(np.random.default_rng(_))
        assert 20 <= first <= 40 and 0 <= second <= 60
    report = audit_protocol(compiled, protocol, demo)
    assert not [f for f in report["findings"] if f["kind"] == "gamut" and "positions are out of gamut" in f["message"]]
    # One pair still works for both directions; a pair per direction on a single axis is refused.
    protocol = protocol_named("afterimage_null")
    protocol["trial"][2]["response"]["limits"] = [[-1, 1], [-1, 1]]
    with pytest.raises(InputError) as caught:
        validate_protocol(protocol)
    assert caught.value.field == "trial[2].response.limits" and "per direction" in caught.value.message
