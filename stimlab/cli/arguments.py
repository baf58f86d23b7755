"""Argument types and the parser shared by the commands.

Every value a person types is checked here, before any work starts, so that a bad one is refused in one line that
names the option and says what to give instead (exit status 2). Paths are checked too: an input file must exist
and be a file, an output's folder must exist, a data folder must hold the database.
"""

from __future__ import annotations

import argparse
import datetime as dt
import ipaddress
import math
import os
import re
from pathlib import Path

import numpy as np

__all__ = ["OBSERVER_HELP", "Parser", "check_paths", "numbers", "whole", "number", "participant", "date",
           "input_file", "output_path", "data_folder", "host", "text"]

# A number, or a comma/semicolon list of them, that starts with a minus sign: a value, not an option
# (``--dkl -0.05,0,0``). argparse's own pattern only knows single numbers like ``-1`` and ``-.5``.
_NEGATIVE = re.compile(r"^-(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?([,;]\s*[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?)*[,;]?$")
_PARTICIPANT_CODE = re.compile(r"^[A-Za-z0-9_-]{1,32}$")
_HOSTNAME = re.compile(r"^(?=.{1,253}$)[A-Za-z0-9]([A-Za-z0-9-]{0,61}[A-Za-z0-9])?(\.[A-Za-z0-9]([A-Za-z0-9-]{0,61}"
                       r"[A-Za-z0-9])?)*$")
MAX_PARTICIPANT = 1_000_000


class Parser(argparse.ArgumentParser):
    """An argument parser whose errors are one line (with a pointer to ``--help``), and that takes
    ``--dkl -0.05,0,0`` as a value rather than an unknown option."""

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        self._negative_number_matcher = _NEGATIVE

    def error(self, message: str):
        message = message.removeprefix("argument ")
        self.exit(2, f"{self.prog}: error: {message} (see '{self.prog} --help')\n")


def _shown(text: str) -> str:
    """The value as typed, quoted and cut short (a 5,000-digit number is refused, not echoed)."""
    return repr(text[:30] + ("…" if len(text) > 30 else ""))


def numbers(count: int, *, integer: bool = False, positive: bool = False, high: float | None = None):
    """An argparse type for ``count`` comma-separated finite numbers (whole, above zero or at most ``high``, where
    asked)."""
    kind = ("whole numbers" if integer else "numbers") + (" above 0" if positive else "")
    kind += f" up to {high:g}" if high is not None else ""

    def parse(text: str):
        parts = [p for p in text.replace(";", ",").split(",") if p.strip()]
        try:
            values = [float(p) for p in parts]
        except ValueError:
            raise argparse.ArgumentTypeError(f"{_shown(text)} is not {count} comma-separated {kind}") from None
        if len(values) != count:
            raise argparse.ArgumentTypeError(f"{_shown(text)} has {len(values)} number"
                                             f"{'' if len(values) == 1 else 's'}; give {count} {kind}, "
                                             "comma-separated")
        if not all(np.isfinite(values)):
            raise argparse.ArgumentTypeError(f"{_shown(text)} contains NaN or infinity; give {count} finite {kind}")
        if (positive and min(values) <= 0) or (high is not None and max(values) > high):
            raise argparse.ArgumentTypeError(f"{_shown(text)} is out of range; give {count} {kind}")
        if integer:
            if not all(p.strip().lstrip("+-").isdigit() for p in parts):  # 1.5 or 1e3: not typed as a count
                raise argparse.ArgumentTypeError(f"{_shown(text)} is not whole; give {count} {kind}, in digits")
            values = [int(v) for v in values]
        return values

    parse.__name__ = f"{count} {kind}"
    return parse


def whole(low: int, high: int):
    """An argparse type for a whole number from ``low`` to ``high``, written in digits."""

    def parse(text: str):
        text = text.strip()
        digits = text[1:] if text[:1] in "+-" else text
        if not digits.isdigit() or len(digits) > 19:
            hint = ""
            try:
                value = float(text)
                if math.isfinite(value) and value.is_integer() and low <= value <= high:
                    hint = f" (write it in digits: {int(value)})"
            except ValueError:
                pass
            raise argparse.ArgumentTypeError(f"{_shown(text)} is not a whole number; give one from {low} to "
                                             f"{high}{hint}")
        value = int(text)
        if not low <= value <= high:
            raise argparse.ArgumentTypeError(f"{value} is out of range; give a whole number from {low} to {high}")
        return value

    parse.__name__ = "whole number"
    return parse


