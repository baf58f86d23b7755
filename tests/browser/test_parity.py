"""What the audit analyses is what the runner shows: the browser's canvas, read back in its test mode, against the
reference renderer at chosen frames of a protocol with flicker, a grating, overlapping stimuli and an adjustment;
and the per-frame modulation of square, sine and counterphase courses in the plan and the renderer over a grid of
rates at common refresh rates."""


import numpy as np
import pytest

from stimlab.experiment.compile import compile_protocol
from stimlab.experiment.protocol import validate_protocol
from stimlab.experiment.render import render_frame, render_frames
from stimlab.experiment.timecourse import STEPS, course_plan, steps_for_phase

REFRESH_RATES = (60, 100, 120, 144)  # common practice: refresh rates of laboratory displays

# Flickering discs at several rates (each alone on the screen at its place), a counterphase grating overlapping a
# square-flickering field with a steady spot on top, and in the respond phase an adjusted centre-surround beside
# an annulus and a bipartite field.
RATES = [("square", 7), ("square", 12), ("square", 13), ("square", 30), ("sine", 5), ("sine", 7.5), ("sine", 11)]


def parity_protocol():
    discs = [{"name": f"rate{i}", "shape": "disc", "size_deg": 1.2, "position_deg": [-12 + 3 * i, 7],
              "colour": {"dkl": [0.4, 0, 0]}, "time_course": {"kind": kind, "frequency_hz": hz}}
             for i, (kind, hz) in enumerate(RATES)]
    return {
        "stimlab_protocol": 1,
        "about": {"title": "Parity", "observer": "ss2", "viewing_distance_cm": 57},
        "background": {"dkl": [0, 0, 0]},
        "fixation": {"shape": "cross", "size_deg": 0.4},
        "stimuli": [
            {"name": "field", "shape": "disc", "size_deg": 6, "colour": {"dkl": [0.05, 0.1, 0]},
             "time_course": {"kind": "square", "frequency_hz": 12}},
            {"name": "grating", "shape": "grating", "sigma_deg": 0.75, "cycles_per_deg": 2, "position_deg": [3, 0],
             "colour": {"dkl": [0.5, 0, 0]}, "time_course": {"kind": "counterphase", "frequency_hz": 2}},
            {"name": "spot", "shape": "disc", "size_deg": 1, "colour": {"dkl": [-0.3, 0, 0.2]}},
            {"name": "match", "shape": "centre_surround", "size_deg": 1.5, "surround_size_deg": 3,
             "position_deg": [-6, -3], "colour": {"dkl": [0, 0.05, 0]}, "second_colour": {"dkl": [0.2, 0, 0]}},
            {"name": "ring", "shape": "annulus", "size_deg": 3, "inner_size_deg": 1.5, "position_deg": [6, -6],
             "colour": {"dkl": [0, 0, 0.4]}},
            {"name": "halves", "shape": "bipartite", "size_deg": 3, "position_deg": [0, -6],
             "colour": {"dkl": [0.1, 0.05, 0]}, "second_colour": {"dkl": [-0.1, -0.05, 0]}},
            *discs,
        ],
        "trial": [
            {"phase": "test", "stimuli": ["field", "grating", "spot", *(d["name"] for d in discs)], "duration_s": 1},
            {"phase": "respond", "stimuli": ["field", "match", "ring", "halves"], "timeout_s": 5,
             "response": {"method": "adjustment", "target": "match", "space": "dkl", "axis": [0, 1, 0],
                          "start": 0, "step_fine": 0.01, "limits": [-0.1, 0.1], "keys": ["ArrowUp", "ArrowDown"]}},
        ],
        "conditions": {"repeats": 1, "order": "fixed"},
    }


def test_the_protocol_compiles(demo):
    compile_protocol(validate_protocol(parity_protocol()), demo)


