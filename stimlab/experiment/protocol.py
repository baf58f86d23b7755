"""Protocol files: read, validate against the JSON Schema, and check what a schema cannot (names, variables).

Every problem is an :class:`~stimlab.errors.InputError` whose ``field`` is the JSON path of the offending value,
e.g. ``stimuli[2].colour.dkl[1]``, with the value and what is allowed.
"""

from __future__ import annotations

import hashlib
import json
from functools import lru_cache
from pathlib import Path

from ..colorimetry.observers import OBSERVERS
from ..errors import InputError
from ..jsonio import check_value, loads
from ..schemas import deepest_error, json_path, schema, validator
from .labels import field_label
from .messages import explain_schema_error, plain_words

__all__ = ["load_protocol", "parse_protocol", "validate_protocol", "protocol_schema", "json_path",
           "protocol_sha256", "CAUTION"]

CAUTION = ("Flicker and flashing can trigger seizures in people with photosensitive epilepsy. Screen participants "
           "as your ethics approval requires; your local rules and approvals take precedence over this audit.")
"""The photosensitivity caution shown wherever flicker is designed or run."""


def protocol_schema() -> dict:
    """The JSON Schema document for protocol files (``stimlab/data/protocol.schema.json``).

    Returns
    -------
    dict
        The schema (JSON Schema draft 2020-12), shared and cached: do not modify it.

    References
    ----------
    .. [1] JSON Schema: A Media Type for Describing JSON Documents, draft 2020-12, https://json-schema.org/.
    """
    return schema("protocol")


def validate_protocol(data, name: str = "protocol") -> dict:
    """Check a protocol against the schema and its own references; return it unchanged when it is valid.

    Parameters
    ----------
    data
        The parsed protocol (any JSON value; anything but a valid protocol object is refused).
    name
        The file or form name given in errors.

    Returns
    -------
    dict
        ``data`` itself.

    Raises
    ------
    InputError
        For the first problem, with ``field`` its JSON path: schema errors, unknown names or variables, more
        than 1,000 conditions or 20,000 trials.
    """
    check_value(data, file=name)  # NaN, Infinity, lone surrogates and runaway nesting, before the schema
    _check_lengths(data, name)
    errors = sorted(validator("protocol").iter_errors(data), key=lambda e: (list(map(str, e.absolute_path)), e.message))
    if errors:
        error = deepest_error(errors[0])
        raise InputError(explain_schema_error(error, data), file=name, field=json_path(error.absolute_path))
    try:
        _check_references(data, name)
    except InputError as error:  # the same words as the form: the field's label, then the problem
        if not error.field or error.field == "(top level)":
            raise
        raise InputError(f"{field_label(error.field, data)}: {plain_words(error.message)}", file=error.file,
                         field=error.field) from None
    return data


MAX_CONDITIONS = 1_000  # documented in protocols/README.md; real designs have tens
MAX_TRIALS = 20_000  # about 11 hours at 2 s a trial
MAX_LEVELS = 100  # levels of one variable: the schema's maxItems / maxProperties, checked before the schema
MAX_ENTRIES = 64  # stimuli or phases: the schema's maxItems, checked before the schema
MAX_SCHEMA_DEPTH = 12  # deeper than the protocol schema nests, so the walk stops on a schema that refers to itself


def _check_lengths(data, name: str) -> None:
    """The schema's list limits, checked before the schema: its validator takes seconds over 200,000 values."""
    if not isinstance(data, dict):
        return
    conditions = data.get("conditions")
    variables = conditions.get("variables") if isinstance(conditions, dict) else None
    for key, values in (variables.items() if isinstance(variables, dict) else ()):
        if isinstance(values, (list, dict)) and len(values) > MAX_LEVELS:
            raise InputError(f"{len(values):,} values; a variable has at most {MAX_LEVELS}", file=name,
                             field=f"conditions.variables.{key}")
    for key in ("stimuli", "trial"):
        if isinstance(data.get(key), list) and len(data[key]) > MAX_ENTRIES:
            raise InputError(f"{len(data[key]):,} entries; at most {MAX_ENTRIES} are allowed", file=name, field=key)


