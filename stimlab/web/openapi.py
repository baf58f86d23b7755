"""The OpenAPI 3.1 description of the ``/api/`` routes, served at ``/api/openapi.json``.

It documents what each route takes and that every error has the one shape of :func:`stimlab.web.errors.error_body`;
the suite fuzzes the app from it (tests/test_web_openapi.py).
"""

from __future__ import annotations

from ..version import __version__

__all__ = ["openapi_document"]

ERROR = {"type": "object", "required": ["error"], "properties": {"error": {
    "type": "object", "required": ["status", "title", "message", "field", "file", "row"],
    "properties": {"status": {"type": "integer"}, "title": {"type": "string"}, "message": {"type": "string"},
                   "field": {"type": ["string", "null"]}, "file": {"type": ["string", "null"]},
                   "row": {"type": ["integer", "null"]}}}}}
ANY_OBJECT = {"type": "object"}
ID = {"type": "integer", "minimum": 1}

# (method, path, summary, body schema or None, query parameters)
ROUTES = [
    ("get", "/api/", "the endpoints and the version", None, {}),
    ("get", "/api/openapi.json", "this document", None, {}),
    ("get", "/api/displays", "displays (active, or archived with ?archived=1)", None, {"archived": {"type": "string"}}),
    ("post", "/api/displays", "add a display from a profile built by 'stimlab display build'",
     {"type": "object", "required": ["profile"], "properties": {"profile": ANY_OBJECT}}, {}),
    ("get", "/api/displays/{display_id}", "one display with its profile and summary", None, {}),
    ("post", "/api/displays/{display_id}/archive", "hide a display from lists and defaults", None, {}),
    ("post", "/api/displays/{display_id}/unarchive", "show an archived display again", None, {}),
    ("get", "/api/protocols", "protocols with their audit status", None, {"display": {"type": "string"}}),
    ("get", "/api/protocols/{name}", "one protocol file", None, {}),
    ("put", "/api/protocols/{name}", "save a protocol (refused if the file changed since base_sha256)",
     {"type": "object", "properties": {"protocol": ANY_OBJECT, "base_sha256": {"type": ["string", "null"]}}}, {}),
    ("post", "/api/audit", "audit a protocol on a display",
     {"type": "object", "properties": {"protocol": ANY_OBJECT, "display": {}, "html": {"type": "boolean"}}}, {}),
    ("post", "/api/protocol-form", "the editor form for a protocol",
     {"type": "object", "properties": {"protocol": ANY_OBJECT}}, {}),
    ("get", "/api/sessions", "sessions, filtered", None,
     {"protocol": {"type": "string"}, "participant": {"type": "string"}, "status": {"type": "string"}}),
    ("post", "/api/sessions", "start a session (the audit must pass or flashes be acknowledged)",
     {"type": "object", "properties": {"protocol": {}, "display": {}, "participant": {},
                                       "acknowledgement": {}}}, {}),
    ("get", "/api/sessions/{session_id}", "a session, its compiled protocol and progress", None, {}),
    ("post", "/api/sessions/{session_id}/checks", "the runner's check results", ANY_OBJECT, {}),
    ("post", "/api/sessions/{session_id}/batches", "one numbered log batch from the runner",
     {"type": "object", "properties": {"batch": {"type": "integer"}, "events": {"type": "array"},
                                       "frames": {}}}, {}),
    ("post", "/api/sessions/{session_id}/lease", "take (or release) the session's one-runner lease",
     {"type": "object", "properties": {"runner": {"type": "string"}, "take_over": {"type": "boolean"},
                                       "release": {"type": "boolean"}}}, {}),
    ("post", "/api/sessions/{session_id}/observer-adjustment", "save a flicker photometry result", ANY_OBJECT, {}),
    ("get", "/api/observers/{participant}", "a participant's observer adjustment", None, {}),
    ("get", "/api/calibrations/{run_id}", "a calibration run and its readings", None, {}),
    ("put", "/api/calibrations/{run_id}/readings/{step}", "one luminance reading",
     {"type": "object", "properties": {"luminance": {}, "x": {}, "y": {}}}, {}),
    ("post", "/api/calibrations/{run_id}/build", "build the display profile from a run's readings", ANY_OBJECT, {}),
    ("post", "/api/sessions/{session_id}/end", "end a session early with the experimenter's reason",
     {"type": "object", "properties": {"reason": {"type": "string"}}}, {}),
    ("get", "/api/settings/default-display", "the lab's default display", None, {}),
    ("put", "/api/settings/default-display", "choose the default display",
     {"type": "object", "properties": {"display": {}}}, {}),
    ("get", "/api/settings/photometry-criterion", "the lab's flicker-photometry reliability criterion", None, {}),
    ("put", "/api/settings/photometry-criterion", "set the reliability criterion",
     {"type": "object", "properties": {"min_settings": {}, "max_ratio_sd": {}},
      "required": ["min_settings", "max_ratio_sd"]}, {}),
    ("get", "/api/paradigms", "the paradigm templates a new protocol can start from", None, {}),
    ("post", "/api/protocols", "a new protocol file from a paradigm template or a given protocol",
     {"type": "object", "properties": {"name": {}, "paradigm": {}, "title": {}, "protocol": {}}}, {}),
    ("post", "/api/protocols/{name}/duplicate", "copy a protocol file under a new name",
     {"type": "object", "properties": {"new_name": {}}}, {}),
    ("post", "/api/protocols/{name}/rename", "rename a protocol file",
     {"type": "object", "properties": {"new_name": {}, "base_sha256": {}}}, {}),
    ("delete", "/api/protocols/{name}", "move a protocol file to the trash", None, {}),
    ("get", "/api/protocol-trash", "protocol files in the trash", None, {}),
    ("post", "/api/protocol-trash/{entry}/restore", "restore a protocol file from the trash",
     {"type": "object", "properties": {"new_name": {}}}, {}),
    ("get", "/api/studies/{name}", "a study: every session of one protocol, pooled", None, {}),
]


