"""Bad input through the API is refused with a 4xx in the one error shape, naming the field, and nothing stored is
lost or corrupted: malformed events, non-finite numbers, clashing batches, crafted display profiles,
acknowledgements of the wrong type, numbers too large for SQLite, runaway nesting, lone surrogates."""

import json
import re
import sqlite3

import pytest

from stimlab.profiles.profile import profile_hash
from stimlab.sessions.export import trial_rows
from stimlab.sessions.ingest import get_session


def frames(first=0, count=3):
    numbers = list(range(first, first + count))
    return {"frame": numbers, "t_raf": [16.665 * n for n in numbers], "t_callback": [16.665 * n + 0.04 for n in numbers],
            "trial": [0] * count, "phase": ["adapt"] * count, "dropped": [0] * count, "drawn": ["512,498,530"] * count}


def start(client, protocol="afterimage_duration.json", **extra):
    return client.post("/api/sessions", headers={"X-CSRF-Token": client.csrf},
                       json={"protocol": protocol, "display": 1, "participant": "T01", **extra})


@pytest.fixture
def session(client):
    session_id = start(client).get_json()["id"]
    token = re.search(r'data-run-token="([^"]+)"', client.get(f"/run/{session_id}").text).group(1)
    return session_id, token


def post(app, session_id, body, token, runner=None, raw=None):
    headers = {"X-Run-Token": token, "Content-Type": "application/json"}
    if runner:
        headers["X-Runner-Id"] = runner
    return app.test_client(use_cookies=False).post(f"/api/sessions/{session_id}/batches",
                                                   data=raw if raw is not None else json.dumps(body), headers=headers)


def refused(response, status, field=None):
    assert response.status_code == status, response.text
    error = response.get_json()["error"]
    assert set(error) == {"status", "title", "message", "field", "file", "row"} and error["status"] == status
    if field is not None:
        assert error["field"] == field, error
    return error


def counts(app, session_id):
    db = app.extensions["stimlab.store"].connect()
    return tuple(db.execute(f"SELECT COUNT(*) FROM {table} WHERE session_id = ?", (session_id,)).fetchone()[0]
                 for table in ("batches", "events", "frames"))


# -- D1: an event whose data is not an object -------------------------------------------------------------------
def test_an_event_with_list_data_is_refused_and_exports_keep_working(app, session):
    session_id, token = session
    bad = {"batch": 0, "events": [{"seq": 0, "t": 1.0, "kind": "tick", "data": [1, 2]}]}
    refused(post(app, session_id, bad, token), 400, "events[0].data")
    assert counts(app, session_id) == (0, 0, 0)
    good = {"batch": 0, "events": [{"seq": 0, "t": 1.0, "kind": "trial_end", "trial": 0,
                                    "data": {"response": {"key": "f", "rt_ms": 412.5, "correct": True}}}]}
    assert post(app, session_id, good, token).status_code == 200
    db = app.extensions["stimlab.store"].connect()
    session_record = get_session(db, session_id)
    assert trial_rows(db, session_record)[0]["response_time_s"] == 0.4125


@pytest.mark.parametrize("event,field", [
    ({"kind": "trial_end", "trial": 0, "data": {"response": {"position": 3}}}, "events[0].data.response.position"),
    ({"kind": "trial_end", "trial": 0, "data": {"response": "f"}}, "events[0].data.response"),
    ({"kind": "trial_end", "data": {}}, "events[0].trial"),
    ({"kind": "phase_onset", "trial": 0, "phase": "adapt", "data": {"frame": "12"}}, "events[0].data.frame"),
    ({"kind": "tick", "data": {"seq": 4}}, "events[0].data.seq"),
    ({"kind": "", "data": {}}, "events[0].kind"),
])
def test_events_the_exports_read_are_checked_field_by_field(app, session, event, field):
    session_id, token = session
    refused(post(app, session_id, {"batch": 0, "events": [{"seq": 0, "t": 1.0, **event}]}, token), 400, field)


