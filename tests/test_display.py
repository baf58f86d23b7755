"""Display models against IEC 61966-2-1 (sRGB) and colour-science's Brainard (1997) CRT primaries."""

import numpy as np
import pytest

from stimlab.colorimetry._colour import colour
from stimlab.colorimetry.display import DisplayModel, XYZ_to_LMS_matrix
from stimlab.colorimetry.observers import observer
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


def _linear_sd(msds, label):
    """One primary resampled linearly to the observer grid, as stimlab resamples it."""
    sd = colour.SpectralDistribution(msds.signals[label])
    obs = observer("ss2")
    values = np.interp(obs.wavelengths, sd.wavelengths, sd.values, left=0, right=0)
    return colour.SpectralDistribution(dict(zip(obs.wavelengths, values)))


def test_crt_primaries_XYZ_equal_colour_science_sd_to_XYZ(crt_profile):
    # colour-science's own integration (k = 683 lm/W, absolute) of the 'Typical CRT Brainard 1997' primaries.
    msds = colour.characterisation.MSDS_DISPLAY_PRIMARIES["Typical CRT Brainard 1997"]
    cmfs = colour.colorimetry.MSDS_CMFS_STANDARD_OBSERVER["CIE 1931 2 Degree Standard Observer"]
    model = DisplayModel(crt_profile)
    for i, label in enumerate(msds.labels):
        on_grid = cmfs.copy().trim(colour.SpectralShape(390, 830, 1))
        same_grid = colour.sd_to_XYZ(_linear_sd(msds, label), on_grid, k=683, method="Integration")
        assert np.allclose(model.M_XYZ[:, i], same_grid, rtol=1e-6)
        # colour-science's default path (its own interpolation, ASTM E308 weights) agrees within 0.5 %.
        default = colour.sd_to_XYZ(colour.SpectralDistribution(msds.signals[label]), cmfs, k=683)
        assert np.allclose(model.M_XYZ[:, i], default, rtol=5e-3)


def test_luminance_is_colour_science_luminous_flux_with_the_CIE_2008_LEF(crt_profile):
    # colour-science's luminous_flux (K_m · ∫ S(λ) V(λ) dλ) with the CIE 2008 2° physiologically relevant LEF,
    # which CIE 170-2:2015 defines from the Stockman & Sharpe fundamentals.
    msds = colour.characterisation.MSDS_DISPLAY_PRIMARIES["Typical CRT Brainard 1997"]
    lef = colour.colorimetry.SDS_LEFS_PHOTOPIC["CIE 2008 2 Degree Physiologically Relevant LEF"]
    model = DisplayModel(crt_profile)
    for i, label in enumerate(msds.labels):
        expected = colour.luminous_flux(_linear_sd(msds, label), lef, K_m=683)
        assert model.RGB_linear_to_luminance(np.eye(3)[i]) == pytest.approx(expected, rel=1e-5)


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
