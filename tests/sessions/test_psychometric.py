"""Thresholds fitted by maximum likelihood recover a simulated observer's known threshold."""

import numpy as np
import pytest
import simulated_sessions as sim

from stimlab.sessions.ingest import get_session
from stimlab.sessions.psychometric import fit_threshold, weibull
from stimlab.sessions.summary import session_summary

THRESHOLD, SLOPE = 0.03, 3.0  # the simulated observer (DKL L−M contrast, Weibull slope)


def test_the_weibull_reaches_63_percent_of_its_range_at_threshold():
    # ψ(α) = γ + (1 − γ − λ)(1 − e⁻¹): 0.5 + 0.48 · 0.632121 = 0.80342 (Wichmann & Hill 2001, eq. 1 with Weibull F)
    assert weibull(THRESHOLD, THRESHOLD, SLOPE, 0.5, 0.02) == pytest.approx(0.80342, abs=1e-5)
    assert weibull(0.0, THRESHOLD, SLOPE, 0.5, 0.02) == 0.5


def test_constant_stimuli_recover_the_known_threshold_within_the_interval():
    rng = np.random.default_rng(2015)
    levels = np.repeat([0.01, 0.015, 0.02, 0.025, 0.03, 0.04, 0.05, 0.07], 60)
    correct = rng.random(levels.size) < weibull(levels, THRESHOLD, SLOPE, 0.5, 0.02)
    fit = fit_threshold(levels, correct, "2afc", samples=200)
    low, high = fit["ci95"]
    assert low < THRESHOLD < high and high - low < 0.01
    assert fit["threshold"] == pytest.approx(THRESHOLD, rel=0.1)


def test_yes_no_uses_a_zero_guess_rate():
    rng = np.random.default_rng(3)
    levels = np.repeat([0.005, 0.01, 0.02, 0.03, 0.045, 0.06], 80)
    said_yes = rng.random(levels.size) < weibull(levels, THRESHOLD, SLOPE, 0.0, 0.02)
    fit = fit_threshold(levels, said_yes, "yes_no", samples=200)
    assert fit["guess"] == 0.0 and fit["ci95"][0] < THRESHOLD < fit["ci95"][1]


def test_too_few_trials_or_flat_data_say_so_instead_of_fitting():
    assert "error" in fit_threshold([0.02, 0.02, 0.03], [True, False, True])
    flat = fit_threshold(np.repeat([0.01, 0.02, 0.03, 0.04], 20), np.arange(80) % 5 != 0)  # 80 % everywhere
    assert "outside the tested range" in flat["error"]


def test_a_staircase_session_reports_the_fitted_threshold(app, client):
    """2-down 1-up on detection_staircase.json's ladder (start 0.05, steps 0.01/0.005/0.0025, 60 trials), answered
    by the simulated observer; the page's threshold interval holds the observer's threshold."""
    rng = np.random.default_rng(11)
    state = {"value": 0.05, "run": 0, "direction": 0, "reversals": 0}
    steps = [0.01, 0.005, 0.0025]

    def respond(trial, condition):
        value = state["value"]
        correct = bool(rng.random() < weibull(value, THRESHOLD, SLOPE, 0.5, 0.02))
        move = 0
        if correct:
            state["run"] += 1
            if state["run"] == 2:
                move, state["run"] = -1, 0
        else:
            move, state["run"] = 1, 0
        if move:
            if state["direction"] and move != state["direction"]:
                state["reversals"] += 1
            state["direction"] = move
            size = steps[min(state["reversals"], 2)]
            state["value"] = float(np.clip(round((value + move * size) / 0.0025) * 0.0025, 0, 0.12))
        side = trial["target_side"]
        key = "ArrowLeft" if (side == "left") == correct else "ArrowRight"
        return {"response": {"method": "2afc", "key": key, "choice": 0 if key == "ArrowLeft" else 1,
                             "correct": correct, "rt_ms": 600.0}, "staircase_value": value}

    session_id = sim.run(app, client, "detection_staircase.json", "P02", respond)
    db = app.extensions["stimlab.store"].connect()
    summary = session_summary(db, get_session(db, session_id))
    fit = summary["conditions"][0]["threshold"]
    assert fit["n"] == 60 and fit["ci95"][0] < THRESHOLD < fit["ci95"][1]
    page = client.get(f"/sessions/{session_id}").text
    assert "threshold" in page and "parametric bootstrap" in page
