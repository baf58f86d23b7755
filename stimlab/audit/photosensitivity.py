"""Photosensitivity audit on rendered frames: general and red flashes per pixel over the whole frame sequence of a
compiled protocol, against WCAG 2.2 success criterion 2.3.1 ("Three Flashes or Below Threshold") and its
definitions of the general flash and red flash thresholds.

The sequence is every trial in compiled order and every phase of its schedule (:mod:`stimlab.audit.sequence`), so
flashes made by phase changes within a trial and between consecutive trials count as well as designed flicker.
For each class of sample pixels the relative luminance (luminance over the display's white, from the display
model) and, for red flashes, the linear RGB and CIE 1976 u′v′ of every run of frames are formed, and the
counting functions of :mod:`stimlab.audit.flashes` find the transitions and the flashes in every one-second window
``[t, t + 1 s)``. For each window the pixels flashing more than three times form the flashing area; its largest
solid angle within any 10° field is found over fields centred on the flashing pixels, with each sample pixel's solid
angle from the viewing distance and the display's size (no flat-screen estimate). Content fails when some window
has more than three flashes and more than 0.006 sr flashes together within a 10° field.

Gratings finer than :data:`FINE_PATTERN_CYCLES_PER_DEG` are a fine balanced pattern under WCAG 2.2's note and are
left out of the general-flash count (not of the red).
"""

from __future__ import annotations

import numpy as np

from ..colorimetry._colour import colour
from ..colorimetry.device import device_to_RGB_linear
from ..colorimetry.geometry import TEN_DEGREE_FIELD_SR, WCAG_FLASH_AREA_SR
from .flashes import (
    MAX_FLASHES_PER_SECOND,
    RED_DEFINITIONS,
    flashes_per_window,
    general_flash_transitions,
    red_flash_transitions,
)
from .sequence import RESPOND_FRAMES_S, build_sequence, region_signal, sampling, segments

__all__ = ["analyse_sequence", "FINE_PATTERN_CYCLES_PER_DEG", "RESPOND_FRAMES_S", "MAX_FIELD_CENTRES"]

FINE_PATTERN_CYCLES_PER_DEG = 5.0
"""Bars narrower than 0.1° (WCAG 2.2's fine balanced pattern note): gratings finer than this do not flash."""

MAX_FIELD_CENTRES = 600
"""Most candidate centres tried for the 10° field (flashing samples, evenly thinned beyond this)."""

FIELD_HALF_ANGLE = np.radians(5.0)


def _class_runs(compiled, sequence, phase_signals: dict):
    """Per class: (device levels per run (n, 3), first frame of each run in the sequence)."""
    data = compiled.data
    device_by_class = [[] for _ in sequence.representative]
    starts_by_class = [[] for _ in sequence.representative]
    for occurrence in sequence.occurrences:
        regions = occurrence.regions
        key = (occurrence.condition, occurrence.phase_index, occurrence.frames, id(regions),
               tuple(item.ladder for item in occurrence.items), id(sequence.representative))
        if key not in phase_signals:
            # Same condition, phase, length and regions: the same signals (trials repeat conditions).
            labels = regions.labels.ravel()[sequence.representative]  # same classes for the same maps
            unique, inverse = np.unique(labels, return_inverse=True)
            signals = [region_signal(data, occurrence, regions.keys[label]) for label in unique.tolist()]
            phase_signals[key] = [signals[i] for i in inverse.ravel().tolist()]
        for c, (device, starts) in enumerate(phase_signals[key]):
            device_by_class[c].append(device)
            starts_by_class[c].append(starts + occurrence.start)
    return [(np.concatenate(a), np.concatenate(b)) for a, b in zip(device_by_class, starts_by_class)]


def _fine_classes(sequence, data) -> set:
    """Classes that show a grating finer than WCAG 2.2's fine balanced pattern in some phase."""
    fine = set()
    for regions, items in {id(o.regions): (o.regions, o.items) for o in sequence.occurrences}.values():
        labels = regions.labels.ravel()[sequence.representative]
        for c, label in enumerate(labels.tolist()):
            key = regions.keys[label]
            if isinstance(key[0], int):
                geometry = items[key[0]].geometry
                if geometry["shape"] == "grating" and \
                        geometry["cycles_per_px"] * data["pixels_per_degree"] > FINE_PATTERN_CYCLES_PER_DEG:
                    fine.add(c)
    return fine


