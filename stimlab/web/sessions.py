"""Sessions: the list (filterable by protocol, participant code and status), a page per session, a page per study
(every session of one protocol), and their exports. Every number comes from stimlab.sessions (summary, study,
export); this layer only places them."""

from __future__ import annotations

from flask import Blueprint, Response, g, render_template, request, stream_with_context

from ..errors import InputError
from ..sessions.export import SESSION_FORMATS, STUDY_FORMATS, no_study_message, session_export, study_export, study_sessions
from ..sessions.figures import render, session_specs, study_specs
from ..sessions.ingest import STATUSES, get_session, progress
from ..sessions.store import safe_protocol_name
from ..sessions.study import UNSIGNED, study_summary
from ..sessions.summary import session_summary
from . import current_store
from .adjustments import check_before_saving, photometry_context
from .errors import NotFound, WebError
from .figures import figure_response

blueprint = Blueprint("sessions", __name__)


@blueprint.app_template_filter("num")
def number_text(value, fmt: str = "%+.4f") -> str:
    """A number for a page: ``fmt`` applied, no negative zero ("−0.00" reads as a sign that is not there), and a
    real minus sign (U+2212) instead of the hyphen-minus; "—" for none."""
    if value is None:
        return "—"
    text = fmt % value
    if not any(c in "123456789" for c in text.split("e")[0]):  # rounds to zero: no sign either way
        text = text.lstrip("+-")
    return text.replace("-", "\u2212")


@blueprint.app_template_filter("when")
def time_text(value) -> str:
    """An ISO 8601 timestamp as pages show it: ``2026-12-02 06:33:38 UTC`` (exports keep ISO 8601)."""
    from datetime import datetime, timezone

    if not value:
        return "—"
    try:
        moment = datetime.fromisoformat(str(value))
    except ValueError:
        return str(value)
    if moment.tzinfo is None:  # stored times are UTC
        moment = moment.replace(tzinfo=timezone.utc)
    return moment.astimezone(timezone.utc).strftime("%Y-%m-%d %H:%M:%S UTC")



def _filters() -> dict:
    filters = {k: (request.args.get(k) or "").strip() or None for k in ("protocol", "participant", "status")}
    if filters["status"] and filters["status"] not in STATUSES:
        raise WebError(f"status must be one of {', '.join(STATUSES)}", field="status")
    return filters


def session_or_404(session_id: int) -> dict:
    session = get_session(g.db, session_id)
    if session is None:
        raise NotFound(f"there is no session {session_id}; pick one from the list")
    return session


@blueprint.get("/sessions")
def index():
    filters = _filters()
    studies = {s["protocol_file"] for s in current_store().sessions(g.db) if not s["dry_run"]}
    return render_template("sessions.html", sessions=current_store().sessions(g.db, **filters), filters=filters,
                           protocols=current_store().protocol_names(), statuses=STATUSES, studies=studies)


@blueprint.get("/api/sessions")
def api_index():
    return {"sessions": current_store().sessions(g.db, **_filters())}


@blueprint.post("/sessions/<int:session_id>/observer-adjustment")
def save_adjustment(session_id: int):
    from flask import redirect, url_for

    _store_adjustment(session_id, request.form.get("override_reason"))
    return redirect(url_for("sessions.show", session_id=session_id), 303)


@blueprint.post("/api/sessions/<int:session_id>/observer-adjustment")
def api_save_adjustment(session_id: int):
    body = request.get_json(silent=True) or {}
    adjustment_id, summary = _store_adjustment(session_id, body.get("override_reason"))
    return {"id": adjustment_id, **summary}, 201


def _store_adjustment(session_id: int, override_reason: str | None = None):
    session = session_or_404(session_id)
    if session.get("dry_run"):
        raise WebError("this session is a dry run: it is left out of analysis and cannot set an observer adjustment",
                       field="session")
    summary = session_summary(g.db, session)["photometry"]
    if summary is None:
        raise WebError("this session is not a flicker photometry task", field="session")
    if "error" in summary:
        raise WebError(f"cannot estimate the observer's weights: {summary['error']}", field="session")
    summary = check_before_saving(summary, override_reason)  # refuses an unreliable result without a reason
    adjustment_id = current_store().add_adjustment(g.db, session["participant"], summary["standard_observer"],
                                                   summary, session_id, session["display_id"])
    return adjustment_id, summary


