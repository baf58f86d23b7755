"""The session summary: signed after-image/induction components with Student-t intervals; the page renders it."""

import numpy as np
import pytest
import simulated_sessions as sim
from scipy import stats

from stimlab.sessions.ingest import get_session
from stimlab.sessions.summary import mean_ci, session_summary, signed_components


def test_a_mostly_plus_s_match_on_a_plus_l_minus_m_surround_is_mostly_orthogonal():
    along, across = signed_components([[-0.01, 0.035]], [0.08, 0.0])
    assert along[0] == pytest.approx(-0.01) and across[0] == pytest.approx(0.035)
    along, across = signed_components([[0.0, -0.1]], [0.0, 0.3])  # opposed to a +S surround: contrast
    assert along[0] == pytest.approx(-0.1) and across[0] == pytest.approx(0.0)


def test_the_interval_is_students_t_over_trials():
    # Student's t table: t(0.975, 4) = 2.776
    values = [0.1, 0.2, 0.15, 0.05, 0.25]
    ci = mean_ci(values)
    half = 2.776 * np.std(values, ddof=1) / np.sqrt(5)
    assert ci["ci95"] == pytest.approx([0.15 - half, 0.15 + half], abs=1e-3)
    assert stats.t.ppf(0.975, 4) == pytest.approx(2.776, abs=1e-3)
    assert mean_ci([0.3])["ci95"] is None and mean_ci([]) is None


@pytest.fixture
def matched(app, client):
    seen = {}
    spread = [[-0.01, 0.005], [0.0, -0.005], [0.01, 0.0], [-0.005, 0.01], [0.005, -0.01]]

    def respond(trial, condition):
        # contrast: about 30 % of the surround's DKL coordinates, opposed, spread over the repeats (0.005 ladder)
        target = {"+L-M": [-0.025, 0.0], "-L-M": [0.025, 0.0], "+S": [0.0, -0.09], "-S": [0.0, 0.09]}
        repeat = seen[condition["label"]] = seen.get(condition["label"], -1) + 1
        return sim.adjustment(np.add(target[condition["labels"]["surround"]], spread[repeat]), condition["response"])

    session_id = sim.run(app, client, "contrast_match.json", "P01", respond)
    db = app.extensions["stimlab.store"].connect()
    return db, get_session(db, session_id)


def test_induction_is_signed_contrast_with_an_interval_per_condition(matched):
    db, session = matched
    summary = {c["label"]: c for c in session_summary(db, session)["conditions"]}
    for label, size in (("surround=+L-M", 0.08), ("surround=+S", 0.3)):
        entry = summary[label]
        assert entry["n"] == 5
        low, high = entry["along"]["ci95"]
        assert entry["along"]["mean"] < 0 and low < entry["along"]["mean"] < high  # opposed: contrast
        assert entry["along_relative"]["mean"] == pytest.approx(entry["along"]["mean"] / size)
        assert abs(entry["orthogonal"]["mean"]) < abs(entry["along"]["mean"])


def test_the_session_page_shows_signed_components_not_a_ratio_of_lengths(matched, client):
    db, session = matched
    page = client.get(f"/sessions/{session['id']}").text
    # a contrast match is measured against the surround, not an adapter
    assert "Along surround direction" in page and "contrast" in page and "Strength = |null|" not in page
    assert "× surround" in page and "× adapter" not in page
    assert "95 % confidence interval" in page and "/figures/vectors.svg" in page



def test_an_after_image_null_along_the_adapter_is_positive_for_either_polarity(app, client):
    """afterimage_null.json: adapter = polarity × axis; a null at half the adapter's own contrast, position
    0.5 × polarity (positions are in units of the axis), lies along the adapter: +0.5 of it."""
    def respond(trial, condition):
        polarity = {"plus": 1, "minus": -1}[condition["labels"]["polarity"]]
        return sim.adjustment(0.5 * polarity, condition["response"])

    session_id = sim.run(app, client, "afterimage_null.json", "P05", respond)
    db = app.extensions["stimlab.store"].connect()
    summary = session_summary(db, get_session(db, session_id))
    assert len(summary["conditions"]) == 4
    for entry in summary["conditions"]:
        assert entry["along_relative"]["mean"] == pytest.approx(0.5, abs=0.01), entry["label"]
        assert entry["orthogonal"]["mean"] == pytest.approx(0.0, abs=1e-6)
    row = summary["rows"][0]
    assert isinstance(row["test_disc_dkl_lm"], float) and isinstance(row["test_disc_device_r"], int)
    assert isinstance(row["response_position"], float)  # one axis: one column


PHOTOMETRY_SETTINGS = [-0.01, 0.005, 0.0, -0.005, 0.01, -0.005]  # on the 0.005 ladder; mean −0.005/6 = −0.000833


@pytest.fixture
def photometry(app, client):
    settings = iter(PHOTOMETRY_SETTINGS)
    session_id = sim.run(app, client, "flicker_photometry.json", "P07",
                         lambda trial, condition: sim.adjustment(next(settings), condition["response"], rt_ms=2228.5))
    db = app.extensions["stimlab.store"].connect()
    return db, get_session(db, session_id)