def _largest_in_field(sequence, mask) -> float:
    """Largest solid angle (sr) of flashing samples (``mask``) inside any 10° field.

    Field centres tried: a grid over the flashing samples' extent (flashing or not, so that a ring's centre is
    tried) and the flashing samples themselves, each thinned to at most :data:`MAX_FIELD_CENTRES`.
    """
    weights = sequence.solid_angle[mask]
    if weights.sum() <= 0:
        return 0.0
    vectors = sequence.direction[mask]
    rows, columns = np.nonzero(mask)
    box = sequence.direction[rows.min():rows.max() + 1, columns.min():columns.max() + 1].reshape(-1, 3)
    centres = np.concatenate([box[:: max(1, len(box) // MAX_FIELD_CENTRES)],
                              vectors[:: max(1, len(vectors) // MAX_FIELD_CENTRES)]])
    inside = centres @ vectors.T >= np.cos(FIELD_HALF_ANGLE)
    return float(min((inside @ weights).max(), TEN_DEGREE_FIELD_SR))


def analyse_sequence(compiled, *, ladder=None, stride: int | None = None) -> dict:
    """General and red flash results for the whole frame sequence of a compiled protocol.

    Every one-second window of the session is analysed once: each different stretch of consecutive trials (a trial
    with the one before it and those covering the second after it; :func:`stimlab.audit.sequence.segments`) is
    drawn and counted, for the windows starting in its own trial.

    Parameters
    ----------
    compiled
        A :class:`~stimlab.experiment.compile.Compiled` protocol.
    ladder
        An adjustment position to show in respond phases instead of each trial's start (the reach of the adjustment).
    stride
        Sample every ``stride``-th pixel (default: about every 0.2°).

    Returns
    -------
    dict
        ``{"general", "red_wcag22", "red_harding"}``, each with ``max_flashes_per_second``, ``flashing_area_sr``
        (largest within a 10° field, sr), ``fails``, and where and when the most flashes are: ``stimulus``,
        ``transition`` (the window spans a phase change), ``trial``, ``phase``, ``phases`` (those the window spans)
        and ``at_s`` (seconds into the phase); plus ``fails``, ``frames_analysed`` and ``samples``.
    """
    data = compiled.data
    grid = sampling(data, stride)
    cache: dict = {}
    signal_cache: dict = {}
    phase_signals: dict = {}
    definitions = {"general": None, **{f"red_{d}": d for d in RED_DEFINITIONS}}
    result = {key: None for key in definitions}
    frames_analysed = 0
    for trials, own in segments(data):
        sequence = build_sequence(compiled, trials, ladder=ladder, cache=cache, grid=grid)
        frames_analysed += sequence.total_frames
        own_frames = [o.start for o in sequence.occurrences if o.trial == own]
        own_end = max(o.start + o.frames for o in sequence.occurrences if o.trial == own)
        signals, owner = _signals(compiled, sequence, signal_cache, phase_signals)
        for key, definition in definitions.items():
            found = _summarise(sequence, data, signals, owner, definition, (min(own_frames), own_end))
            best = result[key]
            if best is None or (found["fails"], found["max_flashes_per_second"], found["flashing_area_sr"]) > \
                    (best["fails"], best["max_flashes_per_second"], best["flashing_area_sr"]):
                result[key] = found
    result["fails"] = any(result[k]["fails"] for k in definitions)
    result["frames_analysed"] = frames_analysed
    result["samples"] = int(grid[0].size * grid[1].size)
    return result


def _signals(compiled, sequence, cache, phase_signals):
    model = compiled.model
    luminance_per_RGB = model.observer.w_L * model.M_LMS[0] + model.observer.w_M * model.M_LMS[1]
    weights = luminance_per_RGB / float(luminance_per_RGB.sum())
    background = np.asarray(compiled.data["background"]["device"])
    unique: dict = {}
    signals, owner = [], []
    for device, starts in _class_runs(compiled, sequence, phase_signals):
        key = (device.tobytes(), starts.tobytes())
        if key not in unique:  # many classes show the same colours frame for frame (e.g. a blob's outskirts)
            unique[key] = len(signals)
            if key not in cache:
                device = np.where((device < 0).any(axis=1)[:, None], background[None, :], device)
                cache[key] = _Signal(device_to_RGB_linear(device, model.level_outputs), starts, model, weights)
            signals.append(cache[key])
        owner.append(unique[key])
    return signals, np.array(owner)


class _Signal:
    """One class's colours as runs of frames, with its transitions worked out once per definition."""

    def __init__(self, RGB, starts, model, luminance_weights):
        self.RGB, self.starts, self.model, self.weights = RGB, starts, model, luminance_weights
        self._uv = None
        self._frames: dict = {}

    def transition_frames(self, definition) -> np.ndarray:
        if definition not in self._frames:
            self._frames[definition] = self._transition_frames(definition)
        return self._frames[definition]

    def _transition_frames(self, definition) -> np.ndarray:
        if self.RGB.shape[0] < 2 * MAX_FLASHES_PER_SECOND + 2:
            return np.array([], dtype=int)  # too few changes in the whole sequence for more than three flashes
        if definition is None:
            return self.starts[general_flash_transitions(self.RGB @ self.weights)]
        if self._uv is None:
            XYZ = self.RGB @ self.model.M_XYZ.T + self.model.XYZ_black
            self._uv = colour.xy_to_Luv_uv(colour.XYZ_to_xy(XYZ))
        return self.starts[red_flash_transitions(self.RGB, self._uv, definition)]


def _summarise(sequence, data, signals, owner, definition, own) -> dict:
    """Flash counts for windows starting within ``own`` (first, end frame): the segment's own trial."""
    total, refresh = sequence.total_frames, sequence.refresh_hz
    fine = _fine_classes(sequence, data) if definition is None else set()
    counts_by_signal: dict = {}
    flashing = {}
    worst = {"flashes": 0, "class": None, "frame": 0}
    for c, s in enumerate(owner.tolist()):
        if c in fine:
            continue
        if s not in counts_by_signal:
            frames = signals[s].transition_frames(definition)
            counts = flashes_per_window(frames, total, refresh) if frames.size > 1 else None
            if counts is not None:
                counts[:own[0]] = 0
                counts[own[1]:] = 0
            counts_by_signal[s] = counts
        counts = counts_by_signal[s]
        if counts is None:
            continue
        best = int(np.argmax(counts))
        if counts[best] > worst["flashes"]:
            worst = {"flashes": int(counts[best]), "class": c, "frame": best}
        if counts[best] > MAX_FLASHES_PER_SECOND:
            flashing[c] = counts > MAX_FLASHES_PER_SECOND
    area, area_frame = 0.0, worst["frame"]
    if flashing:
        names = list(flashing)
        matrix = np.stack([flashing[c] for c in names])
        sets, first = np.unique(matrix.T, axis=0, return_index=True)
        for members, frame in zip(sets, first):
            if not members.any():
                continue
            mask = np.isin(sequence.classes, np.array(names)[members])
            found = _largest_in_field(sequence, mask)
            if found > area:
                area, area_frame = found, int(frame)
    return {"max_flashes_per_second": worst["flashes"], **_where(sequence, worst), "flashing_area_sr": area,
            "area_at_s": area_frame / refresh,
            "fails": worst["flashes"] > MAX_FLASHES_PER_SECOND and area > WCAG_FLASH_AREA_SR}


def _where(sequence, worst) -> dict:
    """Where (stimulus or transition) and when (trial, phase, seconds into it) a class flashes the most."""
    refresh = sequence.refresh_hz
    frame = worst["frame"]
    starts = np.array([o.start for o in sequence.occurrences])
    first = int(np.searchsorted(starts, frame, side="right") - 1)
    last = int(np.searchsorted(starts, frame + round(refresh), side="left") - 1)
    occurrence = sequence.occurrences[first]
    shown, modulated = [], []
    if worst["class"] is not None:
        sample = sequence.representative[worst["class"]]
        for o in sequence.occurrences[first:last + 1]:
            k = o.regions.keys[o.regions.labels.ravel()[sample]]
            name = k[0] if isinstance(k[0], str) else o.items[k[0]].name + ("" if k[1] == "colour" else " (surround)")
            if not isinstance(k[0], str):
                course = o.items[k[0]].course
                if (len(course["cycle"]) > 1 or course["head"] or course["tail"]) and name not in modulated:
                    modulated.append(name)
            if not shown or shown[-1] != name:
                shown.append(name)
    phases = [o.phase for o in sequence.occurrences[first:last + 1]]
    # A stimulus that flickers or ramps in the window is named as the cause; otherwise the phase changes are.
    transition = len(phases) > 1 and len(shown) > 1 and not modulated
    if modulated:
        shown = modulated
    return {"stimulus": " → ".join(shown) if shown else None, "transition": transition,
            "trial": occurrence.trial, "condition": occurrence.condition, "phase": occurrence.phase, "phases": phases,
            "at_s": (frame - occurrence.start) / refresh}
