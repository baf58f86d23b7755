"""Sessions and their logs in SQLite: creation, idempotent batch ingest, status, progress.

A runner sends its log in numbered batches. Each batch is written in one transaction together with its row in
``batches``; a batch whose number is already there is acknowledged and ignored, so a retry after a lost answer
never duplicates anything.
"""

from __future__ import annotations

import datetime as dt
import hashlib
import sqlite3
from typing import NamedTuple

from ..errors import ConflictError, InputError
from ..jsonio import MAX_INT, dumps, loads
from ..version import __version__
from .events import event_rows
from .frame_log import FrameBlock, read_block
from .store import utc_now

__all__ = ["create_session", "get_session", "ingest_batch", "check_batch", "store_batch", "CheckedBatch",
           "frame_blocks", "iter_frames", "progress", "take_lease", "release_lease", "LEASE_IDLE_S",
           "end_early"]

STATUSES = ("running", "interrupted", "complete", "ended_early")
LEASE_IDLE_S = 6  # a runner posts a batch or a heartbeat every 1–2 s; one silent this long has closed or crashed
RELEASED = "1970-01-01T00:00:00.000+00:00"  # seen_at of a lease its runner gave up (its page closed)


def _now() -> str:
    return utc_now("milliseconds")  # runner leases compare times to the millisecond


def create_session(db, *, protocol_file: str, protocol_sha256: str, display_id: int, participant: str,
                   compiled: dict, acknowledgement: dict | None, dry_run: float | None = None) -> int:
    cursor = db.execute(
        "INSERT INTO sessions (protocol_file, protocol_sha256, display_id, participant, status, started_at, "
        "compiled, acknowledgement, software_version, dry_run) VALUES (?, ?, ?, ?, 'running', ?, ?, ?, ?, ?)",
        (protocol_file, protocol_sha256, display_id, participant, _now(), dumps(compiled),
         dumps(acknowledgement) if acknowledgement else None, __version__, dry_run))
    return cursor.lastrowid


def get_session(db, session_id: int) -> dict | None:
    row = db.execute("SELECT * FROM sessions WHERE id = ?", (session_id,)).fetchone()
    if row is None:
        return None
    session = dict(row)
    where = f"sessions[{session_id}]"
    session["compiled"] = loads(session["compiled"], field=f"{where}.compiled")
    session["checks"] = loads(session["checks"], field=f"{where}.checks") if session["checks"] else None
    session["acknowledgement"] = (loads(session["acknowledgement"], field=f"{where}.acknowledgement")
                                  if session["acknowledgement"] else None)
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


def frame_blocks(db, session_id: int):
    """The session's frame log as :class:`~stimlab.sessions.frame_log.FrameBlock` objects, in frame order."""
    for (data,) in db.execute("SELECT body FROM frames WHERE session_id = ? ORDER BY first_frame, batch",
                              (session_id,)):
        yield FrameBlock.from_stored(data)


def iter_frames(db, session_id: int):
    """The frame log as (frame, t_raf, t_callback, trial, phase, dropped, drawn) tuples, in frame order."""
    for block in frame_blocks(db, session_id):
        yield from block.rows()


def _digest(number: int, events: list[tuple], stored_frames: bytes | None) -> str:
    """The sha256 of what a batch stores: its number, its event rows and its frame block as stored.

    Two copies of a batch match when they would store the same rows (as :func:`_insert_events` compares events).
    The frames enter as the bytes already made for the insert: hashing the canonical JSON of the whole batch, as
    before, cost more than all its checks.
    """
    content = hashlib.sha256(b"stimlab batch 2\n%d\n" % number)
    content.update(dumps([row[1:] for row in events], separators=(",", ":")).encode("utf-8"))
    if stored_frames is not None:
        content.update(stored_frames)
    return content.hexdigest()


def _batch_json_digest(batch: dict) -> str:
    """The digest stored before :func:`_digest`: of the whole batch as canonical JSON (still compared on a retry)."""
    return hashlib.sha256(dumps(batch, sort_keys=True, separators=(",", ":")).encode("utf-8")).hexdigest()


def _duplicate_or_conflict(db, session_id: int, number: int, digest: str, batch: dict) -> dict:
    stored = db.execute("SELECT digest FROM batches WHERE session_id = ? AND batch = ?", (session_id, number)).fetchone()
    if stored[0] is not None and stored[0] != digest and stored[0] != _batch_json_digest(batch):
        raise ConflictError(f"batch {number} is already stored with other content; a second runner may be writing "
                            "to this session. Nothing was stored from this batch; keep it and reopen the runner",
                            field="batch")
    return {"batch": number, "duplicate": True}


