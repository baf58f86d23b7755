"""Protocol fields in the researcher's words: labels with where the field sits, JSON paths read and written."""

import json
from pathlib import Path

from stimlab.experiment.labels import axis_name, component_names, field_label, parse_path, path_text, short_label

PROTOCOLS = Path(__file__).parents[2] / "protocols"


def demo(name="afterimage_null"):
    return json.loads((PROTOCOLS / f"{name}.json").read_text())


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


def test_paths_are_read_and_written_back_unchanged():
    for path in ("stimuli[2].colour.dkl[1]", "trial[0].response.keys[3]", "conditions.variables.axis.L-M", "about"):
        assert path_text(parse_path(path)) == path
    assert parse_path("") == [] and path_text([]) == ""
