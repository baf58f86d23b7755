"""Visual angle to pixels and solid angles of stimulus shapes (common practice).

A size θ at viewing distance D spans ``s = 2·D·tan(θ/2)`` on the screen; an eccentricity e from the screen
centre lies ``D·tan(e)`` away. Pixels follow from the screen's physical width and its resolution.
"""

from __future__ import annotations

import math

__all__ = ["degrees_to_cm", "eccentricity_to_cm", "disc_solid_angle", "rectangle_solid_angle",
           "screen_solid_angle", "TEN_DEGREE_FIELD_SR", "WCAG_FLASH_AREA_SR"]

TEN_DEGREE_FIELD_SR = 2 * math.pi * (1 - math.cos(math.radians(5.0)))
"""Solid angle of a 10° visual field (a cone of 5° half-angle), about 0.0239 sr."""

WCAG_FLASH_AREA_SR = 0.006
"""WCAG 2.2 general and red flash thresholds: flashes may occupy at most 0.006 sr (25 % of a 10° field)."""


def degrees_to_cm(size_deg: float, distance_cm: float) -> float:
    """On-screen extent of a size in degrees of visual angle, ``2·D·tan(θ/2)`` (common practice).

    Examples
    --------
    >>> round(degrees_to_cm(1.0, 57.0), 4)  # at 57 cm one degree is about one centimetre
    0.9948
    """
    return 2.0 * distance_cm * math.tan(math.radians(size_deg) / 2.0)


def eccentricity_to_cm(eccentricity_deg: float, distance_cm: float) -> float:
    """Distance on screen from the fixation point (screen centre) of an eccentricity, ``D·tan(e)``."""
    return distance_cm * math.tan(math.radians(eccentricity_deg))


def disc_solid_angle(diameter_deg: float) -> float:
    """Solid angle of a disc of angular diameter θ centred on the line of sight, ``2π(1 − cos(θ/2))`` sr."""
    return 2 * math.pi * (1 - math.cos(math.radians(diameter_deg) / 2))


def rectangle_solid_angle(width_deg: float, height_deg: float) -> float:
    """Solid angle of a rectangle centred on the line of sight, ``4·arcsin(sin(α/2)·sin(β/2))`` sr."""
    return 4 * math.asin(math.sin(math.radians(width_deg) / 2) * math.sin(math.radians(height_deg) / 2))


def screen_solid_angle(size_cm, distance_cm: float) -> float:
    """Solid angle of the whole screen seen from ``distance_cm`` in front of its centre."""
    width = 2 * math.degrees(math.atan(size_cm[0] / 2 / distance_cm))
    height = 2 * math.degrees(math.atan(size_cm[1] / 2 / distance_cm))
    return rectangle_solid_angle(width, height)
