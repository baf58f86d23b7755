"""Paradigm templates: complete, valid protocols for the common adaptation experiments, to start a new one from.

Each template is a JSON file in ``stimlab/data/paradigms/``: ``{"paradigm": {"title", "summary"}, "protocol": {…}}``.
Every template validates and passes the audit on the demo display (``tests/test_paradigms.py``).
"""

from __future__ import annotations

import copy
import json
import secrets
from functools import lru_cache
from importlib import resources

from ..errors import NotFoundError
from .protocol import validate_protocol

__all__ = ["paradigms", "paradigm_protocol", "SEED_LIMIT"]

SEED_LIMIT = 1_000_000
"""A new protocol's random seed is a whole number from 0 to this less one: six digits, easy to read out and copy."""


@lru_cache(maxsize=1)
def _templates() -> dict[str, dict]:
    folder = resources.files("stimlab.data").joinpath("paradigms")
    found = {}
    for entry in sorted(folder.iterdir(), key=lambda e: e.name):
        if entry.name.endswith(".json"):
            key = entry.name[:-5]
            data = json.loads(entry.read_text("utf-8"))
            validate_protocol(data["protocol"], f"paradigms/{entry.name}")
            found[key] = data
    return found


def paradigms() -> list[dict]:
    """The templates as ``{"key", "title", "summary"}``, in file-name order.

    Returns
    -------
    list of dict
        One entry per ``stimlab/data/paradigms/*.json``; ``key`` is the file name without ``.json``.
    """
    return [{"key": key, **data["paradigm"]} for key, data in _templates().items()]


def paradigm_protocol(key: str, title: str | None = None, seed: int | None = None) -> dict:
    """A fresh protocol from template ``key``, with its own title and a new random seed (recorded in the file).

    Parameters
    ----------
    key
        A template key from :func:`paradigms`.
    title
        The new protocol's title, or ``None`` (or empty) to keep the template's.
    seed
        The condition-order seed, or ``None`` for a random one from 0 to 999,999.

    Returns
    -------
    dict
        A deep copy of the template's protocol, valid against the protocol schema.

    Raises
    ------
    NotFoundError
        For an unknown template.
    """
    data = _templates().get(key)
    if data is None:
        raise NotFoundError(f"there is no paradigm template {key!r}; choose one of: {', '.join(_templates())}",
                            field="paradigm")
    protocol = copy.deepcopy(data["protocol"])
    if title:
        protocol["about"]["title"] = title
    protocol["conditions"]["seed"] = seed if seed is not None else secrets.randbelow(SEED_LIMIT)
    return protocol
