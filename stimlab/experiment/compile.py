"""Compile a protocol for one display and observer: every colour to device levels, every duration to frames,
every size to pixels, every random choice from the recorded seed.

The result is plain JSON-able data that a runner can play without colour maths: device levels for each
stimulus in each condition (``None`` where a colour is out of gamut: never clipped), tables from modulation value
to device levels for flicker, ramps and gratings, and for each adjustment the ladder of positions with their
device levels and the affine map from position to cone excitations for the log.
"""

from __future__ import annotations

import random

import numpy as np
from numpy.typing import NDArray

from ..colorimetry.device import RGB_linear_to_device_or_none
from ..colorimetry.display import DisplayModel
from ..colorimetry.geometry import degrees_to_cm, eccentricity_to_cm
from ..colorimetry.observers import observer as standard_observer
from ..colorimetry.stimulus import Background
from ..errors import InputError
from .compiled import Compiled, CompiledColour, CompiledCondition, CompiledStimulus
from .design import conditions_from_variables, trial_order
from .plan import build_plan, plan_sha256
from .protocol import json_path, protocol_sha256
from .responses import DEFAULT_MAX_TRIALS, compile_response
from .screens import add_screens
from .timecourse import DROPPED_FRAME_PERIODS, STEPS, phase_frames, shown_frequency_hz

__all__ = ["compile_protocol", "Compiled", "MODULATION_STEPS", "REFERENCE_GREY", "DEFAULT_FIXATION_SIZE_DEG",
           "DEFAULT_FIXATION_COLOUR"]

REFERENCE_GREY = (0.5, 0.5, 0.5)
"""Linear RGB of the reference grey that backgrounds in cone contrast or DKL are relative to."""

MODULATION_STEPS = STEPS
"""Modulation tables run from −1 to 1 in 2·255 + 1 steps (the time-course rule's steps): finer than one level of an
8-bit display."""

DEFAULT_FIXATION_SIZE_DEG = 0.4
"""Size of the fixation mark when the protocol does not say (degrees of visual angle; a few tenths of a degree is
common practice, large enough to hold the gaze and small enough to leave a central test patch visible)."""

DEFAULT_FIXATION_COLOUR = {"dkl": [-0.5, 0, 0]}
"""Colour of the fixation mark when the protocol does not say: a darker neutral, an offset from the background
along the DKL luminance axis only, so that it does not pull chromatic adaptation away from the background (a
luminance-only mark is common practice, from memory; the size of the offset is this program's choice)."""


def _resolve(value, values: dict):
    return values[value[1:]] if isinstance(value, str) and value.startswith("$") else value


def _colour_to_LMS(colour: dict, background: Background, values: dict, where: str) -> NDArray[np.float64]:
    space = next(k for k in colour if k != "scale")
    vector = _resolve(colour[space], values)
    vector = np.array([_resolve(v, values) for v in vector], dtype=float)
    scale = float(_resolve(colour.get("scale", 1.0), values))
    try:
        if space == "macleod_boynton":
            return background.colour_to_LMS("macleod_boynton", vector)
        return background.colour_to_LMS(space, scale * vector)
    except ValueError as error:
        raise InputError(str(error), field=where) from None


def _modulation_extremes(stimulus: dict) -> tuple[float, ...]:
    course = stimulus.get("time_course", {"kind": "steady"})
    spatial = (-1.0, 1.0) if stimulus["shape"] == "grating" else (1.0,)
    if course["kind"] == "steady":
        temporal = (1.0,)
    elif course.get("mode") == "on_off":
        temporal = (0.0, 1.0)
    else:
        temporal = (-1.0, 1.0)
    return tuple(sorted({t * s for t in temporal for s in spatial}))


def needs_modulation_table(stimulus: dict) -> bool:
    """Whether a stimulus needs a 511-entry modulation table rather than one colour.

    Parameters
    ----------
    stimulus
        A protocol stimulus entry (``shape`` and optional ``time_course``).

    Returns
    -------
    bool
        Truthy for flicker, a ramp on or off, or a per-pixel shape (``gaussian``, ``grating``); falsy otherwise.
    """
    course = stimulus.get("time_course", {"kind": "steady"})
    return (course["kind"] != "steady" or course.get("ramp_on_ms") or course.get("ramp_off_ms")
            or stimulus["shape"] in ("grating", "gaussian"))


