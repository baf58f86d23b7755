"""Sessions: the list (filterable by protocol, participant code and status), a page per session, a page per study
(every session of one protocol), and their exports. Every number comes from stimlab.sessions (summary, study,
export); this layer only places them."""

from __future__ import annotations

import numpy as np
from flask import Blueprint, Response, g, render_template, request, stream_with_context

from ..errors import InputError
from ..sessions.export import SESSION_FORMATS, STUDY_FORMATS, session_export, study_export, study_sessions
from ..sessions.ingest import get_session, progress
from ..sessions.store import safe_protocol_name
from ..sessions.study import study_summary
from ..sessions.summary import session_summary
from . import current_store
from .errors import NotFound, WebError
from .plots import _Axes

blueprint = Blueprint("sessions", __name__)

STATUSES = ("running", "interrupted", "complete")


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
    return render_template("sessions.html", sessions=current_store().sessions(g.db, **filters), filters=filters,
                           protocols=current_store().protocol_names(), statuses=STATUSES)


@blueprint.get("/api/sessions")
def api_index():
    return {"sessions": current_store().sessions(g.db, **_filters())}


def vectors_plot(summary: list[dict]) -> dict | None:
    """Adapting (or surround) vectors and the mean null (or match) vectors in the DKL isoluminant plane, placed in
    a view box (the vectors themselves come from the session summary)."""
    pairs = [s for s in summary if "adapt_dkl" in s]
    if not pairs:
        return None
    span = 1.15 * max(max(abs(v) for s in pairs for v in s["adapt_dkl"] + s["response_dkl_mean"]), 1e-6)
    axes = _Axes((-span, span), (-span, span), width=300, height=300)
    ticks = [round(t, 4) for t in np.linspace(-span, span, 5)]
    return {"frame": axes.frame(ticks, ticks, "L−M (DKL)", "S (DKL)"), "ox": axes.x(0), "oy": axes.y(0),
            "vectors": [{"label": s["label"], "ax": axes.x(s["adapt_dkl"][0]), "ay": axes.y(s["adapt_dkl"][1]),
                         "nx": axes.x(s["response_dkl_mean"][0]), "ny": axes.y(s["response_dkl_mean"][1]),
                         "along": s["along"]["mean"], "orthogonal": s["orthogonal"]["mean"]} for s in pairs]}


def histogram_plot(quality: dict) -> dict:
    edges, counts = quality["histogram"]["edges_ms"], quality["histogram"]["counts"]
    top = max(counts + [1])
    axes = _Axes((edges[0], edges[-1]), (0, top), height=180)
    bars = [{"x": axes.x(a), "width": max(axes.x(b) - axes.x(a) - 1, 1), "y": axes.y(c), "h": axes.y(0) - axes.y(c),
             "label": f"{a:.1f}–{b:.1f} ms: {c}"} for a, b, c in zip(edges, edges[1:], counts)]
    period = quality["period_ms"]
    return {"frame": axes.frame([0, period, 1.5 * period, 2 * period, 3 * period], [0, top], "frame interval (ms)",
                                "frames"), "bars": bars, "drop_x": axes.x(1.5 * period)}


@blueprint.post("/sessions/<int:session_id>/observer-adjustment")
def save_adjustment(session_id: int):
    from flask import redirect, url_for

    _store_adjustment(session_id)
    return redirect(url_for("sessions.show", session_id=session_id), 303)


@blueprint.post("/api/sessions/<int:session_id>/observer-adjustment")
def api_save_adjustment(session_id: int):
    adjustment_id, summary = _store_adjustment(session_id)
    return {"id": adjustment_id, **summary}, 201


def _store_adjustment(session_id: int):
    session = session_or_404(session_id)
    summary = session_summary(g.db, session)["photometry"]
    if summary is None:
        raise WebError("this session is not a flicker photometry task", field="session")
    if "error" in summary:
        raise WebError(f"cannot estimate the observer's weights: {summary['error']}", field="session")
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
                           summary=summary["conditions"], model=summary["model"], photometry=summary["photometry"],
                           saved_adjustment=saved, vectors=vectors_plot(summary["conditions"]),
                           histogram=histogram_plot(summary["timing"]), display=display,
                           progress=progress(g.db, session_id), formats=SESSION_FORMATS)


@blueprint.get("/sessions/<int:session_id>/export.<fmt>")
def export(session_id: int, fmt: str):
    session = session_or_404(session_id)
    if fmt not in SESSION_FORMATS:
        raise NotFound(f"unknown export format {fmt!r}; choose one of: {', '.join(SESSION_FORMATS)}")
    return _download(session_export(g.db, current_store(), session, fmt))


def _protocol_or_404(name: str) -> str:
    try:
        name = safe_protocol_name(name)
    except InputError as error:
        raise NotFound(error.message) from None
    if not study_sessions(g.db, name):
        raise NotFound(f"there are no sessions of {name!r} yet; run the protocol first")
    return name


@blueprint.get("/studies/<name>")
def study(name: str):
    name = _protocol_or_404(name)
    summary = study_summary(g.db, name, study_sessions(g.db, name))
    return render_template("study.html", study=summary, formats=STUDY_FORMATS)


@blueprint.get("/api/studies/<name>")
def api_study(name: str):
    name = _protocol_or_404(name)
    return study_summary(g.db, name, study_sessions(g.db, name))


@blueprint.get("/studies/<name>/export.<fmt>")
def study_download(name: str, fmt: str):
    name = _protocol_or_404(name)
    if fmt not in STUDY_FORMATS:
        raise NotFound(f"unknown export format {fmt!r}; choose one of: {', '.join(STUDY_FORMATS)}")
    return _download(study_export(g.db, current_store(), name, fmt))


def _download(exported) -> Response:
    content = exported.content
    if not isinstance(content, (str, bytes)):  # a generator of chunks: streamed
        content = stream_with_context(content)
    return Response(content, mimetype=exported.mimetype,
                    headers={"Content-Disposition": f'attachment; filename="{exported.name}"'})
