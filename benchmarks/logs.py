"""Ingest a one-hour 120 Hz frame log (432,000 frames) through the batch API and export it to CSV.

The batches go through the Flask app's API (test client: the same routes, guards, validation and one-transaction
writes as over HTTP, without the network), one second of frames per batch as the runner sends them: packed
columns (see ``stimlab/frame_log.py``), the session's run token and no cookies, the body already encoded.

Side by side, in the same run, so that the numbers read the same on a fast or a slow machine:

- ``floor_s``: as many requests, through the same client, to a route that does no work (a 404): the framework's
  own cost, which the ingest cannot go below with one request per batch;
- ``csv_module_s``: the same 432,000 rows, already in memory as tuples, written by Python's ``csv`` module.

Peak Python memory is measured for the export (it streams in chunks, so it stays flat).

Then against the production server (``stimlab serve``: waitress, a separate process, over HTTP with keep-alive):

- ``p99_batch_ms``: four runners at 120 Hz, each posting one batch a second for ``BENCH_LIVE_S`` seconds
  (default 120), the 99th percentile of the time from sending a batch to its acknowledgement;
- ``rss_growth_mib``: the server's resident memory after a ``BENCH_SOAK``-request soak (default 10,000: pages,
  API reads and batches) minus after a warm-up of 1,000;
- ``ingest_over_floor``: the time for 1,000 batches over that of 1,000 bare requests (a 404) to the same server,
  one of each in turn, each timed alone, the batch bodies made before the clock starts.

Last line: ``ingest_s=… export_s=… floor_s=… client_ingest_over_floor=… csv_module_s=… export_over_csv=…
export_peak_mib=… p99_batch_ms=… rss_growth_mib=… ingest_over_floor=…``. Targets: ingest + export under 3 s;
p99 under 50 ms, memory growth under 10 MiB after warm-up, ingest_over_floor ≤ 1.5.
"""

from __future__ import annotations

import csv
import http.client
import http.cookiejar
import json
import os
import re
import socket
import subprocess
import sys
import tempfile
import threading
import time
import tracemalloc
import urllib.request
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

import numpy as np  # noqa: E402

from stimlab.profiles.demo import install_demo  # noqa: E402
from stimlab.sessions.export import frames_csv  # noqa: E402
from stimlab.sessions.frame_log import FrameBlock, read_block  # noqa: E402
from stimlab.sessions.ingest import iter_frames  # noqa: E402
from stimlab.web import create_app  # noqa: E402

REFRESH = 120
FRAMES = int(os.environ.get("BENCH_SECONDS", 3600)) * REFRESH
LIVE_S = int(os.environ.get("BENCH_LIVE_S", 120))
SOAK = int(os.environ.get("BENCH_SOAK", 10_000))


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
                             "dropped": np.zeros(REFRESH, "u1"), "drawn": np.ones(REFRESH, "<u2"),
                             "in_phase": (numbers % 3000).astype("<i4")},
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
    live = production_server(bodies)
    print(f"  production server: p99 batch {live['p99']:.1f} ms over {live['posted']:,} batches from 4 runners "
          f"(target < 50 ms); RSS {live['rss_warm']:.1f} → {live['rss_end']:.1f} MiB over a {SOAK:,}-request soak "
          f"(target growth < 10 MiB); 1,000 batches {live['ingest']:.2f} s vs 1,000 bare requests {live['floor']:.2f} s")
    print(f"ingest_s={ingest:.3f} export_s={export:.3f} floor_s={floor:.3f} client_ingest_over_floor={ingest / floor:.2f} "
          f"csv_module_s={reference:.3f} export_over_csv={export / reference:.2f} export_peak_mib={peak / 2**20:.2f} "
          f"p99_batch_ms={live['p99']:.1f} rss_growth_mib={live['rss_end'] - live['rss_warm']:.1f} "
          f"ingest_over_floor={live['ingest'] / live['floor']:.2f}")


def _rss_mib(pid: int) -> float:
    for line in Path(f"/proc/{pid}/status").read_text().splitlines():
        if line.startswith("VmRSS:"):
            return int(line.split()[1]) / 1024
    return float("nan")


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


class _Runner:
    """One runner's keep-alive connection, posting its session's batches with its run token."""

    def __init__(self, port: int, session_id: int, token: str):
        self.connection = http.client.HTTPConnection("127.0.0.1", port, timeout=30)
        self.path = f"/api/sessions/{session_id}/batches"
        self.headers = {"X-Run-Token": token, "Content-Type": "application/json"}

    def request(self, method: str, path: str, body: str | None = None) -> int:
        for attempt in (1, 2):  # a keep-alive connection the server closed is opened again, as a browser does
            try:
                self.connection.request(method, path, body=body, headers=self.headers)
                response = self.connection.getresponse()
                response.read()
                return response.status
            except (ConnectionError, http.client.HTTPException):
                self.connection.close()
                if attempt == 2:
                    raise

    def post(self, body: str) -> float:
        start = time.perf_counter()
        status = self.request("POST", self.path, body)
        assert status == 200, status
        return (time.perf_counter() - start) * 1000


