"""Display pages and API through the Flask test client."""

import io
import json

from stimlab.profiles.demo import demo_file


def form(**extra):
    data = {"name": "Room C LCD", "bits": "10", "refresh": "60", "size_cm": "53.1,29.9", "size_px": "1920,1080",
            "measured_by": "J. Park", "model": "gog",
            "spectra": (io.BytesIO(demo_file("vale_street_b12_spectra.csv").encode()), "spectra.csv"),
            "transfer": (io.BytesIO(demo_file("vale_street_b12_transfer.csv").encode()), "transfer.csv")}
    data.update(extra)
    return data


def test_list_and_page(client):
    listing = client.get("/displays")
    assert listing.status_code == 200 and "Vale Street B12 LCD" in listing.text
    page = client.get("/displays/1")
    assert page.status_code == 200
    for text in ("Transfer curves", "isoluminant plane", "MacLeod–Boynton", "122.86 cd/m²", "One digital level"):
        assert text in page.text
    for figure in ("transfer", "gamut", "macleod_boynton"):
        assert f"/displays/1/figures/{figure}.svg?v=" in page.text and f"/displays/1/figures/{figure}.pdf" in page.text


def test_display_figures_are_served_as_svg_and_pdf(client):
    svg = client.get("/displays/1/figures/transfer.svg")
    assert svg.status_code == 200 and svg.mimetype == "image/svg+xml"
    assert "green: gog fit" in svg.text and "digital level (0–1023)" in svg.text
    assert "spectrum locus (nm)" in client.get("/displays/1/figures/macleod_boynton.svg").text
    pdf = client.get("/displays/1/figures/gamut.pdf?download=1")
    assert pdf.data.startswith(b"%PDF") and pdf.headers["Content-Disposition"].startswith("attachment")
    assert "Vale_Street_B12_LCD_v1_gamut.pdf" in pdf.headers["Content-Disposition"]
    missing = client.get("/displays/1/figures/nothing.svg")
    assert missing.status_code == 404 and "transfer, gamut, macleod_boynton" in missing.text
    assert client.get("/displays/1/figures/transfer.png").status_code == 404
    assert client.get("/displays/99/figures/transfer.svg").status_code == 404


def test_add_a_display_through_the_form(client):
    response = client.post("/displays", data={**form(), "csrf_token": client.csrf}, content_type="multipart/form-data")
    assert response.status_code == 303
    page = client.get(response.headers["Location"])
    assert "Room C LCD" in page.text and "J. Park" in page.text


def test_bad_upload_re_shows_the_form_with_the_row_named(client):
    bad = demo_file("vale_street_b12_transfer.csv").replace("red,259,", "red,259,lots", 1)
    response = client.post("/displays", data={**form(transfer=(io.BytesIO(bad.encode()), "transfer.csv")),
                                              "csrf_token": client.csrf}, content_type="multipart/form-data")
    assert response.status_code == 400
    assert "transfer.csv row 10, column &#39;luminance_cd_m2&#39;" in response.text
    assert 'value="Room C LCD"' in response.text  # what was typed is kept
    assert len(client.get("/api/displays").get_json()["displays"]) == 1  # nothing half-saved


def test_api(client, demo):
    displays = client.get("/api/displays").get_json()["displays"]
    assert displays[0]["summary"]["bits"] == 10
    profile = dict(demo, name="Copy")
    from stimlab.profiles.profile import profile_hash

    profile["sha256"] = profile_hash(profile)
    created = client.post("/api/displays", json={"profile": profile}, headers={"X-CSRF-Token": client.csrf})
    assert created.status_code == 201 and created.get_json()["name"] == "Copy"
    tampered = dict(profile, refresh_hz=75)
    refused = client.post("/api/displays", json={"profile": tampered}, headers={"X-CSRF-Token": client.csrf})
    assert refused.status_code == 400 and refused.get_json()["error"]["field"] == "sha256"


