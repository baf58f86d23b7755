"""In-page cost of per-frame logging, and dropped frames over a 60 s adapting phase at 60 Hz, in headless Chromium.

Runs the demo after-image protocol (shortened to one trial, adapting for 60 s) twice in one run, alternating:
with frame logging on and off (``?log_frames=0``), measuring each requestAnimationFrame callback from its start to
its end (``?measure=1``). Dropped frames in the adapting phase are counted from the frame log the server stored;
the half second of background before the first trial (``settle``, while the page enters full screen) is
reported apart. Side by side, the same browser runs a bare canvas loop for as long (one fill per frame, no
server, no log): the frames this machine drops on its own. Last line: ``log_cost_ms=… callback_on_ms=…
callback_off_ms=… dropped_60s=… dropped_settle=… dropped_bare_60s=…``.
Targets: logging costs under 0.2 ms per frame; 0 dropped frames over the 60 s phase.
Set ``BENCH_ADAPT_S`` to shorten the phase for a quick look.
"""

from __future__ import annotations

import json
import os
import sqlite3
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "tests"))

from browser_support import CHROMIUM_ARGS, Server  # noqa: E402
from playwright.sync_api import sync_playwright  # noqa: E402

from stimlab.sessions.ingest import iter_frames  # noqa: E402

ADAPT_S = float(os.environ.get("BENCH_ADAPT_S", 60))


def drops(database: Path, session_id: int) -> dict:
    """Dropped frames per phase, from the stored frame log."""
    counts: dict[str, int] = {}
    with sqlite3.connect(database) as db:
        for frame in iter_frames(db, session_id):
            counts[frame[4]] = counts.get(frame[4], 0) + frame[5]
    return counts


BARE_LOOP = """(frames) => new Promise((done) => {
    const canvas = document.createElement("canvas");
    canvas.width = 1920; canvas.height = 1080;
    document.body.append(canvas);
    const context = canvas.getContext("2d");
    let last = null, n = 0, dropped = 0;
    const period = 1000 / 60, settle = 30;  // as the runner, half a second before counting
    function tick(t) {
        if (last !== null && n > settle && t - last >= 1.5 * period) dropped += 1;
        last = t;
        context.fillStyle = n++ % 2 ? "#808080" : "#818181";
        context.fillRect(0, 0, 1920, 1080);
        if (n < frames + settle) requestAnimationFrame(tick); else done(dropped);
    }
    requestAnimationFrame(tick);
})"""


def bare(page) -> int:
    """Dropped frames of a bare canvas loop as long as the adapting phase (the machine's own share)."""
    page.goto("about:blank")
    return page.evaluate(BARE_LOOP, round(ADAPT_S * 60))


def run(page, url, csrf, logging: bool, index: int) -> dict:
    created = page.request.post(f"{url}/api/sessions", headers={"X-CSRF-Token": csrf},
                                data={"protocol": "bench.json", "display": 1, "participant": f"B{index:02d}"})
    session_id = created.json()["id"]
    page.goto(f"{url}/run/{session_id}?measure=1" + ("" if logging else "&log_frames=0"))
    page.wait_for_function("window.stimlabState === 'ready'", timeout=30000)
    page.keyboard.press(" ")
    page.wait_for_function("window.stimlabSchedule?.phase?.phase === 'respond'", timeout=(ADAPT_S + 30) * 1000,
                           polling=500)
    result = page.evaluate("""() => {
        const s = window.stimlabSchedule, d = [...s.durations].sort((a, b) => a - b);
        return {median: d[d.length >> 1], p99: d[Math.floor(d.length * 0.99)], frames: d.length, dropped: s.dropped};
    }""")
    if logging:  # every adapting frame stored: two more batches cut since the respond phase began, all answered
        cut = page.evaluate("window.stimlabLog.batch")
        page.wait_for_function(f"window.stimlabLog.batch > {cut + 1} && window.stimlabLog.pending.size === 0",
                               timeout=10000)
    return {**result, "session": session_id}


def main() -> None:
    protocol = json.loads((ROOT / "protocols" / "afterimage_null.json").read_text())
    protocol["trial"][0]["duration_s"] = ADAPT_S
    protocol["conditions"].update(repeats=1, variables={"axis": {"L-M": [0, 0.06, 0]}, "polarity": {"plus": 1}})
    protocol["conditions"].pop("blocks")
    with tempfile.TemporaryDirectory() as folder:
        server = Server(Path(folder)).start()
        try:
            with sync_playwright() as p:
                browser = p.chromium.launch(executable_path="/usr/bin/chromium", args=CHROMIUM_ARGS)
                context = browser.new_context(viewport={"width": 1920, "height": 1080},
                                              screen={"width": 1920, "height": 1080}, bypass_csp=True)
                page = context.new_page()
                page.goto(server.url + "/run")
                csrf = page.locator('meta[name="csrf-token"]').get_attribute("content")
                page.request.put(f"{server.url}/api/protocols/bench.json", headers={"X-CSRF-Token": csrf},
                                 data={"protocol": protocol, "base_sha256": None})
                results = {"on": [], "off": []}
                bare_drops = []
                for index, logging in enumerate((True, False, True, False)):
                    results["on" if logging else "off"].append(run(page, server.url, csrf, logging, index))
                    if not logging:
                        bare_drops.append(bare(page))
                browser.close()
            for result in results["on"]:
                result["phases"] = drops(Path(folder) / "stimlab.sqlite", result["session"])
        finally:
            server.stop()
    on = min(r["median"] for r in results["on"])
    off = min(r["median"] for r in results["off"])
    dropped = max(r["phases"].get("adapt", 0) for r in results["on"])
    settle = max(r["phases"].get("settle", 0) for r in results["on"])
    for key, rows in results.items():
        for r in rows:
            where = f", by phase {r['phases']}" if "phases" in r else ""
            print(f"  logging {key:3s}: median callback {r['median']:.3f} ms, p99 {r['p99']:.3f} ms, "
                  f"{r['frames']} frames, {r['dropped']} dropped{where}")
    print(f"  bare canvas loop: {', '.join(map(str, bare_drops))} dropped in {round(ADAPT_S * 60)} frames")
    print(f"log_cost_ms={on - off:.3f} callback_on_ms={on:.3f} callback_off_ms={off:.3f} dropped_60s={dropped} "
          f"dropped_settle={settle} dropped_bare_60s={max(bare_drops)}")


if __name__ == "__main__":
    main()
