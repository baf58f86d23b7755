"""The photosensitivity audit on rendered frames, timed on each demo protocol and on a 200-trial flicker protocol,
beside the point-sample analysis it replaced (kept below as the reference: one sample point per stimulus region,
a first and a repeat trial per condition).

Each is timed best of three in one run. Last line: ``pixel_audit_s=… per_trial_ms=… ratio_vs_points=…``
(``pixel_audit_s``: the slowest demo protocol; ``per_trial_ms``: the 200-trial protocol per trial;
``ratio_vs_points``: pixel-level over point-sample time, summed over all protocols).
Targets: each demo protocol under 1 s; cost linear in trials.
"""

from __future__ import annotations

import json
import math
import sys
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from stimlab.audit.flashes import (  # noqa: E402
    MAX_FLASHES_PER_SECOND,
    RED_DEFINITIONS,
    flashes_per_window,
    general_flash_transitions,
    red_flash_transitions,
)
from stimlab.audit.photosensitivity import analyse_sequence  # noqa: E402
from stimlab.colorimetry._colour import colour  # noqa: E402
from stimlab.colorimetry.geometry import (  # noqa: E402
    TEN_DEGREE_FIELD_SR,
    WCAG_FLASH_AREA_SR,
    disc_solid_angle,
    rectangle_solid_angle,
    screen_solid_angle,
)
from stimlab.experiment.compile import compile_protocol  # noqa: E402
from stimlab.experiment.protocol import validate_protocol  # noqa: E402
from stimlab.profiles.demo import demo_profile  # noqa: E402

# ---- The point-sample analysis as it was, for reference (with its own rounding of square flicker). ----

FINE_PATTERN_CYCLES_PER_DEG = 5.0
RESPOND_FRAMES_S = 2.0


def modulation(course: dict, frames: int, refresh_hz: float) -> np.ndarray:
    f = np.arange(frames)
    kind = course.get("kind", "steady")
    if kind == "steady":
        m = np.ones(frames)
    elif kind == "square":
        half = max(1, int(round(refresh_hz / (2 * course["frequency_hz"]))))
        m = np.where((f // half) % 2 == 0, 1.0, -1.0)
    else:
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


def points_analyse_condition(compiled, condition: int, protocol: dict, overrides: dict | None = None) -> dict:
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


def points_audit(compiled, protocol) -> bool:
    return any(points_analyse_condition(compiled, c["index"], protocol)["fails"] for c in compiled.data["conditions"])


# ---- The benchmark. ----

def flicker_protocol(trials: int) -> dict:
    """A 2° disc flickering at 12 Hz for 1 s after a 0.5 s gap, then a 1 s response window: four colours, shuffled,
    ``trials`` trials in all (shuffling makes most stretches of consecutive trials different)."""
    return validate_protocol({
        "stimlab_protocol": 1,
        "about": {"title": "Flicker benchmark", "observer": "ss2", "viewing_distance_cm": 57},
        "background": {"dkl": [0, 0, 0]},
        "fixation": {"shape": "dot", "size_deg": 0.15},
        "stimuli": [{"name": "disc", "shape": "disc", "size_deg": 2, "colour": {"dkl": "$colour"},
                     "time_course": {"kind": "square", "frequency_hz": 12}}],
        "trial": [{"phase": "gap", "duration_s": 0.5}, {"phase": "test", "stimuli": ["disc"], "duration_s": 1},
                  {"phase": "respond", "timeout_s": 1, "response": {"method": "yes_no", "keys": ["y", "n"]}}],
        "conditions": {"variables": {"colour": {"lum": [0.3, 0, 0], "L-M": [0, 0.05, 0], "S": [0, 0, 0.3],
                                                "mix": [0.1, 0.03, 0.1]}},
                       "repeats": trials // 4, "order": "shuffled", "seed": 7},
    })


def best_of(function, repeats=3):
    best = math.inf
    for _ in range(repeats):
        start = time.perf_counter()
        function()
        best = min(best, time.perf_counter() - start)
    return best


def main() -> None:
    profile = demo_profile()
    cases = [(path.stem, validate_protocol(json.loads(path.read_text())))
             for path in sorted((ROOT / "protocols").glob("*.json"))]
    cases.append(("flicker_200_trials", flicker_protocol(200)))
    pixel_total = points_total = slowest_demo = 0.0
    per_trial_ms = 0.0
    for name, protocol in cases:
        compiled = compile_protocol(protocol, profile)
        pixels = best_of(lambda: analyse_sequence(compiled))
        points = best_of(lambda: points_audit(compiled, protocol))
        pixel_total += pixels
        points_total += points
        trials = len(compiled.data["trials"])
        if name == "flicker_200_trials":
            per_trial_ms = pixels / trials * 1000
        else:
            slowest_demo = max(slowest_demo, pixels)
        print(f"  {name:<22} {trials:>4} trials  pixels {pixels:.3f} s  points {points:.4f} s  "
              f"({pixels / trials * 1000:.2f} ms per trial)")
    print(f"pixel_audit_s={slowest_demo:.3f} per_trial_ms={per_trial_ms:.2f} ratio_vs_points={pixel_total / points_total:.1f}")


if __name__ == "__main__":
    main()