def test_flicker_photometry_reports_the_mean_setting_along_the_adjustment_axis(photometry, client):
    """flicker_photometry.json sets DKL luminance (axis [1, 0, 0]) under a fixed +0.08 L−M flicker: the measure is
    the mean setting, −0.000833 DKL, not the disc's L−M amplitude."""
    db, session = photometry
    entry = session_summary(db, session)["conditions"][0]
    assert entry["setting_axes"] == ["DKL luminance"]
    assert entry["setting"][0]["mean"] == pytest.approx(-0.005 / 6) and entry["setting"][0]["n"] == 6
    page = client.get(f"/sessions/{session['id']}").text
    assert "Mean setting along DKL luminance (axis units)" in page and "−0.0008" in page
    assert "+0.0800" not in page and "Mean (L−M, S) DKL" not in page
    assert ">2.23</td>" in page  # response time: no sign


def test_pages_write_numbers_with_a_minus_sign_and_no_negative_zero(app):
    from stimlab.web.sessions import number_text, time_text

    assert number_text(-0.0004, "%+.2f") == "0.00" and number_text(-0.25, "%+.2f") == "\u22120.25"
    assert number_text(0.25) == "+0.2500" and number_text(None) == "—"
    # ISO 8601 (RFC 3339) timestamps shown in UTC to the second
    assert time_text("2026-12-02T06:33:38.942+00:00") == "2026-12-02 06:33:38 UTC"
    assert time_text("2026-12-02T08:33:38+02:00") == "2026-12-02 06:33:38 UTC"


def test_a_dry_run_page_is_a_labelled_preview_and_links_no_study_without_a_real_session(app, client):
    created = client.post("/api/sessions", headers={"X-CSRF-Token": client.csrf},
                          json={"protocol": "contrast_match.json", "display": 1, "participant": "D01",
                                "dry_run_factor": 0.1})
    assert created.status_code == 201, created.text
    dry = created.get_json()["id"]
    page = client.get(f"/sessions/{dry}").text
    assert page.count("Dry run</strong>") == 1 and "left out of the analysis below" not in page
    assert "dry-run preview" in page  # on every analysis section
    study = "/studies/contrast_match.json"
    assert client.get(study).status_code == 404  # only a dry run so far
    assert f'href="{study}"' not in page and f'href="{study}"' not in client.get("/sessions").text
    assert 'href="/studies/contrast_match.json"' not in client.get("/sessions?protocol=contrast_match.json").text
    real = sim.run(app, client, "contrast_match.json", "P02",
                   lambda trial, condition: sim.adjustment([0.0, 0.0], condition["response"]))
    assert client.get(study).status_code == 200
    assert f'href="{study}"' in client.get(f"/sessions/{dry}").text
    real_page = client.get(f"/sessions/{real}").text
    assert f'href="{study}"' in real_page and "dry-run preview" not in real_page
    assert f'href="{study}"' in client.get("/sessions").text


def test_the_session_page_numbers_from_one_and_shows_times_in_utc(matched, client):
    db, session = matched
    page = client.get(f"/sessions/{session['id']}").text
    trials = page[page.index("<h2>Trials"):]
    first_row = trials[trials.index("<tbody>"):].split("</tr>")[0]
    assert first_row.startswith("<tbody><tr><td>1</td><td>1</td>")  # trial 0, block 0 in the exports
    assert "numbered from 1 here; the exports count them from 0" in page
    started = session["started_at"]
    assert started not in page and f"{started[:10]} {started[11:19]} UTC" in page
    assert "-0.00" not in page


def test_phases_stretched_by_dropped_frames_are_named_in_a_warning(app, client):
    """afterimage_duration.json: adapt then respond. Trial 0's adapt phase lasts 21 frames (350 ms) longer than
    planned (dropped frames: the runner counts frames, so each one late lengthens the phase); trial 1's runs to
    plan."""
    from stimlab.sessions.timing import timing

    session_id = sim.create(client, "afterimage_duration.json", "W01")
    db = app.extensions["stimlab.store"].connect()
    data = get_session(db, session_id)["compiled"]
    planned = data["schedules"]["first"][0]["frames"] * sim.PERIOD
    onsets, t = [], 1000.0
    for trial, late in ((0, 350.0), (1, 0.0)):
        onsets += [(t, trial, "adapt"), (t + planned + late, trial, "respond")]
        t += planned + late + 2000
    events = [{"seq": i, "t": when, "kind": "phase_onset", "trial": trial, "phase": phase,
               "data": {"frame": i, "condition": data["trials"][trial]["condition"]}}
              for i, (when, trial, phase) in enumerate(onsets)]
    frames = {"frame": [0, 1], "t_raf": [1000.0, 1000.0 + sim.PERIOD], "t_callback": [1000.05, 1016.75],
              "trial": [0, 0], "phase": ["adapt", "adapt"], "dropped": [0, 0], "drawn": ["", ""]}
    answer = client.post(f"/api/sessions/{session_id}/batches", headers={"X-CSRF-Token": client.csrf},
                         json={"batch": 0, "frames": frames, "events": events})
    assert answer.status_code == 200, answer.text
    quality = timing(db, get_session(db, session_id))
    assert quality["stretched_trials"] == 1
    assert quality["stretched_phases"]["adapt"]["trials"] == 1
    assert quality["stretched_phases"]["adapt"]["max_ms"] == pytest.approx(350.0)
    page = client.get(f"/sessions/{session_id}").text
    assert "Dropped frames lengthened 1 trial</strong>" in page and "the adapt phase in 1 trial" in page
    assert "up to +350 ms longer" in page
