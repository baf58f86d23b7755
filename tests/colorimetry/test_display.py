"""Display models against IEC 61966-2-1 (sRGB) and colour-science's Brainard (1997) CRT primaries."""

import numpy as np
import pytest

from stimlab.colorimetry._colour import colour
from stimlab.colorimetry.display import DisplayModel, XYZ_to_LMS_matrix
from stimlab.colorimetry.observers import observer
from stimlab.colorimetry.spaces import LMS_to_MacLeod_Boynton
from stimlab.profiles.profile import primaries_xyY_from_white

# IEC 61966-2-1:1999, RGB -> XYZ for sRGB (D65), as published to 4 decimals.
SRGB_TO_XYZ = np.array([[0.4124, 0.3576, 0.1805],
                        [0.2126, 0.7152, 0.0722],
                        [0.0193, 0.1192, 0.9505]])


def test_srgb_primaries_reproduce_the_standard_matrix(srgb_profile):
    model = DisplayModel(srgb_profile)
    matrix = model.M_XYZ / model.RGB_linear_to_XYZ(np.ones(3))[1]
    assert np.max(np.abs(matrix - SRGB_TO_XYZ)) < 5e-5 + 5e-5  # 4 published decimals: half a unit either side
    assert model.is_approximate


def test_primary_luminances_from_white_sum_to_white():
    # IEC 61966-2-1: the luminances of the sRGB primaries are the middle row of the matrix.
    xyY = primaries_xyY_from_white({"red": (0.64, 0.33), "green": (0.30, 0.60), "blue": (0.15, 0.06),
                                    "white": (0.3127, 0.3290, 1.0)})
    assert [round(xyY[c][2], 4) for c in ("red", "green", "blue")] == [0.2126, 0.7152, 0.0722]


def _nodes(msds_or_sds, wavelengths):
    """A colour-science table's values at ``wavelengths`` (its own nodes: nothing interpolated)."""
    values = np.asarray(msds_or_sds.values)
    index = np.searchsorted(np.asarray(msds_or_sds.wavelengths), wavelengths)
    return values[index]


def test_crt_primaries_XYZ_equal_colour_science_sd_to_XYZ(crt_profile):
    # colour-science's own integration (k = 683 lm/W, absolute) of the 'Typical CRT Brainard 1997' primaries,
    # summed at the measurement's own 5 nm with the CIE 1931 CMFs taken at those nodes (DEVELOPERS.md: spectra are
    # integrated on their own grid).
    msds = colour.characterisation.MSDS_DISPLAY_PRIMARIES["Typical CRT Brainard 1997"]
    cmfs = colour.colorimetry.MSDS_CMFS_STANDARD_OBSERVER["CIE 1931 2 Degree Standard Observer"]
    wavelengths = np.asarray(msds.wavelengths)
    cmfs_5 = colour.MultiSpectralDistributions(dict(zip(wavelengths, _nodes(cmfs, wavelengths))))
    model = DisplayModel(crt_profile)
    for i, label in enumerate(msds.labels):
        sd = colour.SpectralDistribution(msds.signals[label])
        same_grid = colour.sd_to_XYZ(sd, cmfs_5, k=683, method="Integration")
        assert np.allclose(model.M_XYZ[:, i], same_grid, rtol=1e-6)
        # colour-science's default path (its own interpolation, ASTM E308 weights) agrees within 0.5 %.
        default = colour.sd_to_XYZ(sd, cmfs, k=683)
        assert np.allclose(model.M_XYZ[:, i], default, rtol=5e-3)


def test_luminance_is_colour_science_luminous_flux_with_the_CIE_2008_LEF(crt_profile):
    # K_m · Σ S(λ) V(λ) Δλ at the measurement's 5 nm, with colour-science's CIE 2008 2° physiologically relevant
    # LEF (which CIE 170-2:2015 defines from the Stockman & Sharpe fundamentals) taken at those nodes.
    msds = colour.characterisation.MSDS_DISPLAY_PRIMARIES["Typical CRT Brainard 1997"]
    lef = colour.colorimetry.SDS_LEFS_PHOTOPIC["CIE 2008 2 Degree Physiologically Relevant LEF"]
    model = DisplayModel(crt_profile)
    wavelengths = np.asarray(msds.wavelengths)
    keep = wavelengths >= lef.wavelengths[0]
    for i, label in enumerate(msds.labels):
        expected = 683 * 5.0 * np.sum(msds.values[keep, i] * _nodes(lef, wavelengths[keep]))
        assert model.RGB_linear_to_luminance(np.eye(3)[i]) == pytest.approx(expected, rel=1e-5)
        # colour-science's luminous_flux (its own interpolation and integration) agrees within 0.1 %.
        flux = colour.luminous_flux(colour.SpectralDistribution(msds.signals[label]), lef, K_m=683)
        assert model.RGB_linear_to_luminance(np.eye(3)[i]) == pytest.approx(flux, rel=1e-3)


