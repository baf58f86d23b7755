"""Heterochromatic flicker photometry: a simulated observer with known weights is recovered within its noise, the
adjustment moves the isoluminant plane as computed by hand, and the task passes the flash audit."""

import datetime as dt
import json
import re
from pathlib import Path

import numpy as np
import pytest

from stimlab.audit.preflight import audit_protocol
from stimlab.colorimetry.observers import observer
from stimlab.colorimetry.photometry import (
    adjusted_weights,
    null_setting,
    ratio_from_setting,
    summarise_settings,
)
from stimlab.colorimetry.stimulus import Background
from stimlab.experiment.compile import compile_protocol
from stimlab.experiment.protocol import validate_protocol

PROTOCOL = json.loads((Path(__file__).parents[2] / "protocols" / "flicker_photometry.json").read_text())
SS2 = observer("ss2")


@pytest.fixture(scope="module")
def LMS_0(demo_model):
    return Background(demo_model, [0.5, 0.5, 0.5]).LMS_0


def test_the_standard_observer_nulls_on_the_isoluminant_axis(LMS_0):
    assert null_setting(0.08, 1.0, LMS_0, SS2) == pytest.approx(0.0, abs=1e-12)
    assert ratio_from_setting(0.08, 0.0, LMS_0, SS2) == pytest.approx(1.0)


def test_settings_and_ratios_invert(LMS_0):
    for ratio in (0.8, 0.95, 1.2, 1.5):
        setting = null_setting(0.08, ratio, LMS_0, SS2)
        assert ratio_from_setting(0.08, setting, LMS_0, SS2) == pytest.approx(ratio)


def test_a_simulated_observer_is_recovered_within_its_noise(LMS_0):
    true_ratio, noise = 1.18, 0.004  # setting noise in DKL luminance units
    rng = np.random.default_rng(12)
    settings = null_setting(0.08, true_ratio, LMS_0, SS2) + noise * rng.standard_normal(8)
    summary = summarise_settings(0.08, settings, LMS_0, SS2)
    # Propagate the setting's standard error to the ratio with the local slope of the inverse.
    slope = abs(ratio_from_setting(0.08, summary["mean_setting"] + 1e-6, LMS_0, SS2)
                - ratio_from_setting(0.08, summary["mean_setting"], LMS_0, SS2)) / 1e-6
    assert abs(summary["ratio"] - true_ratio) < 3 * slope * noise / np.sqrt(8)
    assert summary["n"] == 8 and summary["sd_setting"] == pytest.approx(np.std(settings, ddof=1))


def test_adjusted_weights_keep_the_background_luminance(LMS_0):
    w_L, w_M = adjusted_weights(1.3, LMS_0, SS2)
    assert (w_L / SS2.w_L) / (w_M / SS2.w_M) == pytest.approx(1.3)
    assert w_L * LMS_0[0] + w_M * LMS_0[1] == pytest.approx(SS2.w_L * LMS_0[0] + SS2.w_M * LMS_0[1])


def test_an_adjusted_observer_moves_the_isoluminant_plane_as_computed_by_hand(demo, LMS_0, protocol_named):
    w_L, w_M = adjusted_weights(1.25, LMS_0, SS2)
    adjusted = SS2.with_luminance_weights(w_L, w_M, "flicker photometry, participant P09")
    protocol = validate_protocol(protocol_named("afterimage_null"))
    compiled = compile_protocol(protocol, demo, obs=adjusted)
    D = compiled.background.D
    # Hand: the L−M direction is ∝ (w_M', −w_L', 0), so it is isoluminant for the adjusted weights only.
    direction = np.array([w_M, -w_L, 0.0])
    assert np.cross(D[:, 1], direction) == pytest.approx(np.zeros(3), abs=1e-12)
    assert w_L * D[0, 1] + w_M * D[1, 1] == pytest.approx(0.0, abs=1e-12)
    assert abs(SS2.w_L * D[0, 1] + SS2.w_M * D[1, 1]) > 1e-3
    assert compiled.data["observer"]["adjustment"] == "flicker photometry, participant P09"
    standard = compile_protocol(protocol, demo).data["conditions"][0]["stimuli"]["adapter"]["colour"]["device"]
    assert compiled.data["conditions"][0]["stimuli"]["adapter"]["colour"]["device"] != standard


