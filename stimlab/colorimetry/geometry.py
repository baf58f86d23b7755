"""Visual angle to pixels and solid angles of stimulus shapes (common practice).

A size θ at viewing distance D spans ``s = 2·D·tan(θ/2)`` on the screen; an eccentricity e from the screen
centre lies ``D·tan(e)`` away. Pixels follow from the screen's physical width and its resolution.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

__all__ = ["degrees_to_cm", "eccentricity_to_cm", "disc_solid_angle", "rectangle_solid_angle",
           "screen_solid_angle", "TEN_DEGREE_FIELD_SR", "WCAG_FLASH_AREA_SR"]

TEN_DEGREE_FIELD_SR = 2 * math.pi * (1 - math.cos(math.radians(5.0)))
"""Solid angle of a 10° visual field (a cone of 5° half-angle), about 0.0239 sr."""

WCAG_FLASH_AREA_SR = 0.006
"""WCAG 2.2 general and red flash thresholds: flashes may occupy at most 0.006 sr (25 % of a 10° field)."""


def degrees_to_cm(size_deg: float, distance_cm: float) -> float:
    """On-screen extent of a size in degrees of visual angle, ``2·D·tan(θ/2)`` (common practice).

    Parameters
    ----------
    size_deg
        Size θ in degrees of visual angle, 0..180 (exclusive of 180), centred on the line of sight.
    distance_cm
        Viewing distance D from the eye to the screen, cm, > 0.

    Returns
    -------
    float
        Extent on the screen, cm (the same unit as ``distance_cm``).

    Notes
    -----
    Exact for a stimulus centred on the line of sight; off-axis, a visual angle spans more screen. The usual
    rule of thumb, 1 cm per degree at 57 cm, is the small-angle form ``s ≈ D·θ`` (θ in radians).

    References
    ----------
    Common practice: the visual angle of an object of size s at distance D is θ = 2·arctan(s / 2D).

    Examples
    --------
    >>> round(degrees_to_cm(1.0, 57.0), 4)  # at 57 cm one degree is about one centimetre
    0.9948
    """
    return 2.0 * distance_cm * math.tan(math.radians(size_deg) / 2.0)


def eccentricity_to_cm(eccentricity_deg: float, distance_cm: float) -> float:
    """Distance on screen from the fixation point (screen centre) of an eccentricity, ``D·tan(e)``.

    Parameters
    ----------
    eccentricity_deg
        Eccentricity e in degrees of visual angle from the line of sight, −90..90 (exclusive); the sign gives
        the side.
    distance_cm
        Viewing distance D from the eye to the fixation point on the screen, cm, > 0.

    Returns
    -------
    float
        Signed distance on the screen from the fixation point, cm.

    References
    ----------
    Common practice (right-angled triangle with the line of sight perpendicular to the screen).

    Examples
    --------
    >>> round(eccentricity_to_cm(10.0, 57.0), 4)
    10.0506
    """
    return distance_cm * math.tan(math.radians(eccentricity_deg))


def disc_solid_angle(diameter_deg: float) -> float:
    """Solid angle of a disc of angular diameter θ centred on the line of sight, ``2π(1 − cos(θ/2))`` sr.

    Parameters
    ----------
    diameter_deg
        Angular diameter θ, degrees, 0..360 (180 is a hemisphere).

    Returns
    -------
    float
        Solid angle, steradians, 0..4π.

    Notes
    -----
    The solid angle of a right circular cone of half-angle θ/2. For small discs it approaches ``π(θ/2)²`` with θ
    in radians.

    References
    ----------
    Common practice (the solid angle of a cone). WCAG 2.2, "three flashes or below threshold", states its flash
    area limits against a 10° field, :data:`TEN_DEGREE_FIELD_SR`.

    Examples
    --------
    >>> round(disc_solid_angle(10.0), 6)  # a 10° field
    0.023909
    """
    return 2 * math.pi * (1 - math.cos(math.radians(diameter_deg) / 2))


def rectangle_solid_angle(width_deg: float, height_deg: float) -> float:
    """Solid angle of a rectangle centred on the line of sight, ``4·arcsin(sin(α/2)·sin(β/2))`` sr.

    Parameters
    ----------
    width_deg, height_deg
        Full angular width α and height β, degrees, each 0..180.

    Returns
    -------
    float
        Solid angle, steradians, 0..2π.

    Notes
    -----
    The solid angle of a rectangular pyramid with its apex at the eye. For small rectangles it approaches
    ``α·β`` with the angles in radians.

    References
    ----------
    Common practice (the solid angle of a rectangular pyramid).

    Examples
    --------
    >>> round(rectangle_solid_angle(10.0, 10.0), 6)  # a 10° square, about 4/π times a 10° disc
    0.030385
    """
    return 4 * math.asin(math.sin(math.radians(width_deg) / 2) * math.sin(math.radians(height_deg) / 2))


def screen_solid_angle(size_cm: Sequence[float], distance_cm: float) -> float:
    """Solid angle of the whole screen seen from ``distance_cm`` in front of its centre.

    Parameters
    ----------
    size_cm
        Screen width and height, cm, each > 0.
    distance_cm
        Viewing distance to the screen centre, cm, > 0.

    Returns
    -------
    float
        Solid angle, steradians, 0..2π.

    Notes
    -----
    Each side's angle is ``2·arctan(s / 2D)`` (the inverse of :func:`degrees_to_cm`), then
    :func:`rectangle_solid_angle`.

    References
    ----------
    Common practice (visual angle and the solid angle of a rectangular pyramid).

    Examples
    --------
    >>> round(screen_solid_angle((53.1, 29.9), 57.0), 4)  # the demo display at 57 cm
    0.4293
    """
    width = 2 * math.degrees(math.atan(size_cm[0] / 2 / distance_cm))
    height = 2 * math.degrees(math.atan(size_cm[1] / 2 / distance_cm))
    return rectangle_solid_angle(width, height)
