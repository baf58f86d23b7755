"""The pre-flight audit of a compiled protocol: gamut, headroom, bit depth, timing, predicted after-images and
induction, rod intrusion, photosensitivity and geometry, as one list of findings.

Each finding is ``{"kind", "severity", "where", "message", "values"}`` with severity ``fail`` (the protocol must not
run as it is), ``warn`` (it can run, but look) or ``info``. The audit passes when nothing fails.
"""

from __future__ import annotations

import numpy as np

from ..colorimetry.adaptation import induced_match_cone_contrast, null_cone_contrast
from ..colorimetry.device import device_to_RGB_linear
from ..colorimetry.display import CHANNELS
from ..colorimetry.gamut import scale_limit
from ..colorimetry.geometry import WCAG_FLASH_AREA_SR
from ..colorimetry.rods import DEFAULT_MAX_ROD_CONTRAST, MESOPIC_UPPER_CD_M2, NOT_AVAILABLE
from ..colorimetry.spaces import LMS_to_DKL
from ..errors import InputError
from ..experiment.labels import axis_name as direction_name
from ..experiment.protocol import CAUTION
from ..experiment.timecourse import shown_frequency_hz, square_period_frames
from ..profiles.profile import DEFAULT_MAX_AGE_DAYS, profile_warnings
from .flashes import MAX_FLASHES_PER_SECOND
from .photosensitivity import analyse_sequence
from .screens import audit_screens

__all__ = ["audit_protocol", "KINDS", "SEVERITIES"]

KINDS = ("display", "gamut", "headroom", "bit_depth", "timing", "prediction", "rods", "photosensitivity", "geometry",
         "screens")
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
    rods = _RodCheck(compiled, protocol, findings)
    for condition in compiled.data["conditions"]:
        index = condition["index"]
        label = condition["label"]
        for name, stimulus in compiled.stimuli[index].items():
            for key, entry in stimulus.colours().items():
                where = f"{label} / {name}" + ("" if key == "colour" else " (second colour)")
                _colour(findings, compiled, entry, where)
                rods.check(entry, where)
        response = compiled.responses[index]
        if response is not None:
            _response(findings, compiled, response, label)
        if "adaptation_model" in protocol and response is not None and response.kind == "adjustment":
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
    audit_screens(findings, compiled, protocol)  # text colour, keys, session duration
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


def _colour(findings, compiled, entry, where):
    background = compiled.background
    delta = entry.delta_RGB
    for extreme in entry.extremes:
        if not extreme["in_gamut"]:
            over = _overshoot(extreme["rgb_linear"])
            fits, channel = scale_limit(background.RGB_0, extreme["modulation"] * delta)
            findings.add("gamut", "fail", where,
                         f"out of gamut at modulation {extreme['modulation']:+g}: "
                         + ", ".join(f"{c} {v:+.4f}" for c, v in over.items())
                         + f" beyond 0..1 (linear); only ×{float(fits):.3f} of this contrast fits",
                         modulation=extreme["modulation"], overshoot=over, in_gamut_scale=float(fits),
                         limiting_channel=CHANNELS[int(channel)] if channel >= 0 else None)
    contrast = np.asarray(entry.cone_contrast)
    pooled = float(np.linalg.norm(contrast))
    if pooled < 1e-9:  # the background itself: no direction to scale
        return
    up, _ = scale_limit(background.RGB_0, delta)
    down, _ = scale_limit(background.RGB_0, -delta)
    findings.add("headroom", "info", where,
                 f"this direction can be scaled ×{float(up):.3f} (and ×{float(down):.3f} the other way) before it "
                 f"leaves the gamut: up to {pooled * float(up):.4f} pooled cone contrast",
                 scale_up=float(up), scale_down=float(down), pooled_cone_contrast=pooled)
    if entry.device is not None:
        # Against the background as shown (it is quantised too), which is what the observer adapts to.
        outputs = compiled.model.level_outputs
        shown = compiled.model.RGB_linear_to_LMS(device_to_RGB_linear(np.array(entry.device), outputs))
        shown_background = compiled.model.RGB_linear_to_LMS(
            device_to_RGB_linear(np.array(compiled.data["background"]["device"]), outputs))
        realised = shown / shown_background - 1
        error = float(np.max(np.abs(realised - contrast)))
        severity = "warn" if pooled > 0 and error > 0.05 * pooled else "info"
        findings.add("bit_depth", severity, where,
                     f"shown cone contrast differs from the request by at most {error:.5f} (quantisation)",
                     requested=contrast.tolist(), shown=realised.tolist(), error=error)


