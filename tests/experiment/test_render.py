"""The reference renderer: the canvas's geometry (centre origin, y up, drawing order, each shape's regions) and
the frame plan's colours, on small made-up protocols."""

import numpy as np
import pytest

from stimlab.experiment.compile import compile_protocol
from stimlab.experiment.protocol import validate_protocol
from stimlab.experiment.render import render_frame


def scene(demo, stimuli, order=None, fixation=None):
    p = {"stimlab_protocol": 1, "about": {"title": "Shapes", "observer": "ss2", "viewing_distance_cm": 57},
         "background": {"dkl": [0, 0, 0]}, "stimuli": stimuli,
         "trial": [{"phase": "test", "stimuli": order or [s["name"] for s in stimuli], "duration_s": 1},
                   {"phase": "respond", "timeout_s": 1, "response": {"method": "duration", "keys": [" "]}}],
         "conditions": {"repeats": 1, "order": "fixed"}}
    if fixation:
        p["fixation"] = fixation
    data = compile_protocol(validate_protocol(p), demo).data
    levels, edges = render_frame(data, 0, 0, 0)
    return data, levels, edges


def at(data, levels, x_deg, y_deg):
    """Levels at a point given in degrees from the centre (y up)."""
    ppd = data["pixels_per_degree"]
    width, height = data["display"]["size_px"]
    column = int(width / 2 + x_deg * ppd)
    row = int(height / 2 - y_deg * ppd)
    return levels[row, column].tolist()


def colour(data, name, key="colour"):
    return data["conditions"][0]["stimuli"][name][key]["device"]


def test_y_runs_up_and_later_stimuli_are_drawn_on_top(demo):
    stimuli = [{"name": "big", "shape": "disc", "size_deg": 4, "colour": {"dkl": [0.2, 0, 0]}},
               {"name": "small", "shape": "square", "size_deg": 1, "position_deg": [0, 1],
                "colour": {"dkl": [-0.2, 0, 0]}}]
    data, levels, _ = scene(demo, stimuli)
    background = data["background"]["device"]
    assert at(data, levels, 0, 1) == colour(data, "small")  # above the centre on screen: y up
    assert at(data, levels, 0, -1) == colour(data, "big")
    assert at(data, levels, 0, 3) == background
    data, levels, _ = scene(demo, stimuli, order=["small", "big"])
    assert at(data, levels, 0, 1) == colour(data, "big")  # drawn first, then covered


def test_annulus_centre_surround_and_bipartite_regions(demo):
    stimuli = [{"name": "ring", "shape": "annulus", "size_deg": 4, "inner_size_deg": 2, "position_deg": [-8, 0],
                "colour": {"dkl": [0.2, 0, 0]}},
               {"name": "cs", "shape": "centre_surround", "size_deg": 1, "surround_size_deg": 4,
                "colour": {"dkl": [0, 0.05, 0]}, "second_colour": {"dkl": [0, 0, 0.3]}},
               {"name": "halves", "shape": "bipartite", "size_deg": 4, "position_deg": [8, 0],
                "colour": {"dkl": [0.1, 0, 0]}, "second_colour": {"dkl": [-0.1, 0, 0]}}]
    data, levels, _ = scene(demo, stimuli)
    background = data["background"]["device"]
    assert at(data, levels, -8, 0) == background and at(data, levels, -9.5, 0) == colour(data, "ring")
    assert at(data, levels, 0, 0) == colour(data, "cs") and at(data, levels, 1.5, 0) == colour(data, "cs",
                                                                                              "second_colour")
    assert at(data, levels, 7, 0) == colour(data, "halves") and at(data, levels, 9, 0) == colour(
        data, "halves", "second_colour")


def test_fixation_is_drawn_last_and_edges_are_marked(demo):
    stimuli = [{"name": "disc", "shape": "disc", "size_deg": 2, "colour": {"dkl": [0.2, 0, 0]}}]
    data, levels, edges = scene(demo, stimuli, fixation={"shape": "dot", "size_deg": 0.2})
    assert at(data, levels, 0, 0) == data["fixation"]["device"]
    radius_px = data["conditions"][0]["stimuli"]["disc"]["geometry"]["size_px"] / 2
    width, height = data["display"]["size_px"]
    row = height // 2
    crossing = int(width / 2 + radius_px)  # the pixel the disc's edge runs through
    assert edges[row, crossing] and not edges[row, crossing - 5] and not edges[row, crossing + 5]


def test_a_gaussian_blob_falls_to_the_background_and_is_round(demo):
    stimuli = [{"name": "blob", "shape": "gaussian", "sigma_deg": 0.5, "colour": {"dkl": [0.4, 0, 0]}}]
    data, levels, _ = scene(demo, stimuli)
    centre = np.array(at(data, levels, 0, 0))
    assert centre.tolist() == colour(data, "blob")  # the profile is exactly 1 at its centre
    width, height = data["display"]["size_px"]
    cx, cy, k = width // 2, height // 2, 26  # the patch's centre pixel, and 26 px (0.7°) from it
    assert levels[cy, cx + k].tolist() == levels[cy, cx - k].tolist() == levels[cy - k, cx].tolist() != \
        data["background"]["device"]
    assert at(data, levels, 1.2, 0) == data["background"]["device"]  # beyond 2σ: not drawn


def test_the_plan_and_its_hash_are_in_the_compiled_data(demo):
    stimuli = [{"name": "disc", "shape": "disc", "size_deg": 2, "colour": {"dkl": [0.2, 0, 0]},
                "time_course": {"kind": "square", "frequency_hz": 12}}]
    data, *_ = scene(demo, stimuli)
    assert data["plan"]["courses"][data["schedules"]["first"][0]["courses"][0]]["cycle"] == [255] * 3 + [-255] * 2
    assert len(data["plan_sha256"]) == 64
    again, *_ = scene(demo, stimuli)
    assert again["plan_sha256"] == data["plan_sha256"]
    stimuli[0]["time_course"]["frequency_hz"] = 10
    changed, *_ = scene(demo, stimuli)
    assert changed["plan_sha256"] != data["plan_sha256"]


@pytest.mark.parametrize("frame, expected_step", [(0, 255), (2, 255), (3, -255), (5, 255)])
def test_frames_follow_the_plan(demo, frame, expected_step):
    stimuli = [{"name": "disc", "shape": "disc", "size_deg": 2, "colour": {"dkl": [0.2, 0, 0]},
                "time_course": {"kind": "square", "frequency_hz": 12}}]
    data, *_ = scene(demo, stimuli)
    levels, _ = render_frame(data, 0, 0, frame)
    table = data["conditions"][0]["stimuli"]["disc"]["colour"]["modulation_table"]
    assert at(data, levels, 0, 0) == table[expected_step + 255]
