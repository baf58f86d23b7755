"""The data folder: one SQLite database (WAL) for displays, sessions and their logs, plus the protocol files.

The frame log is stored one row per batch, its frames a packed block of columns (frame, t_raf, t_callback, trial,
phase, dropped, drawn) in one binary value (see :mod:`stimlab.sessions.frame_log`): an hour at 120 Hz is 3,600 rows, not 432,000.

The schema version lives in ``PRAGMA user_version``; :data:`MIGRATIONS` are applied in order on open, each in
its own transaction, so an older data folder is brought up to date without losing anything. A migration is SQL
text or a function of the connection (for a change of stored format that SQL cannot express).
"""

from __future__ import annotations

import datetime as dt
import hashlib
import json
import os
import re
import sqlite3
import threading
from pathlib import Path

from ..errors import ConflictError, InputError
from ..experiment.protocol import parse_protocol
from ..jsonio import check_value, dumps, loads
from ..profiles.profile import profile_from_dict
from .shared_writer import SharedWriter

__all__ = ["Store", "MIGRATIONS", "default_data_dir", "safe_protocol_name"]

def _pack_frame_bodies(db: sqlite3.Connection) -> None:
    """Version 4: frame blocks stored as JSON lists (inside the batch body as received) become binary blocks."""
    from .frame_log import read_block

    rows = db.execute("SELECT session_id, batch, body FROM frames").fetchall()
    for session_id, batch, body in rows:
        if isinstance(body, bytes):
            continue
        lists = json.loads(body)["frames"]
        for name in ("phase", "drawn"):  # checked only for presence before version 4
            lists[name] = [None if v is None else str(v) for v in lists[name]]
        try:
            packed = read_block(lists).stored()
        except InputError as error:
            raise InputError(f"session {session_id}, batch {batch}: {error.message}", field=error.field) from None
        db.execute("UPDATE frames SET body = ? WHERE session_id = ? AND batch = ?", (packed, session_id, batch))


MIGRATIONS = [
    """
    CREATE TABLE displays (
        id INTEGER PRIMARY KEY,
        name TEXT NOT NULL,
        version INTEGER NOT NULL,
        sha256 TEXT NOT NULL UNIQUE,
        profile TEXT NOT NULL,
        created_at TEXT NOT NULL,
        UNIQUE (name, version)
    );
    CREATE TABLE sessions (
        id INTEGER PRIMARY KEY,
        protocol_file TEXT NOT NULL,
        protocol_sha256 TEXT NOT NULL,
        display_id INTEGER NOT NULL REFERENCES displays(id),
        participant TEXT NOT NULL,
        status TEXT NOT NULL CHECK (status IN ('running', 'interrupted', 'complete')),
        started_at TEXT NOT NULL,
        ended_at TEXT,
        compiled TEXT NOT NULL,
        checks TEXT,
        acknowledgement TEXT,
        software_version TEXT NOT NULL
    );
    CREATE INDEX sessions_by_participant ON sessions (participant);
    CREATE TABLE batches (
        session_id INTEGER NOT NULL REFERENCES sessions(id),
        batch INTEGER NOT NULL,
        received_at TEXT NOT NULL,
        events INTEGER NOT NULL,
        frames INTEGER NOT NULL,
        PRIMARY KEY (session_id, batch)
    ) WITHOUT ROWID;
    CREATE TABLE events (
        session_id INTEGER NOT NULL REFERENCES sessions(id),
        seq INTEGER NOT NULL,
        t_ms REAL NOT NULL,
        kind TEXT NOT NULL,
        trial INTEGER,
        phase TEXT,
        data TEXT NOT NULL,
        PRIMARY KEY (session_id, seq)
    ) WITHOUT ROWID;
    CREATE TABLE frames (
        session_id INTEGER NOT NULL REFERENCES sessions(id),
        batch INTEGER NOT NULL,
        first_frame INTEGER NOT NULL,
        last_frame INTEGER NOT NULL,
        count INTEGER NOT NULL,
        dropped INTEGER NOT NULL,
        body TEXT NOT NULL,
        PRIMARY KEY (session_id, batch)
    ) WITHOUT ROWID;
    """,
    """
    CREATE TABLE observer_adjustments (
        id INTEGER PRIMARY KEY,
        participant TEXT NOT NULL,
        standard_observer TEXT NOT NULL,
        ratio REAL NOT NULL,
        w_L REAL NOT NULL,
        w_M REAL NOT NULL,
        summary TEXT NOT NULL,
        session_id INTEGER REFERENCES sessions(id),
        display_id INTEGER REFERENCES displays(id),
        created_at TEXT NOT NULL
    );
    CREATE INDEX adjustments_by_participant ON observer_adjustments (participant, id);
    """,
    """
    CREATE TABLE calibration_runs (
        id INTEGER PRIMARY KEY,
        name TEXT NOT NULL,
        settings TEXT NOT NULL,
        plan TEXT NOT NULL,
        spectra TEXT,
        display_id INTEGER REFERENCES displays(id),
        result TEXT,
        created_at TEXT NOT NULL
    );
    CREATE TABLE calibration_readings (
        run_id INTEGER NOT NULL REFERENCES calibration_runs(id),
        step INTEGER NOT NULL,
        luminance REAL NOT NULL,
        x REAL,
        y REAL,
        measured_at TEXT NOT NULL,
        PRIMARY KEY (run_id, step)
    ) WITHOUT ROWID;
    """,
    _pack_frame_bodies,
    """
    ALTER TABLE batches ADD COLUMN digest TEXT;
    ALTER TABLE displays ADD COLUMN archived_at TEXT;
    CREATE INDEX frames_by_first_frame ON frames (session_id, first_frame);
    CREATE TABLE runner_leases (
        session_id INTEGER PRIMARY KEY REFERENCES sessions(id),
        holder TEXT NOT NULL,
        taken_at TEXT NOT NULL,
        seen_at TEXT NOT NULL
    );
    """,
    lambda db: _sessions_end_early_and_dry_run(db),
    # Lab-wide choices made in the app (the default display, criteria), one JSON value per key.
    """
    CREATE TABLE settings (
        key TEXT PRIMARY KEY,
        value TEXT NOT NULL,
        updated_at TEXT NOT NULL
    ) WITHOUT ROWID;
    """,
]


