"""Calibration from readings: a simulated instrument (readings made from a known profile plus noise) recovers that
profile within tolerance; validation and drift report against the lab's tolerances."""

import numpy as np
import pytest

from stimlab.colorimetry._colour import colour
from stimlab.colorimetry.display import DisplayModel
from stimlab.errors import InputError
from stimlab.profiles.calibration import (
    drift,
    measurement_plan,
    profile_from_readings,
    recommend_transfer_model,
    validate,
)


def simulated_readings(model, plan, noise=0.002, seed=3, drift_per_step=0.0):
    """What a colorimeter would read on ``model``'s display: Y with relative noise, and x, y."""
    rng = np.random.default_rng(seed)
    readings = []
    for step in plan:
        linear = np.array([model.level_outputs[c][step["device"][c]] for c in range(3)])
        XYZ = model.RGB_linear_to_XYZ(linear)
        x, y = colour.XYZ_to_xy(XYZ)
        gain = (1 + noise * rng.standard_normal()) * (1 + drift_per_step * step["step"])
        readings.append({"step": step["step"], "luminance": float(XYZ[1] * gain), "x": float(x), "y": float(y)})
    return readings


def test_plan_measures_densely_near_black_and_repeats_for_drift():
    plan = measurement_plan(10, 12)
    red = [s["device"][0] for s in plan if s.get("channel") == "red"]
    assert red[-1] == 1023 and red[0] < 30 and np.all(np.diff(red) > 0)
    assert sum(s["kind"] == "drift" for s in plan) == 5 and sum(s["kind"] == "validation" for s in plan) == 5


def test_a_simulated_instrument_recovers_the_profile(demo_model):
    plan = measurement_plan(10, 12)
    readings = simulated_readings(demo_model, plan)
    profile, scores = profile_from_readings(plan, readings, name="recalibrated", bits=10, refresh_hz=60,
                                            size_cm=(53.1, 29.9), size_px=(1920, 1080))
    recovered = DisplayModel(profile)
    # Transfer curves within 0.5 % of full output at every level; white XYZ within 1 %; primaries xy within 0.002.
    assert np.max(np.abs(recovered.level_outputs - demo_model.level_outputs)) < 0.005
    assert recovered.RGB_linear_to_XYZ(np.ones(3)) == pytest.approx(demo_model.RGB_linear_to_XYZ(np.ones(3)), rel=0.01)
    assert np.max(np.abs(recovered.primaries_xy() - demo_model.primaries_xy())) < 0.002
    assert set(scores["red"]) == {"gog", "power", "table"}
    report = validate(profile, plan, simulated_readings(demo_model, plan, seed=4))
    assert report["passed"] and len(report["colours"]) == 5
    assert all(abs(c["luminance_error_percent"]) < 2 and c["delta_uv"] < 0.004 for c in report["colours"])


def test_validation_fails_beyond_tolerance(demo_model):
    plan = measurement_plan(10, 8)
    readings = simulated_readings(demo_model, plan)
    profile, _ = profile_from_readings(plan, readings, name="x", bits=10, refresh_hz=60)
    off = [dict(r, luminance=r["luminance"] * 1.05) if s["kind"] == "validation" else r
           for s, r in zip(plan, readings)]
    report = validate(profile, plan, off)
    assert not report["passed"]
    assert all(c["luminance_error_percent"] == pytest.approx(100 * (1 / 1.05 - 1), abs=0.5) for c in report["colours"])
    assert validate(profile, plan, off, {"luminance_percent": 6})["passed"]


def test_warm_up_drift_is_flagged(demo_model):
    plan = measurement_plan(10, 8)
    steady = drift(plan, simulated_readings(demo_model, plan, noise=0))
    assert not steady["warning"]
    warming = drift(plan, simulated_readings(demo_model, plan, noise=0, drift_per_step=0.001))
    assert warming["warning"] and max(abs(r["worst_percent"]) for r in warming["repeats"]) > 2


def test_model_recommendation_prefers_the_true_shape():
    x = np.linspace(0, 1, 12) ** 1.5
    y = np.clip(1.08 * x - 0.08, 0, None) ** 2.3
    best, scores = recommend_transfer_model(x, y)
    assert best in ("gog", "table") and scores["gog"] < scores["power"]


def test_unmeasured_patches_are_named():
    plan = measurement_plan(8, 6)
    with pytest.raises(InputError, match="not measured yet, starting with black"):
        profile_from_readings(plan, [], name="x", bits=8, refresh_hz=60)


def test_a_run_with_imported_spectra_through_the_api(client, demo_model):
    import io

    from stimlab.profiles.demo import demo_file

    csrf = {"X-CSRF-Token": client.csrf}
    created = client.post("/calibrations", data={"csrf_token": client.csrf, "name": "Spectral LCD", "bits": "10",
                                                 "levels": "8", "size_cm": "53.1,29.9", "size_px": "1920,1080"})
    run_id = int(created.headers["Location"].rsplit("/", 1)[1])
    run = client.get(f"/api/calibrations/{run_id}").get_json()
    client.post(f"/calibrations/{run_id}/spectra", content_type="multipart/form-data",
                data={"csrf_token": client.csrf,
                      "spectra": (io.BytesIO(demo_file("vale_street_b12_spectra.csv").encode()), "spectra.csv")})
    early = client.post(f"/api/calibrations/{run_id}/build", json={}, headers=csrf)
    assert early.status_code == 400 and "not measured yet" in early.get_json()["error"]["message"]
    bad = client.put(f"/api/calibrations/{run_id}/readings/0", json={"luminance": 0.3, "x": 1.4, "y": 0.3},
                     headers=csrf)
    assert bad.status_code == 400 and bad.get_json()["error"]["field"] == "x"
    for reading in simulated_readings(demo_model, run["plan"]):
        saved = client.put(f"/api/calibrations/{run_id}/readings/{reading['step']}", headers=csrf,
                           json={"luminance": reading["luminance"]})  # a photometer: luminance only
        assert saved.status_code == 200
    result = client.post(f"/api/calibrations/{run_id}/build", json={}, headers=csrf).get_json()
    profile = client.get(f"/api/displays/{result['display_id']}").get_json()["profile"]
    assert profile["primaries"]["kind"] == "spectra"
    recovered = DisplayModel(profile)
    assert np.max(np.abs(recovered.level_outputs - demo_model.level_outputs)) < 0.01
    assert result["validation"]["passed"]  # luminance only: no Δu'v' without x, y
