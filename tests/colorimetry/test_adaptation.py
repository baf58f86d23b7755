"""von Kries predictions against values computed by hand."""

import numpy as np
import pytest

from stimlab.colorimetry.adaptation import (
    after_image_cone_contrast,
    induced_match_cone_contrast,
    null_cone_contrast,
)


def test_complete_adaptation_hand_values():
    # Adapter +25 % L: L gain falls to 1/1.25, so the background's L reads 0.8 → after-image −20 %.
    assert after_image_cone_contrast([0.25, 0.0, 0.0]) == pytest.approx([-0.2, 0.0, 0.0])
    # With k = 1 the null is the adapter itself: after full adaptation the adapter looks neutral.
    assert null_cone_contrast([0.25, -0.1, 0.3]) == pytest.approx([0.25, -0.1, 0.3])


def test_partial_adaptation_hand_values():
    # k = 0.5: after-image 1.21^−0.5 − 1 = 1/1.1 − 1 = −0.0909…; null 1.21^0.5 − 1 = 0.1.
    assert after_image_cone_contrast([0.21, 0, 0], 0.5)[0] == pytest.approx(1 / 1.1 - 1)
    assert null_cone_contrast([0.21, 0, 0], 0.5)[0] == pytest.approx(0.1)
    # The null cancels the after-image: (1 + null)·(1 + c)^−k = 1.
    c = np.array([0.3, -0.2, 0.5])
    assert (1 + null_cone_contrast(c, 0.7)) * (1 + c) ** -0.7 == pytest.approx(np.ones(3))


def test_induction_hand_values():
    # A +10 % L centre on a +21 % L surround with k = 0.5 looks like 1.1/1.1 − 1 = 0 on the background.
    assert induced_match_cone_contrast([0.1, 0, 0], [0.21, 0, 0], 0.5) == pytest.approx([0.0, 0.0, 0.0])


def test_no_adaptation_and_bad_values():
    assert null_cone_contrast([0.4, 0.2, -0.3], 0.0) == pytest.approx([0, 0, 0])
    with pytest.raises(ValueError, match="exponent"):
        null_cone_contrast([0.1, 0, 0], 1.5)
    with pytest.raises(ValueError, match="above −1"):
        after_image_cone_contrast([-1.0, 0, 0])
    with pytest.raises(ValueError, match="NaN"):
        after_image_cone_contrast([np.nan, 0, 0])
