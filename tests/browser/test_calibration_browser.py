"""The calibration sequence in Debian's Chromium with a simulated instrument: readings generated from a known
profile plus noise are typed as each patch is shown; an interrupted run resumes; the built profile recovers the
known one within tolerance and validates."""

from pathlib import Path

import numpy as np
import pytest

from stimlab.colorimetry._colour import colour
from stimlab.colorimetry.display import DisplayModel
from stimlab.profiles.demo import demo_profile

ARTIFACTS = Path(__file__).parents[2] / "test-artifacts"


def instrument(model, device, rng, noise=0.002):
    linear = np.array([model.level_outputs[c][device[c]] for c in range(3)])
    XYZ = model.RGB_linear_to_XYZ(linear)
    x, y = colour.XYZ_to_xy(XYZ)
    return XYZ[1] * (1 + noise * rng.standard_normal()), x, y


def test_calibrate_with_a_simulated_instrument(server, page):
    truth = DisplayModel(demo_profile())
    rng = np.random.default_rng(21)
    page.goto(server.url + "/displays/1")
    page.get_by_role("link", name="Calibrate this display again").click()
    assert page.get_by_label("Display name").input_value() == "Vale Street B12 LCD"
    page.get_by_label("Levels per channel").fill("12")
    page.get_by_role("button", name="Start the measurement run").click()
    page.wait_for_url("**/calibrations/*")
    run_url = page.url
    page.get_by_role("link", name="Show the patches full screen").click()
    page.get_by_role("button", name="Full screen and show the patches").click()

    def measure(count):
        for _ in range(count):
            page.wait_for_function("window.calibrationStep !== undefined")
            state = page.evaluate("window.calibrationStep")
            if state.get("done"):
                return state
            Y, x, y = instrument(truth, state["step"]["device"], rng)
            page.locator("#r-luminance").fill(f"{Y:.5f}")
            page.locator("#r-x").fill(f"{x:.5f}")
            page.locator("#r-y").fill(f"{y:.5f}")
            page.keyboard.press("Enter")
            page.wait_for_function(f"window.calibrationStep.done || window.calibrationStep.index === {state['index'] + 1}")
        return page.evaluate("window.calibrationStep")

    measure(20)
    ARTIFACTS.mkdir(exist_ok=True)
    page.screenshot(path=str(ARTIFACTS / "calibration_patch.png"))
    page.reload()  # an interrupted run continues at the first patch without a reading
    page.get_by_role("button", name="Full screen and show the patches").click()
    page.wait_for_function("window.calibrationStep !== undefined")
    assert page.evaluate("window.calibrationStep.index") == 20
    state = measure(100)
    assert state["done"] and state["measured"] == state["total"]

    page.goto(run_url)
    page.get_by_role("button", name="Build the profile").click()
    assert page.locator("#validation-verdict").inner_text() == "passes"
    page.screenshot(path=str(ARTIFACTS / "calibration_result.png"), full_page=True)
    displays = page.request.get(server.url + "/api/displays").json()["displays"]
    newest = max(displays, key=lambda d: d["id"])
    assert newest["name"] == "Vale Street B12 LCD" and newest["version"] == 2
    profile = page.request.get(f"{server.url}/api/displays/{newest['id']}").json()["profile"]
    recovered = DisplayModel(profile)
    assert np.max(np.abs(recovered.level_outputs - truth.level_outputs)) < 0.005
    assert recovered.RGB_linear_to_XYZ(np.ones(3)) == pytest.approx(truth.RGB_linear_to_XYZ(np.ones(3)), rel=0.01)


def test_a_bad_reading_is_refused_naming_the_field(server, page):
    page.goto(server.url + "/calibrations/new")
    page.get_by_label("Display name").fill("Room D")
    page.get_by_role("button", name="Start the measurement run").click()
    page.get_by_role("link", name="Show the patches full screen").click()
    page.get_by_role("button", name="Full screen and show the patches").click()
    page.wait_for_function("window.calibrationStep !== undefined")
    page.locator("#r-luminance").fill("bright")
    page.keyboard.press("Enter")
    page.locator("#reading-status.bad").wait_for()
    assert "'bright' is not a number" in page.locator("#reading-status").inner_text()
    assert page.evaluate("window.calibrationStep.index") == 0


def test_patches_are_refused_on_a_screen_of_another_size(server, page):
    """A run set up for 2560×1440 opened on this 1920×1080 screen: no patch, the reason instead."""
    page.goto(server.url + "/calibrations/new")
    page.get_by_label("Display name").fill("Room E")
    page.get_by_label("Resolution (pixels)").fill("2560,1440")
    page.get_by_role("button", name="Start the measurement run").click()
    page.get_by_role("link", name="Show the patches full screen").click()
    page.wait_for_function("window.calibrationReady === true")
    page.get_by_role("button", name="Full screen and show the patches").click()
    page.wait_for_function("typeof window.calibrationRefused === 'string'")
    reason = page.locator("#gate-reason").inner_text()
    assert "1920×1080" in reason and "2560×1440" in reason
    assert page.evaluate("window.calibrationStep") is None
    assert not page.locator("#reading").is_visible()
    ARTIFACTS.mkdir(exist_ok=True)
    page.screenshot(path=str(ARTIFACTS / "calibration_refused.png"))
