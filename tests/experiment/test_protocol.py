"""Protocol files: the schema and reference checks name the JSON path, the value and what is allowed."""

import copy
import json
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from stimlab.errors import InputError
from stimlab.experiment.protocol import (
    json_path,
    load_protocol,
    parse_protocol,
    validate_protocol,
)

PROTOCOLS = sorted((Path(__file__).parents[2] / "protocols").glob("*.json"))


def demo(name="afterimage_null"):
    return json.loads((Path(__file__).parents[2] / "protocols" / f"{name}.json").read_text())


@pytest.mark.parametrize("path", PROTOCOLS, ids=lambda p: p.stem)
def test_every_shipped_protocol_is_valid(path):
    assert load_protocol(path)["stimlab_protocol"] == 1


def test_json_path_format():
    assert json_path(["stimuli", 2, "colour", "dkl", 1]) == "stimuli[2].colour.dkl[1]"
    assert json_path([]) == "(top level)"


def error_for(data):
    with pytest.raises(InputError) as caught:
        validate_protocol(data, "p.json")
    return caught.value


def test_text_in_a_colour_component_names_its_path_and_value():
    data = demo()
    data["stimuli"][1]["colour"]["dkl"][1] = "red"
    error = error_for(data)
    assert error.field == "stimuli[1].colour.dkl[1]"
    assert '"red"' in error.message and "number" in error.message


def test_enum_lists_the_allowed_values():
    data = demo()
    data["stimuli"][0]["shape"] = "triangle"
    error = error_for(data)
    assert error.field == "stimuli[0].shape"
    assert '"triangle" is not allowed' in error.message and '"disc"' in error.message


def test_unknown_field_is_named_with_the_allowed_ones():
    data = demo()
    data["about"]["colour_temperature"] = 6500
    error = error_for(data)
    assert error.field == "about" and "colour_temperature" in error.message and "viewing_distance_cm" in error.message


def test_reference_errors_name_their_path():
    data = demo()
    data["trial"][0]["stimuli"] = ["adaptor"]
    error = error_for(data)
    assert error.field == "trial[0].stimuli[0]" and "no stimulus called 'adaptor'" in error.message
    data = demo()
    data["stimuli"][0]["colour"] = {"dkl": "$axes", "scale": "$polarity"}
    error = error_for(data)
    assert error.field == "stimuli[0].colour.dkl" and "refers to no condition variable" in error.message
    data = demo()
    data["stimuli"][0]["colour"] = {"dkl": "$polarity"}
    assert "must take a 3-vector" in error_for(data).message


def test_shape_needs_its_sizes():
    data = demo()
    data["stimuli"][0] = {"name": "adapter", "shape": "annulus", "size_deg": 4, "colour": {"dkl": [0, 0.05, 0]}}
    error = error_for(data)
    assert error.field == "stimuli[0].inner_size_deg"


def test_flicker_needs_a_frequency():
    data = demo()
    data["stimuli"][0]["time_course"] = {"kind": "square"}
    assert error_for(data).field == "stimuli[0].time_course.frequency_hz"


def test_not_json():
    with pytest.raises(InputError, match="not valid JSON: .* line 1"):
        parse_protocol("{oops", "p.json")


@settings(max_examples=150, deadline=None)
@given(st.data())
def test_random_invalid_protocols_give_an_input_error_never_a_traceback(data):
    protocol = demo(data.draw(st.sampled_from(["afterimage_null", "contrast_match", "afterimage_duration",
                                               "detection_staircase"])))

    # Walk to a random place and put a random wrong value there.
    node, path = protocol, []
    while isinstance(node, (dict, list)) and node and data.draw(st.booleans()):
        key = data.draw(st.sampled_from(sorted(node) if isinstance(node, dict) else list(range(len(node)))))
        path.append(key)
        node = node[key]
    junk = data.draw(st.one_of(st.none(), st.text(max_size=5), st.integers(-5, 5), st.floats(allow_nan=False),
                               st.lists(st.integers(), max_size=4), st.dictionaries(st.text(max_size=3),
                                                                                    st.integers(), max_size=2)))
    mutated = copy.deepcopy(protocol)
    if path:
        parent = mutated
        for key in path[:-1]:
            parent = parent[key]
        parent[path[-1]] = junk
    else:
        mutated = junk
    try:
        validate_protocol(mutated, "p.json")
    except InputError as error:
        assert error.message


def test_the_early_length_checks_agree_with_the_schema():
    from stimlab.experiment.protocol import MAX_ENTRIES, MAX_LEVELS, protocol_schema

    properties = protocol_schema()["properties"]
    assert properties["stimuli"]["maxItems"] == properties["trial"]["maxItems"] == MAX_ENTRIES
    levels = properties["conditions"]["properties"]["variables"]["additionalProperties"]["oneOf"]
    assert levels[0]["maxItems"] == levels[1]["maxProperties"] == MAX_LEVELS
