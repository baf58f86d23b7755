"""Displays end to end in Debian's Chromium: the default display is a setting that an upload never changes; the
upload form keeps both chosen files when it refuses them; a profile downloads as JSON."""

import json
from pathlib import Path

from browser_support import fill_display_form

from stimlab.profiles.demo import demo_file

ARTIFACTS = Path(__file__).parents[2] / "test-artifacts"


def upload(page, url, tmp_path, name, transfer_text=None):
    page.goto(url + "/displays/new")
    fill_display_form(page, tmp_path, name, transfer_text)
    page.get_by_role("button", name="Build the profile").click()


def test_an_upload_does_not_change_the_default_display(server, page, tmp_path):
    assert page.request.get(server.url + "/api/settings/default-display").json()["default_display"] == 1
    # A different transfer curve, so that the new display's audits differ from the demo's.
    dimmer = "\n".join(line if not line[:1].isalpha() or line.startswith("channel") else
                       ",".join(line.split(",")[:2] + [f"{float(line.split(',')[2]) * 0.5:.5f}"])
                       for line in demo_file("vale_street_b12_transfer.csv").splitlines())
    upload(page, server.url, tmp_path, "Test upload LCD", dimmer)
    page.wait_for_url("**/displays/2")
    assert page.request.get(server.url + "/api/settings/default-display").json()["default_display"] == 1
    page.goto(server.url + "/protocols")
    assert page.locator("#display-choice option:checked").inner_text().startswith("Vale Street B12 LCD")
    page.goto(server.url + "/protocols/afterimage_null.json")
    assert page.locator("#audit-display option:checked").inner_text().startswith("Vale Street B12 LCD")
    page.locator("#audit-verdict").wait_for()
    assert "Vale Street B12 LCD" in page.locator("#audit-verdict").inner_text()
    page.goto(server.url + "/run")
    assert page.locator("select[name=display] option:checked").inner_text().startswith("Vale Street B12 LCD")
    # Choosing the default is explicit, on the display list.
    page.goto(server.url + "/displays")
    page.locator("tr", has_text="Test upload LCD").get_by_role("button", name="Make version 1 of this display the "
                                                                    "default").click()
    page.wait_for_url("**/displays")
    assert page.request.get(server.url + "/api/settings/default-display").json()["default_display"] == 2
    assert page.locator("tr", has=page.locator("#default-display")).inner_text().startswith("Test upload LCD")
    ARTIFACTS.mkdir(exist_ok=True)
    page.screenshot(path=str(ARTIFACTS / "displays_default.png"), full_page=True)
    with page.expect_download() as download:
        page.locator("tr", has_text="Vale Street B12 LCD").get_by_role("link", name="download JSON").click()
    profile = json.loads(Path(download.value.path()).read_text())
    assert profile["sha256"] == page.request.get(server.url + "/api/displays/1").json()["sha256"]
    assert download.value.suggested_filename == "Vale_Street_B12_LCD_v1.json"


def test_an_upload_error_keeps_both_files(server, page, tmp_path):
    upload(page, server.url, tmp_path, "Broken LCD", "channel,level,luminance_cd_m2\nred,0,0.2\nred,255,abc\n")
    page.locator("#form-error-live").wait_for()
    assert "Not added" in page.locator("#form-error-live").inner_text()
    assert page.url.endswith("/displays/new")
    files = page.evaluate("[...document.querySelectorAll('input[type=file]')].map((i) => i.files.length)")
    assert files == [1, 1]
    assert page.get_by_label("Name").input_value() == "Broken LCD"
    assert page.locator(".field.invalid").count() == 1
    ARTIFACTS.mkdir(exist_ok=True)
    page.screenshot(path=str(ARTIFACTS / "display_new_error.png"), full_page=True)
