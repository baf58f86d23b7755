"""A whole study as a Parquet dataset partitioned by participant and session, read back with DuckDB and pandas and
counted against the SQLite store."""

import json

import duckdb
import pytest
import simulated_sessions as sim

from stimlab.sessions.export import study_sessions
from stimlab.sessions.ingest import iter_frames
from stimlab.sessions.parquet import write_study_parquet


@pytest.fixture
def written(app, client, tmp_path):
    def respond(trial, condition):
        return sim.adjustment([0.01, -0.02], condition["response"])

    for code in ("P01", "P02", "P01"):
        sim.run(app, client, "contrast_match.json", code, respond)
    store = app.extensions["stimlab.store"]
    db = store.connect()
    counts = write_study_parquet(db, store, study_sessions(db, "contrast_match.json"), tmp_path / "study")
    return db, tmp_path / "study", counts


def test_duckdb_reads_the_dataset_with_the_counts_of_the_sqlite_store(written):
    db, folder, counts = written
    trials = f"read_parquet('{folder}/trials/*/*/*.parquet', hive_partitioning = true, union_by_name = true)"
    frames = f"read_parquet('{folder}/frames/*/*/*.parquet', hive_partitioning = true)"
    got = dict(duckdb.sql(f"SELECT session, count(*) FROM {trials} GROUP BY session").fetchall())
    compiled = {r[0]: len(json.loads(r[1])["trials"]) for r in db.execute("SELECT id, compiled FROM sessions")}
    assert got == compiled and counts["trials"] == sum(compiled.values())
    got = dict(duckdb.sql(f"SELECT session, count(*) FROM {frames} GROUP BY session").fetchall())
    stored = dict(db.execute("SELECT session_id, SUM(count) FROM frames GROUP BY session_id").fetchall())
    assert got == stored and counts["frames"] == sum(stored.values())
    participants = duckdb.sql(f"SELECT participant, count(DISTINCT session) FROM {trials} GROUP BY ALL "
                              "ORDER BY participant").fetchall()
    assert participants == [("P01", 2), ("P02", 1)]
    mean = duckdb.sql(f"SELECT avg(response_dkl_s) FROM {trials}").fetchall()[0][0]
    assert mean == pytest.approx(-0.02, abs=1e-9)


def test_frame_times_come_back_as_the_exact_doubles(written):
    db, folder, _ = written
    stored = [f[1] for f in iter_frames(db, 1)]
    back = [r[0] for r in duckdb.sql(f"SELECT t_raf FROM read_parquet('{folder}/frames/participant=P01/session=1/*.parquet') "
                                     "ORDER BY frame").fetchall()]
    assert back == stored  # bit for bit: no decimal round trip
    levels = duckdb.sql(f"SELECT drawn_inducer_device_r, trial FROM read_parquet('{folder}/frames/*/*/*.parquet', "
                        "hive_partitioning = true) WHERE phase = 'settle' LIMIT 1").fetchall()[0]
    assert levels == (None, None)  # no trial, no inducer drawn: nulls, not -1


def test_pandas_reads_the_partitioned_dataset_and_the_dictionary_describes_it(written):
    pandas = pytest.importorskip("pandas")
    db, folder, counts = written
    frame = pandas.read_parquet(folder / "trials")
    assert len(frame) == counts["trials"] and set(frame["participant"].astype(str)) == {"P01", "P02"}
    dictionary = json.loads((folder / "trials.json").read_text())
    assert set(frame.columns) - {"participant", "session"} <= set(dictionary)
    sessions = pandas.read_parquet(folder / "sessions.parquet")
    assert len(sessions) == 3 and sessions["protocol_sha256"].nunique() == 1


def test_the_study_page_offers_the_parquet_dataset(written, client):
    answer = client.get("/studies/contrast_match.json/export.parquet")
    assert answer.status_code == 200 and answer.mimetype == "application/zip"


def test_the_three_line_query_in_the_readme_runs(written, monkeypatch):
    pytest.importorskip("pandas")
    db, folder, counts = written
    readme = (__import__("pathlib").Path(__file__).parents[2] / "README.md").read_text()
    start = readme.index("      import duckdb\n")
    lines = [line.strip() for line in readme[start:].splitlines()[:3]]
    monkeypatch.chdir(folder.parent)
    scope = {}
    exec("\n".join(lines[:2]), scope)
    table = eval(lines[2], scope)
    assert len(table) == 2 * 4  # participants × the four surround conditions