# -- D2: non-finite numbers and duplicate keys ------------------------------------------------------------------
@pytest.mark.parametrize("raw,field", [
    ('{"batch": 0, "events": [{"seq": 0, "t": NaN, "kind": "tick"}]}', "batch.events[0].t"),
    ('{"batch": 0, "events": [{"seq": 0, "t": 1e400, "kind": "tick"}]}', "batch.events[0].t"),
    ('{"batch": 0, "events": [{"seq": 0, "t": -Infinity, "kind": "tick"}]}', "batch.events[0].t"),
    ('{"batch": 1180591620717411303424, "events": []}', "batch.batch"),
    ('{"batch": 0, "events": [{"seq": 0, "t": 1, "kind": "tick", "phase": "\\ud800"}]}', "batch.events[0].phase"),
    ("[" * 5000 + "]" * 5000, "batch"),
])
def test_non_finite_and_unstorable_values_are_refused_at_the_door(app, session, raw, field):
    session_id, token = session
    refused(post(app, session_id, None, token, raw=raw), 400, field)
    assert counts(app, session_id) == (0, 0, 0)


def test_a_batch_number_with_other_content_is_a_conflict_not_a_duplicate(app, session):
    session_id, token = session
    first = {"batch": 0, "events": [{"seq": 0, "t": 1.0, "kind": "tick"}], "frames": frames()}
    assert post(app, session_id, first, token).get_json()["duplicate"] is False
    assert post(app, session_id, first, token).get_json()["duplicate"] is True
    other = {"batch": 0, "events": [{"seq": 1, "t": 2.0, "kind": "tick"}], "frames": frames(3)}
    refused(post(app, session_id, other, token), 409, "batch")
    assert counts(app, session_id) == (1, 1, 1)


def test_an_event_number_with_other_content_is_a_conflict_and_nothing_of_the_batch_is_kept(app, session):
    session_id, token = session
    assert post(app, session_id, {"batch": 0, "events": [{"seq": 0, "t": 1.0, "kind": "tick"}]}, token).status_code == 200
    clash = {"batch": 1, "events": [{"seq": 1, "t": 2.0, "kind": "tick"}, {"seq": 0, "t": 9.0, "kind": "tock"}]}
    refused(post(app, session_id, clash, token), 409, "events[1].seq")
    assert counts(app, session_id) == (1, 1, 0)
    same = {"batch": 1, "events": [{"seq": 0, "t": 1.0, "kind": "tick"}, {"seq": 1, "t": 2.0, "kind": "tick"}]}
    assert post(app, session_id, same, token).get_json() == {"batch": 1, "duplicate": False, "events": 1, "frames": 0,
                                                             "duplicate_events": 1}


def test_frames_numbered_twice_are_a_conflict(app, session):
    session_id, token = session
    assert post(app, session_id, {"batch": 0, "frames": frames(0, 5)}, token).status_code == 200
    refused(post(app, session_id, {"batch": 1, "frames": frames(3, 5)}, token), 409, "frames")


# -- D4: one runner per session --------------------------------------------------------------------------------
def test_a_second_runner_is_told_the_session_is_open_elsewhere_and_may_take_it_over(app, session):
    session_id, token = session
    runner = app.test_client(use_cookies=False)

    def lease(who, take_over=False):
        return runner.post(f"/api/sessions/{session_id}/lease", json={"runner": who, "take_over": take_over},
                           headers={"X-Run-Token": token})

    assert lease("first-tab-0001").status_code == 200
    assert post(app, session_id, {"batch": 0, "frames": frames(0, 3)}, token, "first-tab-0001").status_code == 200
    message = refused(lease("second-tab-0002"), 409, "runner")["message"]
    assert "open in another tab or window" in message
    assert lease("second-tab-0002", True).get_json() == {"runner": "second-tab-0002", "taken_over": True}
    displaced = post(app, session_id, {"batch": 1, "frames": frames(3, 3)}, token, "first-tab-0001")
    assert "taken over" in refused(displaced, 409, "runner")["message"]
    assert post(app, session_id, {"batch": 1, "frames": frames(3, 3)}, token, "second-tab-0002").status_code == 200
    assert counts(app, session_id) == (2, 0, 2)


