"""The trial table: every stimulus colour and second colour, the start after jitter and the response in cone
contrast, DKL and device levels, one typed column per coordinate; phase onsets; flags."""

import json
import math

import pytest
import simulated_sessions as sim

from stimlab.sessions.dictionary import describe
from stimlab.sessions.ingest import get_session
from stimlab.sessions.trials import trial_rows

MATCH = [-0.02, 0.03]  # a mostly +S match, on the ladder (step 0.005)


@pytest.fixture
def matched(app, client):
    session_id = sim.run(app, client, "contrast_match.json", "P01",
                         lambda trial, condition: sim.adjustment(MATCH, condition["response"]))
    db = app.extensions["stimlab.store"].connect()
    return db, get_session(db, session_id)


def test_every_stimulus_colour_and_second_colour_is_a_typed_column(matched):
    db, session = matched
    rows = trial_rows(db, session)
    assert len(rows) == 20  # 4 surrounds × 5 repeats (contrast_match.json)
    surround = {"+L-M": (0.08, 0.0), "-L-M": (-0.08, 0.0), "+S": (0.0, 0.3), "-S": (0.0, -0.3)}  # the protocol's levels
    for row in rows:
        lm, s = surround[row["var_surround"]]
        assert row["inducer_second_dkl_lm"] == pytest.approx(lm, abs=1e-9)
        assert row["inducer_second_dkl_s"] == pytest.approx(s, abs=1e-9)
        assert row["inducer_second_dkl_lum"] == pytest.approx(0.0, abs=1e-9)  # isoluminant surround
        for prefix in ("inducer", "inducer_second", "match", "start", "response"):
            for suffix in ("cone_contrast_L", "cone_contrast_M", "cone_contrast_S", "dkl_lum", "dkl_lm", "dkl_s"):
                assert isinstance(row[f"{prefix}_{suffix}"], float)
            for channel in "rgb":
                assert isinstance(row[f"{prefix}_device_{channel}"], int)
        # S-cone contrast of an isoluminant DKL S direction equals the S coordinate (Brainard 1996 scaling)
        assert row["response_cone_contrast_S"] == pytest.approx(MATCH[1], abs=1e-9)
        assert (row["response_position_1"], row["response_position_2"]) == (-0.02, 0.03)
        assert (row["response_dkl_lm"], row["response_dkl_s"]) == pytest.approx(MATCH, abs=1e-9)
        assert row["response_time_s"] == 1.2345 and not any(isinstance(v, str) and v.startswith("[")
                                                             for v in row.values())


def test_the_start_is_the_jittered_ladder_position_in_every_space(matched):
    db, session = matched
    for row in trial_rows(db, session):
        trial = session["compiled"]["trials"][row["trial"]]
        start = [-0.15 + 0.005 * i for i in trial["start"]]  # limits and fine step of contrast_match.json
        assert [row["start_position_1"], row["start_position_2"]] == pytest.approx(start)
        assert all(abs(p) <= 0.02 + 0.0025 for p in start)  # start [0, 0] ± jitter 0.02, rounded to the ladder
        assert (row["start_dkl_lm"], row["start_dkl_s"]) == pytest.approx(start, abs=1e-9)


def test_phase_onsets_are_seconds_from_the_first_frame_and_frame_numbers(matched):
    db, session = matched
    first = trial_rows(db, session)[0]
    # three settle frames, then the 1 s test phase (60 frames at 60 Hz) and the respond phase
    assert first["onset_test_frame"] == 3 and first["onset_respond_frame"] == 63
    assert first["onset_test_s"] == pytest.approx(3 * sim.PERIOD / 1000, abs=1e-5)
    assert first["onset_respond_s"] - first["onset_test_s"] == pytest.approx(1.0, abs=1e-4)  # timestamps kept to 1 µs


def test_practice_and_dry_run_flags_default_to_false_and_are_read_when_present(matched):
    db, session = matched
    rows = trial_rows(db, session)
    assert not any(r["practice"] or r["dry_run"] for r in rows)
    session["compiled"]["trials"][0]["practice"] = True
    session["dry_run"] = 1
    rows = trial_rows(db, session)
    assert rows[0]["practice"] is True and rows[1]["practice"] is False and all(r["dry_run"] for r in rows)


def test_the_protocol_is_identified_by_its_hash_and_every_column_has_a_description(matched):
    db, session = matched
    row = trial_rows(db, session)[0]
    assert row["protocol_sha256"] == session["protocol_sha256"] and "protocol" not in row
    for column in row:
        entry = describe(column)
        assert not entry["Description"].startswith("Column "), column
    assert describe("response_time_s")["Units"] == "s" and describe("onset_test_s")["Units"] == "s"
    assert describe("inducer_second_device_g")["Units"] == "level"
    assert describe("start_dkl_s")["Units"] == "1"


