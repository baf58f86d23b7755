"""Protocol fields in the researcher's words: labels with where the field sits, and schema errors as sentences."""

import json
from pathlib import Path

import pytest

from stimlab.errors import InputError
from stimlab.experiment.labels import axis_name, component_names, field_label, plain_words, short_label
from stimlab.experiment.protocol import validate_protocol

PROTOCOLS = Path(__file__).parents[1] / "protocols"


def demo(name="afterimage_null"):
    return json.loads((PROTOCOLS / f"{name}.json").read_text())


def error_for(data) -> InputError:
    with pytest.raises(InputError) as caught:
        validate_protocol(data, "p.json")
    return caught.value


def test_a_negative_duration_names_the_phase_and_the_minimum():
    data = demo()
    data["trial"][1]["duration_s"] = -1
    error = error_for(data)
    assert error.field == "trial[1].duration_s"
    assert error.message == "Duration (s) of phase 2 (gap) must be 0 or more (it is -1)"
    assert "minimum" not in error.message


def test_size_and_type_errors_use_the_stimulus_name():
    data = demo()
    data["stimuli"][1]["size_deg"] = 0
    assert error_for(data).message == "Size (deg) of stimulus 2 (test_disc) must be more than 0 (it is 0)"
    data = demo()
    data["stimuli"][1]["colour"]["dkl"][1] = "red"
    message = error_for(data).message
    assert message.startswith("L−M in DKL (luminance, L−M, S) of the colour of stimulus 2 (test_disc)")
    assert "must be a number" in message


def test_a_missing_field_is_named_by_its_label():
    data = demo()
    del data["about"]["viewing_distance_cm"]
    assert error_for(data).message == "About the study needs viewing distance (cm)"


def test_reference_errors_carry_the_label_and_no_raw_keys():
    data = demo()
    del data["trial"][0]["duration_s"]
    error = error_for(data)
    assert error.field == "trial[0].duration_s"
    assert "duration_s" not in error.message and "Duration (s) of phase 1 (adapt)" in error.message


def test_vector_entries_are_named_by_their_space_and_keys_by_their_role():
    protocol = demo()
    assert short_label("stimuli[1].colour.dkl[1]", protocol) == "L−M"
    assert short_label("stimuli[0].colour.cone_contrast[2]", protocol) == "S"
    assert short_label("trial[2].response.keys[0]", protocol) == "Key for more"
    assert short_label("trial[2].response.limits[1]", protocol) == "high"
    # A variable used as a DKL colour gets DKL component names.
    assert component_names("conditions.variables.axis.L-M", protocol) == ("luminance", "L−M", "S")
    assert field_label("trial[0].top_up_s", protocol).startswith("Top-up adaptation")


def test_plane_axes_are_named_as_the_protocol_names_them():
    protocol = demo("contrast_match")
    assert component_names("trial[1].response.start", protocol) == ("L−M", "S")
    assert axis_name([0, 0, -1], "dkl") == "−S" and axis_name([0, 1, 1], "dkl") == "(0, 1, 1)"


def test_plain_words_replaces_known_keys_only():
    assert plain_words("an adapt phase needs duration_s") == "an adapt phase needs duration (s)"
    assert plain_words("a not_a_key stays") == "a not_a_key stays"
