"""In-page cost of per-frame logging, and dropped frames over a 60 s adapting phase at 60 Hz, in headless Chromium.

Runs the demo after-image protocol (shortened to one trial, adapting for 60 s) twice in one run, alternating:
with frame logging on and off (``?log_frames=0``), measuring each requestAnimationFrame callback from its start to
its end (``?measure=1``). Last line: ``log_cost_ms=… callback_on_ms=… callback_off_ms=… dropped_60s=…``.
Targets: logging costs under 0.2 ms per frame; 0 dropped frames over the 60 s phase.
Set ``BENCH_ADAPT_S`` to shorten the phase for a quick look.
"""

from __future__ import annotations

import json
import os
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "tests"))

from browser_support import CHROMIUM_ARGS, Server  # noqa: E402
from playwright.sync_api import sync_playwright  # noqa: E402

ADAPT_S = float(os.environ.get("BENCH_ADAPT_S", 60))


def run(page, url, csrf, logging: bool, index: int) -> dict:
    created = page.request.post(f"{url}/api/sessions", headers={"X-CSRF-Token": csrf},
                                data={"protocol": "bench.json", "display": 1, "participant": f"B{index:02d}"})
    session_id = created.json()["id"]
    page.goto(f"{url}/run/{session_id}?measure=1" + ("" if logging else "&log_frames=0"))
    page.wait_for_function("window.stimlabState === 'ready'", timeout=30000)
    page.keyboard.press(" ")
    page.wait_for_function("window.stimlabSchedule?.phase?.phase === 'respond'", timeout=(ADAPT_S + 30) * 1000,
                           polling=500)
    return page.evaluate("""() => {
        const s = window.stimlabSchedule, d = [...s.durations].sort((a, b) => a - b);
        return {median: d[d.length >> 1], p99: d[Math.floor(d.length * 0.99)], frames: d.length, dropped: s.dropped};
    }""")


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
                for index, logging in enumerate((True, False, True, False)):
                    results["on" if logging else "off"].append(run(page, server.url, csrf, logging, index))
                browser.close()
        finally:
            server.stop()
    on = min(r["median"] for r in results["on"])
    off = min(r["median"] for r in results["off"])
    dropped = max(r["dropped"] for r in results["on"])
    for key, rows in results.items():
        for r in rows:
            print(f"  logging {key:3s}: median callback {r['median']:.3f} ms, p99 {r['p99']:.3f} ms, "
                  f"{r['frames']} frames, {r['dropped']} dropped")
    print(f"log_cost_ms={on - off:.3f} callback_on_ms={on:.3f} callback_off_ms={off:.3f} dropped_60s={dropped}")


if __name__ == "__main__":
    main()