def _sessions_end_early_and_dry_run(db) -> None:
    """Status 'ended_early' with its reason, and the dry-run duration factor (NULL for a real session).

    The status CHECK constraint is widened in place, as SQLite documents for schema changes that leave the stored
    rows valid (ALTER TABLE, "making other kinds of table schema changes"); the new columns are plain additions.
    """
    sql = db.execute("SELECT sql FROM sqlite_schema WHERE type = 'table' AND name = 'sessions'").fetchone()[0]
    version = db.execute("PRAGMA schema_version").fetchone()[0]
    db.execute("PRAGMA writable_schema = ON")
    db.execute("UPDATE sqlite_schema SET sql = ? WHERE type = 'table' AND name = 'sessions'",
               (sql.replace("'interrupted', 'complete')", "'interrupted', 'complete', 'ended_early')"),))
    db.execute(f"PRAGMA schema_version = {version + 1}")
    db.execute("PRAGMA writable_schema = OFF")
    db.execute("ALTER TABLE sessions ADD COLUMN end_reason TEXT")
    db.execute("ALTER TABLE sessions ADD COLUMN dry_run REAL")


def default_data_dir() -> Path:
    """``$XDG_DATA_HOME/stimlab`` (``~/.local/share/stimlab`` when unset)."""
    base = os.environ.get("XDG_DATA_HOME") or Path.home() / ".local" / "share"
    return Path(base) / "stimlab"


_NAME = re.compile(r"^[A-Za-z0-9][A-Za-z0-9_.-]{0,80}$")


def safe_protocol_name(name: str) -> str:
    """A protocol file name that cannot leave the protocols folder: letters, digits, ``_ . -``, ending ``.json``."""
    name = (name or "").strip()
    if not name.endswith(".json"):
        name += ".json"
    if not _NAME.match(name) or ".." in name:
        raise InputError("use letters, digits, '_', '.' and '-' only (no folders) for a protocol file name",
                         field="name")
    return name


def utc_now(timespec: str = "seconds") -> str:
    """The time now in UTC as ISO 8601 text, the form every stored time takes (``timespec`` as for isoformat)."""
    return dt.datetime.now(dt.timezone.utc).isoformat(timespec=timespec)