def production_server(bodies: list[str]) -> dict:
    """Latency, memory and overhead of ``stimlab serve`` under four live runners and a soak."""
    with tempfile.TemporaryDirectory() as folder:
        port = _free_port()
        process = subprocess.Popen([sys.executable, "-m", "stimlab.cli", "serve", "--demo", "--data", folder,
                                    "--port", str(port)], stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        try:
            url = f"http://127.0.0.1:{port}"
            for _ in range(200):
                try:
                    urllib.request.urlopen(url + "/api/", timeout=1)
                    break
                except OSError:
                    time.sleep(0.1)
            opener = urllib.request.build_opener(urllib.request.HTTPCookieProcessor(http.cookiejar.CookieJar()))
            csrf = re.search(r'name="csrf-token" content="([^"]+)"',
                             opener.open(url + "/protocols").read().decode()).group(1)
            runners = []
            for i in range(5):
                request = urllib.request.Request(url + "/api/sessions", method="POST", headers={
                    "X-CSRF-Token": csrf, "Content-Type": "application/json"}, data=json.dumps(
                    {"protocol": "afterimage_duration.json", "display": 1, "participant": f"B0{i}"}).encode())
                session_id = json.load(opener.open(request))["id"]
                token = re.search(r'data-run-token="([^"]+)"',
                                  opener.open(f"{url}/run/{session_id}").read().decode()).group(1)
                runners.append(_Runner(port, session_id, token))

            # Four live runners, one batch a second each, started a quarter second apart as real ones would be.
            latencies: list[float] = []

            def live(runner: _Runner, offset: float):
                time.sleep(offset)
                start = time.perf_counter()
                for second in range(min(LIVE_S, len(bodies))):
                    latencies.append(runner.post(bodies[second]))
                    time.sleep(max(0.0, start + second + 1 - time.perf_counter()))

            threads = [threading.Thread(target=live, args=(r, i / 4)) for i, r in enumerate(runners[:4])]
            for thread in threads:
                thread.start()
            for thread in threads:
                thread.join()

            # The soak: pages, API reads and batches from one client, memory read after warm-up and at the end.
            soak = runners[4]
            session_path = soak.path.rsplit("/", 1)[0]
            routes = [("GET", "/protocols"), ("GET", "/api/displays"), ("GET", session_path), ("GET", "/sessions")]
            next_batch = 0

            def one(i: int):
                nonlocal next_batch
                if i % 5 == 4:
                    soak.post(_renumber(bodies[next_batch % len(bodies)], next_batch))
                    next_batch += 1
                else:
                    soak.request(*routes[i % 4])

            for i in range(1000):
                one(i)
            rss_warm = _rss_mib(process.pid)
            for i in range(SOAK):
                one(i)
            rss_end = _rss_mib(process.pid)

            # Side by side: a bare request and a batch in turn, each timed alone, so that a change in the machine's
            # load falls on both; the batch bodies are made beforehand so that only the server's work is timed.
            floor_runner = runners[0]
            timed = [_renumber(bodies[n % len(bodies)], 100_000 + n) for n in range(1000)]
            floor = ingest = 0.0
            for body in timed:
                start = time.perf_counter()
                floor_runner.request("POST", "/api/no-such-route", "{}")
                middle = time.perf_counter()
                floor_runner.post(body)
                floor += middle - start
                ingest += time.perf_counter() - middle
        finally:
            process.kill()
            process.wait()
    latencies.sort()
    return {"p99": latencies[int(0.99 * (len(latencies) - 1))], "posted": len(latencies), "rss_warm": rss_warm,
            "rss_end": rss_end, "ingest": ingest, "floor": floor}


def _renumber(body: str, number: int) -> str:
    """A stored body under another batch number, its frames and events moved after every earlier one."""
    data = json.loads(body)
    block = read_block(data["frames"])
    columns = dict(block.columns)
    columns["frame"] = (np.arange(REFRESH) + number * REFRESH).astype(columns["frame"].dtype)
    data["frames"] = FrameBlock(columns, block.labels).packed()
    data["batch"] = number
    data["events"] = [{**e, "seq": number} for e in data["events"]]
    return json.dumps(data)


if __name__ == "__main__":
    main()
