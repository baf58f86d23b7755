"""Transfer models by name: fitting, rebuilding from a profile, the sRGB curve (IEC 61966-2-1)."""

import numpy as np
import pytest

from stimlab.colorimetry.transfer import fit_transfer, sRGB_decode, transfer_from_dict
from stimlab.colorimetry.transfer_parametric import GainOffsetGammaTransfer, PowerTransfer
from stimlab.colorimetry.transfer_table import TableTransfer


def test_srgb_curve_known_values():
    # IEC 61966-2-1: linear segment below 0.04045, and 255 -> 1.
    assert sRGB_decode(0) == 0.0
    assert sRGB_decode(255) == pytest.approx(1.0)
    assert sRGB_decode(10) == pytest.approx(10 / 255 / 12.92)
    assert sRGB_decode(128) == pytest.approx(((128 / 255 + 0.055) / 1.055) ** 2.4)


@pytest.mark.parametrize("transfer", [PowerTransfer(2.4), GainOffsetGammaTransfer(1.1, -0.1, 2.2),
                                      TableTransfer((0, 0.3, 1), (0, 0.1, 1))])
def test_models_survive_saving(transfer):
    again = transfer_from_dict({"model": transfer.name, "parameters": transfer.parameters()})
    x = np.linspace(0, 1, 11)
    assert np.allclose(again.forward(x), transfer.forward(x))


def test_unknown_model_lists_the_valid_ones():
    with pytest.raises(ValueError, match="power, gog, table"):
        fit_transfer([0, 1], [0, 1], "spline")


def test_profile_import_path_keeps_the_noise_model():
    # The profile builder and calibration import reading_sigma from the transfer module.
    from stimlab.colorimetry import reading_noise, transfer
    assert transfer.reading_sigma is reading_noise.reading_sigma


def test_fit_transfer_refuses_nan_naming_the_argument():
    with pytest.raises(ValueError, match="y must be finite"):
        fit_transfer([0.0, 0.5, 1.0], [0.0, np.nan, 1.0], "gog")


def test_srgb_curve_n_dimensional_and_10_bit():
    # IEC 61966-2-1 applied to V = d/d_max: the same curve at any bit depth and any shape.
    levels = np.arange(256).reshape(4, 8, 8)
    assert sRGB_decode(levels).shape == (4, 8, 8)
    assert sRGB_decode(1023, bits=10) == pytest.approx(1.0)
    assert sRGB_decode(512, bits=10) == pytest.approx(((512 / 1023 + 0.055) / 1.055) ** 2.4)