# -- D3: NaN in protocols ----------------------------------------------------------------------------------------
def test_a_protocol_with_nan_is_refused_naming_its_path(client, protocol_named):
    text = re.sub(r'"duration_s": [0-9.]+', '"duration_s": NaN', json.dumps(protocol_named("afterimage_duration")), 1)
    assert "NaN" in text
    response = client.put("/api/protocols/nan.json", data=text.replace("{", '{"base_sha256": null, "protocol": {', 1)
                          + "}", headers={"X-CSRF-Token": client.csrf, "Content-Type": "application/json"})
    error = refused(response, 400)
    assert "NaN" in error["message"] and "duration_s" in error["field"]


def test_a_stored_protocol_file_with_nan_does_not_validate(app, client, protocol_named):
    store = app.extensions["stimlab.store"]
    text = re.sub(r'"duration_s": [0-9.]+', '"duration_s": Infinity', json.dumps(protocol_named("afterimage_duration")), 1)
    (store.protocols / "inf.json").write_text(text)
    refused(start(client, "inf.json"), 400)


def test_a_lone_surrogate_in_a_title_is_refused_and_leaves_no_file(app, client, protocol_named):
    protocol = protocol_named("afterimage_duration")
    body = json.dumps({"protocol": protocol, "base_sha256": None}).replace(protocol["about"]["title"], "\\ud83d", 1)
    response = client.put("/api/protocols/lone.json", data=body,
                          headers={"X-CSRF-Token": client.csrf, "Content-Type": "application/json"})
    assert refused(response, 400)["field"] == "body.protocol.about.title"
    assert not list(app.extensions["stimlab.store"].protocols.glob("lone*"))


# -- D6: display profiles -----------------------------------------------------------------------------------------
def crafted(demo, **changes):
    profile = {**json.loads(json.dumps(demo)), **changes}
    profile["sha256"] = profile_hash(profile)
    return profile


@pytest.mark.parametrize("changes,field", [
    ({"primaries": {"kind": "chromaticities", **{c: [0.3, 0.3, 10.0] for c in ("red", "green", "blue")},
                    "black": [0.3, 0.3, 0.0]}}, "primaries"),
    ({"transfer": {}}, "transfer"),
    ({"primaries": [1, 2, 3]}, "primaries"),
    ({"refresh_hz": -60}, "refresh_hz"),
    ({"bits": 100000}, "bits"),
    ({"size_px": [0, 1080]}, "size_px[0]"),
])
def test_a_crafted_profile_is_refused_before_anything_is_stored(app, client, demo, changes, field):
    response = client.post("/api/displays", json={"profile": crafted(demo, **changes)},
                           headers={"X-CSRF-Token": client.csrf})
    assert refused(response, 400)["field"] == field
    assert len(client.get("/api/displays").get_json()["displays"]) == 1
    assert client.get("/displays").status_code == 200


def test_a_gamma_below_zero_is_refused(client, demo):
    profile = json.loads(json.dumps(demo))
    profile["transfer"]["red"]["parameters"]["gamma"] = -2
    response = client.post("/api/displays", json={"profile": crafted(profile)}, headers={"X-CSRF-Token": client.csrf})
    assert refused(response, 400)["field"] == "transfer.red.parameters.gamma"


def test_an_archived_display_leaves_the_lists_but_stays_readable(client):
    headers = {"X-CSRF-Token": client.csrf}
    assert client.post("/api/displays/1/archive", headers=headers).get_json()["archived_at"]
    assert client.get("/api/displays").get_json()["displays"] == []
    assert [d["id"] for d in client.get("/api/displays?archived=1").get_json()["displays"]] == [1]
    assert client.get("/api/displays/1").status_code == 200
    assert client.post("/api/displays/1/unarchive", headers=headers).get_json()["archived_at"] is None
    assert len(client.get("/api/displays").get_json()["displays"]) == 1


