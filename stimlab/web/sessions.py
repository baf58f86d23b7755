"""Sessions: the list (filterable by protocol, participant code and status), a page per session with its timing
quality and responses, and its exports."""

from __future__ import annotations

import json

import numpy as np
from flask import Blueprint, Response, g, render_template, request, stream_with_context

from ..colorimetry.spaces import LMS_to_DKL
from ..sessions.export import (
    BIDS_SIDECAR,
    bids_events,
    events_tsv,
    frames_csv_chunks,
    rows_to_csv,
    session_json,
    timing,
    trial_rows,
)
from ..sessions.ingest import get_session, progress
from . import current_store
from .adjustments import check_before_saving, photometry_context
from .errors import NotFound, WebError
from .plots import _Axes

blueprint = Blueprint("sessions", __name__)

STATUSES = ("running", "interrupted", "complete")
FORMATS = ("csv", "json", "bids", "sidecar", "frames")


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


def by_condition(session: dict, rows: list[dict]) -> list[dict]:
    """Responses per condition, and for nulling or matching designs the null/match against the adapting vector."""
    data = session["compiled"]
    model = data.get("adaptation_model") or {}
    LMS_0 = np.array(data["background"]["lms"])
    obs = data["observer"]
    summary = []
    for condition in data["conditions"]:
        done = [r for r in rows if r["condition"] == condition["label"] and r["completed"]]
        entry = {"label": condition["label"], "n": len(done),
                 "rt_ms": float(np.mean([r["response_rt_ms"] for r in done if r["response_rt_ms"] is not None]))
                 if any(r["response_rt_ms"] is not None for r in done) else None}
        correct = [r["response_correct"] for r in done if r["response_correct"] is not None]
        if correct:
            entry["proportion_correct"] = float(np.mean(correct))
        nulls = [[r["response_dkl_lm"], r["response_dkl_s"]] for r in done if "response_dkl_lm" in r]
        if nulls:
            entry["response_dkl_mean"] = np.mean(nulls, axis=0).tolist()
            entry["response_dkl_sd"] = np.std(nulls, axis=0, ddof=1).tolist() if len(nulls) > 1 else [0.0, 0.0]
            source = None
            if model.get("kind") == "after_image":
                source = condition["stimuli"][model["adapter"]]["colour"]
            elif model.get("kind") == "induction":
                inducer = condition["stimuli"][model["inducer"]]
                source = inducer.get("second_colour", inducer["colour"])
            if source:
                adapt = LMS_to_DKL(np.array(source["lms"]), LMS_0, obs["w_L"], obs["w_M"])[1:]
                entry["adapt_dkl"] = adapt.tolist()
                norm = float(np.linalg.norm(adapt))
                entry["strength"] = float(np.linalg.norm(entry["response_dkl_mean"]) / norm) if norm else None
        summary.append(entry)
    return summary


def vectors_plot(summary: list[dict]) -> dict | None:
    """Adapting (or surround) vectors and the mean null (or match) vectors in the DKL isoluminant plane."""
    pairs = [s for s in summary if "adapt_dkl" in s]
    if not pairs:
        return None
    span = 1.15 * max(max(abs(v) for s in pairs for v in s["adapt_dkl"] + s["response_dkl_mean"]), 1e-6)
    axes = _Axes((-span, span), (-span, span), width=300, height=300)
    ticks = [round(t, 4) for t in np.linspace(-span, span, 5)]
    return {"frame": axes.frame(ticks, ticks, "L−M (DKL)", "S (DKL)"), "ox": axes.x(0), "oy": axes.y(0),
            "vectors": [{"label": s["label"], "ax": axes.x(s["adapt_dkl"][0]), "ay": axes.y(s["adapt_dkl"][1]),
                         "nx": axes.x(s["response_dkl_mean"][0]), "ny": axes.y(s["response_dkl_mean"][1]),
                         "strength": s["strength"]} for s in pairs]}


def histogram_plot(quality: dict) -> dict:
    edges, counts = quality["histogram"]["edges_ms"], quality["histogram"]["counts"]
    top = max(counts + [1])
    axes = _Axes((edges[0], edges[-1]), (0, top), height=180)
    bars = [{"x": axes.x(a), "width": max(axes.x(b) - axes.x(a) - 1, 1), "y": axes.y(c), "h": axes.y(0) - axes.y(c),
             "label": f"{a:.1f}–{b:.1f} ms: {c}"} for a, b, c in zip(edges, edges[1:], counts)]
    period = quality["period_ms"]
    return {"frame": axes.frame([0, period, 1.5 * period, 2 * period, 3 * period], [0, top], "frame interval (ms)",
                                "frames"), "bars": bars, "drop_x": axes.x(1.5 * period)}


def photometry_summary(session: dict, rows: list[dict]) -> dict | None:
    """For a flicker-photometry session: the settings and the L/M weighting they imply."""
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
    settings = [float(r["response_position"]) for r in rows if r.get("response_position") not in (None, "")]
    if len(settings) < 2:
        return {"settings": settings, "error": "at least two settings are needed"}
    try:
        return summarise_settings(amplitude, settings, LMS_0, obs) | {"standard_observer": obs.key}
    except ValueError as error:  # the mean setting implies no positive L/M ratio
        return {"settings": settings, "error": str(error)}


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
    summary = photometry_summary(session, trial_rows(g.db, session))
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
    rows = trial_rows(g.db, session)
    quality = timing(g.db, session)
    summary = by_condition(session, rows)
    display = current_store().display(g.db, session["display_id"])
    photometry = photometry_summary(session, rows)
    saved = current_store().latest_adjustment(g.db, session["participant"]) if photometry else None
    return render_template("session.html", session=session, rows=rows, quality=quality, summary=summary,
                           photometry=photometry, saved_adjustment=saved,
                           vectors=vectors_plot(summary), histogram=histogram_plot(quality), display=display,
                           progress=progress(g.db, session_id), formats=FORMATS,
                           **photometry_context(session, photometry))


@blueprint.get("/sessions/<int:session_id>/export.<fmt>")
def export(session_id: int, fmt: str):
    session = session_or_404(session_id)
    stem = f"session-{session_id}_{session['participant']}"
    if fmt == "csv":
        return _download(rows_to_csv(trial_rows(g.db, session)), f"{stem}_trials.csv", "text/csv")
    if fmt == "json":
        profile = current_store().display(g.db, session["display_id"])["profile"]
        return _download(json.dumps(session_json(g.db, session, profile), indent=1), f"{stem}.json",
                         "application/json")
    if fmt == "bids":
        return _download(events_tsv(bids_events(g.db, session)), f"sub-{session['participant']}_task-stimlab_"
                         f"run-{session_id}_events.tsv", "text/tab-separated-values")
    if fmt == "sidecar":
        return _download(json.dumps(BIDS_SIDECAR, indent=2), f"sub-{session['participant']}_task-stimlab_"
                         f"run-{session_id}_events.json", "application/json")
    if fmt == "frames":  # streamed: an hour's log is tens of MB
        return _download(stream_with_context(frames_csv_chunks(g.db, session_id)), f"{stem}_frames.csv", "text/csv")
    raise NotFound(f"unknown export format {fmt!r}; choose one of: {', '.join(FORMATS)}")


def _download(text, filename: str, mimetype: str) -> Response:
    return Response(text, mimetype=mimetype, headers={"Content-Disposition": f'attachment; filename="{filename}"'})
