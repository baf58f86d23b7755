"""Photosensitivity audit of a compiled condition: general and red flashes at each place on the screen, frame by
frame over a first trial and a repeat trial, against WCAG 2.2 success criterion 2.3.1.

A sample point is taken in each region of each stimulus (a disc's centre, an annulus's ring, a surround, each half
of a bipartite field). For every frame the point shows the top-most stimulus covering it in that phase (later
names in a phase's list are drawn on top), modulated by its time course. The solid angle of each region comes
from the real viewing distance rather than the standard's 341 × 256 pixel estimate. Overlapping regions count
once each, which can only over-state the flashing area: the audit errs on the safe side.
"""

from __future__ import annotations

import math

import numpy as np

from ..colorimetry._colour import colour
from ..colorimetry.geometry import (
    TEN_DEGREE_FIELD_SR,
    WCAG_FLASH_AREA_SR,
    disc_solid_angle,
    rectangle_solid_angle,
    screen_solid_angle,
)
from .flashes import (
    MAX_FLASHES_PER_SECOND,
    RED_DEFINITIONS,
    flashes_per_window,
    general_flash_transitions,
    red_flash_transitions,
)

__all__ = ["analyse_condition", "modulation", "FINE_PATTERN_CYCLES_PER_DEG", "RESPOND_FRAMES_S"]

FINE_PATTERN_CYCLES_PER_DEG = 5.0
"""Bars narrower than 0.1° (WCAG's fine balanced pattern exception): gratings finer than this do not flash."""

RESPOND_FRAMES_S = 2.0
"""A respond phase has no fixed length; it is analysed for this long (or its time-out, if shorter)."""