class Store:
    """The data folder. Web requests use one long-lived connection per server thread (:meth:`request_connection`)."""

    def __init__(self, root):
        self.root = Path(root)
        self.protocols = self.root / "protocols"
        self.database = self.root / "stimlab.sqlite"
        try:
            self.protocols.mkdir(parents=True, exist_ok=True)
        except OSError as error:
            raise InputError(f"cannot use this data folder ({error.strerror}); choose a folder you can write to",
                             file=str(self.root), field="--data") from None
        self._local = threading.local()
        self._batch_writer = SharedWriter(self.connect)
        try:
            db = self.connect()
            try:
                db.execute("PRAGMA journal_mode=WAL")
                self.migrate(db)
            finally:
                db.close()
        except sqlite3.DatabaseError as error:
            raise InputError(f"the database cannot be opened ({error}): it is not a stimlab database or it is damaged; "
                             "restore it from a backup or choose another data folder", file=str(self.database),
                             field="--data") from None

    def request_connection(self) -> sqlite3.Connection:
        """This thread's long-lived connection, for web requests.

        Opening and closing a connection per request costs a WAL checkpoint each time the last one closes;
        one connection per server thread avoids that, and SQLite connections must not cross threads.
        """
        db = getattr(self._local, "db", None)
        if db is None:
            db = self._local.db = self.connect()
        if db.in_transaction:  # a request that failed half way: never carry its transaction over
            db.execute("ROLLBACK")
        return db

    def batch_connection(self):
        """The one connection the web server writes log batches on, held for a ``with`` block by one thread at a
        time, so that its page cache stays warm (:mod:`stimlab.sessions.shared_writer`)."""
        return self._batch_writer.connection()

    def connect(self, *, check_same_thread: bool = True) -> sqlite3.Connection:
        db = sqlite3.connect(self.database, timeout=10, isolation_level=None, check_same_thread=check_same_thread)
        db.row_factory = sqlite3.Row
        db.execute("PRAGMA foreign_keys=ON")
        db.execute("PRAGMA synchronous=NORMAL")
        return db

    @staticmethod
    def migrate(db: sqlite3.Connection) -> int:
        version = db.execute("PRAGMA user_version").fetchone()[0]
        for number, script in enumerate(MIGRATIONS[version:], start=version + 1):
            db.execute("BEGIN IMMEDIATE")
            try:
                if callable(script):
                    script(db)
                else:
                    for statement in (s for s in script.split(";") if s.strip()):
                        db.execute(statement)
                db.execute(f"PRAGMA user_version={number}")
                db.execute("COMMIT")
            except Exception:
                db.execute("ROLLBACK")
                raise
        return db.execute("PRAGMA user_version").fetchone()[0]

    # -- displays -----------------------------------------------------------------------------------------------
    def add_display(self, db, profile: dict) -> int:
        """Store a profile checked completely first (:func:`~stimlab.profiles.profile.profile_from_dict`), in one
        transaction; a profile already stored gives its existing number (and is un-archived)."""
        profile = profile_from_dict(profile, "profile")
        text = dumps(profile)
        db.execute("BEGIN IMMEDIATE")
        try:
            existing = db.execute("SELECT id FROM displays WHERE sha256 = ?", (profile["sha256"],)).fetchone()
            if existing:
                db.execute("UPDATE displays SET archived_at = NULL WHERE id = ?", (existing["id"],))
                display_id = existing["id"]
            else:
                version = db.execute("SELECT COALESCE(MAX(version), 0) + 1 FROM displays WHERE name = ?",
                                     (profile["name"],)).fetchone()[0]
                display_id = db.execute(
                    "INSERT INTO displays (name, version, sha256, profile, created_at) VALUES (?, ?, ?, ?, ?)",
                    (profile["name"], version, profile["sha256"], text, utc_now())).lastrowid
            db.execute("COMMIT")
        except BaseException:
            db.execute("ROLLBACK")
            raise
        return display_id

    def displays(self, db, *, archived: bool = False) -> list[dict]:
        """Displays, newest first: the active ones, or with ``archived=True`` only the archived ones."""
        rows = db.execute("SELECT id, name, version, sha256, created_at, archived_at, profile FROM displays WHERE "
                          f"archived_at IS {'NOT ' if archived else ''}NULL ORDER BY id DESC")
        return [self._display(row) for row in rows]

    def display(self, db, display_id: int) -> dict | None:
        """One display by number, archived or not (old sessions keep reading theirs)."""
        row = db.execute("SELECT id, name, version, sha256, created_at, archived_at, profile FROM displays "
                         "WHERE id = ?", (display_id,)).fetchone()
        return self._display(row) if row else None

    def archive_display(self, db, display_id: int, archived: bool = True) -> None:
        """Hide a display from lists and defaults (or show it again); its profile stays for the sessions run on it."""
        db.execute("UPDATE displays SET archived_at = ? WHERE id = ?", (utc_now() if archived else None, display_id))

    @staticmethod
    def _display(row) -> dict:
        return {"id": row["id"], "name": row["name"], "version": row["version"], "sha256": row["sha256"],
                "created_at": row["created_at"], "archived_at": row["archived_at"],
                "profile": loads(row["profile"], field=f"displays[{row['id']}].profile")}

    # -- settings -----------------------------------------------------------------------------------------------
    @staticmethod
    def setting(db, key: str, default=None):
        """A stored lab setting (JSON value), or ``default`` when it was never set."""
        row = db.execute("SELECT value FROM settings WHERE key = ?", (key,)).fetchone()
        return json.loads(row["value"]) if row else default

    @staticmethod
    def set_setting(db, key: str, value) -> None:
        db.execute("INSERT INTO settings (key, value, updated_at) VALUES (?, ?, ?) ON CONFLICT (key) DO UPDATE "
                   "SET value = excluded.value, updated_at = excluded.updated_at", (key, json.dumps(value), utc_now()))

    # -- protocols ----------------------------------------------------------------------------------------------
    def protocol_names(self) -> list[str]:
        return sorted(p.name for p in self.protocols.glob("*.json"))

    def read_protocol(self, name: str) -> tuple[str, dict | None, InputError | None]:
        """Text, parsed protocol (or None) and the validation error (or None) of a stored protocol file."""
        path = self.protocols / safe_protocol_name(name)
        if not path.is_file():
            raise FileNotFoundError(name)
        try:
            text = path.read_bytes().decode("utf-8-sig")
        except UnicodeDecodeError as error:
            text = path.read_bytes().decode("utf-8", errors="replace")
            return text, None, InputError(f"not UTF-8 text (byte {error.start}); save it as UTF-8", file=path.name)
        try:
            return text, parse_protocol(text, path.name), None
        except InputError as error:
            return text, None, error

    def save_protocol(self, name: str, protocol: dict, base_sha256: str | None) -> str:
        """Write a validated protocol, refusing to overwrite a file changed since ``base_sha256`` was read.

        The write goes to a temporary file that replaces the old one in one step, so a crash never leaves half a
        protocol. Returns the new content's sha256.
        """
        name = safe_protocol_name(name)
        path = self.protocols / name
        if path.exists():
            current = text_sha256(path.read_text(encoding="utf-8"))
            if base_sha256 != current:
                raise ConflictError("the protocol file changed on disk since you opened it; your edits are kept: "
                                    "merge them into the saved file or download them", file=name)
        check_value(protocol, file=name)  # before any file is opened: a lone surrogate must not leave a stub
        text = dumps(protocol, indent=2, ensure_ascii=False) + "\n"
        parse_protocol(text, name)
        temporary = path.with_suffix(".json.saving")
        try:
            temporary.write_bytes(text.encode("utf-8"))
            os.replace(temporary, path)
        finally:
            temporary.unlink(missing_ok=True)
        return text_sha256(text)

    # -- observer adjustments -----------------------------------------------------------------------------------
    def add_adjustment(self, db, participant: str, standard: str, summary: dict, session_id=None,
                       display_id=None) -> int:
        cursor = db.execute(
            "INSERT INTO observer_adjustments (participant, standard_observer, ratio, w_L, w_M, summary, session_id, "
            "display_id, created_at) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)",
            (participant, standard, summary["ratio"], summary["w_L"], summary["w_M"], json.dumps(summary), session_id,
             display_id, utc_now()))
        return cursor.lastrowid

    def latest_adjustment(self, db, participant: str) -> dict | None:
        row = db.execute("SELECT * FROM observer_adjustments WHERE participant = ? ORDER BY id DESC LIMIT 1",
                         (participant,)).fetchone()
        return {**dict(row), "summary": loads(row["summary"], field="summary")} if row else None

    # -- sessions -----------------------------------------------------------------------------------------------
    def sessions(self, db, protocol: str | None = None, participant: str | None = None,
                 status: str | None = None) -> list[dict]:
        query = ("SELECT s.id, s.protocol_file, s.participant, s.status, s.started_at, s.ended_at, s.dry_run, "
                 "s.end_reason, d.name AS display "
                 "FROM sessions s JOIN displays d ON d.id = s.display_id WHERE 1 = 1")
        args = []
        for column, value in (("s.protocol_file", protocol), ("s.participant", participant), ("s.status", status)):
            if value:
                query += f" AND {column} = ?"
                args.append(value)
        return [dict(row) for row in db.execute(query + " ORDER BY s.id DESC", args)]


def text_sha256(text: str) -> str:
    return hashlib.sha256(text.encode("utf-8")).hexdigest()
