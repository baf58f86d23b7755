"""Protocol pages, the live audit API and saving back to the file."""

import json


def headers(client):
    return {"X-CSRF-Token": client.csrf}


def test_list_shows_audit_status(client):
    page = client.get("/protocols")
    assert page.status_code == 200 and page.text.count("passes") == 5
    listing = client.get("/api/protocols").get_json()
    assert {p["name"] for p in listing["protocols"]} == {"afterimage_null.json", "contrast_match.json",
                                                         "afterimage_duration.json", "detection_staircase.json",
                                                         "flicker_photometry.json"}
    assert all(p["passed"] for p in listing["protocols"])


def test_editor_page_names_every_input_by_json_path(client):
    page = client.get("/protocols/afterimage_null.json")
    assert page.status_code == 200
    assert 'name="conditions.variables.axis.L-M[1]"' in page.text
    assert '<select id="i-stimuli[0].shape" name="stimuli[0].shape"' in page.text


def test_live_audit_flags_out_of_gamut_and_names_bad_fields(client):
    protocol = client.get("/api/protocols/afterimage_null.json").get_json()["protocol"]
    ok = client.post("/api/audit", json={"protocol": protocol}, headers=headers(client)).get_json()
    assert ok["passed"] and "Passes" in ok["html"]
    protocol["conditions"]["variables"]["axis"]["L-M"][1] = 0.3
    bad = client.post("/api/audit", json={"protocol": protocol}, headers=headers(client)).get_json()
    assert not bad["passed"] and "out of gamut" in bad["html"]
    protocol["conditions"]["variables"]["axis"]["L-M"][1] = "lots"
    error = client.post("/api/audit", json={"protocol": protocol}, headers=headers(client))
    assert error.status_code == 400
    assert error.get_json()["error"]["field"] == "conditions.variables.axis.L-M[1]"


def test_save_refuses_a_file_changed_on_disk(app, client):
    shown = client.get("/api/protocols/afterimage_duration.json").get_json()
    protocol = shown["protocol"]
    protocol["about"]["version"] = "1.1"
    saved = client.put("/api/protocols/afterimage_duration.json", headers=headers(client),
                       json={"protocol": protocol, "base_sha256": shown["sha256"]})
    assert saved.status_code == 200
    path = app.extensions["stimlab.store"].protocols / "afterimage_duration.json"
    assert json.loads(path.read_text())["about"]["version"] == "1.1"
    # Another editor still holds the old hash: refused, and the file keeps the first save.
    stale = client.put("/api/protocols/afterimage_duration.json", headers=headers(client),
                       json={"protocol": shown["protocol"] | {"about": protocol["about"] | {"version": "9"}},
                             "base_sha256": shown["sha256"]})
    assert stale.status_code == 409 and "changed on disk" in stale.get_json()["error"]["message"]
    assert json.loads(path.read_text())["about"]["version"] == "1.1"


def test_invalid_protocol_is_not_saved(app, client):
    shown = client.get("/api/protocols/contrast_match.json").get_json()
    protocol = shown["protocol"]
    protocol["stimuli"][0]["shape"] = "hexagon"
    response = client.put("/api/protocols/contrast_match.json", headers=headers(client),
                          json={"protocol": protocol, "base_sha256": shown["sha256"]})
    assert response.status_code == 400 and response.get_json()["error"]["field"] == "stimuli[0].shape"
    path = app.extensions["stimlab.store"].protocols / "contrast_match.json"
    assert json.loads(path.read_text())["stimuli"][0]["shape"] == "centre_surround"


def test_file_names_cannot_leave_the_folder(client):
    response = client.put("/api/protocols/..%2Fescape.json", headers=headers(client),
                          json={"protocol": {}, "base_sha256": None})
    assert response.status_code in (400, 404)
    assert client.get("/protocols/..%2F..%2Fetc%2Fpasswd").status_code in (400, 404)


def test_form_fragment_after_structural_edits(client):
    protocol = client.get("/api/protocols/contrast_match.json").get_json()["protocol"]
    protocol["stimuli"].append({"name": "extra", "shape": "disc", "size_deg": 1, "colour": {"dkl": [0, 0, 0.1]}})
    html = client.post("/api/protocol-form", json={"protocol": protocol}, headers=headers(client)).get_json()["html"]
    assert 'name="stimuli[2].size_deg"' in html
