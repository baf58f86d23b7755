"""Serve the app with waitress, a maintained production WSGI server (pure Python, so the same on Windows, macOS
and Linux), with a fixed pool of worker threads; each thread keeps one SQLite connection for its whole life
(:meth:`stimlab.sessions.store.Store.request_connection`)."""

from __future__ import annotations

from flask import Flask

from ..errors import InputError

__all__ = ["serve", "make_server", "THREADS"]

THREADS = 8  # four runners posting once a second and a few pages need far fewer; a fixed pool bounds memory


def make_server(app: Flask, host: str, port: int, threads: int = THREADS):
    """A waitress server listening on ``host:port`` (not yet serving); :class:`InputError` when it cannot listen."""
    from waitress.server import create_server

    try:
        return create_server(app, host=host, port=port, threads=threads, ident="stimlab",
                             # runner batches are small; a large body is refused by Flask's MAX_CONTENT_LENGTH
                             channel_timeout=60, clear_untrusted_proxy_headers=True)
    except OSError as error:
        raise InputError(f"cannot listen on {host}:{port} ({error.strerror}); is stimlab already running there? "
                         "Choose another port", field="--port") from None


def serve(app: Flask, host: str, port: int) -> None:
    """Listen on ``host:port`` and answer requests until Ctrl+C."""
    server = make_server(app, host, port)
    try:
        server.run()
    except KeyboardInterrupt:
        print("stopped")
    finally:
        server.close()