def number(low: float, high: float, unit: str):
    """An argparse type for a finite number from ``low`` to ``high`` (in ``unit``)."""

    def parse(text: str):
        try:
            value = float(text)
        except ValueError:
            value = None
        if value is None or not math.isfinite(value) or not low <= value <= high:
            raise argparse.ArgumentTypeError(f"{_shown(text)} is not a number from {low:g} to {high:g} {unit}; "
                                             f"give one in that range")
        return value

    parse.__name__ = "number"
    return parse


def participant(text: str) -> int:
    """A participant's Latin-square row from a number (``3``) or a pseudonymous code (``P07``).

    A code gives its last digits, as the web app's Run page does, so that ``--participant P07`` audits the order
    participant P07 sees there; a code without digits gives row 1. Anything that reads as a number (``1e3``,
    ``1.5``, ``0``, ``-2``) must be a whole number from 1 to 1,000,000 written in digits.

    Examples
    --------
    >>> participant("3"), participant("P07"), participant("vs-anna")
    (3, 7, 1)
    """
    text = text.strip()
    form = (f"give a participant number from 1 to {MAX_PARTICIPANT} or a code such as P07 (letters, digits, "
            "'-' or '_', at most 32)")
    try:
        float(text)
    except ValueError:
        if not _PARTICIPANT_CODE.match(text):
            raise argparse.ArgumentTypeError(f"{_shown(text)} is not a participant; {form}") from None
        digits = re.findall(r"\d+", text)
        return int(digits[-1][-6:]) if digits else 1
    if not text.isdigit() or len(text) > 7 or not 1 <= int(text) <= MAX_PARTICIPANT:
        raise argparse.ArgumentTypeError(f"{_shown(text)} is not a participant; {form}")
    return int(text)


participant.__name__ = "participant"


def date(text: str) -> str:
    """A calendar date ``YYYY-MM-DD``, not after today."""
    text = text.strip()
    try:
        day = dt.date.fromisoformat(text)
    except ValueError:
        day = None
    if day is None or not re.fullmatch(r"\d{4}-\d{2}-\d{2}", text):
        raise argparse.ArgumentTypeError(f"{_shown(text)} is not a date; give YYYY-MM-DD, e.g. "
                                         f"{dt.date.today().isoformat()}")
    if day > dt.date.today():
        raise argparse.ArgumentTypeError(f"{text} is in the future; give the day the measurements were made")
    return text


date.__name__ = "date"


def text(what: str, limit: int = 200, blank: bool = False):
    """An argparse type for text of at most ``limit`` characters (not blank, unless ``blank``)."""

    def parse(value: str):
        if not value.strip() and not blank:
            raise argparse.ArgumentTypeError(f"give {what} (it cannot be blank)")
        if len(value.strip()) > limit:
            raise argparse.ArgumentTypeError(f"{_shown(value)} is {len(value.strip())} characters long; give {what} "
                                             f"in at most {limit}")
        return value.strip()

    parse.__name__ = "text"
    return parse


class _PathCheck:
    """An argparse type for a path, checked by :func:`check_paths` once every value has been read (so that a
    mistyped number is reported even when a file is missing too, and a path is looked at only once)."""

    def __init__(self, check, name: str):
        self.check = check
        self.__name__ = name

    def __call__(self, value: str):
        return value


def check_paths(parser: argparse.ArgumentParser, args) -> None:
    """Check every path the chosen command was given; a bad one is reported as a parser error (exit status 2)."""
    for action in parser._actions:
        if isinstance(action, argparse._SubParsersAction):
            chosen = getattr(args, action.dest, None)
            if chosen in action.choices:
                check_paths(action.choices[chosen], args)
            continue
        value = getattr(args, action.dest, None)
        if isinstance(action.type, _PathCheck) and value is not None:
            try:
                converted = action.type.check(value)
            except argparse.ArgumentTypeError as error:
                parser.error(f"{'/'.join(action.option_strings) or action.metavar}: {error}")
            setattr(args, action.dest, converted)


