"""The study page (participants × conditions, pooled with intervals over participants) and its exports, and the
export command for sessions and studies."""

import csv
import json

import pytest
import simulated_sessions as sim

from stimlab.cli import main

SHIFT = {"P01": -0.02, "P02": -0.03, "P03": -0.025}  # each participant's match along L−M on the +L−M surround


@pytest.fixture
def study(app, client):
    for code, shift in SHIFT.items():
        def respond(trial, condition, shift=shift):
            sign = {"+L-M": 1, "-L-M": -1}.get(condition["labels"]["surround"], 0)
            return sim.adjustment([sign * shift, 0.0], condition["response"])
        sim.run(app, client, "contrast_match.json", code, respond)
    return app


def test_the_study_page_pools_participants_with_an_interval_over_participants(study, client):
    summary = client.get("/api/studies/contrast_match.json").get_json()
    assert summary["participants"] == 3 and summary["conditions"][0] == "surround=+L-M"
    cells = [row["conditions"]["surround=+L-M"]["along"] for row in summary["table"]]
    assert cells == pytest.approx(list(SHIFT.values()))
    pooled = summary["pooled"]["surround=+L-M"]["along"]
    # mean −0.025, SD 0.005 over three participants: ± t(0.975, 2) · 0.005/√3 = ± 0.012421 (t table: 4.3027)
    assert pooled["mean"] == pytest.approx(-0.025) and pooled["n"] == 3
    assert pooled["ci95"] == pytest.approx([-0.037421, -0.012579], abs=1e-5)
    page = client.get("/studies/contrast_match.json")
    assert page.status_code == 200 and "Pooled" in page.text and "P03" in page.text
    assert "Signed component along the adapting/inducing direction (DKL)" in page.text


def test_an_unknown_study_is_a_clear_404(study, client):
    answer = client.get("/studies/nothing_here.json")
    assert answer.status_code == 404 and "no sessions" in answer.text
    assert client.get("/studies/contrast_match.json/export.xls").status_code == 404


def test_the_study_exports_download(study, client):
    rows = list(csv.DictReader(client.get("/studies/contrast_match.json/export.csv").text.splitlines()))
    assert len(rows) == 3 * 20 and {r["participant"] for r in rows} == set(SHIFT)
    assert client.get("/studies/contrast_match.json/export.summary").get_json()["participants"] == 3


def test_the_export_command_writes_a_table_with_its_sidecars(study, tmp_path, capsys):
    data = str(study.extensions["stimlab.store"].root)
    assert main(["export", "1", "--format", "csv", "-o", str(tmp_path / "trials.csv"), "--data", data]) == 0
    header = (tmp_path / "trials.csv").read_text().splitlines()[0].split(",")
    assert header == list(json.loads((tmp_path / "trials.json").read_text()))
    assert json.loads((tmp_path / "trials_provenance.json").read_text())["session"]["participant"] == "P01"
    assert main(["export", "1", "--format", "frames", "-o", str(tmp_path / "frames.csv"), "--data", data]) == 0
    assert (tmp_path / "frames.json").exists()
    assert main(["export", "--study", "contrast_match.json", "--format", "parquet", "-o", str(tmp_path / "pq"),
                 "--data", data]) == 0
    assert len(list((tmp_path / "pq/trials").glob("participant=*/session=*/*.parquet"))) == 3


def test_the_export_command_names_the_bad_argument(study, tmp_path, capsys):
    data = str(study.extensions["stimlab.store"].root)
    assert main(["export", "--format", "csv", "-o", str(tmp_path / "x.csv"), "--data", data]) == 2
    assert "SESSION" in capsys.readouterr().err
    assert main(["export", "--study", "contrast_match.json", "--format", "frames", "-o", str(tmp_path / "x"),
                 "--data", data]) == 2
    assert "--format" in capsys.readouterr().err
    assert main(["export", "--study", "none.json", "--format", "csv", "-o", str(tmp_path / "x"), "--data", data]) == 2
    assert "no sessions" in capsys.readouterr().err


def test_a_flicker_photometry_study_pools_the_settings_and_the_l_m_ratio(app, client):
    """Two participants' settings along DKL luminance (flicker_photometry.json): each participant's mean setting
    and the L/M ratio it implies (stimlab.colorimetry.photometry.summarise_settings on that participant's own
    settings), pooled over participants; response times carry no sign."""
    import numpy as np

    from stimlab.colorimetry.observers import observer
    from stimlab.colorimetry.photometry import summarise_settings
    from stimlab.colorimetry.spaces import LMS_to_DKL
    from stimlab.sessions.ingest import get_session

    settings = {"P01": [-0.01, 0.005, 0.0, -0.005, 0.01, -0.005], "P02": [0.01, 0.015, 0.005, 0.01, 0.02, 0.0]}
    for code, values in settings.items():
        queue = iter(values)
        session_id = sim.run(app, client, "flicker_photometry.json", code,
                             lambda trial, condition, q=queue: sim.adjustment(next(q), condition["response"]))
    summary = client.get("/api/studies/flicker_photometry.json").get_json()
    label = summary["conditions"][0]
    assert summary["measures"]["setting_1"] == "mean setting along DKL luminance (axis units)"
    means = [float(np.mean(v)) for v in settings.values()]
    assert [row["conditions"][label]["setting_1"] for row in summary["table"]] == pytest.approx(means)
    assert summary["pooled"][label]["setting_1"]["mean"] == pytest.approx(np.mean(means))
    data = get_session(app.extensions["stimlab.store"].connect(), session_id)["compiled"]
    obs, LMS_0 = observer(data["observer"]["key"]), np.array(data["background"]["lms"])
    amplitude = float(LMS_to_DKL(np.array(data["conditions"][0]["stimuli"]["flicker_disc"]["colour"]["lms"]), LMS_0,
                                 obs.w_L, obs.w_M)[1])
    assert amplitude == pytest.approx(0.08)  # the protocol's L−M amplitude
    ratios = [summarise_settings(amplitude, v, LMS_0, obs)["ratio"] for v in settings.values()]
    photometry = summary["photometry"]
    assert [row["ratio"] for row in photometry["table"]] == pytest.approx(ratios)
    assert photometry["pooled"]["ratio"]["mean"] == pytest.approx(np.mean(ratios))
    page = client.get("/studies/flicker_photometry.json").text
    assert "L/M weighting" in page and "Mean setting along DKL luminance" in page
    assert "+1.2345" not in page and ">1.2345 <" in page  # sim.adjustment's 1234.5 ms: unsigned
