"""Protocols: list with audit status, a form editor with a live audit, and saving back to the file."""

from __future__ import annotations

import re

import numpy as np
from flask import Blueprint, current_app, g, redirect, render_template, request, url_for

from ..audit.preflight import audit_protocol
from ..errors import ConflictError, InputError
from ..experiment.compile import compile_protocol
from ..experiment.edits import apply_edit, optional_fields
from ..experiment.labels import OBSERVER_CHOICES, short_label
from ..experiment.paradigms import paradigm_protocol, paradigms
from ..experiment.protocol import CAUTION, protocol_sha256, validate_protocol
from ..figures import recall_spec, remember_spec
from ..jsonio import dumps
from ..profiles.figures import render as render_figure
from ..profiles.plane_figure import plane_spec
from ..sessions import protocol_files
from ..sessions.observers import observer_for_protocol
from ..sessions.store import safe_protocol_name, text_sha256
from . import current_store
from .displays import _get, chosen_default_id, default_display_id
from .errors import NotFound, WebError
from .figures import figure_response, figures_dir
from .plots import frame_preview

blueprint = Blueprint("protocols", __name__)
SECTIONS = ("about", "background", "stimuli", "trial", "conditions")  # the parts of a protocol the form draws
AUDIT_CACHE_BYTES = 64 * 1024 * 1024  # compiled protocols kept for the live audit, at most


@blueprint.app_template_global()
def bare(path: str) -> str:
    """A JSON path without its indices, as the form template matches fields: trial[2].stimuli[0] → trial.stimuli."""
    return re.sub(r"\[\d+\]", "", path)


_MINUS = re.compile(r"(?<![\w.\-−])-(?=\.?\d)")  # a hyphen standing for a minus: before a number, after no word
_AXIS = re.compile(r"(?<![\w\-])L-M(?![\w\-])")


@blueprint.app_template_filter()
def shown(text) -> str:
    """Text as a page shows it: negative numbers with a real minus sign (−0.5) and the axis written L−M. Inputs,
    JSON and file names keep the hyphen-minus, which is what a researcher types."""
    return _AXIS.sub("L−M", _MINUS.sub("−", str(text)))


@blueprint.app_template_filter()
def counted(count: int, noun: str, plural: str | None = None) -> str:
    """``1 warning``, ``2 warnings``: a count with its noun in agreement (``plural`` where it is not noun + s)."""
    return f"{count} {noun if count == 1 else plural or noun + 's'}"


blueprint.add_app_template_global(short_label, "short_label")
blueprint.add_app_template_global(optional_fields, "optional_fields")
blueprint.add_app_template_global(OBSERVER_CHOICES, "observer_choices")


def _file_name(name: str) -> str:
    """A protocol named in a URL: the file's whole name, ``.json`` included, as the list links to it. A name
    without it is no file (a 404), for reading and writing alike, so a PUT never creates a file the URL did not name."""
    if not name.endswith(".json"):
        raise NotFound(f"there is no protocol {name!r}; protocol files are named with .json at the end, "
                       f"e.g. {name.strip()[:60]}.json")
    return safe_protocol_name(name)


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


def plane_for(compiled, title: str = "") -> dict:
    """Every condition's stimuli and DKL adjustment ranges on the gamut in the DKL isoluminant plane: the spec
    of :func:`stimlab.profiles.plane_figure.plane_spec`."""
    background = compiled.background
    points, segments = [], []
    for condition, stimuli in zip(compiled.data["conditions"], compiled.stimuli):
        for name, stimulus in stimuli.items():
            for entry in stimulus.colours().values():
                _, lm, s = background.LMS_to_space("dkl", np.array(entry.lms))
                if abs(lm) < 1e-9 and abs(s) < 1e-9:
                    continue
                points.append({"name": name, "condition": shown(condition["label"]), "lm": float(lm), "s": float(s),
                               "ok": entry.in_gamut})
    for condition, response in zip(compiled.data["conditions"], compiled.responses):
        if response is None or response.space != "dkl":
            continue
        for axis, (low, high) in zip(response.axes, response.axis_limits()):
            ends = [background.LMS_to_space("dkl", background.colour_to_LMS("dkl", response.base + p * axis))
                    for p in (low, high)]
            segments.append({"name": f"{response.kind} range of {response.target}", "condition": shown(condition["label"]),
                             "from": (float(ends[0][1]), float(ends[0][2])),
                             "to": (float(ends[1][1]), float(ends[1][2])), "ok": all(response.in_gamut)})
    return plane_spec(background, points, segments, title=title, equal_aspect=False)


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