def _check_size(data: dict, variables: dict, name: str) -> None:
    """Designs a real study never reaches are refused before compiling, which would hold the audit for minutes."""
    conditions = 1
    for values in variables.values():
        conditions *= max(1, len(values))
    if conditions > MAX_CONDITIONS:
        raise InputError(f"the variables make {conditions:,} conditions; at most {MAX_CONDITIONS:,} are allowed",
                         file=name, field="conditions.variables")
    trials = conditions * data["conditions"].get("repeats", 1)
    if trials > MAX_TRIALS:
        raise InputError(f"{trials:,} trials (conditions × repeats); at most {MAX_TRIALS:,} are allowed", file=name,
                         field="conditions.repeats")


def _check_references(data: dict, name: str) -> None:
    def fail(message, *path):
        raise InputError(message, file=name, field=json_path(path))

    observer = data["about"]["observer"]
    if observer not in OBSERVERS and not observer.startswith("adjusted:"):
        fail(f"unknown observer {observer!r}; use one of {', '.join(OBSERVERS)} or 'adjusted:<participant>'",
             "about", "observer")
    variables = data["conditions"].get("variables", {})
    _check_size(data, variables, name)
    names = {}
    for i, stimulus in enumerate(data["stimuli"]):
        if stimulus["name"] in names:
            fail(f"stimulus name {stimulus['name']!r} is used twice (also stimuli[{names[stimulus['name']]}])",
                 "stimuli", i, "name")
        names[stimulus["name"]] = i
        needs = {"disc": ["size_deg"], "square": ["size_deg"], "annulus": ["size_deg", "inner_size_deg"],
                 "centre_surround": ["size_deg", "surround_size_deg", "second_colour"],
                 "bipartite": ["size_deg", "second_colour"], "gaussian": ["sigma_deg"],
                 "grating": ["sigma_deg", "cycles_per_deg"]}.get(stimulus["shape"], [])
        for key in needs:
            if key not in stimulus:
                fail(f"a {stimulus['shape']} needs {key}", "stimuli", i, key)
        if stimulus["shape"] == "annulus" and stimulus["inner_size_deg"] >= stimulus["size_deg"]:
            fail("inner_size_deg must be smaller than size_deg", "stimuli", i, "inner_size_deg")
        if stimulus["shape"] == "centre_surround" and stimulus["surround_size_deg"] <= stimulus["size_deg"]:
            fail("surround_size_deg must be larger than the centre's size_deg", "stimuli", i, "surround_size_deg")
        course = stimulus.get("time_course", {"kind": "steady"})
        if course["kind"] != "steady" and "frequency_hz" not in course:
            fail(f"a {course['kind']} time course needs frequency_hz", "stimuli", i, "time_course", "frequency_hz")
        if course["kind"] == "counterphase" and stimulus["shape"] != "grating":
            fail("counterphase modulation needs a grating", "stimuli", i, "time_course", "kind")
        for key in ("colour", "second_colour"):
            if key in stimulus:
                _check_colour(stimulus[key], variables, fail, "stimuli", i, key)
    if "fixation" in data and "colour" in data["fixation"]:
        _check_colour(data["fixation"]["colour"], variables, fail, "fixation", "colour")
    for i, phase in enumerate(data["trial"]):
        for j, stimulus in enumerate(phase.get("stimuli", [])):
            if stimulus not in names:
                fail(f"no stimulus called {stimulus!r}; defined: {', '.join(names)}", "trial", i, "stimuli", j)
        kind = phase["phase"]
        if kind in ("adapt", "gap", "test") and "duration_s" not in phase:
            fail(f"an {kind} phase needs duration_s", "trial", i, "duration_s")
        if kind == "respond":
            if "response" not in phase:
                fail("a respond phase needs a response", "trial", i, "response")
            _check_response(phase["response"], names, variables, fail, "trial", i, "response")
    blocks = data["conditions"].get("blocks")
    if blocks and blocks["by"] not in variables:
        fail(f"blocks.by names {blocks['by']!r}, which is not a condition variable", "conditions", "blocks", "by")
    photometry = data.get("photometry")
    if photometry:
        _check_photometry(data, photometry, names, fail)
    model = data.get("adaptation_model")
    if model:
        keys = ["adapter"] if model["kind"] == "after_image" else ["inducer", "test"]
        for key in keys:
            if model.get(key) not in names:
                fail(f"{model['kind']} needs {key}: the name of a stimulus", "adaptation_model", key)


