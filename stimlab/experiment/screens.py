"""What the participant sees around the trials, compiled for the runner: the text screens (instructions with a
legend of the actual response keys, ready, pre-adaptation, break, pause, resume, end, error), the colour of their
text in device levels, the response keys with their defaults, practice trials, break positions and the
pre-adaptation period.

Every screen is drawn on the protocol's background; the text is an offset from the background along the DKL
luminance axis, so that reading the screen keeps the participant adapted to the background. The runner only
draws these lines and fills in ``{done}``, ``{total}`` and ``{seconds}``: it chooses no colours and no words.
"""

from __future__ import annotations

import copy

import numpy as np

from ..errors import InputError

__all__ = ["add_screens", "response_keys", "scale_durations", "DEFAULT_PRE_ADAPTATION_S", "DEFAULT_TEXT_LUMINANCE",
           "RESERVED_KEYS"]

DEFAULT_PRE_ADAPTATION_S = 60.0
"""Seconds of background alone before the first trial and after every break (one to two minutes is common practice
in chromatic adaptation studies; the protocol's ``session.pre_adaptation_s`` sets it)."""

DEFAULT_TEXT_LUMINANCE = -0.3
"""Text colour: this offset from the background along the DKL luminance axis (pooled cone contrast, so about 17 %
luminance contrast), a darker neutral that is readable without pulling adaptation away from the background. On a
mid-grey background its change stays under the WCAG 2.2 flash transition of 10 % of the white's luminance.

This is a deliberate trade-off: on the demo display's mid-grey it gives a contrast ratio of about 1.2:1, far below
the WCAG 2.2 contrast minimum for text (success criterion 1.4.3, 4.5:1), which assumes a reader adapted to the page
rather than to a test background. The runner draws the text about 0.6° high (static/js/runner/screens.js) to keep
it legible at this contrast; the protocol's ``session.text_luminance`` sets a stronger offset where adaptation
matters less."""

GAMUT_TOLERANCE = 1e-9
"""Linear RGB this far outside 0..1 still counts as inside the gamut: rounding in the matrix inverse, far below one
device level (common practice)."""

RESERVED_KEYS = ("Escape",)
"""Keys the runner keeps for itself: Escape pauses."""

DEFAULT_KEYS = {
    "axis": ["ArrowUp", "ArrowDown"],
    "plane": ["ArrowRight", "ArrowLeft", "ArrowUp", "ArrowDown"],
    "2afc": ["ArrowLeft", "ArrowRight"],
    "yes_no": ["y", "n"],
    "duration": [" "],
}
DEFAULT_CONFIRM = ["Enter"]
DEFAULT_COARSE = "Shift"

KEY_NAMES = {" ": "Space", "ArrowUp": "↑", "ArrowDown": "↓", "ArrowLeft": "←", "ArrowRight": "→"}


def _key_name(key: str) -> str:
    return KEY_NAMES.get(key, key)