def _index_page(error=None, status=200):
    display_id = default_display_id(request.args.get("display"))
    names = current_store().protocol_names()
    return render_template("protocols.html", protocols=[_status(n, display_id) for n in names],
                           displays=current_store().displays(g.db), display_id=display_id, paradigms=paradigms(),
                           trash=protocol_files.trash_entries(current_store()), error=error,
                           form=request.form if request.method == "POST" else {},
                           deleted=request.args.get("deleted")), status


@blueprint.get("/protocols")
def index():
    return _index_page()


# -- files: new, duplicate, rename, delete, restore (forms, then the same as the API) -------------------------
def _new_name(body, field="new_name") -> str:
    name = body.get(field)
    if name is not None and not isinstance(name, str):
        raise InputError("the file name must be text, e.g. afterimage_null_pilot.json", field=field)
    name = (name or "").strip()
    if not name:
        raise InputError("give the new file name, e.g. afterimage_null_pilot.json", field=field)
    return safe_protocol_name(name)


def create_from(body) -> str:
    """A new protocol file from a paradigm template (``paradigm``) or a given protocol (``protocol``)."""
    name = _new_name(body, "name")
    if body.get("protocol") is not None:
        protocol = validate_protocol(body["protocol"], name)
    else:
        if not body.get("paradigm"):
            raise InputError("choose a paradigm template to start from", field="paradigm")
        title = body.get("title")
        if title is not None and not isinstance(title, str):
            raise InputError("the title must be text", field="title")
        protocol = paradigm_protocol(body["paradigm"], (title or "").strip() or None)
    return protocol_files.create_protocol(current_store(), name, protocol)


def _form_action(action):
    try:
        return redirect(action(), 303)
    except InputError as error:
        return _index_page(error, 409 if isinstance(error, ConflictError) else 400)


@blueprint.post("/protocols/new")
def create():
    return _form_action(lambda: url_for("protocols.edit", name=create_from(request.form)))


@blueprint.post("/protocols/<name>/duplicate")
def duplicate(name: str):
    return _form_action(lambda: url_for("protocols.edit", name=protocol_files.duplicate_protocol(
        current_store(), _file_name(name), _new_name(request.form))))


@blueprint.post("/protocols/<name>/rename")
def rename(name: str):
    return _form_action(lambda: url_for("protocols.edit", name=protocol_files.rename_protocol(
        current_store(), _file_name(name), _new_name(request.form), request.form.get("base_sha256") or None)))


@blueprint.post("/protocols/<name>/delete")
def delete(name: str):
    return _form_action(lambda: url_for("protocols.index",
                                        deleted=protocol_files.delete_protocol(current_store(), _file_name(name))))


@blueprint.post("/protocols/trash/<entry>/restore")
def restore(entry: str):
    return _form_action(lambda: url_for("protocols.edit", name=protocol_files.restore_protocol(
        current_store(), entry, request.form.get("new_name") or None)))


@blueprint.get("/protocols/<name>")
def edit(name: str):
    name = _file_name(name)
    text, protocol, error = _read(name)
    display_id = default_display_id(request.args.get("display"))
    return render_template("protocol_edit.html", name=name, text=text, protocol=protocol, error=error,
                           sha256=text_sha256(text), displays=current_store().displays(g.db), display_id=display_id,
                           default_id=chosen_default_id(), caution=CAUTION)


def audit_fragment(protocol: dict, display_id: int) -> dict:
    report, compiled = run_audit(protocol, display_id)
    previews = frame_preview(compiled.data, 0)
    # Only the plot's numbers are kept here (a small file named by their hash); the image is drawn when the page
    # asks for it, once per content, so typing in the editor never waits for matplotlib.
    spec = plane_for(compiled, title=f"Stimuli and ranges on the gamut of {report['display']['name']} "
                                     "(DKL isoluminant plane)")
    html = render_template("_audit_panel.html", report=report, plane_key=remember_spec(spec, figures_dir()),
                           previews=previews, condition=compiled.data["conditions"][0]["label"])
    return {"passed": report["passed"], "counts": report["counts"], "report": report, "html": html}