def input_file(what: str):
    """An argparse type for a file to read: it must exist, be a file and not be empty."""

    def parse(value: str) -> str:
        path = Path(value)
        if not value.strip():
            raise argparse.ArgumentTypeError(f"give the path of the {what}")
        if path.is_dir():
            raise argparse.ArgumentTypeError(f"{value} is a folder; give the {what} inside it")
        if not path.exists():
            raise argparse.ArgumentTypeError(f"{value}: file not found; check the path of the {what}")
        if not os.access(path, os.R_OK):
            raise argparse.ArgumentTypeError(f"{value} cannot be read (permission denied); give a {what} you may "
                                             "read")
        if path.is_file() and path.stat().st_size == 0:
            raise argparse.ArgumentTypeError(f"{value} is empty; give the {what}")
        return value

    return _PathCheck(parse, "file")


def output_path(what: str, folder_ok: bool = False):
    """An argparse type for a path to write: its folder must exist and be writable; unless ``folder_ok``, the
    path itself must not be a folder."""

    def parse(value: str) -> str:
        if not value.strip():
            raise argparse.ArgumentTypeError(f"give the path of the {what} to write")
        path = Path(value)
        parent = path.parent
        if path.is_dir() and not folder_ok:
            raise argparse.ArgumentTypeError(f"{value} is a folder; give a file name inside it for the {what}")
        if not parent.exists():
            raise argparse.ArgumentTypeError(f"the folder {parent} does not exist; create it first or write the "
                                             f"{what} somewhere else")
        if not parent.is_dir():
            raise argparse.ArgumentTypeError(f"{parent} is a file, not a folder; give a path inside a folder")
        if not os.access(parent, os.W_OK | os.X_OK):
            raise argparse.ArgumentTypeError(f"the folder {parent} is not writable; write the {what} somewhere "
                                             "else")
        if path.exists() and not path.is_dir() and not os.access(path, os.W_OK):
            raise argparse.ArgumentTypeError(f"{value} is read-only; write the {what} somewhere else")
        return value

    return _PathCheck(parse, "path")


def data_folder(*, create: bool = False):
    """An argparse type for the data folder of ``stimlab serve``.

    With ``create`` (``serve``), a folder that does not exist yet is made on first use, but its parent must exist;
    otherwise the folder must exist and already hold the database ``stimlab.sqlite``.
    """

    def parse(value: str) -> Path:
        path = Path(value)
        if not value.strip():
            raise argparse.ArgumentTypeError("give the data folder's path")
        if path.exists() and not path.is_dir():
            raise argparse.ArgumentTypeError(f"{value} is a file; give the data folder (the one 'stimlab serve' "
                                             "uses)")
        if create:
            if not path.exists() and not path.parent.is_dir():
                raise argparse.ArgumentTypeError(f"the folder {path.parent} does not exist; create it first, or give "
                                                 "an existing folder")
            return path
        if not path.exists():
            raise argparse.ArgumentTypeError(f"the folder {value} does not exist; give the data folder 'stimlab "
                                             "serve' uses")
        if not (path / "stimlab.sqlite").is_file():
            raise argparse.ArgumentTypeError(f"{value} holds no stimlab database (stimlab.sqlite); give the data "
                                             "folder 'stimlab serve' uses")
        return path

    return _PathCheck(parse, "folder")


def host(value: str) -> str:
    """An address to bind: an IPv4 or IPv6 address or a host name."""
    value = value.strip()
    try:
        ipaddress.ip_address(value)
        return value
    except ValueError:
        pass
    if not _HOSTNAME.match(value):
        raise argparse.ArgumentTypeError(f"{_shown(value)} is not an address; give an IP address such as "
                                         "127.0.0.1 or 0.0.0.0, or a host name")
    return value


host.__name__ = "address"



OBSERVER_HELP = ("observer: ss2 or ss10 (Stockman–Sharpe 2° or 10°, CIE 170-2:2015), sp (Smith–Pokorny 2°) "
                 "(default ss2)")