def _insert_events(db, rows: list[tuple]) -> int:
    """Insert event rows; one already stored with the same content counts as a duplicate, with other content is
    a conflict (the caller rolls the batch back)."""
    duplicates = 0
    for i, row in enumerate(rows):
        try:
            db.execute("INSERT INTO events VALUES (?, ?, ?, ?, ?, ?, ?)", row)
        except sqlite3.IntegrityError:
            stored = db.execute("SELECT session_id, seq, t_ms, kind, trial, phase, data FROM events "
                                "WHERE session_id = ? AND seq = ?", row[:2]).fetchone()
            if stored is None or tuple(stored) != row:
                raise ConflictError(f"event {row[1]} is already stored with other content; nothing was stored from "
                                    "this batch", field=f"events[{i}].seq") from None
            duplicates += 1
    return duplicates


def ingest_batch(db, session_id: int, batch: dict, *, runner: str | None = None) -> dict:
    """Write one batch in one transaction, after checking every field of it.

    A batch is ``{"batch": n, "events": [...], "frames": {...}}``; ``frames`` is a frame block in the packed or
    the list form of :mod:`stimlab.sessions.frame_log`, stored as one binary value. A batch number already
    stored with the same content is acknowledged as a duplicate; with other content (or events or frames that
    clash with stored ones) it is refused with :class:`~stimlab.errors.ConflictError` and nothing is stored.
    ``runner`` is the sending runner's lease (see :func:`take_lease`); a runner that no longer holds it is refused.
    The same as :func:`check_batch` then :func:`store_batch`.
    """
    return store_batch(db, check_batch(session_id, batch), runner=runner)


class CheckedBatch(NamedTuple):
    """A batch that passed every check, ready for :func:`store_batch`."""

    session_id: int
    number: int
    events: list[tuple]
    frames: FrameBlock | None
    stored_frames: bytes | None
    digest: str
    batch: dict


def check_batch(session_id: int, batch: dict) -> CheckedBatch:
    """Check every field of a batch for session ``session_id`` (an InputError names the first bad one); no database
    is needed, so a server can do it before it takes the one connection batches are written on."""
    if not isinstance(batch, dict):
        raise InputError("a batch must be a JSON object", field="batch")
    number = _field(batch, "batch", int, "batch")
    if not 0 <= number <= MAX_INT:
        raise InputError("batch numbers start at 0", field="batch")
    events = event_rows(session_id, batch.get("events"))
    frames = read_block(batch["frames"]) if batch.get("frames") else None
    stored_frames = frames.stored() if frames else None
    return CheckedBatch(session_id, number, events, frames, stored_frames, _digest(number, events, stored_frames),
                        batch)


def store_batch(db, checked: CheckedBatch, *, runner: str | None = None) -> dict:
    """Write a checked batch in one transaction (see :func:`ingest_batch`)."""
    session_id, number, events, frames, stored_frames, digest, batch = checked
    count = len(frames) if frames else 0
    db.execute("BEGIN IMMEDIATE")
    try:
        if runner is not None:
            _check_lease(db, session_id, runner)
        try:  # the batch's number is its key: a second copy stops here
            db.execute("INSERT INTO batches (session_id, batch, received_at, events, frames, digest) "
                       "VALUES (?, ?, ?, ?, ?, ?)", (session_id, number, _now(), len(events), count, digest))
        except sqlite3.IntegrityError:
            result = _duplicate_or_conflict(db, session_id, number, digest, batch)
            db.execute("ROLLBACK")
            return result
        duplicates = _insert_events(db, events)
        if frames:
            # Stored blocks never overlap, so the one starting last at or before this block's end is the only
            # candidate: one step down the (session_id, first_frame) index, however long the session.
            overlap = db.execute("SELECT batch, last_frame FROM frames WHERE session_id = ? AND first_frame <= ? "
                                 "ORDER BY first_frame DESC LIMIT 1", (session_id, frames.last_frame)).fetchone()
            if overlap is not None and overlap[1] >= frames.first_frame:
                raise ConflictError(f"frames {frames.first_frame}–{frames.last_frame} overlap frames already stored "
                                    f"from batch {overlap[0]}; nothing was stored from this batch", field="frames")
            db.execute("INSERT INTO frames VALUES (?, ?, ?, ?, ?, ?, ?)",
                       (session_id, number, frames.first_frame, frames.last_frame, count, frames.dropped,
                        stored_frames))
        for row in events:
            kind = row[3]
            if kind == "session_end":
                db.execute("UPDATE sessions SET status = 'complete', ended_at = ? WHERE id = ?", (_now(), session_id))
            elif kind in ("page_hidden", "paused"):
                db.execute("UPDATE sessions SET status = 'interrupted' WHERE id = ? AND status = 'running'",
                           (session_id,))
            elif kind in ("resumed", "session_start"):
                db.execute("UPDATE sessions SET status = 'running' WHERE id = ? AND status = 'interrupted'",
                           (session_id,))
        db.execute("COMMIT")
    except BaseException:
        db.execute("ROLLBACK")
        raise
    result = {"batch": number, "duplicate": False, "events": len(events) - duplicates, "frames": count}
    if duplicates:
        result["duplicate_events"] = duplicates
    return result


