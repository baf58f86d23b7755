"""``stimlab serve``: the local web app."""

from __future__ import annotations

import secrets
import sys
from pathlib import Path

from ..errors import InputError
from ..version import __version__


def register(sub, numbers) -> None:
    from ..sessions.store import default_data_dir

    serve = sub.add_parser("serve", help="start the local web app")
    serve.add_argument("--host", default="127.0.0.1", help="address to bind (default 127.0.0.1, this computer only)")
    serve.add_argument("--port", type=int, default=8150, help="port (default 8150)")
    serve.add_argument("--data", type=Path, default=None, metavar="DIR",
                       help=f"data folder for the database and protocol files (default {default_data_dir()})")
    serve.add_argument("--demo", action="store_true",
                       help="add the demo display and protocols to the data folder if they are missing")
    serve.set_defaults(run=run)


def run(args) -> int:
    from ..sessions.store import default_data_dir
    from ..web import create_app
    from ..web.server import serve

    if not 1 <= args.port <= 65535:
        raise InputError(f"{args.port} is not a port; use 1–65535", field="--port")
    data = args.data or default_data_dir()
    shown = f"[{args.host}]" if ":" in args.host else args.host
    token = None
    if args.host not in ("127.0.0.1", "localhost", "::1"):
        token = secrets.token_urlsafe(18)
        print("!" * 78, file=sys.stderr)
        print(f"Binding {args.host} makes stimlab reachable from other computers. Every browser must open this\n"
              f"address once (it keeps the access token in a cookie):\n\n"
              f"    http://{shown}:{args.port}/access?token={token}\n\n"
              "Anyone with the token can read and change displays, protocols and session data; a new token is made\n"
              "each time stimlab starts. Use the default 127.0.0.1 unless other computers need it.", file=sys.stderr)
        print("!" * 78, file=sys.stderr)
    app = create_app(data, allowed_hosts={args.host}, access_token=token)
    if args.demo:
        from ..profiles.demo import install_demo

        added = install_demo(app.extensions["stimlab.store"])
        if added:
            print(f"added demo data: {', '.join(added)}")
    print(f"stimlab {__version__}: data in {data}")
    print(f"open http://{shown}:{args.port}/ in a browser (Ctrl+C stops)")
    sys.stdout.flush()
    serve(app, args.host, args.port)
    return 0
