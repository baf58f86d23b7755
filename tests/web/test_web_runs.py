"""Starting and ending sessions through the API: dry runs, ending early with a reason, and a protocol whose text
colour fails the audit."""

import io
import json
import re
import zipfile
from pathlib import Path

PROTOCOLS = Path(__file__).parents[2] / "protocols"


def create(client, protocol="afterimage_duration.json", **extra):
    return client.post("/api/sessions", headers={"X-CSRF-Token": client.csrf},
                       json={"protocol": protocol, "display": 1, "participant": "T01", **extra})


def test_a_dry_run_is_marked_in_the_session_and_the_list(client):
    created = create(client, dry_run_factor=0.05)
    assert created.status_code == 201, created.get_json()
    session = client.get(f"/api/sessions/{created.get_json()['id']}").get_json()
    assert session["dry_run"] == 0.05 and session["compiled"]["dry_run"] == {"factor": 0.05}
    assert session["compiled"]["pre_adaptation"]["frames"] == 180  # 60 s × 0.05 at 60 Hz
    listed = client.get("/api/sessions").get_json()["sessions"][0]
    assert listed["dry_run"] == 0.05
    assert "dry run" in client.get("/sessions").text


def test_a_bad_dry_run_factor_is_named(client):
    for factor in (0, 3, "fast"):
        answer = create(client, dry_run_factor=factor)
        assert answer.status_code == 400
        assert answer.get_json()["error"]["field"] == "dry_run_factor"


def test_ending_early_keeps_the_reason_and_refuses_a_blank_one(app, client):
    session_id = create(client).get_json()["id"]
    token = re.search(r'data-run-token="([^"]+)"', client.get(f"/run/{session_id}").text).group(1)
    runner = app.test_client(use_cookies=False)
    blank = runner.post(f"/api/sessions/{session_id}/end", json={"reason": "  "}, headers={"X-Run-Token": token})
    assert blank.status_code == 400 and blank.get_json()["error"]["field"] == "reason"
    assert client.get(f"/api/sessions/{session_id}").get_json()["status"] == "running"  # nothing changed
    ended = runner.post(f"/api/sessions/{session_id}/end", json={"reason": "fire alarm"},
                        headers={"X-Run-Token": token})
    assert ended.status_code == 200
    session = client.get(f"/api/sessions/{session_id}").get_json()
    assert (session["status"], session["end_reason"]) == ("ended_early", "fire alarm")
    assert "Ended early: fire alarm" in client.get(f"/sessions/{session_id}").text
    exported = client.get(f"/sessions/{session_id}/export.json").get_json()
    assert exported["session"]["end_reason"] == "fire alarm"
    assert client.get("/api/sessions?status=ended_early").get_json()["sessions"][0]["id"] == session_id


def test_a_protocol_whose_text_colour_is_out_of_gamut_cannot_start(client):
    protocol = json.loads((PROTOCOLS / "afterimage_duration.json").read_text())
    protocol["background"] = {"rgb_linear": [0.75, 0.75, 0.75]}
    protocol["session"] = {"text_luminance": 1.0}  # each cone +58 %: 118 % drive
    saved = client.put("/api/protocols/bright.json", headers={"X-CSRF-Token": client.csrf},
                       json={"protocol": protocol, "base_sha256": None})
    assert saved.status_code in (200, 201), saved.get_json()
    answer = create(client, protocol="bright.json")
    assert answer.status_code == 409
    assert "session.text_luminance" in answer.get_json()["error"]["message"]


def test_the_session_page_ends_a_session_whose_runner_is_gone(client):
    session_id = create(client).get_json()["id"]
    page = client.get(f"/sessions/{session_id}").text
    assert 'name="reason"' in page
    ended = client.post(f"/sessions/{session_id}/end", data={"csrf_token": client.csrf, "reason": "no show"})
    assert ended.status_code == 303
    session = client.get(f"/api/sessions/{session_id}").get_json()
    assert (session["status"], session["end_reason"]) == ("ended_early", "no show")
    assert 'name="reason"' not in client.get(f"/sessions/{session_id}").text


def test_a_dry_runs_exports_say_so_in_their_names(client):
    session_id = create(client, dry_run_factor=0.1).get_json()["id"]
    names = {fmt: client.get(f"/sessions/{session_id}/export.{fmt}").headers["Content-Disposition"]
             for fmt in ("csv", "json", "bids", "frames")}
    assert names["csv"].endswith('_dry-run_trials.csv"') and names["json"].endswith('_dry-run.json"')
    assert names["frames"].endswith('_dry-run_frames.csv"') and names["bids"].endswith('_dry-run_bids.zip"')
    archive = zipfile.ZipFile(io.BytesIO(client.get(f"/sessions/{session_id}/export.bids").data))
    # BIDS entity order: sub, task, acq, run (BIDS specification, "entity table"); runs count per participant.
    assert any(re.search(r"/beh/sub-T01_task-[a-z0-9]+_acq-dryrun_run-1_events\.tsv$", n) for n in archive.namelist())


def test_the_run_page_shows_the_sessions_duration_with_its_pre_adaptation(client):
    page = client.get("/run?protocol=afterimage_null.json&display=1").text
    assert "the session lasts at least" in page and "pre-adaptation 60 s × 2" in page
    assert 'name="dry_run_factor"' in page


def test_a_refused_start_shows_the_run_page_again_with_the_reason_and_the_entries(client):
    response = client.post("/run", data={"csrf_token": client.csrf, "protocol": "afterimage_null.json", "display": 1,
                                         "participant": "Jane Doe <b>", "dry_run": "yes", "dry_run_factor": "0.05"})
    assert response.status_code == 400
    page = response.text
    assert "Not started:" in page and "participant" in page and "pseudonymous" in page
    assert 'value="Jane Doe &lt;b&gt;"' in page  # what was typed is kept (escaped), not lost
    assert 'name="dry_run" value="yes" checked' in page and '<option value="0.05" selected>' in page
