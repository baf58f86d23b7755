"""Session log batches through the API: the run token, idempotent ingest, refusals that store nothing, and the
migration of frame logs stored before the packed form."""

import json
import re
import sqlite3

import pytest

from stimlab.sessions.frame_log import read_block
from stimlab.sessions.ingest import iter_frames
from stimlab.sessions.store import MIGRATIONS, Store


def frames(first=0, count=3):
    numbers = list(range(first, first + count))
    return {"frame": numbers, "t_raf": [16.665 * n for n in numbers], "t_callback": [16.665 * n + 0.04 for n in numbers],
            "trial": [0] * count, "phase": ["adapt"] * count, "dropped": [0] * count, "drawn": ["512,498,530"] * count}


@pytest.fixture
def session(client):
    created = client.post("/api/sessions", headers={"X-CSRF-Token": client.csrf},
                          json={"protocol": "afterimage_duration.json", "display": 1, "participant": "T01"})
    session_id = created.get_json()["id"]
    token = re.search(r'data-run-token="([^"]+)"', client.get(f"/run/{session_id}").text).group(1)
    return session_id, token


def post(app, session_id, body, token):
    runner = app.test_client(use_cookies=False)  # the runner sends its token and no cookies
    return runner.post(f"/api/sessions/{session_id}/batches", json=body, headers={"X-Run-Token": token})


def stored(app, session_id):
    db = app.extensions["stimlab.store"].connect()
    return list(iter_frames(db, session_id)), [r[0] for r in db.execute(
        "SELECT seq FROM events WHERE session_id = ? ORDER BY seq", (session_id,))]


def test_a_runner_writes_with_its_token_and_no_cookie(app, session):
    session_id, token = session
    packed = read_block(frames()).packed()
    answer = post(app, session_id, {"batch": 0, "events": [{"seq": 0, "t": 1.0, "kind": "tick"}], "frames": packed},
                  token)
    assert answer.status_code == 200 and answer.get_json() == {"batch": 0, "duplicate": False, "events": 1,
                                                               "frames": 3}
    rows, seqs = stored(app, session_id)
    assert [r[:2] for r in rows] == [(0, 0.0), (1, 16.665), (2, 33.33)] and seqs == [0]


def test_a_batch_sent_twice_is_stored_once(app, session):
    session_id, token = session
    body = {"batch": 0, "events": [{"seq": 0, "t": 1.0, "kind": "tick"}], "frames": frames()}
    assert post(app, session_id, body, token).get_json()["duplicate"] is False
    assert post(app, session_id, body, token).get_json() == {"batch": 0, "duplicate": True}
    rows, seqs = stored(app, session_id)
    assert len(rows) == 3 and seqs == [0]


def test_a_wrong_or_foreign_token_is_refused(app, client, session):
    session_id, token = session
    other = client.post("/api/sessions", headers={"X-CSRF-Token": client.csrf},
                        json={"protocol": "afterimage_duration.json", "display": 1, "participant": "T02"})
    other_id = other.get_json()["id"]
    for target, sent in ((session_id, "0" * 64), (other_id, token)):
        answer = post(app, target, {"batch": 0, "frames": frames()}, sent)
        assert answer.status_code == 403 and answer.get_json()["error"]["field"] == "X-Run-Token"
    no_token = app.test_client(use_cookies=False).post(f"/api/sessions/{session_id}/batches", json={"batch": 0})
    assert no_token.status_code == 403 and no_token.get_json()["error"]["field"] == "csrf_token"
    assert stored(app, session_id) == ([], []) and stored(app, other_id) == ([], [])
    # The token is for the runner's own routes only.
    profile = app.test_client(use_cookies=False).post("/api/sessions", headers={"X-Run-Token": token}, json={})
    assert profile.status_code == 403


@pytest.mark.parametrize("body, field", [
    ({"batch": "one"}, "batch.batch"),
    ({"batch": 1, "events": [{"seq": 0, "t": "soon", "kind": "tick"}]}, "events[0].t"),
    ({"batch": 1, "events": {"seq": 0}}, "events"),
    ({"batch": 1, "frames": {**frames(), "t_raf": [0.0, None, 1.0]}}, "frames.t_raf[1]"),
    ({"batch": 1, "frames": {**read_block(frames()).packed(), "dropped": "AAA="}}, "frames.dropped"),
])
def test_a_bad_batch_names_its_field_and_stores_nothing(app, session, body, field):
    session_id, token = session
    answer = post(app, session_id, {"events": [{"seq": 5, "t": 1.0, "kind": "tick"}], **body}, token)
    assert answer.status_code == 400 and answer.get_json()["error"]["field"] == field
    assert stored(app, session_id) == ([], [])
    fixed = post(app, session_id, {"batch": 1, "events": [{"seq": 5, "t": 1.0, "kind": "tick"}]}, token)
    assert fixed.status_code == 200  # the batch number was not used up by the refused copy