def _check_photometry(data: dict, photometry: dict, names: dict, fail) -> None:
    """A flicker-photometry task: a square-flickering L−M stimulus whose luminance component is adjusted."""
    name = photometry["stimulus"]
    if name not in names:
        fail(f"no stimulus called {name!r}", "photometry", "stimulus")
    stimulus = data["stimuli"][names[name]]
    dkl = stimulus["colour"].get("dkl")
    if not (isinstance(dkl, list) and all(isinstance(v, (int, float)) for v in dkl) and dkl[0] == 0 and dkl[2] == 0
            and dkl[1] != 0 and "scale" not in stimulus["colour"]):
        fail("the photometry stimulus's colour must be a fixed DKL L−M amplitude, [0, a, 0]", "stimuli",
             names[name], "colour")
    if stimulus.get("time_course", {}).get("kind") != "square":
        fail("flicker photometry needs square-wave flicker (15–20 Hz is common practice)", "stimuli", names[name],
             "time_course")
    responses = [p.get("response", {}) for p in data["trial"] if p["phase"] == "respond"]
    if not responses or responses[0].get("method") != "adjustment" or responses[0].get("target") != name or \
            responses[0].get("space") != "dkl" or responses[0].get("axis") != [1, 0, 0]:
        fail(f"flicker photometry adjusts {name!r} along the DKL luminance axis: a respond phase with "
             "method adjustment, space dkl, axis [1, 0, 0]", "photometry", "stimulus")


def _check_colour(colour: dict, variables: dict, fail, *path) -> None:
    spaces = [k for k in colour if k != "scale"]
    if len(spaces) != 1:
        fail("give exactly one colour space: cone_contrast, dkl or macleod_boynton", *path)
    space = spaces[0]
    vector = colour[space]
    references = [(vector, path + (space,))] if isinstance(vector, str) else \
        [(v, path + (space, k)) for k, v in enumerate(vector)]
    references.append((colour.get("scale", 1), path + ("scale",)))
    for value, where in references:
        if isinstance(value, str):
            variable = value[1:]
            if variable not in variables:
                fail(f"{value!r} refers to no condition variable; defined: {', '.join(variables) or 'none'}", *where)
            values = variables[variable]
            values = list(values.values()) if isinstance(values, dict) else values
            wanted = "a 3-vector" if where[-1] == space else "a number"
            ok = all(isinstance(v, list) for v in values) if wanted == "a 3-vector" else \
                all(isinstance(v, (int, float)) for v in values)
            if not ok:
                fail(f"{value!r} must take {wanted} in every condition", *where)
    if space == "macleod_boynton" and "scale" in colour:
        fail("scale applies to colours relative to the background, not to MacLeod–Boynton coordinates", *path)


def _check_response(response: dict, names: dict, variables: dict, fail, *path) -> None:
    method = response["method"]
    needs = {"adjustment": ["target", "space", "step_fine", "limits"], "staircase": ["target", "space", "axis",
             "start", "steps", "limits", "task"], "2afc": ["target"], "yes_no": [], "duration": []}[method]
    for key in needs:
        if key not in response:
            fail(f"a {method} response needs {key}", *path, key)
    if method in ("adjustment", "2afc", "staircase") and response["target"] not in names:
        fail(f"no stimulus called {response['target']!r}", *path, "target")
    axis = response.get("axis")
    references = [axis] if isinstance(axis, str) else [v for v in (axis or []) if isinstance(v, str)]
    for reference in references:
        values = variables.get(reference[1:])
        if values is None:
            fail(f"{reference!r} refers to no condition variable", *path, "axis")
        values = list(values.values()) if isinstance(values, dict) else values
        wanted = list if isinstance(axis, str) else (int, float)
        if not all(isinstance(v, wanted) for v in values):
            fail(f"{reference!r} must take {'a 3-vector' if isinstance(axis, str) else 'a number'} in every "
                 "condition", *path, "axis")
    if method == "adjustment" and ("axis" in response) == ("plane" in response):
        fail("an adjustment moves along one axis or in one plane: give exactly one of axis, plane", *path)
    limits = response.get("limits")
    if limits and isinstance(limits[0], list):
        if method != "adjustment" or "plane" not in response:
            fail("limits per direction apply to an adjustment in a plane; give one [low, high] here", *path, "limits")
        for k, pair in enumerate(limits):
            if pair[0] >= pair[1]:
                fail("limits must be [low, high] with low < high", *path, "limits", k)
    elif limits and limits[0] >= limits[1]:
        fail("limits must be [low, high] with low < high", *path, "limits")
    if "step_coarse" in response and response["step_coarse"] < response.get("step_fine", 0):
        fail("step_coarse must not be smaller than step_fine", *path, "step_coarse")


