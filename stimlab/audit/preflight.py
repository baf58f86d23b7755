"""The pre-flight audit of a compiled protocol: gamut, headroom, bit depth, timing, predicted after-images and
induction, photosensitivity and geometry, as one list of findings.

Each finding is ``{"kind", "severity", "where", "message", "values"}`` with severity ``fail`` (the protocol must not
run as it is), ``warn`` (it can run, but look) or ``info``. The audit passes when nothing fails.
"""

from __future__ import annotations

import numpy as np

from ..colorimetry.adaptation import induced_match_cone_contrast, null_cone_contrast
from ..colorimetry.device import device_to_RGB_linear
from ..colorimetry.display import CHANNELS
from ..colorimetry.gamut import scale_limit
from ..errors import InputError
from ..experiment.protocol import CAUTION
from ..profiles.profile import DEFAULT_MAX_AGE_DAYS, profile_warnings
from .photosensitivity import analyse_condition

__all__ = ["audit_protocol", "KINDS", "SEVERITIES"]

KINDS = ("display", "gamut", "headroom", "bit_depth", "timing", "prediction", "photosensitivity", "geometry")
SEVERITIES = ("fail", "warn", "info")


class _Findings(list):
    def add(self, kind, severity, where, message, **values):
        self.append({"kind": kind, "severity": severity, "where": where, "message": message,
                     "values": _plain(values)})


def _plain(value):
    if isinstance(value, dict):
        return {k: _plain(v) for k, v in value.items()}
    if isinstance(value, (list, tuple, np.ndarray)):
        return [_plain(v) for v in value]
    if isinstance(value, np.generic):
        return value.item()
    return value


def _overshoot(RGB) -> dict:
    return {CHANNELS[c]: round(float(RGB[c] - 1 if RGB[c] > 1 else RGB[c]), 6)
            for c in range(3) if not -1e-9 <= RGB[c] <= 1 + 1e-9}


def audit_protocol(compiled, protocol: dict, profile: dict, *, max_age_days: int = DEFAULT_MAX_AGE_DAYS,
                   today=None) -> dict:
    """Audit a compiled protocol; return ``{"passed", "findings", "counts", "caution"}``."""
    findings = _Findings()
    _display(findings, protocol, profile, max_age_days, today)
    for condition in compiled.data["conditions"]:
        index = condition["index"]
        label = condition["label"]
        for name, stimulus in compiled.stimuli[index].items():
            for key in ("colour", "second_colour"):
                if key in stimulus:
                    _colour(findings, compiled, stimulus, key, f"{label} / {name}" + ("" if key == "colour" else
                                                                                     " (second colour)"))
        response = compiled.responses[index]
        if response is not None:
            _response(findings, compiled, response, label)
        if "adaptation_model" in protocol and response is not None and response["kind"] == "adjustment":
            try:
                _prediction(findings, compiled, protocol["adaptation_model"], index, response, label)
            except ValueError as error:  # a prediction outside what cone excitations allow
                if isinstance(error, InputError):
                    raise
                raise InputError(f"{label}: {error}", field="adaptation_model") from None
    _distinct_conditions(findings, compiled)
    _timing(findings, compiled, protocol)
    flicker = _photosensitivity(findings, compiled, protocol)
    _geometry(findings, compiled)
    counts = {s: sum(1 for f in findings if f["severity"] == s) for s in SEVERITIES}
    order = {s: i for i, s in enumerate(SEVERITIES)}
    findings.sort(key=lambda f: (order[f["severity"]], KINDS.index(f["kind"])))
    return {"passed": counts["fail"] == 0, "counts": counts, "findings": list(findings),
            "caution": CAUTION if flicker else None, "protocol": compiled.data["protocol"],
            "display": {"name": profile["name"], "sha256": profile["sha256"]}}


def _display(findings, protocol, profile, max_age_days, today):
    planned = protocol["about"].get("planned_display")
    if planned and (planned["name"] != profile["name"] or planned.get("sha256", profile["sha256"]) != profile["sha256"]):
        findings.add("display", "warn", "about.planned_display",
                     f"planned for {planned['name']!r} but audited on {profile['name']!r} "
                     f"({profile['sha256'][:12]}); check every stimulus again on this display",
                     planned=planned, actual={"name": profile["name"], "sha256": profile["sha256"]})
    for warning in profile_warnings(profile, max_age_days, today):
        findings.add("display", "warn", "display profile", warning)


