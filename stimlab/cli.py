"""The ``stimlab`` command: build and inspect display profiles, convert colours, audit protocols, serve the app.

Exit status: 0 on success, 1 when an audit finds a failure, 2 on bad input (one line naming the file, row or
field and the fix).
"""

from __future__ import annotations

import argparse
import json
import os
import sys

import numpy as np

from . import __version__
from .errors import InputError

__all__ = ["main", "build_parser"]


def numbers(count: int):
    """An argparse type for ``count`` comma-separated numbers."""

    def parse(text: str):
        parts = [p for p in text.replace(";", ",").split(",") if p.strip()]
        try:
            values = [float(p) for p in parts]
        except ValueError:
            raise argparse.ArgumentTypeError(f"{text!r} is not {count} comma-separated numbers") from None
        if len(values) != count:
            raise argparse.ArgumentTypeError(f"{text!r} has {len(values)} numbers; give {count}, comma-separated")
        if not all(np.isfinite(values)):
            raise argparse.ArgumentTypeError(f"{text!r} contains NaN or infinity")
        return values

    parse.__name__ = f"{count} numbers"
    return parse


def build_parser() -> argparse.ArgumentParser:
    from .commands import convert_cmd, display_cmd, export_cmd, protocol_cmd, serve_cmd

    parser = argparse.ArgumentParser(
        prog="stimlab",
        description="Cone-space stimuli mapped to the exact RGB of one calibrated display.",
        epilog="Exit status: 0 ok, 1 an audit failed, 2 bad input.",
    )
    parser.add_argument("--version", action="version", version=f"stimlab {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", required=True)
    display_cmd.register(sub, numbers)
    convert_cmd.register(sub, numbers)
    protocol_cmd.register(sub, numbers)
    serve_cmd.register(sub, numbers)
    export_cmd.register(sub, numbers)
    return parser


def main(argv=None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        return int(args.run(args) or 0)
    except InputError as error:
        print(f"stimlab: error: {error}", file=sys.stderr)
        return 2
    except ValueError as error:
        print(f"stimlab: error: {error}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        return 130
    except Exception as error:  # a bug, not bad input: say so in one line unless asked for the traceback
        if os.environ.get("STIMLAB_DEBUG"):
            raise
        print(f"stimlab: internal error: {type(error).__name__}: {error} (set STIMLAB_DEBUG=1 for details)",
              file=sys.stderr)
        return 3


def print_json(data) -> None:
    print(json.dumps(data, indent=2, allow_nan=False))


if __name__ == "__main__":
    sys.exit(main())