def _check_lease(db, session_id: int, runner: str) -> None:
    row = db.execute("SELECT holder FROM runner_leases WHERE session_id = ?", (session_id,)).fetchone()
    if row is None:
        db.execute("INSERT INTO runner_leases VALUES (?, ?, ?, ?)", (session_id, runner, _now(), _now()))
    elif row[0] != runner:
        raise ConflictError("this session was taken over by another tab or window; this one has stopped and keeps "
                            "what it has not sent until it can hand it over", field="runner")
    else:  # a released lease stays released: the closing page's last batches must not hold the session
        db.execute("UPDATE runner_leases SET seen_at = ? WHERE session_id = ? AND seen_at != ?",
                   (_now(), session_id, RELEASED))


def release_lease(db, session_id: int, runner: str) -> dict:
    """The runner's page is closing: let the next runner take the session at once."""
    db.execute("UPDATE runner_leases SET seen_at = ? WHERE session_id = ? AND holder = ?", (RELEASED, session_id, runner))
    return {"runner": runner, "released": True}


def take_lease(db, session_id: int, runner: str, *, take_over: bool = False) -> dict:
    """Make ``runner`` the session's one active runner.

    A runner takes the lease on start or resume. Another runner that still holds it (it posted within
    :data:`LEASE_IDLE_S` seconds) keeps it unless ``take_over`` is set; then the other one is refused on its next
    batch and stops.

    Returns
    -------
    ``{"runner", "taken_over"}``; raises :class:`~stimlab.errors.ConflictError` (field ``runner``) when the
    session is open elsewhere.
    """
    if not isinstance(runner, str) or not 8 <= len(runner) <= 64 or not runner.isascii():
        raise InputError("runner must be the 8–64 character id the runner page made", field="runner")
    if not isinstance(take_over, bool):
        raise InputError("take_over must be true or false", field="take_over")
    db.execute("BEGIN IMMEDIATE")
    try:
        row = db.execute("SELECT holder, seen_at FROM runner_leases WHERE session_id = ?", (session_id,)).fetchone()
        idle = row is not None and (dt.datetime.now(dt.timezone.utc) - dt.datetime.fromisoformat(row[1])
                                    ).total_seconds() > LEASE_IDLE_S
        if row is not None and row[0] != runner and not take_over and not idle:
            raise ConflictError(f"this session is open in another tab or window (active at {row[1][11:19]} UTC). "
                                "Close that one, or take the session over here: the other one then stops presenting "
                                "and keeps what it has not sent", field="runner")
        if row is not None and row[0] == runner:  # the holder's heartbeat
            db.execute("UPDATE runner_leases SET seen_at = ? WHERE session_id = ?", (_now(), session_id))
        else:
            db.execute("INSERT OR REPLACE INTO runner_leases VALUES (?, ?, ?, ?)", (session_id, runner, _now(), _now()))
        db.execute("COMMIT")
    except BaseException:
        db.execute("ROLLBACK")
        raise
    return {"runner": runner, "taken_over": row is not None and row[0] != runner}


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
    staircase = [loads(row[0]) for row in db.execute(
        "SELECT data FROM events WHERE session_id = ? AND kind = 'staircase' ORDER BY seq", (session_id,))]
    return {"completed_trials": done, "last_frame": last_frame, "last_seq": last_seq, "last_batch": last_batch,
            "staircase": staircase[-1] if staircase else None}