def test_the_flicker_task_passes_the_flash_audit_including_its_adjustment_range(demo):
    protocol = validate_protocol(json.loads(json.dumps(PROTOCOL)))
    report = audit_protocol(compile_protocol(protocol, demo), protocol, demo, today=dt.date(2026, 11, 25))
    assert report["passed"] and report["caution"]
    assert not [f for f in report["findings"] if f["kind"] == "photosensitivity" and f["severity"] == "fail"]
    # The same task with a large patch and a wide luminance range would flash: the adjustment's reach is audited.
    wide = json.loads(json.dumps(PROTOCOL))
    wide["stimuli"][0]["size_deg"] = 12
    wide["trial"][1]["response"].update(limits=[-0.9, 0.9], step_fine=0.05, step_coarse=0.1)
    wide = validate_protocol(wide)
    report = audit_protocol(compile_protocol(wide, demo), wide, demo, today=dt.date(2026, 11, 25))
    fails = [f for f in report["findings"] if f["kind"] == "photosensitivity" and f["severity"] == "fail"]
    assert fails and all("adjusted to position" in f["where"] for f in fails)


def test_the_web_app_saves_an_adjustment_and_protocols_use_it(client):
    csrf = {"X-CSRF-Token": client.csrf}
    created = client.post("/api/sessions", headers=csrf,
                          json={"protocol": "flicker_photometry.json", "display": 1, "participant": "P05"})
    session_id = created.get_json()["id"]
    compiled = client.get(f"/api/sessions/{session_id}").get_json()["compiled"]
    positions = [16, 19, 18, 21, 17, 20]  # ladder indices the observer confirmed
    events = [{"seq": i, "t": 1000.0 * i, "kind": "trial_end", "trial": i, "phase": "respond",
               "data": {"response": {"method": "adjustment", "position_index": p, "position": [-0.1 + 0.005 * p],
                                     "device": compiled["conditions"][0]["response"]["device"][p], "rt_ms": 900}}}
              for i, p in enumerate(positions)]
    stored = client.post(f"/api/sessions/{session_id}/batches", headers=csrf, json={"batch": 0, "events": events})
    assert stored.status_code == 200
    saved = client.post(f"/api/sessions/{session_id}/observer-adjustment", headers=csrf)
    assert saved.status_code == 201
    summary = saved.get_json()
    assert summary["n"] == 6 and summary["mean_setting"] == pytest.approx(np.mean([-0.1 + 0.005 * p
                                                                                    for p in positions]))
    assert client.get("/api/observers/P05").get_json()["ratio"] == pytest.approx(summary["ratio"])
    page = client.get(f"/sessions/{session_id}")
    assert "Flicker photometry" in page.text and "adjusted:P05" in page.text

    protocol = client.get("/api/protocols/afterimage_null.json").get_json()["protocol"]
    protocol["about"]["observer"] = "adjusted:P05"
    client.put("/api/protocols/adjusted_null.json", headers=csrf, json={"protocol": protocol, "base_sha256": None})
    run = client.post("/api/sessions", headers=csrf,
                      json={"protocol": "adjusted_null.json", "display": 1, "participant": "P05"})
    assert run.status_code == 201
    cited = client.get(f"/api/sessions/{run.get_json()['id']}").get_json()["compiled"]["observer"]
    assert re.match(r"flicker photometry, participant P05, adjustment 1 of \d{4}-\d\d-\d\d", cited["adjustment"])
    protocol["about"]["observer"] = "adjusted:P99"
    missing = client.post("/api/audit", headers=csrf, json={"protocol": protocol})
    assert missing.status_code == 400 and missing.get_json()["error"]["field"] == "about.observer"


