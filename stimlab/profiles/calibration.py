"""Calibrating a display with stimlab itself: the measurement plan, the fit of its readings, validation and drift.

A plan is a list of patches in device levels: each channel alone at levels spaced more densely near black, white,
black, a few validation colours, and repeats of white and mid-grey spread over the run to show warm-up drift.
Readings are luminance in cd/m² (and CIE 1931 x, y when the instrument gives them); the primaries' spectra can come
from a spectroradiometer's CSV instead. Tolerances default to 2 % luminance and 0.004 Δu′v′ (common practice:
set your lab's own).
"""

from __future__ import annotations

import numpy as np

from ..colorimetry._colour import colour
from ..colorimetry.display import DisplayModel
from ..colorimetry.transfer import TRANSFER_MODELS, fit_transfer
from ..errors import InputError
from .measurements import CHANNELS
from .profile import build_profile, transfer_entry

__all__ = ["measurement_plan", "cross_validated_rms", "recommend_model", "profile_from_readings", "validate",
           "drift", "DEFAULT_TOLERANCE"]

DEFAULT_TOLERANCE = {"luminance_percent": 2.0, "delta_uv": 0.004}
VALIDATION_RGB = ((0.5, 0.5, 0.5), (0.8, 0.3, 0.3), (0.3, 0.7, 0.35), (0.35, 0.4, 0.8), (0.3, 0.3, 0.3))
"""Validation colours as fractions of full drive (device levels, not linear)."""


def measurement_plan(bits: int, levels_per_channel: int = 12) -> list[dict]:
    """The patches to measure, in order, each ``{"step", "kind", "device", "channel"?, "label"}``."""
    d_max = 2**bits - 1
    if isinstance(levels_per_channel, bool) or not isinstance(levels_per_channel, int) or levels_per_channel < 3:
        raise InputError("measure at least three levels per channel", field="levels_per_channel")
    if levels_per_channel > 256:  # a technician measures 8–32; 256 already takes hours at the meter
        raise InputError("measure at most 256 levels per channel", field="levels_per_channel")
    if isinstance(bits, bool) or not isinstance(bits, int) or not 1 <= bits <= 16:
        raise InputError("bits must be a whole number from 1 to 16", field="bits")
    levels = sorted({int(round(d_max * x)) for x in np.linspace(0, 1, levels_per_channel) ** 1.5} - {0})
    steps = []

    def add(kind, device, label, channel=None):
        steps.append({"step": len(steps), "kind": kind, "device": [int(v) for v in device], "label": label,
                      **({"channel": channel} if channel else {})})

    grey = [int(round(0.5 * d_max))] * 3
    add("black", [0, 0, 0], "black (all channels at 0)")
    add("drift", [d_max] * 3, "white, first of the drift repeats")
    for i, channel in enumerate(CHANNELS):
        for level in levels:
            device = [0, 0, 0]
            device[i] = level
            add("channel", device, f"{channel} at {level}", channel)
        add("drift", grey, "mid-grey, drift repeat")
    add("white", [d_max] * 3, "white (all channels at full drive)")
    for rgb in VALIDATION_RGB:
        add("validation", [round(v * d_max) for v in rgb], "validation colour " + ",".join(f"{round(v * d_max)}" for v in rgb))
    add("drift", [d_max] * 3, "white, last of the drift repeats")
    return steps


def cross_validated_rms(x, y, model: str) -> float:
    """Leave-one-out RMS prediction error of a transfer model (interior points; 0 and full drive are anchors)."""
    x, y = np.asarray(x, float), np.asarray(y, float)
    errors = []
    for i in range(1, x.size - 1):
        keep = np.arange(x.size) != i
        try:
            fitted = fit_transfer(x[keep], y[keep], model).model
        except ValueError:
            return float("inf")
        errors.append(float(fitted.forward(x[i])) - y[i])
    return float(np.sqrt(np.mean(np.square(errors)))) if errors else float("inf")


def recommend_model(x, y) -> tuple[str, dict]:
    """The model that best predicts levels it was not fitted to (leave-one-out), and every model's score."""
    scores = {name: cross_validated_rms(x, y, name) for name in TRANSFER_MODELS}
    return min(scores, key=scores.get), scores


def _by_step(plan, readings):
    found = {r["step"]: r for r in readings}
    return [(step, found.get(step["step"])) for step in plan]


