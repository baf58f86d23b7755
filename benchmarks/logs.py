"""Ingest a one-hour 120 Hz frame log (432,000 frames) through the batch API and export it to CSV.

The batches go through the Flask app's API (test client: the same routes, validation and one-transaction writes
as over HTTP, without the network), one second of frames per batch in the runner's columnar form, already
encoded as the browser sends them.
Peak Python memory is measured for the export (it streams, so it should stay flat).
Last line: ``ingest_s=… export_s=… export_peak_mib=…``. Target: ingest + export under 3 s.
"""

from __future__ import annotations

import json
import re
import sys
import tempfile
import time
import tracemalloc
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from stimlab.demo_data import install_demo  # noqa: E402
from stimlab.export import frames_csv  # noqa: E402
from stimlab.web import create_app  # noqa: E402

REFRESH = 120
FRAMES = int(__import__("os").environ.get("BENCH_SECONDS", 3600)) * REFRESH


def main() -> None:
    with tempfile.TemporaryDirectory() as folder:
        app = create_app(folder, testing=True)
        install_demo(app.extensions["stimlab.store"])
        client = app.test_client()
        token = re.search(r'name="csrf-token" content="([^"]+)"', client.get("/run").text).group(1)
        headers = {"X-CSRF-Token": token}
        created = client.post("/api/sessions", json={"protocol": "afterimage_duration.json", "display": 1,
                                                     "participant": "B01"}, headers=headers)
        session_id = created.get_json()["id"]
        period = 1000 / REFRESH
        bodies = []
        seq = 0
        for batch, first in enumerate(range(0, FRAMES, REFRESH)):
            numbers = list(range(first, first + REFRESH))
            # Timestamps at the 5 µs resolution of a cross-origin-isolated page, as the browser reports them.
            frames = {"frame": numbers, "t_raf": [round(f * period, 3) for f in numbers],
                      "t_callback": [round(f * period + 0.05, 3) for f in numbers], "trial": [f // 3000 for f in numbers],
                      "phase": ["adapt"] * REFRESH, "dropped": [0] * REFRESH, "drawn": ["512,498,530"] * REFRESH}
            events = [{"seq": seq, "t": first * period, "kind": "tick", "trial": first // 3000, "phase": "adapt",
                       "data": {}}]
            seq += 1
            # Encoded up front, as the browser sends text: the timing is the server's work, not the client's.
            bodies.append(json.dumps({"batch": batch, "events": events, "frames": frames}))
        start = time.perf_counter()
        for body in bodies:
            response = client.post(f"/api/sessions/{session_id}/batches", data=body, headers=headers,
                                   content_type="application/json")
            assert response.status_code == 200, response.get_data(as_text=True)
        ingest = time.perf_counter() - start

        store = app.extensions["stimlab.store"]
        db = store.connect()
        start = time.perf_counter()
        with open(Path(folder) / "frames.csv", "w") as out:
            count = frames_csv(db, session_id, out)
        export = time.perf_counter() - start
        tracemalloc.start()  # a second pass, for memory only: tracing slows every allocation
        with open(Path(folder) / "frames2.csv", "w") as out:
            frames_csv(db, session_id, out)
        _, peak = tracemalloc.get_traced_memory()
        tracemalloc.stop()
        assert count == FRAMES
        size = (Path(folder) / "frames.csv").stat().st_size
        print(f"  ingest {FRAMES:,} frames in {len(bodies):,} batches: {ingest:.2f} s ({FRAMES / ingest:,.0f} frames/s)")
        print(f"  export to CSV ({size / 2**20:.1f} MiB): {export:.2f} s, peak Python memory {peak / 2**20:.1f} MiB")
        print(f"ingest_s={ingest:.3f} export_s={export:.3f} export_peak_mib={peak / 2**20:.2f}")


if __name__ == "__main__":
    main()