@pytest.mark.parametrize("refresh", REFRESH_RATES)
@pytest.mark.parametrize("kind", ["square", "sine", "counterphase"])
def test_plan_and_renderer_give_the_same_frames(demo, refresh, kind):
    # At each rate from 1 Hz to half the refresh rate, the colour the renderer draws at a stimulus's centre frame
    # by frame is its modulation table's entry for the plan's step, and square steps change exactly at the period.
    profile = dict(demo, refresh_hz=refresh)
    rates = sorted({1.0, 2.5, 7.5, 12.0, 13.0, refresh / 4, refresh / 3, refresh / 2})
    shape = {"shape": "grating", "sigma_deg": 1, "cycles_per_deg": 0.1} if kind == "counterphase" else \
        {"shape": "disc", "size_deg": 2}
    for hz in rates:
        p = {"stimlab_protocol": 1, "about": {"title": "Rates", "observer": "ss2", "viewing_distance_cm": 57},
             "background": {"dkl": [0, 0, 0]},
             "stimuli": [{"name": "s", **shape, "colour": {"dkl": [0.3, 0, 0]},
                          "time_course": {"kind": kind, "frequency_hz": hz}}],
             "trial": [{"phase": "test", "stimuli": ["s"], "duration_s": 1},
                       {"phase": "respond", "timeout_s": 1, "response": {"method": "duration", "keys": [" "]}}],
             "conditions": {"repeats": 1, "order": "fixed"}}
        data = compile_protocol(validate_protocol(p), profile).data
        phase = data["schedules"]["first"][0]
        plan = data["plan"]["courses"][phase["courses"][0]]
        assert plan == course_plan(p["stimuli"][0]["time_course"], refresh, phase["frames"])
        steps = steps_for_phase(plan, phase["frames"])
        table = data["conditions"][0]["stimuli"]["s"]["colour"]["modulation_table"]
        centre = [data["display"]["size_px"][0] // 2], [data["display"]["size_px"][1] // 2]
        frames = render_frames(data, 0, 0, range(phase["frames"]), columns=centre[0], rows=centre[1])
        for frame, (levels, _) in enumerate(frames):
            assert levels[0, 0].tolist() == table[steps[frame] + STEPS], (refresh, hz, frame)
        if kind == "square":
            period = len(plan["cycle"])
            assert abs(period - refresh / hz) <= 0.5 and data["conditions"][0]["stimuli"]["s"]["time_course"][
                "shown_frequency_hz"] == pytest.approx(refresh / period)


def compare(page, data, trial, phase, frame, columns, rows, ladder=None):
    shown = page.evaluate("([t, p, f, c, r, l]) => window.stimlabSchedule.probe(t, p, f, c, r, l)",
                          [trial, phase, frame, columns.tolist(), rows.tolist(), ladder])
    shown = np.array(shown).reshape(rows.size, columns.size, 3)
    expected, edges = render_frame(data, trial, phase, frame, columns=columns, rows=rows, ladder=ladder)
    differ = np.any(shown != expected, axis=-1) & ~edges
    where = np.argwhere(differ)[:5]
    assert not differ.any(), (frame, [(int(columns[c]), int(rows[r]), shown[r, c].tolist(),
                                       expected[r, c].tolist()) for r, c in where])
    return shown, edges


def test_the_browser_canvas_matches_the_reference_renderer(server, page):
    from test_runner import open_runner, start

    session_id = start(page, server, parity_protocol(), name="parity.json")
    open_runner(page, server, session_id, "?test=frames")
    assert page.evaluate("window.stimlabState") == "ready"
    data = page.request.get(f"{server.url}/api/sessions/{session_id}").json()["compiled"]
    width, height = data["display"]["size_px"]
    # The whole screen every 8th pixel, and every pixel of the region with the field, grating and spot.
    coarse = (np.arange(3, width, 8), np.arange(3, height, 8))
    cx, cy = width // 2, height // 2
    dense = (np.arange(cx - 140, cx + 220), np.arange(cy - 140, cy + 140))
    for frame in (0, 1, 2, 4, 9, 17):
        compare(page, data, 0, 0, frame, *dense)
    for frame in (0, 3):
        compare(page, data, 0, 0, frame, *coarse)
    compare(page, data, 0, 1, 0, *coarse)  # the adjustment at its start
    shown, _ = compare(page, data, 0, 1, 2, *coarse, ladder=3)  # and moved to ladder entry 3
    # The rate discs, frame by frame for a second, at their centres.
    ppd = data["pixels_per_degree"]
    centres_x = np.array([round(cx + np.tan(np.radians(-12 + 3 * i)) * 57 * ppd / np.tan(np.radians(1)) / 57)
                          for i in range(len(RATES))])
    row = np.array([cy - round(np.tan(np.radians(7)) * ppd / np.tan(np.radians(1)))])
    for frame in range(60):
        compare(page, data, 0, 0, frame, centres_x, row)