def profile_from_readings(plan: list[dict], readings: list[dict], *, name: str, bits: int, refresh_hz: float,
                          size_cm=None, size_px=None, measured_by: str = "", spectra: tuple | None = None,
                          model: str | None = None) -> tuple[dict, dict]:
    """Build a profile from a run's readings; return it with the model scores per channel.

    ``spectra`` (from a spectroradiometer CSV) gives the primaries; otherwise the x, y read at each channel's full
    drive do, and the profile is flagged as approximate.
    """
    pairs = _by_step(plan, readings)
    missing = [s["label"] for s, r in pairs if r is None and s["kind"] in ("black", "channel", "white")]
    if missing:
        raise InputError(f"{len(missing)} patches are not measured yet, starting with {missing[0]}",
                         field="readings")
    black = next(r for s, r in pairs if s["kind"] == "black")
    d_max = 2**bits - 1
    transfer, scores = {}, {}
    for i, channel in enumerate(CHANNELS):
        points = sorted((s["device"][i], r["luminance"]) for s, r in pairs if s.get("channel") == channel)
        levels = np.array([0] + [p[0] for p in points], dtype=float)
        luminance = np.maximum.accumulate(np.array([black["luminance"]] + [p[1] for p in points]))
        y = (luminance - luminance[0]) / (luminance[-1] - luminance[0])
        best, scores[channel] = recommend_model(levels / d_max, y)
        transfer[channel] = transfer_entry(levels, luminance, bits, model or best)
        transfer[channel]["recommended"] = best
    chromaticities = None
    if spectra is None:
        # Each primary is what its full-drive reading adds to black: subtract in XYZ, not in xy.
        black_xy = (black["x"], black["y"]) if black.get("x") is not None else (0.3127, 0.3290)
        XYZ_black = colour.xyY_to_XYZ([*black_xy, black["luminance"]])
        chromaticities = {"black": (*black_xy, black["luminance"])}
        for i, channel in enumerate(CHANNELS):
            full = next((r for s, r in pairs if s.get("channel") == channel and s["device"][i] == d_max), None)
            if full is None or full.get("x") is None or full.get("y") is None:
                raise InputError(f"give x, y for {channel} at full drive, or import the primaries' spectra",
                                 field="readings")
            above = colour.xyY_to_XYZ([full["x"], full["y"], full["luminance"]]) - XYZ_black
            chromaticities[channel] = tuple(float(v) for v in colour.XYZ_to_xyY(above))
    profile = build_profile(name, transfer=transfer, bits=bits, refresh_hz=refresh_hz, spectra=spectra,
                            chromaticities=chromaticities, size_cm=size_cm, size_px=size_px, measured_by=measured_by,
                            notes="calibrated with stimlab's measurement sequence")
    return profile, scores


def _uv(x, y):
    return np.asarray(colour.xy_to_Luv_uv([x, y]), dtype=float)


def validate(profile: dict, plan: list[dict], readings: list[dict], tolerance: dict | None = None) -> dict:
    """Predicted against measured luminance (%) and chromaticity (Δu′v′) for the validation colours."""
    tolerance = {**DEFAULT_TOLERANCE, **(tolerance or {})}
    model = DisplayModel(profile)
    rows = []
    for step, reading in _by_step(plan, readings):
        if step["kind"] != "validation" or reading is None:
            continue
        linear = np.array([model.level_outputs[c][step["device"][c]] for c in range(3)])
        XYZ = model.RGB_linear_to_XYZ(linear)
        predicted_Y = float(XYZ[1])
        if reading["luminance"] <= 0:  # a validation colour is never black: the meter missed the patch
            raise InputError(f"step {step['step']} ({step['label']}) reads 0 cd/m²; a validation colour always emits "
                             "light, so measure that step again", field=f"readings[{step['step']}].luminance")
        error = 100 * (predicted_Y - reading["luminance"]) / reading["luminance"]
        row = {"step": step["step"], "label": step["label"], "device": step["device"], "measured_cd_m2":
               reading["luminance"], "predicted_cd_m2": predicted_Y, "luminance_error_percent": error}
        ok = abs(error) <= tolerance["luminance_percent"]
        if reading.get("x") is not None and reading.get("y") is not None:
            predicted_xy = colour.XYZ_to_xy(XYZ)
            row["delta_uv"] = float(np.linalg.norm(_uv(*predicted_xy) - _uv(reading["x"], reading["y"])))
            ok = ok and row["delta_uv"] <= tolerance["delta_uv"]
        row["passed"] = bool(ok)
        rows.append(row)
    return {"tolerance": tolerance, "colours": rows, "passed": bool(rows) and all(r["passed"] for r in rows)}


def drift(plan: list[dict], readings: list[dict], tolerance_percent: float = DEFAULT_TOLERANCE["luminance_percent"]):
    """Change of the repeated patches over the run, in % of their first reading, with a warning flag."""
    groups: dict[tuple, list] = {}
    for step, reading in _by_step(plan, readings):
        if reading is not None and step["kind"] in ("drift", "white"):
            groups.setdefault(tuple(step["device"]), []).append((step["step"], reading["luminance"]))
    result = []
    for device, values in groups.items():
        if len(values) < 2:
            continue
        first = values[0][1]
        change = [100 * (v - first) / first for _, v in values]
        worst = max(change, key=abs)
        result.append({"device": list(device), "readings": [v for _, v in values], "change_percent": change,
                       "worst_percent": worst, "warning": abs(worst) > tolerance_percent})
    return {"repeats": result, "warning": any(r["warning"] for r in result)}
