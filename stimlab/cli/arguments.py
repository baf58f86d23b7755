"""Argument types shared by the commands."""

from __future__ import annotations

import argparse

import numpy as np

__all__ = ["numbers", "whole"]


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


def whole(low: int, high: int):
    """An argparse type for a whole number from ``low`` to ``high`` (a 5,000-digit number is refused, not echoed)."""

    def parse(text: str):
        text = text.strip()
        digits = text[1:] if text[:1] in "+-" else text
        if not digits.isdigit() or len(digits) > 19:
            raise argparse.ArgumentTypeError(f"{text[:30]!r} is not a whole number from {low} to {high}")
        value = int(text)
        if not low <= value <= high:
            raise argparse.ArgumentTypeError(f"{value} is out of range; give a whole number from {low} to {high}")
        return value

    parse.__name__ = "whole number"
    return parse
