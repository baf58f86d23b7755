"""Protocol fields in a vision scientist's words: one table of labels, and JSON paths read and written.

A protocol's JSON keys (``duration_s``, ``step_fine``) are exact but not what a researcher reads on a form or in an
error. Every label lives in :data:`LABELS` (by index-free JSON path) and :data:`KEY_LABELS` (by key, for keys that
read the same wherever they occur); :func:`field_label` adds where the field sits ("of phase 2 (adapt)").
:mod:`stimlab.experiment.messages` phrases validation errors with these labels.
"""

from __future__ import annotations

import re

__all__ = ["LABELS", "KEY_LABELS", "OBSERVER_CHOICES", "COMPONENTS", "short_label", "field_label", "component_names", "axis_name",
           "variable_spaces", "parse_path", "path_text"]

OBSERVER_CHOICES = (
    ("ss2", "CIE 2006 2°"),
    ("ss10", "CIE 2006 10°"),
    ("sp", "Smith & Pokorny 1975 2°"),
    ("adjusted:", "a participant's own, from flicker photometry"),
)
"""The values ``about.observer`` takes, each with its name for the editor's list: the CIE 170-1:2006 cone
fundamentals are Stockman & Sharpe's (2000); ``adjusted:`` is completed with the participant's code."""

LABELS = {
    "about": "About the study",
    "about.title": "Title",
    "about.authors": "Authors",
    "about.version": "Version",
    "about.notes": "Notes",
    "about.observer": "Observer (cone fundamentals)",
    "about.viewing_distance_cm": "Viewing distance (cm)",
    "about.planned_display": "Planned display",
    "about.planned_display.name": "Display name",
    "about.planned_display.sha256": "Display profile hash (sha256)",
    "background": "Background",
    "background.rgb_linear": "Linear RGB (R, G, B)",
    "fixation": "Fixation mark",
    "stimuli": "Stimuli",
    "trial": "Phases of a trial",
    "trial.phase": "Kind of phase",
    "trial.stimuli": "Stimuli shown",
    "trial.fixation": "Fixation mark shown",
    "trial.response.target": "Stimulus adjusted or tested",
    "conditions": "Conditions",
    "conditions.variables": "Variables",
    "conditions.repeats": "Repeats of each condition",
    "conditions.order": "Order of trials",
    "conditions.seed": "Random seed",
    "conditions.blocks": "Blocks",
    "conditions.blocks.by": "One block per level of",
    "conditions.blocks.order": "Order of blocks",
    "adaptation_model": "Adaptation model (von Kries prediction)",
    "adaptation_model.kind": "Prediction",
    "adaptation_model.exponent": "von Kries exponent",
    "adaptation_model.adapter": "Adapting stimulus",
    "adaptation_model.inducer": "Inducing stimulus",
    "adaptation_model.test": "Test stimulus",
    "photometry": "Flicker photometry",
    "photometry.stimulus": "Flickering stimulus",
}
"""Labels by index-free JSON path (``trial.response.target`` for ``trial[3].response.target``)."""

KEY_LABELS = {
    "name": "Name", "shape": "Shape", "size_deg": "Size (deg)", "inner_size_deg": "Inner size (deg)",
    "surround_size_deg": "Surround size (deg)", "sigma_deg": "Gaussian σ (deg)",
    "cycles_per_deg": "Spatial frequency (cycles/deg)", "orientation_deg": "Orientation (deg)",
    "position_deg": "Position from the centre (deg)", "colour": "Colour",
    "second_colour": "Second colour (surround or right half)", "time_course": "Time course",
    "cone_contrast": "Cone contrast (L, M, S)", "dkl": "DKL (luminance, L−M, S)",
    "macleod_boynton": "MacLeod–Boynton (l, s, luminance cd/m²)", "scale": "Scale (multiplies the colour)",
    "kind": "Kind", "frequency_hz": "Frequency (Hz)", "mode": "Modulation", "ramp_on_ms": "Ramp on (ms)",
    "ramp_off_ms": "Ramp off (ms)", "duration_s": "Duration (s)", "top_up_s": "Top-up adaptation after the first "
    "trial (s)", "timeout_s": "Time limit (s)", "response": "Response", "method": "Method",
    "target": "Stimulus", "space": "Colour space of the adjustment", "axis": "Direction", "plane": "Plane (two directions)",
    "start": "Start position", "start_jitter": "Random start jitter (±)", "step_fine": "Fine step",
    "step_coarse": "Coarse step (with Shift)", "limits": "Limits", "keys": "Keys", "task": "Task",
    "rule": "Staircase rule", "up": "Step up after this many wrong", "down": "Step down after this many right",
    "steps": "Step sizes (after each reversal)", "stop_reversals": "Stop after reversals",
    "max_trials": "At most trials", "exponent": "Exponent", "by": "By", "order": "Order", "seed": "Seed",
    "repeats": "Repeats", "variables": "Variables", "stimuli": "Stimuli", "phase": "Kind of phase",
}
"""Labels by key, used where :data:`LABELS` has no entry for the whole path."""

