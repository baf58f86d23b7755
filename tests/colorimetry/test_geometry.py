"""Visual angle and solid angles (common practice)."""

import math

import pytest

from stimlab.colorimetry.geometry import (
    TEN_DEGREE_FIELD_SR,
    degrees_to_cm,
    disc_solid_angle,
    eccentricity_to_cm,
    rectangle_solid_angle,
)


def test_visual_angle_formula():
    # Common practice: s = 2·D·tan(θ/2); 1° at 57.3 cm is 1.000 cm to 4 decimals.
    assert degrees_to_cm(1.0, 57.2958) == pytest.approx(1.0, abs=1e-4)
    assert degrees_to_cm(10.0, 100.0) == pytest.approx(2 * 100 * math.tan(math.radians(5)))
    assert eccentricity_to_cm(45.0, 50.0) == pytest.approx(50.0)


def test_solid_angles():
    # A 10° field (5° half-angle cone) is 0.0239 sr; WCAG's 0.006 sr is a quarter of it.
    assert TEN_DEGREE_FIELD_SR == pytest.approx(0.02391, abs=1e-5)
    assert 0.006 / TEN_DEGREE_FIELD_SR == pytest.approx(0.25, abs=0.01)
    # Small angles: a disc of diameter θ is close to π(θ/2)² sr, a square to θ² sr.
    theta = math.radians(1.0)
    assert disc_solid_angle(1.0) == pytest.approx(math.pi * (theta / 2) ** 2, rel=1e-4)
    assert rectangle_solid_angle(1.0, 1.0) == pytest.approx(theta**2, rel=1e-4)
    # A hemisphere.
    assert disc_solid_angle(180.0) == pytest.approx(2 * math.pi)