def test_the_csv_and_its_dictionary_download_from_the_session_page(matched, client):
    db, session = matched
    text = client.get(f"/sessions/{session['id']}/export.csv").text
    header = text.splitlines()[0].split(",")
    dictionary = client.get(f"/sessions/{session['id']}/export.dictionary").get_json()
    assert header == list(dictionary)
    provenance = client.get(f"/sessions/{session['id']}/export.provenance").get_json()
    assert provenance["protocol"]["sha256"] == session["protocol_sha256"]
    assert provenance["display_profile"]["version"] == 1 and provenance["observer"]["key"] == "ss2"
    assert not math.isnan(json.loads(json.dumps(provenance))["display_profile"]["refresh_hz"])


@pytest.fixture
def flicker(app, client):
    """flicker_photometry.json: a +0.08 L−M disc in 15 Hz square flicker about the background; settings along DKL
    luminance confirmed with Enter (the compiled respond phase's only confirm key)."""
    settings = iter([-0.01, 0.005, 0.0, -0.005, 0.01, -0.005])
    session_id = sim.run(app, client, "flicker_photometry.json", "P08",
                         lambda trial, condition: sim.adjustment(next(settings), condition["response"]))
    db = app.extensions["stimlab.store"].connect()
    return db, get_session(db, session_id)


def test_the_key_that_ended_an_adjustment_is_recorded(flicker, client):
    """An adjustment ends with its confirm key (Enter, the compiler's default: stimlab.experiment.screens); the
    runner now logs it, and a log without it reads the respond phase's only confirm key."""
    import csv
    import io
    import zipfile

    db, session = flicker
    assert session["compiled"]["schedules"]["first"][-1]["confirm"] == ["Enter"]
    rows = trial_rows(db, session)
    assert [r["response_key"] for r in rows] == ["Enter"] * 6
    exported = list(csv.DictReader(io.StringIO(client.get(f"/sessions/{session['id']}/export.csv").text)))
    assert {r["response_key"] for r in exported} == {"Enter"}
    archive = zipfile.ZipFile(io.BytesIO(client.get(f"/sessions/{session['id']}/export.bids").data))
    events = next(n for n in archive.namelist() if n.endswith("_events.tsv"))
    table = list(csv.DictReader(io.StringIO(archive.read(events).decode()), delimiter="\t"))
    assert {e["response_key"] for e in table if e["trial_type"] == "respond"} == {"Enter"}
    assert "confirming key" in describe("response_key")["Description"]
    from stimlab.sessions.trials import ending_key

    trial = session["compiled"]["trials"][0]
    assert ending_key(session["compiled"], trial, {"method": "adjustment", "key": "Enter"}) == "Enter"
    assert ending_key(session["compiled"], trial, {}) is None  # a timeout: no key
    assert ending_key(session["compiled"], trial, {"method": "2afc", "key": "ArrowLeft"}) == "ArrowLeft"


def test_a_flickering_stimulus_records_its_opposite_extreme(flicker):
    """Square flicker alternates colour and 2·LMS_0 − LMS about the background (stimlab.experiment.compile,
    modulation −1): in DKL, the L−M coordinate flips sign (+0.08 → −0.08, DKL is linear in LMS − LMS_0,
    Derrington, Krauskopf & Lennie 1984), at the compiled extreme's device levels."""
    db, session = flicker
    colour = session["compiled"]["conditions"][0]["stimuli"]["flicker_disc"]["colour"]
    opposite_device = next(e["device"] for e in colour["extremes"] if e["modulation"] == -1.0)
    response = session["compiled"]["conditions"][0]["response"]
    for row in trial_rows(db, session):
        assert row["flicker_disc_dkl_lm"] == pytest.approx(0.08, abs=1e-9)
        assert row["flicker_disc_opposite_dkl_lm"] == pytest.approx(-0.08, abs=1e-9)
        assert row["flicker_disc_opposite_dkl_lum"] == pytest.approx(0.0, abs=1e-9)
        assert [row[f"flicker_disc_opposite_device_{c}"] for c in "rgb"] == opposite_device
        # the setting's other phase: luminance and L−M both flip about the background
        assert row["response_opposite_dkl_lum"] == pytest.approx(-row["response_position"], abs=1e-9)
        assert row["response_opposite_dkl_lm"] == pytest.approx(-0.08, abs=1e-9)
        index = round((row["response_position"] - response["positions"]["low"]) / response["positions"]["step"])
        assert [row[f"response_opposite_device_{c}"] for c in "rgb"] == response["device_opposite"][index]
    for column in trial_rows(db, session)[0]:
        assert not describe(column)["Description"].startswith("Column "), column
    assert "opposite extreme" in describe("flicker_disc_opposite_dkl_lm")["Description"]
