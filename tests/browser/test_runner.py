"""The browser runner end to end in Debian's Chromium: frame-locked phases, keyed adjustments, logs that survive a
server restart and a closed tab, the colour self-test, the flicker caution, and the exports."""

import csv
import io
import json
import time
from pathlib import Path

import numpy as np
import pytest

from stimlab.colorimetry.display import DisplayModel
from stimlab.colorimetry.stimulus import Background
from stimlab.profiles.demo import demo_profile

ARTIFACTS = Path(__file__).parents[2] / "test-artifacts"
PROTOCOLS = Path(__file__).parents[2] / "protocols"


def quick_null(adapt_s=0.5):
    """The demo nulling protocol, shortened: two conditions, one repeat."""
    protocol = json.loads((PROTOCOLS / "afterimage_null.json").read_text())
    protocol["trial"][0].update(duration_s=adapt_s, top_up_s=0.2)
    protocol["trial"][1]["duration_s"] = 0.1
    protocol["conditions"].update(repeats=1, variables={"axis": {"L-M": [0, 0.06, 0]},
                                                        "polarity": {"plus": 1, "minus": -1}})
    protocol["conditions"].pop("blocks")
    protocol["session"] = {"pre_adaptation_s": 0.2}
    return protocol


def token(page, url):
    page.goto(url + "/run")
    return page.locator('meta[name="csrf-token"]').get_attribute("content")


def start(page, server, protocol, name="quick.json", participant="P01"):
    csrf = token(page, server.url)
    saved = page.request.put(f"{server.url}/api/protocols/{name}", data={"protocol": protocol, "base_sha256": None},
                             headers={"X-CSRF-Token": csrf})
    assert saved.ok, saved.text()
    created = page.request.post(f"{server.url}/api/sessions", headers={"X-CSRF-Token": csrf},
                                data={"protocol": name, "display": 1, "participant": participant})
    assert created.status == 201, created.text()
    return created.json()["id"]


def open_runner(page, server, session_id, query=""):
    page.goto(f"{server.url}/run/{session_id}{query}")
    page.wait_for_function("['ready', 'stopped'].includes(window.stimlabState)", timeout=20000)


def wait_respond(page):
    page.wait_for_function("window.stimlabSchedule?.phase?.phase === 'respond' && "
                           "window.stimlabSchedule.responder?.onset !== undefined", timeout=20000)


def confirm_trials(page, count):
    """Confirm ``count`` trials at their start position (Enter), each once its respond phase is open."""
    for _ in range(count):
        wait_respond(page)
        trial = page.evaluate("window.stimlabSchedule.trial.index")
        page.keyboard.press("Enter")
        page.wait_for_function(f"window.stimlabSchedule.trial?.index !== {trial}")


def api(page, server, session_id):
    return page.request.get(f"{server.url}/api/sessions/{session_id}").json()


def events(server, session_id):
    import sqlite3

    db = sqlite3.connect(server.data / "stimlab.sqlite")
    return [(seq, kind, {**json.loads(data), "trial": trial}) for seq, kind, trial, data in
            db.execute("SELECT seq, kind, trial, data FROM events WHERE session_id = ? ORDER BY seq", (session_id,))]