COMPONENTS = {
    "dkl": ("luminance", "L−M", "S"),
    "cone_contrast": ("L", "M", "S"),
    "macleod_boynton": ("l", "s", "luminance (cd/m²)"),
    "rgb_linear": ("R", "G", "B"),
    "position_deg": ("horizontal", "vertical"),
}
KEYS_BY_METHOD = {
    "adjustment": ("Key for more", "Key for less"),
    "2afc": ("Key for the left (first)", "Key for the right (second)"),
    "staircase": ("Key for the left (first)", "Key for the right (second)"),
    "yes_no": ("Key for yes", "Key for no"),
    "duration": ("Key when it has faded",),
}
_VARIABLE = re.compile(r"^\$[A-Za-z_][A-Za-z0-9_]*$")


def parse_path(path: str) -> list:
    """Split a JSON path into its keys and list indices (the inverse of :func:`path_text`).

    Parameters
    ----------
    path
        A JSON path as fields are named in errors, e.g. ``stimuli[2].colour.dkl[1]``; ``""`` or ``None`` for the
        top level.

    Returns
    -------
    list of str or int
        Keys as ``str``, indices (0-based) as ``int``; empty for the top level.

    Examples
    --------
    >>> parse_path("stimuli[2].colour.dkl[1]")
    ['stimuli', 2, 'colour', 'dkl', 1]
    """
    parts: list = []
    for key, index in re.findall(r"([^.[\]]+)|\[(\d+)\]", path or ""):
        parts.append(int(index) if index else key)
    return parts


def _at(data, parts):
    for part in parts:
        try:
            data = data[part]
        except (KeyError, IndexError, TypeError):
            return None
    return data


def _generic(parts) -> str:
    """Index-free path with variable and level names left out: conditions.variables.axis.L-M → conditions.variables."""
    keys = [p for p in parts if isinstance(p, str)]
    if keys[:2] == ["conditions", "variables"]:
        keys = keys[:2]
    return ".".join(keys)


def axis_name(vector, space: str) -> str:
    """A direction as a researcher names it.

    Parameters
    ----------
    vector
        A 3-vector in ``space`` (unitless directions; only which entries are zero and their signs matter for a
        named axis), or a ``"$variable"`` reference.
    space
        ``dkl``, ``cone_contrast``, ``macleod_boynton`` or ``rgb_linear`` (see :data:`COMPONENTS`); any other
        space names its components "1st", "2nd", "3rd".

    Returns
    -------
    str
        One non-zero entry: the component's name, with "−" for a negative one ("L−M", "−S"); otherwise the vector
        written out ("(0, 1, 1)"), "variable <name>" for a reference, or "direction".

    References
    ----------
    .. [1] Derrington, A. M., Krauskopf, J. & Lennie, P. (1984). Chromatic mechanisms in lateral geniculate
       nucleus of macaque. J. Physiol. 357, 241–265 (the DKL axes: luminance, L−M, S).

    Examples
    --------
    >>> axis_name([0, 1, 0], "dkl"), axis_name([0, 0, -1], "dkl"), axis_name([0, 1, 1], "dkl")
    ('L−M', '−S', '(0, 1, 1)')
    """
    names = COMPONENTS.get(space, ("1st", "2nd", "3rd"))
    if isinstance(vector, list) and len(vector) == 3 and all(isinstance(v, (int, float)) for v in vector):
        nonzero = [i for i, v in enumerate(vector) if v != 0]
        if len(nonzero) == 1:
            sign = "−" if vector[nonzero[0]] < 0 else ""
            return f"{sign}{names[nonzero[0]]}"
        return "(" + ", ".join(f"{v:g}" for v in vector) + ")"
    if isinstance(vector, str):
        return f"variable {vector[1:]}"
    return "direction"