@blueprint.get("/api/observers/<participant>")
def api_observer(participant: str):
    adjustment = current_store().latest_adjustment(g.db, participant)
    if adjustment is None:
        raise NotFound(f"no observer adjustment is stored for {participant!r}")
    return adjustment


@blueprint.get("/sessions/<int:session_id>")
def show(session_id: int):
    session = session_or_404(session_id)
    summary = session_summary(g.db, session)
    display = current_store().display(g.db, session["display_id"])
    saved = current_store().latest_adjustment(g.db, session["participant"]) if summary["photometry"] else None
    return render_template("session.html", session=session, rows=summary["rows"], quality=summary["timing"],
                           summary=summary["conditions"], adaptation_model=summary["adaptation_model"],
                           photometry=summary["photometry"],
                           saved_adjustment=saved, display=display,
                           has_study=bool(study_sessions(g.db, session["protocol_file"])),
                           progress=progress(g.db, session_id), formats=SESSION_FORMATS,
                           figures=list(session_specs(summary)),
                           **photometry_context(session, summary["photometry"]))


@blueprint.get("/sessions/<int:session_id>/figures/<figure>.<fmt>")
def session_figure(session_id: int, figure: str, fmt: str):
    specs = session_specs(session_summary(g.db, session_or_404(session_id)))
    return _figure(specs, figure, fmt, f"session-{session_id}_{figure}")


@blueprint.get("/sessions/<int:session_id>/export.<fmt>")
def export(session_id: int, fmt: str):
    session = session_or_404(session_id)
    return _download(session_export(g.db, current_store(), session, _format_or_404(fmt, SESSION_FORMATS)))


def _format_or_404(fmt: str, formats) -> str:
    if fmt not in formats:
        raise NotFound(f"unknown export format {fmt!r}; choose one of: {', '.join(formats)}")
    return fmt


def _protocol_or_404(name: str) -> str:
    try:
        name = safe_protocol_name(name)
    except InputError as error:
        raise NotFound(error.message) from None
    if not study_sessions(g.db, name):
        raise NotFound(no_study_message(g.db, name))
    return name


@blueprint.get("/studies/<name>")
def study(name: str):
    name = _protocol_or_404(name)
    summary = study_summary(g.db, name, study_sessions(g.db, name))
    return render_template("study.html", study=summary, formats=STUDY_FORMATS, figures=list(study_specs(summary)),
                           unsigned=UNSIGNED)


@blueprint.get("/studies/<name>/figures/<figure>.<fmt>")
def study_figure(name: str, figure: str, fmt: str):
    name = _protocol_or_404(name)
    specs = study_specs(study_summary(g.db, name, study_sessions(g.db, name)))
    return _figure(specs, figure, fmt, f"study_{name.removesuffix('.json')}_{figure}")


def _figure(specs: dict, figure: str, fmt: str, stem: str) -> Response:
    return figure_response(specs, figure, fmt, stem, render)


@blueprint.get("/api/studies/<name>")
def api_study(name: str):
    name = _protocol_or_404(name)
    return study_summary(g.db, name, study_sessions(g.db, name))


@blueprint.get("/studies/<name>/export.<fmt>")
def study_download(name: str, fmt: str):
    name = _protocol_or_404(name)
    return _download(study_export(g.db, current_store(), name, _format_or_404(fmt, STUDY_FORMATS)))


def _download(exported) -> Response:
    content = exported.content
    if not isinstance(content, (str, bytes)):  # a generator of chunks: streamed
        content = stream_with_context(content)
    return Response(content, mimetype=exported.mimetype,
                    headers={"Content-Disposition": f'attachment; filename="{exported.name}"'})
