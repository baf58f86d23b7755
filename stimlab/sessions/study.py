"""A study: every session of one protocol, summarised as participants × conditions and pooled.

Per participant and condition, the measure is the participant's mean over trials (all of that participant's
sessions of the protocol together); pooled, each participant counts once: the mean over participants with the
Student-t 95 % interval over participants (:func:`stimlab.sessions.summary.mean_ci`). Thresholds are fitted per
participant from all of that participant's staircase trials, and pooled the same way. An adjustment's mean setting
is pooled per direction (``setting_1``, ``setting_2`` for a plane), labelled with the direction; for flicker
photometry each participant's L/M weighting ratio and weights come from the mean of all their settings
(:func:`stimlab.sessions.summary.photometry_summary`), and are pooled over participants.
"""

from __future__ import annotations

from .summary import by_condition, mean_ci, photometry_summary
from .trials import trial_rows

__all__ = ["study_summary", "adjustment_directions", "MEASURES", "PHOTOMETRY", "UNSIGNED"]

MEASURES = {
    "along": "signed component along the adapting/inducing direction (DKL)",
    "along_relative": "signed component along the adapting/inducing direction, as a fraction of it",
    "orthogonal": "component orthogonal to the adapting/inducing direction (DKL)",
    "threshold": "fitted threshold (axis units)",
    "proportion_correct": "proportion correct",
    "response_time_s": "mean response time (s)",
}
PHOTOMETRY = {"ratio": "L/M weighting ratio relative to the standard observer (flicker photometry)",
              "w_L": "L-cone weight w_L of the luminance (flicker photometry)",
              "w_M": "M-cone weight w_M of the luminance (flicker photometry)"}
UNSIGNED = ("response_time_s", "proportion_correct", "threshold", "ratio", "w_L", "w_M")
"""Measures that are never negative: shown without a sign."""


def _value(entry: dict, measure: str):
    if measure.startswith("setting_"):
        settings = entry.get("setting") or []
        index = int(measure.rsplit("_", 1)[1]) - 1
        return settings[index]["mean"] if index < len(settings) else None
    value = entry.get(measure)
    if isinstance(value, dict) and "error" in value:  # a fit the data could not constrain is no measure
        return None
    if isinstance(value, dict):
        return value.get("mean", value.get("threshold"))
    return value


def study_summary(db, protocol_file: str, sessions: list[dict]) -> dict:
    """Participants × conditions and the pooled measures of the study's sessions (see the module docstring)."""
    by_participant: dict[str, dict] = {}
    for session in sessions:
        entry = by_participant.setdefault(session["participant"], {"sessions": [], "rows": [], "session": session})
        entry["sessions"].append(session["id"])
        entry["rows"] += trial_rows(db, session)
    conditions = [c["label"] for c in sessions[0]["compiled"]["conditions"]] if sessions else []
    measures: dict[str, str] = {}  # the settings first: an adjustment's own measure
    directions: dict[int, set] = {}  # the adjustment's directions, as the conditions of this protocol name them
    for condition in sessions[0]["compiled"]["conditions"] if sessions else []:
        for i, label in enumerate(adjustment_directions(condition)):
            directions.setdefault(i, set()).add(label)
    for i, labels in directions.items():
        along = next(iter(labels)) if len(labels) == 1 else f"each condition's adjustment direction {i + 1}"
        measures[f"setting_{i + 1}"] = f"mean setting along {along} (axis units)"
    measures |= MEASURES
    table, photometry = [], []
    for participant, entry in sorted(by_participant.items()):
        summary = {s["label"]: s for s in by_condition(entry["session"], entry["rows"])}
        cells = {label: {m: _value(summary.get(label, {}), m) for m in measures}
                 | {"n": summary.get(label, {}).get("n", 0)} for label in conditions}
        table.append({"participant": participant, "sessions": entry["sessions"], "conditions": cells})
        weights = photometry_summary(entry["session"], entry["rows"])
        if weights is not None:
            photometry.append({"participant": participant, "n": len(weights.get("settings", []))}
                              | {k: weights.get(k) for k in ("mean_setting", *PHOTOMETRY, "error")})
    shown = [m for m in measures if any(row["conditions"][c][m] is not None for row in table for c in conditions)]
    pooled = {label: {m: mean_ci([row["conditions"][label][m] for row in table]) for m in shown}
              for label in conditions}
    title = sessions[0]["compiled"]["protocol"]["title"] if sessions else protocol_file
    out = {"protocol_file": protocol_file, "title": title, "participants": len(table),
           "sessions": sum(len(r["sessions"]) for r in table), "conditions": conditions,
           "measures": {m: measures[m] for m in shown}, "table": table, "pooled": pooled}
    if photometry:
        out["photometry"] = {"table": photometry, "measures": PHOTOMETRY,
                             "pooled": {m: mean_ci([row[m] for row in photometry]) for m in PHOTOMETRY}}
    return out


def adjustment_directions(condition: dict) -> list[str]:
    """The labels of a condition's adjustment directions (none for other responses)."""
    from .summary import axis_label

    response = condition.get("response") or {}
    if response.get("kind") != "adjustment":
        return []
    return [axis_label(a, response["space"]) for a in response["axes"]]
