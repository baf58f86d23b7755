"""The audit of the screens around the trials (stimlab/audit/screens.py): text colour in gamut and below the WCAG
2.2 flash transition, keys with one meaning each, and the session's duration with its pre-adaptation."""

from stimlab.audit.preflight import audit_protocol
from stimlab.experiment.compile import compile_protocol


def audit(protocol, profile):
    return audit_protocol(compile_protocol(protocol, profile), protocol, profile)


def failures(report):
    return [(f["kind"], f["where"], f["message"]) for f in report["findings"] if f["severity"] == "fail"]


def test_every_demo_protocol_audits_clean_with_its_screens(demo, protocol_named):
    for name in ("afterimage_null", "afterimage_duration", "contrast_match", "detection_staircase",
                 "flicker_photometry"):
        assert audit(protocol_named(name), demo)["passed"], name


def test_a_text_colour_out_of_gamut_fails_naming_it(demo, protocol_named):
    protocol = protocol_named("afterimage_null")
    # On a bright background (90 % drive), +0.5 in DKL luminance (each cone +29 %) needs 116 % drive.
    protocol["background"] = {"rgb_linear": [0.9, 0.9, 0.9]}
    protocol["session"] = {"text_luminance": 0.5}
    report = audit(protocol, demo)
    assert not report["passed"]
    text = [(k, m) for k, w, m in failures(report) if w == "session.text_luminance"]
    assert len(text) == 1 and text[0][0] == "gamut" and "text colour" in text[0][1]


def test_a_text_panel_that_would_flash_fails(demo, protocol_named):
    # WCAG 2.2 general flash: a change of 10 % or more of the white's relative luminance, darker state under 0.8.
    protocol = protocol_named("afterimage_null")
    protocol["session"] = {"text_luminance": -0.5}
    found = failures(audit(protocol, demo))
    assert [(k, w) for k, w, _ in found] == [("screens", "session.text_luminance")]
    assert "flash" in found[0][2]


def test_keys_with_two_meanings_fail(demo, protocol_named):
    protocol = protocol_named("afterimage_null")
    protocol["trial"][2]["response"].update(keys=["ArrowUp", "ArrowDown"], confirm_keys=["ArrowDown"])
    found = failures(audit(protocol, demo))
    assert found == [("screens", "response.keys", "'↓' is both response key 2 and confirm: give each key one "
                      "meaning")]


def test_the_session_duration_counts_every_pre_adaptation(demo, protocol_named):
    protocol = protocol_named("afterimage_null")
    protocol["session"] = {"pre_adaptation_s": 120, "breaks": {"minimum_s": 30}}
    report = audit(protocol, demo)
    session = next(f for f in report["findings"] if f["where"] == "session")
    values = session["values"]
    assert values["pre_adaptation_s"] == 240  # before the first trial and after the one break between blocks
    assert values["breaks_s"] == 30
    # 2 blocks: 2 first trials of 30 + 0.25 s, 14 repeats of 8 + 0.25 s (the demo protocol's phases).
    assert values["trials_s"] == 2 * 30.25 + 14 * 8.25
    assert values["total_s"] == 240 + 30 + 2 * 30.25 + 14 * 8.25
