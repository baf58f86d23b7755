"""Validation messages in a researcher's words: a JSON Schema error as a sentence naming the field by its label,
and raw JSON keys in any message replaced by their labels.

The labels themselves live in :mod:`stimlab.experiment.labels`; this module only phrases sentences with them.
"""

from __future__ import annotations

import json
import re

from .labels import KEY_LABELS, _lower_first, field_label, path_text, short_label

__all__ = ["explain_schema_error", "plain_words", "TYPE_WORDS", "MAX_SHOWN_CHARACTERS"]

MAX_SHOWN_CHARACTERS = 60
"""A wrong value is quoted in a message only below this many characters of JSON (else "…"), so that one line of
the form stays readable (a choice of this program)."""

KEPT_KEYS = ("cone_contrast", "macleod_boynton", "after_image", "centre_surround")
"""Keys left as written in messages: they are names of the trade or values a researcher types, not field names."""


def _number(value) -> str:
    """A number as a message shows it, negative ones with a real minus sign (−1, not -1)."""
    return (f"{value:g}" if isinstance(value, float) else str(value)).replace("-", "−")


def _shown(value) -> str:
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        return _number(value) if isinstance(value, int) else json.dumps(value).replace("-", "−")
    text = json.dumps(value, ensure_ascii=False)
    return text if len(text) < MAX_SHOWN_CHARACTERS else "…"


TYPE_WORDS = {"number": "a number", "integer": "a whole number", "string": "text", "array": "a list",
              "object": "a group of fields", "boolean": "yes or no (true or false)"}
"""JSON Schema type names in plain words."""


def explain_schema_error(error, protocol=None) -> str:
    """One JSON Schema error as a sentence naming the field by its label, the rule broken and the value given.

    Parameters
    ----------
    error
        A :class:`jsonschema.exceptions.ValidationError` from the protocol schema (its ``absolute_path``,
        ``validator``, ``validator_value``, ``instance`` and ``schema`` are read).
    protocol
        The protocol that was validated, to name stimuli and phases ("of phase 2 (gap)"), or ``None``.

    Returns
    -------
    str
        One sentence without a final full stop, e.g. "Duration (s) of phase 2 (gap) must be 0 or more (it is −1)";
        values of :data:`MAX_SHOWN_CHARACTERS` or more characters of JSON are shown as "…". A rule with no sentence
        of its own falls back to ``"<label>: <jsonschema message>"``.

    References
    ----------
    .. [1] JSON Schema Validation: A Vocabulary for Structural Validation of JSON, draft 2020-12,
       https://json-schema.org/ (the names of the rules: ``minimum``, ``required``, ``additionalProperties``…).

    Examples
    --------
    >>> from jsonschema import Draft202012Validator
    >>> error = next(Draft202012Validator({"properties": {"duration_s": {"minimum": 0}}}).iter_errors(
    ...     {"duration_s": -1}))
    >>> explain_schema_error(error)
    'Duration (s) must be 0 or more (it is −1)'
    """
    path = path_text(list(error.absolute_path))
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
        if value is None:  # what an emptied form field sends
            return f"{label} is empty: enter {wanted}"
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
    """Raw JSON keys with an underscore in a message replaced by their labels.

    Parameters
    ----------
    message
        Any message text.

    Returns
    -------
    str
        The message with every known key of :data:`~stimlab.experiment.labels.KEY_LABELS` that has an underscore
        (``duration_s``) replaced by its label with a lower-case first letter ("duration (s)"); unknown keys and
        :data:`KEPT_KEYS` stay as written.

    Examples
    --------
    >>> plain_words("an adapt phase needs duration_s")
    'an adapt phase needs duration (s)'
    """
    def replace(match):
        key = match.group(0)
        label = KEY_LABELS.get(key)
        if label is None or key in KEPT_KEYS:
            return key
        return label[0].lower() + label[1:]
    return _RAW_KEY.sub(replace, message)
