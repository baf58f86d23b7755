"""Sessions and their logs in SQLite: creation, idempotent batch ingest, status, progress.

A runner sends its log in numbered batches. Each batch is written in one transaction together with its row in
``batches``; a batch whose number is already there is acknowledged and ignored, so a retry after a lost answer
never duplicates anything.
"""

from __future__ import annotations

import datetime as dt
import json
import sqlite3

from ..errors import InputError
from ..version import __version__
from .frame_log import FrameBlock, read_block

__all__ = ["create_session", "get_session", "ingest_batch", "frame_blocks", "iter_frames", "set_status", "progress",
           "end_early"]

STATUSES = ("running", "interrupted", "complete", "ended_early")


def _now() -> str:
    return dt.datetime.now(dt.timezone.utc).isoformat(timespec="milliseconds")


def create_session(db, *, protocol_file: str, protocol_sha256: str, display_id: int, participant: str,
                   compiled: dict, acknowledgement: dict | None, dry_run: float | None = None) -> int:
    cursor = db.execute(
        "INSERT INTO sessions (protocol_file, protocol_sha256, display_id, participant, status, started_at, "
        "compiled, acknowledgement, software_version, dry_run) VALUES (?, ?, ?, ?, 'running', ?, ?, ?, ?, ?)",
        (protocol_file, protocol_sha256, display_id, participant, _now(), json.dumps(compiled),
         json.dumps(acknowledgement) if acknowledgement else None, __version__, dry_run))
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


def _events(session_id: int, batch: dict) -> list[tuple]:
    """Validated ``events`` rows of one batch; an InputError names the first bad field."""
    events = batch.get("events") or []
    if not isinstance(events, list):
        raise InputError("events must be a list", field="events")
    rows = []
    for i, event in enumerate(events):
        where = f"events[{i}]"
        if not isinstance(event, dict):
            raise InputError("each event must be an object", field=where)
        rows.append((session_id, _field(event, "seq", int, where), _field(event, "t", float, where),
                     _field(event, "kind", str, where), _field(event, "trial", int, where, False),
                     _field(event, "phase", str, where, False), json.dumps(event.get("data") or {})))
    return rows


def frame_blocks(db, session_id: int):
    """The session's frame log as :class:`~stimlab.sessions.frame_log.FrameBlock` objects, in frame order."""
    for (data,) in db.execute("SELECT body FROM frames WHERE session_id = ? ORDER BY first_frame, batch",
                              (session_id,)):
        yield FrameBlock.from_stored(data)


def iter_frames(db, session_id: int):
    """The frame log as (frame, t_raf, t_callback, trial, phase, dropped, drawn) tuples, in frame order."""
    for block in frame_blocks(db, session_id):
        yield from block.rows()


def ingest_batch(db, session_id: int, batch: dict) -> dict:
    """Write one batch in one transaction; a batch already stored is acknowledged and ignored.

    A batch is ``{"batch": n, "events": [...], "frames": {...}}``; ``frames`` is a frame block in the packed or
    the list form of :mod:`stimlab.sessions.frame_log`, stored as one binary value.
    """
    if not isinstance(batch, dict):
        raise InputError("a batch must be a JSON object", field="batch")
    number = _field(batch, "batch", int, "batch")
    events = _events(session_id, batch)
    frames = read_block(batch["frames"]) if batch.get("frames") else None
    count = len(frames) if frames else 0
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
                       (session_id, number, frames.first_frame, frames.last_frame, count, frames.dropped,
                        frames.stored()))
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


def end_early(db, session_id: int, reason) -> None:
    """Mark a session ended early by the experimenter, keeping the reason (exported with the session)."""
    reason = reason.strip() if isinstance(reason, str) else ""
    if not reason:
        raise InputError("say why the session ends early (kept with the session and its exports)", field="reason")
    if len(reason) > 500:
        raise InputError("keep the reason under 500 characters", field="reason")
    db.execute("UPDATE sessions SET status = 'ended_early', end_reason = ?, ended_at = ? WHERE id = ? "
               "AND status != 'complete'", (reason, _now(), session_id))


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
