"""The protocol editor and protocol files end to end in Debian's Chromium against a real server: a protocol from
each paradigm template edited through the form, saved and audited; duplicate, rename, delete and restore; a save
refused because the file changed on disk keeps the edits. Screenshots go to test-artifacts/."""

import json
from pathlib import Path

import pytest

from stimlab.experiment.paradigms import paradigms

ARTIFACTS = Path(__file__).parents[2] / "test-artifacts"


def shot(page, name):
    ARTIFACTS.mkdir(exist_ok=True)
    page.screenshot(path=str(ARTIFACTS / f"{name}.png"), full_page=True)


def new_from_template(page, url, key, name):
    page.goto(url + "/protocols")
    page.locator("#new-protocol summary").click()
    page.locator(f'input[name="paradigm"][value="{key}"]').check()
    page.get_by_role("textbox", name="File name", exact=True).fill(name)
    page.get_by_role("button", name="Create and edit").click()
    page.wait_for_url(f"**/protocols/{name}.json")
    page.locator("#audit-verdict").wait_for()


def wait_for_audit(page, text="Passes"):
    page.locator("#audit-verdict", has_text=text).wait_for()


@pytest.mark.parametrize("key", [p["key"] for p in paradigms()])
def test_a_protocol_from_each_template_edited_through_the_form(server, page, key):
    new_from_template(page, server.url, key, f"new_{key}")
    wait_for_audit(page)
    if key == "afterimage_nulling":
        shot(page, "editor_new_from_template")
    stimuli = page.locator('fieldset[data-path="stimuli"] > fieldset').count()
    page.get_by_role("button", name="Add a stimulus").click()
    page.locator(f'fieldset[data-path="stimuli[{stimuli}]"]').wait_for()
    page.locator(f'input[name="stimuli[{stimuli}].size_deg"]').fill("1.5")
    # A level for the first variable, or a new variable with a second level.
    if page.locator("fieldset.variable").count() == 0:
        page.locator("#new-variable").fill("contrast")
        page.get_by_role("button", name="Add variable").click()
        page.locator('fieldset[data-path="conditions.variables.contrast"]').wait_for()
    variable = page.locator("fieldset.variable").first
    path = variable.get_attribute("data-path")
    before = variable.locator(":scope > .field").count()
    level_name = variable.locator("[data-name-for]")
    if level_name.count():
        level_name.fill("extra")
    variable.get_by_role("button", name="Add level").click()
    page.locator(f'fieldset[data-path="{path}"] > .field').nth(before).wait_for()
    wait_for_audit(page)
    if key == "afterimage_nulling":
        shot(page, "editor_form_added_stimulus")
    page.get_by_role("button", name="Save", exact=True).click()
    page.locator("#save-status", has_text="Saved").wait_for()
    saved = json.loads((server.data / "protocols" / f"new_{key}.json").read_text())
    assert saved["stimuli"][-1]["size_deg"] == 1.5 and len(saved["stimuli"]) == stimuli + 1
    levels = saved["conditions"]["variables"][path.rsplit(".", 1)[1]]
    assert len(levels) == before + 1
    listing = page.request.get(server.url + "/api/protocols").json()["protocols"]
    entry = next(p for p in listing if p["name"] == f"new_{key}.json")
    assert entry["passed"] and entry["error"] is None


def test_duplicate_rename_delete_and_restore(server, page):
    page.goto(server.url + "/protocols")
    row = page.locator("tr", has=page.get_by_role("link", name="afterimage_duration.json"))
    row.locator("summary", has_text="Duplicate").click()
    row.get_by_role("button", name="Duplicate").click()
    page.wait_for_url("**/protocols/afterimage_duration_copy.json")
    page.locator("summary", has_text="File: rename").click()
    page.get_by_label("New name").fill("duration_pilot")
    page.get_by_role("button", name="Rename").click()
    page.wait_for_url("**/protocols/duration_pilot.json")
    folder = server.data / "protocols"
    assert (folder / "duration_pilot.json").is_file() and not (folder / "afterimage_duration_copy.json").exists()
    page.locator("summary", has_text="File: rename").click()
    page.get_by_role("button", name="Delete (to the trash)").click()
    page.locator("#deleted-note").wait_for()
    assert not (folder / "duration_pilot.json").exists()
    assert page.get_by_role("link", name="duration_pilot.json").count() == 0
    shot(page, "protocols_trash")
    page.get_by_role("button", name="Restore duration_pilot.json").click()
    page.wait_for_url("**/protocols/duration_pilot.json")
    assert json.loads((folder / "duration_pilot.json").read_text()) == \
        json.loads((folder / "afterimage_duration.json").read_text())
    # A name in use is refused with the field named, and nothing is overwritten.
    page.goto(server.url + "/protocols")
    page.locator("#new-protocol summary").click()
    page.get_by_role("textbox", name="File name", exact=True).fill("duration_pilot")
    page.get_by_role("button", name="Create and edit").click()
    assert "already exists" in page.locator("#files-error").inner_text()


