"""Calibrating a display with stimlab itself: the measurement plan, the fit of its readings, validation and drift.

A plan is a list of patches in device levels: each channel alone at levels spaced more densely near black, white,
black, a few validation colours, and repeats of white and mid-grey spread over the run to show warm-up drift.
Readings are luminance in cd/m² (and CIE 1931 x, y when the instrument gives them); the primaries' spectra can come
from a spectroradiometer's CSV instead. Tolerances default to 2 % luminance and 0.004 Δu′v′ (common practice:
set your lab's own).

References
----------
- Berns, R. S. (1996). Methods for characterizing CRT displays. Displays, 16(4), 173–182 (measuring and
  validating a display model).
- CIE 015:2018, Colorimetry (CIE 1976 u′, v′ for Δu′v′; from memory).
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from ..colorimetry._colour import colour
from ..colorimetry.display import DisplayModel
from ..colorimetry.transfer import TRANSFER_MODELS, fit_transfer, reading_sigma
from ..errors import InputError
from .measurements import CHANNELS
from .profile import build_profile, transfer_entry

__all__ = ["measurement_plan", "cross_validated_rms", "recommend_transfer_model", "profile_from_readings", "validate",
           "drift", "DEFAULT_TOLERANCE"]

DEFAULT_TOLERANCE = {"luminance_percent": 2.0, "delta_uv": 0.004}
VALIDATION_RGB = ((0.5, 0.5, 0.5), (0.8, 0.3, 0.3), (0.3, 0.7, 0.35), (0.35, 0.4, 0.8), (0.3, 0.3, 0.3))
"""Validation colours as fractions of full drive (device levels, not linear)."""


def measurement_plan(bits: int, levels_per_channel: int = 12) -> list[dict]:
    """The patches to measure, in order.

    Parameters
    ----------
    bits
        Bit depth of the display; device levels run 0..2^bits − 1.
    levels_per_channel
        Points of the spacing per channel, ≥ 3, level 0 included (measured once, as black): levels
        ``d_max · u^1.5`` for evenly spaced ``u`` in 0..1, denser near black where the transfer curve bends
        (duplicates after rounding are dropped).

    Returns
    -------
    list of dict
        ``{"step", "kind", "device", "label"}`` and ``"channel"`` for the single-channel patches; ``kind`` is
        black, channel, white, validation or drift; ``device`` is three device levels.

    Raises
    ------
    InputError
        If ``levels_per_channel`` is below 3.

    Examples
    --------
    >>> plan = measurement_plan(8, levels_per_channel=4)
    >>> len(plan), [step["device"] for step in plan if step.get("channel") == "red"]
    (21, [[49, 0, 0], [139, 0, 0], [255, 0, 0]])
    """
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


def cross_validated_rms(x: ArrayLike, y: ArrayLike, transfer_model: str, sigma: ArrayLike | None = None) -> float:
    """Leave-one-out RMS prediction error of a transfer model (interior points; 0 and full drive are anchors).

    Parameters
    ----------
    x
        Normalised device levels ``d / d_max``, increasing, 0 first and 1 last.
    y
        Normalised output, fraction of full-drive luminance above black, 0..1.
    transfer_model
        A key of :data:`stimlab.colorimetry.transfer.TRANSFER_MODELS`.
    sigma
        Standard error of each ``y`` (see :func:`stimlab.colorimetry.transfer.fit_transfer`).

    Returns
    -------
    float
        RMS of the predictions at the left-out levels, normalised output; ``inf`` when a fit fails or no interior
        level exists.
    """
    x, y = np.asarray(x, float), np.asarray(y, float)
    sigma = None if sigma is None else np.broadcast_to(np.asarray(sigma, float), y.shape)
    errors = []
    for i in range(1, x.size - 1):
        keep = np.arange(x.size) != i
        try:
            fitted = fit_transfer(x[keep], y[keep], transfer_model, None if sigma is None else sigma[keep]).transfer
        except ValueError:
            return float("inf")
        errors.append(float(fitted.forward(x[i])) - y[i])
    return float(np.sqrt(np.mean(np.square(errors)))) if errors else float("inf")


def recommend_transfer_model(x: ArrayLike, y: ArrayLike, sigma: ArrayLike | None = None) -> tuple[str, dict]:
    """The model that best predicts levels it was not fitted to (leave-one-out), and every model's score.

    Arguments as for :func:`cross_validated_rms`; the scores are its RMS (normalised output) by model name, and
    ``None`` for a model that cannot be fitted to these readings (a table through falling readings).

    Examples
    --------
    >>> x = np.linspace(0.0, 1.0, 9)
    >>> best, scores = recommend_transfer_model(x, x**2.2)
    >>> round(scores["table"], 4), scores["power"] < 1e-6
    (0.0027, True)
    """
    rms = {name: cross_validated_rms(x, y, name, sigma) for name in TRANSFER_MODELS}
    best = min(rms, key=rms.get)
    return best, {name: (value if np.isfinite(value) else None) for name, value in rms.items()}


def _by_step(plan, readings):
    found = {r["step"]: r for r in readings}
    return [(step, found.get(step["step"])) for step in plan]


def profile_from_readings(plan: list[dict], readings: list[dict], *, name: str, bits: int, refresh_hz: float,
                          size_cm=None, size_px=None, measured_by: str = "", spectra: tuple | None = None,
                          transfer_model: str | None = None) -> tuple[dict, dict]:
    """Build a profile from a run's readings; return it with the model scores per channel.

    ``spectra`` (from a spectroradiometer CSV) gives the primaries; otherwise the x, y read at each channel's full
    drive do, and the profile is flagged as approximate.

    Parameters
    ----------
    plan
        The run's :func:`measurement_plan`.
    readings
        ``{"step", "luminance"}`` (cd/m²) with optional CIE 1931 ``"x"``, ``"y"``, one per measured step.
    name, bits, refresh_hz, size_cm, size_px, measured_by
        The display's name, bit depth, refresh rate (Hz), size (cm and px) and who measured it.
    spectra
        Spectra of the primaries and black as :func:`stimlab.profiles.profile.build_profile` takes them.
    transfer_model
        Transfer model to use for every channel; ``None`` takes each channel's :func:`recommend_transfer_model`.

    Returns
    -------
    profile : dict
        The checked display profile.
    scores : dict
        ``{channel: {model: leave-one-out RMS}}``, normalised output.

    Raises
    ------
    InputError
        If a black, channel or white patch is unmeasured, a channel's readings cannot be fitted, or, without
        spectra, a channel's full-drive x, y is missing.
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
        luminance = np.array([black["luminance"]] + [p[1] for p in points])
        y = (luminance - luminance[0]) / (luminance[-1] - luminance[0])
        best, scores[channel] = recommend_transfer_model(levels / d_max, y,
                                                reading_sigma(luminance) / (luminance[-1] - luminance[0]))
        try:
            transfer[channel] = transfer_entry(levels, luminance, bits, transfer_model or best)
        except InputError as error:
            raise InputError(f"channel {channel}: {error.message}", field="readings") from None
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
    """Predicted against measured luminance (%) and chromaticity (Δu′v′) for the validation colours.

    Parameters
    ----------
    profile
        The display profile to check.
    plan, readings
        As for :func:`profile_from_readings`; unmeasured validation steps are skipped.
    tolerance
        ``{"luminance_percent", "delta_uv"}`` overriding :data:`DEFAULT_TOLERANCE` (2 %, 0.004).

    Returns
    -------
    dict
        ``tolerance``; ``colours``, one row per measured validation colour with measured and predicted
        luminance (cd/m²), ``luminance_error_percent`` (predicted − measured, % of measured), ``delta_uv`` (CIE
        1976 u′v′ distance, when x, y were read) and ``passed``; and ``passed`` overall (false with no rows).
    """
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


def drift(plan: list[dict], readings: list[dict],
          tolerance_percent: float = DEFAULT_TOLERANCE["luminance_percent"]) -> dict:
    """Change of the repeated patches over the run, in % of their first reading, with a warning flag.

    Parameters
    ----------
    plan, readings
        As for :func:`profile_from_readings`.
    tolerance_percent
        Largest change (% of the first reading) taken as stable; default 2 %.

    Returns
    -------
    dict
        ``repeats``: per repeated patch, its ``device`` levels, ``readings`` (cd/m²), ``change_percent``,
        ``worst_percent`` and ``warning``; and ``warning`` if any patch drifted beyond the tolerance.

    Examples
    --------
    >>> plan = measurement_plan(8, levels_per_channel=4)
    >>> readings = [{"step": s["step"], "luminance": 100.0 if s["step"] == 1 else 97.0}
    ...             for s in plan if s["device"] == [255, 255, 255]]
    >>> result = drift(plan, readings)
    >>> result["repeats"][0]["change_percent"], result["warning"]
    ([0.0, -3.0, -3.0], True)
    """
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
