"""Running sessions: start one (the audit must pass, or carry a recorded photosensitivity acknowledgement),
serve the runner page cross-origin isolated, and take its checks and log batches."""

from __future__ import annotations

import re

from flask import (
    Blueprint,
    g,
    make_response,
    redirect,
    render_template,
    request,
    url_for,
)

from ..errors import InputError
from ..experiment.protocol import CAUTION
from ..experiment.screens import scale_durations
from ..jsonio import dumps, loads
from ..sessions.ingest import (
    check_batch,
    create_session,
    end_early,
    progress,
    release_lease,
    store_batch,
    take_lease,
)
from . import current_store
from .displays import _get as get_display
from .displays import default_display_id
from .errors import NotFound, WebError
from .protocols import _read as read_protocol
from .protocols import run_audit
from .security import runner_writes
from .sessions import session_or_404 as _session
from .strict import whole_number

RUNNER_HEADER = "X-Runner-Id"

blueprint = Blueprint("runs", __name__)

PARTICIPANT = re.compile(r"^[A-Za-z0-9_-]{1,32}$")


def _participant(code) -> str:
    if code is not None and not isinstance(code, str):
        raise InputError("the participant code must be text such as 'P07'", field="participant")
    code = (code or "").strip()
    if not PARTICIPANT.match(code):
        raise InputError("use a pseudonymous code of letters, digits, '-' or '_' (at most 32), never a name",
                         field="participant")
    return code


def gate(report: dict) -> dict:
    """Whether a protocol may start: blocked by any failure but photosensitivity, which needs acknowledging."""
    fails = [f for f in report["findings"] if f["severity"] == "fail"]
    blocking = [f for f in fails if f["kind"] != "photosensitivity"]
    flashing = [f for f in fails if f["kind"] == "photosensitivity"]
    return {"blocked": blocking, "needs_acknowledgement": bool(flashing), "flashing": flashing,
            "caution": report["caution"]}


@blueprint.get("/run")
def start_page():
    return _start_page(request.args.get("protocol"), request.args.get("display"))


def _start_page(name, display, *, error: str | None = None, values=None, status: int = 200):
    """The Run page; after a refused start, again with the reason and what was entered (never a dead end)."""
    protocols = current_store().protocol_names()
    name = name or (protocols[0] if protocols else None)
    display_id = default_display_id(display)
    state = None
    if name and display_id:
        _, protocol, invalid = read_protocol(name)
        if invalid:
            raise WebError(f"{name} does not validate: {invalid}; fix it in the editor first", field="protocol")
        report, compiled = run_audit(protocol, display_id)
        state = {**gate(report), "report": report, "trials": len(compiled.data["trials"]),
                 "conditions": len(compiled.data["conditions"])}
    return render_template("run_start.html", protocols=protocols, name=name, displays=current_store().displays(g.db),
                           display_id=display_id, state=state, caution=CAUTION, dry_run_factors=DRY_RUN_FACTORS,
                           error=error, values=values or {}), status


DRY_RUN_FACTORS = (0.5, 0.2, 0.1, 0.05, 0.02)
"""Duration factors offered for a dry run on the Run page (the API takes any factor above 0 and at most 1)."""


def _dry_run_factor(value) -> float | None:
    """None for a real session; else the factor every duration is multiplied by."""
    if value is None or value is False or (isinstance(value, str) and value.strip() in ("", "no")):
        return None
    try:
        factor = float(value)
    except (TypeError, ValueError):
        raise WebError(f"the dry-run factor must be a number, got {value!r}", field="dry_run_factor") from None
    if not 0 < factor <= 1:
        raise WebError("the dry-run factor must be above 0 and at most 1 (0.1 runs ten times faster)",
                       field="dry_run_factor")
    return factor


