"""Strict request parsing for the web layer: JSON bodies through :mod:`stimlab.jsonio`, bounded numbers in paths
and bodies.

Flask's ``get_json(silent=True)`` turns any :class:`ValueError` into ``None``; a refused body (``NaN``, a lone
surrogate, nesting 10,000 deep) must instead say what is wrong and where, so the provider raises
:class:`BodyError`, which is not a ValueError and reaches the error handler as a 400 naming the path.
"""

from __future__ import annotations

from flask.json.provider import DefaultJSONProvider
from werkzeug.routing import IntegerConverter

from ..errors import InputError
from ..jsonio import MAX_INT, dumps
from ..jsonio import loads as strict_loads
from .errors import BodyError, WebError

__all__ = ["StrictJSONProvider", "BoundedInt", "BodyError", "whole_number"]


class StrictJSONProvider(DefaultJSONProvider):
    """Flask's JSON with :func:`stimlab.jsonio.loads` for reading and no NaN when writing."""

    def loads(self, s, **kwargs):
        try:
            return strict_loads(s, field="body")
        except InputError as error:
            raise BodyError(error) from None

    def dumps(self, obj, **kwargs):
        kwargs.setdefault("allow_nan", False)
        return super().dumps(obj, **kwargs)


class BoundedInt(IntegerConverter):
    """``<int:…>`` limited to SQLite's integer range, so a 2⁷⁰ in a path is a 404, never an overflow."""

    def __init__(self, map, *args, **kwargs):
        kwargs.setdefault("max", MAX_INT)
        super().__init__(map, *args, **kwargs)


def whole_number(value, field: str, *, minimum: int = 0, maximum: int = MAX_INT) -> int:
    """A whole number from a form or body (``3``, ``"3"``), in range; anything else is a 400 naming ``field``."""
    if isinstance(value, bool) or isinstance(value, (list, dict)) or value is None:
        raise WebError(f"{field} must be a whole number, got {dumps(value)[:40]}", field=field)
    if isinstance(value, float) and value.is_integer():
        value = int(value)
    if isinstance(value, str):
        text = value.strip()
        if not (text.isdigit() and len(text) <= 19):
            raise WebError(f"{field} must be a whole number, got {text[:40]!r}", field=field)
        value = int(text)
    if not isinstance(value, int) or not minimum <= value <= maximum:
        raise WebError(f"{field} must be a whole number from {minimum} to {maximum}, got {str(value)[:40]}",
                       field=field)
    return value
