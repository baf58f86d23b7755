"""One colour in every space: the convert report's values, gamut verdict, device levels and rod figures."""

import numpy as np
import pytest

from stimlab.colorimetry.description import describe_colour, rod_figures
from stimlab.colorimetry.display import DisplayModel
from stimlab.colorimetry.rods import NOT_AVAILABLE
from stimlab.colorimetry.stimulus import Background


def test_white_of_srgb_primaries_is_d65(srgb_profile):
    # IEC 61966-2-1: the sRGB primaries at their luminance shares add up to D65, x 0.3127, y 0.3290; white Y is
    # the profile's 80 cd/m² (the standard's reference display luminance).
    model = DisplayModel(srgb_profile, "ss2")
    background = Background(model, [0.5, 0.5, 0.5])
    described = background.describe(model.RGB_linear_to_LMS([1.0, 1.0, 1.0]))
    x, y, Y = described["xyY"]
    assert (x, y) == pytest.approx((0.3127, 0.3290), abs=2e-4)
    assert Y == pytest.approx(80.0, rel=1e-3)
    assert described["lab"][0] == pytest.approx(100.0, abs=1e-6)  # CIE 1976 L* of the white itself
    assert described["rgb_device"] == [255, 255, 255]


def test_method_and_function_agree_and_device_matches_to_device(demo_model):
    background = Background(demo_model, [0.5, 0.5, 0.5])
    LMS = background.colour_to_LMS("dkl", [0.1, 0.05, -0.2])
    described = describe_colour(demo_model, background.RGB_0, background.display_maximum, LMS)
    assert described == background.describe(LMS)
    assert described["rgb_device"] == background.to_device("dkl", [0.1, 0.05, -0.2]).tolist()
    assert described["luminance_cd_m2"] == pytest.approx(float(demo_model.RGB_linear_to_luminance(
        described["rgb_linear"])))
    assert described["cone_contrast"] == pytest.approx(background.LMS_to_space("cone_contrast", LMS))


def test_out_of_gamut_is_reported_not_clipped(demo_model):
    background = Background(demo_model, [0.5, 0.5, 0.5])
    described = background.describe(demo_model.RGB_linear_to_LMS([1.2, 0.5, -0.1]))
    assert described["in_gamut"] is False and described["rgb_device"] is None
    assert described["out_of_gamut"] == pytest.approx({"red": 0.2, "blue": -0.1})
    # In-gamut scale from the cube: red has 0.5/0.7 of room, blue 0.5/0.6, so red stops it at 5/7.
    assert described["max_scale_in_gamut"] == pytest.approx(5 / 7)
    assert described["limiting_channel"] == "red"


def test_rod_figures_are_not_guessed_for_an_xyY_profile(srgb_profile):
    model = DisplayModel(srgb_profile, "ss2")
    figures = rod_figures(model, np.array([0.6, 0.5, 0.5]), np.array([0.5, 0.5, 0.5]))
    assert figures["rod_contrast"] is None and figures["rods_note"] == NOT_AVAILABLE


def test_rod_contrast_of_the_background_itself_is_zero(demo_model):
    figures = rod_figures(demo_model, np.array([0.5, 0.5, 0.5]), np.array([0.5, 0.5, 0.5]))
    assert figures["rod_contrast"] == pytest.approx(0.0, abs=1e-15)
    assert figures["scotopic_luminance_cd_m2"] == figures["background_scotopic_luminance_cd_m2"] > 0