def _device_or_none(background: Background, RGB: NDArray[np.float64]):
    return RGB_linear_to_device_or_none(RGB, background.model.level_outputs)


def _compile_colour(background: Background, LMS: NDArray[np.float64], stimulus: dict) -> CompiledColour:
    RGB_0 = background.RGB_0
    delta_RGB = background.model.LMS_to_RGB_linear(LMS) - RGB_0
    extremes = _modulation_extremes(stimulus)
    RGB_extremes = RGB_0 + np.outer(extremes, delta_RGB)
    device, inside = _device_or_none(background, RGB_extremes)
    table = None
    if needs_modulation_table(stimulus):
        m = np.linspace(-1, 1, 2 * MODULATION_STEPS + 1)
        table, _ = _device_or_none(background, RGB_0 + np.outer(m, delta_RGB))
    return CompiledColour(
        lms=LMS.tolist(), cone_contrast=(LMS / background.LMS_0 - 1).tolist(), rgb_linear=(RGB_0 + delta_RGB).tolist(),
        device=device[extremes.index(1.0)],
        extremes=[{"modulation": m, "rgb_linear": rgb.tolist(), "device": d, "in_gamut": bool(ok)}
                  for m, rgb, d, ok in zip(extremes, RGB_extremes, device, inside)],
        in_gamut=bool(inside.all()), delta_RGB=delta_RGB, modulation_table=table)


def _geometry(stimulus: dict, distance_cm: float, px_per_cm: float) -> dict:
    def px(size_key):
        return degrees_to_cm(stimulus[size_key], distance_cm) * px_per_cm if size_key in stimulus else None

    x, y = stimulus.get("position_deg", (0.0, 0.0))
    geometry = {"shape": stimulus["shape"],
                "position_px": [eccentricity_to_cm(x, distance_cm) * px_per_cm,
                                eccentricity_to_cm(y, distance_cm) * px_per_cm]}
    for key in ("size_deg", "inner_size_deg", "surround_size_deg", "sigma_deg"):
        if key in stimulus:
            geometry[key.replace("_deg", "_px")] = px(key)
    if "cycles_per_deg" in stimulus:
        geometry["cycles_per_px"] = stimulus["cycles_per_deg"] / (degrees_to_cm(1.0, distance_cm) * px_per_cm)
        geometry["orientation_deg"] = stimulus.get("orientation_deg", 0.0)
    return geometry


def _time_course(stimulus: dict, refresh_hz: float) -> dict:
    course = dict(stimulus.get("time_course", {"kind": "steady"}))
    for key in ("ramp_on_ms", "ramp_off_ms"):
        if course.get(key):
            course[key.replace("_ms", "_frames")] = phase_frames(course[key] / 1000, refresh_hz)
    if course["kind"] != "steady":
        course["shown_frequency_hz"] = shown_frequency_hz(course, refresh_hz)
    return course


def _schedules(protocol: dict, refresh_hz: float) -> dict:
    schedules = {"first": [], "repeat": []}
    for phase in protocol["trial"]:
        for which in schedules:
            name = phase["phase"]
            seconds = phase.get("duration_s", 0.0)
            if name == "adapt" and which == "repeat" and "top_up_s" in phase:
                name, seconds = "top_up", phase["top_up_s"]
            entry = {"phase": name, "stimuli": phase.get("stimuli", []), "fixation": phase.get("fixation", True)}
            if phase["phase"] == "respond":
                entry["timeout_frames"] = phase_frames(phase["timeout_s"], refresh_hz) if "timeout_s" in phase else None
                entry["response"] = phase["response"]["method"]
                if "keys" in phase["response"]:
                    entry["keys"] = phase["response"]["keys"]
            else:
                frames = phase_frames(seconds, refresh_hz)
                entry.update(frames=frames, requested_s=seconds, actual_s=frames / refresh_hz)
            schedules[which].append(entry)
    return schedules


def _background(protocol: dict, model: DisplayModel) -> Background:
    spec = protocol["background"]
    space, value = next(iter(spec.items()))
    field = json_path(["background", space])
    if space == "rgb_linear":
        return Background(model, value, field)
    if space == "macleod_boynton":
        return Background.from_MacLeod_Boynton(model, *value, field=field)
    grey = Background(model, REFERENCE_GREY, field)
    return Background.from_LMS(model, grey.colour_to_LMS(space, value), field)


