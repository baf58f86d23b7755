"""The trial table: one row per trial with everything an analysis needs, one typed column per coordinate.

Every stimulus's colour and second colour, the adjustment's start (after jitter) and the response are given in
cone contrast, DKL and device levels. A stimulus that alternates about the background (square or counterphase
flicker, a grating's bars) has its other extreme too, ``<stimulus>_opposite_…`` (and ``_second_opposite_…``):
``LMS_opposite = 2·LMS_0 − LMS``, at the device levels the compiler worked out for modulation −1; a flickering
adjusted target (flicker photometry) likewise has ``response_opposite_…`` at the runner's opposite ladder.

Adjustment colours are recomputed from the compiled affine map
(``origin_lms + position · axis_lms``), the same map the runner's ladder was built from, so the exported values
are those of the device levels the participant saw. Times are seconds from the session's first frame.

Every row repeats the session's status and, for a session ended early, the experimenter's reason, so that a
table read on its own says the session was cut short.

Flags that older sessions do not carry (``practice`` on a compiled trial, ``dry_run`` on a session) read as
``False``.
"""

from __future__ import annotations

import numpy as np

from ..colorimetry.spaces import LMS_to_DKL
from .events import event_data

__all__ = ["trial_rows", "ending_key", "session_events", "session_origin_ms", "phase_names", "response_LMS", "colour_columns",
           "AXES", "DKL", "CHANNELS"]

AXES = ("L", "M", "S")
DKL = ("lum", "lm", "s")
CHANNELS = ("r", "g", "b")
COLOUR_KEYS = {"colour": "", "second_colour": "_second"}


def session_events(db, session_id: int) -> list[dict]:
    """The session's events in order, each ``{"seq", "t" (ms, browser clock), "kind", "trial", "phase", …data}``."""
    return [{**event_data(r[5]), "seq": r[0], "t": r[1], "kind": r[2], "trial": r[3], "phase": r[4]}
            for r in db.execute("SELECT seq, t_ms, kind, trial, phase, data FROM events WHERE session_id = ? "
                                "ORDER BY seq", (session_id,))]


def session_origin_ms(db, session_id: int) -> float | None:
    """The first frame's requestAnimationFrame timestamp (ms), the zero of every exported time; None before any."""
    from .ingest import frame_blocks

    block = next(frame_blocks(db, session_id), None)
    return float(block.columns["t_raf"][0]) if block is not None else None


def phase_names(data: dict) -> list[str]:
    """The trial phases of a compiled protocol, in schedule order, each once."""
    names: list[str] = []
    for phase in data["schedules"]["first"] + data["schedules"]["repeat"]:
        if phase["phase"] not in names:
            names.append(phase["phase"])
    return names


def response_LMS(response: dict, position) -> np.ndarray:
    """Cone excitations at an adjustment position (a number, or two for a plane), from the compiled affine map."""
    position = np.atleast_1d(np.asarray(position, dtype=float))
    return np.array(response["origin_lms"]) + position @ np.array(response["axis_lms"])


def colour_columns(prefix: str, LMS, device, data: dict) -> dict:
    """``prefix_cone_contrast_L…``, ``prefix_dkl_lum…`` and ``prefix_device_r…`` of one colour (None when unknown)."""
    row: dict = {}
    if LMS is None:
        values = [None] * 6
    else:
        LMS_0 = np.array(data["background"]["lms"])
        obs = data["observer"]
        LMS = np.asarray(LMS, dtype=float)
        values = [round(float(v), 9) + 0.0 for v in (LMS / LMS_0 - 1)]  # + 0.0: no -0.0
        values += [round(float(v), 9) + 0.0 for v in LMS_to_DKL(LMS, LMS_0, obs["w_L"], obs["w_M"])]
    row |= {f"{prefix}_cone_contrast_{a}": v for a, v in zip(AXES, values[:3])}
    row |= {f"{prefix}_dkl_{a}": v for a, v in zip(DKL, values[3:])}
    row |= {f"{prefix}_device_{c}": (None if device is None else int(v)) for c, v in
            zip(CHANNELS, device if device is not None else (None,) * 3)}
    return row


def opposite_LMS(LMS, data: dict) -> np.ndarray:
    """The other extreme of a colour alternating about the background: ``2·LMS_0 − LMS`` (linear in cone
    excitations, as the display's linear RGB is: the compiler's ``2·RGB_0 − RGB``)."""
    return 2 * np.array(data["background"]["lms"]) - np.asarray(LMS, dtype=float)


def _opposite_device(colour: dict):
    return next((e["device"] for e in colour.get("extremes") or [] if e["modulation"] == -1.0), None)


def _position_columns(name: str, position, dimensions: int) -> dict:
    if position is None:
        position = [None] * dimensions
    else:  # ladder values, free of float noise
        position = [round(float(p), 9) for p in np.atleast_1d(position)]
    if dimensions == 1:
        return {name: position[0]}
    return {f"{name}_{i + 1}": p for i, p in enumerate(position)}


def _ladder(response: dict, index, table=None):
    """Position (axis units) and device levels (from ``table``, the ladder's own by default) of a ladder index (a
    number, or a pair for a plane)."""
    low, step, count = (response["positions"][k] for k in ("low", "step", "count"))
    table = response["device"] if table is None else table
    index = [int(i) for i in np.atleast_1d(index)]
    flat = index[0] if len(index) == 1 else index[0] * count + index[1]
    device = table[flat] if 0 <= flat < len(table) else None
    return [low + i * step for i in index], device


