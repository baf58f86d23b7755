"""Sessions and their logs in SQLite: creation, idempotent batch ingest, status, progress.

A runner sends its log in numbered batches. Each batch is written in one transaction together with its row in
``batches``; a batch whose number is already there is acknowledged and ignored, so a retry after a lost answer
never duplicates anything.
"""

from __future__ import annotations

import datetime as dt
import json

from .. import __version__
from ..errors import InputError

__all__ = ["create_session", "get_session", "ingest_batch", "set_status", "progress", "PHASES"]

PHASES = ("adapt", "top_up", "gap", "test", "respond", "pause", "check")
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
    """Validated rows for ``events`` and ``frames`` from one batch; an InputError names the first bad field."""
    events, frames = [], []
    for i, event in enumerate(batch.get("events") or []):
        where = f"events[{i}]"
        if not isinstance(event, dict):
            raise InputError("each event must be an object", field=where)
        events.append((session_id, _field(event, "seq", int, where), _field(event, "t", float, where),
                       _field(event, "kind", str, where), _field(event, "trial", int, where, False),
                       _field(event, "phase", str, where, False), json.dumps(event.get("data") or {})))
    for i, frame in enumerate(batch.get("frames") or []):
        if not isinstance(frame, list) or len(frame) < 6:
            raise InputError("each frame is [frame, t_raf, t_callback, trial, phase, dropped, drawn?]",
                             field=f"frames[{i}]")
        number, t_raf, t_callback, trial, phase, dropped = frame[:6]
        if not isinstance(number, int) or not all(isinstance(t, (int, float)) for t in (t_raf, t_callback)):
            raise InputError("frame number must be whole and its times numbers", field=f"frames[{i}]")
        frames.append((session_id, number, float(t_raf), float(t_callback), trial, phase, int(bool(dropped)),
                       frame[6] if len(frame) > 6 else None))
    return events, frames


def ingest_batch(db, session_id: int, batch: dict) -> dict:
    """Write one batch in one transaction; a batch already stored is acknowledged and ignored."""
    if not isinstance(batch, dict):
        raise InputError("a batch must be a JSON object", field="batch")
    number = _field(batch, "batch", int, "batch")
    events, frames = _rows(session_id, batch)
    db.execute("BEGIN IMMEDIATE")
    try:
        if db.execute("SELECT 1 FROM batches WHERE session_id = ? AND batch = ?", (session_id, number)).fetchone():
            db.execute("ROLLBACK")
            return {"batch": number, "duplicate": True}
        db.executemany("INSERT OR IGNORE INTO events VALUES (?, ?, ?, ?, ?, ?, ?)", events)
        db.executemany("INSERT OR IGNORE INTO frames VALUES (?, ?, ?, ?, ?, ?, ?, ?)", frames)
        db.execute("INSERT INTO batches VALUES (?, ?, ?, ?, ?)", (session_id, number, _now(), len(events),
                                                                  len(frames)))
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
    return {"batch": number, "duplicate": False, "events": len(events), "frames": len(frames)}


def set_status(db, session_id: int, status: str) -> None:
    if status not in STATUSES:
        raise InputError(f"status must be one of {', '.join(STATUSES)}", field="status")
    db.execute("UPDATE sessions SET status = ?, ended_at = CASE WHEN ? = 'complete' THEN ? ELSE ended_at END "
               "WHERE id = ?", (status, status, _now(), session_id))


def progress(db, session_id: int) -> dict:
    """Which trials have a recorded response, the last frame and event numbers (for resuming)."""
    done = [row[0] for row in db.execute(
        "SELECT DISTINCT trial FROM events WHERE session_id = ? AND kind = 'trial_end' ORDER BY trial", (session_id,))]
    last_frame = db.execute("SELECT MAX(frame) FROM frames WHERE session_id = ?", (session_id,)).fetchone()[0]
    last_seq = db.execute("SELECT MAX(seq) FROM events WHERE session_id = ?", (session_id,)).fetchone()[0]
    last_batch = db.execute("SELECT MAX(batch) FROM batches WHERE session_id = ?", (session_id,)).fetchone()[0]
    staircase = [json.loads(row[0]) for row in db.execute(
        "SELECT data FROM events WHERE session_id = ? AND kind = 'staircase' ORDER BY seq", (session_id,))]
    return {"completed_trials": done, "last_frame": last_frame, "last_seq": last_seq, "last_batch": last_batch,
            "staircase": staircase[-1] if staircase else None}
