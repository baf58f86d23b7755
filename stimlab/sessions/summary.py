"""The session summary that the web page, the CLI and the study pages render: responses per condition, the signed
after-image or induction measure with its confidence interval, fitted thresholds, flicker photometry.

**Signed strength.** For a nulling (after-image) or matching (induction) design, each trial's null or match ``r``
and the adapting or inducing colour ``a`` are taken in the DKL isoluminant plane (L−M, S). The measure is the
component of ``r`` along ``a``, ``r · â``, signed, and the component orthogonal to it, ``r · â⊥`` with ``â⊥``
``â`` turned 90° counter-clockwise (towards +S from +L−M); both in DKL units and as a fraction of ``|a|``. For a
match, a negative component is *contrast* (the centre looks shifted away from the surround) and a positive one
*assimilation*; for an after-image null, a positive component cancels an after-image opposed to the adapter (the
von Kries prediction, :func:`stimlab.colorimetry.adaptation.null_cone_contrast`).

**Interval.** Per condition, the 95 % confidence interval of the mean over trials is Student's t: mean ±
t(0.975, n − 1) · SD / √n (SD with n − 1). Across participants the same interval is taken over participants'
means, each participant counting once.

**Settings.** For an adjustment, each condition's mean setting is the mean of the trials' final positions along
each adjustment direction, in that direction's own units (position 1 is the protocol's axis vector: for the axis
``[1, 0, 0]`` in DKL, one DKL unit of luminance), with the same Student-t interval. This is the measure of a task
whose response moves off the DKL isoluminant plane (flicker photometry sets DKL luminance; its disc's L−M amplitude
is fixed and says nothing about the participant).

Practice trials are left out of every measure; a dry-run session is summarised but flagged.
"""

from __future__ import annotations

import numpy as np
from scipy.special import stdtrit

from ..colorimetry.spaces import LMS_to_DKL
from ..experiment.labels import axis_name
from .psychometric import fit_threshold

__all__ = ["signed_components", "mean_ci", "by_condition", "session_summary", "photometry_summary",
           "measured_rows", "axis_label", "adjustment_settings"]

SPACE_NAMES = {"dkl": "DKL", "cone_contrast": "cone contrast", "macleod_boynton": "MacLeod–Boynton",
               "rgb_linear": "linear RGB"}


def mean_ci(values) -> dict | None:
    """Mean, SD, n and the Student-t 95 % interval of the mean (None for no values; no interval for one).

    Examples
    --------
    >>> mean_ci([1.0, 2.0, 3.0])["ci95"]  # t(0.975, 2) = 4.3027 (Student's t table); SD/√3 = 0.57735
    [-0.484138, 4.484138]
    """
    values = np.asarray([v for v in values if v is not None], dtype=float)
    if values.size == 0:
        return None
    mean = float(values.mean())
    if values.size < 2:
        return {"mean": mean, "sd": None, "n": 1, "ci95": None}
    sd = float(values.std(ddof=1))
    half = float(stdtrit(values.size - 1, 0.975) * sd / np.sqrt(values.size))  # Student t quantile
    return {"mean": mean, "sd": sd, "n": int(values.size), "ci95": [round(mean - half, 6), round(mean + half, 6)]}


def signed_components(responses, direction) -> tuple[np.ndarray, np.ndarray]:
    """Components of (n, 2) DKL-plane ``responses`` along ``direction`` (signed) and orthogonal to it.

    Examples
    --------
    >>> along, across = signed_components([[-0.02, 0.03]], [0.08, 0.0])
    >>> float(along[0]), float(across[0])  # a mostly +S match on a +L−M surround: small contrast, large S
    (-0.02, 0.03)
    """
    responses = np.atleast_2d(np.asarray(responses, dtype=float))
    direction = np.asarray(direction, dtype=float)
    unit = direction / np.linalg.norm(direction)
    normal = np.array([-unit[1], unit[0]])
    return responses @ unit, responses @ normal


def measured_rows(rows: list[dict], label: str) -> list[dict]:
    """Completed, non-practice trials of one condition."""
    return [r for r in rows if r["condition"] == label and r["completed"] and not r.get("practice")]


def _source_dkl(data: dict, condition: dict) -> list[float] | None:
    model = data.get("adaptation_model") or {}
    if model.get("kind") == "after_image":
        source = condition["stimuli"][model["adapter"]]["colour"]
    elif model.get("kind") == "induction":
        inducer = condition["stimuli"][model["inducer"]]
        source = inducer.get("second_colour", inducer["colour"])
    else:
        return None
    LMS_0 = np.array(data["background"]["lms"])
    obs = data["observer"]
    return LMS_to_DKL(np.array(source["lms"]), LMS_0, obs["w_L"], obs["w_M"])[1:].tolist()