def _colour(findings, compiled, stimulus, key, where):
    entry = stimulus[key]
    background = compiled.background
    delta = entry["_delta_RGB"]
    for extreme in entry["extremes"]:
        if not extreme["in_gamut"]:
            over = _overshoot(extreme["rgb_linear"])
            fits, channel = scale_limit(background.RGB_0, extreme["modulation"] * delta)
            findings.add("gamut", "fail", where,
                         f"out of gamut at modulation {extreme['modulation']:+g}: "
                         + ", ".join(f"{c} {v:+.4f}" for c, v in over.items())
                         + f" beyond 0..1 (linear); only ×{float(fits):.3f} of this contrast fits",
                         modulation=extreme["modulation"], overshoot=over, max_scale=float(fits),
                         limiting_channel=CHANNELS[int(channel)] if channel >= 0 else None)
    contrast = np.asarray(entry["cone_contrast"])
    pooled = float(np.linalg.norm(contrast))
    if pooled < 1e-9:  # the background itself: no direction to scale
        return
    up, _ = scale_limit(background.RGB_0, delta)
    down, _ = scale_limit(background.RGB_0, -delta)
    findings.add("headroom", "info", where,
                 f"this direction can be scaled ×{float(up):.3f} (and ×{float(down):.3f} the other way) before it "
                 f"leaves the gamut: up to {pooled * float(up):.4f} pooled cone contrast",
                 scale_up=float(up), scale_down=float(down), pooled_cone_contrast=pooled)
    if entry["device"] is not None:
        # Against the background as shown (it is quantised too), which is what the observer adapts to.
        outputs = compiled.model.level_outputs
        shown = compiled.model.RGB_linear_to_LMS(device_to_RGB_linear(np.array(entry["device"]), outputs))
        shown_background = compiled.model.RGB_linear_to_LMS(
            device_to_RGB_linear(np.array(compiled.data["background"]["device"]), outputs))
        realised = shown / shown_background - 1
        error = float(np.max(np.abs(realised - contrast)))
        severity = "warn" if pooled > 0 and error > 0.05 * pooled else "info"
        findings.add("bit_depth", severity, where,
                     f"shown cone contrast differs from the request by at most {error:.5f} (quantisation)",
                     requested=contrast.tolist(), shown=realised.tolist(), error=error)


def _response(findings, compiled, response, label):
    where = f"{label} / {response['kind']} of {response['target']}"
    positions = response["_positions"]
    inside = np.array(response["in_gamut"])
    axes = response["_axes"]
    low, high = positions[0], positions[-1]
    origin_RGB = compiled.model.LMS_to_RGB_linear(
        compiled.background.colour_to_LMS(response["space"], response["_base"]))
    for d, axis in enumerate(axes):
        step_RGB = compiled.model.LMS_to_RGB_linear(
            compiled.background.colour_to_LMS(response["space"], response["_base"] + axis)) - origin_RGB
        top, top_channel = scale_limit(origin_RGB, step_RGB)
        bottom, bottom_channel = scale_limit(origin_RGB, -step_RGB)
        axis_name = f" along axis {d + 1}" if len(axes) > 1 else ""
        for limit, edge, channel, sign in ((high, float(top), top_channel, 1), (low, -float(bottom), bottom_channel, -1)):
            if sign * limit > sign * edge + 1e-9:
                findings.add("gamut", "fail", where,
                             f"limit {limit:+g}{axis_name} lies beyond the gamut edge at {edge:+.4f} by "
                             f"{abs(limit - edge):.4f} ({CHANNELS[int(channel)]} channel); narrow the limits",
                             limit=float(limit), gamut_edge=edge, excess=float(abs(limit - edge)),
                             channel=CHANNELS[int(channel)], axis=d)
    if not inside.all():
        findings.add("gamut", "fail", where, f"{int((~inside).sum())} of {inside.size} positions are out of gamut "
                     "and cannot be shown", out_of_gamut=int((~inside).sum()), positions=int(inside.size))
    device = np.array([d if d is not None else [-1, -1, -1] for d in response["device"]])
    count = response["positions"]["count"]
    grid = device.reshape((count,) * len(axes) + (3,))
    repeated = 0
    steps = 0
    for d in range(len(axes)):
        same = np.all(np.diff(grid, axis=d) == 0, axis=-1) & np.all(np.take(grid, range(1, count), axis=d) >= 0,
                                                                     axis=-1)
        repeated += int(same.sum())
        steps += same.size
    if repeated:
        grain = _grain(compiled, origin_RGB)
        findings.add("bit_depth", "warn", where,
                     f"{repeated} of {steps} fine steps leave the device values unchanged: one digital level "
                     f"(up to {grain:.5f} cone contrast here) is coarser than the fine step",
                     repeated_steps=repeated, steps=steps, level_cone_contrast=grain)


