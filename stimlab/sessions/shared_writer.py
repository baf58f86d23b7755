"""One warm connection for the web server's log batches.

The server's threads take requests in turn, each with its own connection; in WAL mode a connection drops its whole
page cache when it finds that another one has committed since its last transaction (SQLite, "Write-Ahead
Logging", WAL-index). A batch arriving on a thread whose connection sat idle while others wrote re-read every
index page it touched, which doubled the cost of storing it. SQLite lets one writer commit at a time anyway, so
:class:`SharedWriter` hands all batches one connection, one thread at a time, and its cache stays warm. A thread
holds it only to write: a batch is checked before (:func:`stimlab.sessions.ingest.check_batch`).

Checkpoints stay SQLite's automatic ones (every 1,000 pages, inside the commit that crosses the mark). Running them
in a thread of their own instead was tried: on a two-core machine the thread's copying competed with the requests,
and the live runners' slowest batches took longer.
"""

from __future__ import annotations

import contextlib
import threading

__all__ = ["SharedWriter"]


class SharedWriter:
    """One connection that the server's threads use one at a time (``with writer.connection() as db``).

    ``connect`` makes it on first use; it must accept ``check_same_thread=False``.
    """

    def __init__(self, connect):
        self._connect = connect
        self._lock = threading.Lock()
        self._db = None

    @contextlib.contextmanager
    def connection(self):
        with self._lock:
            if self._db is None:
                self._db = self._connect(check_same_thread=False)
            if self._db.in_transaction:  # a write that failed half way: never carry its transaction over
                self._db.execute("ROLLBACK")
            yield self._db