class _RodCheck:
    """Rod contrast of every stimulus colour against the background, and the mesopic warning.

    On a background below 5 cd/m² photopic (the upper mesopic limit, CIE 191:2010) rods add to what a stimulus
    does. A stimulus meant to be isoluminant (DKL lum = 0) or cone-isolating (one cone class alone) warns when its
    rod contrast exceeds the protocol's ``rods.max_rod_contrast`` (default 1 %, a default to adjust, not a
    standard). Three primaries cannot also silence the rods, so nothing here claims rod silence.
    """

    def __init__(self, compiled, protocol, findings):
        self.findings = findings
        self.background = compiled.background
        self.response = compiled.model.rods
        self.limit = float(protocol.get("rods", {}).get("max_rod_contrast", DEFAULT_MAX_ROD_CONTRAST))
        self.luminance = float(compiled.model.RGB_linear_to_luminance(self.background.RGB_0))
        self.mesopic = self.luminance < MESOPIC_UPPER_CD_M2
        if self.response is None:
            severity = "warn" if self.mesopic else "info"
            extra = (f"; the background ({self.luminance:.3g} cd/m²) is below the mesopic limit of "
                     f"{MESOPIC_UPPER_CD_M2:g} cd/m², so rods may contribute: measure the spectra" if self.mesopic
                     else "")
            findings.add("rods", severity, "display profile", NOT_AVAILABLE + extra, rod_contrast=None)

    def check(self, entry, where):
        if self.response is None:
            return
        background = self.background
        contrast = np.asarray(entry.cone_contrast)
        pooled = float(np.linalg.norm(contrast))
        if pooled < 1e-9:
            return
        rod = float(self.response.contrast_of_change(entry.delta_RGB, background.RGB_0))
        largest = max(abs(rod * e["modulation"]) for e in entry.extremes)
        obs = background.model.observer
        lum = float(LMS_to_DKL(np.asarray(entry.lms), background.LMS_0, obs.w_L, obs.w_M)[0])
        isoluminant = abs(lum) <= 1e-6 * pooled
        isolating = int(np.sum(np.abs(contrast) > 1e-6 * pooled)) == 1
        values = dict(rod_contrast=rod, largest_rod_contrast=largest, background_cd_m2=self.luminance,
                      mesopic=self.mesopic, isoluminant=isoluminant, cone_isolating=isolating, limit=self.limit)
        meant = "isoluminant" if isoluminant else "cone-isolating" if isolating else None
        if self.mesopic and meant and largest > self.limit:
            self.findings.add("rods", "warn", where,
                              f"{meant} stimulus with rod contrast up to {largest:.4f} on a mesopic background "
                              f"({self.luminance:.3g} cd/m² < {MESOPIC_UPPER_CD_M2:g}, CIE 191:2010): above the "
                              f"protocol's limit of {self.limit:g}; rods may add to what it does. A three-primary "
                              "display cannot silence rods: raise the background luminance, or set "
                              "rods.max_rod_contrast knowingly", **values)
        else:
            self.findings.add("rods", "info", where,
                              f"rod contrast {rod:+.4f} against the background (up to {largest:.4f} over its "
                              "modulation); a three-primary display cannot silence rods", **values)


def _response(findings, compiled, response, label):
    where = f"{label} / {response.kind} of {response.target}"
    reachable = np.ones(len(response.in_gamut), bool) if response.reachable is None else np.asarray(response.reachable)
    inside = np.array(response.in_gamut) | ~reachable  # an unreachable position need not be shown
    axes = response.axes
    limits = response.axis_limits()
    origin_RGB = compiled.model.LMS_to_RGB_linear(
        compiled.background.colour_to_LMS(response.space, response.base))
    for d, axis in enumerate(axes):
        step_RGB = compiled.model.LMS_to_RGB_linear(
            compiled.background.colour_to_LMS(response.space, response.base + axis)) - origin_RGB
        top, top_channel = scale_limit(origin_RGB, step_RGB)
        bottom, bottom_channel = scale_limit(origin_RGB, -step_RGB)
        axis_name = f" along {direction_name(axis.tolist(), response.space)}" if len(axes) > 1 else ""
        low, high = limits[d]
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
    device = np.array([d if d is not None else [-1, -1, -1] for d in response.device])
    count = response.positions.size
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

    device = RGB_linear_to_device(np.clip(RGB, 0, 1), compiled.model.level_outputs)
    return float(np.max(quantisation_cone_contrast(device, compiled.model.level_outputs, compiled.model.M_LMS,
                                                   compiled.background.LMS_0)))