def parse_protocol(text: str, name: str = "protocol") -> dict:
    """Parse and validate protocol JSON text.

    Parameters
    ----------
    text
        The protocol as JSON text.
    name
        The file or form name given in errors.

    Returns
    -------
    dict
        The valid protocol.

    Raises
    ------
    InputError
        For text that is not JSON or a protocol that is not valid (see :func:`validate_protocol`).
    """
    return validate_protocol(loads(text, file=name), name)


def load_protocol(path) -> dict:
    """Read and validate a protocol file.

    Parameters
    ----------
    path
        Path of a UTF-8 JSON protocol file (``str`` or :class:`~pathlib.Path`).

    Returns
    -------
    dict
        The valid protocol.

    Raises
    ------
    InputError
        For a missing or non-UTF-8 file, or a protocol that is not valid (see :func:`parse_protocol`).
    """
    path = Path(path)
    if not path.is_file():
        raise InputError("protocol file not found; check the path", file=str(path))
    try:
        text = path.read_text(encoding="utf-8")
    except UnicodeDecodeError:
        raise InputError("not a UTF-8 text file", file=str(path)) from None
    return parse_protocol(text, str(path))


def protocol_sha256(data: dict) -> str:
    """SHA-256 of a protocol's canonical JSON (sorted keys, no spaces), cited by compiled sessions.

    Parameters
    ----------
    data
        A protocol (JSON-able values).

    Returns
    -------
    str
        64 lowercase hexadecimal digits.
    """
    return hashlib.sha256(json.dumps(data, sort_keys=True, separators=(",", ":")).encode()).hexdigest()


@lru_cache(maxsize=1)
def schema_enums() -> dict[str, tuple]:
    """Allowed values of every enumerated protocol field, by index-free path (``stimuli.time_course.kind``).

    Returns
    -------
    dict of str to tuple
        The schema's ``enum`` lists by dotted path, cached.
    """
    schema = protocol_schema()
    found: dict[str, tuple] = {}

    def resolve(node):
        while isinstance(node, dict) and "$ref" in node:
            node = schema["$defs"][node["$ref"].rsplit("/", 1)[-1]]
        return node

    def walk(node, path, depth=0):
        node = resolve(node)
        if not isinstance(node, dict) or depth > MAX_SCHEMA_DEPTH:
            return
        if "enum" in node and path:
            found[path] = tuple(node["enum"])
        for key, child in node.get("properties", {}).items():
            walk(child, f"{path}.{key}" if path else key, depth + 1)
        if isinstance(node.get("items"), dict):
            walk(node["items"], path, depth + 1)
        for child in node.get("oneOf", []):
            walk(child, path, depth + 1)

    walk(schema, "")
    return found


def enum_for(path: str) -> tuple | None:
    """The allowed values for the field at a JSON path (indices ignored), or None.

    Parameters
    ----------
    path
        A JSON path such as ``stimuli[2].time_course.kind``.

    Returns
    -------
    tuple or None
        The field's allowed values, or ``None`` when the field is not enumerated.
    """
    import re

    return schema_enums().get(re.sub(r"\[\d+\]", "", path))
