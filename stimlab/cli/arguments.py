"""Argument types shared by the commands."""

from __future__ import annotations

import argparse

import numpy as np

__all__ = ["numbers"]


def numbers(count: int):
    """An argparse type for ``count`` comma-separated numbers."""

    def parse(text: str):
        parts = [p for p in text.replace(";", ",").split(",") if p.strip()]
        try:
            values = [float(p) for p in parts]
        except ValueError:
            raise argparse.ArgumentTypeError(f"{text!r} is not {count} comma-separated numbers") from None
        if len(values) != count:
            raise argparse.ArgumentTypeError(f"{text!r} has {len(values)} numbers; give {count}, comma-separated")
        if not all(np.isfinite(values)):
            raise argparse.ArgumentTypeError(f"{text!r} contains NaN or infinity")
        return values

    parse.__name__ = f"{count} numbers"
    return parse
