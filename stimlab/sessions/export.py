"""Session exports for analysis: tidy CSV (one row per trial), JSON with everything, BIDS-style events with a
sidecar, and the frame log. Reads a session from the SQLite database; no web import.

Response colours are recomputed from the compiled affine map (``origin_lms + position · axis_lms``), the same map
the runner's ladder was built from, so the exported cone contrast and DKL values are those of the device levels
the participant saw.
"""

from __future__ import annotations

import csv
import io
import json

import numpy as np

from ..colorimetry.spaces import LMS_to_DKL
from ..version import __version__
from .events import event_data
from .frame_log import FRAME_COLUMNS, FrameBlock
from .ingest import frame_blocks, iter_frames

__all__ = ["trial_rows", "session_json", "bids_events", "BIDS_SIDECAR", "frames_csv", "frames_csv_chunks", "rows_to_csv",
           "timing"]

AXES = ("L", "M", "S")
CSV_CHUNK_BLOCKS = 64  # stored blocks formatted together: about a minute of frames, a few MB at most
DKL = ("lum", "lm", "s")


def _events(db, session_id: int) -> list[dict]:
    return [{"seq": r[0], "t": r[1], "kind": r[2], "trial": r[3], "phase": r[4], **event_data(r[5])}
            for r in db.execute("SELECT seq, t_ms, kind, trial, phase, data FROM events WHERE session_id = ? "
                                "ORDER BY seq", (session_id,))]


def _spaces(LMS, data) -> dict:
    LMS_0 = np.array(data["background"]["lms"])
    obs = data["observer"]
    LMS = np.asarray(LMS, dtype=float)
    return {"cone_contrast": (LMS / LMS_0 - 1).tolist(), "dkl": LMS_to_DKL(LMS, LMS_0, obs["w_L"], obs["w_M"]).tolist()}


def _colour_columns(prefix: str, LMS, device, data) -> dict:
    spaces = _spaces(LMS, data)
    row = {f"{prefix}_cone_contrast_{a}": round(v, 6) for a, v in zip(AXES, spaces["cone_contrast"])}
    row |= {f"{prefix}_dkl_{a}": round(v, 6) for a, v in zip(DKL, spaces["dkl"])}
    row |= {f"{prefix}_device_{c}": v for c, v in zip("rgb", device or (None, None, None))}
    return row


def response_LMS(response: dict, position) -> np.ndarray:
    """Cone excitations at an adjustment position (a number, or two for a plane)."""
    position = np.atleast_1d(np.asarray(position, dtype=float))
    return np.array(response["origin_lms"]) + position @ np.array(response["axis_lms"])


def trial_rows(db, session: dict) -> list[dict]:
    """One row per trial: condition, stimuli and response in cone contrast, DKL and device levels, timing flags."""
    data = session["compiled"]
    events = _events(db, session["id"])
    ends = {e["trial"]: e for e in events if e["kind"] == "trial_end"}
    aborted = {}
    for e in events:
        if e["kind"] == "trial_aborted":
            aborted[e["trial"]] = aborted.get(e["trial"], 0) + 1
    timeouts = {e["trial"] for e in events if e["kind"] == "timeout"}
    rows = []
    for trial in data["trials"]:
        condition = data["conditions"][trial["condition"]]
        end = ends.get(trial["index"])
        row = {"session": session["id"], "participant": session["participant"],
               "protocol": data["protocol"]["title"], "display_sha256": data["display"]["sha256"],
               "observer": data["observer"]["key"], "trial": trial["index"], "block": trial["block"],
               # practice trials and dry runs are kept but marked: analysis leaves them out
               "practice": bool(trial.get("practice")), "dry_run": (data.get("dry_run") or {}).get("factor"),
               "condition": condition["label"], **{f"var_{k}": v for k, v in condition["labels"].items()},
               "target_side": trial.get("target_side"), "completed": end is not None,
               "restarts": aborted.get(trial["index"], 0)}
        for name, stimulus in condition["stimuli"].items():
            if not np.allclose(stimulus["colour"]["cone_contrast"], 0):
                row |= _colour_columns(name, stimulus["colour"]["lms"], stimulus["colour"]["device"], data)
        result = (end or {}).get("response") or {}
        row |= {"response_method": result.get("method"), "response_key": result.get("key"),
                "response_correct": result.get("correct"), "response_rt_ms": result.get("rt_ms"),
                "timed_out": trial["index"] in timeouts, "dropped_frames": (end or {}).get("dropped_frames")}
        response = condition.get("response")
        if response and response["kind"] == "adjustment" and "position" in result:
            position = [round(p, 9) for p in result["position"]]  # ladder values, free of float noise
            row["response_position"] = json.dumps(position) if len(position) > 1 else position[0]
            row |= _colour_columns("response", response_LMS(response, result["position"]), result.get("device"), data)
        if response and response["kind"] == "staircase":
            row["staircase_value"] = (end or {}).get("staircase_value")
        rows.append(row)
    return rows


