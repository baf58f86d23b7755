"""Protocol fields in a vision scientist's words: one table of labels, and validation errors phrased with them.

A protocol's JSON keys (``duration_s``, ``step_fine``) are exact but not what a researcher reads on a form or in an
error. Every label lives in :data:`LABELS` (by index-free JSON path) and :data:`KEY_LABELS` (by key, for keys that
read the same wherever they occur); :func:`field_label` adds where the field sits ("of phase 2 (adapt)") and
:func:`explain_schema_error` turns a JSON Schema error into a sentence with that label.
"""

from __future__ import annotations

import json
import re

__all__ = ["LABELS", "KEY_LABELS", "short_label", "field_label", "component_names", "explain_schema_error",
           "plain_words", "axis_name", "variable_spaces"]

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
    """``stimuli[2].colour.dkl[1]`` → ``['stimuli', 2, 'colour', 'dkl', 1]``."""
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
    """A direction as a researcher names it: ``[0, 1, 0]`` in DKL is "L−M"; anything else is written out."""
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
    """The colour space each 3-vector variable is used in (``{'axis': 'dkl'}``), to name its components."""
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
    """Names of the entries of the vector or list at ``path`` (``('luminance', 'L−M', 'S')``), or None."""
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
    """The label of the field at ``path`` without where it sits: "Duration (s)", "L−M", "Key for more"."""
    parts = parse_path(path)
    if not parts:
        return "Protocol"
    if isinstance(parts[-1], int):
        parent = ".".join(str(p) for p in parts[:-1])
        names = component_names(_path_text(parts[:-1]), protocol)
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


def _path_text(parts) -> str:
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
            text = f"the {_lower_first(short_label(_path_text(parts[:3]), protocol))} of {text}"
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
    """A field's label with where it sits: ``trial[1].duration_s`` → "Duration (s) of phase 2 (adapt)"."""
    parts = parse_path(path)
    label = short_label(path, protocol)
    container = parts[:-1]
    # The enclosing item itself is described by its own label, not "of" itself.
    if len(parts) <= 2 and parts[:1] in (["stimuli"], ["trial"]) or parts[:2] == ["conditions", "variables"] \
            and len(parts) <= 4:
        return label
    where = _where(container if isinstance(parts[-1], int) and len(parts) > 2 else parts, protocol)
    if isinstance(parts[-1], int) and len(parts) > 1:
        return f"{label} in {_lower_first(short_label(_path_text(container), protocol))}" + (f" of {where}" if where
                                                                                     else "")
    return f"{label} of {where}" if where else label


def _lower_first(text: str) -> str:
    """"Duration (s)" → "duration (s)", but "DKL (…)" and "L−M" keep their capitals."""
    return text[0].lower() + text[1:] if len(text) > 1 and text[1].islower() else text


def _number(value) -> str:
    return f"{value:g}" if isinstance(value, float) else str(value)


def _shown(value) -> str:
    text = json.dumps(value, ensure_ascii=False)
    return text if len(text) < 60 else "…"


TYPE_WORDS = {"number": "a number", "integer": "a whole number", "string": "text", "array": "a list",
              "object": "a group of fields", "boolean": "yes or no (true or false)"}


def explain_schema_error(error, protocol=None) -> str:
    """One JSON Schema error (``jsonschema.ValidationError``) as a sentence naming the field by its label."""
    path = _path_text(list(error.absolute_path))
    label = field_label(path, protocol) if path else "The protocol"
    value = error.instance
    rule = error.validator
    limit = error.validator_value
    if rule == "minimum":
        return f"{label} must be {_number(limit)} or more (it is {_shown(value)})"
    if rule == "exclusiveMinimum":
        return f"{label} must be more than {_number(limit)} (it is {_shown(value)})"
    if rule == "maximum":
        return f"{label} must be {_number(limit)} or less (it is {_shown(value)})"
    if rule == "exclusiveMaximum":
        return f"{label} must be less than {_number(limit)} (it is {_shown(value)})"
    if rule == "type":
        wanted = " or ".join(TYPE_WORDS.get(t, t) for t in (limit if isinstance(limit, list) else [limit]))
        return f"{label} must be {wanted}, not {_shown(value)}"
    if rule == "enum":
        return f"{label}: {_shown(value)} is not allowed; use one of: " + \
            ", ".join(json.dumps(v) for v in limit)
    if rule == "const":
        return f"{label} must be {json.dumps(limit)}, not {_shown(value)}"
    if rule == "required":
        missing = [k for k in limit if isinstance(value, dict) and k not in value]
        names = ", ".join(_lower_first(short_label(f"{path}.{k}" if path else k, protocol)) for k in missing)
        return f"{label} needs {names or 'more fields'}"
    if rule == "additionalProperties":
        allowed = sorted(error.schema.get("properties", {}))
        extra = sorted(set(value) - set(allowed)) if isinstance(value, dict) else []
        text = f"{label} has unexpected field(s) {', '.join(extra)}"
        return text + (f"; allowed: {', '.join(allowed)}" if allowed else "")
    if rule == "minItems":
        return f"{label} needs at least {limit} entr{'y' if limit == 1 else 'ies'}"
    if rule == "maxItems":
        return f"{label} takes at most {limit} entr{'y' if limit == 1 else 'ies'}"
    if rule == "minLength":
        return f"{label} must not be empty"
    if rule == "pattern":
        if "\\$" in limit:
            return f"{label} is {_shown(value)}, which is not allowed here; give a number or a '$variable' reference"
        if limit.startswith("^[0-9a-f]"):
            return f"{label} must be 64 hexadecimal digits"
        return f"{label} {_shown(value)} must start with a letter or '_' and use letters, digits, '_' and '-' only"
    if rule in ("minProperties", "maxProperties") and "cone_contrast" in error.schema.get("properties", {}):
        return f"{label}: give exactly one colour space ({', '.join(sorted(error.schema['properties']))})"
    if rule == "minProperties":
        return f"{label} needs at least {limit} entr{'y' if limit == 1 else 'ies'}"
    if rule == "propertyNames":
        return f"{label}: names must start with a letter or '_' and use letters, digits and '_' only"
    if rule in ("oneOf", "anyOf"):
        return f"{label} has the wrong form ({_shown(value)}); see protocols/README.md for what it takes"
    return f"{label}: {error.message}"


_RAW_KEY = re.compile(r"\b[a-z]+(?:_[a-z]+)+\b")


def plain_words(message: str) -> str:
    """Raw JSON keys with an underscore in a message (``duration_s``) replaced by their labels ("duration (s)")."""
    def replace(match):
        key = match.group(0)
        label = KEY_LABELS.get(key)
        if label is None or key in ("cone_contrast", "macleod_boynton", "after_image", "centre_surround"):
            return key
        return label[0].lower() + label[1:]
    return _RAW_KEY.sub(replace, message)
