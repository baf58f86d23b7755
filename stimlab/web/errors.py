"""One error type and one error shape for the web layer.

Under ``/api/`` every error is JSON ``{"error": {"status", "title", "message", "field", "file", "row"}}``;
elsewhere it is an HTML page with the same words. Low-level errors are translated into plain words with the fix.
"""

from __future__ import annotations

import logging

from flask import Flask, jsonify, render_template, request
from werkzeug.exceptions import HTTPException

from ..errors import ConflictError, InputError, NotFoundError

__all__ = ["BodyError", "NotFound", "WebError", "error_body", "register_error_handlers"]

log = logging.getLogger("stimlab.web")

PLAIN = {
    400: ("Bad request", "The request could not be read; check the form and try again."),
    401: ("Access token needed", "Open the address that 'stimlab serve' printed when it started."),
    403: ("Forbidden", "This request was refused."),
    404: ("Not found", "There is nothing at this address; check the link or go back to the list."),
    405: ("Method not allowed", "This address does not accept that kind of request."),
    409: ("Conflict", "The data changed since you loaded it; reload and try again."),
    413: ("Too large", "The upload is larger than stimlab accepts (5 MB); measurement files are much smaller, "
                       "so check that you chose the right file."),
    500: ("Internal error", "Something went wrong inside stimlab; nothing you had saved was changed. Please report "
                            "what you were doing."),
}


class WebError(Exception):
    """An error to show a person: a message with the fix, a short title, and an HTTP status."""

    def __init__(self, message: str, title: str | None = None, status: int = 400, *, field: str | None = None,
                 file: str | None = None, row: int | None = None):
        super().__init__(message)
        self.message = message
        self.title = title or PLAIN.get(status, ("Error",))[0]
        self.status = status
        self.field, self.file, self.row = field, file, row

    @classmethod
    def from_input(cls, error: InputError) -> "WebError":
        if isinstance(error, NotFoundError):
            return NotFound(str(error))
        if isinstance(error, ConflictError):
            return cls(str(error), "Conflict", 409, field=error.field, file=error.file)
        return cls(str(error), "Invalid input", 400, field=error.field, file=error.file, row=error.row)


class BodyError(Exception):
    """A request body that strict JSON refuses (:mod:`stimlab.web.strict`); carries the InputError that says why.

    Not a ValueError, so that ``get_json(silent=True)`` cannot swallow it."""

    def __init__(self, error: InputError):
        super().__init__(str(error))
        self.error = error


class NotFound(WebError):
    """Nothing at this address: a 404 with the message saying what was looked for and where to find it."""

    def __init__(self, message: str):
        super().__init__(message, "Not found", 404)


def error_body(error: WebError) -> dict:
    return {"error": {"status": error.status, "title": error.title, "message": error.message,
                      "field": error.field, "file": error.file, "row": error.row}}


def _respond(error: WebError):
    if request.path.startswith("/api/"):
        return jsonify(error_body(error)), error.status
    return render_template("error.html", error=error), error.status


def register_error_handlers(app: Flask) -> None:
    @app.errorhandler(WebError)
    def web_error(error):
        return _respond(error)

    @app.errorhandler(InputError)
    def input_error(error):
        return _respond(WebError.from_input(error))

    @app.errorhandler(BodyError)
    def body_error(error):
        return _respond(WebError.from_input(error.error))

    @app.errorhandler(RecursionError)
    def too_deep(error):
        return _respond(WebError("the request is nested too deeply to read; send a flatter document", status=400,
                                 field="body"))

    @app.errorhandler(HTTPException)
    def http_error(error):
        title, message = PLAIN.get(error.code, (error.name, error.description))
        return _respond(WebError(message, title, error.code or 500))

    @app.errorhandler(Exception)
    def unexpected(error):
        log.exception("unexpected error on %s %s", request.method, request.path)
        return _respond(WebError(PLAIN[500][1], PLAIN[500][0], 500))
