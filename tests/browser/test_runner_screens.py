"""The screens around the trials in Debian's Chromium: every screen is the protocol's background at its compiled
device levels with a text panel in the compiled text colour, the pre-adaptation is logged frame by frame, breaks
show progress, only the protocol's keys act, practice trials and dry runs are marked, a session ends early with a
reason, and the runner keeps its 10-bit context when another script reads its canvas first.

Screenshots go to test-artifacts/screens/ for a person to look at."""

import csv
import io
import sqlite3
import zipfile
from pathlib import Path

from test_runner import api, confirm_trials, events, open_runner, quick_null, start, token, wait_respond

from stimlab.sessions.ingest import iter_frames

SCREENS = Path(__file__).parents[2] / "test-artifacts" / "screens"

# Reads the runner's canvas back as device levels: the 10-bit demo display draws on a float16 canvas holding
# level / 1023 (static/js/runner/paint.js), so a pixel reads back as round(value * 1023).
READ = """([x, y]) => {
  const canvas = document.getElementById('stimulus');
  const ctx = canvas.getContext('2d', { colorType: 'float16' });
  const d = ctx.getImageData(x, y, 1, 1, { pixelFormat: 'rgba-float16' }).data;
  return Array.from(d.slice(0, 3), (v) => Math.round(v * 1023));
}"""

# Every pixel of the text panel: how many are exactly the text colour, and whether each channel of every pixel
# lies between the background's and the text's levels (anti-aliased glyph edges blend the two, nothing else).
PANEL = """([background, text]) => {
  const p = window.stimlabScreens.panel;
  const ctx = document.getElementById('stimulus').getContext('2d', { colorType: 'float16' });
  const x = Math.floor(p.left), y = Math.floor(p.top);
  const w = Math.ceil(p.right - p.left), h = Math.ceil(p.bottom - p.top);
  const d = ctx.getImageData(x, y, w, h, { pixelFormat: 'rgba-float16' }).data;
  let textPixels = 0, outside = 0;
  for (let i = 0; i < d.length; i += 4) {
    const v = [0, 1, 2].map((c) => Math.round(d[i + c] * 1023));
    if (v.every((c, k) => c === text[k])) textPixels += 1;
    if (v.some((c, k) => c < Math.min(background[k], text[k]) || c > Math.max(background[k], text[k]))) outside += 1;
  }
  return { textPixels, outside };
}"""


def blocked_protocol():
    """Two blocks of one trial each (by polarity), short pre-adaptation and break."""
    protocol = quick_null(adapt_s=0.2)
    protocol["conditions"]["blocks"] = {"by": "polarity", "order": "fixed"}
    protocol["session"] = {"pre_adaptation_s": 0.3, "instructions": "Null the after-image on the test disc.",
                           "breaks": {"minimum_s": 0.2}}
    return protocol


