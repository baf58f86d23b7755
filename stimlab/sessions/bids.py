"""A BIDS behavioural dataset (BIDS 1.9, "Behavioral experiments (with no neural recordings)") of one session or
of all the sessions of a study.

Layout::

    dataset_description.json   README   participants.tsv   participants.json
    sub-<label>/beh/sub-<label>_task-<task>_run-<n>_beh.tsv     (+ .json: every column, with units)
    sub-<label>/beh/sub-<label>_task-<task>_run-<n>_events.tsv  (+ .json)
    sub-<label>/sub-<label>_scans.tsv                            (+ .json: each run's session status and, for a
                                                                  session ended early, the experimenter's reason)

The participant label is the participant code with everything but letters and digits removed (BIDS labels are
alphanumeric; ``x2``, ``x3`` … added where two codes would collide, the code itself kept in participants.tsv);
the task label is the protocol file's name the same way; runs are numbered 1, 2, … per participant and task in
the order the sessions started. ``_beh.tsv`` is the trial table, ``_events.tsv`` one row per phase onset. Times
are seconds from the session's first frame; empty cells are ``n/a``; booleans ``true``/``false``.
"""

from __future__ import annotations

import json
import re

from ..version import __version__
from .dictionary import dictionary
from .trials import ending_key, session_events, session_origin_ms, trial_rows

__all__ = ["bids_label", "bids_events", "bids_files", "EVENT_LEVELS", "BIDS_VERSION"]

BIDS_VERSION = "1.9.0"
EVENT_LEVELS = {"adapt": "full adaptation", "top_up": "top-up adaptation", "gap": "background only",
                "test": "test stimulus", "respond": "waiting for the response"}


def bids_label(text: str, field: str = "participant") -> str:
    """A BIDS label: the letters and digits of ``text``.

    Examples
    --------
    >>> bids_label("P-01"), bids_label("afterimage_null.json".removesuffix(".json"))
    ('P01', 'afterimagenull')
    """
    from ..errors import InputError

    label = re.sub(r"[^A-Za-z0-9]", "", text)
    if not label:
        raise InputError(f"{text!r} has no letters or digits to make a BIDS label from", field=field)
    return label


def task_label(session: dict) -> str:
    return bids_label(session["protocol_file"].removesuffix(".json"), "protocol")


def bids_events(db, session: dict) -> list[dict]:
    """One event per phase onset: onset and duration (s), trial_type (the phase), trial, condition, frame, and on
    respond phases the response time (s), key and position(s)."""
    data = session["compiled"]
    events = session_events(db, session["id"])
    origin = session_origin_ms(db, session["id"]) or 0.0
    onsets = [e for e in events if e["kind"] == "phase_onset" and e["trial"] is not None]
    ends = {e["trial"]: e for e in events if e["kind"] == "trial_end"}
    dimensions = max([(c.get("response") or {}).get("positions", {}).get("dimensions", 1)
                      for c in data["conditions"] if (c.get("response") or {}).get("kind") == "adjustment"] or [0])
    positions = ["response_position"] if dimensions == 1 else [f"response_position_{i + 1}" for i in range(dimensions)]
    rows = []
    for i, onset in enumerate(onsets):
        later = onsets[i + 1]["t"] if i + 1 < len(onsets) else ends.get(onset["trial"], {}).get("t", onset["t"])
        if i + 1 < len(onsets) and onsets[i + 1]["trial"] != onset["trial"] and onset["trial"] in ends:
            later = min(later, ends[onset["trial"]]["t"])
        result = (ends.get(onset["trial"]) or {}).get("response") or {} if onset["phase"] == "respond" else {}
        rt = result.get("rt_ms")
        position = result.get("position")
        row = {"onset": round((onset["t"] - origin) / 1000, 6), "duration": round(max(later - onset["t"], 0) / 1000, 6),
               "trial_type": onset["phase"], "trial": onset["trial"],
               # practice trials stay in the events, marked, so that analysis can leave them out
               "practice": bool(data["trials"][onset["trial"]].get("practice", False)),
               "condition": data["conditions"][onset.get("condition", data["trials"][onset["trial"]]["condition"])]
               ["label"], "frame": onset.get("frame"), "response_time": None if rt is None else round(rt / 1000, 6),
               "response_key": ending_key(data, data["trials"][onset["trial"]], result) if result else None}
        for name, value in zip(positions, position if isinstance(position, list) else [position]):
            row[name] = None if value is None else round(float(value), 9)
        rows.append(row)
    return rows


def _cell(value) -> str:
    if value is None or value == "":
        return "n/a"
    if isinstance(value, bool):
        return "true" if value else "false"
    return str(value).replace("\t", " ")