def variable_spaces(protocol) -> dict[str, str]:
    """The colour space each 3-vector variable is used in, to name its components.

    Parameters
    ----------
    protocol
        A protocol as the form holds it (it need not validate; anything but an object gives ``{}``).

    Returns
    -------
    dict of str to str
        Variable name (without ``$``) → space (``{'axis': 'dkl'}``), from the stimuli's colours and the responses'
        axes (DKL when a response names no space); the first use wins.
    """
    found: dict[str, str] = {}
    if not isinstance(protocol, dict):
        return found

    def note(value, space):
        if isinstance(value, str) and _VARIABLE.match(value):
            found.setdefault(value[1:], space)

    for stimulus in protocol.get("stimuli") or []:
        for key in ("colour", "second_colour"):
            colour = stimulus.get(key) if isinstance(stimulus, dict) else None
            if isinstance(colour, dict):
                for space, value in colour.items():
                    note(value, space)
    for phase in protocol.get("trial") or []:
        response = phase.get("response") if isinstance(phase, dict) else None
        if isinstance(response, dict):
            note(response.get("axis"), response.get("space", "dkl"))
    return found


def component_names(path: str, protocol=None) -> tuple[str, ...] | None:
    """Names of the entries of the vector or list at ``path``.

    Parameters
    ----------
    path
        A JSON path (``stimuli[1].colour.dkl``, ``trial[2].response.keys``).
    protocol
        The protocol, to find a response's space, plane or method and the spaces variables are used in; or
        ``None``.

    Returns
    -------
    tuple of str or None
        One name per entry: colour components (``('luminance', 'L−M', 'S')``), ``('low', 'high')`` for limits, the
        plane's directions, the role of each response key; ``None`` when the entries have no names of their own.
    """
    parts = parse_path(path)
    if not parts:
        return None
    key = parts[-1] if isinstance(parts[-1], str) else None
    parent = _at(protocol, parts[:-1]) if protocol is not None else None
    if key in COMPONENTS:
        return COMPONENTS[key]
    if len(parts) >= 2 and parts[-2] == "limits" and isinstance(parts[-1], int):
        return ("low", "high")
    if key == "limits" and isinstance(parent, dict):
        limits = parent.get("limits")
        if isinstance(limits, list) and limits and isinstance(limits[0], list):
            return tuple(f"{_plane_axis(parent, i)}" for i in range(len(limits)))
        return ("low", "high")
    if key in ("start", "plane") and isinstance(parent, dict) and "plane" in parent:
        return tuple(_plane_axis(parent, i) for i in range(2))
    if key == "axis" and isinstance(parent, dict):
        return COMPONENTS.get(parent.get("space", "dkl"))
    if key == "keys" and isinstance(parent, dict):
        method = parent.get("task") if parent.get("method") == "staircase" else parent.get("method")
        return KEYS_BY_METHOD.get(method)
    if parts[:2] == ["conditions", "variables"] and len(parts) >= 3:
        space = variable_spaces(protocol).get(parts[2]) if protocol is not None else None
        return COMPONENTS.get(space) if space else None
    if len(parts) >= 2 and parts[-2] == "plane" and isinstance(parts[-1], int):
        response = _at(protocol, parts[:-2]) if protocol is not None else None
        if isinstance(response, dict):
            return COMPONENTS.get(response.get("space", "dkl"))
    return None


def _plane_axis(response: dict, index: int) -> str:
    plane = response.get("plane")
    if isinstance(plane, list) and index < len(plane):
        return axis_name(plane[index], response.get("space", "dkl"))
    return f"direction {index + 1}"


def short_label(path: str, protocol=None) -> str:
    """The label of the field at ``path`` without where it sits.

    Parameters
    ----------
    path
        A JSON path (``trial[1].duration_s``); ``""`` for the whole protocol.
    protocol
        The protocol, to name stimuli, phases and vector entries; or ``None``.

    Returns
    -------
    str
        "Duration (s)", "L−M", "Key for more", "Stimulus 2 (test_disc)" (list positions counted from 1); a key
        with no label is written with spaces and a capital ("Some key").
    """
    parts = parse_path(path)
    if not parts:
        return "Protocol"
    if isinstance(parts[-1], int):
        parent = ".".join(str(p) for p in parts[:-1])
        names = component_names(path_text(parts[:-1]), protocol)
        if names and parts[-1] < len(names):
            return names[parts[-1]]
        if parts[-2:-1] == ["stimuli"] and len(parts) == 2:
            name = _at(protocol, parts + ["name"])
            return f"Stimulus {parts[-1] + 1}" + (f" ({name})" if isinstance(name, str) and name else "")
        if parts[:1] == ["trial"] and len(parts) == 2:
            kind = _at(protocol, parts + ["phase"])
            return f"Phase {parts[-1] + 1}" + (f" ({kind})" if isinstance(kind, str) else "")
        if parts[:2] == ["conditions", "variables"] and len(parts) == 4:
            return f"Level {parts[-1] + 1}"
        singular = {"authors": "Author", "stimuli": "Stimulus", "steps": "Step", "plane": "Direction",
                    "keys": "Key"}.get(str(parts[-2]), short_label(parent, protocol))
        return f"{singular} {parts[-1] + 1}"
    if parts[:2] == ["conditions", "variables"] and len(parts) == 3:
        return f"Variable {parts[2]}"
    if parts[:2] == ["conditions", "variables"] and len(parts) == 4:
        return f"Level {parts[3]}"
    generic = _generic(parts)
    if generic in LABELS:
        return LABELS[generic]
    key = parts[-1]
    if key in KEY_LABELS:
        if key == "target" and parts[-2:-1] == ["response"]:
            return LABELS["trial.response.target"]
        return KEY_LABELS[key]
    return str(key).replace("_", " ").capitalize()


