"""Ingest a one-hour 120 Hz frame log (432,000 frames) through the batch API and export it to CSV.

The batches go through the Flask app's API (test client: the same routes, guards, validation and one-transaction
writes as over HTTP, without the network), one second of frames per batch as the runner sends them: packed
columns (see ``stimlab/frame_log.py``), the session's run token and no cookies, the body already encoded.

Side by side, in the same run, so that the numbers read the same on a fast or a slow machine:

- ``floor_s``: as many requests, through the same client, to a route that does no work (a 404): the framework's
  own cost, which the ingest cannot go below with one request per batch;
- ``csv_module_s``: the same 432,000 rows, already in memory as tuples, written by Python's ``csv`` module.

Peak Python memory is measured for the export (it streams in chunks, so it stays flat).
Last line: ``ingest_s=… export_s=… floor_s=… ingest_over_floor=… csv_module_s=… export_over_csv=…
export_peak_mib=…``. Target: ingest + export under 3 s.
"""

from __future__ import annotations

import csv
import json
import os
import re
import sys
import tempfile
import time
import tracemalloc
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

import numpy as np  # noqa: E402

from stimlab.profiles.demo import install_demo  # noqa: E402
from stimlab.sessions.export import frames_csv  # noqa: E402
from stimlab.sessions.frame_log import FrameBlock  # noqa: E402
from stimlab.sessions.ingest import iter_frames  # noqa: E402
from stimlab.web import create_app  # noqa: E402

REFRESH = 120
FRAMES = int(os.environ.get("BENCH_SECONDS", 3600)) * REFRESH


def batch_bodies() -> list[str]:
    """One body per second of frames, as the runner encodes them."""
    period = 1000 / REFRESH
    bodies = []
    for batch, first in enumerate(range(0, FRAMES, REFRESH)):
        numbers = np.arange(first, first + REFRESH)
        # Timestamps at the 5 µs resolution of a cross-origin-isolated page.
        frames = FrameBlock({"frame": numbers.astype("<u4"), "t_raf": np.round(numbers * period, 3),
                             "t_callback": np.round(numbers * period + 0.05, 3),
                             "trial": (numbers // 3000).astype("<i4"), "phase": np.zeros(REFRESH, "<u2"),
                             "dropped": np.zeros(REFRESH, "u1"), "drawn": np.ones(REFRESH, "<u2")},
                            ["adapt", "512,498,530"])
        events = [{"seq": batch, "t": first * period, "kind": "tick", "trial": first // 3000, "phase": "adapt",
                   "data": {}}]
        bodies.append(json.dumps({"batch": batch, "events": events, "frames": frames.packed()}))
    return bodies


def main() -> None:
    with tempfile.TemporaryDirectory() as folder:
        app = create_app(folder, testing=True)
        store = app.extensions["stimlab.store"]
        install_demo(store)
        client = app.test_client()
        token = re.search(r'name="csrf-token" content="([^"]+)"', client.get("/run").text).group(1)
        created = client.post("/api/sessions", json={"protocol": "afterimage_duration.json", "display": 1,
                                                     "participant": "B01"}, headers={"X-CSRF-Token": token})
        session_id = created.get_json()["id"]
        run_token = re.search(r'data-run-token="([^"]+)"', client.get(f"/run/{session_id}").text).group(1)
        runner = app.test_client(use_cookies=False)
        headers = {"X-Run-Token": run_token}
        bodies = batch_bodies()

        start = time.perf_counter()
        for body in bodies:
            response = runner.post(f"/api/sessions/{session_id}/batches", data=body, headers=headers,
                                   content_type="application/json")
            assert response.status_code == 200, response.get_data(as_text=True)
        ingest = time.perf_counter() - start
        start = time.perf_counter()
        for _ in bodies:
            runner.post("/api/no-such-route", data="{}", headers=headers, content_type="application/json")
        floor = time.perf_counter() - start

        db = store.connect()
        start = time.perf_counter()
        with open(Path(folder) / "frames.csv", "w") as out:
            count = frames_csv(db, session_id, out)
        export = time.perf_counter() - start
        rows = list(iter_frames(db, session_id))
        start = time.perf_counter()
        with open(Path(folder) / "reference.csv", "w", newline="") as out:
            csv.writer(out).writerows(rows)
        reference = time.perf_counter() - start
        del rows
        tracemalloc.start()  # a second pass, for memory only: tracing slows every allocation
        with open(Path(folder) / "frames2.csv", "w") as out:
            frames_csv(db, session_id, out)
        _, peak = tracemalloc.get_traced_memory()
        tracemalloc.stop()
        assert count == FRAMES
        size = (Path(folder) / "frames.csv").stat().st_size
    print(f"  ingest {FRAMES:,} frames in {len(bodies):,} batches: {ingest:.2f} s ({FRAMES / ingest:,.0f} frames/s); "
          f"{len(bodies):,} empty requests: {floor:.2f} s")
    print(f"  export to CSV ({size / 2**20:.1f} MiB): {export:.2f} s, peak Python memory {peak / 2**20:.1f} MiB; "
          f"csv module on rows in memory: {reference:.2f} s")
    print(f"  ingest + export: {ingest + export:.2f} s (target < 3 s)")
    print(f"ingest_s={ingest:.3f} export_s={export:.3f} floor_s={floor:.3f} ingest_over_floor={ingest / floor:.2f} "
          f"csv_module_s={reference:.3f} export_over_csv={export / reference:.2f} export_peak_mib={peak / 2**20:.2f}")


if __name__ == "__main__":
    main()