def _signed(data: dict, condition: dict, done: list[dict]) -> dict:
    source = _source_dkl(data, condition)
    plane = [[r["response_dkl_lm"], r["response_dkl_s"]] for r in done if r.get("response_dkl_lm") is not None]
    if not plane:
        return {}
    entry = {"response_dkl_mean": np.mean(plane, axis=0).tolist(),
             "response_dkl_sd": np.std(plane, axis=0, ddof=1).tolist() if len(plane) > 1 else [0.0, 0.0]}
    if source is None or not np.linalg.norm(source):
        return entry
    along, across = signed_components(plane, source)
    size = float(np.linalg.norm(source))
    entry |= {"adapt_dkl": source, "along": mean_ci(along), "orthogonal": mean_ci(across),
              "along_relative": mean_ci(along / size), "orthogonal_relative": mean_ci(across / size)}
    return entry


def axis_label(axis, space: str) -> str:
    """An adjustment direction and its unit as a researcher reads them.

    Examples
    --------
    >>> axis_label([1.0, 0.0, 0.0], "dkl"), axis_label([0.0, 0.06, 0.0], "dkl")
    ('DKL luminance', 'DKL L−M (1 = 0.06)')
    """
    axis = [float(v) for v in axis]
    text = f"{SPACE_NAMES.get(space, space)} {axis_name(axis, space)}"
    nonzero = [v for v in axis if v != 0]
    if len(nonzero) == 1 and abs(nonzero[0]) != 1:  # position 1 is the axis vector, not one unit of the space
        text += f" (1 = {abs(nonzero[0]):g})"
    return text


def adjustment_settings(condition: dict, done: list[dict]) -> dict:
    """The mean setting along each adjustment direction (axis units) with its interval, and the directions'
    labels; empty for other responses or no settings."""
    response = condition.get("response") or {}
    if response.get("kind") != "adjustment":
        return {}
    dimensions = response["positions"]["dimensions"]
    names = ["response_position"] if dimensions == 1 else [f"response_position_{i + 1}" for i in range(dimensions)]
    settings = [mean_ci([r.get(n) for r in done]) for n in names]
    if any(s is None for s in settings):
        return {}
    return {"setting": settings, "setting_axes": [axis_label(a, response["space"]) for a in response["axes"]]}


def _threshold(condition: dict, done: list[dict]) -> dict | None:
    response = condition.get("response") or {}
    if response.get("kind") != "staircase":
        return None
    pairs = [(r["stimulus_position"], bool(r["response_correct"])) for r in done
             if r.get("stimulus_position") is not None and r.get("response_correct") is not None]
    if not pairs:
        return None
    x, correct = zip(*pairs)
    return fit_threshold(x, correct, response.get("task", "2afc"))


def by_condition(session: dict, rows: list[dict]) -> list[dict]:
    """Per condition: trial count, mean response time, proportion correct, the mean response in the DKL plane,
    the signed along/orthogonal measure with 95 % intervals, and a fitted threshold for staircases."""
    data = session["compiled"]
    summary = []
    for condition in data["conditions"]:
        done = measured_rows(rows, condition["label"])
        times = [r["response_time_s"] for r in done if r.get("response_time_s") is not None]
        entry = {"label": condition["label"], "n": len(done), "response_time_s": mean_ci(times)}
        correct = [r["response_correct"] for r in done if r.get("response_correct") is not None]
        if correct:
            entry["proportion_correct"] = float(np.mean(correct))
        entry |= _signed(data, condition, done)
        entry |= adjustment_settings(condition, done)
        threshold = _threshold(condition, done)
        if threshold:
            entry["threshold"] = threshold
        summary.append(entry)
    return summary


def photometry_summary(session: dict, rows: list[dict]) -> dict | None:
    """For a flicker-photometry session: the settings and the L/M weighting they imply (None for other tasks)."""
    from ..colorimetry.observers import observer
    from ..colorimetry.photometry import summarise_settings

    data = session["compiled"]
    task = data.get("photometry")
    if not task:
        return None
    LMS_0 = np.array(data["background"]["lms"])
    obs = observer(data["observer"]["key"])
    stimulus = data["conditions"][0]["stimuli"][task["stimulus"]]
    amplitude = float(LMS_to_DKL(np.array(stimulus["colour"]["lms"]), LMS_0, obs.w_L, obs.w_M)[1])
    settings = [float(r["response_position"]) for r in rows
                if r.get("response_position") is not None and not r.get("practice")]
    if len(settings) < 2:
        return {"settings": settings, "error": "at least two settings are needed"}
    try:
        return summarise_settings(amplitude, settings, LMS_0, obs) | {"standard_observer": obs.key}
    except ValueError as error:  # the mean setting implies no positive L/M ratio
        return {"settings": settings, "error": str(error)}


def session_summary(db, session: dict) -> dict:
    """Everything the session page and ``stimlab export --format summary`` show: trials, timing, per-condition
    measures, flicker photometry."""
    from .timing import timing
    from .trials import trial_rows

    rows = trial_rows(db, session)
    return {"session": session["id"], "participant": session["participant"], "status": session.get("status"),
            "end_reason": session.get("end_reason"),
            "dry_run": bool(rows[0]["dry_run"]) if rows else False, "rows": rows,
            "timing": timing(db, session), "conditions": by_condition(session, rows),
            "photometry": photometry_summary(session, rows),
            "adaptation_model": (session["compiled"].get("adaptation_model") or {}).get("kind")}