def modulation(course: dict, frames: int, refresh_hz: float) -> np.ndarray:
    """The time course's modulation for each frame of a phase (1 = the stimulus colour, 0 = background)."""
    f = np.arange(frames)
    kind = course.get("kind", "steady")
    if kind == "steady":
        m = np.ones(frames)
    elif kind == "square":
        half = max(1, int(round(refresh_hz / (2 * course["frequency_hz"]))))
        m = np.where((f // half) % 2 == 0, 1.0, -1.0)
    else:  # sine, counterphase
        m = np.sin(2 * np.pi * course["frequency_hz"] * f / refresh_hz)
    if kind != "steady" and course.get("mode") == "on_off":
        m = (1 + m) / 2
    for key, ramp in (("ramp_on_frames", (f + 1)), ("ramp_off_frames", (frames - f))):
        if course.get(key):
            m = m * np.minimum(1.0, ramp / course[key])
    return m


def _regions(stimulus: dict) -> list[tuple[str, tuple[float, float], float]]:
    """(region key, sample point in degrees, solid angle in sr) for each region of a stimulus."""
    x, y = stimulus.get("position_deg", (0.0, 0.0))
    shape, size = stimulus["shape"], stimulus.get("size_deg", 0.0)
    if shape == "disc":
        return [("colour", (x, y), disc_solid_angle(size))]
    if shape == "square":
        return [("colour", (x, y), rectangle_solid_angle(size, size))]
    if shape == "annulus":
        inner = stimulus["inner_size_deg"]
        return [("colour", (x + (size + inner) / 4, y), disc_solid_angle(size) - disc_solid_angle(inner))]
    if shape == "centre_surround":
        outer = stimulus["surround_size_deg"]
        return [("colour", (x, y), disc_solid_angle(size)),
                ("second_colour", (x + (size + outer) / 4, y), disc_solid_angle(outer) - disc_solid_angle(size))]
    if shape == "bipartite":
        half = disc_solid_angle(size) / 2
        return [("colour", (x - size / 4, y), half), ("second_colour", (x + size / 4, y), half)]
    if shape in ("gaussian", "grating"):
        return [("colour", (x, y), disc_solid_angle(4 * stimulus["sigma_deg"]))]
    return [("colour", (x, y), math.inf)]  # uniform field: the whole screen (set by the caller)


def _covers(stimulus: dict, point) -> tuple[str | None, float]:
    """Which region of ``stimulus`` covers ``point`` (degrees) and the spatial factor there."""
    x0, y0 = stimulus.get("position_deg", (0.0, 0.0))
    dx, dy = point[0] - x0, point[1] - y0
    r = math.hypot(dx, dy)
    shape, size = stimulus["shape"], stimulus.get("size_deg", 0.0)
    eps = 1e-9
    if shape == "uniform_field":
        return "colour", 1.0
    if shape == "disc":
        return ("colour", 1.0) if r <= size / 2 + eps else (None, 0.0)
    if shape == "square":
        return ("colour", 1.0) if max(abs(dx), abs(dy)) <= size / 2 + eps else (None, 0.0)
    if shape == "annulus":
        return ("colour", 1.0) if stimulus["inner_size_deg"] / 2 - eps <= r <= size / 2 + eps else (None, 0.0)
    if shape == "centre_surround":
        if r <= size / 2 + eps:
            return "colour", 1.0
        return ("second_colour", 1.0) if r <= stimulus["surround_size_deg"] / 2 + eps else (None, 0.0)
    if shape == "bipartite":
        if r > size / 2 + eps:
            return None, 0.0
        return ("colour", 1.0) if dx < 0 else ("second_colour", 1.0)
    sigma = stimulus["sigma_deg"]
    if r > 2 * sigma + eps:
        return None, 0.0
    factor = math.exp(-r * r / (2 * sigma * sigma))
    if shape == "grating":
        theta = math.radians(stimulus.get("orientation_deg", 0.0))
        factor *= math.cos(2 * math.pi * stimulus["cycles_per_deg"] * (dx * math.cos(theta) + dy * math.sin(theta)))
    return "colour", factor


def analyse_condition(compiled, condition: int, protocol: dict, overrides: dict | None = None) -> dict:
    """Flash counts and flashing area for one condition over a first trial followed by a repeat trial.

    ``overrides`` maps a stimulus name to the linear-RGB change to use instead of its own (an adjustment's limits).
    """
    data = compiled.data
    model = compiled.model
    refresh = data["display"]["refresh_hz"]
    stimuli = compiled.stimuli[condition]
    sources = {s["name"]: s for s in protocol["stimuli"]}
    RGB_0 = compiled.background.RGB_0
    points = []
    for name, source in sources.items():
        for region, point, area in _regions(source):
            if math.isinf(area):
                area = screen_solid_angle(data["display"]["size_cm"], data["viewing_distance_cm"])
            fine = source["shape"] == "grating" and source["cycles_per_deg"] > FINE_PATTERN_CYCLES_PER_DEG
            points.append({"stimulus": name, "region": region, "point": point, "area": area, "fine": fine})
    phases = data["schedules"]["first"] + data["schedules"]["repeat"]
    pieces = [[] for _ in points]
    for phase in phases:
        frames = phase.get("frames")
        if frames is None:
            timeout = phase.get("timeout_frames") or math.inf
            frames = int(min(timeout, RESPOND_FRAMES_S * refresh))
        if frames == 0:
            continue
        for p, info in enumerate(points):
            RGB = np.repeat(RGB_0[None, :], frames, axis=0)
            for name in reversed(phase["stimuli"]):
                region, factor = _covers(sources[name], info["point"])
                if region is None:
                    continue
                delta = (overrides or {}).get(name) if region == "colour" else None
                delta = getattr(stimuli[name], region).delta_RGB if delta is None else delta
                m = modulation(stimuli[name].time_course, frames, refresh)
                RGB = RGB_0 + np.outer(m * factor, delta)
                break
            pieces[p].append(RGB)
    series = [np.concatenate(piece) if piece else RGB_0[None, :] for piece in pieces]
    luminance_per_RGB = model.observer.w_L * model.M_LMS[0] + model.observer.w_M * model.M_LMS[1]
    white = float(luminance_per_RGB.sum())
    total_frames = max(len(s) for s in series)
    result = {"general": _summarise(points, series, total_frames, refresh,
                                    lambda RGB, info: [] if info["fine"] else
                                    general_flash_transitions(RGB @ luminance_per_RGB / white))}
    for definition in RED_DEFINITIONS:
        def red(RGB, info, definition=definition):
            XYZ = RGB @ model.M_XYZ.T + model.XYZ_black
            uv = colour.xy_to_Luv_uv(colour.XYZ_to_xy(XYZ))
            return red_flash_transitions(RGB, uv, definition)
        result[f"red_{definition}"] = _summarise(points, series, total_frames, refresh, red)
    result["fails"] = any(result[k]["fails"] for k in result if k != "fails")
    result["frames_analysed"] = total_frames
    return result


def _summarise(points, series, total_frames, refresh, transitions_of) -> dict:
    area_by_window = np.zeros(total_frames)
    worst = {"flashes": 0, "stimulus": None, "region": None, "frame": 0}
    for info, RGB in zip(points, series):
        counts = flashes_per_window(transitions_of(RGB, info), total_frames, refresh)
        best = int(np.argmax(counts))
        if counts[best] > worst["flashes"]:
            worst = {"flashes": int(counts[best]), "stimulus": info["stimulus"], "region": info["region"],
                     "frame": best}
        area_by_window += np.where(counts > MAX_FLASHES_PER_SECOND, info["area"], 0.0)
    area = float(min(area_by_window.max(initial=0.0), TEN_DEGREE_FIELD_SR))
    return {"max_flashes_per_second": worst["flashes"], "stimulus": worst["stimulus"], "region": worst["region"],
            "at_s": worst["frame"] / refresh, "flashing_area_sr": area,
            "fails": worst["flashes"] > MAX_FLASHES_PER_SECOND and area > WCAG_FLASH_AREA_SR}