def _prediction(findings, compiled, adaptation_model, index, response, label):
    stimuli = compiled.stimuli[index]
    k = float(adaptation_model.get("exponent", 1.0))
    background = compiled.background
    if adaptation_model["kind"] == "after_image":
        adapter = np.asarray(stimuli[adaptation_model["adapter"]].colour.cone_contrast)
        predicted = null_cone_contrast(adapter, k)
        what = "null of the after-image"
    else:
        inducer = stimuli[adaptation_model["inducer"]]
        surround = (inducer.second_colour or inducer.colour).cone_contrast
        test = stimuli[adaptation_model["test"]].colour.cone_contrast
        predicted = induced_match_cone_contrast(test, surround, k)
        what = "match to the induced colour"
    LMS = background.LMS_0 * (1 + predicted)
    target = background.LMS_to_space(response.space, LMS)
    axes = response.axes
    position, *_ = np.linalg.lstsq(axes.T, target - response.base, rcond=None)
    off_line = float(np.linalg.norm(response.base + position @ axes - target))
    limits = response.axis_limits()
    low, high = limits[:, 0], limits[:, 1]
    shown_limits = " and ".join(f"[{a:g}, {b:g}]" for a, b in limits)
    margin = float(np.min(np.r_[position - low, high - position]))
    fits, _ = scale_limit(background.RGB_0, background.model.LMS_to_RGB_linear(LMS) - background.RGB_0)
    where = f"{label} / predicted {what}"
    values = dict(exponent=k, predicted_cone_contrast=predicted.tolist(), position=position.tolist(),
                  margin_to_limits=margin, gamut_scale=float(fits), off_adjustment=off_line)
    shown = ", ".join(f"{p:+.3f}" for p in position)
    if margin < 0:
        findings.add("prediction", "fail", where, f"von Kries (k={k:g}) predicts the {what} at position {shown}, "
                     f"outside the limits {shown_limits} by {-margin:.3f}; widen the limits", **values)
    elif fits < 1:
        findings.add("prediction", "fail", where, f"the predicted {what} is out of gamut (only ×{float(fits):.3f} "
                     "fits); reduce the adapting or inducing contrast", **values)
    else:
        findings.add("prediction", "info", where, f"von Kries (k={k:g}) predicts the {what} at position {shown}: "
                     f"{margin:.3f} (in position units) from the nearest limit, and the predicted colour could be "
                     f"scaled ×{float(fits):.2f} before it leaves the gamut", **values)


def _distinct_conditions(findings, compiled):
    seen = {}
    for condition in compiled.data["conditions"]:
        colours = [(name, [stimulus.get("colour"), stimulus.get("second_colour")])
                   for name, stimulus in sorted(condition["stimuli"].items())]
        if any(c is not None and c.get("device") is None for _, pair in colours for c in pair):
            continue  # out of gamut: the gamut check fails it; it has no device values to compare
        key = tuple((name, tuple(tuple(c["device"]) if c is not None else () for c in pair)) for name, pair in colours)
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
            if phase["requested_s"] < 1 / refresh:
                findings.add("timing", "warn", where, f"{phase['requested_s']} s is shorter than one frame at "
                             f"{refresh:g} Hz; it is shown for one frame ({1000 / refresh:.1f} ms)", **phase)
            elif abs(phase["actual_s"] - phase["requested_s"]) > 1e-9:
                findings.add("timing", "info", where, f"requested {phase['requested_s']} s is not a whole number "
                             f"of frames at {refresh:g} Hz: shown for {phase['frames']} frames = "
                             f"{phase['actual_s']:.4f} s", **phase)
    for stimulus in protocol["stimuli"]:
        course = stimulus.get("time_course", {})
        if course.get("kind") == "square":
            period = square_period_frames(course["frequency_hz"], refresh)
            actual = shown_frequency_hz(course, refresh)
            if abs(actual - course["frequency_hz"]) > 0.01 * course["frequency_hz"]:
                findings.add("timing", "warn", stimulus["name"], f"square flicker at {course['frequency_hz']:g} Hz "
                             f"runs at {actual:.3f} Hz ({period} frames per cycle, {(period + 1) // 2} on and "
                             f"{period // 2} off, at {refresh:g} Hz)",
                             requested_hz=course["frequency_hz"], actual_hz=actual, period_frames=period)


