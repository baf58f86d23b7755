"""Serve the app over HTTP on one address until interrupted."""

from __future__ import annotations

from flask import Flask
from werkzeug.serving import make_server

from ..errors import InputError

__all__ = ["serve"]


def serve(app: Flask, host: str, port: int) -> None:
    """Listen on ``host:port`` and answer requests until Ctrl+C."""
    try:
        server = make_server(host, port, app, threaded=True)
    except OSError as error:
        raise InputError(f"cannot listen on {host}:{port} ({error.strerror}); is stimlab already running there? "
                         "Choose another port", field="--port") from None
    try:
        server.serve_forever()
    except KeyboardInterrupt:
        print("stopped")
