"""The JSON Schema documents shipped in ``stimlab/data`` (protocol and display-profile formats) and the two
helpers every reader of them needs: a JSON path for an error, and the sub-error that names the real problem."""

from __future__ import annotations

import json
from functools import lru_cache
from importlib import resources

import jsonschema

__all__ = ["schema", "validator", "json_path", "deepest_error"]


@lru_cache(maxsize=None)
def schema(name: str) -> dict:
    """The JSON Schema document ``stimlab/data/<name>.schema.json`` (``"protocol"`` or ``"profile"``)."""
    return json.loads(resources.files("stimlab.data").joinpath(f"{name}.schema.json").read_text("utf-8"))


@lru_cache(maxsize=None)
def validator(name: str) -> jsonschema.Draft202012Validator:
    """A validator for the schema ``name``, built once."""
    return jsonschema.Draft202012Validator(schema(name))


def json_path(parts) -> str:
    """A place in a JSON document as text.

    Examples
    --------
    >>> json_path(["stimuli", 2, "colour", "dkl", 1])
    'stimuli[2].colour.dkl[1]'
    >>> json_path([])
    '(top level)'
    """
    text = ""
    for part in parts:
        text += f"[{part}]" if isinstance(part, int) else (f".{part}" if text else str(part))
    return text or "(top level)"


def deepest_error(error):
    """For oneOf/anyOf failures, the sub-error that got furthest, which names the real problem."""
    while error.context:
        error = max(error.context, key=lambda e: (len(e.absolute_path), -len(e.message)))
    return error
