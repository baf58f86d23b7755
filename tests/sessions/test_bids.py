"""BIDS behavioural datasets of a session and of a study, checked with the BIDS project's own validator (npm
package bids-validator, installed into .tools/ by make test)."""

import csv
import io
import json
import os
import subprocess
import zipfile
from pathlib import Path

import pytest
import simulated_sessions as sim

from stimlab.cli import main

ROOT = Path(__file__).parents[2]
MATCH = [-0.02, 0.03]


def validator() -> Path | None:
    path = Path(os.environ.get("STIMLAB_BIDS_VALIDATOR") or ROOT / ".tools/node_modules/.bin/bids-validator")
    path = path if path.is_absolute() else ROOT / path
    if path.exists():
        return path
    if os.environ.get("STIMLAB_BIDS_VALIDATOR"):
        pytest.fail(f"the BIDS validator is not at {path}; 'make test' installs it")
    return None


@pytest.fixture
def study(app, client):
    """Two participants of contrast_match.json, the first with two sessions."""
    def respond(trial, condition):
        return sim.adjustment(MATCH, condition["response"])

    ids = [sim.run(app, client, "contrast_match.json", code, respond) for code in ("P01", "P-02", "P01", "P_02")]
    return app, ids


def tsv(path):
    with open(path, newline="") as f:
        return list(csv.DictReader(f, delimiter="\t"))


def test_a_study_exports_as_a_bids_dataset_that_the_validator_accepts(study, tmp_path, capsys):
    app, ids = study
    out = tmp_path / "bids"
    assert main(["export", "--study", "contrast_match.json", "--format", "bids", "-o", str(out),
                 "--data", str(app.extensions["stimlab.store"].root)]) == 0
    beh = sorted(p.relative_to(out).as_posix() for p in out.rglob("*_beh.tsv"))
    # runs numbered within the participant; the task label is the protocol's file name in letters and digits
    assert beh == ["sub-P01/beh/sub-P01_task-contrastmatch_run-1_beh.tsv",
                   "sub-P01/beh/sub-P01_task-contrastmatch_run-2_beh.tsv",
                   "sub-P02/beh/sub-P02_task-contrastmatch_run-1_beh.tsv",
                   "sub-P02x2/beh/sub-P02x2_task-contrastmatch_run-1_beh.tsv"]
    # P-02 and P_02 are two people whose codes give the same letters and digits: two labels, codes kept
    assert [(r["participant_id"], r["participant_code"]) for r in tsv(out / "participants.tsv")] == [
        ("sub-P01", "P01"), ("sub-P02", "P-02"), ("sub-P02x2", "P_02")]
    description = json.loads((out / "dataset_description.json").read_text())
    assert description["BIDSVersion"] == "1.9.0" and description["DatasetType"] == "raw"
    events = tsv(out / "sub-P01/beh/sub-P01_task-contrastmatch_run-1_events.tsv")
    respond = [e for e in events if e["trial_type"] == "respond"]
    assert float(respond[0]["response_time"]) == 1.2345  # seconds (the runner's 1234.5 ms)
    assert float(events[1]["onset"]) - float(events[0]["onset"]) == pytest.approx(1.0, abs=1e-4)  # 1 s test phase
    sidecar = json.loads((out / "sub-P01/beh/sub-P01_task-contrastmatch_run-1_events.json").read_text())
    assert set(events[0]) <= set(sidecar) and sidecar["onset"]["Units"] == "s"
    beh_sidecar = json.loads((out / beh[0]).with_suffix(".json").read_text())
    assert set(tsv(out / beh[0])[0]) <= set(beh_sidecar) and beh_sidecar["TaskName"] == "contrastmatch"
    checker = validator()
    if checker is None:
        pytest.skip("the BIDS validator is not installed (make test installs it into .tools/)")
    run = subprocess.run([str(checker), str(out), "--json"], capture_output=True, text=True, timeout=300)
    report = json.loads(run.stdout)
    assert report["issues"]["errors"] == [], report["issues"]["errors"]
    assert run.returncode == 0
    warnings = {w["key"] for w in report["issues"]["warnings"]}
    assert "CUSTOM_COLUMN_WITHOUT_DESCRIPTION" not in warnings  # every column is described


def test_the_validator_does_find_errors(tmp_path):
    """The check above would notice a broken dataset: an events file without its onset column."""
    checker = validator()
    if checker is None:
        pytest.skip("the BIDS validator is not installed (make test installs it into .tools/)")
    (tmp_path / "sub-01/beh").mkdir(parents=True)
    (tmp_path / "dataset_description.json").write_text('{"Name": "x", "BIDSVersion": "1.9.0"}')
    (tmp_path / "sub-01/beh/sub-01_task-x_events.tsv").write_text("duration\ttrial_type\n1.0\tadapt\n")
    run = subprocess.run([str(checker), str(tmp_path), "--json"], capture_output=True, text=True, timeout=300)
    assert json.loads(run.stdout)["issues"]["errors"]


def test_one_session_downloads_as_a_zipped_dataset(study, client, tmp_path):
    app, ids = study
    answer = client.get(f"/sessions/{ids[2]}/export.bids")
    assert answer.status_code == 200 and answer.mimetype == "application/zip"
    archive = zipfile.ZipFile(io.BytesIO(answer.data))
    names = archive.namelist()
    assert any(n.endswith("sub-P01/beh/sub-P01_task-contrastmatch_run-1_events.tsv") for n in names)
    assert any(n.endswith("/participants.tsv") for n in names)
    checker = validator()
    if checker is None:
        pytest.skip("the BIDS validator is not installed (make test installs it into .tools/)")
    archive.extractall(tmp_path / "download")
    (folder,) = list((tmp_path / "download").iterdir())
    run = subprocess.run([str(checker), str(folder), "--json"], capture_output=True, text=True, timeout=300)
    assert json.loads(run.stdout)["issues"]["errors"] == []