def _response(protocol: dict):
    for i, phase in enumerate(protocol["trial"]):
        if phase["phase"] == "respond":
            return i, phase["response"]
    return None, None


def compile_protocol(protocol: dict, profile: dict, *, participant: int = 1, seed: int | None = None,
                     obs=None, name: str = "protocol") -> Compiled:
    """Compile a validated protocol for a display profile.

    Parameters
    ----------
    protocol
        A protocol that passed :func:`stimlab.experiment.protocol.validate_protocol`.
    profile
        A checked display profile (``size_cm``, ``size_px``, ``refresh_hz`` in Hz, ``bits``, its models).
    participant
        1-based participant number (≥ 1), for Latin-square counterbalancing: participant p takes row
        (p − 1) modulo the number of rows.
    seed
        Overrides the protocol's seed (an integer ≥ 0; the one used is recorded either way).
    obs
        An :class:`~stimlab.colorimetry.observers.Observer` to use instead of the protocol's (e.g. an adjusted one).
    name
        The file or form name given in errors.

    Returns
    -------
    Compiled
        ``data`` for the runner (durations in whole frames at the display's refresh rate, sizes and positions in
        pixels, colours as device levels or ``None`` out of gamut, never clipped) and the typed conditions the
        audit reads.

    Raises
    ------
    InputError
        For a stored observer adjustment without its data folder, a profile without a screen size, a background or
        colour no display can show (cone contrast at or below −1), or a response that cannot be compiled (see
        :func:`~stimlab.experiment.responses.compile_response`), with ``field`` its JSON path.

    References
    ----------
    .. [1] Williams, E. J. (1949). Experimental designs balanced for the estimation of residual effects of
       treatments. Australian Journal of Scientific Research, Series A, 2, 149–168 (the Latin-square orders).
    .. [2] Derrington, A. M., Krauskopf, J. & Lennie, P. (1984). Chromatic mechanisms in lateral geniculate
       nucleus of macaque. J. Physiol. 357, 241–265 (the DKL space); Brainard, D. H. (1996). Cone contrast and
       opponent modulation color spaces. In Kaiser & Boynton, Human Color Vision, 2nd ed., 563–579 (computing it
       for a calibrated display).
    """
    about = protocol["about"]
    if obs is None:
        if about["observer"].startswith("adjusted:"):
            raise InputError("this protocol uses a stored observer adjustment; give the data folder that keeps it "
                             "(--data DIR) or a standard observer", file=name, field="about.observer")
        obs = standard_observer(about["observer"])
    if not profile.get("size_cm") or not profile.get("size_px"):
        raise InputError("the display profile has no screen size; rebuild it with --size-cm and --size-px",
                         field="size_cm")
    model = DisplayModel(profile, obs)
    refresh = float(profile["refresh_hz"])
    try:
        background = _background(protocol, model)
    except InputError as error:
        raise InputError(error.message, file=name, field=error.field) from None
    distance = float(about["viewing_distance_cm"])
    px_per_cm = profile["size_px"][0] / profile["size_cm"][0]
    design = protocol["conditions"]
    seed = int(design.get("seed", 0) if seed is None else seed)
    rng = random.Random(seed)
    conditions = conditions_from_variables(design.get("variables", {}))
    response_index, response = _response(protocol)

    compiled_conditions = []
    for condition in conditions:
        values = condition["values"]
        stimuli = {}
        for i, stimulus in enumerate(protocol["stimuli"]):
            entry = CompiledStimulus(name=stimulus["name"], geometry=_geometry(stimulus, distance, px_per_cm),
                                     time_course=_time_course(stimulus, refresh), source=stimulus)
            for key in ("colour", "second_colour"):
                if key in stimulus:
                    try:  # a colour no display can show (cone contrast at or below −1, overflow) is bad input
                        LMS = _colour_to_LMS(stimulus[key], background, values, json_path(["stimuli", i, key]))
                        setattr(entry, key, _compile_colour(background, LMS, stimulus))
                    except ValueError as error:
                        if isinstance(error, InputError):
                            raise
                        raise InputError(str(error), field=json_path(["stimuli", i, key])) from None
            stimuli[stimulus["name"]] = entry
        compiled_response = None
        if response is not None and response["method"] in ("adjustment", "staircase"):
            where = json_path(["trial", response_index, "response"])
            try:
                compiled_response = compile_response(response, stimuli, background, where, values)
            except ValueError as error:
                if isinstance(error, InputError):
                    raise
                raise InputError(str(error), field=where) from None
        compiled_conditions.append(CompiledCondition(index=condition["index"], label=condition["label"],
                                                     labels=condition["labels"], stimuli=stimuli,
                                                     response=compiled_response))

    schedules = _schedules(protocol, refresh)
    trials = _trials(design, conditions, response, [c.response for c in compiled_conditions], rng, participant)
    data = {
        "stimlab_compiled": 1,
        "protocol": {"title": about["title"], "version": about.get("version", ""), "sha256": protocol_sha256(protocol)},
        "display": {"name": profile["name"], "sha256": profile["sha256"], "refresh_hz": refresh,
                    "bits": profile["bits"], "size_px": profile["size_px"], "size_cm": profile["size_cm"]},
        "observer": {"key": obs.key, "w_L": obs.w_L, "w_M": obs.w_M, "adjustment": obs.adjustment},
        "viewing_distance_cm": distance,
        "pixels_per_degree": degrees_to_cm(1.0, distance) * px_per_cm,
        "seed": seed,
        "participant": participant,
        "background": {"rgb_linear": background.RGB_0.tolist(), "lms": background.LMS_0.tolist(),
                       "device": background.to_device("rgb_linear", background.RGB_0).tolist()},
        "fixation": _fixation(protocol, background, distance, px_per_cm),
        "schedules": schedules,
        "dropped_frame_periods": DROPPED_FRAME_PERIODS,
        "adaptation_model": protocol.get("adaptation_model"),
        "photometry": protocol.get("photometry"),
        "conditions": [c.to_json() for c in compiled_conditions],
        "trials": trials,
    }
    compiled = Compiled(data, model, background, compiled_conditions)
    add_screens(compiled, protocol, rng)  # screens, keys, practice trials, breaks, pre-adaptation (screens.py)
    data["plan"] = build_plan(compiled_conditions[0].stimuli, data["schedules"], refresh)
    data["plan_sha256"] = plan_sha256(data)
    return compiled