@blueprint.get("/protocols/figures/plane-<key>.<fmt>")
def plane_figure(key: str, fmt: str):
    """The live audit's gamut-plane plot, named by the hash of its numbers (kept by :func:`audit_fragment`)."""
    spec = recall_spec(key, figures_dir())
    if spec is None or spec.get("kind") != "gamut_plane":
        raise NotFound("this plot is no longer kept; reload the protocol's page to audit it again")
    return figure_response({"plane": spec}, "plane", fmt, f"gamut_plane_{key[:12]}", render_figure)


# -- API ------------------------------------------------------------------------------------------------------
def _validated(protocol, name: str) -> dict:
    """The protocol, or a 400 whose message is the labelled sentence alone (the field goes in ``field``)."""
    try:
        return validate_protocol(protocol, name)
    except InputError as error:
        raise WebError(error.message, "Invalid input", 400, field=error.field, file=error.file) from None


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


@blueprint.get("/api/paradigms")
def api_paradigms():
    return {"paradigms": paradigms()}


@blueprint.post("/api/protocols")
def api_create():
    name = create_from(_body())
    return {"name": name, "saved": True}, 201


@blueprint.post("/api/protocols/<name>/duplicate")
def api_duplicate(name: str):
    return {"name": protocol_files.duplicate_protocol(current_store(), _file_name(name), _new_name(_body()))}, 201


@blueprint.post("/api/protocols/<name>/rename")
def api_rename(name: str):
    body = _body()
    return {"name": protocol_files.rename_protocol(current_store(), _file_name(name), _new_name(body),
                                                   body.get("base_sha256"))}


@blueprint.delete("/api/protocols/<name>")
def api_delete(name: str):
    return {"trash_entry": protocol_files.delete_protocol(current_store(), _file_name(name))}


@blueprint.get("/api/protocol-trash")
def api_trash():
    return {"trash": protocol_files.trash_entries(current_store())}


@blueprint.post("/api/protocol-trash/<entry>/restore")
def api_restore(entry: str):
    body = request.get_json(silent=True) or {}
    return {"name": protocol_files.restore_protocol(current_store(), entry, body.get("new_name"))}


@blueprint.get("/api/protocols/<name>")
def api_show(name: str):
    name = _file_name(name)
    text, protocol, error = _read(name)
    return {"name": name, "sha256": text_sha256(text), "protocol": protocol,
            "text": text if protocol is None else None,
            "error": {"message": str(error), "field": error.field} if error else None}


@blueprint.put("/api/protocols/<name>")
def api_save(name: str):
    name = _file_name(name)
    body = _body()
    protocol = _validated(body.get("protocol"), name)
    sha = current_store().save_protocol(name, protocol, body.get("base_sha256"))
    return {"name": name, "sha256": sha, "saved": True}


@blueprint.post("/api/audit")
def api_audit():
    body = _body()
    protocol = _validated(body.get("protocol"), "protocol")
    display_id = default_display_id(body.get("display"))
    if display_id is None:
        raise WebError("add a display first: the audit needs a calibrated display", field="display")
    result = audit_fragment(protocol, display_id)
    if not body.get("html", True):
        result.pop("html")
    return result


@blueprint.post("/api/protocol-form")
def api_form():
    """The editor's form for a protocol, after a structural edit (``edit``, see :func:`apply_edit`) or after
    changes in its JSON; the form is drawn even when the protocol does not validate, with the first problem."""
    body = _body()
    protocol = body.get("protocol")
    # Without these parts there is no form to draw: the editor keeps the one it has (and its unsaved edits).
    missing = [key for key in SECTIONS if key not in protocol] if isinstance(protocol, dict) else list(SECTIONS)
    if missing:
        shown = "a list" if isinstance(protocol, list) else dumps(protocol)[:40]
        raise WebError(f"The protocol must be a JSON object with {', '.join(SECTIONS[:-1])} and {SECTIONS[-1]}; "
                       + (f"this one lacks {', '.join(missing)}" if isinstance(protocol, dict) else f"not {shown}")
                       + ". Nothing was applied: the form keeps your edits", field="protocol")
    if body.get("edit") is not None:
        protocol = apply_edit(protocol, body["edit"])
    error = None
    try:
        validate_protocol(protocol, "protocol")
    except InputError as failure:
        error = {"message": failure.message, "field": failure.field}
    try:
        html = render_template("_protocol_form.html", protocol=protocol)
    except (TypeError, AttributeError, KeyError):
        raise WebError("this JSON does not have the shape of a protocol (about, background, stimuli, trial, "
                       "conditions); fix it in the JSON box", field="protocol") from None
    return {"protocol": protocol, "html": html, "error": error}