# -- D7: acknowledgements -----------------------------------------------------------------------------------------
@pytest.mark.parametrize("ack,field", [
    ({"accepted": "false", "ethics_reference": "VS-2026-01"}, "acknowledgement.accepted"),
    ("yes", "acknowledgement"),
    ({"accepted": True, "ethics_reference": ["VS"]}, "acknowledgement.ethics_reference"),
])
def test_acknowledgements_are_strictly_typed(app, client, ack, field):
    flashing = [n for n in app.extensions["stimlab.store"].protocol_names() if n.startswith("flicker")][0]
    refused(start(client, flashing, acknowledgement=ack), 400, field)
    db = sqlite3.connect(app.extensions["stimlab.store"].database)
    assert db.execute("SELECT COUNT(*) FROM sessions").fetchone()[0] == 0


# -- numbers and types that used to be internal errors ---------------------------------------------------------------
@pytest.mark.parametrize("body,field", [
    ({"protocol": "afterimage_duration.json", "display": [], "participant": "T01"}, "display"),
    ({"protocol": "afterimage_duration.json", "display": 2**70, "participant": "T01"}, "body.display"),
    ({"protocol": 5, "display": 1, "participant": "T01"}, "protocol"),
    ({"protocol": "afterimage_duration.json", "display": 1, "participant": ["T01"]}, "participant"),
])
def test_wrong_types_in_a_new_session_are_named(client, body, field):
    refused(client.post("/api/sessions", json=body, headers={"X-CSRF-Token": client.csrf}), 400, field)


def test_huge_numbers_in_paths_are_not_found(client):
    for path in (f"/api/sessions/{2**70}", f"/api/displays/{2**70}", f"/displays/{2**70}"):
        assert client.get(path).status_code == 404


def test_deep_nesting_in_a_body_is_a_400(client):
    response = client.post("/api/audit", data="[" * 100000 + "]" * 100000,
                           headers={"X-CSRF-Token": client.csrf, "Content-Type": "application/json"})
    refused(response, 400, "body")


def test_a_criterion_put_needs_both_fields_and_keeps_the_labs_on_refusal(client):
    def put(body):
        return client.put("/api/settings/photometry-criterion", headers={"X-CSRF-Token": client.csrf}, json=body)

    assert put({"min_settings": 6, "max_ratio_sd": 0.25}).status_code == 200
    for body, field in [({}, "min_settings"), ({"min_settings": 6}, "max_ratio_sd"),
                        ({"min_settings": 6, "max_ratio_sd": 1e308}, "max_ratio_sd"),
                        ({"min_settings": 6, "max_ratio_sd": 0}, "max_ratio_sd"),
                        ({"min_settings": 1, "max_ratio_sd": 0.3}, "min_settings"),
                        ({"min_settings": 10**6, "max_ratio_sd": 0.3}, "min_settings"),
                        ({"min_settings": True, "max_ratio_sd": 0.3}, "min_settings"),
                        ({"min_settings": 6, "max_ratio_sd": "lots"}, "max_ratio_sd")]:
        refused = put(body)
        assert refused.status_code == 400, body
        error = refused.get_json()["error"]
        assert error["field"] == field and field in error["message"]
        assert re.search(r"from \S+ to \S+", error["message"])  # the range allowed, named
    assert client.get("/api/settings/photometry-criterion").get_json() == {
        "min_settings": 6, "max_ratio_sd": 0.25, "is_default": False}


@pytest.mark.parametrize("method", ["get", "put", "delete"])
def test_a_protocol_named_without_json_is_not_found_and_no_file_appears(app, client, method, protocol_named):
    response = getattr(client, method)("/api/protocols/noext", headers={"X-CSRF-Token": client.csrf},
                                       json={"protocol": protocol_named("contrast_match"), "base_sha256": None})
    assert response.status_code == 404 and ".json" in response.get_json()["error"]["message"]
    assert not (app.extensions["stimlab.store"].protocols / "noext.json").exists()
    assert client.get("/protocols/contrast_match").status_code == 404
    assert client.get("/protocols/contrast_match.json").status_code == 200
