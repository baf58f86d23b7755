"""The frame sequence a session shows, as the photosensitivity audit reads it: every trial in compiled order, every
phase of its schedule, on a grid of sample pixels, grouped into *classes* of samples that show the same colour at
every frame.

Samples are pixels at a stride chosen from the pixels per degree (the audit's scale); each phase's regions come
from the reference renderer (:func:`stimlab.experiment.render.phase_regions`), so what is analysed is what the
runner draws, occlusion included. Two samples that lie in the same region in every phase of the sequence always
show the same colour; the audit computes one signal per class, and a signal per phase only where the region
changes within the phase (steady stretches are one run).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from ..experiment.render import frame_items, phase_regions, schedule_of
from ..experiment.timecourse import STEPS, steps_for_phase

__all__ = ["Occurrence", "Sequence", "build_sequence", "segments", "sampling", "SAMPLE_DEG", "RESPOND_FRAMES_S"]

SAMPLE_DEG = 0.2
"""The audit samples a pixel about every 0.2° (at least every pixel): finer than the smallest flash area matters."""

RESPOND_FRAMES_S = 2.0
"""A respond phase has no fixed length; it is analysed for this long (or its time-out, if shorter)."""


@dataclass
class Occurrence:
    """One phase of one trial in the sequence: where it starts (frame), how long it lasts and its regions."""

    trial: int
    condition: int
    phase: str
    phase_index: int
    start: int
    frames: int
    items: list
    regions: object
    fixation: bool
    plan_frames: int | None


@dataclass
class Sequence:
    """The sampled frame sequence: sample positions and solid angles, classes and the phases in order."""

    refresh_hz: float
    total_frames: int
    columns: np.ndarray
    rows: np.ndarray
    solid_angle: np.ndarray  # sr per sample, (rows, columns)
    direction: np.ndarray  # unit vectors from the eye, (rows, columns, 3)
    classes: np.ndarray  # class of each sample, (rows, columns)
    representative: np.ndarray  # one flat sample index per class
    occurrences: list = field(default_factory=list)


def sampling(data: dict, stride: int | None = None):
    """Sample pixel columns and rows, each sample's solid angle (sr) and direction from the eye (unit vectors)."""
    width, height = data["display"]["size_px"]
    if stride is None:
        stride = max(1, int(data["pixels_per_degree"] * SAMPLE_DEG))
    columns = np.arange(stride // 2, width, stride)
    rows = np.arange(stride // 2, height, stride)
    cm_x = data["display"]["size_cm"][0] / width
    cm_y = data["display"]["size_cm"][1] / height
    distance = data["viewing_distance_cm"]
    x = ((columns + 0.5) - width / 2) * cm_x
    y = (height / 2 - (rows + 0.5)) * cm_y
    X, Y = np.meshgrid(x, y)
    r2 = X * X + Y * Y + distance * distance
    # A flat pixel of area A at distance √r2, tilted by the angle whose cosine is D/√r2: A·D/r2^1.5 sr.
    solid_angle = (cm_x * stride) * (cm_y * stride) * distance / r2 ** 1.5
    direction = np.stack([X, Y, np.full_like(X, distance)], axis=-1) / np.sqrt(r2)[..., None]
    return columns, rows, solid_angle, direction


def _phase_frames(phase: dict, refresh: float) -> int:
    frames = phase.get("frames")
    if frames is None:
        timeout = phase.get("timeout_frames") or math.inf
        frames = int(min(timeout, RESPOND_FRAMES_S * refresh))
    return frames


def segments(data: dict) -> list[tuple[list[int], int]]:
    """Stretches of consecutive trials that together contain every one-second window of the session.

    Returns ``(trials, own)`` pairs: the trial ``own`` with the trial before it and the trials after it that cover
    at least one second, once for each different such stretch. Trials are told apart by condition, schedule and
    2AFC side; those that differ only in an adjustment's start position count as the same (the reach of the
    adjustment is analysed separately, at its ladder ends).
    """
    refresh = data["display"]["refresh_hz"]
    trials = data["trials"]
    lengths = {}
    kinds = []
    for t, trial in enumerate(trials):
        which = schedule_of(data, trial, t == 0)
        kinds.append((trial["condition"], which, trial.get("target_side")))
        if which not in lengths:
            lengths[which] = sum(_phase_frames(p, refresh) for p in data["schedules"][which])
    seen, out = set(), []
    for t in range(len(trials)):
        end, covered = t, 0
        while end + 1 < len(trials) and covered < refresh:
            end += 1
            covered += lengths[kinds[end][1]]
        first = max(0, t - 1)
        key = (kinds[first] if first < t else None, kinds[t], tuple(kinds[t + 1:end + 1]), t == 0)
        if key not in seen:
            seen.add(key)
            out.append((list(range(first, end + 1)), t))
    return out


def build_sequence(compiled, trials=None, *, ladder=None, stride: int | None = None, cache: dict | None = None,
                   grid=None) -> Sequence:
    """The frame sequence of ``trials`` (indices in compiled order, default all) as the runner shows them in a row.

    ``ladder``: an adjustment position shown in respond phases (default: each trial's start); ``cache`` (regions)
    and ``grid`` (:func:`sampling`) may be shared between calls on the same compiled protocol.
    """
    data = compiled.data
    refresh = data["display"]["refresh_hz"]
    columns, rows, solid_angle, direction = grid or sampling(data, stride)
    cache = {} if cache is None else cache
    occurrences = []
    start = 0
    maps = {}
    for t in range(len(data["trials"])) if trials is None else trials:
        trial = data["trials"][t]
        which = schedule_of(data, trial, t == 0)
        for p, phase in enumerate(data["schedules"][which]):
            frames = _phase_frames(phase, refresh)
            if frames == 0:
                continue
            items = frame_items(data, trial, phase, ladder=ladder)
            fixation = phase.get("fixation", True)
            key = (which, p, trial.get("target_side"), columns.size, rows.size)
            if key not in cache:
                cache[key] = phase_regions(data, items, fixation and bool(data.get("fixation")), columns, rows)
            maps[key] = cache[key]
            occurrences.append(Occurrence(t, trial["condition"], phase["phase"], p, start, frames, items,
                                          cache[key], fixation, phase.get("frames")))
            start += frames
    # Classes: samples with the same region label in every distinct region map (once per set of maps).
    classes_key = ("classes", *sorted(maps))
    if classes_key not in cache:
        composite = np.zeros(rows.size * columns.size, dtype=np.int64)
        bound = 1
        for regions in maps.values():
            if bound * (len(regions.keys) + 1) > 2**62:  # renumber before the codes could overflow
                _, composite = np.unique(composite, return_inverse=True)
                composite, bound = composite.ravel(), int(composite.max()) + 1
            composite = composite * (len(regions.keys) + 1) + regions.labels.ravel()
            bound *= len(regions.keys) + 1
        _, representative, composite = np.unique(composite, return_index=True, return_inverse=True)
        composite = composite.ravel()
        cache[classes_key] = (composite.reshape(rows.size, columns.size), representative)
    classes, representative = cache[classes_key]
    return Sequence(float(refresh), start, columns, rows, solid_angle, direction, classes, representative,
                    occurrences)


_ARRAYS: dict = {}


def _as_array(table: list) -> np.ndarray:
    """A compiled table of device levels as an (n, 3) array, −1 where out of gamut (kept while the list lives)."""
    key = id(table)
    if key not in _ARRAYS or _ARRAYS[key][0] is not table:
        if len(_ARRAYS) > 256:
            _ARRAYS.clear()
        _ARRAYS[key] = (table, np.array([t if t is not None else (-1, -1, -1) for t in table], dtype=np.int64))
    return _ARRAYS[key][1]


def _table_device(data, item, region, steps: np.ndarray, value) -> np.ndarray:
    """Device levels (n, 3) of one region of an item at each of ``steps`` (−1 where out of gamut)."""
    from ..experiment.plan import PROFILE_SCALE

    def pick(table, index):
        return _as_array(table)[index]

    response = item.response if region == "colour" else None  # a ladder sets the first colour only
    if item.response is not None and region == "second_colour":
        device = item.stimulus["second_colour"]["device"]
        return np.repeat(np.array(device if device is not None else (-1, -1, -1), dtype=np.int64)[None, :],
                         steps.size, axis=0)
    if response is not None:
        if response["kind"] == "adjustment":
            normal = pick(response["device"], np.full(steps.size, item.ladder))
            if response.get("device_opposite"):
                opposite = pick(response["device_opposite"], np.full(steps.size, item.ladder))
                return np.where((steps < 0)[:, None], opposite, normal)
            return normal
        if value is None:
            return pick(response["device"], np.full(steps.size, item.ladder))
        index = (item.ladder * steps * value + STEPS * PROFILE_SCALE // 2) // (STEPS * PROFILE_SCALE)
        return pick(response["device"], np.clip(index, 0, len(response["device"]) - 1))
    colour = item.stimulus[region]
    if value is not None:
        index = STEPS + (steps * value + PROFILE_SCALE // 2) // PROFILE_SCALE
        return pick(item.stimulus["colour"]["modulation_table"], np.clip(index, 0, 2 * STEPS))
    table = colour.get("modulation_table") if item.stimulus["colour"].get("modulation_table") else None
    device = np.array(colour["device"] if colour["device"] is not None else (-1, -1, -1), dtype=np.int64)
    if table is None:
        return np.repeat(device[None, :], steps.size, axis=0)
    table_device = pick(table, steps + STEPS)
    return np.where((steps == STEPS)[:, None], device[None, :], table_device)


def region_signal(data: dict, occurrence: Occurrence, key: tuple) -> tuple[np.ndarray, np.ndarray]:
    """The device levels a region shows through one phase, as runs: (device levels per run (n, 3), first frame of each run
    within the phase)."""
    if key[0] in ("background", "fixation"):
        device = data["background"]["device"] if key[0] == "background" else data["fixation"]["device"]
        return np.array([device], dtype=np.int64), np.zeros(1, dtype=np.int64)
    i, region, value = key
    item = occurrence.items[i]
    course = item.course
    if len(course["cycle"]) == 1 and not course["head"] and not course["tail"]:  # steady: one run
        return _table_device(data, item, region, np.array(course["cycle"]), value), np.zeros(1, dtype=np.int64)
    steps = steps_for_phase(course, occurrence.frames)  # an open-ended phase's course has no tail
    unique, inverse = np.unique(steps, return_inverse=True)
    device = _table_device(data, item, region, unique, value)[inverse.ravel()]
    change = np.r_[True, np.any(device[1:] != device[:-1], axis=1)]
    starts = np.flatnonzero(change)
    return device[starts], starts
