"""How the web server writes log batches to the WAL database cheaply: on one warm connection, with checkpoints run
off the request path.

*One connection for batches.* The server's threads take requests in turn, each with its own connection; in WAL
mode a connection drops its whole page cache when it finds that another one has committed since its last
transaction (SQLite, "Write-Ahead Logging", WAL-index). A batch arriving on a thread whose connection sat idle while
others wrote re-read every index page it touched, which doubled the cost of storing it. SQLite lets one writer
commit at a time anyway, so :class:`SharedWriter` hands all batches one connection, one thread at a time, and its
cache stays warm.

*Checkpoints in a thread.* A commit appends pages to the write-ahead log; a checkpoint copies them back into the
database file and syncs both files. SQLite runs one by default inside whichever commit takes the log past 1,000
pages, so one batch in a few hundred waited for two syncs (15 ms against a median commit of 30 µs). The SQLite WAL
documentation ("Automatic Checkpoint") names the alternative used here: raise the automatic threshold on the
request connections and run checkpoints in a separate thread (:class:`Checkpointer`), as often as SQLite would
(every :data:`BATCHES_PER_CHECKPOINT` batches) and once the database falls idle. Checkpointing more often (every
second) was tried and made batches wait longer: each checkpoint's sync holds up the log writes of the moment.

Durability is unchanged: with ``synchronous=NORMAL`` no commit is synced in either case, and a checkpoint syncs the
log before it copies anything (SQLite, "PRAGMA synchronous"), so an application crash loses nothing committed. The
request connections keep a far higher automatic threshold (:data:`BACKSTOP_PAGES`) that bounds the log should the
thread ever fall behind.
"""

from __future__ import annotations

import contextlib
import sqlite3
import threading
import weakref
from pathlib import Path

__all__ = ["Checkpointer", "SharedWriter", "INTERVAL_S", "BATCHES_PER_CHECKPOINT", "BACKSTOP_PAGES"]

INTERVAL_S = 2.0  # the database counts as idle after this long without a commit
BATCHES_PER_CHECKPOINT = 150  # a batch of a second at 120 Hz writes 6–7 pages: about SQLite's own 1,000
BACKSTOP_PAGES = 10_000  # about 40 MB of log (4 KiB pages): reached only if the thread cannot keep up


class SharedWriter:
    """One connection that the server's threads use one at a time (``with writer.connection() as db``).

    ``connect`` makes it on first use; it must accept ``check_same_thread=False``.
    """

    def __init__(self, connect):
        self._connect = connect
        self._lock = threading.Lock()
        self._db = None
        self.after_write = None  # called after each use (the checkpointer counts batches)

    @contextlib.contextmanager
    def connection(self):
        with self._lock:
            if self._db is None:
                self._db = self._connect(check_same_thread=False)
                self._db.execute(f"PRAGMA wal_autocheckpoint={BACKSTOP_PAGES}")
            if self._db.in_transaction:  # a write that failed half way: never carry its transaction over
                self._db.execute("ROLLBACK")
            try:
                yield self._db
            finally:
                if self.after_write is not None:
                    self.after_write()


class Checkpointer:
    """A daemon thread that checkpoints the WAL after every :data:`BATCHES_PER_CHECKPOINT` batches (counted by
    :meth:`note_batch`) and once no commit has come for :data:`INTERVAL_S` (``PRAGMA data_version``).

    It holds its owner weakly and stops once the owner is gone or the database file has been removed, so short-lived
    stores (tests, one-off commands) leave no thread behind for long.
    """

    def __init__(self, owner, database: Path):
        self._owner = weakref.ref(owner)
        self._database = Path(database)
        self._seen = None
        self._batches = 0
        self._due = threading.Event()
        self.thread = threading.Thread(target=self._run, name="stimlab-checkpoints", daemon=True)
        self.thread.start()

    def note_batch(self) -> None:
        self._batches += 1  # an approximate count is enough: it only says when to checkpoint
        if self._batches >= BATCHES_PER_CHECKPOINT:
            self._due.set()

    def step(self, db: sqlite3.Connection) -> bool:
        """Checkpoint on ``db`` if anything was committed since the last step; whether it did."""
        version = db.execute("PRAGMA data_version").fetchone()[0]
        if version == self._seen:
            return False
        # PASSIVE waits for no reader or writer: requests go on while the pages are copied.
        db.execute("PRAGMA wal_checkpoint(PASSIVE)").fetchone()
        self._seen = version
        return True

    def _run(self) -> None:
        db = None
        looked = None
        try:
            while True:
                due = self._due.wait(INTERVAL_S)
                self._due.clear()
                if self._owner() is None or not self._database.exists():
                    return
                try:
                    if db is None:
                        db = sqlite3.connect(self._database, timeout=1, isolation_level=None)
                        db.execute("PRAGMA synchronous=NORMAL")  # as the request connections: sync at checkpoints
                    version = db.execute("PRAGMA data_version").fetchone()[0]
                    if due or version == looked:  # enough batches, or nothing committed since the last look
                        self._batches = 0
                        self.step(db)
                    looked = version
                except sqlite3.Error:
                    continue  # busy or locked this time: the next round (or the backstop) catches up
        finally:
            if db is not None:
                db.close()