def start_session(name: str, display_id, participant: str, ack: dict | None, dry_run=None) -> int:
    """Compile, audit and store a new session; refuse a failing audit unless only flashes fail and are acknowledged.

    A dry run (``dry_run`` a factor in (0, 1]) has every duration scaled by that factor and is marked as such in
    the session, its page, the list and every export.
    """
    if not isinstance(name, str) or not name:
        raise WebError("protocol must be the name of a protocol file, such as 'afterimage_null.json'", field="protocol")
    _, protocol, error = read_protocol(name)
    if error:
        raise WebError.from_input(error)
    factor = _dry_run_factor(dry_run)
    if factor is not None:
        protocol = scale_durations(protocol, factor)
    display = get_display(whole_number(display_id, "display", minimum=1))
    participant = _participant(participant)
    if ack is not None:
        ack = acknowledgement_from(ack)
    report, compiled = run_audit(protocol, display["id"], participant=_participant_number(participant))
    state = gate(report)
    if state["blocked"]:
        raise WebError("the audit fails: " + "; ".join(f"{f['where']}: {f['message']}" for f in state["blocked"][:3])
                       + ". Fix the protocol before running it.", "Audit failed", 409, field="protocol")
    acknowledgement = None
    if state["needs_acknowledgement"]:
        ack = acknowledgement_from(ack)
        reference = ack["ethics_reference"]
        if not ack["accepted"] or not reference:
            raise WebError("this protocol exceeds the WCAG 2.2 flash thresholds: record that you accept it and the "
                           "ethics approval reference that covers it", "Acknowledgement needed", 409,
                           field="acknowledgement")
        acknowledgement = {"accepted": True, "ethics_reference": reference,
                           "experimenter": ack["experimenter"],
                           "findings": [f["message"] for f in state["flashing"]], "caution": CAUTION}
    data = dict(compiled.data, audit={"passed": report["passed"], "counts": report["counts"],
                                      "caution": report["caution"]},
                dry_run={"factor": factor} if factor is not None else None)
    return create_session(g.db, protocol_file=name, protocol_sha256=compiled.data["protocol"]["sha256"],
                          display_id=display["id"], participant=participant, compiled=data,
                          acknowledgement=acknowledgement, dry_run=factor)


def acknowledgement_from(ack) -> dict:
    """A photosensitivity acknowledgement with strict types: ``accepted`` true or false (never ``"false"``), the
    ethics reference and experimenter as text."""
    if ack is None:
        ack = {}
    if not isinstance(ack, dict):
        raise WebError("acknowledgement must be an object {accepted, ethics_reference, experimenter}",
                       field="acknowledgement")
    accepted = ack.get("accepted", False)
    if not isinstance(accepted, bool):
        raise WebError("accepted must be true or false (not text or a number)", field="acknowledgement.accepted")
    fields = {}
    for key in ("ethics_reference", "experimenter"):
        value = ack.get(key)
        if value is not None and (not isinstance(value, str) or len(value) > 200):
            raise WebError(f"{key} must be text of at most 200 characters", field=f"acknowledgement.{key}")
        fields[key] = (value or "").strip()
    return {"accepted": accepted, **fields}


@blueprint.post("/run")
def start_form():
    form = request.form
    ack = {"accepted": form.get("accept") == "yes", "ethics_reference": form.get("ethics_reference", ""),
           "experimenter": form.get("experimenter", "")}
    dry_run = form.get("dry_run_factor") if form.get("dry_run") == "yes" else None
    try:
        session_id = start_session(form.get("protocol", ""), form.get("display"), form.get("participant", ""), ack,
                                   dry_run)
    except (WebError, InputError) as refused:
        if isinstance(refused, InputError):
            refused = WebError.from_input(refused)
        if refused.status not in (400, 409):
            raise
        return _start_page(form.get("protocol"), form.get("display"), error=refused.message, values=form,
                           status=refused.status)
    return redirect(url_for("runs.runner", session_id=session_id), 303)


@blueprint.post("/api/sessions")
def api_create():
    body = request.get_json(silent=True)
    if not isinstance(body, dict):
        raise WebError("send a JSON object with protocol, display and participant", field="body")
    session_id = start_session(body.get("protocol") or "", body.get("display"), body.get("participant", ""),
                               body.get("acknowledgement"), body.get("dry_run_factor"))
    return {"id": session_id, "runner": url_for("runs.runner", session_id=session_id)}, 201


def _participant_number(code: str) -> int:
    """Latin-square row: the number in a code like 'P07', else 1."""
    digits = re.findall(r"\d+", code)
    return int(digits[-1][-6:]) if digits else 1


