"""Sessions logged as the runner logs them (phase onsets, trial ends, frames at 60 Hz), without a browser, for the
export, summary and study tests. ``respond(trial, condition)`` gives each trial's response fields."""

from __future__ import annotations

import numpy as np

from stimlab.sessions.ingest import get_session

PERIOD = 1000 / 60
RESPOND_FRAMES = 30


def create(client, protocol: str, participant: str) -> int:
    answer = client.post("/api/sessions", headers={"X-CSRF-Token": client.csrf},
                         json={"protocol": protocol, "display": 1, "participant": participant})
    assert answer.status_code == 201, answer.text
    return answer.get_json()["id"]


def run(app, client, protocol: str, participant: str, respond, t0: float = 1000.0) -> int:
    """Create a session of ``protocol`` and log every trial with the responses ``respond`` gives."""
    session_id = create(client, protocol, participant)
    db = app.extensions["stimlab.store"].connect()
    data = get_session(db, session_id)["compiled"]
    events, frames = [], {k: [] for k in ("frame", "t_raf", "t_callback", "trial", "phase", "dropped", "drawn")}
    frame, t = 0, t0

    def log(kind, trial=None, phase=None, **fields):
        events.append({"seq": len(events), "t": t, "kind": kind, "trial": trial, "phase": phase, "data": fields})

    for _ in range(3):  # settling into full screen: background only, no trial
        for key, value in zip(frames, (frame, t, t + 0.05, None, "settle", 0, ",".join(map(str, data["background"]["device"])))):
            frames[key].append(value)
        frame, t = frame + 1, round(t + PERIOD, 3)
    log("session_start", completed_trials=0)
    for trial in data["trials"]:
        condition = data["conditions"][trial["condition"]]
        for phase in data["schedules"][trial["schedule"]]:
            log("phase_onset", trial=trial["index"], phase=phase["phase"], frame=frame, condition=trial["condition"])
            items = []
            for name in phase.get("stimuli") or []:
                colour = condition["stimuli"][name]["colour"]
                patterned = "modulation_table" in colour or colour.get("device") is None
                items.append("patch" if patterned else ",".join(map(str, colour["device"])))
            count = RESPOND_FRAMES if phase["phase"] == "respond" else phase["frames"]
            for _ in range(count):
                for key, value in zip(frames, (frame, t, t + 0.05, trial["index"], phase["phase"], 0, ";".join(items))):
                    frames[key].append(value)
                frame, t = frame + 1, round(t + PERIOD, 3)
        fields = respond(trial, condition)
        log("trial_end", trial=trial["index"], condition=trial["condition"], dropped_frames=0, **fields)
    log("session_end", frames=frame, dropped_frames=0)
    step = 2000  # frames per batch; the events go with the last (session_end closes the session)
    starts = list(range(0, len(frames["frame"]), step))
    for batch, first in enumerate(starts):
        body = {"batch": batch, "frames": {k: v[first:first + step] for k, v in frames.items()},
                "events": events if batch == len(starts) - 1 else []}
        answer = client.post(f"/api/sessions/{session_id}/batches", headers={"X-CSRF-Token": client.csrf}, json=body)
        assert answer.status_code == 200, answer.text
    return session_id


def adjustment(position, response, rt_ms=1234.5):
    """The runner's result of an adjustment at ``position`` (a ladder value or a pair)."""
    low, step, count = (response["positions"][k] for k in ("low", "step", "count"))
    values = np.atleast_1d(position)
    index = [int(round((v - low) / step)) for v in values]
    flat = index[0] if len(index) == 1 else index[0] * count + index[1]
    return {"response": {"method": "adjustment", "position_index": index[0] if len(index) == 1 else index,
                         "position": [low + i * step for i in index], "device": response["device"][flat],
                         "rt_ms": rt_ms}}
