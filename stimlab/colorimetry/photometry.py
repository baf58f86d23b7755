"""Individual isoluminance by heterochromatic flicker photometry (HFP).

A patch alternates, in square-wave counterphase around the background, between ``+Δ`` and ``−Δ`` with
``Δ = a·u_LM + x·u_lum`` (standard-observer DKL unit directions). The observer moves ``x`` until the flicker is
least visible, which is where the two states have equal luminance *for this observer*:
``w_L'·ΔL + w_M'·ΔM = 0``. Writing the observer's weights as the standard ones times gains, ``w_L' = g_L·w_L`` and
``w_M' = g_M·w_M``, one setting gives the ratio ``ρ = g_L/g_M = −w_M·ΔM / (w_L·ΔL)``; the gains are then scaled so
that the background keeps its luminance. ρ = 1 is the standard observer; ρ > 1 means L cones weigh more.

Flicker rates of 15–20 Hz and several settings from random starting points are common practice.

References
----------
- Ives, H. E. (1912). Studies in the photometry of lights of different colours. Philosophical Magazine, 24.
- Brainard (1996), for the DKL directions used to write the stimulus.
"""

from __future__ import annotations

import numpy as np

from .observers import Observer
from .spaces import matrix_DKL_directions

__all__ = ["hfp_delta_LMS", "null_setting", "ratio_from_setting", "adjusted_weights", "summarise_settings",
           "DEFAULT_CRITERION", "reliability_criterion", "assess_reliability"]

DEFAULT_CRITERION = {"min_settings": 4, "max_ratio_sd": 0.40}
"""stimlab's default reliability criterion for saving a flicker-photometry result: at least 4 settings whose implied
L/M ratios have a standard deviation of at most 0.40. A default chosen for this software, not a published standard
(on the demo task, settings within ±2.5 fine steps of each other give an SD near 0.34): several settings from random
starts are common practice, and a lab should set its own limits."""


def _directions(LMS_0, obs: Observer) -> np.ndarray:
    return matrix_DKL_directions(LMS_0, obs.w_L, obs.w_M)


def hfp_delta_LMS(amplitude: float, setting, LMS_0, obs: Observer) -> np.ndarray:
    """ΔLMS of the flickering patch: ``amplitude`` along L−M plus ``setting`` along luminance (DKL units)."""
    D = _directions(LMS_0, obs)
    setting = np.asarray(setting, dtype=float)
    return amplitude * D[:, 1] + setting[..., None] * D[:, 0]


def null_setting(amplitude: float, ratio: float, LMS_0, obs: Observer) -> float:
    """Where an observer with L/M gain ratio ``ratio`` sees least flicker (the forward model, for simulation).

    Examples
    --------
    >>> from stimlab.colorimetry.observers import observer
    >>> abs(null_setting(0.06, 1.0, [60.0, 55.0, 50.0], observer("ss2"))) < 1e-12  # standard: on the axis
    True
    """
    D = _directions(LMS_0, obs)
    weights = np.array([ratio * obs.w_L, obs.w_M, 0.0])
    return float(-amplitude * (weights @ D[:, 1]) / (weights @ D[:, 0]))


def ratio_from_setting(amplitude: float, setting, LMS_0, obs: Observer) -> np.ndarray:
    """L/M gain ratio ρ from flicker-null settings (the inverse of :func:`null_setting`)."""
    delta = hfp_delta_LMS(amplitude, setting, LMS_0, obs)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = -obs.w_M * delta[..., 1] / (obs.w_L * delta[..., 0])
    if np.any(~np.isfinite(ratio)) or np.any(ratio <= 0):
        raise ValueError("these settings imply no positive L/M ratio; check the amplitude and the settings")
    return ratio


def adjusted_weights(ratio: float, LMS_0, obs: Observer) -> tuple[float, float]:
    """Weights ``(w_L', w_M')`` with L/M gain ratio ``ratio`` that leave the background's luminance unchanged."""
    L_0, M_0 = float(LMS_0[0]), float(LMS_0[1])
    standard = obs.w_L * L_0 + obs.w_M * M_0
    g_M = standard / (ratio * obs.w_L * L_0 + obs.w_M * M_0)
    return ratio * g_M * obs.w_L, g_M * obs.w_M


