"""The ``stimlab`` command: build and inspect display profiles, convert colours, audit protocols, serve the app.

Exit status: 0 on success, 1 when an audit finds a failure, 2 on bad input (one line naming the file, row or
field and the fix).
"""

from __future__ import annotations

import argparse
import os
import sys

from ..errors import InputError
from ..version import __version__
from .arguments import numbers

__all__ = ["main", "build_parser"]


def build_parser() -> argparse.ArgumentParser:
    from . import convert_cmd, display_cmd, export_cmd, protocol_cmd, serve_cmd

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
    except BrokenPipeError:
        # The reader stopped early (``stimlab convert --json | head``): not an error of ours. Python's own advice
        # (signal docs, "Note on SIGPIPE"): point stdout at devnull so the flush at exit cannot raise again.
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        return 0
    except IsADirectoryError as error:
        print(f"stimlab: error: {error.filename}: is a folder; give a file name (for -o/--output, the file to "
              "write)", file=sys.stderr)
        return 2
    except PermissionError as error:
        print(f"stimlab: error: {error.filename}: permission denied; choose a file you may read or write",
              file=sys.stderr)
        return 2
    except OSError as error:
        where = f"{error.filename}: " if error.filename else ""
        print(f"stimlab: error: {where}{error.strerror or error}; check the path", file=sys.stderr)
        return 2
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
