"""Observer adjustments from flicker photometry: the lab's reliability criterion (a stored setting, stimlab's
default until the lab sets its own) and each participant's history of adjustments (the latest is the one used)."""

from __future__ import annotations

import json

from flask import Blueprint, g, redirect, request, url_for

from ..colorimetry.photometry import DEFAULT_CRITERION, assess_reliability, reliability_criterion
from . import current_store
from .errors import WebError

blueprint = Blueprint("adjustments", __name__)

CRITERION = "photometry_criterion"


def lab_criterion() -> dict:
    """The lab's criterion, or stimlab's default (``is_default`` True) when none was set."""
    stored = current_store().setting(g.db, CRITERION) or {}
    return reliability_criterion(stored.get("min_settings"), stored.get("max_ratio_sd"))


# What a lab may set (a choice of this program, not a published limit): at least 2 settings, since a spread needs
# two, and at most 100, more than any session asks of an observer; an SD of the L/M ratio above 0 and at most 2, since
# an SD of 2 already lets settings disagree across most of the range of ratios observers have (from memory: about
# 0.5 to 10), so a larger one would pass every result.
CRITERION_RANGES = {"min_settings": (2, 100), "max_ratio_sd": (0.001, 2.0)}
CRITERION_WORDS = {"min_settings": ("the minimum number of settings", "a whole number", int),
                   "max_ratio_sd": ("the largest SD of the L/M ratio", "a number", float)}


def _criterion_from(values, required: bool = False) -> dict:
    """The criterion in ``values`` (a form or a JSON body), each field checked against :data:`CRITERION_RANGES`.

    From the form an empty field means stimlab's default for it; through the API (``required``) both fields must
    be given, so a PUT never silently resets a value the lab set.
    """
    parsed = {}
    for key, (words, kind_words, kind) in CRITERION_WORDS.items():
        low, high = CRITERION_RANGES[key]
        span = f"from {low:g} to {high:g}"
        value = values.get(key)
        text = str(value if value is not None else "").strip()
        if not text:
            if required:
                raise WebError(f"{key} is missing: give {words}, {kind_words} {span}", field=key)
            continue
        try:
            number = kind(text) if not isinstance(value, bool) else None
        except ValueError:
            number = None
        if number is None or not low <= number <= high:
            raise WebError(f"{key} must be {kind_words} {span} ({words}), not {text[:40]}", field=key)
        parsed[key] = number
    try:
        return reliability_criterion(parsed.get("min_settings"), parsed.get("max_ratio_sd"))
    except ValueError as error:
        raise WebError(str(error), field="max_ratio_sd" if "deviation" in str(error) else "min_settings") from None


def check_before_saving(summary: dict, override_reason: str | None) -> dict:
    """The summary with its reliability (and the override reason); refuses an unreliable result without a reason."""
    check = assess_reliability(summary, lab_criterion())
    summary = summary | {"reliability": check}
    if not check["reliable"]:
        reason = (override_reason or "").strip()
        if not reason:
            raise WebError("not saved: this result does not meet the reliability criterion ("
                           + "; ".join(check["problems"]) + "). Run the task again, or give the reason for saving it "
                           "anyway", field="override_reason")
        summary["override_reason"] = reason
    return summary


def photometry_context(session: dict, photometry: dict | None) -> dict:
    """What the session page's photometry section shows: reliability, the criterion, the participant's history."""
    if not photometry:
        return {}
    rows = g.db.execute("SELECT id, session_id, ratio, summary, created_at FROM observer_adjustments "
                        "WHERE participant = ? ORDER BY id DESC", (session["participant"],)).fetchall()
    history = []
    for index, row in enumerate(rows):
        stored = json.loads(row["summary"])
        history.append({"id": row["id"], "session_id": row["session_id"], "ratio": row["ratio"],
                        "ratio_sd": stored.get("ratio_sd"), "n": stored.get("n"), "created_at": row["created_at"],
                        "override_reason": stored.get("override_reason"), "in_use": index == 0})
    check = assess_reliability(photometry, lab_criterion()) if "error" not in photometry else None
    return {"photometry_check": check, "photometry_criterion": lab_criterion(), "adjustment_history": history,
            "default_criterion": DEFAULT_CRITERION}


@blueprint.post("/observer-adjustments/criterion")
def set_criterion():
    if request.form.get("reset"):
        current_store().set_setting(g.db, CRITERION, {})
    else:
        criterion = _criterion_from(request.form)
        current_store().set_setting(g.db, CRITERION, {k: criterion[k] for k in DEFAULT_CRITERION})
    back = request.form.get("next") or ""
    return redirect(back if back.startswith("/sessions/") else url_for("sessions.index"), 303)


@blueprint.get("/api/settings/photometry-criterion")
def api_criterion():
    return lab_criterion()


@blueprint.put("/api/settings/photometry-criterion")
def api_set_criterion():
    """Both fields are required (ranges in :data:`CRITERION_RANGES`); the form's reset button restores the default."""
    body = request.get_json(silent=True)
    if not isinstance(body, dict):
        raise WebError("send {\"min_settings\": n, \"max_ratio_sd\": sd}", field="body")
    criterion = _criterion_from(body, required=True)
    current_store().set_setting(g.db, CRITERION, {k: criterion[k] for k in DEFAULT_CRITERION})
    return criterion
