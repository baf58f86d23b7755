"""Protocols: list with audit status, a form editor with a live audit, and saving back to the file."""

from __future__ import annotations

import numpy as np
from flask import Blueprint, current_app, g, render_template, request

from ..audit.preflight import audit_protocol
from ..errors import InputError
from ..experiment.compile import compile_protocol
from ..experiment.protocol import CAUTION, protocol_sha256, validate_protocol
from ..sessions.observers import observer_for_protocol
from ..sessions.store import safe_protocol_name, text_sha256
from . import current_store
from .displays import _get, default_display_id
from .errors import NotFound, WebError
from .plots import dkl_plane_plot, frame_preview

blueprint = Blueprint("protocols", __name__)
AUDIT_CACHE_BYTES = 64 * 1024 * 1024  # compiled protocols kept for the live audit, at most


def _read(name: str):
    try:
        return current_store().read_protocol(name)
    except FileNotFoundError:
        raise NotFound(f"there is no protocol {name!r}; pick one from the list") from None


def observer_for(protocol: dict):
    """The observer a protocol asks for: ``None`` (standard, compile picks it) or a stored individual adjustment."""
    return observer_for_protocol(current_store(), g.db, protocol)


def run_audit(protocol: dict, display_id: int, participant: int = 1) -> tuple[dict, object]:
    """Compile and audit ``protocol`` on a stored display (cached per protocol, display and observer)."""
    display = _get(display_id)
    obs, adjustment_id = observer_for(protocol)
    cache = current_app.extensions["stimlab.audit_cache"]
    key = (protocol_sha256(protocol), display["sha256"], participant, adjustment_id)
    if key not in cache:
        compiled = compile_protocol(protocol, display["profile"], participant=participant, obs=obs)
        entry = (audit_protocol(compiled, protocol, display["profile"]), compiled)
        size = len(str(compiled.data)) + len(str(entry[0]))  # a rough byte count, far cheaper than the compile
        sizes = current_app.extensions.setdefault("stimlab.audit_cache_bytes", {})
        if len(cache) >= 64 or sum(sizes.values()) + size > AUDIT_CACHE_BYTES:
            cache.clear()
            sizes.clear()
        cache[key], sizes[key] = entry, size
    return cache[key]


def plane_for(compiled) -> dict:
    """The first condition's stimuli and adjustment ranges on the DKL isoluminant plane."""
    background = compiled.background
    points, segments = [], []
    for condition, stimuli in zip(compiled.data["conditions"], compiled.stimuli):
        for name, stimulus in stimuli.items():
            for entry in stimulus.colours().values():
                _, lm, s = background.LMS_to_space("dkl", np.array(entry.lms))
                if abs(lm) < 1e-9 and abs(s) < 1e-9:
                    continue
                points.append({"label": f"{name} ({condition['label']})", "lm": float(lm), "s": float(s),
                               "ok": entry.in_gamut})
    for condition, response in zip(compiled.data["conditions"], compiled.responses):
        if response is None or response.space != "dkl":
            continue
        positions = response.positions
        for axis in response.axes:
            ends = [background.LMS_to_space("dkl", background.colour_to_LMS("dkl", response.base + p * axis))
                    for p in (positions[0], positions[-1])]
            segments.append({"label": f"{response.kind} of {response.target} ({condition['label']})",
                             "from": (float(ends[0][1]), float(ends[0][2])), "to": (float(ends[1][1]),
                                                                                   float(ends[1][2])),
                             "ok": all(response.in_gamut)})
    return dkl_plane_plot(background, points[:40], segments[:40])


def _status(name: str, display_id):
    text, protocol, error = _read(name)
    entry = {"name": name, "title": protocol["about"]["title"] if protocol else None, "error": error}
    if protocol and display_id:
        try:
            report, _ = run_audit(protocol, display_id)
            entry.update(passed=report["passed"], counts=report["counts"], caution=report["caution"])
        except InputError as failure:
            entry["error"] = failure
    return entry


@blueprint.get("/protocols")
def index():
    display_id = default_display_id(request.args.get("display"))
    names = current_store().protocol_names()
    return render_template("protocols.html", protocols=[_status(n, display_id) for n in names],
                           displays=current_store().displays(g.db), display_id=display_id)


@blueprint.get("/protocols/<name>")
def edit(name: str):
    name = safe_protocol_name(name)
    text, protocol, error = _read(name)
    display_id = default_display_id(request.args.get("display"))
    return render_template("protocol_edit.html", name=name, text=text, protocol=protocol, error=error,
                           sha256=text_sha256(text), displays=current_store().displays(g.db), display_id=display_id,
                           caution=CAUTION)


def audit_fragment(protocol: dict, display_id: int) -> dict:
    report, compiled = run_audit(protocol, display_id)
    previews = frame_preview(compiled.data, 0)
    html = render_template("_audit_panel.html", report=report, plane=plane_for(compiled), previews=previews,
                           condition=compiled.data["conditions"][0]["label"])
    return {"passed": report["passed"], "counts": report["counts"], "report": report, "html": html}


# -- API ------------------------------------------------------------------------------------------------------
def _body() -> dict:
    body = request.get_json(silent=True)
    if not isinstance(body, dict):
        raise WebError("send a JSON object", field="body")
    return body


@blueprint.get("/api/protocols")
def api_index():
    display_id = default_display_id(request.args.get("display"))
    result = []
    for name in current_store().protocol_names():
        entry = _status(name, display_id)
        error = entry.pop("error")
        entry["error"] = {"message": str(error), "field": error.field} if error else None
        result.append(entry)
    return {"display_id": display_id, "protocols": result}


@blueprint.get("/api/protocols/<name>")
def api_show(name: str):
    text, protocol, error = _read(safe_protocol_name(name))
    return {"name": safe_protocol_name(name), "sha256": text_sha256(text), "protocol": protocol,
            "text": text if protocol is None else None,
            "error": {"message": str(error), "field": error.field} if error else None}


@blueprint.put("/api/protocols/<name>")
def api_save(name: str):
    body = _body()
    protocol = validate_protocol(body.get("protocol"), safe_protocol_name(name))
    sha = current_store().save_protocol(name, protocol, body.get("base_sha256"))
    return {"name": safe_protocol_name(name), "sha256": sha, "saved": True}


@blueprint.post("/api/audit")
def api_audit():
    body = _body()
    protocol = validate_protocol(body.get("protocol"), "protocol")
    display_id = default_display_id(body.get("display"))
    if display_id is None:
        raise WebError("add a display first: the audit needs a calibrated display", field="display")
    result = audit_fragment(protocol, display_id)
    if not body.get("html", True):
        result.pop("html")
    return result


@blueprint.post("/api/protocol-form")
def api_form():
    """The editor's form for a protocol (after structural edits in its JSON)."""
    protocol = validate_protocol(_body().get("protocol"), "protocol")
    return {"html": render_template("_protocol_form.html", protocol=protocol)}
