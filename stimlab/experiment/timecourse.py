"""The time-course rule: whole frames for every phase and, for every frame of a phase, the step of a stimulus's
modulation, worked out once here and looked up by the runner, the reference renderer and the audit alike.

A *step* ``q`` is a whole number from −255 to 255 (:data:`STEPS`): modulation ``q / 255`` of the stimulus's change
from the background, so ``q + 255`` indexes its compiled modulation table (511 entries, −1 to 1) and 255 is its own
colour. A course is sent as

- ``cycle``: the steps of one period, shown at frame ``k`` of a phase as ``cycle[k % len(cycle)]``;
- ``head``: steps for the first ``len(head)`` frames (a ramp on), used instead of the cycle there;
- ``tail``: steps for the last ``len(tail)`` frames of a phase of known length (a ramp off).

Rules (all with exact rational arithmetic on the protocol's numbers, so no rounding differs between programs):

- a phase of ``s`` seconds at ``R`` Hz lasts ``floor(s·R + ½)`` frames, at least one if ``s > 0``;
- square flicker at ``f`` Hz has a period of ``N = max(2, floor(R/f + ½))`` whole frames, the first ``ceil(N/2)``
  of them at +1 (or on) and the rest at −1 (or off); it is shown and reported at ``R/N`` Hz (12 Hz at 60 Hz:
  5 frames, 3 + 2, exactly 12 Hz);
- sine and counterphase modulation at frame ``k`` is ``sin(2π·p/D)`` with ``f/R = n/D`` in lowest terms and
  ``p = k·n mod D``, so the period is exactly ``D`` frames;
- ``mode: on_off`` maps modulation ``m`` to ``(1 + m)/2``; ramps multiply by ``min(1, (k + 1)/frames_on)`` and
  ``min(1, (frames − k)/frames_off)``;
- a step is ``floor(255·m + ½)``.
"""

from __future__ import annotations

import math
from fractions import Fraction

import numpy as np
from numpy.typing import NDArray

__all__ = ["DROPPED_FRAME_PERIODS", "STEPS", "phase_frames", "square_period_frames", "shown_frequency_hz",
           "course_plan", "steps_at", "steps_for_phase", "MIN_SQUARE_PERIOD_FRAMES"]

STEPS = 255
"""Modulation steps either side of the background: the size of the compiled tables' half range."""

DROPPED_FRAME_PERIODS = 1.5
"""A frame interval of this many refresh periods or more is a dropped frame (common practice). The compiler sends
it to the runner, which flags frames by it; the timing summary and figures read it from here."""

MIN_SQUARE_PERIOD_FRAMES = 2
"""Shortest square-flicker period in frames: one frame on and one off, i.e. flicker at half the refresh rate at
most (the Nyquist limit of a display refreshed at R Hz is R/2)."""

MAX_PERIOD_FRAMES = 1_000_000
"""Longest exact sine period sent as one cycle; a frequency needing more is approximated to this denominator."""


def _exact(value: float) -> Fraction:
    return Fraction(str(value)) if not isinstance(value, Fraction) else value


def _round_half_up(x):
    return np.floor(np.asarray(x, dtype=float) + 0.5).astype(int)


def phase_frames(seconds: float, refresh_hz: float) -> int:
    """Whole frames a phase of ``seconds`` (s, ≥ 0) lasts at ``refresh_hz`` (Hz): ``floor(s·R + ½)``, at least 1.

    Parameters
    ----------
    seconds
        Phase duration (s); 0 or less gives 0 frames.
    refresh_hz
        Display refresh rate (Hz, > 0).

    Returns
    -------
    int
        Frames (≥ 1 when ``seconds > 0``), by exact rational arithmetic on the decimal values.

    Examples
    --------
    >>> phase_frames(0.26, 60), phase_frames(0.003, 120), phase_frames(0, 60)
    (16, 1, 0)
    """
    if seconds <= 0:
        return 0
    return max(1, math.floor(_exact(seconds) * _exact(refresh_hz) + Fraction(1, 2)))


def square_period_frames(frequency_hz: float, refresh_hz: float) -> int:
    """Whole frames in one period of square flicker: ``max(2, floor(R/f + ½))``.

    Parameters
    ----------
    frequency_hz
        Requested flicker frequency (Hz, > 0).
    refresh_hz
        Display refresh rate (Hz, > 0).

    Returns
    -------
    int
        Period in frames (≥ 2); the first ``ceil(N/2)`` frames are on.

    Examples
    --------
    >>> square_period_frames(12, 60), square_period_frames(15, 60), square_period_frames(40, 60)
    (5, 4, 2)
    """
    return max(MIN_SQUARE_PERIOD_FRAMES, math.floor(_exact(refresh_hz) / _exact(frequency_hz) + Fraction(1, 2)))


def _sine_period(frequency_hz: float, refresh_hz: float) -> tuple[int, int]:
    ratio = (_exact(frequency_hz) / _exact(refresh_hz)).limit_denominator(MAX_PERIOD_FRAMES)
    return ratio.numerator, ratio.denominator


