"""Rod excitation: CIE 1951 scotopic V′(λ) (colour-science's 'CIE 1951 Scotopic Standard Observer', K′m = 1700 lm/W
from colour.constants.CONSTANT_KP_M), checked against independent numpy integrations; the mesopic audit warning at
CIE 191:2010's upper limit of 5 cd/m² (from memory)."""

import json

import numpy as np
import pytest

from stimlab.audit import audit_protocol
from stimlab.cli import main
from stimlab.colorimetry._colour import colour
from stimlab.colorimetry.display import DisplayModel
from stimlab.colorimetry.stimulus import Background
from stimlab.experiment.compile import compile_protocol
from stimlab.profiles.profile import save_profile

CRT = "Typical CRT Brainard 1997"


def _crt_by_hand():
    """The CRT primaries at their own 5 nm, V′(λ) and the Stockman & Sharpe 2° cones taken at those nodes."""
    msds = colour.characterisation.MSDS_DISPLAY_PRIMARIES[CRT]
    wavelengths, primaries = np.asarray(msds.wavelengths), np.asarray(msds.values)
    scotopic = colour.colorimetry.SDS_LEFS_SCOTOPIC["CIE 1951 Scotopic Standard Observer"]
    v_prime = np.interp(wavelengths, scotopic.wavelengths, scotopic.values, left=0, right=0)  # nodes: exact
    cones = colour.colorimetry.MSDS_CMFS_LMS["Stockman & Sharpe 2 Degree Cone Fundamentals"]
    lms = np.stack([np.interp(wavelengths, cones.wavelengths, cones.values[:, k], left=0, right=0)
                    for k in range(3)], axis=-1)
    return wavelengths, primaries, v_prime, lms


def test_constants_are_colour_sciences():
    # K′m = 1700 lm/W (colour.constants.CONSTANT_KP_M); V′ peaks at 507 nm as tabulated (CIE 1951).
    from stimlab.colorimetry.rods import K_PRIME_M, scotopic_efficiency

    assert K_PRIME_M == 1700.0
    wavelengths, values = scotopic_efficiency()
    assert wavelengths[np.argmax(values)] in (506.0, 507.0)


def test_scotopic_luminance_and_rod_contrast_of_each_crt_primary(crt_profile):
    # Independent integration: 1700 · 5 nm · Σ P_i(λ) V′(λ) at the measurement's nodes, for each primary of
    # colour-science's 'Typical CRT Brainard 1997' (its black is zero in this profile).
    _, primaries, v_prime, _ = _crt_by_hand()
    by_hand = 1700.0 * 5.0 * primaries.T @ v_prime
    model = DisplayModel(crt_profile)
    assert model.rods.m_rod == pytest.approx(by_hand, rel=1e-9)
    assert model.rods.black == 0.0
    # Rod contrast of a full step of each primary added to mid-grey: 0.5·m_i / (0.5·Σm).
    background = Background(model, [0.5, 0.5, 0.5])
    for i in range(3):
        RGB = np.full(3, 0.5)
        RGB[i] = 1.0
        assert background.rods(RGB)["rod_contrast"] == pytest.approx(by_hand[i] / by_hand.sum(), rel=1e-9)
    # colour-science's own luminous_flux (its interpolation and integration) agrees within 0.1 %.
    msds = colour.characterisation.MSDS_DISPLAY_PRIMARIES[CRT]
    scotopic = colour.colorimetry.SDS_LEFS_SCOTOPIC["CIE 1951 Scotopic Standard Observer"]
    for i, label in enumerate(msds.labels):
        flux = colour.luminous_flux(colour.SpectralDistribution(msds.signals[label]), scotopic, K_m=1700)
        assert model.rods.m_rod[i] == pytest.approx(flux, rel=1e-3)


