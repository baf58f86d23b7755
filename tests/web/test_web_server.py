"""The production server: waitress with a fixed thread pool, one SQLite connection per worker thread, and an
access token whenever stimlab listens beyond loopback."""

import re
import threading
import urllib.request

import pytest

from stimlab.web import create_app
from stimlab.web.server import THREADS, make_server


def test_bound_beyond_loopback_every_request_needs_the_token(tmp_path):
    app = create_app(tmp_path / "data", allowed_hosts={"192.0.2.10"}, access_token="s3cret-token-value")
    client = app.test_client()
    refused = client.get("/api/displays", headers={"Host": "localhost"})
    assert refused.status_code == 401 and refused.get_json()["error"]["field"] == "token"
    assert client.get("/access?token=wrong").status_code == 401
    entered = client.get("/access?token=s3cret-token-value")
    assert entered.status_code == 303 and "HttpOnly" in entered.headers["Set-Cookie"]
    assert client.get("/api/displays").status_code == 200  # the cookie carries it from now on
    script = app.test_client()
    assert script.get("/api/displays", headers={"X-Access-Token": "s3cret-token-value"}).status_code == 200


def test_serve_prints_the_access_address_when_bound_beyond_loopback(tmp_path, monkeypatch, capsys):
    import stimlab.web.server as server
    from stimlab.cli import main

    monkeypatch.setattr(server, "serve", lambda app, host, port: None)
    assert main(["serve", "--host", "0.0.0.0", "--port", "8151", "--data", str(tmp_path / "d")]) == 0
    printed = capsys.readouterr().err
    assert re.search(r"http://0\.0\.0\.0:8151/access\?token=[A-Za-z0-9_-]{20,}", printed)



@pytest.fixture
def running(tmp_path):
    app = create_app(tmp_path / "data")
    server = make_server(app, "127.0.0.1", 0)
    def run():
        try:
            server.run()
        except OSError:  # the listening socket closed under the loop at the end of the test
            pass

    thread = threading.Thread(target=run, daemon=True)
    thread.start()
    yield app, f"http://127.0.0.1:{server.effective_port}"
    server.close()


def test_worker_threads_reuse_one_connection_each(running, monkeypatch):
    app, url = running
    store = app.extensions["stimlab.store"]
    opened = []
    connect = store.connect
    monkeypatch.setattr(store, "connect", lambda: opened.append(1) or connect())
    for _ in range(60):
        with urllib.request.urlopen(url + "/api/sessions") as response:
            assert response.status == 200
    assert 1 <= len(opened) <= THREADS
