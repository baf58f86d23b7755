"""Structural edits of a protocol, as the editor's form makes them: add, remove and move stimuli, phases,
variables, levels, list entries and optional fields.

Each edit returns a new protocol (the input is not changed). A new item is complete enough to validate where it
can be (a new stimulus is a 2° disc on the background; a new phase is a 0.5 s gap), so that the live audit keeps
running; what the edit leaves inconsistent (a phase showing a removed stimulus) is reported by the validation that
follows, on the field concerned.
"""

from __future__ import annotations

import copy
import re

from ..errors import InputError
from .compile import DEFAULT_FIXATION_SIZE_DEG
from .labels import parse_path, path_text
from .responses import DEFAULT_MAX_TRIALS, DEFAULT_STAIRCASE_RULE, DEFAULT_STOP_REVERSALS

__all__ = ["apply_edit", "optional_fields", "PHASE_TEMPLATES"]

PHASE_TEMPLATES = {
    "adapt": {"phase": "adapt", "stimuli": [], "duration_s": 10},
    "gap": {"phase": "gap", "duration_s": 0.5},
    "test": {"phase": "test", "stimuli": [], "duration_s": 1},
    "respond": {"phase": "respond", "stimuli": [], "timeout_s": 30, "response": {"method": "yes_no",
                                                                                "keys": ["y", "n"]}},
}
"""A new phase of each kind (its stimuli are filled in with the first stimulus)."""

FIELD_DEFAULTS = {
    "authors": [""], "version": "0.1", "notes": "", "planned_display": {"name": ""},
    "fixation": {"shape": "cross", "size_deg": DEFAULT_FIXATION_SIZE_DEG}, "shape": "cross", "size_deg": 2,
    "inner_size_deg": 1, "surround_size_deg": 8, "sigma_deg": 0.5, "cycles_per_deg": 2, "orientation_deg": 0,
    "position_deg": [0, 0], "colour": {"dkl": [0, 0, 0]}, "second_colour": {"dkl": [0, 0, 0]}, "scale": 1,
    "time_course": {"kind": "steady"}, "frequency_hz": 2, "mode": "around_background", "ramp_on_ms": 100,
    "ramp_off_ms": 100, "stimuli": [], "duration_s": 1, "top_up_s": 5, "timeout_s": 30,
    "response": {"method": "yes_no", "keys": ["y", "n"]},
    "start_jitter": 0, "step_coarse": 0.1, "keys": ["ArrowUp", "ArrowDown"], "rule": DEFAULT_STAIRCASE_RULE,
    "stop_reversals": DEFAULT_STOP_REVERSALS, "max_trials": DEFAULT_MAX_TRIALS, "variables": {}, "repeats": 1,
    "order": "shuffled", "seed": 1, "exponent": 1.0,
}
"""Values for an optional field added through the form (by key)."""

_NAME = re.compile(r"^[A-Za-z_][A-Za-z0-9_]*$")


def _container(protocol, parts, where):
    node = protocol
    for part in parts:
        try:
            node = node[part]
        except (KeyError, IndexError, TypeError):
            raise InputError("this part of the protocol is no longer there; reload the form", field=where) from None
    return node


def _free_name(taken, stem: str) -> str:
    number = 1
    while f"{stem}_{number}" in taken:
        number += 1
    return f"{stem}_{number}"


def _new_item(protocol: dict, parts: list, container, edit: dict):
    """The value appended by an 'add' at ``parts``."""
    names = [s.get("name") for s in protocol.get("stimuli", []) if isinstance(s, dict)]
    if parts == ["stimuli"]:
        return {"name": _free_name(names, "stimulus"), "shape": "disc", "size_deg": 2, "colour": {"dkl": [0, 0, 0]}}
    if parts == ["trial"]:
        kind = edit.get("kind") or "gap"
        if kind not in PHASE_TEMPLATES:
            raise InputError(f"a phase is one of: {', '.join(PHASE_TEMPLATES)}", field="trial")
        phase = copy.deepcopy(PHASE_TEMPLATES[kind])
        if "stimuli" in phase and names:
            phase["stimuli"] = [names[0]]
        return phase
    if len(parts) == 3 and parts[0] == "trial" and parts[2] == "stimuli":
        missing = [n for n in names if n not in container]
        if not missing:
            raise InputError("every stimulus is already shown in this phase; add a stimulus first",
                             field=path_text(parts))
        return missing[0]
    if container:
        return copy.deepcopy(container[-1])
    return "" if parts[-1] in ("authors", "keys") else 0


