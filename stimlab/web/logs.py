"""Sessions and their logs in SQLite: creation, idempotent batch ingest, status, progress.

A runner sends its log in numbered batches. Each batch is written in one transaction together with its row in
``batches``; a batch whose number is already there is acknowledged and ignored, so a retry after a lost answer
never duplicates anything.
"""

from __future__ import annotations

import datetime as dt
import json
import sqlite3

from .. import __version__
from ..errors import InputError

__all__ = ["create_session", "get_session", "ingest_batch", "iter_frames", "set_status", "progress", "FRAME_COLUMNS"]

STATUSES = ("running", "interrupted", "complete")


def _now() -> str:
    return dt.datetime.now(dt.timezone.utc).isoformat(timespec="milliseconds")


def create_session(db, *, protocol_file: str, protocol_sha256: str, display_id: int, participant: str,
                   compiled: dict, acknowledgement: dict | None) -> int:
    cursor = db.execute(
        "INSERT INTO sessions (protocol_file, protocol_sha256, display_id, participant, status, started_at, "
        "compiled, acknowledgement, software_version) VALUES (?, ?, ?, ?, 'running', ?, ?, ?, ?)",
        (protocol_file, protocol_sha256, display_id, participant, _now(), json.dumps(compiled),
         json.dumps(acknowledgement) if acknowledgement else None, __version__))
    return cursor.lastrowid


def get_session(db, session_id: int) -> dict | None:
    row = db.execute("SELECT * FROM sessions WHERE id = ?", (session_id,)).fetchone()
    if row is None:
        return None
    session = dict(row)
    session["compiled"] = json.loads(session["compiled"])
    session["checks"] = json.loads(session["checks"]) if session["checks"] else None
    session["acknowledgement"] = json.loads(session["acknowledgement"]) if session["acknowledgement"] else None
    return session


def _field(record, key, kind, where, required=True):
    value = record.get(key)
    if value is None and not required:
        return None
    if kind is float and isinstance(value, int) and not isinstance(value, bool):
        value = float(value)
    if not isinstance(value, kind) or isinstance(value, bool):
        raise InputError(f"{key} must be a {kind.__name__}", field=f"{where}.{key}")
    return value


def _rows(session_id: int, batch: dict):
    """Validated ``events`` rows and ``frames`` columns of one batch; an InputError names the first bad field."""
    events = []
    for i, event in enumerate(batch.get("events") or []):
        where = f"events[{i}]"
        if not isinstance(event, dict):
            raise InputError("each event must be an object", field=where)
        events.append((session_id, _field(event, "seq", int, where), _field(event, "t", float, where),
                       _field(event, "kind", str, where), _field(event, "trial", int, where, False),
                       _field(event, "phase", str, where, False), json.dumps(event.get("data") or {})))
    frames = _frame_columns(batch.get("frames"))
    return events, frames


FRAME_COLUMNS = ("frame", "t_raf", "t_callback", "trial", "phase", "dropped", "drawn")


def _frame_columns(frames) -> dict | None:
    """Check a batch's columnar frame log: equal-length lists, whole frame numbers, numeric times."""
    if not frames:
        return None
    if not isinstance(frames, dict) or not all(isinstance(frames.get(c), list) for c in FRAME_COLUMNS):
        raise InputError(f"frames must be an object of equal-length lists: {', '.join(FRAME_COLUMNS)}",
                         field="frames")
    count = len(frames["frame"])
    for column in FRAME_COLUMNS:
        if len(frames[column]) != count:
            raise InputError(f"frames.{column} has {len(frames[column])} values for {count} frames",
                             field=f"frames.{column}")
    if not all(type(v) is int for v in frames["frame"]):
        raise InputError("frame numbers must be whole numbers", field="frames.frame")
    for column in ("t_raf", "t_callback"):
        if not all(type(v) in (int, float) for v in frames[column]):
            raise InputError("frame times must be numbers (ms)", field=f"frames.{column}")
    return {c: frames[c] for c in FRAME_COLUMNS}


