"""Guards for a local app: loopback Host names only (against DNS rebinding), and a CSRF token on every
state-changing request.

A runner page writes its own session's log with that session's *run token* instead: an HMAC of the session
number under the app's secret key, given only to the runner page, sent in ``X-Run-Token`` without cookies. It
guards against cross-site requests as the CSRF token does (a foreign page cannot read it), it can write to that
one session only, and it spares every log batch the signed-cookie session.
"""

from __future__ import annotations

import hashlib
import hmac
import secrets

from flask import Flask, current_app, request, session
from flask.sessions import SecureCookieSessionInterface

from .errors import WebError

__all__ = ["install_guards", "install_access_token", "ACCESS_COOKIE",
           "csrf_token", "run_token", "runner_writes", "RUN_TOKEN_HEADER", "LOOPBACK_NAMES"]

LOOPBACK_NAMES = {"127.0.0.1", "localhost", "::1"}
SAFE_METHODS = {"GET", "HEAD", "OPTIONS"}
RUN_TOKEN_HEADER = "X-Run-Token"
ACCESS_COOKIE = "stimlab_access"
ACCESS_HEADER = "X-Access-Token"


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


def run_token(session_id: int) -> str:
    """The token that lets a runner page write to session ``session_id``."""
    key = current_app.secret_key.encode()
    return hmac.new(key, f"stimlab run {session_id}".encode(), hashlib.sha256).hexdigest()


def runner_writes(view):
    """Mark a view on ``/…/<session_id>/…`` that takes the session's run token in place of the CSRF token."""
    view.runner_writes = True
    return view


def _run_token_valid(view) -> bool | None:
    """True or False when a runner view got a run token; None when there is none to check."""
    sent = request.headers.get(RUN_TOKEN_HEADER)
    if sent is None or not getattr(view, "runner_writes", False):
        return None
    session_id = (request.view_args or {}).get("session_id")
    return session_id is not None and hmac.compare_digest(sent, run_token(session_id))


class CookieSessions(SecureCookieSessionInterface):
    """Flask's signed-cookie sessions, with the signing serializer built once per key instead of per request."""

    def get_signing_serializer(self, app: Flask):
        key = (app.secret_key, tuple(app.config["SECRET_KEY_FALLBACKS"] or ()))
        cached = getattr(self, "_cached", None)
        if cached is None or cached[0] != key:
            cached = self._cached = (key, super().get_signing_serializer(app))
        return cached[1]


def install_guards(app: Flask, allowed_hosts: set[str]) -> None:
    app.session_interface = CookieSessions()
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
        by_runner = _run_token_valid(app.view_functions.get(request.endpoint))
        if by_runner is not None:
            if not by_runner:
                raise WebError("this run token is not the one for this session; reopen the session's runner page",
                               "Forbidden", 403, field=RUN_TOKEN_HEADER)
            return
        sent = request.headers.get("X-CSRF-Token") or request.form.get("csrf_token", "")
        expected = session.get("csrf")
        if not expected or not sent or not hmac.compare_digest(sent, expected):
            raise WebError("this request carried no valid CSRF token; reload the page and try again", "Forbidden",
                           403, field="csrf_token")

    app.jinja_env.globals.update(csrf_token=csrf_token, run_token=run_token)


def install_access_token(app: Flask, token: str) -> None:
    """Require ``token`` on every request: bound beyond loopback, a Host header proves nothing.

    A person opens ``/access?token=…`` once (the address ``stimlab serve`` prints); the token is then kept in an
    HttpOnly cookie. Scripts send it in ``X-Access-Token``.
    """
    from flask import redirect

    expected = token.encode()

    def holds(value) -> bool:
        return bool(value) and hmac.compare_digest(value.encode(), expected)

    @app.before_request
    def check_access():
        if request.path == "/access":
            if not holds(request.args.get("token", "")):
                raise WebError("open the address that 'stimlab serve' printed when it started (it ends in "
                               "/access?token=…); this token is not the one", "Access token needed", 401,
                               field="token")
            response = redirect("/", 303)
            response.set_cookie(ACCESS_COOKIE, token, httponly=True, samesite="Strict")
            return response
        if holds(request.cookies.get(ACCESS_COOKIE, "")) or holds(request.headers.get(ACCESS_HEADER, "")):
            return None
        raise WebError("this stimlab is reachable from other computers and asks for its access token: open the "
                       "address 'stimlab serve' printed when it started (…/access?token=…) once in this browser",
                       "Access token needed", 401, field="token")