def _grain(compiled, RGB):
    from ..colorimetry.device import RGB_linear_to_device, quantisation_cone_contrast

    levels = RGB_linear_to_device(np.clip(RGB, 0, 1), compiled.model.level_outputs)
    return float(np.max(quantisation_cone_contrast(levels, compiled.model.level_outputs, compiled.model.M_LMS,
                                                   compiled.background.LMS_0)))


def _prediction(findings, compiled, model, index, response, label):
    stimuli = compiled.stimuli[index]
    k = float(model.get("exponent", 1.0))
    background = compiled.background
    if model["kind"] == "after_image":
        adapter = np.asarray(stimuli[model["adapter"]]["colour"]["cone_contrast"])
        predicted = null_cone_contrast(adapter, k)
        what = "null of the after-image"
    else:
        inducer = stimuli[model["inducer"]]
        surround = inducer.get("second_colour", inducer["colour"])["cone_contrast"]
        test = stimuli[model["test"]]["colour"]["cone_contrast"]
        predicted = induced_match_cone_contrast(test, surround, k)
        what = "match to the induced colour"
    LMS = background.LMS_0 * (1 + predicted)
    target = background.LMS_to_space(response["space"], LMS)
    axes = response["_axes"]
    position, *_ = np.linalg.lstsq(axes.T, target - response["_base"], rcond=None)
    off_line = float(np.linalg.norm(response["_base"] + position @ axes - target))
    low, high = response["_positions"][0], response["_positions"][-1]
    margin = float(np.min(np.r_[position - low, high - position]))
    fits, _ = scale_limit(background.RGB_0, background.model.LMS_to_RGB_linear(LMS) - background.RGB_0)
    where = f"{label} / predicted {what}"
    values = dict(exponent=k, predicted_cone_contrast=predicted.tolist(), position=position.tolist(),
                  margin_to_limits=margin, gamut_scale=float(fits), off_adjustment=off_line)
    shown = ", ".join(f"{p:+.3f}" for p in position)
    if margin < 0:
        findings.add("prediction", "fail", where, f"von Kries (k={k:g}) predicts the {what} at position {shown}, "
                     f"outside the limits [{low:g}, {high:g}] by {-margin:.3f}; widen the limits", **values)
    elif fits < 1:
        findings.add("prediction", "fail", where, f"the predicted {what} is out of gamut (only ×{float(fits):.3f} "
                     "fits); reduce the adapting or inducing contrast", **values)
    else:
        findings.add("prediction", "info", where, f"von Kries (k={k:g}) predicts the {what} at position {shown}: "
                     f"{margin:.3f} inside the limits, ×{float(fits):.2f} gamut headroom", **values)


def _distinct_conditions(findings, compiled):
    seen = {}
    for condition in compiled.data["conditions"]:
        key = tuple((n, tuple(map(tuple, [s.get("colour", {}).get("device") or [], s.get("second_colour", {})
                                           .get("device") or []]))) for n, s in sorted(condition["stimuli"].items()))
        if key in seen and seen[key] != condition["labels"]:
            findings.add("bit_depth", "warn", condition["label"],
                         f"shows exactly the same device values as condition '{seen[key]}'; the display cannot "
                         "tell these conditions apart", same_as=seen[key])
        seen.setdefault(key, condition["label"])