def test_a_session_end_to_end(server, page):
    session_id = start(page, server, quick_null())
    open_runner(page, server, session_id)
    assert page.evaluate("window.stimlabState") == "ready"
    page.keyboard.press(" ")
    keyed = {}
    for _ in range(2):
        wait_respond(page)
        trial = page.evaluate("window.stimlabSchedule.trial.index")
        start_index = page.evaluate("window.stimlabSchedule.responder.position[0]")
        for _ in range(3):
            page.keyboard.press("ArrowUp")
        page.keyboard.press("Shift+ArrowDown")  # a coarse step: 5 positions (0.25 / 0.05)
        page.keyboard.press("Enter")
        keyed[trial] = start_index + 3 - 5
        page.wait_for_function(f"window.stimlabSchedule.trial?.index !== {trial}")
    page.wait_for_function("window.stimlabState === 'finished'", timeout=20000)
    ARTIFACTS.mkdir(exist_ok=True)
    page.screenshot(path=str(ARTIFACTS / "runner_finished.png"))
    page.wait_for_function("window.stimlabLog.backlog === 0", timeout=10000)

    exported = page.request.get(f"{server.url}/sessions/{session_id}/export.csv").text()
    rows = list(csv.DictReader(io.StringIO(exported)))
    assert len(rows) == 2  # one row per trial
    session = api(page, server, session_id)
    data = session["compiled"]
    model = DisplayModel(demo_profile(), "ss2")
    background = Background(model, data["background"]["rgb_linear"])
    for row in rows:
        trial = int(row["trial"])
        response = data["conditions"][data["trials"][trial]["condition"]]["response"]
        position = -1.5 + 0.05 * keyed[trial]
        assert float(row["response_position"]) == pytest.approx(position)
        # The logged null is the keyed steps converted to cone contrast, computed here independently.
        axis = np.array(response["axes"][0])
        LMS = background.colour_to_LMS("dkl", position * axis)
        expected = LMS / background.LMS_0 - 1
        got = [float(row[f"response_cone_contrast_{c}"]) for c in "LMS"]
        assert got == pytest.approx(expected, abs=2e-6)
        # The device levels the runner drew are those the server computes for that colour.
        device = [int(row[f"response_device_{c}"]) for c in "rgb"]
        assert device == background.to_device("dkl", position * axis).tolist()
    assert session["status"] == "complete"

    timing = page.request.get(f"{server.url}/sessions/{session_id}").text()
    assert "Dropped frames" in timing
    import sqlite3

    db = sqlite3.connect(server.data / "stimlab.sqlite")
    from stimlab.sessions.ingest import iter_frames

    frames = [(f[0], f[1], f[5]) for f in iter_frames(db, session_id)]
    numbers = [f[0] for f in frames]
    assert numbers == list(range(len(numbers)))  # continuous
    stamps = np.array([f[1] for f in frames])
    period = 1000 / 60
    assert sum(f[2] for f in frames) == int(np.sum(np.diff(stamps) >= 1.5 * period))  # every drop flagged
    onsets = [e for e in events(server, session_id) if e[1] == "phase_onset"]
    adapt = onsets[0][2]
    gap = onsets[1][2]
    assert gap["frame"] - adapt["frame"] == data["schedules"]["first"][0]["frames"] == 30
    # Each trial frame carries its index within the phase: with the trial, the phase and the plan, what was shown.
    in_adapt = [f[7] for f in iter_frames(db, session_id) if f[3] == 0 and f[4] == "adapt"]
    assert in_adapt == list(range(30))

    import zipfile

    archive = zipfile.ZipFile(io.BytesIO(page.request.get(f"{server.url}/sessions/{session_id}/export.bids").body()))
    events_file = next(n for n in archive.namelist() if n.endswith("_events.tsv"))
    bids = archive.read(events_file).decode().splitlines()
    assert bids[0].split("\t")[:3] == ["onset", "duration", "trial_type"]
    assert len(bids) == 1 + 6  # three phases in each of two trials
    sidecar = json.loads(archive.read(events_file.replace(".tsv", ".json")))
    assert {"onset", "duration", "trial_type"} <= set(sidecar)
    page.goto(f"{server.url}/sessions/{session_id}")
    page.screenshot(path=str(ARTIFACTS / "session.png"), full_page=True)


def test_a_server_restart_loses_no_event(server, page):
    session_id = start(page, server, quick_null(adapt_s=3.0))
    open_runner(page, server, session_id)
    page.keyboard.press(" ")
    page.wait_for_function("window.stimlabSchedule?.frame > 20")
    server.stop()  # mid-adaptation
    page.wait_for_function("document.getElementById('runner').dataset.link === 'unreachable'", timeout=10000)
    page.wait_for_timeout(1500)
    logged_offline = page.evaluate("window.stimlabLog.seq")
    server.start()
    confirm_trials(page, 2)
    page.wait_for_function("window.stimlabState === 'finished'", timeout=20000)
    page.wait_for_function("window.stimlabLog.backlog === 0", timeout=10000)
    sent = page.evaluate("window.stimlabLog.seq")
    stored = [seq for seq, _, _ in events(server, session_id)]
    assert sent > logged_offline > 0
    assert stored == list(range(sent))  # every event, once, in order


