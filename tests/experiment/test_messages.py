"""Validation messages in the researcher's words: schema errors as sentences naming the field by its label."""

import json
from pathlib import Path

import pytest
from jsonschema import Draft202012Validator

from stimlab.errors import InputError
from stimlab.experiment.messages import MAX_SHOWN_CHARACTERS, explain_schema_error, plain_words
from stimlab.experiment.protocol import validate_protocol

PROTOCOLS = Path(__file__).parents[2] / "protocols"


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
    assert error.message == "Duration (s) of phase 2 (gap) must be 0 or more (it is −1)"
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


def test_plain_words_replaces_known_keys_only():
    assert plain_words("an adapt phase needs duration_s") == "an adapt phase needs duration (s)"
    assert plain_words("a not_a_key stays") == "a not_a_key stays"


def test_a_long_wrong_value_is_not_quoted_whole():
    long_text = "x" * MAX_SHOWN_CHARACTERS
    error = next(Draft202012Validator({"properties": {"notes": {"type": "number"}}}).iter_errors({"notes": long_text}))
    assert explain_schema_error(error) == "Notes must be a number, not …"
    error = next(Draft202012Validator({"properties": {"notes": {"type": "number"}}}).iter_errors({"notes": "short"}))
    assert explain_schema_error(error) == 'Notes must be a number, not "short"'


def test_names_of_the_trade_stay_as_written():
    assert plain_words("cone_contrast and macleod_boynton and duration_s") == \
        "cone_contrast and macleod_boynton and duration (s)"


def test_an_emptied_number_field_asks_for_a_number():
    data = demo()
    data["trial"][1]["duration_s"] = None  # what the editor sends for an emptied field
    assert error_for(data).message == "Duration (s) of phase 2 (gap) is empty: enter a number"