def response_keys(response: dict | None) -> dict | None:
    """The keys a response takes, with defaults filled in, and a legend in the participant's words.

    Parameters
    ----------
    response
        A protocol respond phase's ``response`` (``method``, optional ``keys``, ``confirm_keys``, ``coarse_key``),
        or ``None``. Keys are DOM ``KeyboardEvent.key`` values.

    Returns
    -------
    dict or None
        ``{"method", "keys", "confirm", "coarse", "moves", "legend"}``: ``moves`` maps each adjustment key to
        ``[direction index (0 or 1), sign (+1 or −1)]``; ``legend`` is a list of ``[keys shown, what they do]``.
        ``None`` without a response phase.

    Raises
    ------
    InputError
        For an adjustment without 2 keys (on an axis) or 4 (in a plane), or a 2AFC or yes–no task with fewer than 2.

    Examples
    --------
    >>> response_keys({"method": "yes_no"})["keys"]
    ['y', 'n']
    """
    if response is None:
        return None
    method = response["method"]
    task = response.get("task", method) if method == "staircase" else method
    out = {"method": method, "confirm": [], "coarse": None, "moves": {}, "legend": []}
    if method == "adjustment":
        plane = "plane" in response
        keys = list(response.get("keys") or DEFAULT_KEYS["plane" if plane else "axis"])
        if len(keys) != (4 if plane else 2):
            order = "first +, first −, second +, second −" if plane else "increase, decrease"
            raise InputError(f"an adjustment {'in a plane' if plane else 'along an axis'} takes "
                             f"{4 if plane else 2} keys ({order}); got {len(keys)}", field="response.keys")
        out["confirm"] = list(response.get("confirm_keys") or DEFAULT_CONFIRM)
        coarse = response.get("coarse_key", DEFAULT_COARSE)
        out["coarse"] = None if coarse == "none" else coarse
        for i, key in enumerate(keys):
            out["moves"][key] = [i // 2, 1 if i % 2 == 0 else -1]
        if plane:
            out["legend"] += [[f"{_key_name(keys[0])} / {_key_name(keys[1])}",
                               "change the colour of the test patch one way, or back"],
                              [f"{_key_name(keys[2])} / {_key_name(keys[3])}", "change it in a second direction, or back"]]
        else:
            out["legend"].append([f"{_key_name(keys[0])} / {_key_name(keys[1])}",
                                  "change the colour of the test patch one way, or back"])
        if out["coarse"]:
            out["legend"].append([f"hold {out['coarse']}", "for larger steps"])
        out["legend"].append([" or ".join(_key_name(k) for k in out["confirm"]),
                              "when the patch looks right: confirm your setting"])
    else:
        keys = list(response.get("keys") or DEFAULT_KEYS.get(task, DEFAULT_KEYS["2afc"]))
        if method == "duration":
            out["legend"].append([_key_name(keys[0]), "as soon as the after-image has gone"])
        elif len(keys) < 2:
            raise InputError(f"a {task} response takes two keys; got {len(keys)}", field="response.keys")
        elif task == "2afc":
            out["legend"] += [[_key_name(keys[0]), "the target was on the left"],
                              [_key_name(keys[1]), "the target was on the right"]]
        else:
            out["legend"] += [[_key_name(keys[0]), "yes, I saw it"], [_key_name(keys[1]), "no"]]
    out["keys"] = keys
    return out


def key_collisions(keys: dict | None) -> list[str]:
    """Messages for keys that mean two things, or that the runner keeps for itself.

    Parameters
    ----------
    keys
        The result of :func:`response_keys`, or ``None``.

    Returns
    -------
    list of str
        One message per clash or reserved key (:data:`RESERVED_KEYS`); empty when there is none.
    """
    if keys is None:
        return []
    roles: dict[str, list[str]] = {}
    for i, key in enumerate(keys["keys"]):
        roles.setdefault(key, []).append(f"response key {i + 1}")
    for key in keys["confirm"]:
        roles.setdefault(key, []).append("confirm")
    if keys["coarse"]:
        roles.setdefault(keys["coarse"], []).append("coarse step")
    problems = [f"{_key_name(k)!r} is both {' and '.join(r)}" for k, r in roles.items() if len(r) > 1]
    problems += [f"{_key_name(k)!r} is kept by the runner (it pauses)" for k in roles if k in RESERVED_KEYS]
    return problems


def _frames(seconds: float, refresh_hz: float) -> int:
    return max(1, int(round(seconds * refresh_hz))) if seconds > 0 else 0


def scale_durations(protocol: dict, factor: float) -> dict:
    """A copy of a protocol with every duration multiplied by ``factor``, for a dry run.

    Phase durations, top-ups, response time-outs, the pre-adaptation, practice adaptation and minimum breaks are
    scaled; flicker frequencies and ramps are not (they shape the stimulus, not the session).

    Parameters
    ----------
    protocol
        A valid protocol; it is not modified.
    factor
        The duration factor, 0 < ``factor`` ≤ 1.

    Returns
    -------
    dict
        The scaled copy, with ``session.pre_adaptation_s`` always set (seconds).

    Raises
    ------
    InputError
        For a factor that is not a number in (0, 1].
    """
    if not (isinstance(factor, (int, float)) and 0 < factor <= 1):
        raise InputError("the dry-run duration factor must be a number above 0 and at most 1", field="dry_run_factor")
    scaled = copy.deepcopy(protocol)
    for phase in scaled["trial"]:
        for key in ("duration_s", "top_up_s", "timeout_s"):
            if key in phase:
                phase[key] = phase[key] * factor
    session = scaled.setdefault("session", {})
    session["pre_adaptation_s"] = session.get("pre_adaptation_s", DEFAULT_PRE_ADAPTATION_S) * factor
    if "adapt_s" in session.get("practice", {}):
        session["practice"]["adapt_s"] *= factor
    if "minimum_s" in session.get("breaks", {}):
        session["breaks"]["minimum_s"] *= factor
    return scaled


def _text_colour(background, offset: float) -> dict:
    LMS = background.colour_to_LMS("dkl", [offset, 0.0, 0.0])
    RGB = background.model.LMS_to_RGB_linear(LMS)
    inside = bool(np.all(RGB >= -GAMUT_TOLERANCE) and np.all(RGB <= 1 + GAMUT_TOLERANCE))
    device = background.to_device("rgb_linear", np.clip(RGB, 0, 1)).tolist() if inside else None
    return {"dkl_luminance": offset, "lms": LMS.tolist(), "rgb_linear": RGB.tolist(), "device": device,
            "in_gamut": inside}


def _practice_trials(spec, conditions, responses, rng) -> list[dict]:
    wanted = spec.get("conditions")
    if wanted:
        by_label = {c["label"]: c["index"] for c in conditions}
        missing = [w for w in wanted if w not in by_label]
        if missing:
            raise InputError(f"no condition is labelled {missing[0]!r}; labels are: " + "; ".join(by_label),
                             field="session.practice.conditions")
        pool = [by_label[w] for w in wanted]
    else:
        pool = [c["index"] for c in conditions]
    trials = []
    for i in range(spec["trials"]):
        condition = pool[i % len(pool)]
        trial = {"block": -1, "condition": condition, "schedule": "practice", "practice": True}
        compiled = responses[condition]
        if compiled is not None and compiled.kind == "adjustment":
            trial["start"] = compiled.start(rng)
        trials.append(trial)
    return trials


def _block_labels(protocol, data) -> dict[int, str]:
    by = protocol["conditions"].get("blocks", {}).get("by")
    labels = {}
    for trial in data["trials"]:
        if by and trial["block"] not in labels:
            labels[trial["block"]] = data["conditions"][trial["condition"]]["labels"][by]
    return labels


def _screen(title: str, paragraphs=(), legend=None, prompt: str = "") -> dict:
    return {"title": title, "paragraphs": [p for p in paragraphs if p], "legend": legend or [], "prompt": prompt}


def add_screens(compiled, protocol: dict, rng) -> None:
    """Add the screens, text colour, keys, practice trials, breaks and pre-adaptation to ``compiled.data``.

    Practice trials come first, flagged ``"practice": true`` (block −1, their own ``practice`` schedule); every
    trial keeps ``"practice"`` so that logs and exports can tell them apart. Trial indices are renumbered in order.

    Parameters
    ----------
    compiled
        The :class:`~stimlab.experiment.compiled.Compiled` protocol; its ``data`` is changed in place (durations
        in whole frames at the display's refresh rate, text colour in device levels).
    protocol
        The protocol it was compiled from (its ``session`` settings).
    rng
        The session's :class:`random.Random`, seeded with the recorded seed, for practice trials' adjustment starts
        (drawn after the main trials' draws, so adding practice leaves the main trials' starts unchanged).

    Returns
    -------
    None
        ``compiled.data`` gains ``keys``, ``text`` (device levels, ``None`` when out of gamut), ``pre_adaptation``
        (s and whole frames), ``screens``, ``breaks`` and, with practice, a ``practice`` schedule and practice
        trials first.

    Raises
    ------
    InputError
        For bad response keys (see :func:`response_keys`) or a practice condition label that matches no condition.
    """
    data = compiled.data
    spec = protocol.get("session", {})
    refresh = data["display"]["refresh_hz"]
    response = next((p["response"] for p in protocol["trial"] if p["phase"] == "respond"), None)
    keys = response_keys(response)
    data["keys"] = keys
    data["text"] = _text_colour(compiled.background, float(spec.get("text_luminance", DEFAULT_TEXT_LUMINANCE)))

    pre_s = float(spec.get("pre_adaptation_s", DEFAULT_PRE_ADAPTATION_S))
    pre_frames = _frames(pre_s, refresh)
    data["pre_adaptation"] = {"requested_s": pre_s, "frames": pre_frames, "actual_s": pre_frames / refresh}

    main = data["trials"]
    for trial in main:
        trial["practice"] = False
    practice = _practice_trials(spec["practice"], data["conditions"], compiled.responses, rng) \
        if "practice" in spec else []
    if practice:
        schedule = [dict(p) for p in data["schedules"]["first"]]
        adapt_s = spec["practice"].get("adapt_s")
        for phase in schedule:
            if phase["phase"] == "adapt" and adapt_s is not None:
                frames = _frames(adapt_s, refresh)
                phase.update(frames=frames, requested_s=adapt_s, actual_s=frames / refresh)
        data["schedules"]["practice"] = schedule
    data["trials"] = practice + main
    for schedule in data["schedules"].values():
        for phase in schedule:
            if phase["phase"] == "respond" and keys:  # the runner honours exactly these keys
                phase.update(keys=keys["keys"], confirm=keys["confirm"], coarse=keys["coarse"], moves=keys["moves"])
    for i, trial in enumerate(data["trials"]):
        trial["index"] = i

    breaks_spec = spec.get("breaks", {})
    minimum_frames = _frames(float(breaks_spec.get("minimum_s", 0)), refresh)
    total = len(main)
    labels = _block_labels(protocol, data)
    instructions = spec.get("instructions", "")
    block_text = spec.get("block_instructions", {})
    breaks = []
    if practice:
        breaks.append({"before_trial": len(practice), "kind": "after_practice", "done": 0, "total": total})
    every = breaks_spec.get("every_trials")
    for k, trial in enumerate(main):
        if k == 0:
            continue
        new_block = trial["block"] != main[k - 1]["block"] and breaks_spec.get("between_blocks", True)
        if new_block or (every and k % every == 0):
            breaks.append({"before_trial": trial["index"], "kind": "block" if new_block else "every",
                           "done": k, "total": total})
    for b in breaks:
        b["minimum_frames"] = minimum_frames
        block = data["trials"][b["before_trial"]]["block"]
        b["instructions"] = block_text.get(labels.get(block), instructions)
    data["breaks"] = breaks
    first_block = main[0]["block"] if main else 0
    legend = keys["legend"] if keys else []
    title = data["protocol"]["title"]
    first_text = practice and instructions or block_text.get(labels.get(first_block), instructions)
    data["screens"] = {
        "instructions": _screen(title, [first_text, "This session starts with a few practice trials."
                                        if practice else ""], legend, "Press Space to begin."),
        "pre_adaptation": _screen("Look at the centre of the screen", ["Get used to the background."],
                                  prompt="The trials start in {seconds} s."),
        "break": _screen("Break", ["{done} of {total} trials done.", "Rest your eyes as long as you like."],
                         legend, "Press Space to go on."),
        "break_wait": _screen("Break", ["{done} of {total} trials done.", "Rest your eyes.",
                                        "You can go on in {seconds} s."], legend),
        "after_practice": _screen("Practice over", ["The experiment proper starts now: {total} trials."],
                                  legend, "Press Space to go on."),
        "pause": _screen("Paused", ["The trial that was running will start again, fully adapted."],
                         [["Space", "go on"], ["Escape", "end the session early (experimenter)"]]),
        "resume": _screen(title, ["Resuming: {done} of {total} trials done."], legend, "Press Space to go on."),
        "end": _screen("Thank you", ["The session is complete."]),
        "ended_early": _screen("Thank you", ["The session has ended."]),
        "error": _screen("{title}", ["{detail}"]),
    }