def _photosensitivity(findings, compiled, protocol) -> bool:
    flicker = any(s.get("time_course", {}).get("kind", "steady") != "steady" for s in protocol["stimuli"])
    if flicker:
        flickering = ", ".join(s["name"] for s in protocol["stimuli"] if s.get("time_course", {}).get("kind", "steady")
                               != "steady")
        # The caution itself is the report's ``caution``, shown once above the findings by every front end.
        findings.add("photosensitivity", "warn", "protocol", f"this protocol flickers ({flickering}): the "
                     "photosensitivity caution applies, and the runner shows it before every session")
    cases = [(analyse_sequence(compiled), "")]
    ends = {}
    for condition in compiled.conditions:
        response = condition.response
        if response is not None and response.kind == "adjustment" and \
                condition.stimuli[response.target].time_course["kind"] != "steady":
            for end in (0, len(response.RGB) - 1):  # a flickering adjusted target: the reach of the adjustment too
                ends.setdefault(end, ", ".join(f"{p:+g}" for p in response.grid[end]))
    for end, position in sorted(ends.items()):
        cases.append((analyse_sequence(compiled, ladder=end), f" (adjusted to position {position})"))
    seen = set()
    for result, label in cases:
        _flash_findings(findings, compiled, result, label, seen)
    if not any(f["kind"] == "photosensitivity" and f["severity"] in ("fail", "warn") and f["where"] != "protocol"
               for f in findings):
        # Say the result, not only the absence of findings: the whole frame sequence was analysed.
        most = {key: max(result[key]["max_flashes_per_second"] for result, _ in cases)
                for key in ("general", "red_wcag22", "red_harding")}
        findings.add("photosensitivity", "info", "every frame of every trial",
                     f"passes WCAG 2.2 SC 2.3.1: at most {most['general']} general and "
                     f"{max(most['red_wcag22'], most['red_harding'])} red flashes in any one second "
                     f"(limit {MAX_FLASHES_PER_SECOND}), phase changes and an adjustment's reach included",
                     max_flashes_per_second=most)
    return flicker


def _flash_findings(findings, compiled, result, label, seen):
    for key, name in (("general", "general"), ("red_wcag22", "red (WCAG 2.2 / ISO 9241-391)"),
                      ("red_harding", "red (Harding & Binnie)")):
        r = result[key]
        if r["max_flashes_per_second"] <= MAX_FLASHES_PER_SECOND:
            continue
        what = ("the change between phases " + " → ".join(r["phases"]) + f" ({r['stimulus']})") if r["transition"] \
            else r["stimulus"]
        where = f"{compiled.data['conditions'][r['condition']]['label']} / {what}{label}"
        signature = (key, r["max_flashes_per_second"], round(r["flashing_area_sr"], 5), r["stimulus"], r["fails"])
        if signature in seen:
            continue
        seen.add(signature)
        when = f"from {r['at_s']:.2f} s into the {r['phase']} phase of trial {r['trial'] + 1}"
        if r["fails"]:
            findings.add("photosensitivity", "fail", where,
                         f"{r['max_flashes_per_second']} {name} flashes in one second ({when}) over "
                         f"{r['flashing_area_sr']:.4f} sr within a 10° field: above WCAG 2.2's 3 flashes and "
                         f"{WCAG_FLASH_AREA_SR} sr. Running it needs a recorded acknowledgement and ethics approval "
                         "reference. " + CAUTION, definition=key, **r)
        else:
            findings.add("photosensitivity", "warn", where,
                         f"{r['max_flashes_per_second']} {name} flashes per second ({when}), but over only "
                         f"{r['flashing_area_sr']:.4f} sr within a 10° field (≤ {WCAG_FLASH_AREA_SR} sr): passes "
                         "WCAG 2.2 on area", definition=key, **r)


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
