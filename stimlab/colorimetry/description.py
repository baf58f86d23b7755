"""One colour described in every space at once: the report behind ``stimlab convert`` and the display summaries.

The report is JSON-able and its keys are the ``stimlab convert --json`` contract: every space of
:data:`stimlab.colorimetry.stimulus.COLOUR_SPACES`, luminance, CIE xyY and L*a*b*, device levels (only in gamut:
out of gamut is reported, never clipped silently), the in-gamut scale with its limiting channel, the grain of one
device level in cone contrast, and the rod figures. :meth:`stimlab.colorimetry.stimulus.Background.describe` is
the usual way in.

References
----------
- CIE 015:2018, Colorimetry (xyY and CIE 1976 L*a*b*, through colour-science; from memory).
- CIE 170-2:2015 (MacLeod–Boynton chromaticity and the luminance weights); Brainard (1996) for DKL.
- CIE 191:2010 and the CIE 1951 scotopic V′(λ) for the rod figures (:mod:`stimlab.colorimetry.rods`).
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from ._colour import colour
from .device import RGB_linear_to_device, is_within_gamut, quantisation_cone_contrast
from .display import CHANNELS, DisplayModel
from .display_maximum import DisplayMaximum
from .gamut import scale_limit
from .rods import NOT_AVAILABLE
from .spaces import LMS_to_cone_contrast, LMS_to_DKL, LMS_to_MacLeod_Boynton

__all__ = ["describe_colour", "rod_figures"]

SAME_AS_BACKGROUND = 1e-12
"""Largest difference from the background in linear RGB (fraction of full drive) read as none: numerical noise of a
round trip through cone space, far below one device level at any bit depth stimlab supports (2⁻¹⁶)."""


def rod_figures(model: DisplayModel, RGB: ArrayLike, RGB_0: ArrayLike) -> dict:
    """Rod contrast against a background and scotopic luminance of one colour.

    Parameters
    ----------
    model
        The display seen by the observer.
    RGB
        Linear RGB of the colour, shape (3,), 0..1 in gamut.
    RGB_0
        Linear RGB of the background, shape (3,), 0..1.

    Returns
    -------
    dict
        ``rod_contrast`` (``(R − R_0)/R_0``, dimensionless, > −1), ``scotopic_luminance_cd_m2`` and
        ``background_scotopic_luminance_cd_m2`` (scotopic cd/m², ≥ 0; CIE 1951 V′(λ), K′m = 1700 lm/W), and
        ``rods_note`` (``None``). For a profile given as xyY each figure is ``None`` and ``rods_note`` says why:
        rod excitation needs spectra and is never guessed.

    Raises
    ------
    ValueError
        If the background's scotopic luminance is 0.
    """
    rods = model.rods
    if rods is None:
        return {"rod_contrast": None, "scotopic_luminance_cd_m2": None,
                "background_scotopic_luminance_cd_m2": None, "rods_note": NOT_AVAILABLE}
    return {"rod_contrast": float(rods.rod_contrast(RGB, RGB_0)),
            "scotopic_luminance_cd_m2": float(rods.scotopic_luminance(RGB)),
            "background_scotopic_luminance_cd_m2": float(rods.scotopic_luminance(RGB_0)),
            "rods_note": None}


def describe_colour(model: DisplayModel, RGB_0: ArrayLike, display_maximum: DisplayMaximum, LMS: ArrayLike) -> dict:
    """One colour in every space, with its device levels, gamut verdict and quantisation grain.

    Parameters
    ----------
    model
        The display seen by the observer.
    RGB_0
        Background linear RGB, shape (3,), each 0..1: the reference of the relative spaces.
    display_maximum
        The background's display-maximum normalisation of DKL.
    LMS
        Cone excitations of one colour, shape (3,), scaled so that ``w_L·L + w_M·M`` is luminance in cd/m².

    Returns
    -------
    dict
        JSON-able, keys as the ``stimlab convert --json`` contract: ``rgb_linear`` (may lie outside 0..1),
        ``in_gamut``, ``lms``, ``cone_contrast`` (> −1), ``dkl`` (pooled cone contrast), ``dkl_display_maximum``
        (``None`` along a blocked axis) with ``dkl_display_maximum_note``, ``macleod_boynton`` (l 0..1, s ≥ 0),
        ``luminance_cd_m2``, CIE ``xyY`` (Y in cd/m²) and ``lab`` (white = full drive), ``rgb_device`` (device
        levels 0..2^bits − 1, ``None`` out of gamut), ``out_of_gamut`` (how far each offending channel lies
        outside 0..1, ``None`` in gamut), ``quantisation_cone_contrast`` (one device level in cone contrast),
        ``max_scale_in_gamut`` (the in-gamut scale, ≥ 0; ``None`` for the background itself, which has no
        direction to scale), ``limiting_channel``, the background, display and
        observer, and the rod figures of :func:`rod_figures`.
    """
    obs = model.observer
    RGB_0 = np.asarray(RGB_0, dtype=float)
    LMS_0 = model.RGB_linear_to_LMS(RGB_0)
    LMS = np.asarray(LMS, dtype=float)
    RGB = model.LMS_to_RGB_linear(LMS)
    inside = bool(is_within_gamut(RGB))
    delta = RGB - RGB_0
    # A round trip through cone space leaves ~1e-16 of noise on the background itself: far below one device level
    # (1/65535 at 16 bits), it is no direction, and scaling it would report a meaningless ×1e15.
    delta[np.abs(delta) < SAME_AS_BACKGROUND] = 0.0
    scale, channel = scale_limit(RGB_0, delta)
    XYZ = model.RGB_linear_to_XYZ(RGB)
    white = model.RGB_linear_to_XYZ(np.ones(3))
    DKL = LMS_to_DKL(LMS, LMS_0, obs.w_L, obs.w_M)
    result = {
        "rgb_linear": RGB.tolist(),
        "in_gamut": inside,
        "rgb_device": None,
        "out_of_gamut": None,
        "lms": LMS.tolist(),
        "cone_contrast": LMS_to_cone_contrast(LMS, LMS_0).tolist(),
        "dkl": DKL.tolist(),
        "dkl_display_maximum": [None if np.isnan(v) else float(v) for v in display_maximum.from_DKL(DKL)],
        "dkl_display_maximum_note": display_maximum.note(),
        "macleod_boynton": LMS_to_MacLeod_Boynton(LMS, obs.w_L, obs.w_M, obs.k_S)[:2].tolist(),
        "luminance_cd_m2": float(obs.w_L * LMS[0] + obs.w_M * LMS[1]),
        "xyY": colour.XYZ_to_xyY(XYZ).tolist(),
        "lab": colour.XYZ_to_Lab(XYZ / white[1], colour.XYZ_to_xy(white)).tolist(),
        "quantisation_cone_contrast": None,
        "max_scale_in_gamut": float(scale) if np.isfinite(scale) else None,
        "limiting_channel": CHANNELS[int(channel)] if channel >= 0 else None,
        "background_rgb_linear": RGB_0.tolist(),
        "observer": obs.key,
        "display_name": model.profile["name"],
        "display_hash": model.sha256,
        "approximate_primaries": model.is_approximate,
        **rod_figures(model, RGB, RGB_0),
    }
    if inside:
        device = RGB_linear_to_device(np.clip(RGB, 0.0, 1.0), model.level_outputs)
        result["rgb_device"] = device.tolist()
        result["quantisation_cone_contrast"] = quantisation_cone_contrast(
            device, model.level_outputs, model.M_LMS, LMS_0).tolist()
    else:
        result["out_of_gamut"] = {
            CHANNELS[c]: float(RGB[c] - 1.0 if RGB[c] > 1 else RGB[c])
            for c in range(3) if not 0.0 <= RGB[c] <= 1.0
        }
    return result