def _parameters(path: str, query: dict) -> list[dict]:
    names = [part[1:-1] for part in path.split("/") if part.startswith("{")]
    parameters = [{"name": n, "in": "path", "required": True,
                   "schema": {"type": "string"} if n in ("name", "participant", "entry") else
                   ({"type": "integer", "minimum": 0} if n == "step" else ID)} for n in names]
    parameters += [{"name": n, "in": "query", "required": False, "schema": s} for n, s in query.items()]
    return parameters


def openapi_document() -> dict:
    """The OpenAPI 3.1 document for every ``/api/`` route."""
    paths: dict = {}
    for method, path, summary, body, query in ROUTES:
        operation = {"summary": summary, "parameters": _parameters(path, query), "responses": {
            "200": {"description": "done", "content": {"application/json": {"schema": ANY_OBJECT}}},
            "201": {"description": "created", "content": {"application/json": {"schema": ANY_OBJECT}}},
            **{code: {"description": text, "content": {"application/json": {"schema": {"$ref": "#/components/schemas/Error"}}}}
               for code, text in (("400", "bad input, naming the field"), ("401", "access token needed"),
                                  ("403", "refused (CSRF, run token or host)"), ("404", "not found"),
                                  ("405", "method not allowed"), ("409", "conflict with what is stored"),
                                  ("413", "too large"))}}}
        if body is not None:
            operation["requestBody"] = {"required": True, "content": {"application/json": {"schema": body}}}
        paths.setdefault(path, {})[method] = operation
    return {"openapi": "3.1.0", "info": {"title": "stimlab", "version": __version__,
                                         "description": "The local API of the stimlab web app. State-changing "
                                                        "requests carry X-CSRF-Token (or a runner's X-Run-Token)."},
            "paths": paths, "components": {"schemas": {"Error": ERROR}}}
