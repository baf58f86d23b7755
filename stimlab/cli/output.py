"""How the commands print machine-readable output."""

from __future__ import annotations

import json

__all__ = ["print_json"]


def print_json(data) -> None:
    """Print ``data`` as indented JSON; NaN and infinity are refused, never written as invalid JSON."""
    print(json.dumps(data, indent=2, allow_nan=False))
