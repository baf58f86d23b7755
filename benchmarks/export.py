"""Export a one-hour 120 Hz frame log (432,000 frames) as CSV and as Parquet, a 100-session study as a Parquet
dataset, and aggregate over that dataset with DuckDB.

Side by side, in the same run, so that the ratio reads the same on a fast or a slow machine:

- ``csv_s``: the frame log as CSV (the web download and ``stimlab export --format frames``);
- ``parquet_s``: the same frame table as one Parquet file (typed columns, exact doubles, zstd);
- ``study_export_s``: 100 sessions of ``contrast_match.json`` (20 trials and a minute of frames each) as the
  Parquet dataset partitioned by participant and session;
- ``duckdb_query_s``: frames, dropped frames and the mean callback delay per participant and session over it.

The sessions are written straight into the store (``ingest_batch``, the function behind the batch route), so the
benchmark measures the exports and not the web layer. Last line: ``parquet_over_csv=… study_export_s=…
duckdb_query_s=…`` (``parquet_over_csv`` is how many times faster the Parquet frame export is). Target: ≥ 5.
"""

from __future__ import annotations

import io
import json
import os
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

import duckdb  # noqa: E402
import numpy as np  # noqa: E402

from stimlab.profiles.demo import install_demo  # noqa: E402
from stimlab.sessions.export import frames_csv, study_sessions  # noqa: E402
from stimlab.sessions.frame_log import FrameBlock  # noqa: E402
from stimlab.sessions.ingest import get_session, ingest_batch  # noqa: E402
from stimlab.sessions.parquet import write_frames_parquet, write_study_parquet  # noqa: E402
from stimlab.web import create_app  # noqa: E402

REFRESH = 120
HOUR_FRAMES = int(os.environ.get("BENCH_SECONDS", 3600)) * REFRESH
STUDY_SESSIONS = int(os.environ.get("BENCH_SESSIONS", 100))
STUDY_FRAMES = 60 * REFRESH


def frame_batches(count: int, trials: int):
    period = 1000 / REFRESH
    per_trial = max(count // trials, 1)
    for batch, first in enumerate(range(0, count, REFRESH)):
        numbers = np.arange(first, min(first + REFRESH, count))
        yield batch, FrameBlock({"frame": numbers.astype("<u4"), "t_raf": np.round(numbers * period, 3),
                                 "t_callback": np.round(numbers * period + 0.05, 3),
                                 "trial": np.minimum(numbers // per_trial, trials - 1).astype("<i4"),
                                 "phase": np.ones(numbers.size, "<u2"), "dropped": (numbers % 997 == 0).astype("u1"),
                                 "drawn": np.zeros(numbers.size, "<u2")},
                                ["763,755,771;902,699,772", "test"]).packed()


def log_session(db, session_id: int, frames: int) -> None:
    data = get_session(db, session_id)["compiled"]
    trials = len(data["trials"])
    period = 1000 / REFRESH
    events = []
    for trial in data["trials"]:
        t = trial["index"] * frames / trials * period
        response = data["conditions"][trial["condition"]]["response"]
        events += [{"seq": len(events), "t": t, "kind": "phase_onset", "trial": trial["index"], "phase": "test",
                    "data": {"frame": int(t / period), "condition": trial["condition"]}},
                   {"seq": len(events) + 1, "t": t + 2000, "kind": "trial_end", "trial": trial["index"],
                    "data": {"condition": trial["condition"], "dropped_frames": 0,
                             "response": {"method": "adjustment", "position": [-0.02, 0.03], "rt_ms": 1500.0,
                                          "device": response["device"][len(response["device"]) // 2]}}}]
    for batch, block in frame_batches(frames, trials):
        ingest_batch(db, session_id, {"batch": batch, "frames": block, "events": events if batch == 0 else []})


def timed(action):
    start = time.perf_counter()
    result = action()
    return time.perf_counter() - start, result


def main() -> None:
    with tempfile.TemporaryDirectory() as folder:
        folder = Path(folder)
        app = create_app(folder / "data", testing=True)
        store = app.extensions["stimlab.store"]
        install_demo(store)
        client = app.test_client()
        import re

        token = re.search(r'name="csrf-token" content="([^"]+)"', client.get("/run").text).group(1)
        first = client.post("/api/sessions", json={"protocol": "contrast_match.json", "display": 1,
                                                   "participant": "B000"}, headers={"X-CSRF-Token": token})
        first = first.get_json()["id"]
        db = store.connect()
        for i in range(1, STUDY_SESSIONS + 1):  # copies of the compiled session: compiling 100 times is not measured
            db.execute("INSERT INTO sessions (protocol_file, protocol_sha256, display_id, participant, status, "
                       "started_at, compiled, software_version) SELECT protocol_file, protocol_sha256, display_id, ?, "
                       "status, started_at, compiled, software_version FROM sessions WHERE id = ?",
                       (f"B{i % 25:03d}", first))
        log_session(db, first, HOUR_FRAMES)
        hour = get_session(db, first)
        for session_id in range(first + 1, first + 1 + STUDY_SESSIONS):
            log_session(db, session_id, STUDY_FRAMES)

        csv_s, frames = timed(lambda: frames_csv(db, hour, io.StringIO()))
        parquet_s, same = timed(lambda: write_frames_parquet(db, hour, folder / "hour.parquet"))
        assert frames == same == HOUR_FRAMES
        study = [s for s in study_sessions(db, "contrast_match.json") if s["id"] != first]
        study_s, counts = timed(lambda: write_study_parquet(db, store, study, folder / "study"))
        frames_glob = f"read_parquet('{folder}/study/frames/*/*/*.parquet', hive_partitioning = true)"
        query_s, rows = timed(lambda: duckdb.sql(
            f"SELECT participant, session, count(*), sum(dropped), avg(t_callback - t_raf) FROM {frames_glob} "
            "GROUP BY ALL").fetchall())
        assert len(rows) == STUDY_SESSIONS and sum(r[2] for r in rows) == counts["frames"]
        print(json.dumps({"frames": HOUR_FRAMES, "csv_s": round(csv_s, 3), "parquet_s": round(parquet_s, 3),
                          "parquet_mib": round((folder / "hour.parquet").stat().st_size / 2**20, 1),
                          "study_sessions": STUDY_SESSIONS, "study_trials": counts["trials"],
                          "study_frames": counts["frames"]}))
        print(f"parquet_over_csv={csv_s / parquet_s:.2f} study_export_s={study_s:.3f} duckdb_query_s={query_s:.3f}")


if __name__ == "__main__":
    main()
