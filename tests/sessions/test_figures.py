"""Session and study figures drawn with matplotlib: labelled, with legends and plain ticks, as SVG and PDF, cached
by content."""

import xml.etree.ElementTree as ET

import pytest
import simulated_sessions as sim

from stimlab.sessions.figures import render

INTERVALS = {"kind": "intervals", "edges_ms": [0.0, 8.0, 16.0, 24.0, 32.0], "counts": [0, 1020, 2500, 3],
             "period_ms": 16.667}


def test_the_svg_keeps_its_text_and_plain_ticks(tmp_path):
    svg = render(INTERVALS, "svg", tmp_path).decode()
    ET.fromstring(svg)  # well-formed
    assert "frame interval (ms)" in svg and "dropped-frame limit" in svg  # axis label and legend
    assert "1.02e+03" not in svg and "2.5e+03" not in svg


def test_figures_are_cached_by_content(tmp_path):
    first = render(INTERVALS, "pdf", tmp_path)
    assert first.startswith(b"%PDF") and len(list(tmp_path.glob("*.pdf"))) == 1
    assert render(INTERVALS, "pdf", tmp_path) == first  # from the cache, the same bytes
    render(INTERVALS | {"counts": [0, 1, 2, 3]}, "pdf", tmp_path)
    assert len(list(tmp_path.glob("*.pdf"))) == 2  # new numbers, new figure


@pytest.fixture
def matched(app, client):
    def respond(trial, condition):
        sign = {"+L-M": -1, "-L-M": 1}.get(condition["labels"]["surround"], 0)
        return sim.adjustment([sign * 0.02, 0.01], condition["response"])

    return sim.run(app, client, "contrast_match.json", "P01", respond)


def test_the_session_page_shows_labelled_figures_with_downloads(matched, client):
    page = client.get(f"/sessions/{matched}").text
    assert f"/sessions/{matched}/figures/vectors.svg" in page and f"/sessions/{matched}/figures/vectors.pdf" in page
    svg = client.get(f"/sessions/{matched}/figures/vectors.svg")
    assert svg.status_code == 200 and svg.mimetype == "image/svg+xml"
    for label in ("surround=+L-M", "surround=-S", "DKL L−M", "mean match"):
        assert label in svg.text
    pdf = client.get(f"/sessions/{matched}/figures/vectors.pdf?download=1")
    assert pdf.data.startswith(b"%PDF") and pdf.headers["Content-Disposition"].startswith("attachment")
    assert client.get(f"/sessions/{matched}/figures/nothing.svg").status_code == 404
    assert client.get(f"/sessions/{matched}/figures/vectors.png").status_code == 404


def test_the_study_page_has_a_figure_per_measure(matched, client):
    page = client.get("/studies/contrast_match.json").text
    assert "/studies/contrast_match.json/figures/along.svg" in page
    svg = client.get("/studies/contrast_match.json/figures/along.svg").text
    assert "mean over participants, 95 % CI" in svg and "surround=+S" in svg


def test_a_session_without_responses_has_a_page_and_its_timing_figure(app, client):
    session_id = sim.create(client, "contrast_match.json", "P09")
    page = client.get(f"/sessions/{session_id}")
    assert page.status_code == 200 and "figures/vectors.svg" not in page.text
    assert client.get(f"/sessions/{session_id}/figures/intervals.svg").status_code == 200
    assert client.get(f"/sessions/{session_id}/export.csv").status_code == 200
    assert client.get(f"/sessions/{session_id}/export.bids").status_code == 200


def test_a_flat_staircase_draws_its_data_without_a_curve(tmp_path):
    from stimlab.sessions.figures import session_specs

    summary = {"timing": {"histogram": {"edges_ms": [0, 1], "counts": [0]}, "period_ms": 16.7}, "adaptation_model": None,
               "rows": [], "conditions": [{"label": "single", "threshold": {
                   "levels": [[0.01, 8, 10], [0.02, 8, 10]], "threshold": 9.0, "slope": 1.0, "error": "outside"}}]}
    spec = session_specs(summary)["psychometric"]
    assert "threshold" not in spec["conditions"][0]
    assert render(spec, "svg", tmp_path).startswith(b"<?xml")


def test_a_few_dropped_frames_among_thousands_stay_visible(tmp_path):
    """17 frames beyond the 1.5-period limit (common practice for a dropped frame) among 4,000: on a linear axis
    their bar is 0.4 % of the tallest; the count axis is logarithmic and the dropped bins are counted in the
    legend and written above their bars."""
    spec = {"kind": "intervals", "edges_ms": [0.0, 8.0, 16.0, 24.0, 32.0, 40.0], "counts": [0, 1500, 2500, 12, 5],
            "period_ms": 16.0}
    svg = render(spec, "svg", tmp_path).decode()
    ET.fromstring(svg)
    assert "log scale" in svg and "dropped frames (17)" in svg
    assert ">12</text>" in svg and ">5</text>" in svg  # the dropped bins' counts above their bars
    assert ">1000</text>" in svg and "mathdefault" not in svg  # plain tick numbers on the log axis
