"""A local app's guards: loopback Host names only, a CSRF token on every change, escaped output."""

from stimlab.web import create_app


def test_foreign_host_is_refused(client):
    response = client.get("/api/displays", headers={"Host": "attacker.example:8150"})
    assert response.status_code == 403 and "DNS rebinding" in response.get_json()["error"]["message"]
    assert client.get("/api/displays", headers={"Host": "localhost:8150"}).status_code == 200
    assert client.get("/api/displays", headers={"Host": "[::1]:8150"}).status_code == 200


def test_the_host_given_to_serve_is_allowed(tmp_path):
    app = create_app(tmp_path, allowed_hosts={"10.0.0.5"}, testing=True)
    assert app.test_client().get("/api/displays", headers={"Host": "10.0.0.5:8150"}).status_code == 200


def test_state_changes_need_the_token(client):
    assert client.post("/api/audit", json={}).status_code == 403
    assert client.post("/api/audit", json={}, headers={"X-CSRF-Token": "forged"}).status_code == 403
    assert client.post("/displays", data={"name": "x"}).status_code == 403
    assert client.post("/api/audit", json={}, headers={"X-CSRF-Token": client.csrf}).status_code == 400


def test_templates_escape(client, app):
    store = app.extensions["stimlab.store"]
    (store.protocols / "xss.json").write_text('{"not": "<script>alert(1)</script>"}')
    page = client.get("/protocols")
    assert "<script>alert(1)</script>" not in page.text
    assert page.headers["Content-Security-Policy"].startswith("default-src 'self'")