def shown_frequency_hz(course: dict, refresh_hz: float) -> float | None:
    """The frequency (Hz) the frames actually show for a course, or ``None`` for a steady one.

    Parameters
    ----------
    course
        A compiled time course: ``kind`` (``steady``, ``square``, ``sine``, ``counterphase``) and ``frequency_hz``.
    refresh_hz
        Display refresh rate (Hz, > 0).

    Returns
    -------
    float or None
        ``R/N`` Hz for square flicker of ``N`` frames, ``R·n/D`` Hz for sine (``f/R ≈ n/D``, ``D`` ≤ 10⁶ frames).

    Examples
    --------
    >>> shown_frequency_hz({"kind": "square", "frequency_hz": 13}, 60)
    12.0
    """
    kind = course.get("kind", "steady")
    if kind == "steady":
        return None
    if kind == "square":
        return float(refresh_hz) / square_period_frames(course["frequency_hz"], refresh_hz)
    n, d = _sine_period(course["frequency_hz"], refresh_hz)
    return float(refresh_hz) * n / d


def _cycle_modulation(course: dict, refresh_hz: float) -> NDArray[np.float64]:
    kind = course.get("kind", "steady")
    if kind == "steady":
        return np.ones(1)
    if kind == "square":
        period = square_period_frames(course["frequency_hz"], refresh_hz)
        m = np.where(np.arange(period) < (period + 1) // 2, 1.0, -1.0)
    else:
        n, d = _sine_period(course["frequency_hz"], refresh_hz)
        m = np.sin(2 * np.pi * ((np.arange(d, dtype=np.int64) * n) % d) / d)
    if course.get("mode") == "on_off":
        m = (1 + m) / 2
    return m


def _ramp_frames(milliseconds, refresh_hz) -> int:
    return phase_frames(milliseconds / 1000, refresh_hz) if milliseconds else 0


def course_plan(course: dict, refresh_hz: float, frames: int | None) -> dict:
    """The steps of a time course in a phase of ``frames`` frames (``None``: open-ended, e.g. a respond phase).

    Parameters
    ----------
    course
        A compiled time course: ``kind``, ``frequency_hz`` (Hz), optional ``mode`` (``on_off``) and ramps
        ``ramp_on_ms`` / ``ramp_off_ms`` (ms, ≥ 0).
    refresh_hz
        Display refresh rate (Hz, > 0).
    frames
        Frames in the phase (≥ 0), or ``None`` when open-ended (no ramp off then).

    Returns
    -------
    dict
        ``{"cycle": [...], "head": [...], "tail": [...]}``, steps from −255 to 255 (see the module docstring).
    """
    m = _cycle_modulation(course, refresh_hz)
    cycle = _round_half_up(STEPS * m)
    on = _ramp_frames(course.get("ramp_on_ms"), refresh_hz)
    off = _ramp_frames(course.get("ramp_off_ms"), refresh_hz) if frames else 0
    head: list = []
    tail: list = []
    if on or off:
        length = frames if frames else on
        k = np.arange(length)
        envelope = np.ones(length)
        if on:
            envelope *= np.minimum(1.0, (k + 1) / on)
        if off:
            envelope *= np.minimum(1.0, (length - k) / off)
        steps = _round_half_up(STEPS * m[k % m.size] * envelope)
        ramped = max(on, 0)
        if frames and off:
            # Frames in a ramp on or off are sent one by one; frames between them follow the cycle.
            start_tail = max(ramped, frames - off)
            head, tail = steps[:ramped].tolist(), steps[start_tail:].tolist()
        else:
            head = steps[:ramped].tolist()
    return {"cycle": cycle.tolist(), "head": head, "tail": tail}


def steps_at(plan: dict, frame: int, frames: int | None) -> int:
    """The step shown at ``frame`` (0-based, within the phase) of a phase of ``frames`` frames: the runner's lookup.

    Parameters
    ----------
    plan
        A course plan from :func:`course_plan`.
    frame
        Frame index within the phase (0 to ``frames − 1``).
    frames
        Frames in the phase, or ``None`` when open-ended.

    Returns
    -------
    int
        Step from −255 to 255.

    Examples
    --------
    >>> plan = course_plan({"kind": "square", "frequency_hz": 12}, 60, 10)
    >>> [steps_at(plan, k, 10) for k in range(5)]
    [255, 255, 255, -255, -255]
    """
    head, tail, cycle = plan["head"], plan["tail"], plan["cycle"]
    if frame < len(head):
        return head[frame]
    if frames and tail and frames - frame <= len(tail):
        return tail[len(tail) - (frames - frame)]
    return cycle[frame % len(cycle)]


def steps_for_phase(plan: dict, frames: int) -> NDArray[np.int_]:
    """The steps of every frame of a phase of ``frames`` frames, as :func:`steps_at` gives them one by one.

    Parameters
    ----------
    plan
        A course plan from :func:`course_plan`.
    frames
        Frames in the phase (≥ 0).

    Returns
    -------
    NDArray[np.int_]
        Steps from −255 to 255, shape ``(frames,)``.
    """
    cycle = np.asarray(plan["cycle"], dtype=int)
    out = cycle[np.arange(frames) % cycle.size]
    head = np.asarray(plan["head"], dtype=int)[:frames]
    out[:head.size] = head
    tail = np.asarray(plan["tail"], dtype=int)
    if tail.size and frames:
        # Only the tail frames that fall after the head (as in steps_at).
        start = frames - tail.size
        keep = np.arange(tail.size) + start >= head.size
        out[start + np.flatnonzero(keep)] = tail[keep]
    return out
