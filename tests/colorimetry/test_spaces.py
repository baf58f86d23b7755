"""Cone contrast, DKL and MacLeod–Boynton: defining properties, round trips, n-d input, bad values."""

import itertools

import numpy as np
import pytest

from stimlab.colorimetry.spaces import (
    DKL_to_LMS,
    LMS_to_cone_contrast,
    LMS_to_DKL,
    LMS_to_MacLeod_Boynton,
    MacLeod_Boynton_to_LMS,
    cone_contrast_to_LMS,
    matrix_DKL_directions,
    matrix_DKL_mechanisms,
)
from stimlab.colorimetry.stimulus import COLOUR_SPACES, Background

W_L, W_M = 0.68990272, 0.34832189  # CIE 170-2:2015, 2°
K_S = 0.0371598
LMS_0 = np.array([42.0, 35.0, 30.0])


def V(LMS):
    return W_L * LMS[..., 0] + W_M * LMS[..., 1]


def unit(axis):
    return DKL_to_LMS(np.eye(3)[axis], LMS_0, W_L, W_M) - LMS_0


# Defining properties of DKL (Derrington, Krauskopf & Lennie 1984; Brainard 1996's construction).
def test_isoluminant_axes_leave_luminance_unchanged():
    assert V(unit(1)) == pytest.approx(0.0, abs=1e-12)
    assert V(unit(2)) == pytest.approx(0.0, abs=1e-12)


def test_L_minus_M_axis_leaves_S_unchanged_and_S_axis_leaves_L_and_M():
    assert unit(1)[2] == pytest.approx(0.0, abs=1e-15)
    assert unit(2)[:2] == pytest.approx([0.0, 0.0], abs=1e-15)


def test_luminance_axis_has_equal_cone_contrasts_of_one_over_root_three():
    contrast = LMS_to_cone_contrast(LMS_0 + unit(0), LMS_0)
    assert contrast == pytest.approx(np.full(3, 1 / np.sqrt(3)))


def test_every_unit_direction_has_pooled_cone_contrast_one():
    for axis in range(3):
        contrast = unit(axis) / LMS_0
        assert np.sqrt(np.sum(contrast**2)) == pytest.approx(1.0)


def test_signs_follow_the_convention():
    # +L−M raises L (reddish), +S raises S (violet), +lum raises luminance.
    assert unit(1)[0] > 0 and unit(1)[1] < 0
    assert unit(2)[2] > 0
    assert V(unit(0)) > 0


def test_mechanism_rows_read_one_on_their_own_direction_and_zero_on_the_others():
    D = matrix_DKL_directions(LMS_0, W_L, W_M)
    R = matrix_DKL_mechanisms(LMS_0, W_L, W_M)
    assert R @ D == pytest.approx(np.eye(3), abs=1e-12)


def test_display_maximum_normalisation_puts_one_at_the_given_limits():
    limits = np.array([1.7, 0.16, 0.9])
    D = matrix_DKL_directions(LMS_0, W_L, W_M, limits)
    pooled = np.sqrt(np.sum((D / LMS_0[:, None]) ** 2, axis=0))
    assert pooled == pytest.approx(limits)


def test_macleod_boynton_known_values():
    # Definition (MacLeod & Boynton 1979, CIE 170-2:2015 scaling): l + m = 1 and s = k_S·S/V.
    l, s, lum = LMS_to_MacLeod_Boynton(LMS_0, W_L, W_M, K_S)
    assert lum == pytest.approx(W_L * 42 + W_M * 35)
    assert l == pytest.approx(W_L * 42 / lum)
    assert s == pytest.approx(K_S * 30 / lum)


def test_spectrum_locus_s_peaks_at_one(demo_model):
    obs = demo_model.observer
    mb = LMS_to_MacLeod_Boynton(obs.lms[:300], obs.w_L, obs.w_M, obs.k_S)
    assert mb[:, 1].max() == pytest.approx(1.0)
    assert obs.wavelengths[np.argmax(mb[:, 1])] == 418.0  # max of S/V at 418 nm: CIE 170-2:2015 scaling of MacLeod & Boynton (1979), computed from colour-science's table


def test_round_trips_of_every_pair_of_spaces(demo_model):
    background = Background(demo_model, [0.45, 0.5, 0.55])
    rng = np.random.default_rng(3)
    RGB = 0.1 + 0.8 * rng.random((50, 3))
    LMS = demo_model.RGB_linear_to_LMS(RGB)
    for source, target in itertools.permutations(COLOUR_SPACES, 2):
        coordinates = background.LMS_to_space(source, LMS)
        through = background.LMS_to_space(target, background.colour_to_LMS(source, coordinates))
        back = background.LMS_to_space(source, background.colour_to_LMS(target, through))
        assert np.max(np.abs(back - coordinates)) < 1e-10 * max(1.0, np.max(np.abs(coordinates))), (source, target)


def test_nd_input_gives_the_same_answers():
    rng = np.random.default_rng(4)
    LMS = LMS_0 * (1 + 0.2 * rng.standard_normal((3, 4, 3)))
    for forward in (lambda x: LMS_to_DKL(x, LMS_0, W_L, W_M), lambda x: LMS_to_cone_contrast(x, LMS_0),
                    lambda x: LMS_to_MacLeod_Boynton(x, W_L, W_M, K_S)):
        whole = forward(LMS)
        assert whole.shape == (3, 4, 3)
        assert np.allclose(whole.reshape(-1, 3), forward(LMS.reshape(-1, 3)))
        assert np.allclose(whole[2, 1], forward(LMS[2, 1]))


@pytest.mark.parametrize("bad", [np.nan, np.inf, -np.inf])
def test_nan_and_inf_raise(bad):
    value = np.array([1.0, bad, 1.0])
    for call in (lambda: LMS_to_DKL(value, LMS_0, W_L, W_M), lambda: DKL_to_LMS(value, LMS_0, W_L, W_M),
                 lambda: cone_contrast_to_LMS(value, LMS_0), lambda: LMS_to_cone_contrast(value, LMS_0),
                 lambda: MacLeod_Boynton_to_LMS(value, W_L, W_M, K_S)):
        with pytest.raises(ValueError, match="NaN or infinity"):
            call()


def test_background_must_be_positive():
    with pytest.raises(ValueError, match="LMS_0"):
        LMS_to_cone_contrast([1.0, 1.0, 1.0], [1.0, 0.0, 1.0])
