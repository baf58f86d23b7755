"""``stimlab serve``: the local web app."""

from __future__ import annotations

import secrets
import socket
import sys

from ..errors import InputError
from ..version import __version__
from .arguments import data_folder, host, whole


def register(sub, numbers) -> None:
    from ..sessions.store import default_data_dir

    serve = sub.add_parser("serve", help="start the local web app")
    serve.add_argument("--host", default="127.0.0.1", type=host, metavar="ADDR",
                       help="address to bind (default 127.0.0.1, this computer only)")
    serve.add_argument("--port", type=whole(1, 65535), default=8150, metavar="N",
                       help="TCP port, 1 to 65535 (default 8150)")
    serve.add_argument("--data", type=data_folder(create=True), default=None, metavar="DIR",
                       help="data folder for the database and protocol files, made on first use if its parent "
                            f"exists (default {default_data_dir()})")
    serve.add_argument("--demo", action="store_true",
                       help="add the demo display and protocols to the data folder if they are missing")
    serve.set_defaults(run=run)


def run(args) -> int:
    from ..sessions.store import default_data_dir
    from ..web import create_app
    from ..web.server import serve

    try:  # a host name that does not resolve would otherwise fail only after the app and the token are made
        socket.getaddrinfo(args.host, args.port, type=socket.SOCK_STREAM)
    except OSError:
        raise InputError(f"{args.host!r} is not an address of this computer's network (the name does not "
                         "resolve); give an IP address such as 127.0.0.1 or 0.0.0.0", field="--host") from None
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
