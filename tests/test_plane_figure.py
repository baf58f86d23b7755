"""The gamut-plane figure: its view stays on the gamut when a stimulus lies far out of it, and names what it
leaves out."""

import xml.etree.ElementTree as ET

import pytest

from stimlab.colorimetry.stimulus import Background
from stimlab.profiles.figures import render
from stimlab.profiles.plane_figure import VIEW_LIMIT, plane_spec, plane_view

SQUARE = [[-1, -1], [1, -1], [1, 1], [-1, 1]]


def test_a_far_point_does_not_widen_the_view():
    view = plane_view(SQUARE, [{"lm": 9.0, "s": 0.0}, {"lm": 0.5, "s": 0.5}])
    assert view["lm"] == pytest.approx(1.08) and view["s"] == pytest.approx(1.08)
    assert view["outside"] == [0]


def test_a_point_just_outside_the_gamut_widens_the_view_up_to_the_limit():
    assert plane_view(SQUARE, [{"lm": 1.1, "s": 0.0}])["lm"] == pytest.approx(1.08 * 1.1)  # with its margin
    assert plane_view(SQUARE, [{"lm": 1.15, "s": 0.0}])["lm"] == pytest.approx(VIEW_LIMIT)
    assert plane_view(SQUARE, [{"lm": 1.15, "s": 0.0}])["outside"] == []
    segment = {"from": (-3.0, 0.0), "to": (3.0, 0.0)}
    assert plane_view(SQUARE, [], [segment])["beyond"] == [0]


@pytest.fixture
def far_spec(demo_model):
    background = Background(demo_model, [0.5, 0.5, 0.5])
    points = [{"name": "probe", "condition": "far", "lm": 9.0, "s": 0.1, "ok": False},
              {"name": "adapter", "condition": "near", "lm": 0.05, "s": 0.2, "ok": True},
              {"name": "adapter", "condition": "again", "lm": 0.05, "s": 0.2, "ok": True}]
    return plane_spec(background, points, title="Far probe", equal_aspect=False)


def test_the_editor_view_stays_bounded_and_names_the_far_stimulus(far_spec, tmp_path):
    extent = max(abs(v[0]) for v in far_spec["polygon"])
    assert far_spec["view"]["lm"] <= VIEW_LIMIT * extent  # not ±9
    assert len(far_spec["points"]) == 2 and far_spec["points"][1]["label"] == "adapter (near; again)"
    svg = render(far_spec, "svg", tmp_path)
    labels = ["".join(n.itertext()) for n in ET.fromstring(svg).iter("{http://www.w3.org/2000/svg}text")]
    legend = " ".join(" ".join(labels).split())  # long legend entries wrap over several text elements
    assert "1 probe (far), out of gamut: outside the view, at L−M 9, S 0.1" in legend
    # the axis ticks (decimals; the marks' numbers are whole) stay within the gamut's scale, about ±1
    ticks = [float(t.replace("−", "-")) for t in labels if "." in t and t.replace("−", "").replace(".", "").isdigit()]
    assert ticks
    assert max(abs(t) for t in ticks) < 2
