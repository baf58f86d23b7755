"""One error shape on every route: JSON under /api/, an HTML page elsewhere, never a traceback."""

import re

SHAPE = {"status", "title", "message", "field", "file", "row"}


def assert_shape(response, status):
    assert response.status_code == status
    body = response.get_json()
    assert set(body) == {"error"} and set(body["error"]) == SHAPE
    assert body["error"]["status"] == status and body["error"]["message"]
    assert "Traceback" not in response.text


def api_routes(app):
    return sorted({(rule.rule, method) for rule in app.url_map.iter_rules() if rule.rule.startswith("/api/")
                   for method in rule.methods - {"HEAD", "OPTIONS"}})


def test_every_api_route_answers_errors_in_one_shape(app, client):
    routes = api_routes(app)
    assert len(routes) >= 10
    for rule, method in routes:
        url = re.sub(r"<int:\w+>", "999", rule).replace("<name>", "missing.json").replace("<participant>", "X99")
        headers = {"X-CSRF-Token": client.csrf}
        if method == "GET":
            response = client.get(url)
            if response.status_code == 200:
                continue  # a listing: no bad input to give it
            assert_shape(response, 404)
        else:
            # Bad JSON with a valid token, then the same request without a token.
            response = client.open(url, method=method, data="{not json", headers=headers,
                                   content_type="application/json")
            assert response.status_code in (400, 404), (rule, method, response.status_code)
            assert_shape(response, response.status_code)
            assert_shape(client.open(url, method=method, json={}), 403)


def test_unknown_api_address_and_method(client):
    assert_shape(client.get("/api/nothing-here"), 404)
    assert_shape(client.delete("/api/protocols", headers={"X-CSRF-Token": client.csrf}), 405)


def test_html_pages_get_an_html_error_page(client):
    response = client.get("/displays/999")
    assert response.status_code == 404 and response.mimetype == "text/html"
    assert "There is no display 999" in response.text or "there is no display 999" in response.text


def test_an_internal_error_is_plain_words(app, client, monkeypatch):
    import stimlab.web.displays as displays

    monkeypatch.setattr(displays, "display_summary", lambda profile: 1 / 0)
    response = client.get("/api/displays/1")
    assert_shape(response, 500)
    assert "nothing you had saved was changed" in response.get_json()["error"]["message"]


def test_upload_limit(client):
    response = client.post("/api/displays", data=b"x" * (6 * 1024 * 1024), headers={"X-CSRF-Token": client.csrf},
                           content_type="application/octet-stream")
    assert_shape(response, 413)
