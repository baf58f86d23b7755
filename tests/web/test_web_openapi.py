"""Every /api/ route fuzzed from the app's own OpenAPI document with schemathesis: no 500 anywhere, and every 4xx
in the one error shape. Examples per route: ``STIMLAB_FUZZ_EXAMPLES`` (default 10; see DEVELOPERS.md)."""

import os
import re

import pytest
import schemathesis
from hypothesis import HealthCheck, given, settings

from stimlab.web.openapi import openapi_document

EXAMPLES = max(3, int(os.environ.get("STIMLAB_FUZZ_EXAMPLES", "200")) // 20)
ERROR_KEYS = {"status", "title", "message", "field", "file", "row"}


@pytest.fixture(scope="module")
def fuzzed_app(tmp_path_factory):
    """The app with the demo data, one session and one calibration run, and a CSRF token for the fuzzer."""
    from stimlab.profiles.demo import install_demo
    from stimlab.web import create_app

    app = create_app(tmp_path_factory.mktemp("data"), testing=True)
    install_demo(app.extensions["stimlab.store"])
    client = app.test_client()
    csrf = re.search(r'name="csrf-token" content="([^"]+)"', client.get("/protocols").text).group(1)
    assert client.post("/api/sessions", headers={"X-CSRF-Token": csrf},
                       json={"protocol": "afterimage_null.json", "display": 1, "participant": "F01"}).status_code == 201
    app.fuzz_headers = {"X-CSRF-Token": csrf, "Cookie": f"session={client.get_cookie('session').value}"}
    return app


@pytest.fixture(scope="module")
def api_schema(fuzzed_app):
    return schemathesis.openapi.from_wsgi("/api/openapi.json", fuzzed_app)


OPERATIONS = [(method.upper(), path) for path, operations in openapi_document()["paths"].items()
              for method in operations]


def test_the_document_describes_every_api_route(fuzzed_app):
    described = {(method.upper(), path) for path, operations in openapi_document()["paths"].items()
                 for method in operations}
    routes = {(method, re.sub(r"<(?:int:)?(\w+)>", r"{\1}", str(rule))) for rule in fuzzed_app.url_map.iter_rules()
              if str(rule).startswith("/api/") for method in rule.methods - {"HEAD", "OPTIONS"}}
    assert routes == described


@pytest.mark.parametrize("method,path", OPERATIONS, ids=[f"{m} {p}" for m, p in OPERATIONS])
def test_no_route_answers_500_and_every_error_has_the_one_shape(api_schema, fuzzed_app, method, path):
    # Positive and negative data both: schemathesis also sends bodies and paths that break the document.
    operation = api_schema[path][method]
    strategy = operation.as_strategy() | operation.as_strategy(schemathesis.GenerationMode.NEGATIVE)

    @settings(max_examples=EXAMPLES, deadline=None, derandomize=not os.environ.get("STIMLAB_FUZZ_EXAMPLES"),
              suppress_health_check=list(HealthCheck), database=None)
    @given(case=strategy)
    def check(case):
        response = case.call(headers=fuzzed_app.fuzz_headers)
        assert response.status_code < 500, (case.method, case.formatted_path, case.body, response.text[:500])
        if response.status_code >= 400:
            body = response.json()
            assert set(body) == {"error"} and set(body["error"]) == ERROR_KEYS, response.text[:500]
            assert body["error"]["status"] == response.status_code

    check()
