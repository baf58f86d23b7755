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


def _drawn(spec):
    from matplotlib.figure import Figure

    from stimlab.profiles.plane_figure import draw_plane

    figure = Figure(figsize=(8, 4.5), layout="constrained")
    draw_plane(spec, figure)
    figure.canvas.draw()
    return figure


def test_out_of_view_marks_name_rounded_places_and_point_their_way(demo_model, tmp_path):
    background = Background(demo_model, [0.5, 0.5, 0.5])
    points = [{"name": "adapter", "condition": "right", "lm": 0.5, "s": 6.95e-17, "ok": False},
              {"name": "adapter", "condition": "left", "lm": -0.5, "s": -0.0, "ok": False},
              {"name": "probe", "condition": "down", "lm": 1e-18, "s": -9.0, "ok": False}]
    spec = plane_spec(background, points, equal_aspect=False)
    svg = render(spec, "svg", tmp_path)
    legend = " ".join(" ".join("".join(n.itertext()) for n in
                               ET.fromstring(svg).iter("{http://www.w3.org/2000/svg}text")).split())
    assert "at L−M 0.5, S 0" in legend and "at L−M −0.5, S 0" in legend and "at L−M 0, S −9" in legend
    assert "e−" not in legend and "−0 " not in legend and "−0," not in legend
    markers = [h.get_marker() for h in _drawn(spec).legends[0].legend_handles if h.get_label().startswith(("1", "2", "3"))]
    assert markers == [r"$\rightarrow$", r"$\leftarrow$", r"$\downarrow$"]


def test_numbers_of_marks_on_an_axis_sit_clear_of_the_axis_lines(demo_model):
    background = Background(demo_model, [0.5, 0.5, 0.5])
    points = [{"name": "inducer", "condition": c, "lm": lm, "s": s, "ok": True}
              for c, lm, s in (("+L-M", 0.08, 0.0), ("-L-M", -0.08, 0.0), ("+S", 0.0, 0.3), ("-S", 0.0, -0.3),
                               ("far", -0.5, 0.0))]
    segments = [{"name": "range", "condition": "a", "from": (-0.15, 0.0), "to": (0.15, 0.0), "ok": True}]
    figure = _drawn(plane_spec(background, points, segments, equal_aspect=False))
    ax = figure.axes[0]
    x_axis, y_axis = ax.transData.transform((0, 0))
    numbers = {t.get_text(): t.get_window_extent() for t in ax.texts if t.get_text().isdigit()}
    assert set(numbers) == {"1", "2", "3", "4", "5", "6"}
    for key in ("1", "2", "3"):  # the range's end and the two marks on the L−M axis: above its line (and the range)
        assert numbers[key].y0 > y_axis + 2
    for key in ("4", "5"):  # the marks on the S axis: right of its line
        assert numbers[key].x0 > x_axis + 2
    assert numbers["6"].y1 < y_axis - 2  # out of view: below its arrow, which runs along the L−M axis
