"""One runner per session in Debian's Chromium: a second tab is told the session is open elsewhere and may take it
over (the first stops presenting); a tab reopened from the browser's saved copy numbers its frames after the
saved ones, so every frame is stored once."""

import sqlite3
import time

import numpy as np
from test_runner import ARTIFACTS, confirm_trials, open_runner, quick_null, start


def frame_numbers(server, session_id):
    from stimlab.sessions.ingest import iter_frames

    db = sqlite3.connect(server.data / "stimlab.sqlite")
    return np.array([row[0] for row in iter_frames(db, session_id)])


def test_a_second_tab_is_told_and_may_take_the_session_over(server, page, context):
    session_id = start(page, server, quick_null(adapt_s=3.0))
    open_runner(page, server, session_id)
    page.keyboard.press(" ")
    page.wait_for_function("window.stimlabSchedule?.frame > 20")
    second = context.new_page()
    second.goto(f"{server.url}/run/{session_id}")
    second.wait_for_function("window.stimlabState === 'open_elsewhere'", timeout=20000)
    text = second.locator("#runner-message").inner_text()
    assert "open in another tab or window" in text and "take the session over" in text.lower()
    ARTIFACTS.mkdir(exist_ok=True)
    second.screenshot(path=str(ARTIFACTS / "runner_open_elsewhere.png"))
    second.click("#take-over")
    second.wait_for_function("window.stimlabState === 'ready'", timeout=20000)
    page.wait_for_function("window.stimlabState === 'stopped'", timeout=10000)
    assert "taken over by another window" in page.locator("#runner-message").inner_text()
    stopped_at = page.evaluate("window.stimlabSchedule.frame")
    page.wait_for_timeout(500)
    page.keyboard.press(" ")  # the displaced window does not present again
    assert page.evaluate("window.stimlabSchedule.paused") is True
    assert page.evaluate("window.stimlabSchedule.frame") - stopped_at < 3
    numbers = frame_numbers(server, session_id)
    assert len(numbers) == len(np.unique(numbers))


def test_a_tab_reopened_from_its_saved_copy_numbers_frames_after_it(server, page, context):
    session_id = start(page, server, quick_null(adapt_s=3.0))
    open_runner(page, server, session_id)
    page.keyboard.press(" ")
    page.wait_for_function("window.stimlabSchedule?.frame > 20")
    server.stop()
    page.wait_for_function("document.getElementById('runner').dataset.link === 'unreachable'", timeout=10000)
    page.wait_for_timeout(1500)
    page.close()  # its unsent batches stay in IndexedDB
    server.start()
    time.sleep(0.2)
    again = context.new_page()
    open_runner(again, server, session_id)
    again.wait_for_function("window.stimlabState === 'ready'", timeout=20000)
    saved = again.evaluate("window.stimlabLog.lastFrame")  # the last frame of the saved, unsent batches
    assert saved > 20 and again.evaluate("window.stimlabSchedule.frame") == saved + 1
    again.keyboard.press(" ")
    confirm_trials(again, 2)
    again.wait_for_function("window.stimlabState === 'finished'", timeout=20000)
    again.wait_for_function("window.stimlabLog.backlog === 0", timeout=10000)
    numbers = frame_numbers(server, session_id)
    assert len(numbers) == len(np.unique(numbers)) and saved in numbers