def iter_frames(db, session_id: int):
    """The frame log as (frame, t_raf, t_callback, trial, phase, dropped, drawn) tuples, in frame order."""
    for (text,) in db.execute("SELECT body FROM frames WHERE session_id = ? ORDER BY first_frame, batch",
                              (session_id,)):
        columns = json.loads(text)["frames"]
        yield from zip(*(columns[c] for c in FRAME_COLUMNS))


def ingest_batch(db, session_id: int, batch: dict, raw: str | None = None) -> dict:
    """Write one batch in one transaction; a batch already stored is acknowledged and ignored.

    ``raw``, the request body the batch was parsed from, is stored as it came instead of encoding the frames again.
    """
    if not isinstance(batch, dict):
        raise InputError("a batch must be a JSON object", field="batch")
    number = _field(batch, "batch", int, "batch")
    events, frames = _rows(session_id, batch)
    count = len(frames["frame"]) if frames else 0
    db.execute("BEGIN IMMEDIATE")
    try:
        try:  # the batch's number is its key: a second copy stops here
            db.execute("INSERT INTO batches VALUES (?, ?, ?, ?, ?)", (session_id, number, _now(), len(events), count))
        except sqlite3.IntegrityError:
            db.execute("ROLLBACK")
            return {"batch": number, "duplicate": True}
        db.executemany("INSERT OR IGNORE INTO events VALUES (?, ?, ?, ?, ?, ?, ?)", events)
        if frames:
            db.execute("INSERT INTO frames VALUES (?, ?, ?, ?, ?, ?, ?)",
                       (session_id, number, min(frames["frame"]), max(frames["frame"]), count,
                        sum(1 for d in frames["dropped"] if d), raw or json.dumps({"frames": frames})))
        for event in batch.get("events") or []:
            if event.get("kind") == "session_end":
                db.execute("UPDATE sessions SET status = 'complete', ended_at = ? WHERE id = ?", (_now(), session_id))
            elif event.get("kind") in ("page_hidden", "paused"):
                db.execute("UPDATE sessions SET status = 'interrupted' WHERE id = ? AND status = 'running'",
                           (session_id,))
            elif event.get("kind") in ("resumed", "session_start"):
                db.execute("UPDATE sessions SET status = 'running' WHERE id = ? AND status = 'interrupted'",
                           (session_id,))
        db.execute("COMMIT")
    except Exception:
        db.execute("ROLLBACK")
        raise
    return {"batch": number, "duplicate": False, "events": len(events), "frames": count}


def set_status(db, session_id: int, status: str) -> None:
    if status not in STATUSES:
        raise InputError(f"status must be one of {', '.join(STATUSES)}", field="status")
    db.execute("UPDATE sessions SET status = ?, ended_at = CASE WHEN ? = 'complete' THEN ? ELSE ended_at END "
               "WHERE id = ?", (status, status, _now(), session_id))


def progress(db, session_id: int) -> dict:
    """Which trials have a recorded response, the last frame and event numbers (for resuming)."""
    done = [row[0] for row in db.execute(
        "SELECT DISTINCT trial FROM events WHERE session_id = ? AND kind = 'trial_end' ORDER BY trial", (session_id,))]
    last_frame = db.execute("SELECT MAX(last_frame) FROM frames WHERE session_id = ?", (session_id,)).fetchone()[0]
    last_seq = db.execute("SELECT MAX(seq) FROM events WHERE session_id = ?", (session_id,)).fetchone()[0]
    last_batch = db.execute("SELECT MAX(batch) FROM batches WHERE session_id = ?", (session_id,)).fetchone()[0]
    staircase = [json.loads(row[0]) for row in db.execute(
        "SELECT data FROM events WHERE session_id = ? AND kind = 'staircase' ORDER BY seq", (session_id,))]
    return {"completed_trials": done, "last_frame": last_frame, "last_seq": last_seq, "last_batch": last_batch,
            "staircase": staircase[-1] if staircase else None}
