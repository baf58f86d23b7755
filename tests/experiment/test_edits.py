"""Structural edits the editor's form makes: add, remove, move; the input protocol is never changed."""

import json
from pathlib import Path

import pytest

from stimlab.errors import InputError
from stimlab.experiment.edits import apply_edit, optional_fields
from stimlab.experiment.protocol import validate_protocol


@pytest.fixture
def protocol():
    return json.loads((Path(__file__).parents[2] / "protocols" / "afterimage_null.json").read_text())


def test_a_new_stimulus_and_phase_keep_the_protocol_valid(protocol):
    edited = apply_edit(protocol, {"op": "add", "path": "stimuli"})
    edited = apply_edit(edited, {"op": "add", "path": "trial", "kind": "test"})
    assert edited["stimuli"][-1]["name"] == "stimulus_1" and edited["trial"][-1]["stimuli"] == ["adapter"]
    validate_protocol(edited)
    assert len(protocol["stimuli"]) == 2  # unchanged


def test_levels_and_variables(protocol):
    edited = apply_edit(protocol, {"op": "add", "path": "conditions.variables.axis", "name": "L+S"})
    assert list(edited["conditions"]["variables"]["axis"]) == ["L-M", "S", "L+S"]
    edited = apply_edit(edited, {"op": "move", "path": "conditions.variables.axis.L+S", "by": -2})
    assert list(edited["conditions"]["variables"]["axis"]) == ["L+S", "L-M", "S"]
    edited = apply_edit(edited, {"op": "add", "path": "conditions.variables", "name": "contrast"})
    edited = apply_edit(edited, {"op": "add", "path": "conditions.variables.contrast"})
    assert edited["conditions"]["variables"]["contrast"] == [0, 0]
    edited = apply_edit(edited, {"op": "remove", "path": "conditions.variables.polarity"})
    assert "polarity" not in edited["conditions"]["variables"]
    with pytest.raises(InputError) as caught:
        apply_edit(edited, {"op": "add", "path": "conditions.variables", "name": "2nd"})
    assert caught.value.field == "conditions.variables"


def test_remove_and_move_list_items(protocol):
    edited = apply_edit(protocol, {"op": "move", "path": "trial[2]", "by": -1})
    assert [p["phase"] for p in edited["trial"]] == ["adapt", "respond", "gap"]
    edited = apply_edit(edited, {"op": "remove", "path": "trial[2]"})
    assert len(edited["trial"]) == 2
    only = apply_edit(protocol, {"op": "remove", "path": "stimuli[1]"})
    with pytest.raises(InputError):
        apply_edit(only, {"op": "remove", "path": "stimuli[0]"})  # a protocol keeps at least one


def test_optional_fields_come_from_the_schema(protocol):
    keys = dict(optional_fields("stimuli[1]", protocol["stimuli"][1], protocol))
    assert "time_course" in keys and "name" not in keys and keys["time_course"] == "Time course"
    edited = apply_edit(protocol, {"op": "add-field", "path": "stimuli[1]", "key": "time_course"})
    assert edited["stimuli"][1]["time_course"] == {"kind": "steady"}
    assert optional_fields("background", protocol["background"], protocol) == []
    with pytest.raises(InputError):
        apply_edit(protocol, {"op": "add-field", "path": "stimuli[1]", "key": "colour_temperature"})