def rows_to_csv(rows: list[dict]) -> str:
    columns = []
    for row in rows:
        columns += [k for k in row if k not in columns]
    out = io.StringIO()
    writer = csv.DictWriter(out, fieldnames=columns, lineterminator="\n")
    writer.writeheader()
    writer.writerows({k: ("" if v is None else v) for k, v in row.items()} for row in rows)
    return out.getvalue()


def timing(db, session: dict) -> dict:
    """Frame-timing quality: dropped frames, the frame-interval histogram, onset error per phase."""
    data = session["compiled"]
    period = 1000.0 / data["display"]["refresh_hz"]
    blocks = list(frame_blocks(db, session["id"]))
    stamps = np.concatenate([b.columns["t_raf"][~b.in_phase("pause")] for b in blocks] or [np.zeros(0)])
    numbers = np.concatenate([b.columns["frame"].astype(np.int64) for b in blocks] or [np.zeros(0, dtype=np.int64)])
    dropped = sum(b.dropped for b in blocks)
    outside = sum(int(np.count_nonzero(b.columns["dropped"][b.columns["trial"] < 0])) for b in blocks)
    intervals = np.diff(stamps) if stamps.size > 1 else np.zeros(0)
    intervals = intervals[intervals < 10 * period]  # gaps from pauses and resumes are not frame intervals
    # Bins a ninth of a period wide, centred on multiples of it: one bin holds the period itself (16.665 and
    # 16.670 ms alike at 60 Hz) and an edge falls exactly on the dropped-frame limit of 1.5 periods.
    width = period / 9
    edges = np.r_[0.0, (np.arange(28) + 0.5) * width]
    counts, _ = np.histogram(np.clip(intervals, 0, edges[-1] - 1e-9), bins=edges)
    onsets = [e for e in _events(db, session["id"]) if e["kind"] == "phase_onset"]
    errors: dict[str, list] = {}
    for a, b in zip(onsets, onsets[1:]):
        if a["trial"] != b["trial"]:
            continue
        phases = data["schedules"]["first"] + data["schedules"]["repeat"]
        planned = next((p.get("frames") for p in phases if p["phase"] == a["phase"]), None)
        if planned:
            errors.setdefault(b["phase"], []).append((b["t"] - a["t"]) - planned * period)
    gaps = np.flatnonzero(np.diff(numbers) != 1) if numbers.size > 1 else []
    return {"frames": int(numbers.size), "dropped_frames": int(dropped), "dropped_outside_trials": outside,
            "median_interval_ms": float(np.median(intervals)) if intervals.size else None,
            "histogram": {"edges_ms": edges.tolist(), "counts": counts.tolist()},
            "onset_error_ms": {k: {"mean": float(np.mean(v)), "max_abs": float(np.max(np.abs(v))), "n": len(v)}
                               for k, v in errors.items()},
            "frame_numbers_continuous": len(gaps) == 0, "period_ms": period}


def session_json(db, session: dict, profile: dict) -> dict:
    """Everything about a session, for archiving: protocol, compiled trials, profile, logs, checks."""
    frames = [list(f) for f in iter_frames(db, session["id"])]
    return {"stimlab_session_export": 1, "software_version": __version__, "exporter_version": __version__,
            "session": {k: session[k] for k in ("id", "participant", "status", "started_at", "ended_at",
                                                "protocol_file", "protocol_sha256", "software_version")}
            | {"end_reason": session.get("end_reason"), "dry_run": session.get("dry_run")},
            "acknowledgement": session["acknowledgement"], "checks": session["checks"],
            "observer": session["compiled"]["observer"], "display_profile": profile,
            "display_sha256": profile["sha256"], "compiled": session["compiled"],
            "events": _events(db, session["id"]),
            "frames": {"columns": ["frame", "t_raf", "t_callback", "trial", "phase", "dropped", "drawn"],
                       "rows": frames},
            "trials": trial_rows(db, session), "timing": timing(db, session)}