def apply_edit(protocol: dict, edit: dict) -> dict:
    """Apply one structural edit and return the new protocol.

    Parameters
    ----------
    protocol
        The protocol as the form holds it (it need not validate).
    edit
        ``{"op": "add", "path": "stimuli"}``; ``{"op": "add", "path": "trial", "kind": "adapt"}``;
        ``{"op": "add", "path": "conditions.variables", "name": "contrast"}`` (a new variable);
        ``{"op": "add", "path": "conditions.variables.axis", "name": "L+S"}`` (a new level, a copy of the last);
        ``{"op": "add-field", "path": "stimuli[0]", "key": "time_course"}``;
        ``{"op": "remove", "path": "stimuli[1]"}``; ``{"op": "move", "path": "trial[2]", "by": -1}``. ``path`` is
        a JSON path; ``by`` is a whole number of places (negative: earlier), clamped to the list's or mapping's
        ends.

    Returns
    -------
    dict
        A new protocol with the edit made; ``protocol`` itself is not changed. It may not validate (a phase
        showing a removed stimulus): the validation that follows reports that on the field concerned.

    Raises
    ------
    InputError
        For an edit that cannot be made, with ``field`` the path it was made at.
    """
    if not isinstance(protocol, dict) or not isinstance(edit, dict):
        raise InputError("send the protocol and the edit as JSON objects", field="edit")
    protocol = copy.deepcopy(protocol)
    op, where = edit.get("op"), str(edit.get("path") or "")
    parts = parse_path(where)
    if not parts:
        raise InputError("an edit needs the path of the part to change", field="edit.path")
    if op == "add":
        if parts == ["conditions", "variables"]:
            conditions = protocol.setdefault("conditions", {})
            variables = conditions.setdefault("variables", {})
            name = (edit.get("name") or "").strip() or _free_name(variables, "variable")
            if not _NAME.match(name):
                raise InputError(f"{name!r}: a variable name starts with a letter or '_' and uses letters, digits "
                                 "and '_' only", field=where)
            if name in variables:
                raise InputError(f"there is already a variable {name!r}", field=where)
            variables[name] = [0]
            return protocol
        container = _container(protocol, parts, where)
        if isinstance(container, dict) and parts[:2] == ["conditions", "variables"] and len(parts) == 3:
            name = (edit.get("name") or "").strip() or _free_name(container, "level")
            if name in container:
                raise InputError(f"variable {parts[2]} already has a level {name!r}", field=where)
            container[name] = copy.deepcopy(list(container.values())[-1]) if container else 0
            return protocol
        if not isinstance(container, list):
            raise InputError("only lists take new entries here", field=where)
        container.append(_new_item(protocol, parts, container, edit))
        return protocol
    if op == "add-field":
        key = edit.get("key")
        container = _container(protocol, parts, where)
        if not isinstance(container, dict) or not isinstance(key, str) or key in container:
            raise InputError(f"cannot add {key!r} here", field=where)
        if key not in dict(optional_fields(where, container, protocol)):
            raise InputError(f"{key!r} is not a field of this part of the protocol", field=where)
        container[key] = _field_default(protocol, parts, key)
        return protocol
    parent = _container(protocol, parts[:-1], where)
    key = parts[-1]
    try:
        parent[key]
    except (KeyError, IndexError, TypeError):
        raise InputError("this part of the protocol is no longer there; reload the form", field=where) from None
    if op == "remove":
        if isinstance(parent, list) and len(parent) == 1 and parts[:1] in (["stimuli"], ["trial"]) and \
                len(parts) == 2:
            raise InputError("a protocol needs at least one; add another before removing this one", field=where)
        del parent[key]
        return protocol
    if op == "move":
        by = int(edit.get("by") or 0)
        if isinstance(parent, list):
            target = min(max(key + by, 0), len(parent) - 1)
            parent.insert(target, parent.pop(key))
        elif isinstance(parent, dict):
            keys = list(parent)
            index = keys.index(key)
            keys.insert(min(max(index + by, 0), len(keys) - 1), keys.pop(index))
            items = {k: parent[k] for k in keys}
            parent.clear()
            parent.update(items)
        return protocol
    raise InputError(f"unknown edit {op!r}; use add, add-field, remove or move", field="edit.op")