def test_a_new_calibration_of_the_same_display_is_a_new_version(client, demo):
    from stimlab.profiles.demo import demo_profile

    again = demo_profile(measured_on="2026-11-30")
    response = client.post("/api/displays", json={"profile": again}, headers={"X-CSRF-Token": client.csrf})
    assert response.get_json()["version"] == 2
    assert json.loads(json.dumps(client.get("/api/displays/1").get_json()))["version"] == 1


def test_display_page_reports_rod_contrast(client):
    # Rod contrast of each unit DKL stimulus from mid-grey (CIE 1951 scotopic V′, colour-science's dataset).
    page = client.get("/displays/1")
    assert "Rods at mid-grey" in page.text and "DKL S unit" in page.text and "scotopic cd/m²" in page.text
    summary = client.get("/api/displays/1").get_json()["summary"]["rods"]
    assert summary["available"] is True and set(summary["dkl_unit"]) == {"lum", "L-M", "S"}
    # The luminance unit stimulus raises every cone by 1/√3 (Brainard 1996's normalisation) by scaling the light
    # above black, so the rods rise by about as much (hand reasoning; 0.5 leaves room for the black's share).
    assert summary["dkl_unit"]["lum"] > 0.5


def _refused(client, **fields):
    data = {**form(), "csrf_token": client.csrf, **fields}
    response = client.post("/api/displays", data=data, content_type="multipart/form-data",
                           headers={"X-CSRF-Token": client.csrf})
    assert response.status_code == 400, fields
    return response.get_json()["error"]


def test_form_errors_name_the_field_by_its_label(client):
    for fields, field, label in [({"bits": "20"}, "bits", "Bits per channel must be a whole number from 1 to 16"),
                                 ({"bits": "8.5"}, "bits", "Bits per channel must be a whole number"),
                                 ({"refresh": "5"}, "refresh", "Refresh rate (Hz) must be a number from 20 to 1000"),
                                 ({"size_cm": "53.1"}, "size_cm", "Visible size (cm) needs two numbers"),
                                 ({"size_px": "1920,1080,3"}, "size_px", "Resolution (pixels) needs two whole")]:
        error = _refused(client, **fields)
        assert error["field"] == field and error["message"].startswith(label), error
        assert f"at {field}" not in error["message"]
    page = client.post("/displays", data={**form(refresh="5"), "csrf_token": client.csrf},
                       content_type="multipart/form-data")
    assert page.status_code == 400 and "Refresh rate (Hz) must be" in page.text and "at refresh" not in page.text


def test_every_xyy_field_needs_three_numbers(client):
    # The sRGB primaries (IEC 61966-2-1) with luminances summing to a white of 100 cd/m² (rounded).
    primaries = {"xyY_red": "0.64,0.33,21.3", "xyY_green": "0.30,0.60,71.5", "xyY_blue": "0.15,0.06,7.2"}
    for field, text in [("xyY_red", "0.64,0.33"), ("xyY_green", "0.3;0.6;71.5"), ("xyY_blue", "0.15,0.06,7.2,1")]:
        error = _refused(client, spectra=(io.BytesIO(b""), ""), **{**primaries, field: text})
        label = {"xyY_red": "Red", "xyY_green": "Green", "xyY_blue": "Blue"}[field]
        assert error["field"] == field and error["message"].startswith(f"{label} x,y,Y needs three numbers x,y,Y")
    bad = _refused(client, spectra=(io.BytesIO(b""), ""), **{**primaries, "xyY_red": "0.64,0.33,-1"})
    assert bad["field"] == "xyY_red" and bad["message"].startswith("Red x,y,Y: ")
    added = client.post("/api/displays", data={**form(spectra=(io.BytesIO(b""), "")), **primaries},
                        content_type="multipart/form-data", headers={"X-CSRF-Token": client.csrf})
    assert added.status_code == 201, added.get_json()


def test_a_file_error_names_the_file_not_the_form_field(client):
    short = "channel,level,luminance_cd_m2\nred,0,0.1\nred,1023,20\n"
    error = _refused(client, transfer=(io.BytesIO(short.encode()), "two_levels.csv"))
    assert error["message"].startswith("two_levels.csv") and "at transfer" not in error["message"], error
