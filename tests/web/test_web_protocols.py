"""Protocol pages, the live audit API and saving back to the file."""

import json
import re


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


def test_live_audit_plots_the_plane_by_content_and_bounds_a_far_stimulus(client):
    protocol = client.get("/api/protocols/afterimage_null.json").get_json()["protocol"]
    html = client.post("/api/audit", json={"protocol": protocol}, headers=headers(client)).get_json()["html"]
    url = re.search(r'src="(/protocols/figures/plane-[0-9a-f]{64}\.svg)', html).group(1)
    svg = client.get(url)
    assert svg.status_code == 200 and svg.mimetype == "image/svg+xml"
    assert "adapter (axis=L−M, polarity=plus)" in svg.text and "DKL S (pooled cone contrast)" in svg.text
    assert client.get(url.replace(".svg", ".pdf")).data.startswith(b"%PDF")
    protocol["conditions"]["variables"]["axis"]["L-M"][1] = 0.8  # far outside the gamut (±0.16 along L−M)
    html = client.post("/api/audit", json={"protocol": protocol}, headers=headers(client)).get_json()["html"]
    far = re.search(r'src="(/protocols/figures/plane-[0-9a-f]{64}\.svg)', html).group(1)
    assert far != url  # new numbers, a new plot
    text = " ".join(client.get(far).text.split())
    assert "outside the view, at L−M 0.8" in text and ">0.8<" not in text and ">0.6<" not in text  # not ±0.8
    assert client.get("/protocols/figures/plane-" + "0" * 64 + ".svg").status_code == 404
    assert client.get("/protocols/figures/plane-nothex.svg").status_code == 404


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


def test_new_from_a_template_then_trash_and_restore_through_the_api(app, client):
    listed = client.get("/api/paradigms").get_json()["paradigms"]
    assert len(listed) == 5
    created = client.post("/api/protocols", headers=headers(client),
                          json={"paradigm": "simultaneous_contrast_matching", "name": "match_pilot", "title": "Pilot"})
    assert created.status_code == 201 and created.get_json()["name"] == "match_pilot.json"
    shown = client.get("/api/protocols/match_pilot.json").get_json()
    assert shown["protocol"]["about"]["title"] == "Pilot"
    again = client.post("/api/protocols", headers=headers(client), json={"paradigm": "afterimage_nulling",
                                                                         "name": "match_pilot"})
    assert again.status_code == 409 and again.get_json()["error"]["field"] == "new_name"
    entry = client.delete("/api/protocols/match_pilot.json", headers=headers(client)).get_json()["trash_entry"]
    assert client.get("/api/protocols/match_pilot.json").status_code == 404
    assert [t["name"] for t in client.get("/api/protocol-trash").get_json()["trash"]] == ["match_pilot.json"]
    restored = client.post(f"/api/protocol-trash/{entry}/restore", headers=headers(client), json={})
    assert restored.get_json()["name"] == "match_pilot.json"


def test_the_form_is_drawn_after_an_edit_even_when_it_leaves_the_protocol_invalid(client):
    protocol = client.get("/api/protocols/afterimage_null.json").get_json()["protocol"]
    body = client.post("/api/protocol-form", headers=headers(client),
                       json={"protocol": protocol, "edit": {"op": "remove", "path": "stimuli[1]"}}).get_json()
    assert len(body["protocol"]["stimuli"]) == 1 and 'name="stimuli[0].size_deg"' in body["html"]
    assert body["error"]["field"] == "trial[2].stimuli[0]" and "no stimulus called 'test_disc'" in body["error"]["message"]
    assert "Size (deg)" in body["html"] and ">size_deg<" not in body["html"]
    shapeless = client.post("/api/protocol-form", headers=headers(client), json={"protocol": [1, 2]})
    assert shapeless.status_code == 400


def test_a_validation_error_reads_as_a_sentence(client):
    protocol = client.get("/api/protocols/afterimage_null.json").get_json()["protocol"]
    protocol["trial"][1]["duration_s"] = -1
    error = client.post("/api/audit", json={"protocol": protocol}, headers=headers(client)).get_json()["error"]
    assert error["message"] == "Duration (s) of phase 2 (gap) must be 0 or more (it is −1)"
    assert error["field"] == "trial[1].duration_s"


def test_json_that_is_not_a_protocol_is_refused_whole_and_names_what_a_protocol_needs(client):
    for sent in ({}, [1, 2, 3], None, {"stimlab_protocol": 1}, "text"):
        response = client.post("/api/protocol-form", headers=headers(client), json={"protocol": sent})
        assert response.status_code == 400, sent
        error = response.get_json()["error"]
        assert error["field"] == "protocol"
        assert error["message"].startswith("The protocol must be a JSON object with about, background, stimuli, "
                                           "trial and conditions")
    lacking = client.post("/api/protocol-form", headers=headers(client), json={"protocol": {"stimlab_protocol": 1}})
    assert "lacks about, background, stimuli, trial, conditions" in lacking.get_json()["error"]["message"]


def test_the_list_counts_in_agreement_and_says_plainly_which_characters_a_name_takes(client):
    page = client.get("/protocols").text
    assert "1 warning<" in page and "1 warnings" not in page and "0 warnings" in page  # flicker_photometry has one
    assert "Use letters, digits, _, . and - only" in page
    assert '<td class="file-actions">' not in page  # a flex box inside the cell, so the cell keeps its borders


def test_pages_show_a_real_minus_and_the_axis_as_l_minus_m_while_inputs_keep_what_is_typed(client):
    from stimlab.web.protocols import shown

    assert shown("at -0.5, S -1 (x=-3)") == "at −0.5, S −1 (x=−3)"
    assert shown("surround=+L-M") == "surround=+L−M"
    # a hyphen inside words, dates, file names and exponents stays (common practice in typesetting)
    for text in ("2-down 1-up", "2026-12-02", "afterimage-null.json", "1e-05", "L-M-ish"):
        assert shown(text) == text
    listing = client.get("/protocols").text
    assert "After-image nulling along the L−M and S axes" in listing
    page = client.get("/protocols/afterimage_null.json").text
    assert "<h1>After-image nulling along the L−M and S axes</h1>" in page
    assert 'name="conditions.variables.axis.L-M[1]"' in page  # the key as typed