BIDS_SIDECAR = {
    "onset": {"Description": "Time of the phase's first frame (requestAnimationFrame timestamp) from the first "
                             "frame of the session", "Units": "s"},
    "duration": {"Description": "Time from this phase's first frame to the next phase's first frame", "Units": "s"},
    "trial_type": {"Description": "Phase of the trial", "Levels": {"adapt": "full adaptation", "top_up":
                   "top-up adaptation", "gap": "background only", "test": "test stimulus", "respond":
                   "waiting for the response"}},
    "trial": {"Description": "Trial index in the compiled protocol (0-based)"},
    "condition": {"Description": "Condition label: the condition variables and their levels"},
    "frame": {"Description": "Session frame number of the onset"},
    "practice": {"Description": "Whether the trial is a practice trial (not for analysis)",
                 "Levels": {"True": "practice trial", "False": "experimental trial"}},
    "response_time": {"Description": "Key press time after the onset of the respond phase (event.timeStamp "
                                     "minus the onset frame's timestamp)", "Units": "ms"},
    "response": {"Description": "Adjustment position, key or choice recorded at the end of the trial"},
}


def bids_events(db, session: dict) -> list[dict]:
    """BIDS-style events, one per phase onset: onset, duration, trial_type and our columns."""
    data = session["compiled"]
    events = _events(db, session["id"])
    first = next((float(b.columns["t_raf"][0]) for b in frame_blocks(db, session["id"])), 0.0)
    onsets = [e for e in events if e["kind"] == "phase_onset"]
    ends = {e["trial"]: e for e in events if e["kind"] == "trial_end"}
    rows = []
    for i, onset in enumerate(onsets):
        later = onsets[i + 1]["t"] if i + 1 < len(onsets) else ends.get(onset["trial"], {}).get("t", onset["t"])
        result = (ends.get(onset["trial"]) or {}).get("response") or {}
        respond = onset["phase"] == "respond"
        rows.append({"onset": round((onset["t"] - first) / 1000, 6), "duration": round(max(later - onset["t"], 0) / 1000, 6),
                     "trial_type": onset["phase"], "trial": onset["trial"],
                     "condition": data["conditions"][onset["condition"]]["label"], "frame": onset["frame"],
                     "practice": bool(data["trials"][onset["trial"]].get("practice")),
                     "response_time": result.get("rt_ms") if respond else "n/a",
                     "response": json.dumps([round(p, 9) for p in result["position"]] if "position" in result
                                            else result.get("key")) if respond and result else "n/a"})
    return rows


def events_tsv(rows: list[dict]) -> str:
    columns = list(BIDS_SIDECAR)
    lines = ["\t".join(columns)]
    for row in rows:
        lines.append("\t".join("n/a" if row.get(c) in (None, "") else str(row[c]) for c in columns))
    return "\n".join(lines) + "\n"


def frames_csv_chunks(db, session_id: int):
    """The frame log as CSV text in chunks (the header, then about a minute of frames each): memory stays flat."""
    yield ",".join(FRAME_COLUMNS) + "\n"
    chunk: list = []
    for block in frame_blocks(db, session_id):
        chunk.append(block)
        if len(chunk) == CSV_CHUNK_BLOCKS:
            yield FrameBlock.concatenate(chunk).csv()
            chunk = []
    if chunk:
        yield FrameBlock.concatenate(chunk).csv()


def frames_csv(db, session_id: int, out) -> int:
    """Write the frame log as CSV to a text stream (see :func:`frames_csv_chunks`); return the frame count.

    Only ``drawn`` can hold commas and it is quoted; it never holds quotes (digits, ',', ';' and names).
    """
    lines = 0
    for text in frames_csv_chunks(db, session_id):
        out.write(text)
        lines += text.count("\n")
    return lines - 1