def _timing(findings, compiled, protocol):
    refresh = compiled.data["display"]["refresh_hz"]
    for which, schedule in compiled.data["schedules"].items():
        for phase in schedule:
            if "frames" not in phase or phase["requested_s"] == 0:
                continue
            where = f"{'first trial' if which == 'first' else 'later trials'} / {phase['phase']}"
            if phase["frames"] / refresh < phase["requested_s"] and phase["frames"] == 1 and \
                    phase["requested_s"] < 0.5 / refresh:
                findings.add("timing", "warn", where, f"{phase['requested_s']} s is shorter than one frame; shown "
                             f"for one frame ({1 / refresh:.4f} s)", **phase)
            elif abs(phase["actual_s"] - phase["requested_s"]) > 1e-9:
                findings.add("timing", "info", where, f"requested {phase['requested_s']} s is not a whole number "
                             f"of frames at {refresh:g} Hz: shown for {phase['frames']} frames = "
                             f"{phase['actual_s']:.4f} s", **phase)
    for stimulus in protocol["stimuli"]:
        course = stimulus.get("time_course", {})
        if course.get("kind") == "square":
            half = max(1, round(refresh / (2 * course["frequency_hz"])))
            actual = refresh / (2 * half)
            if abs(actual - course["frequency_hz"]) > 0.01 * course["frequency_hz"]:
                findings.add("timing", "warn", stimulus["name"], f"square flicker at {course['frequency_hz']:g} Hz "
                             f"runs at {actual:.3f} Hz ({half} frames per half cycle at {refresh:g} Hz)",
                             requested_hz=course["frequency_hz"], actual_hz=actual)


def _photosensitivity(findings, compiled, protocol) -> bool:
    flicker = any(s.get("time_course", {}).get("kind", "steady") != "steady" for s in protocol["stimuli"])
    if flicker:
        findings.add("photosensitivity", "warn", "protocol", "this protocol flickers. " + CAUTION)
    for condition in compiled.data["conditions"]:
        cases = [(analyse_condition(compiled, condition["index"], protocol), "")]
        response = compiled.responses[condition["index"]]
        if response is not None and response["kind"] == "adjustment":
            course = compiled.stimuli[condition["index"]][response["target"]]["time_course"]
            if course["kind"] != "steady":  # a flickering adjusted target: check the reach of the adjustment too
                ends = [0, len(response["_RGB"]) - 1]
                for end in ends:
                    delta = response["_RGB"][end] - compiled.background.RGB_0
                    label = f" (adjusted to position {', '.join(f'{p:+g}' for p in response['_grid'][end])})"
                    cases.append((analyse_condition(compiled, condition["index"], protocol,
                                                    {response["target"]: delta}), label))
        for result, label in cases:
            _flash_findings(findings, result, condition, label)
    return flicker


def _flash_findings(findings, result, condition, label):
    for key, name in (("general", "general"), ("red_wcag22", "red (WCAG 2.2 / ISO 9241-391)"),
                      ("red_harding", "red (Harding & Binnie)")):
        r = result[key]
        if r["max_flashes_per_second"] <= 3:
            continue
        where = f"{condition['label']} / {r['stimulus']}{label}"
        if r["fails"]:
            findings.add("photosensitivity", "fail", where,
                         f"{r['max_flashes_per_second']} {name} flashes in one second (at {r['at_s']:.2f} s) over "
                         f"{r['flashing_area_sr']:.4f} sr: above WCAG 2.2's 3 flashes and 0.006 sr. Running it "
                         "needs a recorded acknowledgement and ethics approval reference. " + CAUTION,
                         definition=key, **r)
        else:
            findings.add("photosensitivity", "warn", where,
                         f"{r['max_flashes_per_second']} {name} flashes per second, but over only "
                         f"{r['flashing_area_sr']:.4f} sr (≤ 0.006 sr): passes WCAG 2.2 on area", definition=key,
                         **r)


def _geometry(findings, compiled):
    width, height = compiled.data["display"]["size_px"]
    for condition in compiled.data["conditions"][:1]:
        for name, stimulus in condition["stimuli"].items():
            g = stimulus["geometry"]
            if g["shape"] == "uniform_field":
                continue
            radius = max(g.get("surround_size_px") or 0, g.get("size_px") or 0) / 2 or 2 * g.get("sigma_px", 0)
            x, y = g["position_px"]
            if abs(x) + radius > width / 2 or abs(y) + radius > height / 2:
                findings.add("geometry", "fail", name, f"extends beyond the screen ({width}×{height} px at this "
                             "viewing distance); move it or make it smaller", position_px=[x, y], radius_px=radius)