def assert_background_screen(page, data, name):
    background = data["background"]["device"]
    width, height = data["display"]["size_px"]
    assert page.evaluate(READ, [width // 2, height // 2]) == background, f"{name}: centre"
    assert page.evaluate(READ, [2, 2]) == background, f"{name}: top-left corner"
    assert page.evaluate(READ, [width - 3, height - 3]) == background, f"{name}: bottom-right corner"
    panel = page.evaluate(PANEL, [background, data["text"]["device"]])
    assert panel["textPixels"] > 100, f"{name}: the text is drawn in its compiled colour"
    assert panel["outside"] == 0, f"{name}: no colour outside the background-to-text range"
    SCREENS.mkdir(parents=True, exist_ok=True)
    page.screenshot(path=str(SCREENS / f"{name}.png"))


def test_every_screen_is_the_background_with_compiled_text(server, page):
    session_id = start(page, server, blocked_protocol(), name="blocks.json")
    open_runner(page, server, session_id)
    data = api(page, server, session_id)["compiled"]
    assert data["text"]["in_gamut"] and data["text"]["device"] != data["background"]["device"]
    assert "Null the after-image" in page.locator("#runner-message").inner_text()
    assert_background_screen(page, data, "instructions")

    page.keyboard.press(" ")
    page.wait_for_function("window.stimlabScreen === 'pre_adapt'", timeout=10000)
    page.screenshot(path=str(SCREENS / "pre_adaptation.png"))
    wait_respond(page)
    page.keyboard.press("Enter")
    page.wait_for_function("window.stimlabState === 'break' && window.stimlabSchedule.interlude.current.ready",
                           timeout=10000)
    assert "1 of 2 trials done" in page.locator("#runner-message").inner_text()
    assert_background_screen(page, data, "break")
    page.keyboard.press(" ")
    wait_respond(page)
    page.keyboard.press("Escape")
    page.wait_for_function("window.stimlabState === 'paused'")
    page.wait_for_timeout(100)  # a few paused frames: nothing may draw over the pause screen
    assert_background_screen(page, data, "pause")
    page.keyboard.press(" ")
    page.wait_for_function("window.stimlabScreen === 'pre_adapt'")  # the aborted trial starts again after it
    wait_respond(page)
    page.keyboard.press("Enter")
    page.wait_for_function("window.stimlabState === 'finished'", timeout=10000)
    assert_background_screen(page, data, "end")
    page.wait_for_function("window.stimlabLog.backlog === 0", timeout=10000)

    db = sqlite3.connect(server.data / "stimlab.sqlite")
    frames = list(iter_frames(db, session_id))
    pre = [f for f in frames if f[4] == "pre_adapt"]
    # Before the first trial, after the break and after the pause: each the compiled number of frames.
    assert data["pre_adaptation"]["frames"] == 18  # 0.3 s at 60 Hz
    assert len(pre) == 3 * 18
    assert all(f[3] is None or f[3] < 0 for f in pre)  # no trial is running
    assert all(f[6].startswith(",".join(map(str, data["background"]["device"]))) for f in pre)
    assert sum(1 for f in frames if f[4] == "break") >= 12  # the minimum 0.2 s at least
    # Nothing but background and text between the pre-adaptation's start and the first trial frame.
    first = next(i for i, f in enumerate(frames) if f[4] == "pre_adapt")
    assert all(f[4] in ("pre_adapt",) for f in frames[first:first + 18])
    kinds = [kind for _, kind, _ in events(server, session_id)]
    assert kinds.index("checks") < kinds.index("settle")  # the checks run before the pre-adaptation
    assert "break" in kinds and "break_end" in kinds


def test_only_the_protocols_keys_act_and_practice_is_flagged(server, page):
    protocol = quick_null(adapt_s=0.1)
    protocol["trial"][2]["response"].update(keys=["w", "s"], confirm_keys=["q"], coarse_key="Alt")
    protocol["session"] = {"pre_adaptation_s": 0.1, "practice": {"trials": 1, "adapt_s": 0.1}}
    session_id = start(page, server, protocol, name="keys.json")
    open_runner(page, server, session_id)
    legend = page.locator("#runner-message").inner_text()
    assert "w / s: change the colour" in legend and "hold Alt: for larger steps" in legend
    assert "q: when the patch looks right" in legend and "Enter" not in legend and "↑" not in legend
    SCREENS.mkdir(parents=True, exist_ok=True)
    page.screenshot(path=str(SCREENS / "instructions_custom_keys.png"))
    page.keyboard.press(" ")
    positions = {}
    for trial in range(3):  # one practice trial, then the two experimental ones
        wait_respond(page)
        assert page.evaluate("window.stimlabSchedule.trial.index") == trial
        start_index = page.evaluate("window.stimlabSchedule.responder.position[0]")
        for key in ("ArrowUp", "ArrowRight", "ArrowDown", "Enter", " ", "Shift+ArrowUp"):
            page.keyboard.press(key)
        assert page.evaluate("window.stimlabSchedule.responder.position[0]") == start_index  # none of these act
        assert page.evaluate("window.stimlabSchedule.responder.result") is None
        page.keyboard.press("w")
        page.keyboard.press("w")
        page.keyboard.press("Alt+s")  # a coarse step: 5 positions (0.25 / 0.05)
        positions[trial] = start_index + 2 - 5
        assert page.evaluate("window.stimlabSchedule.responder.position[0]") == positions[trial]
        page.keyboard.press("q")
        if trial == 0:  # after the practice: a break before the experiment proper
            page.wait_for_function("window.stimlabState === 'break'", timeout=10000)
            assert "2 trials" in page.locator("#runner-message").inner_text()
            page.wait_for_function("window.stimlabSchedule.interlude.current.ready")
            page.keyboard.press(" ")
        else:
            page.wait_for_function(f"window.stimlabSchedule.trial?.index !== {trial}")
    page.wait_for_function("window.stimlabState === 'finished'", timeout=20000)
    page.wait_for_function("window.stimlabLog.backlog === 0", timeout=10000)
    rows = list(csv.DictReader(io.StringIO(page.request.get(f"{server.url}/sessions/{session_id}/export.csv").text())))
    assert [r["practice"] for r in rows] == ["True", "False", "False"]
    assert [r["completed"] for r in rows] == ["True"] * 3
    archive = zipfile.ZipFile(io.BytesIO(page.request.get(f"{server.url}/sessions/{session_id}/export.bids").body()))
    name = next(n for n in archive.namelist() if n.endswith("_events.tsv"))
    bids = archive.read(name).decode().splitlines()
    practice_column = bids[0].split("\t").index("practice")
    first_trial = [line.split("\t") for line in bids[1:] if line.split("\t")[bids[0].split("\t").index("trial")] == "0"]
    assert first_trial and {row[practice_column] for row in first_trial} == {"true"}
    ends = [data for _, kind, data in events(server, session_id) if kind == "trial_end"]
    assert [e["practice"] for e in ends] == [True, False, False]


def test_a_dry_run_is_scaled_marked_and_left_out_of_analysis(server, page):
    protocol = quick_null(adapt_s=2.0)
    protocol["session"] = {"pre_adaptation_s": 3.0}
    csrf = token(page, server.url)
    assert page.request.put(f"{server.url}/api/protocols/dry.json", data={"protocol": protocol, "base_sha256": None},
                            headers={"X-CSRF-Token": csrf}).ok
    created = page.request.post(f"{server.url}/api/sessions", headers={"X-CSRF-Token": csrf},
                                data={"protocol": "dry.json", "display": 1, "participant": "P09",
                                      "dry_run_factor": 0.1})
    assert created.status == 201, created.text()
    session_id = created.json()["id"]
    session = api(page, server, session_id)
    data = session["compiled"]
    assert session["dry_run"] == 0.1 and data["dry_run"] == {"factor": 0.1}
    assert data["pre_adaptation"]["frames"] == 18  # 3 s × 0.1 at 60 Hz
    assert data["schedules"]["first"][0]["frames"] == 12  # 2 s × 0.1
    open_runner(page, server, session_id)
    assert "Dry run" in page.locator("#runner-message").inner_text()
    page.keyboard.press(" ")
    confirm_trials(page, 2)
    page.wait_for_function("window.stimlabState === 'finished'", timeout=20000)
    page.wait_for_function("window.stimlabLog.backlog === 0", timeout=10000)
    listing = page.goto(f"{server.url}/sessions").text()
    assert "dry run" in listing
    page.screenshot(path=str(SCREENS / "sessions_list.png"))
    page.goto(f"{server.url}/run?protocol=dry.json&display=1")
    page.screenshot(path=str(SCREENS / "run_page.png"), full_page=True)
    page_text = page.goto(f"{server.url}/sessions/{session_id}").text()
    assert "Dry run" in page_text and "left out of the analysis" in page_text
    rows = list(csv.DictReader(io.StringIO(page.request.get(f"{server.url}/sessions/{session_id}/export.csv").text())))
    assert {r["dry_run"] for r in rows} == {"True"}  # the factor is in the session record and provenance
    exported = page.request.get(f"{server.url}/sessions/{session_id}/export.json").json()
    assert exported["session"]["dry_run"] == 0.1


def test_the_experimenter_ends_a_session_early_with_a_reason(server, page):
    protocol = quick_null(adapt_s=5.0)
    session_id = start(page, server, protocol, name="early.json")
    open_runner(page, server, session_id)
    page.keyboard.press(" ")
    page.wait_for_function("window.stimlabSchedule?.phase?.phase === 'adapt'", timeout=10000)
    page.keyboard.press("Escape")
    page.wait_for_function("window.stimlabState === 'paused'")
    page.keyboard.press("Escape")  # on the pause screen: end early
    page.locator("#end-reason").fill("participant felt unwell")
    page.locator("#end-reason").press("Enter")
    page.wait_for_function("window.stimlabState === 'ended'", timeout=10000)
    data = api(page, server, session_id)["compiled"]
    assert_background_screen(page, data, "ended_early")
    session = api(page, server, session_id)
    assert session["status"] == "ended_early" and session["end_reason"] == "participant felt unwell"
    exported = page.request.get(f"{server.url}/sessions/{session_id}/export.json").json()
    assert exported["session"]["status"] == "ended_early"
    assert exported["session"]["end_reason"] == "participant felt unwell"
    assert any(kind == "ended_early" and d["reason"] == "participant felt unwell"
               for _, kind, d in events(server, session_id))
    listing = page.goto(f"{server.url}/sessions").text()
    assert "ended early" in listing
    open_runner(page, server, session_id)  # it cannot be resumed
    assert "ended early" in page.locator("#runner-message").inner_text()


def test_the_runner_keeps_its_context_when_another_script_reads_the_canvas_first(server, page):
    # Something on the page (an extension, a screenshot tool) reads every canvas as soon as it appears.
    page.add_init_script("""
      new MutationObserver((changes) => {
        for (const change of changes) for (const node of change.addedNodes) {
          if (node instanceof HTMLCanvasElement) node.getContext('2d').getImageData(0, 0, 1, 1);
        }
      }).observe(document, { childList: true, subtree: true });
    """)
    session_id = start(page, server, quick_null(), name="first.json")
    open_runner(page, server, session_id)
    assert page.evaluate("window.stimlabState") == "ready"
    assert page.evaluate("window.stimlabSchedule.painter.supported") is True
    assert page.evaluate("window.stimlabSchedule.painter.ctx.getContextAttributes().colorType") == "float16"


def test_a_screen_smaller_than_the_profile_stops_a_session_and_a_dry_run_keeps_the_centre_in_view(server, browser):
    """A laptop screen (800×600) for the 1920×1080 demo profile: a real session stops before the first frame, naming
    both sizes; a dry run goes on with the canvas centred (the screen centre is the profile's centre), every line of
    the instructions (legend included) in the part in view, and a note that the edges fall outside."""
    context = browser.new_context(viewport={"width": 800, "height": 600}, screen={"width": 800, "height": 600},
                                  bypass_csp=True)
    page = context.new_page()
    try:
        session_id = start(page, server, blocked_protocol(), name="small.json", participant="P02")
        open_runner(page, server, session_id)
        assert page.evaluate("window.stimlabState") == "stopped"
        message = page.locator("#runner-message").inner_text()
        assert "not the profiled screen" in message and "800×600" in message and "1920×1080" in message
        csrf = token(page, server.url)
        created = page.request.post(f"{server.url}/api/sessions", headers={"X-CSRF-Token": csrf},
                                    data={"protocol": "small.json", "display": 1, "participant": "P02",
                                          "dry_run_factor": 0.1})
        assert created.status == 201, created.text()
        session_id = created.json()["id"]
        open_runner(page, server, session_id)
        assert page.evaluate("window.stimlabState") == "ready"
        box = page.locator("#stimulus").bounding_box()
        assert (box["x"] + box["width"] / 2, box["y"] + box["height"] / 2) == (400, 300)
        panel = page.evaluate("window.stimlabScreens.panel")
        width, height = api(page, server, session_id)["compiled"]["display"]["size_px"]
        assert width / 2 - 400 <= panel["left"] and panel["right"] <= width / 2 + 400
        assert height / 2 - 300 <= panel["top"] and panel["bottom"] <= height / 2 + 300
        assert "edges of every screen fall outside" in page.locator("#runner-message").inner_text()
        SCREENS.mkdir(parents=True, exist_ok=True)
        page.screenshot(path=str(SCREENS / "instructions_small_window.png"))
    finally:
        context.close()