def tsv(rows: list[dict], columns: list[str] | None = None) -> str:
    """Tab-separated text with a header; missing values ``n/a``."""
    if columns is None:
        columns = []
        for row in rows:
            columns += [k for k in row if k not in columns]
    lines = ["\t".join(columns)] + ["\t".join(_cell(row.get(c)) for c in columns) for row in rows]
    return "\n".join(lines) + "\n"


def _columns(rows: list[dict], first=()) -> list[str]:
    columns = list(first)
    for row in rows:
        columns += [k for k in row if k not in columns]
    return columns


def _events_sidecar(columns, levels_of_condition) -> dict:
    sidecar = dictionary(columns)
    sidecar["trial_type"]["Levels"] = EVENT_LEVELS
    if "condition" in sidecar:  # a session without a phase onset yet has only the three required columns
        sidecar["condition"]["Levels"] = levels_of_condition
    return sidecar


def bids_files(db, sessions: list[dict], *, name: str, authors=()) -> dict[str, bytes]:
    """The dataset as ``{relative path: content}`` for ``sessions`` (one, or all of a study's), in start order."""
    files: dict[str, bytes] = {}
    runs: dict[tuple, int] = {}
    scans: dict[str, list] = {}
    labels: dict[str, str] = {}  # participant code -> BIDS label, unique even where two codes share letters and digits

    def put(path, text):
        files[path] = (json.dumps(text, indent=2, ensure_ascii=False) + "\n" if isinstance(text, dict)
                       else text).encode("utf-8")

    for session in sorted(sessions, key=lambda s: (s["started_at"], s["id"])):
        code = session["participant"]
        if code not in labels:
            label = bids_label(code)
            taken = set(labels.values())
            sub = label if label not in taken else next(f"{label}x{n}" for n in range(2, 10**6)
                                                        if f"{label}x{n}" not in taken)
            labels[code] = sub
        sub, task = labels[code], task_label(session)
        # A dry run says so in its file names with the acquisition entity, numbered apart from real runs.
        acq = "_acq-dryrun" if session.get("dry_run") else ""
        run = runs[sub, task, acq] = runs.get((sub, task, acq), 0) + 1
        stem = f"sub-{sub}/beh/sub-{sub}_task-{task}{acq}_run-{run}"
        data = session["compiled"]
        trials = trial_rows(db, session)
        columns = _columns(trials)
        conditions = {c["label"]: "condition " + str(c["index"]) + ": " + ", ".join(f"{k} = {v}" for k, v in
                                                                                      c["labels"].items())
                      for c in data["conditions"]}
        put(f"{stem}_beh.tsv", tsv(trials, columns))
        scans.setdefault(sub, []).append({"filename": f"{stem.split('/', 1)[1]}_beh.tsv",
                                          "session_status": session["status"],
                                          "session_end_reason": session.get("end_reason"),
                                          "dry_run": bool(session.get("dry_run"))})
        beh = dictionary(columns)
        beh["condition"]["Levels"] = conditions
        put(f"{stem}_beh.json", {"TaskName": task, "TaskDescription": data["protocol"]["title"], **beh})
        events = bids_events(db, session)
        event_columns = _columns(events, ("onset", "duration", "trial_type"))
        put(f"{stem}_events.tsv", tsv(events, event_columns))
        put(f"{stem}_events.json", _events_sidecar(event_columns, conditions))  # column entries only
    for sub, rows in scans.items():
        put(f"sub-{sub}/sub-{sub}_scans.tsv", tsv(rows, ["filename", "session_status", "session_end_reason", "dry_run"]))
        put(f"sub-{sub}/sub-{sub}_scans.json", {
            "filename": {"Description": "The run's trial table, relative to the participant's folder"},
            "session_status": dictionary(["session_status"])["session_status"],
            "session_end_reason": dictionary(["session_end_reason"])["session_end_reason"],
            "dry_run": dictionary(["dry_run"])["dry_run"]})
    put("participants.tsv", tsv([{"participant_id": f"sub-{label}", "participant_code": code}
                                 for code, label in labels.items()], ["participant_id", "participant_code"]))
    put("participants.json", {"participant_id": {"Description": "BIDS participant label: the participant's "
                                                                "pseudonymous code, letters and digits only (xN "
                                                                "added where two codes would give the same label)"},
                              "participant_code": {"Description": "The participant's pseudonymous code in stimlab"}})
    put("dataset_description.json", {"Name": name, "BIDSVersion": BIDS_VERSION, "DatasetType": "raw",
                                     "Authors": list(authors) or ["Vale Street Colour Vision Laboratory"],
                                     "GeneratedBy": [{"Name": "stimlab", "Version": __version__}]})
    put("README", f"{name}\n\nBehavioural data exported by stimlab {__version__}. Each run is one session; "
                  "_beh.tsv holds one row per trial, _events.tsv one row per phase onset. Colours are in cone "
                  "contrast, DKL and device levels; the JSON sidecars describe every column and its unit.\n")
    return files