def ending_key(data: dict, trial: dict, result: dict) -> str | None:
    """The key that ended a trial (DOM ``KeyboardEvent.key``): the runner's record of it, or, for an adjustment
    logged before the runner recorded its confirming key, the respond phase's only confirm key (when there is one
    confirm key, no other key can have ended the trial); None for no response (a timeout)."""
    if result.get("key") is not None or result.get("method") != "adjustment":
        return result.get("key")
    schedule = data["schedules"].get(trial.get("schedule") or "first") or []
    confirm = next((p.get("confirm") for p in schedule if p["phase"] == "respond"), None) or []
    return confirm[0] if len(confirm) == 1 else None


def _onsets(events: list[dict], origin: float | None, names: list[str]) -> dict[int, dict]:
    """Per trial, the last onset of each phase (a restarted trial's completed run) in seconds and frames."""
    out: dict[int, dict] = {}
    for e in events:
        if e["kind"] != "phase_onset" or e["trial"] is None:
            continue
        row = out.setdefault(e["trial"], {})
        row[f"onset_{e['phase']}_s"] = None if origin is None else round((e["t"] - origin) / 1000, 6)
        row[f"onset_{e['phase']}_frame"] = e.get("frame")
    empty = {k: None for n in names for k in (f"onset_{n}_s", f"onset_{n}_frame")}
    return {trial: empty | row for trial, row in out.items()} | {-1: empty}


def trial_rows(db, session: dict) -> list[dict]:
    """One row per trial: condition, flags, phase onsets, every stimulus colour, the start and the response.

    Columns are described, with units, by :func:`stimlab.sessions.dictionary.describe`.
    """
    data = session["compiled"]
    events = session_events(db, session["id"])
    origin = session_origin_ms(db, session["id"])
    names = phase_names(data)
    onsets = _onsets(events, origin, names)
    ends = {e["trial"]: e for e in events if e["kind"] == "trial_end"}
    aborted: dict[int, int] = {}
    for e in events:
        if e["kind"] == "trial_aborted":
            aborted[e["trial"]] = aborted.get(e["trial"], 0) + 1
    timeouts = {e["trial"] for e in events if e["kind"] == "timeout"}
    dry_run = bool(session.get("dry_run") or data.get("dry_run") or False)
    rows = []
    for trial in data["trials"]:
        condition = data["conditions"][trial["condition"]]
        end = ends.get(trial["index"])
        end_t = None if end is None or origin is None else round((end["t"] - origin) / 1000, 6)
        row = {"session": session["id"], "participant": session["participant"],
               "session_status": session.get("status"), "session_end_reason": session.get("end_reason"),
               "protocol_sha256": session.get("protocol_sha256") or data["protocol"]["sha256"],
               "display_sha256": data["display"]["sha256"], "trial": trial["index"], "block": trial["block"],
               "condition": condition["label"], "condition_index": trial["condition"],
               **{f"var_{k}": v for k, v in condition["labels"].items()},
               "practice": bool(trial.get("practice", False)), "dry_run": dry_run,
               "target_side": trial.get("target_side"), "completed": end is not None,
               "restarts": aborted.get(trial["index"], 0), "timed_out": trial["index"] in timeouts,
               "dropped_frames": (end or {}).get("dropped_frames"),
               **onsets.get(trial["index"], onsets[-1]), "end_s": end_t}
        for name, stimulus in condition["stimuli"].items():
            for key, suffix in COLOUR_KEYS.items():
                if key in stimulus:
                    colour = stimulus[key]
                    row |= colour_columns(f"{name}{suffix}", colour["lms"], colour.get("device"), data)
                    if any(e["modulation"] == -1.0 for e in colour.get("extremes") or []):
                        row |= colour_columns(f"{name}{suffix}_opposite", opposite_LMS(colour["lms"], data),
                                              _opposite_device(colour), data)
        result = (end or {}).get("response") or {}
        rt = result.get("rt_ms")
        row |= {"response_method": result.get("method"), "response_key": ending_key(data, trial, result),
                "response_choice": result.get("choice"), "response_correct": result.get("correct"),
                "response_time_s": None if rt is None else round(rt / 1000, 6)}
        response = condition.get("response")
        if response and response["kind"] == "adjustment":
            dimensions = response["positions"]["dimensions"]
            start = trial.get("start")
            position, device = _ladder(response, start) if start is not None else (None, None)
            row |= _position_columns("start_position", position, dimensions)
            row |= colour_columns("start", None if position is None else response_LMS(response, position), device,
                                  data)
            moved = result.get("position")
            row |= _position_columns("response_position", moved, dimensions)
            LMS = None if moved is None else response_LMS(response, moved)
            row |= colour_columns("response", LMS, result.get("device"), data)
            if response.get("device_opposite"):  # a flickering target alternates with its opposite
                device = None
                if moved is not None:
                    device = _ladder(response, [round((m - response["positions"]["low"]) / response["positions"]["step"])
                                                for m in np.atleast_1d(moved)], response["device_opposite"])[1]
                row |= colour_columns("response_opposite", None if LMS is None else opposite_LMS(LMS, data), device,
                                      data)
        if response and response["kind"] == "staircase":
            value = (end or {}).get("staircase_value")
            row["stimulus_position"] = None if value is None else round(float(value), 9)
            device = None
            if value is not None:
                low, step = response["positions"]["low"], response["positions"]["step"]
                index = int(round((value - low) / step))
                device = response["device"][index] if 0 <= index < len(response["device"]) else None
            row |= colour_columns("tested", None if value is None else response_LMS(response, value), device, data)
        rows.append(row)
    return rows