def summarise_settings(amplitude: float, settings, LMS_0, obs: Observer) -> dict:
    """Mean setting, its spread, and the L/M ratio and weights it implies."""
    settings = np.asarray(settings, dtype=float)
    if settings.size < 2:
        raise ValueError("flicker photometry needs at least two settings to say how consistent they are")
    mean = float(settings.mean())
    ratio = float(ratio_from_setting(amplitude, mean, LMS_0, obs))
    # A setting beyond where any observer could null the flicker implies no positive ratio: the spread of the
    # ratios is then undefined (None), which no reliability criterion accepts.
    delta = hfp_delta_LMS(amplitude, settings, LMS_0, obs)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratios = -obs.w_M * delta[..., 1] / (obs.w_L * delta[..., 0])
    valid = np.isfinite(ratios) & (ratios > 0)
    w_L, w_M = adjusted_weights(ratio, LMS_0, obs)
    return {"settings": settings.tolist(), "mean_setting": mean, "sd_setting": float(settings.std(ddof=1)),
            "sem_setting": float(settings.std(ddof=1) / np.sqrt(settings.size)), "ratio": ratio,
            "ratio_sd": float(np.std(ratios, ddof=1)) if valid.all() else None,
            "invalid_settings": int((~valid).sum()), "w_L": w_L, "w_M": w_M, "amplitude": amplitude,
            "n": int(settings.size)}


def reliability_criterion(min_settings=None, max_ratio_sd=None) -> dict:
    """A lab's criterion (either value may be None for the default), checked; ``is_default`` says which it is.

    Raises
    ------
    ValueError
        For fewer than 2 settings or a non-positive standard deviation.
    """
    criterion = dict(DEFAULT_CRITERION)
    if min_settings is not None:
        if int(min_settings) != min_settings or min_settings < 2:
            raise ValueError("the minimum number of settings must be a whole number of at least 2")
        criterion["min_settings"] = int(min_settings)
    if max_ratio_sd is not None:
        if not np.isfinite(max_ratio_sd) or max_ratio_sd <= 0:
            raise ValueError("the largest standard deviation of the L/M ratio must be a positive number")
        criterion["max_ratio_sd"] = float(max_ratio_sd)
    return criterion | {"is_default": criterion == DEFAULT_CRITERION}


def assess_reliability(summary: dict, criterion: dict | None = None) -> dict:
    """Whether a result of :func:`summarise_settings` is consistent enough to become an observer adjustment.

    Parameters
    ----------
    summary
        From :func:`summarise_settings` (``n``, ``ratio_sd``, ``sd_setting``, ``ratio``).
    criterion
        From :func:`reliability_criterion`; the default when None.

    Returns
    -------
    dict
        ``reliable`` (bool), ``problems`` (sentences, empty when reliable), ``criterion``, and the spread shown:
        ``n``, ``ratio_sd``, ``sd_setting``, ``ratio_cv`` (SD of the ratio over the ratio).
    """
    criterion = criterion or reliability_criterion()
    problems = []
    if summary["n"] < criterion["min_settings"]:
        problems.append(f"only {summary['n']} settings; the criterion asks for at least {criterion['min_settings']}")
    if summary.get("invalid_settings"):
        problems.append(f"{summary['invalid_settings']} setting(s) imply no positive L/M ratio (beyond any "
                        "observer's flicker null)")
    elif not summary["ratio_sd"] <= criterion["max_ratio_sd"]:
        problems.append(f"the settings imply L/M ratios with an SD of {summary['ratio_sd']:.3f}, above the "
                        f"criterion's {criterion['max_ratio_sd']:.3f}: the observer's settings disagree")
    return {"reliable": not problems, "problems": problems, "criterion": criterion, "n": summary["n"],
            "ratio_sd": summary["ratio_sd"], "sd_setting": summary["sd_setting"],
            "ratio_cv": summary["ratio_sd"] / summary["ratio"] if summary["ratio_sd"] is not None else None}
