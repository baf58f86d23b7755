"""The shape of every runner event, checked at ingest so that whatever is stored can always be exported.

An event is ``{"seq", "t", "kind", "trial", "phase", "data"}``: ``seq`` a whole number, ``t`` a finite time in
milliseconds, ``kind`` a short name, ``trial`` a whole number or null, ``phase`` a short name or null, and ``data``
an object whose keys do not shadow those five. The kinds that exports and the session page read have their
``data`` checked field by field (:data:`KINDS`); other kinds (new screens add their own) only the general rules.
"""

from __future__ import annotations

import re

from ..errors import InputError
from ..jsonio import check_value, dumps

__all__ = ["event_rows", "event_data", "KINDS", "MAX_EVENTS", "MAX_DATA_BYTES"]

MAX_EVENTS = 10_000  # per batch; a runner sends one batch a second with a handful of events
MAX_DATA_BYTES = 64 * 1024  # per event's data; the largest real event (a staircase state) is a few hundred bytes
MAX_TIME_MS = 1e12  # performance.now() in ms: about 30 years after the page loaded
BASE = ("seq", "t", "kind", "trial", "phase")
NAME = re.compile(r"^[A-Za-z0-9_.:-]{1,64}$")


def _fail(message, field):
    raise InputError(message, field=field)


def _number(value, field, optional=True):
    if value is None and optional:
        return
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        _fail(f"must be a number{' or null' if optional else ''}, got {dumps(value)[:40]}", field)


def _whole(value, field, optional=True, minimum=None):
    if value is None and optional:
        return
    if isinstance(value, bool) or not isinstance(value, int):
        _fail(f"must be a whole number{' or null' if optional else ''}, got {dumps(value)[:40]}", field)
    if minimum is not None and value < minimum:
        _fail(f"must be at least {minimum}, got {value}", field)


def _text(value, field, optional=True):
    if value is None and optional:
        return
    if not isinstance(value, str) or len(value) > 200:
        _fail("must be text of at most 200 characters" + (" or null" if optional else ""), field)


def _flag(value, field):
    if value is not None and not isinstance(value, bool):
        _fail(f"must be true, false or null, got {dumps(value)[:40]}", field)


def _numbers(value, field, sizes):
    if value is None:
        return
    if not isinstance(value, list) or len(value) not in sizes:
        _fail(f"must be a list of {' or '.join(map(str, sizes))} numbers", field)
    for i, item in enumerate(value):
        _number(item, f"{field}[{i}]", optional=False)


def _response(value, field):
    if value is None:
        return
    if not isinstance(value, dict):
        _fail("must be an object (the response) or null", field)
    _text(value.get("method"), f"{field}.method")
    _text(value.get("key"), f"{field}.key")
    _flag(value.get("correct"), f"{field}.correct")
    _number(value.get("rt_ms"), f"{field}.rt_ms")
    _numbers(value.get("position"), f"{field}.position", (1, 2))
    _numbers(value.get("device"), f"{field}.device", (3,))


def _trial_end(event, data, where):
    _whole(event.get("trial"), f"{where}.trial", optional=False, minimum=0)
    _whole(data.get("condition"), f"{where}.data.condition", minimum=0)
    _response(data.get("response"), f"{where}.data.response")
    _whole(data.get("dropped_frames"), f"{where}.data.dropped_frames", minimum=0)
    _number(data.get("staircase_value"), f"{where}.data.staircase_value")


def _phase_onset(event, data, where):
    _whole(event.get("trial"), f"{where}.trial", optional=False, minimum=0)
    _text(event.get("phase"), f"{where}.phase", optional=False)
    _whole(data.get("frame"), f"{where}.data.frame", minimum=0)


def _trial_event(event, data, where):
    _whole(event.get("trial"), f"{where}.trial", optional=False, minimum=0)


def _session_end(event, data, where):
    _whole(data.get("frames"), f"{where}.data.frames", minimum=0)
    _whole(data.get("dropped_frames"), f"{where}.data.dropped_frames", minimum=0)


def _staircase(event, data, where):
    for key, state in data.items():
        if state is not None and not isinstance(state, dict):
            _fail("each staircase state must be an object", f"{where}.data.{key}")


KINDS = {"trial_end": _trial_end, "phase_onset": _phase_onset, "timeout": _trial_event,
         "trial_aborted": _trial_event, "session_end": _session_end, "staircase": _staircase}
"""Kinds whose ``data`` is read by exports, with the check of each."""


def event_rows(session_id: int, events) -> list[tuple]:
    """Validated ``events`` table rows of one batch; an InputError names the first bad field.

    Parameters
    ----------
    session_id
        The session the events belong to.
    events
        The batch's ``events`` list (None for none).
    """
    if events is None:
        return []
    if not isinstance(events, list):
        _fail("must be a list of events", "events")
    if len(events) > MAX_EVENTS:
        _fail(f"{len(events)} events in one batch; send at most {MAX_EVENTS:,} per batch", "events")
    rows = []
    for i, event in enumerate(events):
        where = f"events[{i}]"
        if not isinstance(event, dict):
            _fail("each event must be an object", where)
        check_value(event, where)
        _whole(event.get("seq"), f"{where}.seq", optional=False, minimum=0)
        _number(event.get("t"), f"{where}.t", optional=False)
        if abs(event["t"]) > MAX_TIME_MS:
            _fail(f"{event['t']:g} ms is not a time a page can have been open for", f"{where}.t")
        kind = event.get("kind")
        if not isinstance(kind, str) or not NAME.match(kind):
            _fail("must be a short name of letters, digits and '_.:-'", f"{where}.kind")
        _whole(event.get("trial"), f"{where}.trial", minimum=0)
        _text(event.get("phase"), f"{where}.phase")
        data = event.get("data")
        data = {} if data is None else data
        if not isinstance(data, dict):
            _fail(f"must be an object of named values, got {type(data).__name__}", f"{where}.data")
        shadowed = [k for k in BASE if k in data]
        if shadowed:
            _fail(f"{shadowed[0]!r} is an event field; it cannot also be in data", f"{where}.data.{shadowed[0]}")
        text = dumps(data, ensure_ascii=False, separators=(",", ":"))
        if len(text.encode("utf-8")) > MAX_DATA_BYTES:
            _fail(f"more than {MAX_DATA_BYTES // 1024} KiB of data in one event", f"{where}.data")
        if kind in KINDS:
            KINDS[kind](event, data, where)
        rows.append((session_id, event["seq"], float(event["t"]), kind, event.get("trial"), event.get("phase"), text))
    return rows


def event_data(text) -> dict:
    """An event's stored ``data``, always a dict (rows stored before data was checked may hold anything else)."""
    from ..jsonio import loads

    try:
        data = loads(text)
    except InputError:
        return {}
    return {k: v for k, v in data.items() if k not in BASE} if isinstance(data, dict) else {}

