"""The ``stimlab`` command: build and inspect display profiles, convert colours, audit protocols, serve the app.

Exit status: 0 on success, 1 when an audit finds a failure, 2 on bad input (one line naming the file, row or
field and the fix).
"""

from __future__ import annotations

import os
import sys
from pathlib import Path

from ..errors import InputError
from ..version import __version__
from .arguments import Parser, check_paths, numbers

__all__ = ["main", "build_parser", "explain"]

# Options that name a file or folder: a message about that file names the option too.
PATH_OPTIONS = {"spectra": "--spectra", "transfer": "--transfer", "black": "--black", "display": "--display",
                "data": "--data", "output": "-o/--output"}


def _dest(option: str) -> str:
    return option.split("/")[-1].lstrip("-").replace("-", "_")


def _named(args, filename) -> str:
    """``filename``, after the option that gave it (or the folder or name it was written beside)."""
    for dest, flag in PATH_OPTIONS.items():
        value = getattr(args, dest, None)
        if value is not None and filename is not None and (
                str(filename) == str(value) or str(filename).startswith(str(Path(value).with_suffix("")))):
            return f"{flag} {filename}"
    return str(filename)


def explain(error: InputError, args) -> str:
    """The one-line message for bad input found past the parser, naming the option the person typed.

    Below the command line, the profile and protocol code names a field by its own name (``measured_on``,
    ``size_cm``); each command lists in ``options`` which option gives that field, so the message says
    ``--measured-on``. A message about a file given with an option (a CSV row, a profile field) says the option
    before the file.
    """
    positional = {str(getattr(args, dest, None)) for dest in ("protocol", "profile")}
    for dest, flag in PATH_OPTIONS.items():
        value = getattr(args, dest, None)
        if error.file and error.file not in positional and value is not None and str(value) == error.file:
            return f"{flag} {error}"  # "--spectra one.csv row 2, column 'red': …"
    options = getattr(args, "options", {})
    key = (error.field or "").split("[")[0]
    option = options.get(key) if error.row is None else None
    if option:
        value = getattr(args, _dest(option), None) if _dest(option) in PATH_OPTIONS else None
        head = f"{option} {value}" if value else option
        if error.message.startswith(key + " ") and not key.isalpha():  # "measured_on must be …"
            return f"{head}: {error.message[len(key) + 1:]}"
        return f"{head}: {error.message}"
    if error.field and error.field.isupper() and not error.file:  # a positional argument such as SESSION
        return f"{error.field}: {error.message}"
    return str(error)


def build_parser() -> Parser:
    from . import convert_cmd, display_cmd, export_cmd, protocol_cmd, serve_cmd

    parser = Parser(
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
    try:
        args = parser.parse_args(argv)
        check_paths(parser, args)
    except SystemExit as stop:  # --help, --version, or a bad option already reported in one line
        return stop.code if isinstance(stop.code, int) else 2
    try:
        return int(args.run(args) or 0)
    except BrokenPipeError:
        # The reader stopped early (``stimlab convert --json | head``): not an error of ours. Python's own advice
        # (signal docs, "Note on SIGPIPE"): point stdout at devnull so the flush at exit cannot raise again.
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        return 0
    except IsADirectoryError as error:
        print(f"stimlab: error: {_named(args, error.filename)}: is a folder; give a file name (for -o/--output, the "
              "file to write)", file=sys.stderr)
        return 2
    except PermissionError as error:
        print(f"stimlab: error: {_named(args, error.filename)}: permission denied; choose a file or folder you may "
              "read or write", file=sys.stderr)
        return 2
    except OSError as error:
        where = f"{_named(args, error.filename)}: " if error.filename else ""
        print(f"stimlab: error: {where}{error.strerror or error}; check the path and that the disk has room",
              file=sys.stderr)
        return 2
    except InputError as error:
        print(f"stimlab: error: {explain(error, args)}", file=sys.stderr)
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