def test_linear_RGB_LMS_round_trip_nd(demo_model):
    rng = np.random.default_rng(1)
    RGB = rng.random((4, 5, 3))
    LMS = demo_model.RGB_linear_to_LMS(RGB)
    assert LMS.shape == (4, 5, 3)
    assert np.allclose(demo_model.LMS_to_RGB_linear(LMS), RGB, atol=1e-12)
    assert np.allclose(LMS[1, 2], demo_model.RGB_linear_to_LMS(RGB[1, 2]))


def test_black_adds_to_every_colour(demo_model):
    assert demo_model.black_luminance == pytest.approx(0.35, rel=0.02)  # the demo display's measured black
    assert np.allclose(demo_model.RGB_linear_to_LMS(np.zeros(3)), demo_model.LMS_black)


def test_xyz_to_cone_transform_fits_the_spectrum():
    # The least-squares 1931-XYZ-to-cone matrix is an approximation: L and M within 3 % of peak over the
    # spectrum, S only within 21 % (at 419 nm, where the 1931 observer is known to be wrong in the blue).
    obs = observer("ss2")
    T = XYZ_to_LMS_matrix(obs)
    cmfs = colour.colorimetry.MSDS_CMFS_STANDARD_OBSERVER["CIE 1931 2 Degree Standard Observer"]
    xyz = np.stack([np.interp(obs.wavelengths, cmfs.wavelengths, cmfs.values[:, i]) for i in range(3)], -1)
    error = np.max(np.abs(xyz @ T.T - obs.lms), axis=0)
    assert error[0] < 0.03 and error[1] < 0.03 and error[2] < 0.21


def test_nan_is_refused(demo_model):
    with pytest.raises(ValueError, match="NaN"):
        demo_model.RGB_linear_to_LMS([0.5, np.nan, 0.5])


def _smooth_primaries(wavelengths):
    """Three broad Gaussian primaries (invented, smooth), W·sr⁻¹·m⁻²·nm⁻¹."""
    wl = np.asarray(wavelengths, dtype=float)[:, None]
    peaks, widths, heights = np.array([610.0, 545.0, 455.0]), np.array([30.0, 35.0, 22.0]), np.array([4, 3, 5]) * 1e-3
    return heights * np.exp(-0.5 * ((wl - peaks) / widths) ** 2)


def _profile_from(wavelengths, primaries, name="smooth"):
    from stimlab.profiles.profile import build_profile
    from tests.conftest import power_transfer

    return build_profile(name, transfer=power_transfer(), spectra=(wavelengths, primaries, None))


@pytest.mark.parametrize("key", ["sp", "ss2"])
def test_one_and_five_nm_measurements_of_a_smooth_spectrum_agree(key):
    # The same smooth spectrum measured at 1 nm and at 5 nm must give the same cone excitations and XYZ: each is
    # integrated on its own grid, the tables (colour-science's 'Smith & Pokorny 1975 Normal Trichromats' at 5 nm,
    # 'Stockman & Sharpe 2 Degree Cone Fundamentals' and the CIE 1931 CMFs at 1 nm) brought to it, never the
    # measurement decimated. 1e-4 relative: the agreement asked of the integration (common practice).
    fine, coarse = np.arange(380.0, 781.0, 1.0), np.arange(380.0, 781.0, 5.0)
    a = DisplayModel(_profile_from(fine, _smooth_primaries(fine)), key)
    b = DisplayModel(_profile_from(coarse, _smooth_primaries(coarse)), key)
    # Relative to the white's own excitation of each cone class (and its X, Y, Z): the scale contrasts are read on.
    white_LMS, white_XYZ = b.M_LMS.sum(axis=1, keepdims=True), b.M_XYZ.sum(axis=1, keepdims=True)
    assert np.max(np.abs(a.M_LMS - b.M_LMS) / white_LMS) < 1e-4
    assert np.max(np.abs(a.M_XYZ - b.M_XYZ) / white_XYZ) < 1e-4
    l_s = [LMS_to_MacLeod_Boynton(m.RGB_linear_to_LMS([0.5, 0.5, 0.5]), m.observer.w_L, m.observer.w_M,
                                  m.observer.k_S)[:2] for m in (a, b)]
    assert np.max(np.abs(l_s[0] / l_s[1] - 1)) < 1e-4


def test_a_narrow_line_between_table_nodes_is_not_lost():
    # A 1 nm-wide emission line at 532 nm, measured at 1 nm, falls between the 5 nm nodes of the Smith & Pokorny
    # table; decimating onto that table would drop it entirely. Its luminance must be 683 · radiance · V(532 nm)
    # (the luminance definition, CIE 170-2:2015 form), with V(532) interpolated linearly from the
    # table's own V = w_L·l̄ + w_M·m̄ (an independent, coarser interpolation: 1 % tolerance).
    fine = np.arange(380.0, 781.0, 1.0)
    primaries = _smooth_primaries(fine)
    primaries[:, 1] = 0.0
    primaries[fine == 532.0, 1] = 1e-2
    model = DisplayModel(_profile_from(fine, primaries, "line"), "sp")
    obs = model.observer
    V_532 = np.interp(532.0, obs.wavelengths, obs.luminous_efficiency)
    luminance = model.RGB_linear_to_luminance([0.0, 1.0, 0.0]) - model.black_luminance
    assert luminance == pytest.approx(683.0 * 1e-2 * 1.0 * V_532, rel=0.01)
