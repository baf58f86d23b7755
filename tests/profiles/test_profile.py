"""Display profiles: content hash, tamper detection, age warnings, approximation flags."""

import datetime as dt
import json

import pytest

from stimlab.errors import InputError
from stimlab.profiles.profile import (
    load_profile,
    profile_hash,
    profile_warnings,
    save_profile,
)


def test_hash_covers_the_content_and_survives_saving(demo, tmp_path):
    path = tmp_path / "demo.json"
    save_profile(demo, path)
    again = load_profile(path)
    assert again["sha256"] == demo["sha256"] == profile_hash(again)


def test_an_edited_profile_is_refused(demo, tmp_path):
    edited = json.loads(json.dumps(demo))
    edited["refresh_hz"] = 75.0
    path = tmp_path / "edited.json"
    path.write_text(json.dumps(edited))
    with pytest.raises(InputError, match="edited after it was built") as caught:
        load_profile(path)
    assert caught.value.field == "sha256"


def test_not_a_profile(tmp_path):
    path = tmp_path / "x.json"
    path.write_text("{\"hello\": 1}")
    with pytest.raises(InputError, match="not a stimlab display profile"):
        load_profile(path)
    path.write_text("{broken")
    with pytest.raises(InputError, match="not valid JSON"):
        load_profile(path)


def test_age_warning_after_the_configured_days(demo):
    measured = dt.date.fromisoformat(demo["measured_on"])
    assert profile_warnings(demo, 30, today=measured + dt.timedelta(days=30)) == []
    late = profile_warnings(demo, 30, today=measured + dt.timedelta(days=31))
    assert late and "31 days ago" in late[0]
    assert profile_warnings(demo, 60, today=measured + dt.timedelta(days=31)) == []


def test_chromaticity_profiles_are_flagged_everywhere(srgb_profile, demo):
    today = dt.date.fromisoformat(srgb_profile["measured_on"])
    assert any("approximation" in w for w in profile_warnings(srgb_profile, today=today))
    assert not any("approximation" in w for w in profile_warnings(demo, today=dt.date(2026, 11, 25)))


def test_every_model_is_fitted_and_compared(demo):
    entry = demo["transfer"]["green"]
    assert entry["model"] == "gog"
    assert set(entry["alternatives"]) == {"power", "table"}
    assert entry["rms"] < entry["alternatives"]["power"]["rms"]  # the demo display has a real offset
    assert entry["measured"]["level"][0] == 0 and entry["measured"]["level"][-1] == 1023
