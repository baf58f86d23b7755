"""Frame-timing quality of a session: dropped frames, the frame-interval histogram, onset error per phase, and the
phases that dropped frames stretched.

The runner counts a phase in frames, so a dropped frame lengthens the phase it falls in by at least one refresh
period: the next phase starts late. A phase is *stretched* when it lasted half a period or more longer than its
planned frames (``planned · period``, measured onset to onset); each is counted once per trial.
"""

from __future__ import annotations

import numpy as np

from .ingest import frame_blocks
from .trials import session_events

__all__ = ["timing"]


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
    # 16.670 ms alike at 60 Hz) and an edge falls exactly on the dropped-frame limit of 1.5 periods
    # (DROPPED_FRAME_PERIODS).
    width = period / 9
    edges = np.r_[0.0, (np.arange(28) + 0.5) * width]
    counts, _ = np.histogram(np.clip(intervals, 0, edges[-1] - 1e-9), bins=edges)
    onsets = [e for e in session_events(db, session["id"]) if e["kind"] == "phase_onset"]
    errors: dict[str, list] = {}
    stretched: dict[str, dict] = {}
    phases = data["schedules"]["first"] + data["schedules"]["repeat"]
    for a, b in zip(onsets, onsets[1:]):
        if a["trial"] != b["trial"]:
            continue
        planned = next((p.get("frames") for p in phases if p["phase"] == a["phase"]), None)
        if planned:
            error = (b["t"] - a["t"]) - planned * period
            errors.setdefault(b["phase"], []).append(error)
            if error >= period / 2:
                entry = stretched.setdefault(a["phase"], {"trials": set(), "max_ms": 0.0, "planned_ms": planned * period})
                entry["trials"].add(a["trial"])
                entry["max_ms"] = max(entry["max_ms"], error)
    gaps = np.flatnonzero(np.diff(numbers) != 1) if numbers.size > 1 else []
    return {"frames": int(numbers.size), "dropped_frames": int(dropped), "dropped_outside_trials": outside,
            "median_interval_ms": float(np.median(intervals)) if intervals.size else None,
            "histogram": {"edges_ms": edges.tolist(), "counts": counts.tolist()},
            "onset_error_ms": {k: {"mean": float(np.mean(v)), "max_abs": float(np.max(np.abs(v))), "n": len(v)}
                               for k, v in errors.items()},
            "frame_numbers_continuous": len(gaps) == 0, "period_ms": period,
            "stretched_phases": {k: {"trials": len(v["trials"]), "max_ms": v["max_ms"], "planned_ms": v["planned_ms"]}
                                 for k, v in stretched.items()},
            "stretched_trials": len(set().union(*[v["trials"] for v in stretched.values()]))}
