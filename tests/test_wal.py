"""The batch connection and the checkpoint thread: what is committed reaches the database file, a write that
failed half way never leaks into the next one, and a store that is gone leaves no thread behind."""

import gc
import sqlite3
import time

import pytest

from stimlab.sessions import wal
from stimlab.sessions.store import Store


def in_database_file(store, key, folder):
    """Whether the setting ``key`` is in the database file itself, not only in its write-ahead log: read from a
    copy of the file alone."""
    copy = folder / "copy.sqlite"
    copy.write_bytes(store.database.read_bytes())
    db = sqlite3.connect(copy)
    try:
        return db.execute("SELECT COUNT(*) FROM settings WHERE key = ?", (key,)).fetchone()[0] == 1
    finally:
        db.close()
        for path in folder.iterdir():
            path.unlink()


def test_request_connections_leave_checkpoints_to_the_thread(tmp_path):
    store = Store(tmp_path)
    db = store.request_connection()
    assert db.execute("PRAGMA wal_autocheckpoint").fetchone()[0] == wal.BACKSTOP_PAGES
    assert db.execute("PRAGMA journal_mode").fetchone()[0] == "wal"
    assert db.execute("PRAGMA synchronous").fetchone()[0] == 1  # NORMAL (SQLite, "PRAGMA synchronous")
    assert store._checkpoints.thread.is_alive()


def test_a_step_copies_what_was_committed_and_skips_when_nothing_was(tmp_path, monkeypatch):
    monkeypatch.setattr(wal, "INTERVAL_S", 3600)  # only the step below checkpoints
    (tmp_path / "copies").mkdir()
    store = Store(tmp_path / "data")
    with store.batch_connection() as db:
        db.execute("INSERT INTO settings VALUES ('lab', '\"Vale Street\"', 'now')")
    assert not in_database_file(store, "lab", tmp_path / "copies")  # committed to the log only
    checkpointer = store._checkpoints
    own = sqlite3.connect(store.database, isolation_level=None)
    assert checkpointer.step(own) is True
    assert in_database_file(store, "lab", tmp_path / "copies")
    assert checkpointer.step(own) is False  # nothing new was committed
    own.close()


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


def test_the_thread_ends_once_its_store_is_gone(tmp_path, monkeypatch):
    monkeypatch.setattr(wal, "INTERVAL_S", 0.01)
    store = Store(tmp_path)
    store.request_connection()
    thread = store._checkpoints.thread
    del store
    gc.collect()
    thread.join(timeout=10)
    assert not thread.is_alive()


def test_the_thread_checkpoints_on_its_own(tmp_path, monkeypatch):
    monkeypatch.setattr(wal, "INTERVAL_S", 0.01)
    (tmp_path / "copies").mkdir()
    store = Store(tmp_path / "data")
    with store.batch_connection() as db:
        db.execute("INSERT INTO settings VALUES ('lab', '1', 'now')")
    for _ in range(1000):  # polls for the thread's next round; no duration is asserted
        if in_database_file(store, "lab", tmp_path / "copies"):
            break
        time.sleep(0.01)
    assert in_database_file(store, "lab", tmp_path / "copies")


def test_a_checkpoint_follows_every_so_many_batches_even_while_writes_go_on(tmp_path, monkeypatch):
    monkeypatch.setattr(wal, "INTERVAL_S", 3600)  # never idle long enough: only the batch count can trigger it
    (tmp_path / "copies").mkdir()
    store = Store(tmp_path / "data")
    for n in range(wal.BATCHES_PER_CHECKPOINT):
        with store.batch_connection() as db:
            db.execute("INSERT INTO settings VALUES (?, '1', 'now')", (f"batch {n}",))
    last = f"batch {wal.BATCHES_PER_CHECKPOINT - 1}"
    for _ in range(1000):  # polls for the thread; no duration is asserted
        if in_database_file(store, last, tmp_path / "copies"):
            break
        time.sleep(0.01)
    assert in_database_file(store, last, tmp_path / "copies")
