"""Paradigm templates: each is a valid protocol that passes the audit on the demo display, and a new protocol from
one gets its own title and seed."""

import datetime as dt

import pytest

from stimlab.audit.preflight import audit_protocol
from stimlab.errors import NotFoundError
from stimlab.experiment.compile import compile_protocol
from stimlab.experiment.paradigms import paradigm_protocol, paradigms
from stimlab.experiment.protocol import validate_protocol

KEYS = [p["key"] for p in paradigms()]


def test_the_five_paradigms_are_shipped():
    assert KEYS == ["afterimage_duration", "afterimage_nulling", "detection_staircase", "flicker_photometry",
                    "simultaneous_contrast_matching"]
    assert all(p["title"] and p["summary"] for p in paradigms())


@pytest.mark.parametrize("key", KEYS)
def test_each_template_validates_and_audits_clean_on_the_demo_display(demo, key):
    protocol = validate_protocol(paradigm_protocol(key, seed=7))
    report = audit_protocol(compile_protocol(protocol, demo), protocol, demo, today=dt.date(2026, 11, 25))
    assert report["passed"] and report["counts"]["fail"] == 0, [f["message"] for f in report["findings"]
                                                                 if f["severity"] == "fail"]


def test_a_new_protocol_gets_its_title_and_a_seed_and_leaves_the_template_alone():
    first = paradigm_protocol("afterimage_nulling", "Pilot A")
    assert first["about"]["title"] == "Pilot A" and isinstance(first["conditions"]["seed"], int)
    first["stimuli"].clear()
    assert paradigm_protocol("afterimage_nulling", seed=3)["stimuli"]
    with pytest.raises(NotFoundError) as caught:
        paradigm_protocol("colour_naming")
    assert caught.value.field == "paradigm" and "afterimage_nulling" in caught.value.message
