"""End to end in Debian's Chromium (Playwright) against a real server on a free port.

Screenshots of each page go to test-artifacts/ for a person to look at.
"""

import json
import re
from pathlib import Path

import pytest
from browser_support import Server, fill_display_form

ARTIFACTS = Path(__file__).parents[2] / "test-artifacts"
# every image matching a selector loaded and drawn (a server-drawn figure, not a broken link)
DRAWN = "s => { const all = [...document.querySelectorAll(s)]; return all.length > 0 && " \
        "all.every(i => i.complete && i.naturalWidth > 0); }"


@pytest.fixture(scope="module")
def server(tmp_path_factory):
    server = Server(tmp_path_factory.mktemp("serve")).start()
    yield {"url": server.url, "data": server.data}
    server.stop()


def shot(page, name):
    ARTIFACTS.mkdir(exist_ok=True)
    page.screenshot(path=str(ARTIFACTS / f"{name}.png"), full_page=True)


def test_add_a_display_through_the_form(server, page, tmp_path):
    page.goto(server["url"] + "/displays/new")
    shot(page, "display_new")
    fill_display_form(page, tmp_path, "Room C LCD")
    page.get_by_role("button", name="Build the profile").click()
    page.wait_for_url(re.compile(r".*/displays/\d+$"))  # the form is sent in the background, then the page opens
    assert page.get_by_role("heading", level=1).inner_text().startswith("Room C LCD")
    assert page.locator("figure.plot img").count() == 3  # transfer curves, gamut plane, MacLeod–Boynton
    page.wait_for_function(DRAWN, arg="figure.plot img")
    shot(page, "display")
    page.goto(server["url"] + "/displays")
    assert page.get_by_role("link", name="Room C LCD").is_visible()
    shot(page, "displays")


def test_edit_a_protocol_with_the_live_audit(server, page):
    page.goto(server["url"] + "/protocols")
    shot(page, "protocols")
    page.get_by_role("link", name="afterimage_null.json").click()
    verdict = page.locator("#audit-verdict")
    verdict.wait_for()
    assert verdict.inner_text().startswith("Passes")
    page.wait_for_function(DRAWN, arg="#audit-panel figure.plot img")  # the gamut-plane plot
    shot(page, "protocol_edit")
    contrast = page.locator('input[name="conditions.variables.axis.L-M[1]"]')
    for value in ("0.1", "0.15", "0.2"):  # raise the adapting L−M contrast step by step
        contrast.fill(value)
        page.wait_for_timeout(800)  # the audit runs 300 ms after the last keystroke
        if page.locator("#audit-verdict").inner_text().startswith("Fails"):
            break
    assert page.locator("#audit-verdict").inner_text().startswith("Fails")
    assert "out of gamut" in page.locator(".findings").inner_text()
    shot(page, "protocol_edit_failing")
    contrast.fill("0.05")  # lower it back, below the original
    page.locator("#audit-verdict", has_text="Passes").wait_for()
    page.get_by_role("button", name="Save").click()
    page.locator("#save-status", has_text="Saved").wait_for()
    shot(page, "protocol_edit_saved")
    page.reload()
    assert page.locator('input[name="conditions.variables.axis.L-M[1]"]').input_value() == "0.05"
    saved = (Path(server["data"]) / "protocols" / "afterimage_null.json").read_text()
    assert json.loads(saved)["conditions"]["variables"]["axis"]["L-M"] == [0, 0.05, 0]
    assert saved.lstrip().startswith('{\n  "stimlab_protocol": 1')  # the author's order is kept


def test_a_typo_is_flagged_on_its_field(server, page):
    page.goto(server["url"] + "/protocols/contrast_match.json")
    page.locator("#audit-verdict").wait_for()
    size = page.locator('input[name="stimuli[1].size_deg"]')
    size.fill("-2")
    page.locator(".field.invalid").wait_for()
    assert page.locator('.field.invalid input[name="stimuli[1].size_deg"]').count() == 1
    assert page.locator("#audit-verdict").inner_text().startswith("Size (deg) of stimulus 2 (match) must be more than 0")
    shot(page, "protocol_edit_invalid")


def test_requests_without_token_or_from_a_foreign_host_are_refused(server, page):
    page.goto(server["url"] + "/sessions")
    shot(page, "sessions")
    refused = page.request.post(server["url"] + "/api/audit", data={"protocol": {}})
    assert refused.status == 403 and refused.json()["error"]["field"] == "csrf_token"
    foreign = page.request.get(server["url"] + "/api/displays", headers={"Host": "rebind.example"})
    assert foreign.status == 403
