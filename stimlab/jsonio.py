"""Strict JSON: the one parser for files, request bodies and stored records.

Python's :mod:`json` accepts ``NaN``, ``Infinity`` and ``1e400`` (which becomes infinity), nests as deep as the
interpreter's stack allows, and passes lone UTF-16 surrogates (``"\\ud800"``) that cannot be written back as UTF-8.
JSON itself (RFC 8259, sections 6 and 8.2) has no non-finite numbers and requires Unicode text, so every such value
is refused here with the JSON path of the first one, before anything downstream can store or compute with it.
"""

from __future__ import annotations

import json
import math

from .errors import InputError

__all__ = ["loads", "dumps", "check_value", "MAX_DEPTH", "MAX_INT"]

MAX_DEPTH = 64  # protocols nest about 8 deep, profiles 5: far beyond any real document, far below the stack limit
MAX_INT = 2**63 - 1  # SQLite's INTEGER range; larger whole numbers cannot be stored or compared there


class _NonFinite(float):
    """A marker for a number that JSON cannot carry; found by :func:`check_value` with its path."""

    def __new__(cls, text):
        value = super().__new__(cls, "nan")
        value.text = text
        return value


def _parse_float(text: str):
    value = float(text)
    return value if math.isfinite(value) else _NonFinite(text)


def _path(parent: str, key) -> str:
    if isinstance(key, int):
        return f"{parent}[{key}]"
    return f"{parent}.{key}" if parent else str(key)


def check_value(value, path: str = "", *, file: str | None = None, depth: int = 0):
    """Refuse what strict JSON cannot hold: non-finite numbers, lone surrogates, out-of-range integers, deep nesting.

    Parameters
    ----------
    value
        A parsed JSON value (dicts, lists, str, int, float, bool, None).
    path
        The JSON path of ``value`` (``stimuli[2].colour``), used in the error.
    file
        The file it came from, if any.

    Returns
    -------
    The value, unchanged.

    Raises
    ------
    InputError
        Naming the path of the first offending value.

    Examples
    --------
    >>> check_value({"a": [1, 2.5]})
    {'a': [1, 2.5]}
    >>> check_value({"a": [1, float("nan")]})
    Traceback (most recent call last):
    stimlab.errors.InputError: at a[1]: NaN is not a number JSON allows; give a finite number
    """
    if depth > MAX_DEPTH:
        raise InputError(f"nested more than {MAX_DEPTH} levels deep; no stimlab document needs that", file=file,
                         field=path or None)
    if isinstance(value, bool) or value is None:
        return value
    if isinstance(value, float):
        if not math.isfinite(value):
            text = getattr(value, "text", None) or repr(value).replace("nan", "NaN").replace("inf", "Infinity")
            raise InputError(f"{text} is not a number JSON allows; give a finite number", file=file,
                             field=path or None)
        return value
    if isinstance(value, int):
        if not -MAX_INT - 1 <= value <= MAX_INT:
            raise InputError(f"a whole number of {len(str(abs(value)))} digits is out of range (at most "
                             f"{MAX_INT:,} in size)", file=file, field=path or None)
        return value
    if isinstance(value, str):
        _check_text(value, path, file)
        return value
    if isinstance(value, dict):
        for key, item in value.items():
            _check_text(str(key), path, file)
            check_value(item, _path(path, key), file=file, depth=depth + 1)
        return value
    if isinstance(value, (list, tuple)):
        for i, item in enumerate(value):
            check_value(item, _path(path, i), file=file, depth=depth + 1)
        return value
    raise InputError(f"a {type(value).__name__} is not a JSON value", file=file, field=path or None)


def _check_text(text: str, path: str, file):
    try:
        text.encode("utf-8")
    except UnicodeEncodeError as error:
        code = ord(text[error.start])
        raise InputError(f"the text holds a lone UTF-16 surrogate (\\u{code:04x}) that is not a character; remove it "
                         "or send the whole character", file=file, field=path or None) from None


def loads(text, *, file: str | None = None, field: str | None = None):
    """Parse JSON text strictly (see the module notes); errors are :class:`~stimlab.errors.InputError`.

    Parameters
    ----------
    text
        JSON text (str, or UTF-8 bytes).
    file
        The file name to put in errors, if any.
    field
        The path of the document itself (``body``, ``profile``), prefixed to paths inside it.

    Examples
    --------
    >>> loads('{"duration_s": 1.5}')
    {'duration_s': 1.5}
    >>> loads('{"duration_s": NaN}')
    Traceback (most recent call last):
    stimlab.errors.InputError: at duration_s: NaN is not a number JSON allows; give a finite number
    """
    if isinstance(text, (bytes, bytearray)):
        try:
            text = bytes(text).decode("utf-8-sig")
        except UnicodeDecodeError as error:
            raise InputError(f"not UTF-8 text (byte {error.start}); save it as UTF-8", file=file, field=field) from None
    try:
        value = json.loads(text, parse_constant=_NonFinite, parse_float=_parse_float)
    except json.JSONDecodeError as error:
        raise InputError(f"not valid JSON: {error.msg} at line {error.lineno}, column {error.colno}", file=file,
                         field=field) from None
    except RecursionError:
        raise InputError(f"nested more than {MAX_DEPTH} levels deep; no stimlab document needs that", file=file,
                         field=field) from None
    except ValueError as error:  # e.g. an integer of more than 4,300 digits
        raise InputError(f"not valid JSON: {str(error)[:120]}", file=file, field=field) from None
    return check_value(value, field or "", file=file)


def dumps(value, **options) -> str:
    """JSON text of ``value``; non-finite numbers are refused (``allow_nan=False``) rather than written as invalid JSON."""
    return json.dumps(value, allow_nan=False, **options)
