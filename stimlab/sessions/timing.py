"""Frame-timing quality of a session: dropped frames, the frame-interval histogram, onset error per phase."""

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
