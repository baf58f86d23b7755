"""Experimental design: factorial conditions, trial orders from a recorded seed, balanced Latin squares.

Orders use Python's :class:`random.Random` (Mersenne Twister), whose sequence for a given seed is stable across
Python versions, so a recorded seed reproduces a session's order exactly.
"""

from __future__ import annotations

import itertools
import random

__all__ = ["conditions_from_variables", "latin_square", "trial_order", "ORDERS"]

ORDERS = ("fixed", "shuffled", "latin_square")


def _levels(values) -> list[tuple[str, object]]:
    if isinstance(values, dict):
        return list(values.items())
    return [(_label(v), v) for v in values]


def _label(value) -> str:
    if isinstance(value, list):
        return "(" + ", ".join(f"{v:g}" for v in value) + ")"
    return f"{value:g}" if isinstance(value, (int, float)) else str(value)


def conditions_from_variables(variables: dict) -> list[dict]:
    """Every combination of the variables' levels, the first variable varying slowest.

    Parameters
    ----------
    variables
        ``{name: [values]}`` or ``{name: {label: value}}``.

    Returns
    -------
    list of dict
        ``{"index": i, "label": "direction=L-M, contrast=0.04", "values": {...}, "labels": {...}}``.

    Examples
    --------
    >>> [c["label"] for c in conditions_from_variables({"axis": {"LM": [0, 1, 0]}, "c": [0.02, 0.04]})]
    ['axis=LM, c=0.02', 'axis=LM, c=0.04']
    """
    names = list(variables)
    combos = itertools.product(*(_levels(variables[n]) for n in names)) if names else [()]
    result = []
    for index, combo in enumerate(combos):
        labels = {n: label for n, (label, _) in zip(names, combo)}
        result.append({
            "index": index,
            "label": ", ".join(f"{n}={labels[n]}" for n in names) or "single condition",
            "values": {n: value for n, (_, value) in zip(names, combo)},
            "labels": labels,
        })
    return result


def latin_square(n: int) -> list[list[int]]:
    """A balanced Latin square (Williams design) for ``n`` treatments.

    Each treatment appears once in every row and column; for even ``n`` each treatment is followed by every other
    exactly once (first-order carry-over balance). For odd ``n`` the square and its mirror are stacked (2n rows),
    which restores that balance.

    Examples
    --------
    >>> latin_square(4)
    [[0, 1, 3, 2], [1, 2, 0, 3], [2, 3, 1, 0], [3, 0, 2, 1]]
    """
    if n < 1:
        raise ValueError("a Latin square needs at least one treatment")
    first, low, high = [0], 1, n - 1
    for position in range(1, n):
        if position % 2:
            first.append(low)
            low += 1
        else:
            first.append(high)
            high -= 1
    rows = [[(v + shift) % n for v in first] for shift in range(n)]
    if n % 2:
        rows += [row[::-1] for row in rows]
    return rows


def trial_order(items: list, order: str, rng: random.Random, participant: int = 1) -> list:
    """``items`` in the given order: as listed, shuffled by ``rng``, or by the participant's Latin-square row.

    ``participant`` is 1-based; participant p gets row (p − 1) modulo the number of rows.
    """
    if order == "fixed":
        return list(items)
    if order == "shuffled":
        items = list(items)
        rng.shuffle(items)
        return items
    if order == "latin_square":
        rows = latin_square(len(items))
        return [items[i] for i in rows[(participant - 1) % len(rows)]]
    raise ValueError(f"unknown order {order!r}; choose one of: {', '.join(ORDERS)}")