def test_a_closed_tab_resumes_at_the_next_unfinished_trial(server, page, context):
    session_id = start(page, server, quick_null())
    open_runner(page, server, session_id)
    page.keyboard.press(" ")
    wait_respond(page)
    page.keyboard.press("Enter")
    page.wait_for_function("window.stimlabSchedule.trial?.index === 1")
    page.wait_for_timeout(1200)  # at least one batch from the second trial reaches the server
    page.close()  # during the second trial
    time.sleep(0.5)
    again = context.new_page()
    open_runner(again, server, session_id)
    assert "Resuming: 1 of 2 trials done" in again.locator("#runner-message").inner_text()
    (ARTIFACTS / "screens").mkdir(parents=True, exist_ok=True)
    again.screenshot(path=str(ARTIFACTS / "screens" / "ready_resumed.png"))
    again.keyboard.press(" ")
    wait_respond(again)
    assert again.evaluate("window.stimlabSchedule.trial.index") == 1
    assert again.evaluate("window.stimlabSchedule.phase.phase") == "respond"
    again.keyboard.press("Enter")
    again.wait_for_function("window.stimlabState === 'finished'", timeout=20000)
    again.wait_for_function("window.stimlabLog.backlog === 0", timeout=10000)
    kinds = [kind for _, kind, _ in events(server, session_id)]
    assert "resumed" in kinds and kinds.count("trial_end") == 2
    adapt_onsets = [data for _, kind, data in events(server, session_id) if kind == "phase_onset"
                    and data["trial"] == 1 and data["frame"] is not None]
    assert adapt_onsets  # the resumed trial ran its phases again
    rows = list(csv.DictReader(io.StringIO(again.request.get(f"{server.url}/sessions/{session_id}/export.csv").text())))
    assert [r["completed"] for r in rows] == ["True", "True"]


def test_a_colour_pipeline_mismatch_stops_the_session(server, page):
    session_id = start(page, server, quick_null())
    open_runner(page, server, session_id, "?simulate=colour-mismatch")
    assert page.evaluate("window.stimlabState") == "stopped"
    text = page.locator("#runner-message").inner_text()
    assert "The colour pipeline changes the device values" in text and "--force-color-profile=srgb" in text
    checks = api(page, server, session_id)["checks"]
    assert checks["colour"]["passed"] is False and checks["refresh_agrees"] is True


def test_flicker_cautions_are_shown_before_a_flickering_protocol_starts(server, page):
    protocol = quick_null()
    protocol["stimuli"][0].update(size_deg=2, time_course={"kind": "square", "frequency_hz": 7.5})
    session_id = start(page, server, protocol, name="flicker.json")
    page.goto(f"{server.url}/run?protocol=flicker.json&display=1")
    assert "Flicker and flashing can trigger seizures" in page.locator(".caution").inner_text()
    open_runner(page, server, session_id)
    message = page.locator("#runner-message").inner_text()
    assert "Photosensitivity" in message and "ethics approval" in message
    page.screenshot(path=str(ARTIFACTS / "runner_caution.png"))


def test_flicker_photometry_in_the_runner(server, page):
    protocol = json.loads((PROTOCOLS / "flicker_photometry.json").read_text())
    protocol["trial"][0]["duration_s"] = 0.1
    protocol["conditions"]["repeats"] = 2
    protocol["session"] = {"pre_adaptation_s": 0.1}
    session_id = start(page, server, protocol, name="hfp.json", participant="P03")
    open_runner(page, server, session_id)
    assert "Photosensitivity" in page.locator("#runner-message").inner_text()
    page.keyboard.press(" ")
    for _ in range(2):
        wait_respond(page)
        trial = page.evaluate("window.stimlabSchedule.trial.index")
        page.wait_for_timeout(300)  # let it flicker
        page.keyboard.press("ArrowUp")
        page.keyboard.press("Enter")
        page.wait_for_function(f"window.stimlabSchedule.trial?.index !== {trial}")
    page.wait_for_function("window.stimlabState === 'finished'", timeout=20000)
    page.wait_for_function("window.stimlabLog.backlog === 0", timeout=10000)
    import sqlite3

    from stimlab.sessions.ingest import iter_frames

    db = sqlite3.connect(server.data / "stimlab.sqlite")
    drawn = [f[6] for f in iter_frames(db, session_id) if f[4] == "respond"]
    response = api(page, server, session_id)["compiled"]["conditions"][0]["response"]
    ladder = {",".join(map(str, d)) for d in response["device"] if d}
    opposite = {",".join(map(str, d)) for d in response["device_opposite"] if d}
    assert any(d in ladder for d in drawn) and any(d in opposite for d in drawn)  # it alternated
    # 15 Hz at 60 Hz: two frames of each state.
    assert drawn[0] == drawn[1] != drawn[2] == drawn[3]
    csrf = page.locator('meta[name="csrf-token"]').get_attribute("content")
    saved = page.request.post(f"{server.url}/api/sessions/{session_id}/observer-adjustment",
                              headers={"X-CSRF-Token": csrf},
                              data={"override_reason": "two settings: below the reliability criterion"})
    assert saved.status == 201 and saved.json()["n"] == 2
