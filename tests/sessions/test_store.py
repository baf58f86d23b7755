"""The data folder: migrations, WAL, versions."""

import sqlite3

from stimlab.sessions.store import MIGRATIONS, Store


def test_new_folder_is_migrated_to_the_latest_schema(tmp_path):
    store = Store(tmp_path)
    db = store.connect()
    assert db.execute("PRAGMA user_version").fetchone()[0] == len(MIGRATIONS)
    assert db.execute("PRAGMA journal_mode").fetchone()[0] == "wal"
    tables = {r[0] for r in db.execute("SELECT name FROM sqlite_master WHERE type = 'table'")}
    assert {"displays", "sessions", "events", "frames", "batches"} <= tables


def test_reopening_keeps_the_data(tmp_path, demo):
    store = Store(tmp_path)
    with store.connect() as db:
        store.add_display(db, demo)
    again = Store(tmp_path)
    with again.connect() as db:
        assert [d["name"] for d in again.displays(db)] == ["Vale Street B12 LCD"]
        assert again.add_display(db, demo) == 1  # the same profile is not stored twice


def test_a_failing_migration_leaves_the_database_as_it_was(tmp_path, monkeypatch):
    store = Store(tmp_path)
    monkeypatch.setattr("stimlab.sessions.store.MIGRATIONS", MIGRATIONS + ["CREATE TABLE broken (", "x"])
    db = store.connect()
    try:
        Store.migrate(db)
    except sqlite3.Error:
        pass
    assert db.execute("PRAGMA user_version").fetchone()[0] == len(MIGRATIONS)
