"""Sessions: the list, filterable by protocol, participant code and status."""

from __future__ import annotations

from flask import Blueprint, g, render_template, request

from . import current_store
from .errors import WebError

blueprint = Blueprint("sessions", __name__)

STATUSES = ("running", "interrupted", "complete")


def _filters() -> dict:
    filters = {k: (request.args.get(k) or "").strip() or None for k in ("protocol", "participant", "status")}
    if filters["status"] and filters["status"] not in STATUSES:
        raise WebError(f"status must be one of {', '.join(STATUSES)}", field="status")
    return filters


@blueprint.get("/sessions")
def index():
    filters = _filters()
    return render_template("sessions.html", sessions=current_store().sessions(g.db, **filters), filters=filters,
                           protocols=current_store().protocol_names(), statuses=STATUSES)


@blueprint.get("/api/sessions")
def api_index():
    return {"sessions": current_store().sessions(g.db, **_filters())}
