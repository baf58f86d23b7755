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
from numpy.typing import ArrayLike, NDArray

from .observers import Observer
from .spaces import matrix_DKL_directions

__all__ = ["hfp_delta_LMS", "null_setting", "ratio_from_setting", "adjusted_weights", "summarise_settings",
           "DEFAULT_CRITERION", "reliability_criterion", "assess_reliability"]

DEFAULT_CRITERION = {"min_settings": 4, "max_ratio_sd": 0.40}
"""stimlab's default reliability criterion for saving a flicker-photometry result: at least 4 settings whose implied
L/M ratios have a standard deviation of at most 0.40. A default chosen for this software, not a published standard
(on the demo task, settings within ±2.5 fine steps of each other give an SD near 0.34): several settings from random
starts are common practice, and a lab should set its own limits."""


def _directions(LMS_0: ArrayLike, obs: Observer) -> NDArray[np.float64]:
    return matrix_DKL_directions(LMS_0, obs.w_L, obs.w_M)


def hfp_delta_LMS(amplitude: float, setting: ArrayLike, LMS_0: ArrayLike, obs: Observer) -> NDArray[np.float64]:
    """ΔLMS of the flickering patch: ``amplitude`` along L−M plus ``setting`` along luminance.

    Parameters
    ----------
    amplitude
        Contrast along the standard observer's DKL L−M direction, pooled cone contrast (Brainard 1996), any
        finite value (a few hundredths in practice).
    setting
        The observer's setting along the DKL luminance direction, pooled cone contrast, any shape.
    LMS_0
        Background cone excitations, shape (3,), > 0, scaled so that ``w_L·L + w_M·M`` is cd/m².
    obs
        The standard observer whose DKL directions write the stimulus.

    Returns
    -------
    ndarray of float64, shape ``setting.shape + (3,)``
        ΔL, ΔM, ΔS of the ``+Δ`` state from the background, in cone-excitation units.

    References
    ----------
    Brainard, D. H. (1996). Cone contrast and opponent modulation color spaces. In Kaiser & Boynton, Human Color
    Vision, 2nd ed. (the DKL directions).
    """
    D = _directions(LMS_0, obs)
    setting = np.asarray(setting, dtype=float)
    return amplitude * D[:, 1] + setting[..., None] * D[:, 0]


def null_setting(amplitude: float, ratio: float, LMS_0: ArrayLike, obs: Observer) -> float:
    """Where an observer with L/M gain ratio ``ratio`` sees least flicker (the forward model, for simulation).

    Parameters
    ----------
    amplitude
        Contrast along the DKL L−M direction, pooled cone contrast, non-zero.
    ratio
        The observer's L/M gain ratio ρ = g_L/g_M, > 0 (1 for the standard observer).
    LMS_0
        Background cone excitations, shape (3,), > 0.
    obs
        The standard observer.

    Returns
    -------
    float
        The setting along the DKL luminance direction, pooled cone contrast, where ``w_L'·ΔL + w_M'·ΔM = 0``
        (0 for ρ = 1; the sign opposes ``amplitude`` for ρ > 1).

    Examples
    --------
    >>> from stimlab.colorimetry.observers import observer
    >>> abs(null_setting(0.06, 1.0, [60.0, 55.0, 50.0], observer("ss2"))) < 1e-12  # standard: on the axis
    True
    """
    D = _directions(LMS_0, obs)
    weights = np.array([ratio * obs.w_L, obs.w_M, 0.0])
    return float(-amplitude * (weights @ D[:, 1]) / (weights @ D[:, 0]))


def ratio_from_setting(amplitude: float, setting: ArrayLike, LMS_0: ArrayLike, obs: Observer) -> NDArray[np.float64]:
    """L/M gain ratio ρ from flicker-null settings (the inverse of :func:`null_setting`).

    Parameters
    ----------
    amplitude
        Contrast along the DKL L−M direction, pooled cone contrast, non-zero.
    setting
        Settings along the DKL luminance direction, pooled cone contrast, any shape.
    LMS_0
        Background cone excitations, shape (3,), > 0.
    obs
        The standard observer.

    Returns
    -------
    ndarray of float64, shape of ``setting``
        ρ = g_L/g_M = −w_M·ΔM / (w_L·ΔL), dimensionless, > 0.

    Raises
    ------
    ValueError
        If a setting implies no positive, finite ratio (beyond any observer's flicker null).
    """
    delta = hfp_delta_LMS(amplitude, setting, LMS_0, obs)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = -obs.w_M * delta[..., 1] / (obs.w_L * delta[..., 0])
    if np.any(~np.isfinite(ratio)) or np.any(ratio <= 0):
        raise ValueError("these settings imply no positive L/M ratio; check the amplitude and the settings")
    return ratio


def adjusted_weights(ratio: float, LMS_0: ArrayLike, obs: Observer) -> tuple[float, float]:
    """Weights ``(w_L', w_M')`` with L/M gain ratio ``ratio`` that leave the background's luminance unchanged.

    Parameters
    ----------
    ratio
        L/M gain ratio ρ = g_L/g_M, > 0.
    LMS_0
        Background cone excitations, shape (3,), > 0.
    obs
        The standard observer whose weights ``w_L, w_M`` are scaled.

    Returns
    -------
    w_L, w_M : float
        Individual luminance weights, > 0, with ``w_L'/w_M' = ρ·w_L/w_M`` and
        ``w_L'·L_0 + w_M'·M_0 = w_L·L_0 + w_M·M_0`` (the background's luminance in cd/m²).
    """
    L_0, M_0 = float(LMS_0[0]), float(LMS_0[1])
    standard = obs.w_L * L_0 + obs.w_M * M_0
    g_M = standard / (ratio * obs.w_L * L_0 + obs.w_M * M_0)
    return ratio * g_M * obs.w_L, g_M * obs.w_M


def summarise_settings(amplitude: float, settings: ArrayLike, LMS_0: ArrayLike, obs: Observer) -> dict:
    """Mean setting, its spread, and the L/M ratio and weights it implies.

    Parameters
    ----------
    amplitude
        Contrast along the DKL L−M direction, pooled cone contrast, non-zero.
    settings
        One observer's settings along the DKL luminance direction, pooled cone contrast, at least two.
    LMS_0
        Background cone excitations, shape (3,), > 0.
    obs
        The standard observer.

    Returns
    -------
    dict
        ``settings``, ``mean_setting``, ``sd_setting`` and ``sem_setting`` (pooled cone contrast; sample SD),
        ``ratio`` (ρ of the mean setting, > 0), ``ratio_sd`` (SD of the settings' ratios, ``None`` when a setting
        implies no positive ratio), ``invalid_settings`` (how many), ``w_L``, ``w_M`` (:func:`adjusted_weights`),
        ``amplitude`` and ``n``.

    Raises
    ------
    ValueError
        With fewer than two settings, or a mean setting that implies no positive ratio.
    """
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


def reliability_criterion(min_settings: int | None = None, max_ratio_sd: float | None = None) -> dict:
    """A lab's reliability criterion for flicker-photometry settings, checked.

    Parameters
    ----------
    min_settings
        Fewest settings, a whole number ≥ 2; ``None`` for the default (4, :data:`DEFAULT_CRITERION`).
    max_ratio_sd
        Largest standard deviation of the settings' L/M ratios, dimensionless, > 0; ``None`` for the default
        (0.40). Both defaults are this software's choice, not a published standard.

    Returns
    -------
    dict
        ``min_settings`` (int), ``max_ratio_sd`` (float) and ``is_default`` (bool: both equal the defaults).

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