def test_s_cone_isolating_direction_has_the_hand_computed_rod_contrast(crt_profile):
    # By hand: M = 683 · 5 nm · Pᵀ·lms (cones at the CRT's nodes, 390–780 nm where the table has values); the
    # S-isolating change ΔLMS = (0, 0, 0.1·S_0) from mid-grey needs ΔRGB = M⁻¹ ΔLMS; its rod contrast is
    # Σ ΔRGB_i · m_i / (0.5 · Σ m_i) with m_i = 1700 · 5 nm · Σ P_i V′.
    _, primaries, v_prime, lms = _crt_by_hand()
    M = 683.0 * 5.0 * primaries.T @ lms  # rows: primaries; columns: L, M, S
    m_rod = 1700.0 * 5.0 * primaries.T @ v_prime
    S_0 = 0.5 * M[:, 2].sum()
    delta_RGB = np.linalg.solve(M.T, np.array([0.0, 0.0, 0.1 * S_0]))
    expected = delta_RGB @ m_rod / (0.5 * m_rod.sum())

    model = DisplayModel(crt_profile)
    background = Background(model, [0.5, 0.5, 0.5])
    described = background.describe(background.colour_to_LMS("cone_contrast", [0.0, 0.0, 0.1]))
    assert described["rod_contrast"] == pytest.approx(expected, rel=1e-9)
    assert abs(expected) > 1e-4  # the rods are not silenced by an S-cone-isolating stimulus
    assert described["scotopic_luminance_cd_m2"] == pytest.approx(0.5 * m_rod.sum() * (1 + expected), rel=1e-9)


def test_xyY_profile_says_not_available(srgb_profile):
    model = DisplayModel(srgb_profile)
    assert model.rods is None
    described = Background(model, [0.5, 0.5, 0.5]).describe(model.RGB_linear_to_LMS([0.6, 0.5, 0.5]))
    assert described["rod_contrast"] is None and described["scotopic_luminance_cd_m2"] is None
    assert "not available" in described["rods_note"]


def test_convert_reports_rod_contrast(demo, tmp_path, capsys):
    save_profile(demo, tmp_path / "demo.json")
    assert main(["convert", "--display", str(tmp_path / "demo.json"), "--dkl", "0,0,0.5", "--json"]) == 0
    result = json.loads(capsys.readouterr().out)
    assert isinstance(result["rod_contrast"], float) and result["scotopic_luminance_cd_m2"] > 0
    assert main(["convert", "--display", str(tmp_path / "demo.json"), "--dkl", "0,0,0.5"]) == 0
    out = capsys.readouterr().out
    assert "rod contrast" in out and "scotopic cd/m²" in out and "silence" not in out.replace("cannot silence", "")


def _dim(protocol, limit=None):
    """The same protocol on a background of about 1 cd/m² (below CIE 191:2010's 5 cd/m²)."""
    protocol["background"] = {"rgb_linear": [0.01, 0.01, 0.01]}
    if limit is not None:
        protocol["rods"] = {"max_rod_contrast": limit}
    return protocol


def _rod_findings(report, severity):
    return [f for f in report["findings"] if f["kind"] == "rods" and f["severity"] == severity]


def test_audit_reports_rod_contrast_and_warns_on_a_mesopic_background(demo, protocol_named):
    protocol = protocol_named("afterimage_null")
    compiled = compile_protocol(protocol, demo)
    report = audit_protocol(compiled, protocol, demo)
    assert _rod_findings(report, "info") and not _rod_findings(report, "warn")  # bright background: reported only
    assert all("cannot silence rods" in f["message"] for f in _rod_findings(report, "info"))

    dim = _dim(protocol_named("afterimage_null"))
    compiled = compile_protocol(dim, demo)
    assert compiled.model.RGB_linear_to_luminance(compiled.background.RGB_0) < 5.0
    report = audit_protocol(compiled, dim, demo)
    warnings = _rod_findings(report, "warn")
    assert warnings and all(f["values"]["mesopic"] for f in warnings)
    assert all(f["values"]["isoluminant"] or f["values"]["cone_isolating"] for f in warnings)
    assert all(f["values"]["largest_rod_contrast"] > 0.01 for f in warnings)  # the default limit, 1 %

    relaxed = _dim(protocol_named("afterimage_null"), limit=1.0)
    report = audit_protocol(compile_protocol(relaxed, demo), relaxed, demo)
    assert not _rod_findings(report, "warn")


def test_audit_on_an_xyY_profile_says_not_available(srgb_profile, protocol_named):
    protocol = protocol_named("afterimage_null")
    profile = dict(srgb_profile, size_cm=[53.1, 29.9], size_px=[1920, 1080])
    from stimlab.profiles.profile import profile_hash

    profile["sha256"] = profile_hash(profile)
    report = audit_protocol(compile_protocol(protocol, profile), protocol, profile)
    found = [f for f in report["findings"] if f["kind"] == "rods"]
    assert len(found) == 1 and "not available" in found[0]["message"] and found[0]["values"]["rod_contrast"] is None