def path_text(parts) -> str:
    """Join keys and list indices into a JSON path (the inverse of :func:`parse_path`).

    Parameters
    ----------
    parts
        Keys (``str``) and 0-based list indices (``int``), outermost first.

    Returns
    -------
    str
        The path, e.g. ``trial[1].response.keys[0]``; ``""`` for no parts.

    Examples
    --------
    >>> path_text(["trial", 1, "duration_s"])
    'trial[1].duration_s'
    """
    text = ""
    for part in parts:
        text += f"[{part}]" if isinstance(part, int) else (f".{part}" if text else str(part))
    return text


def _where(parts, protocol) -> str:
    """Where a field sits, as words: "of phase 2 (adapt)", "of stimulus 1 (adapter)", "of variable axis"."""
    if not parts:
        return ""
    head = parts[0]
    if head == "stimuli" and len(parts) > 1 and isinstance(parts[1], int):
        name = _at(protocol, ["stimuli", parts[1], "name"])
        text = f"stimulus {parts[1] + 1}" + (f" ({name})" if isinstance(name, str) and name else "")
        if len(parts) > 3 and parts[2] in ("colour", "second_colour"):
            text = f"the {_lower_first(short_label(path_text(parts[:3]), protocol))} of {text}"
        return text
    if head == "trial" and len(parts) > 1 and isinstance(parts[1], int):
        kind = _at(protocol, ["trial", parts[1], "phase"])
        text = f"phase {parts[1] + 1}" + (f" ({kind})" if isinstance(kind, str) else "")
        if len(parts) > 3 and parts[2] == "response":
            text = f"the response of {text}"
        return text
    if parts[:2] == ["conditions", "variables"] and len(parts) > 2:
        if len(parts) > 3:
            level = parts[3] + 1 if isinstance(parts[3], int) else parts[3]
            return f"level {level} of variable {parts[2]}"
        return ""
    return {"fixation": "the fixation mark", "background": "the background",
            "adaptation_model": "the adaptation model", "photometry": "the flicker photometry",
            "about": "", "conditions": ""}.get(str(head), "")


def field_label(path: str, protocol=None) -> str:
    """A field's label with where it sits, as the form and error messages name it.

    Parameters
    ----------
    path
        A JSON path (``trial[1].duration_s``).
    protocol
        The protocol, to name the stimulus or phase by its name or kind; or ``None``.

    Returns
    -------
    str
        E.g. "Duration (s) of phase 2 (adapt)", "L−M in DKL (luminance, L−M, S) of the colour of stimulus 2
        (test_disc)"; a stimulus, phase, variable or level is named by its own label alone.
    """
    parts = parse_path(path)
    label = short_label(path, protocol)
    container = parts[:-1]
    # The enclosing item itself is described by its own label, not "of" itself.
    if len(parts) <= 2 and parts[:1] in (["stimuli"], ["trial"]) or parts[:2] == ["conditions", "variables"] \
            and len(parts) <= 4:
        return label
    where = _where(container if isinstance(parts[-1], int) and len(parts) > 2 else parts, protocol)
    if isinstance(parts[-1], int) and len(parts) > 1:
        return f"{label} in {_lower_first(short_label(path_text(container), protocol))}" + (f" of {where}" if where
                                                                                     else "")
    return f"{label} of {where}" if where else label


def _lower_first(text: str) -> str:
    """"Duration (s)" → "duration (s)", but "DKL (…)" and "L−M" keep their capitals."""
    return text[0].lower() + text[1:] if len(text) > 1 and text[1].islower() else text