def test_spread_settings_are_not_reliable_by_the_default_criterion(LMS_0):
    """A ratio near 0.5 from settings whose ratios scatter with an SD near 0.6 must not pass; consistent settings do.
    The default criterion is stimlab's own (4 settings, ratio SD ≤ 0.40), not a published standard."""
    from stimlab.colorimetry.photometry import DEFAULT_CRITERION, assess_reliability, reliability_criterion

    rng = np.random.default_rng(3)
    spread = null_setting(0.08, 0.51, LMS_0, SS2) + 0.02 * rng.standard_normal(6)  # ratio 0.56, SD 0.61
    summary = summarise_settings(0.08, spread, LMS_0, SS2)
    assert summary["ratio_sd"] > 0.4
    check = assess_reliability(summary)
    assert not check["reliable"] and "SD" in check["problems"][0] and check["criterion"]["is_default"]
    steady = null_setting(0.08, 1.1, LMS_0, SS2) + 0.001 * rng.standard_normal(6)
    assert assess_reliability(summarise_settings(0.08, steady, LMS_0, SS2))["reliable"]
    # A lab's own criterion replaces the default; too few settings are named as the problem.
    strict = reliability_criterion(min_settings=8, max_ratio_sd=0.05)
    assert not strict["is_default"] and strict != DEFAULT_CRITERION
    problems = assess_reliability(summarise_settings(0.08, steady, LMS_0, SS2), strict)["problems"]
    assert any("only 6 settings" in p for p in problems)
    with pytest.raises(ValueError):
        reliability_criterion(min_settings=1)


def test_an_unreliable_result_needs_a_reason_and_earlier_adjustments_are_kept(client):
    csrf = {"X-CSRF-Token": client.csrf}
    session_id = client.post("/api/sessions", headers=csrf, json={"protocol": "flicker_photometry.json",
                                                                  "display": 1, "participant": "P07"}).get_json()["id"]
    compiled = client.get(f"/api/sessions/{session_id}").get_json()["compiled"]

    def log(positions, batch):
        events = [{"seq": 100 * batch + i, "t": 1000.0 * i, "kind": "trial_end", "trial": i, "phase": "respond",
                   "data": {"response": {"method": "adjustment", "position_index": p, "position": [-0.1 + 0.005 * p],
                                         "device": compiled["conditions"][0]["response"]["device"][p], "rt_ms": 900}}}
                  for i, p in enumerate(positions)]
        client.post(f"/api/sessions/{session_id}/batches", headers=csrf, json={"batch": batch, "events": events})

    log([4, 36, 10, 30, 20, 25], 0)  # settings all over the ladder
    page = client.get(f"/sessions/{session_id}").text
    assert "Not reliable by this criterion" in page and "stimlab's default" in page
    refused = client.post(f"/api/sessions/{session_id}/observer-adjustment", headers=csrf)
    assert refused.status_code == 400 and refused.get_json()["error"]["field"] == "override_reason"
    assert client.get("/api/observers/P07").status_code == 404
    saved = client.post(f"/api/sessions/{session_id}/observer-adjustment", headers=csrf,
                        json={"override_reason": "pilot, kept for comparison"})
    assert saved.status_code == 201 and saved.get_json()["override_reason"] == "pilot, kept for comparison"
    again = client.post(f"/api/sessions/{session_id}/observer-adjustment", headers=csrf,
                        json={"override_reason": "second copy"})
    assert again.status_code == 201
    page = client.get(f"/sessions/{session_id}").text
    assert page.count("saved despite the criterion") == 2 and page.count("in use (latest)") == 1
    assert client.get("/api/observers/P07").get_json()["id"] == again.get_json()["id"]
