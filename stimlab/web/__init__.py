"""The local web app: a thin Flask layer over the colour core, the protocol audit and the SQLite store."""

from __future__ import annotations

import secrets

from flask import Flask, g, redirect, url_for

from ..assets import asset_folder
from ..sessions.store import Store
from ..version import __version__
from .errors import register_error_handlers
from .security import install_access_token, install_guards
from .strict import BoundedInt, StrictJSONProvider

__all__ = ["create_app", "MAX_UPLOAD_BYTES"]

MAX_UPLOAD_BYTES = 5 * 1024 * 1024
SECURITY_HEADERS = (
    ("X-Content-Type-Options", "nosniff"),
    ("X-Frame-Options", "DENY"),
    ("Referrer-Policy", "no-referrer"),
    ("Content-Security-Policy", "default-src 'self'; img-src 'self' data:; style-src 'self'; script-src 'self'; "
                                "connect-src 'self'; frame-ancestors 'none'"),
)


def _secret(store: Store) -> str:
    path = store.root / "secret_key"
    if not path.exists():
        path.write_text(secrets.token_hex(32))
        path.chmod(0o600)
    return path.read_text().strip()


class _App(Flask):
    json_provider_class = StrictJSONProvider


def create_app(data_dir, *, allowed_hosts: set[str] | None = None, testing: bool = False,
               access_token: str | None = None) -> Flask:
    """Build the app on a data folder (created if missing).

    Parameters
    ----------
    data_dir
        Folder for the SQLite database and the protocol files.
    allowed_hosts
        Host names accepted besides the loopback names (the address given to ``--host``).
    access_token
        When set, every request must carry it (see :func:`~stimlab.web.security.install_access_token`); ``stimlab
        serve`` sets one whenever it listens beyond loopback.
    """
    store = Store(data_dir)
    app = _App("stimlab", template_folder=str(asset_folder("templates")),
                static_folder=str(asset_folder("static")))
    app.url_map.converters["int"] = BoundedInt
    app.config.update(SECRET_KEY=_secret(store), MAX_CONTENT_LENGTH=MAX_UPLOAD_BYTES, TESTING=testing,
                      SESSION_COOKIE_SAMESITE="Strict", SESSION_COOKIE_HTTPONLY=True,
                      TEMPLATES_AUTO_RELOAD=False)
    # Protocols keep the order their authors wrote them in, in the API and in the editor page.
    app.json.sort_keys = False
    app.jinja_env.policies["json.dumps_kwargs"] = {"sort_keys": False}
    app.extensions["stimlab.store"] = store
    app.extensions["stimlab.audit_cache"] = {}
    from ..experiment.protocol import enum_for

    app.jinja_env.globals.update(version=__version__, enum_for=enum_for)
    if access_token:
        install_access_token(app, access_token)
    install_guards(app, allowed_hosts or set())
    register_error_handlers(app)

    @app.before_request
    def open_db():
        g.db = store.request_connection()

    @app.after_request
    def headers(response):
        present = {name.lower() for name, _ in response.headers.items()}
        response.headers.extend((name, value) for name, value in SECURITY_HEADERS if name.lower() not in present)
        return response

    from . import adjustments, calibrations, displays, protocols, runs, sessions

    app.register_blueprint(calibrations.blueprint)
    app.register_blueprint(runs.blueprint)
    app.register_blueprint(displays.blueprint)
    app.register_blueprint(protocols.blueprint)
    app.register_blueprint(sessions.blueprint)
    app.register_blueprint(adjustments.blueprint)

    @app.get("/")
    def home():
        return redirect(url_for("protocols.index"))

    @app.get("/api/openapi.json")
    def api_openapi():
        from .openapi import openapi_document

        return openapi_document()

    @app.get("/api/")
    def api_index():
        return {"stimlab": __version__, "endpoints": sorted(str(r) for r in app.url_map.iter_rules()
                                                             if str(r).startswith("/api/"))}

    return app


def current_store() -> Store:
    from flask import current_app

    return current_app.extensions["stimlab.store"]
