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


def _criterion_from(values) -> dict:
    parsed = {}
    for key, kind, words in (("min_settings", int, "a whole number"), ("max_ratio_sd", float, "a number")):
        text = str(values.get(key) if values.get(key) is not None else "").strip()
        if text:
            try:
                parsed[key] = kind(text)
            except ValueError:
                raise WebError(f"{text!r} is not {words}", field=key) from None
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
    body = request.get_json(silent=True)
    if not isinstance(body, dict):
        raise WebError("send {\"min_settings\": n, \"max_ratio_sd\": sd}", field="body")
    criterion = _criterion_from(body)
    current_store().set_setting(g.db, CRITERION, {k: criterion[k] for k in DEFAULT_CRITERION})
    return criterion
