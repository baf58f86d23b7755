"""A display profile in the numbers a technician checks first, shared by ``stimlab display show`` and the web app."""

from __future__ import annotations

import numpy as np

from ..colorimetry.display import CHANNELS, DisplayModel
from ..colorimetry.rods import NOT_AVAILABLE
from ..colorimetry.stimulus import DKL_AXES, Background
from .profile import DEFAULT_MAX_AGE_DAYS, profile_age_days, profile_warnings

__all__ = ["display_summary", "rods_summary"]

MID_GREY = (0.5, 0.5, 0.5)
"""Linear RGB of the background the headroom and one-level figures are given for."""


def display_summary(profile: dict, observer=None, max_age_days: int = DEFAULT_MAX_AGE_DAYS, today=None) -> dict:
    """What a technician checks first about a display, as plain JSON-able numbers.

    Parameters
    ----------
    profile
        A checked display profile.
    observer
        Observer key or :class:`~stimlab.colorimetry.observers.Observer`; default the standard 2° observer.
    max_age_days
        Profiles older than this get a warning.
    today
        The date to measure the profile's age against (default today).

    Returns
    -------
    dict
        Name, hash, bits, refresh (Hz), size (px, cm), who measured it and when, age (days), white and black
        luminance (cd/m²), primaries (CIE 1931 xy), the DKL headroom from mid-grey per axis (pooled cone
        contrast, ``[low, high]``), one digital level in cone contrast at mid-grey, transfer fits with residuals
        (fraction of full output), warnings, notes and the rod figures of :func:`rods_summary`.

    Raises
    ------
    ValueError
        For an unknown observer key.

    References
    ----------
    Brainard (1996) for the DKL normalisation (:mod:`stimlab.colorimetry.spaces`).

    Examples
    --------
    >>> import datetime
    >>> from stimlab.profiles.demo import demo_profile
    >>> summary = display_summary(demo_profile(), today=datetime.date(2026, 12, 1))
    >>> summary["bits"], round(summary["white_cd_m2"], 1), summary["age_days"]
    (10, 122.9, 7)
    >>> [round(v, 4) for v in summary["dkl_limits"]["L-M"]]
    [-0.1643, 0.1643]
    """
    model = DisplayModel(profile) if observer is None else DisplayModel(profile, observer)
    background = Background(model, MID_GREY)
    described = background.describe(background.LMS_0)
    return {
        "name": profile["name"], "sha256": profile["sha256"], "bits": profile["bits"],
        "refresh_hz": profile["refresh_hz"], "size_px": profile.get("size_px"), "size_cm": profile.get("size_cm"),
        "measured_by": profile.get("measured_by"), "measured_on": profile["measured_on"],
        "age_days": profile_age_days(profile, today), "observer": model.observer.key,
        "white_cd_m2": model.white_luminance, "black_cd_m2": model.black_luminance,
        "primaries_xy": {c: xy.tolist() for c, xy in zip(CHANNELS, model.primaries_xy())},
        "dkl_limits": {axis: limits.tolist() for axis, limits in zip(("lum", "L-M", "S"), background.DKL_limits)},
        "quantisation_cone_contrast": described["quantisation_cone_contrast"],
        "approximate": model.is_approximate,
        "warnings": profile_warnings(profile, max_age_days, today),
        "transfer": {c: {"model": profile["transfer"][c]["model"], "rms": profile["transfer"][c]["rms"],
                         "max_abs": profile["transfer"][c]["max_abs"],
                         "parameters": {k: v for k, v in profile["transfer"][c]["parameters"].items()
                                        if not isinstance(v, list)},
                         "alternatives": {k: v["rms"] for k, v in profile["transfer"][c]["alternatives"].items()}}
                     for c in CHANNELS},
        "notes": profile.get("notes", []),
        "rods": rods_summary(model, background),
    }


def rods_summary(model: DisplayModel, background: Background) -> dict:
    """Rod intrusion at mid-grey: rod contrast of each DKL axis's unit stimulus and of a step of each primary.

    Parameters
    ----------
    model
        The display model.
    background
        The background the figures are given for (mid-grey in :func:`display_summary`).

    Returns
    -------
    dict
        ``available`` (false for a profile given as xyY, with the reason in ``note``: rod excitation needs
        spectra and nothing is guessed); otherwise the background's and white's scotopic luminance (scotopic
        cd/m²), white's scotopic-to-photopic ratio S/P, the rod contrast of a unit step (pooled cone contrast 1)
        along each DKL axis, and of a 0.1 linear-RGB step of each primary.

    References
    ----------
    CIE 1951 scotopic V′(λ) (:mod:`stimlab.colorimetry.rods`); CIE 191:2010 for the mesopic range (from memory).
    """
    rods = model.rods
    if rods is None:
        return {"available": False, "note": NOT_AVAILABLE}
    delta_axes = model.M_LMS_inverse @ background.D  # columns: ΔRGB of each unit DKL stimulus
    return {
        "available": True,
        "background_scotopic_cd_m2": float(rods.scotopic_luminance(background.RGB_0)),
        "white_scotopic_cd_m2": float(rods.scotopic_luminance(np.ones(3))),
        "white_s_over_p": float(rods.scotopic_luminance(np.ones(3))) / model.white_luminance,
        "dkl_unit": {axis: float(rods.contrast_of_change(delta_axes[:, i], background.RGB_0))
                     for i, axis in enumerate(DKL_AXES)},
        "primary_step": {c: float(rods.contrast_of_change(0.1 * np.eye(3)[i], background.RGB_0))
                         for i, c in enumerate(CHANNELS)},
    }
