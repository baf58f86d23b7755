"""Session exports read from the database: the frame-timing summary and the frame-log CSV."""

import csv
import io

import numpy as np
import pytest

from stimlab.sessions.export import frames_csv, timing
from stimlab.sessions.ingest import get_session


@pytest.fixture
def logged(app, client):
    """A session whose log holds 60 Hz frames at 16.665 and 16.670 ms intervals, one dropped frame in a trial and
    one flagged outside it (the first frame, before any trial)."""
    created = client.post("/api/sessions", headers={"X-CSRF-Token": client.csrf},
                          json={"protocol": "afterimage_duration.json", "display": 1, "participant": "T01"})
    session_id = created.get_json()["id"]
    steps = [16.665, 16.670] * 20 + [33.335] + [16.665] * 9
    stamps = np.r_[1000.0, 1000.0 + np.cumsum(steps)].round(3).tolist()
    count = len(stamps)
    frames = {"frame": list(range(count)), "t_raf": stamps, "t_callback": [t + 0.05 for t in stamps],
              "trial": [None] + [0] * (count - 1), "phase": ["adapt"] * count, "dropped": [1] + [0] * 40 + [1] + [0] * 9,
              "drawn": ["512,498,530"] * count}
    answer = client.post(f"/api/sessions/{session_id}/batches", headers={"X-CSRF-Token": client.csrf},
                         json={"batch": 0, "frames": frames})
    assert answer.status_code == 200
    db = app.extensions["stimlab.store"].connect()
    return db, get_session(db, session_id), stamps


def test_the_frame_interval_histogram_puts_the_period_in_one_bin(logged):
    db, session, _ = logged
    quality = timing(db, session)
    edges, counts = np.array(quality["histogram"]["edges_ms"]), np.array(quality["histogram"]["counts"])
    period = 1000 / 60
    assert quality["frames"] == 51 and quality["dropped_frames"] == 2 and quality["dropped_outside_trials"] == 1
    home = np.searchsorted(edges, period) - 1
    assert counts[home] == 49 and edges[home] < 16.665 < 16.670 < edges[home + 1]
    assert np.isclose(edges, 1.5 * period).any()  # no bin straddles the dropped-frame limit
    assert counts[np.searchsorted(edges, 33.335) - 1] == 1 and counts.sum() == 50


def test_the_frame_log_csv_has_one_row_per_frame_with_exact_times(logged):
    db, session, stamps = logged
    out = io.StringIO()
    assert frames_csv(db, session["id"], out) == 51
    rows = list(csv.DictReader(io.StringIO(out.getvalue())))
    assert [float(r["t_raf"]) for r in rows] == stamps
    assert rows[41]["dropped"] == "1" and rows[0]["trial"] == ""
    # the drawn levels are integer columns per stimulus, not "512,498,530" text
    assert "drawn" not in rows[0] and rows[0]["drawn_adapter_device_r"] == "512"
    assert (rows[0]["drawn_adapter_device_g"], rows[0]["drawn_adapter_device_b"]) == ("498", "530")



def test_the_session_page_streams_the_same_frame_log(logged, client):
    db, session, _ = logged
    out = io.StringIO()
    frames_csv(db, session["id"], out)
    answer = client.get(f"/sessions/{session['id']}/export.frames")
    assert answer.status_code == 200 and answer.mimetype == "text/csv"
    assert answer.headers["Content-Disposition"].endswith('_frames.csv"')
    assert answer.text == out.getvalue() and answer.text.count("\n") == 52


