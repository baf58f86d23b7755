"""Compiling the screens around the trials (stimlab/experiment/screens.py): the text colour, keys with their
defaults and legend, practice trials, break positions with progress, the pre-adaptation and dry-run scaling."""

import numpy as np
import pytest

from stimlab.colorimetry.spaces import LMS_to_DKL
from stimlab.errors import InputError
from stimlab.experiment.compile import compile_protocol
from stimlab.experiment.screens import (
    DEFAULT_PRE_ADAPTATION_S,
    DEFAULT_TEXT_LUMINANCE,
    key_collisions,
    response_keys,
    scale_durations,
)


def test_the_text_colour_is_a_luminance_offset_from_the_background(demo, protocol_named):
    protocol = protocol_named("afterimage_null")
    data = compile_protocol(protocol, demo).data
    text, background = data["text"], data["background"]
    assert text["dkl_luminance"] == DEFAULT_TEXT_LUMINANCE and text["in_gamut"]
    # Back in DKL (Brainard 1996) the text sits on the luminance axis only: no chromatic change from the background.
    dkl = LMS_to_DKL(np.array(text["lms"]), np.array(background["lms"]), data["observer"]["w_L"],
                     data["observer"]["w_M"])
    assert dkl == pytest.approx([DEFAULT_TEXT_LUMINANCE, 0, 0], abs=1e-9)
    assert all(t < b for t, b in zip(text["device"], background["device"]))  # darker on every channel


def test_default_keys_are_written_into_the_plan_with_a_legend():
    keys = response_keys({"method": "adjustment", "axis": [0, 1, 0]})
    assert keys["keys"] == ["ArrowUp", "ArrowDown"] and keys["confirm"] == ["Enter"] and keys["coarse"] == "Shift"
    assert keys["moves"] == {"ArrowUp": [0, 1], "ArrowDown": [0, -1]}
    assert ["Enter", "when the patch looks right: confirm your setting"] in keys["legend"]
    plane = response_keys({"method": "adjustment", "plane": [[0, 1, 0], [0, 0, 1]], "keys": ["d", "a", "w", "s"],
                           "coarse_key": "none"})
    assert plane["moves"] == {"d": [0, 1], "a": [0, -1], "w": [1, 1], "s": [1, -1]} and plane["coarse"] is None
    assert response_keys({"method": "2afc"})["keys"] == ["ArrowLeft", "ArrowRight"]
    assert response_keys({"method": "staircase", "task": "yes_no"})["legend"][0] == ["y", "yes, I saw it"]


def test_keys_the_wrong_number_or_with_two_meanings_are_named():
    with pytest.raises(InputError) as error:
        response_keys({"method": "adjustment", "axis": [0, 1, 0], "keys": ["ArrowUp"]})
    assert error.value.field == "response.keys"
    keys = response_keys({"method": "adjustment", "axis": [0, 1, 0], "keys": ["w", "s"], "confirm_keys": ["w"]})
    assert key_collisions(keys) == ["'w' is both response key 1 and confirm"]
    assert key_collisions(response_keys({"method": "2afc", "keys": ["Escape", "x"]})) == [
        "'Escape' is kept by the runner (it pauses)"]


def test_practice_trials_come_first_flagged_with_their_own_adaptation(demo, protocol_named):
    protocol = protocol_named("afterimage_null")
    protocol["session"] = {"practice": {"trials": 3, "conditions": ["axis=S, polarity=plus"], "adapt_s": 5}}
    data = compile_protocol(protocol, demo).data
    practice = [t for t in data["trials"] if t["practice"]]
    assert [t["index"] for t in practice] == [0, 1, 2]
    assert {data["conditions"][t["condition"]]["label"] for t in practice} == {"axis=S, polarity=plus"}
    assert [t["index"] for t in data["trials"]] == list(range(len(data["trials"])))
    assert len(data["trials"]) == 3 + 16
    assert data["schedules"]["practice"][0]["frames"] == 300  # 5 s at 60 Hz
    assert data["breaks"][0] == {**data["breaks"][0], "before_trial": 3, "kind": "after_practice", "done": 0,
                                 "total": 16}
    # The experimental trials are those of a protocol without practice.
    protocol.pop("session")
    plain = compile_protocol(protocol, demo).data["trials"]
    assert [(t["condition"], t.get("start")) for t in data["trials"][3:]] == [(t["condition"], t.get("start"))
                                                                               for t in plain]


def test_an_unknown_practice_condition_is_named(demo, protocol_named):
    protocol = protocol_named("afterimage_null")
    protocol["session"] = {"practice": {"trials": 1, "conditions": ["axis=X"]}}
    with pytest.raises(InputError) as error:
        compile_protocol(protocol, demo)
    assert error.value.field == "session.practice.conditions" and "axis=L-M, polarity=plus" in error.value.message


def test_breaks_between_blocks_and_every_n_trials_with_progress(demo, protocol_named):
    protocol = protocol_named("afterimage_null")  # 2 blocks of 8 trials
    protocol["session"] = {"breaks": {"every_trials": 3, "minimum_s": 10}, "pre_adaptation_s": 90,
                           "block_instructions": {"S": "Now the S axis."}}
    data = compile_protocol(protocol, demo).data
    assert [(b["before_trial"], b["kind"], b["done"]) for b in data["breaks"]] == [
        (3, "every", 3), (6, "every", 6), (8, "block", 8), (9, "every", 9), (12, "every", 12), (15, "every", 15)]
    assert {b["total"] for b in data["breaks"]} == {16} and {b["minimum_frames"] for b in data["breaks"]} == {600}
    second_block = data["conditions"][data["trials"][8]["condition"]]["labels"]["axis"]
    assert data["breaks"][2]["instructions"] == ("Now the S axis." if second_block == "S" else "")
    assert data["pre_adaptation"] == {"requested_s": 90, "frames": 5400, "actual_s": 90.0}


def test_the_default_pre_adaptation_is_a_minute(demo, protocol_named):
    data = compile_protocol(protocol_named("contrast_match"), demo).data
    assert DEFAULT_PRE_ADAPTATION_S == 60  # one to two minutes: common practice in chromatic adaptation studies
    assert data["pre_adaptation"]["frames"] == 3600 and data["breaks"] == []


def test_a_dry_run_scales_every_duration_but_not_the_stimulus(protocol_named):
    protocol = protocol_named("flicker_photometry")
    protocol["session"] = {"breaks": {"minimum_s": 20}, "practice": {"trials": 1, "adapt_s": 4}}
    scaled = scale_durations(protocol, 0.1)
    for before, after in zip(protocol["trial"], scaled["trial"]):
        for key in ("duration_s", "top_up_s", "timeout_s"):
            if key in before:
                assert after[key] == pytest.approx(before[key] * 0.1)
    assert scaled["session"] == {"breaks": {"minimum_s": 2.0}, "practice": {"trials": 1, "adapt_s": 0.4},
                                 "pre_adaptation_s": 6.0}
    assert scaled["stimuli"] == protocol["stimuli"]  # flicker frequencies are kept
    assert "pre_adaptation_s" not in protocol.get("session")  # the protocol itself is untouched
    with pytest.raises(InputError) as error:
        scale_durations(protocol, 2)
    assert error.value.field == "dry_run_factor"
