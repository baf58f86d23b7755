"""A study: every session of one protocol, summarised as participants × conditions and pooled.

Per participant and condition, the measure is the participant's mean over trials (all of that participant's
sessions of the protocol together); pooled, each participant counts once: the mean over participants with the
Student-t 95 % interval over participants (:func:`stimlab.sessions.summary.mean_ci`). Thresholds are fitted per
participant from all of that participant's staircase trials, and pooled the same way.
"""

from __future__ import annotations

from .summary import by_condition, mean_ci
from .trials import trial_rows

__all__ = ["study_summary", "MEASURES"]

MEASURES = {
    "along": "signed component along the adapting/inducing direction (DKL)",
    "along_relative": "signed component along the adapting/inducing direction, as a fraction of it",
    "orthogonal": "component orthogonal to the adapting/inducing direction (DKL)",
    "threshold": "fitted threshold (axis units)",
    "proportion_correct": "proportion correct",
    "response_time_s": "mean response time (s)",
}


def _value(entry: dict, measure: str):
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
    table = []
    for participant, entry in sorted(by_participant.items()):
        summary = {s["label"]: s for s in by_condition(entry["session"], entry["rows"])}
        cells = {label: {m: _value(summary.get(label, {}), m) for m in MEASURES} | {"n": summary.get(label, {}).get("n", 0)}
                 for label in conditions}
        table.append({"participant": participant, "sessions": entry["sessions"], "conditions": cells})
    shown = [m for m in MEASURES if any(row["conditions"][c][m] is not None for row in table for c in conditions)]
    pooled = {label: {m: mean_ci([row["conditions"][label][m] for row in table]) for m in shown}
              for label in conditions}
    title = sessions[0]["compiled"]["protocol"]["title"] if sessions else protocol_file
    return {"protocol_file": protocol_file, "title": title, "participants": len(table),
            "sessions": sum(len(r["sessions"]) for r in table), "conditions": conditions,
            "measures": {m: MEASURES[m] for m in shown}, "table": table, "pooled": pooled}