def test_a_complete_session_takes_no_more_batches(app, session):
    session_id, token = session
    post(app, session_id, {"batch": 0, "events": [{"seq": 0, "t": 1.0, "kind": "session_end"}]}, token)
    late = post(app, session_id, {"batch": 1, "frames": frames()}, token)
    assert late.status_code == 409


def test_frame_logs_stored_as_lists_are_packed_by_the_migration(tmp_path):
    """A data folder from before version 4 kept each batch's body as received, its frames as JSON lists."""
    path = tmp_path / "stimlab.sqlite"
    db = sqlite3.connect(path, isolation_level=None)
    for script in MIGRATIONS[:3]:
        for statement in (s for s in script.split(";") if s.strip()):
            db.execute(statement)
    db.execute("PRAGMA user_version=3")
    db.execute("INSERT INTO displays (id, name, version, sha256, profile, created_at) VALUES (1, 'd', 1, 'x', '{}', 'now')")
    db.execute("INSERT INTO sessions (id, protocol_file, protocol_sha256, display_id, participant, status, "
               "started_at, compiled, software_version) VALUES (1, 'p.json', 'x', 1, 'T01', 'running', 'now', '{}', '0')")
    old = {**frames(), "trial": [0, None, 0], "drawn": ["1,2,3", None, "1,2,3"]}
    db.execute("INSERT INTO frames VALUES (1, 0, 0, 2, 3, 0, ?)", (json.dumps({"batch": 0, "frames": old}),))
    db.close()
    store = Store(tmp_path)
    with store.connect() as db:
        assert db.execute("PRAGMA user_version").fetchone()[0] == len(MIGRATIONS)
        assert list(iter_frames(db, 1)) == [row + (None,) for row in zip(*old.values())]  # no in_phase then


def test_a_batch_stored_under_the_earlier_digest_is_still_known_when_sent_again(app, session):
    """Batches stored before the digest of stored content kept the digest of the whole batch's canonical JSON."""
    from stimlab.sessions.ingest import _batch_json_digest

    session_id, token = session
    body = {"batch": 0, "events": [{"seq": 0, "t": 1.0, "kind": "tick"}], "frames": frames()}
    assert post(app, session_id, body, token).get_json()["duplicate"] is False
    db = app.extensions["stimlab.store"].connect()
    db.execute("UPDATE batches SET digest = ? WHERE session_id = ?", (_batch_json_digest(body), session_id))
    assert post(app, session_id, body, token).get_json() == {"batch": 0, "duplicate": True}
    other = {**body, "frames": frames(3)}
    answer = post(app, session_id, other, token)
    assert answer.status_code == 409 and answer.get_json()["error"]["field"] == "batch"
    assert len(stored(app, session_id)[0]) == 3


def test_the_same_frames_sent_as_lists_then_packed_are_one_batch(app, session):
    session_id, token = session
    body = {"batch": 0, "events": [{"seq": 0, "t": 1.0, "kind": "tick"}], "frames": frames()}
    assert post(app, session_id, body, token).get_json()["duplicate"] is False
    packed = {**body, "frames": read_block(frames()).packed()}
    assert post(app, session_id, packed, token).get_json() == {"batch": 0, "duplicate": True}
    rows, seqs = stored(app, session_id)
    assert [r[0] for r in rows] == [0, 1, 2] and seqs == [0]


def test_batches_posted_from_many_threads_at_once_are_each_stored_once(app, session):
    """The server's threads share one batch connection; every batch, each sent twice, is kept exactly once."""
    from concurrent.futures import ThreadPoolExecutor

    session_id, token = session
    bodies = [{"batch": n, "events": [{"seq": n, "t": float(n), "kind": "tick"}],
               "frames": read_block(frames(3 * n)).packed()} for n in range(40)]
    with ThreadPoolExecutor(8) as pool:
        answers = list(pool.map(lambda body: post(app, session_id, body, token), bodies + bodies))
    assert all(a.status_code == 200 for a in answers)
    assert sum(a.get_json()["duplicate"] for a in answers) == 40
    rows, seqs = stored(app, session_id)
    assert [r[0] for r in rows] == list(range(120)) and seqs == list(range(40))