def _fixation(protocol, background, distance, px_per_cm):
    spec = protocol.get("fixation")
    if spec is None:
        return None
    colour = spec.get("colour", DEFAULT_FIXATION_COLOUR)
    LMS = _colour_to_LMS(colour, background, {}, "fixation.colour")
    device, inside = _device_or_none(background, background.model.LMS_to_RGB_linear(LMS)[None, :])
    size_deg = spec.get("size_deg", DEFAULT_FIXATION_SIZE_DEG)
    return {"shape": spec.get("shape", "cross"), "size_px": degrees_to_cm(size_deg, distance) * px_per_cm,
            "device": device[0], "in_gamut": bool(inside[0])}


def _trials(design, conditions, response, responses, rng, participant) -> list:
    repeats = int(design.get("repeats", 1))
    if response is not None and response["method"] == "staircase":
        repeats = max(repeats, int(response.get("max_trials", DEFAULT_MAX_TRIALS)))
    blocks = design.get("blocks")
    if blocks:
        key = blocks["by"]
        groups: dict = {}
        for c in conditions:
            groups.setdefault(c["labels"][key], []).append(c["index"])
        block_lists = trial_order(list(groups.values()), blocks.get("order", "fixed"), rng, participant)
    else:
        block_lists = [[c["index"] for c in conditions]]
    trials = []
    for block, members in enumerate(block_lists):
        order = design.get("order", "shuffled")
        if order == "latin_square":
            sequence = [c for _ in range(repeats) for c in trial_order(members, order, rng, participant)]
        else:
            sequence = trial_order([c for _ in range(repeats) for c in members], order, rng)
        for position, condition in enumerate(sequence):
            trial = {"index": len(trials), "block": block, "condition": condition,
                     "schedule": "first" if position == 0 else "repeat"}
            compiled = responses[condition]
            if compiled is not None and compiled.kind == "adjustment":
                trial["start"] = compiled.start(rng)
            if response is not None and "2afc" in (response["method"], response.get("task")):
                trial["target_side"] = rng.choice(("left", "right"))
            trials.append(trial)
    return trials