@blueprint.get("/run/<int:session_id>")
def runner(session_id: int):
    session = _session(session_id)
    response = make_response(render_template("runner.html", session=session, caution=CAUTION))
    # Cross-origin isolation gives 5 µs timer resolution instead of 100 µs.
    response.headers["Cross-Origin-Opener-Policy"] = "same-origin"
    response.headers["Cross-Origin-Embedder-Policy"] = "require-corp"
    return response


@blueprint.get("/api/sessions/<int:session_id>")
def api_show(session_id: int):
    session = _session(session_id)
    return {"id": session["id"], "status": session["status"], "participant": session["participant"],
            "protocol_file": session["protocol_file"], "compiled": session["compiled"],
            "acknowledgement": session["acknowledgement"], "checks": session["checks"],
            "dry_run": session.get("dry_run"), "end_reason": session.get("end_reason"),
            "progress": progress(g.db, session_id)}


@blueprint.post("/api/sessions/<int:session_id>/checks")
@runner_writes
def api_checks(session_id: int):
    _session(session_id)
    body = request.get_json(silent=True)
    if not isinstance(body, dict):
        raise WebError("send the check results as a JSON object", field="body")
    g.db.execute("UPDATE sessions SET checks = ? WHERE id = ?", (dumps(body), session_id))
    return {"saved": True}


@blueprint.post("/api/sessions/<int:session_id>/batches")
@runner_writes
def api_batch(session_id: int):
    runner = request.headers.get(RUNNER_HEADER)
    if runner is not None and not 8 <= len(runner) <= 64:
        raise WebError("the runner id must be 8–64 characters", field=RUNNER_HEADER)
    checked = check_batch(session_id, loads(request.get_data(), field="batch"))
    # Checked first, then written on the store's one batch connection (its page cache stays warm between batches),
    # which each thread holds only for the writing.
    with current_store().batch_connection() as db:
        row = db.execute("SELECT status FROM sessions WHERE id = ?", (session_id,)).fetchone()
        if row is None:
            raise NotFound(f"there is no session {session_id}")
        if row["status"] == "complete":
            raise WebError("this session is complete; it takes no more log batches", "Conflict", 409, field="status")
        return store_batch(db, checked, runner=runner)


@blueprint.post("/api/sessions/<int:session_id>/lease")
@runner_writes
def api_lease(session_id: int):
    """The runner page takes the session on start or resume; 409 (field ``runner``) when it is open elsewhere."""
    row = g.db.execute("SELECT status FROM sessions WHERE id = ?", (session_id,)).fetchone()
    if row is None:
        raise NotFound(f"there is no session {session_id}")
    body = request.get_json(silent=True)
    if not isinstance(body, dict):
        raise WebError("send {\"runner\": id, \"take_over\": false}", field="body")
    if body.get("release") is True:
        return release_lease(g.db, session_id, str(body.get("runner")))
    return take_lease(g.db, session_id, body.get("runner"), take_over=body.get("take_over", False))


@blueprint.post("/api/sessions/<int:session_id>/end")
@runner_writes
def api_end(session_id: int):
    """End a session early with the experimenter's reason (from the runner, or with the CSRF token)."""
    session = _session(session_id)
    if session["status"] == "complete":
        raise WebError("this session is already complete; there is nothing to end", "Conflict", 409, field="status")
    body = request.get_json(silent=True)
    if not isinstance(body, dict):
        raise WebError("send a JSON object with the reason", field="body")
    end_early(g.db, session_id, body.get("reason"))
    return {"id": session_id, "status": "ended_early", "end_reason": body["reason"].strip()}


@blueprint.post("/sessions/<int:session_id>/end")
def end_form(session_id: int):
    """The session page's form: end a session whose runner is gone, with the experimenter's reason."""
    session = _session(session_id)
    if session["status"] == "complete":
        raise WebError("this session is already complete; there is nothing to end", "Conflict", 409, field="status")
    end_early(g.db, session_id, request.form.get("reason"))
    return redirect(url_for("sessions.show", session_id=session_id), 303)
