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