def test_the_early_end_reason_goes_everywhere_the_status_goes(app, client, tmp_path):
    """README: a session ended early keeps "a reason, kept with the session and its exports": the provenance, the
    trial table (CSV, BIDS, Parquet), the summary and the BIDS scans file all carry it beside the status."""
    import json
    import zipfile

    import pyarrow.parquet as pq
    import simulated_sessions as sim

    from stimlab.sessions.export import session_export, study_export

    session_id = sim.create(client, "contrast_match.json", "E01")
    reason = "participant felt unwell after block 1"
    answer = client.post(f"/api/sessions/{session_id}/end", headers={"X-CSRF-Token": client.csrf},
                         json={"reason": reason})
    assert answer.status_code == 200, answer.text
    store = app.extensions["stimlab.store"]
    db = store.connect()
    session = get_session(db, session_id)

    def export(fmt):
        return session_export(db, store, session, fmt).content

    provenance = json.loads(export("provenance"))["session"]
    assert provenance["status"] == "ended_early" and provenance["end_reason"] == reason
    rows = list(csv.DictReader(io.StringIO(export("csv"))))
    assert {(r["session_status"], r["session_end_reason"]) for r in rows} == {("ended_early", reason)}
    dictionary = json.loads(export("dictionary"))
    assert "ended early" in dictionary["session_end_reason"]["Description"]
    summary = json.loads(export("summary"))
    assert summary["status"] == "ended_early" and summary["end_reason"] == reason
    with zipfile.ZipFile(io.BytesIO(export("bids"))) as archive:
        names = archive.namelist()
        scans = next(n for n in names if n.endswith("_scans.tsv"))
        lines = [line.split("\t") for line in archive.read(scans).decode().splitlines()]
        assert lines[0] == ["filename", "session_status", "session_end_reason", "dry_run"]
        assert lines[1][0] == "beh/sub-E01_task-contrastmatch_run-1_beh.tsv" and lines[1][1:3] == ["ended_early", reason]
        assert any(n.endswith(lines[1][0].split("/")[1]) for n in names)  # the file it names is there
        assert "session_end_reason" in json.loads(archive.read(scans.replace(".tsv", ".json")))
    folder = tmp_path / "pq"
    folder.mkdir()
    with zipfile.ZipFile(io.BytesIO(study_export(db, store, "contrast_match.json", "parquet").content)) as archive:
        archive.extractall(folder)
    sessions = pq.read_table(next(folder.rglob("sessions.parquet"))).to_pylist()
    assert sessions[0]["status"] == "ended_early" and sessions[0]["end_reason"] == reason
    page = client.get(f"/sessions/{session_id}").text
    assert reason in page


def test_the_background_is_filled_on_every_frame_that_draws_it(app, client):
    """What the runner logs as 'drawn' (static/js/runner/schedule.js, screens.js): trial phases log their stimuli
    only, over the background; settle frames and the screens between trials log the background first; paused
    frames draw nothing. Every frame but the paused one has the background's levels."""
    import json

    import pyarrow as pa

    from stimlab.sessions.export import session_export
    from stimlab.sessions.frame_table import frame_chunks, frame_columns
    from stimlab.sessions.parquet import _frame_table

    created = client.post("/api/sessions", headers={"X-CSRF-Token": client.csrf},
                          json={"protocol": "afterimage_null.json", "display": 1, "participant": "F01"})
    session_id = created.get_json()["id"]
    store = app.extensions["stimlab.store"]
    db = store.connect()
    data = get_session(db, session_id)["compiled"]
    background = ",".join(map(str, data["background"]["device"]))
    adapter = ",".join(map(str, data["conditions"][0]["stimuli"]["adapter"]["colour"]["device"]))
    shown = [("settle", None, background, -1), ("pre_adapt", None, f"{background};text 10,10,10;fixation 0,0,0", -1),
             ("pause", None, None, -1), ("adapt", 0, adapter, 0), ("adapt", 0, adapter, 1), ("gap", 0, "", 0)]
    count = len(shown)
    frames = {"frame": list(range(count)), "t_raf": [1000.0 + 16.7 * i for i in range(count)],
              "t_callback": [1000.05 + 16.7 * i for i in range(count)], "trial": [s[1] for s in shown],
              "phase": [s[0] for s in shown], "dropped": [0] * count, "drawn": [s[2] for s in shown],
              "in_phase": [s[3] for s in shown]}
    answer = client.post(f"/api/sessions/{session_id}/batches", headers={"X-CSRF-Token": client.csrf},
                         json={"batch": 0, "frames": frames})
    assert answer.status_code == 200, answer.text
    session = get_session(db, session_id)
    rows = list(csv.DictReader(io.StringIO("".join(session_export(db, store, session, "frames").content))))
    drawn = [",".join(r[f"drawn_background_device_{c}"] for c in "rgb") for r in rows]
    assert drawn == [background, background, ",,", background, background, background]
    assert [",".join(r[f"drawn_adapter_device_{c}"] for c in "rgb") for r in rows][3:5] == [adapter, adapter]
    assert [r["in_phase"] for r in rows] == ["-1", "-1", "-1", "0", "1", "0"]
    block, device = next(frame_chunks(db, session))
    table = _frame_table(block, device, frame_columns(data))
    assert table.column("drawn_background_device_r").null_count == 1  # the paused frame only
    assert pa.types.is_integer(table.column("drawn_background_device_g").type)
    sidecar = json.loads(session_export(db, store, session, "frames-dictionary").content)
    assert "index within its trial phase" in sidecar["in_phase"]["Description"]
    assert not [c for c, e in sidecar.items() if e["Description"].startswith("Column ")]
