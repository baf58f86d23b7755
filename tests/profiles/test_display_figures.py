"""A display's figures drawn with matplotlib: transfer curves, the DKL isoluminant gamut and the MacLeod–Boynton
diagram, as SVG (text kept as text) and PDF, cached by content."""

import xml.etree.ElementTree as ET

import pytest

from stimlab.profiles.figures import display_specs, render

SVG_TEXT = "{http://www.w3.org/2000/svg}text"


@pytest.fixture(scope="module")
def specs(demo):
    return display_specs(demo)


def texts(svg: bytes) -> list[str]:
    """Every piece of text in a well-formed SVG."""
    return ["".join(node.itertext()) for node in ET.fromstring(svg).iter(SVG_TEXT)]


def test_transfer_curves_name_each_channel_and_use_plain_level_ticks(specs, tmp_path):
    labels = texts(render(specs["transfer"], "svg", tmp_path))
    for channel in ("red", "green", "blue"):
        assert any(t.startswith(f"{channel}: gog fit, RMS") for t in labels)
    assert "luminance (cd/m²)" in labels and "digital level (0–1023)" in labels
    # 10 bits: 0 … 2^10 − 1 as whole numbers, never 1.02e+03
    assert {"0", "256", "512", "768", "1023"} <= set(labels)
    assert not any("e+0" in t for t in labels)


def test_transfer_spec_holds_the_measured_luminance(specs, demo):
    red = specs["transfer"]["channels"][0]
    assert red["channel"] == "red"
    assert red["luminance_cd_m2"][-1] == pytest.approx(demo["transfer"]["red"]["measured"]["luminance_cd_m2"][-1])
    assert red["level"][0] == 0 and red["level"][-1] == 1023
    assert max(abs(r) for r in red["residual"]) < 0.02  # a good fit, as the summary reports


def test_the_gamut_marks_the_headroom_along_both_axes(specs, tmp_path):
    spec = specs["gamut"]
    assert spec["equal_aspect"] and spec["limits"]["lm"][0] < 0 < spec["limits"]["lm"][1]
    # the view spans the gamut polygon and at most 1.2 × its extent
    extent = max(abs(v[0]) for v in spec["polygon"])
    assert extent <= spec["view"]["lm"] <= 1.2 * extent
    labels = texts(render(spec, "svg", tmp_path))
    assert "DKL L−M (pooled cone contrast)" in labels and "DKL S (pooled cone contrast)" in labels
    assert any(t.startswith("headroom along the axes: L−M −0.164") for t in labels)


def test_the_spectrum_locus_is_labelled_across_its_range(specs, tmp_path):
    spec = specs["macleod_boynton"]
    assert spec["marks"][0]["nm"] == 400 and spec["marks"][-1]["nm"] == 820  # every 20 nm, 390–830 nm observer
    labels = texts(render(spec, "svg", tmp_path))
    for nm in ("420", "460", "500", "540", "580", "620"):
        assert nm in labels, nm
    assert any(t.endswith("–820") for t in labels)  # the crowded long-wavelength end labelled as one range
    assert "l = L / (L + M)" in labels
    assert any(t.startswith("red primary (l 0.8") for t in labels)
    assert any(t.startswith("white, all channels full") for t in labels)


def test_display_figures_download_as_pdf_and_are_cached(specs, tmp_path):
    first = render(specs["macleod_boynton"], "pdf", tmp_path)
    assert first.startswith(b"%PDF") and len(list(tmp_path.glob("*.pdf"))) == 1
    assert render(specs["macleod_boynton"], "pdf", tmp_path) == first