def _field_default(protocol: dict, parts: list, key: str):
    names = [s.get("name") for s in protocol.get("stimuli", []) if isinstance(s, dict)]
    variables = list(protocol.get("conditions", {}).get("variables", {}))
    if key in ("target", "adapter", "inducer", "test", "stimulus"):
        return names[0] if names else ""
    if key == "blocks":
        return {"by": variables[0] if variables else ""}
    if key == "adaptation_model":
        return {"kind": "after_image", "adapter": names[0] if names else ""}
    if key == "photometry":
        return {"stimulus": names[0] if names else ""}
    if key == "fixation" and parts[:1] == ["trial"]:
        return True
    if key == "shape" and parts[:1] == ["stimuli"]:
        return "disc"
    return copy.deepcopy(FIELD_DEFAULTS.get(key, 0))


def optional_fields(path: str, value: dict, protocol=None) -> list[tuple[str, str]]:
    """Fields the protocol schema allows at ``path`` that ``value`` does not have yet: what the form offers to add.

    Parameters
    ----------
    path
        The JSON path of ``value`` in the protocol (``stimuli[0]``, ``trial[2].response``; ``""`` for the top).
    value
        The object at ``path`` (anything else has no fields to add).
    protocol
        The whole protocol, to word the labels (stimulus names, the response's colour space), or ``None``.

    Returns
    -------
    list of tuple of (str, str)
        ``(key, label)`` in schema order, label in a researcher's words (:func:`~stimlab.experiment.labels.short_label`);
        empty for a condition variable, for a colour (its one space is fixed, only ``scale`` can be added) or when
        every field is there.
    """
    from .labels import short_label
    from .protocol import protocol_schema

    if not isinstance(value, dict):
        return []
    parts = [p for p in parse_path(path) if isinstance(p, str)]
    if parts[:2] == ["conditions", "variables"]:
        return []
    schema = protocol_schema()
    node = schema

    def resolve(node):
        while isinstance(node, dict) and "$ref" in node:
            node = schema["$defs"][node["$ref"].rsplit("/", 1)[-1]]
        if isinstance(node, dict) and "properties" not in node:
            for choice in node.get("oneOf", []):
                choice = resolve(choice)
                if isinstance(choice, dict) and "properties" in choice:
                    return choice
        return node

    node = resolve(node)
    for part in parts:
        node = resolve(node)
        if node.get("type") == "array" or "items" in node:
            node = resolve(node.get("items", {}))
        node = resolve(node.get("properties", {}).get(part, {}))
        if node.get("type") == "array" and isinstance(node.get("items"), dict):
            node = resolve(node["items"])
    properties = node.get("properties", {}) if isinstance(node, dict) else {}
    if "cone_contrast" in properties and "dkl" in properties:  # one colour space: only a colour's scale can be added
        if "scale" not in properties or "scale" in value:
            return []
        return [("scale", short_label(f"{path}.scale", protocol))]
    return [(key, short_label(f"{path}.{key}" if path else key, protocol)) for key in properties
            if key not in value and key != "stimlab_protocol"]
