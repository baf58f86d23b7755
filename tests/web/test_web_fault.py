"""A crash mid-ingest loses no acknowledged batch: four simulated runners post batches to ``stimlab serve``, the
server is killed with SIGKILL, restarted, and every batch it had acknowledged is stored exactly once, with the
database intact (``PRAGMA integrity_check``)."""

import http.client
import http.cookiejar
import json
import re
import sqlite3
import threading
import urllib.error
import urllib.request

from browser_support import Server

RUNNERS = 4


def frames(first, count=120):
    numbers = list(range(first, first + count))
    return {"frame": numbers, "t_raf": [8.333 * n for n in numbers], "t_callback": [8.333 * n + 0.05 for n in numbers],
            "trial": [0] * count, "phase": ["adapt"] * count, "dropped": [0] * count, "drawn": ["512,498,530"] * count}


def batch(number):
    return {"batch": number, "events": [{"seq": number, "t": 1000.0 * number, "kind": "tick", "data": {"n": number}}],
            "frames": frames(number * 120)}


def open_sessions(url):
    opener = urllib.request.build_opener(urllib.request.HTTPCookieProcessor(http.cookiejar.CookieJar()))
    page = opener.open(url + "/protocols").read().decode()
    csrf = re.search(r'name="csrf-token" content="([^"]+)"', page).group(1)
    sessions = []
    for i in range(RUNNERS):
        request = urllib.request.Request(url + "/api/sessions", method="POST", headers={
            "X-CSRF-Token": csrf, "Content-Type": "application/json"}, data=json.dumps(
            {"protocol": "afterimage_duration.json", "display": 1, "participant": f"K0{i}"}).encode())
        session_id = json.load(opener.open(request))["id"]
        token = re.search(r'data-run-token="([^"]+)"', opener.open(f"{url}/run/{session_id}").read().decode()).group(1)
        sessions.append((session_id, token))
    return sessions


def post(url, session_id, token, body):
    request = urllib.request.Request(f"{url}/api/sessions/{session_id}/batches", method="POST", data=json.dumps(body)
                                     .encode(), headers={"X-Run-Token": token, "Content-Type": "application/json"})
    with urllib.request.urlopen(request, timeout=5) as response:
        return json.load(response)


def test_a_killed_server_keeps_every_acknowledged_batch_once(tmp_path):
    server = Server(tmp_path / "data").start()
    try:
        sessions = open_sessions(server.url)
        acknowledged = {session_id: [] for session_id, _ in sessions}
        started = threading.Barrier(RUNNERS + 1)

        def runner(session_id, token):
            started.wait()
            for number in range(10_000):
                try:
                    answer = post(server.url, session_id, token, batch(number))
                except (urllib.error.URLError, http.client.HTTPException, OSError):
                    return  # no answer, so not acknowledged: a real runner keeps the batch and retries later
                assert answer["duplicate"] is False
                acknowledged[session_id].append(number)

        threads = [threading.Thread(target=runner, args=s) for s in sessions]
        for thread in threads:
            thread.start()
        started.wait()
        while min(len(a) for a in acknowledged.values()) < 20:
            threading.Event().wait(0.05)
        server.process.kill()  # SIGKILL, mid-ingest
        server.process.wait(timeout=10)
        for thread in threads:
            thread.join(timeout=30)
        server.start()
        for session_id, token in sessions:  # the runner sends again what was not acknowledged
            retry = post(server.url, session_id, token, batch(len(acknowledged[session_id])))
            assert "batch" in retry
    finally:
        server.stop()
    db = sqlite3.connect(tmp_path / "data" / "stimlab.sqlite")
    assert db.execute("PRAGMA integrity_check").fetchone()[0] == "ok"
    for session_id, numbers in acknowledged.items():
        stored = [row[0] for row in db.execute("SELECT batch FROM batches WHERE session_id = ? ORDER BY batch",
                                               (session_id,))]
        assert stored[:len(numbers)] == numbers and len(stored) == len(set(stored))
        frames_stored = db.execute("SELECT SUM(count) FROM frames WHERE session_id = ?", (session_id,)).fetchone()[0]
        assert frames_stored == 120 * len(stored)
        events_stored = db.execute("SELECT COUNT(*) FROM events WHERE session_id = ?", (session_id,)).fetchone()[0]
        assert events_stored == len(stored)
