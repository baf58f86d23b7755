"""The one batch connection: a write that failed half way never leaks into the next one, and the connection is
the same whichever server thread writes."""

import threading

import pytest

from stimlab.sessions.store import Store


def test_a_write_left_open_by_a_failed_request_is_rolled_back(tmp_path):
    store = Store(tmp_path)
    with pytest.raises(RuntimeError):
        with store.batch_connection() as db:
            db.execute("BEGIN IMMEDIATE")
            db.execute("INSERT INTO settings VALUES ('half', '1', 'now')")
            raise RuntimeError("the request failed here")
    with store.batch_connection() as db:
        assert not db.in_transaction
        assert db.execute("SELECT COUNT(*) FROM settings WHERE key = 'half'").fetchone()[0] == 0


def test_every_thread_writes_on_the_same_connection_with_the_stores_settings(tmp_path):
    store = Store(tmp_path)
    seen = []

    def write(n):
        with store.batch_connection() as db:
            db.execute("INSERT INTO settings VALUES (?, '1', 'now')", (f"thread {n}",))
            seen.append(db)

    threads = [threading.Thread(target=write, args=(n,)) for n in range(4)]
    for thread in threads:
        thread.start()
    for thread in threads:
        thread.join()
    assert len({id(db) for db in seen}) == 1
    db = seen[0]
    assert db.execute("PRAGMA journal_mode").fetchone()[0] == "wal"
    assert db.execute("PRAGMA synchronous").fetchone()[0] == 1  # NORMAL (SQLite, "PRAGMA synchronous")
    assert db.execute("PRAGMA foreign_keys").fetchone()[0] == 1
    assert store.connect().execute("SELECT COUNT(*) FROM settings WHERE key LIKE 'thread %'").fetchone()[0] == 4