def test_a_save_refused_by_a_change_on_disk_keeps_the_edits(server, page):
    page.goto(server.url + "/protocols/contrast_match.json")
    wait_for_audit(page)
    page.locator('input[name="conditions.repeats"]').fill("7")
    page.locator("#save-status", has_text="Unsaved").wait_for()
    # Someone else saves another change meanwhile.
    path = server.data / "protocols" / "contrast_match.json"
    other = json.loads(path.read_text())
    other["about"]["version"] = "2.0"
    path.write_text(json.dumps(other, indent=2))
    page.get_by_role("button", name="Save", exact=True).click()
    page.locator("#conflict").wait_for()
    assert page.locator("#download-mine").get_attribute("href").startswith("blob:")
    with page.expect_download() as download:
        page.locator("#download-mine").click()
    assert json.loads(Path(download.value.path()).read_text())["conditions"]["repeats"] == 7
    # A reload keeps them: the page offers them back.
    page.reload()
    page.locator("#draft-note").wait_for()
    page.get_by_role("button", name="Restore my edits").click()
    page.wait_for_function("document.querySelector('input[name=\"conditions.repeats\"]').value === '7'")
    page.get_by_role("button", name="Save", exact=True).click()
    page.locator("#conflict").wait_for()
    page.get_by_role("button", name="Merge my changes into the saved file").click()
    page.locator("#merge-table").wait_for()
    shot(page, "editor_conflict_merged")
    page.get_by_role("button", name="Save", exact=True).click()
    page.locator("#save-status", has_text="Saved").wait_for()
    merged = json.loads(path.read_text())
    assert merged["conditions"]["repeats"] == 7 and merged["about"]["version"] == "2.0"


def test_validation_errors_use_the_field_label(server, page):
    page.goto(server.url + "/protocols/afterimage_null.json")
    wait_for_audit(page)
    page.locator('input[name="trial[1].duration_s"]').fill("-1")
    page.locator(".field.invalid").wait_for()
    assert page.locator("#audit-verdict").inner_text() == "Duration (s) of phase 2 (gap) must be 0 or more (it is −1)"
    assert page.get_by_label("Duration (s)").count() >= 2  # labels, not raw keys
    assert page.locator("label", has_text="duration_s").count() == 0


RESPONSE_KEYS = {"afterimage_nulling": "Enter", "simultaneous_contrast_matching": "Enter", "afterimage_duration": " ",
                 "detection_staircase": "ArrowLeft", "flicker_photometry": "Enter"}


@pytest.mark.parametrize("key", [p["key"] for p in paradigms()])
def test_a_protocol_from_each_template_runs_a_trial(server, page, key):
    """Made from the template, durations shortened through the form's fields, then one trial in the runner."""
    new_from_template(page, server.url, key, f"run_{key}")
    for field in page.locator('input[name$="duration_s"], input[name$="top_up_s"]').all():
        field.fill("0.2")
    wait_for_audit(page)
    page.get_by_role("button", name="Save", exact=True).click()
    page.locator("#save-status", has_text="Saved").wait_for()
    csrf = page.locator('meta[name="csrf-token"]').get_attribute("content")
    created = page.request.post(f"{server.url}/api/sessions", headers={"X-CSRF-Token": csrf},
                                # a dry run: the templates' minute of pre-adaptation takes a second here
                                data={"protocol": f"run_{key}.json", "display": 1, "participant": "P11",
                                      "dry_run_factor": 0.02})
    assert created.status == 201, created.text()
    session_id = created.json()["id"]
    page.goto(f"{server.url}/run/{session_id}")
    page.wait_for_function("window.stimlabState === 'ready'", timeout=20000)
    page.keyboard.press(" ")
    page.wait_for_function("window.stimlabSchedule?.phase?.phase === 'respond' && "
                           "window.stimlabSchedule.responder?.onset !== undefined", timeout=20000)
    trial = page.evaluate("window.stimlabSchedule.trial.index")
    page.keyboard.press(RESPONSE_KEYS[key])
    page.wait_for_function(f"window.stimlabSchedule.trial?.index !== {trial} || window.stimlabState === 'finished'",
                           timeout=20000)
    import sqlite3

    db = sqlite3.connect(server.data / "stimlab.sqlite")
    ended = 0
    for _ in range(100):  # the runner sends its log in batches
        ended = db.execute("SELECT COUNT(*) FROM events WHERE session_id = ? AND kind = 'trial_end'",
                           (session_id,)).fetchone()[0]
        if ended:
            break
        page.wait_for_timeout(200)
    assert ended >= 1


