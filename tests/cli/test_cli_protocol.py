"""``stimlab audit`` and ``stimlab compile``: exit 0 when everything passes, 1 when something fails, 2 on bad
input, and JSON with one record per finding."""

import json
from pathlib import Path

import pytest

from stimlab.cli import main
from stimlab.profiles.profile import save_profile

PROTOCOLS = Path(__file__).parents[2] / "protocols"


@pytest.fixture
def profile_path(tmp_path, demo):
    path = tmp_path / "display.json"
    save_profile(demo, path)
    return path


def test_passing_audit_exits_0(profile_path, capsys):
    assert main(["audit", str(PROTOCOLS / "afterimage_null.json"), "--display", str(profile_path),
                 "--max-age-days", "100000"]) == 0
    out = capsys.readouterr().out
    assert "PASSED: 0 failing" in out and "After-image nulling" in out


def test_failing_audit_exits_1_and_names_each_failure(profile_path, tmp_path, capsys, protocol_named):
    protocol = protocol_named("afterimage_duration")
    protocol["stimuli"][0].update(size_deg=10, time_course={"kind": "square", "frequency_hz": 10})
    protocol["conditions"]["variables"] = {"adapter": {"bright": [0.5, 0, 0], "too-red": [0, 0.4, 0]}}
    path = tmp_path / "bad.json"
    path.write_text(json.dumps(protocol))
    assert main(["audit", str(path), "--display", str(profile_path), "--max-age-days", "100000"]) == 1
    out = capsys.readouterr().out
    assert "CAUTION: Flicker and flashing can trigger seizures" in out
    assert "FAIL  adapter=too-red / adapter: out of gamut" in out
    assert "FAIL  adapter=bright / adapter: 10 general flashes" in out
    assert "FAILED:" in out
    assert main(["audit", str(path), "--display", str(profile_path), "--json"]) == 1
    report = json.loads(capsys.readouterr().out)
    assert report["passed"] is False
    for finding in report["findings"]:
        assert set(finding) == {"kind", "severity", "where", "message", "values"}
    assert {f["kind"] for f in report["findings"] if f["severity"] == "fail"} == {"gamut", "photosensitivity"}


def test_schema_error_exits_2_naming_the_path(profile_path, tmp_path, capsys, protocol_named):
    protocol = protocol_named("contrast_match")
    protocol["stimuli"][1]["colour"]["dkl"][1] = "zero"
    path = tmp_path / "typo.json"
    path.write_text(json.dumps(protocol))
    assert main(["audit", str(path), "--display", str(profile_path)]) == 2
    err = capsys.readouterr().err.strip()
    assert err.count("\n") == 0
    assert "typo.json, at stimuli[1].colour.dkl[1]: " in err and '"zero"' in err


def test_compile_writes_the_runner_file(profile_path, tmp_path, capsys):
    out = tmp_path / "compiled.json"
    assert main(["compile", str(PROTOCOLS / "detection_staircase.json"), "--display", str(profile_path),
                 "-o", str(out)]) == 0
    data = json.loads(out.read_text())
    assert data["conditions"][0]["response"]["kind"] == "staircase"
    assert len(data["trials"]) == 60 and {t["target_side"] for t in data["trials"]} == {"left", "right"}


def test_bad_participant_exits_2(profile_path, capsys):
    assert main(["audit", str(PROTOCOLS / "afterimage_null.json"), "--display", str(profile_path),
                 "--participant", "0"]) == 2
    assert "--participant" in capsys.readouterr().err


def test_audit_resolves_a_stored_observer_adjustment_from_the_data_folder(profile_path, tmp_path, capsys):
    from stimlab.sessions.store import Store

    store = Store(tmp_path / "data")
    db = store.connect()
    # Invented weights for participant P07: an L/M weighting a little off the standard observer's.
    store.add_adjustment(db, "P07", "ss2", {"ratio": 2.1, "w_L": 0.70, "w_M": 0.34})
    db.close()
    protocol = json.loads((PROTOCOLS / "afterimage_null.json").read_text())
    protocol["about"]["observer"] = "adjusted:P07"
    path = tmp_path / "adjusted.json"
    path.write_text(json.dumps(protocol))
    assert main(["audit", str(path), "--display", str(profile_path), "--max-age-days", "100000",
                 "--data", str(tmp_path / "data"), "--json"]) in (0, 1)
    out = capsys.readouterr().out
    assert json.loads(out)["findings"] is not None
    assert main(["compile", str(path), "--display", str(profile_path), "--data", str(tmp_path / "data"),
                 "-o", str(tmp_path / "c.json")]) == 0
    observer = json.loads((tmp_path / "c.json").read_text())["observer"]
    assert observer["w_L"] == 0.70 and observer["w_M"] == 0.34 and "P07" in observer["adjustment"]


def test_audit_of_an_adjusted_observer_names_the_missing_adjustment(profile_path, tmp_path, capsys):
    from stimlab.sessions.store import Store

    Store(tmp_path / "data").connect().close()
    protocol = json.loads((PROTOCOLS / "afterimage_null.json").read_text())
    protocol["about"]["observer"] = "adjusted:P99"
    path = tmp_path / "adjusted.json"
    path.write_text(json.dumps(protocol))
    assert main(["audit", str(path), "--display", str(profile_path), "--data", str(tmp_path / "data")]) == 2
    err = capsys.readouterr().err
    assert "about.observer" in err and "'P99'" in err
    assert main(["audit", str(path), "--display", str(profile_path), "--data", str(tmp_path / "none")]) == 2
    assert "--data" in capsys.readouterr().err
