"""Guards for a local app: loopback Host names only (against DNS rebinding), and a CSRF token on every
state-changing request."""

from __future__ import annotations

import hmac
import secrets

from flask import Flask, request, session

from .errors import WebError

__all__ = ["install_guards", "csrf_token", "LOOPBACK_NAMES"]

LOOPBACK_NAMES = {"127.0.0.1", "localhost", "::1"}
SAFE_METHODS = {"GET", "HEAD", "OPTIONS"}


def _hostname(host: str) -> str:
    host = host.strip().lower()
    if host.startswith("["):
        return host[1:host.index("]")] if "]" in host else host
    return host.rsplit(":", 1)[0] if host.count(":") == 1 else host


def csrf_token() -> str:
    """This browser session's token (made on first use), for forms and the X-CSRF-Token header."""
    if "csrf" not in session:
        session["csrf"] = secrets.token_urlsafe(32)
    return session["csrf"]


def install_guards(app: Flask, allowed_hosts: set[str]) -> None:
    allowed = {h.lower() for h in allowed_hosts} | LOOPBACK_NAMES

    @app.before_request
    def check_host():
        if _hostname(request.host) not in allowed:
            raise WebError(f"requests for host {request.host!r} are refused: stimlab answers only to "
                           f"{', '.join(sorted(allowed))} (protection against DNS rebinding)", "Forbidden", 403)

    @app.before_request
    def check_csrf():
        if request.method in SAFE_METHODS:
            return
        sent = request.headers.get("X-CSRF-Token") or request.form.get("csrf_token", "")
        expected = session.get("csrf")
        if not expected or not sent or not hmac.compare_digest(sent, expected):
            raise WebError("this request carried no valid CSRF token; reload the page and try again", "Forbidden",
                           403, field="csrf_token")

    app.jinja_env.globals["csrf_token"] = csrf_token