def test_json_that_is_not_a_protocol_is_refused_and_the_form_keeps_its_edits(server, page):
    page.goto(server.url + "/protocols/contrast_match.json")
    wait_for_audit(page)
    page.locator('input[name="conditions.repeats"]').fill("7")
    page.locator("#save-status", has_text="Unsaved").wait_for()
    page.locator("summary", has_text="Edit as JSON").click()
    for text in ["{}", "[1,2,3]", "null", '{"stimlab_protocol": 1}']:
        page.locator("#protocol-json").fill(text)
        page.get_by_role("button", name="Apply JSON").click()
        page.locator("#audit-verdict", has_text="must be a JSON object with about, background, stimuli").wait_for()
        assert page.evaluate("1 + 1") == 2  # the tab still answers
        assert page.locator('input[name="conditions.repeats"]').input_value() == "7"
        assert "must be a JSON object" in page.locator("#json-message").inner_text()  # beside the box too
    # A protocol lacking only its format number is drawn, the error at the top level, and the tab answers.
    protocol = json.loads((server.data / "protocols" / "contrast_match.json").read_text())
    del protocol["stimlab_protocol"]
    page.locator("#protocol-json").fill(json.dumps(protocol))
    page.get_by_role("button", name="Apply JSON").click()
    page.locator("#audit-verdict", has_text="needs stimlab protocol").wait_for()
    assert page.evaluate("1 + 1") == 2
    page.reload()
    page.locator("#draft-note").wait_for()  # the edits are still kept in this browser


def test_level_rows_keep_their_tools_on_one_line_and_save_stays_in_view(server, page):
    page.set_viewport_size({"width": 1280, "height": 800})
    page.goto(server.url + "/protocols/contrast_match.json")
    wait_for_audit(page)
    variable = page.locator("fieldset.variable").first
    variable.scroll_into_view_if_needed()
    own = variable.locator(":scope > .item-tools").bounding_box()
    rows = variable.locator(":scope > .field").all()
    assert len(rows) == 4
    for row in rows:
        inputs = [box.bounding_box() for box in row.locator("input").all()]
        tools = row.locator(".item-tools").bounding_box()
        bottom = tools["y"] + tools["height"]
        assert all(abs(box["y"] + box["height"] - bottom) < 6 for box in inputs)  # one line, not wrapped under
        assert tools["x"] >= max(box["x"] + box["width"] for box in inputs)
        assert tools["y"] >= own["y"] + own["height"]  # clear of the variable's own ↑↓✕
    shot(page, "editor_variable_levels")
    # Halfway down a long form, Save is still in the window.
    page.mouse.wheel(0, 1500)
    page.wait_for_timeout(100)
    box = page.get_by_role("button", name="Save", exact=True).bounding_box()
    assert 0 <= box["y"] and box["y"] + box["height"] <= 800


def test_number_fields_say_enter_a_number_and_the_observer_offers_its_values(server, page):
    page.goto(server.url + "/protocols/contrast_match.json")
    wait_for_audit(page)
    distance = page.locator('input[name="about.viewing_distance_cm"]')
    distance.fill("")
    page.locator("#audit-verdict", has_text="Viewing distance (cm) is empty: enter a number").wait_for()
    distance.fill("1e400")
    page.locator("#audit-verdict", has_text="1e400 is too large (at most").wait_for()
    assert "null" not in page.locator("#audit-verdict").inner_text()
    page.get_by_role("button", name="Save", exact=True).click()
    page.locator("#save-status", has_text="Not saved").wait_for()
    distance.fill("−57")  # a real minus sign reads as one
    page.locator("#audit-verdict", has_text="must be more than 0").wait_for()
    distance.fill("57")
    wait_for_audit(page)
    observer = page.locator('input[name="about.observer"]')
    choices = observer.evaluate("input => [...input.list.options].map(o => [o.value, o.textContent])")
    assert ["ss2", "CIE 2006 2° (ss2)"] in choices and ["ss10", "CIE 2006 10° (ss10)"] in choices
    assert any(value == "sp" for value, _ in choices)
    assert "CIE 2006 2° (ss2)" in page.locator("#observer-hint").inner_text()


def test_the_protocols_list_keeps_its_cells_in_line(server, page):
    page.set_viewport_size({"width": 1280, "height": 800})
    page.goto(server.url + "/protocols")
    for row in page.locator("table.list tbody tr").all():
        cells = [cell.bounding_box() for cell in row.locator("td").all()]
        assert len({round(c["y"]) for c in cells}) == 1 and len({round(c["height"]) for c in cells}) == 1
        summary = row.locator("summary", has_text="Duplicate").bounding_box()
        assert summary["height"] < 30  # the triangle and its word on one line
    shot(page, "protocols_list")
