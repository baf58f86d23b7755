"""Experimental design: factorial conditions, trial orders from a recorded seed, balanced Latin squares.

Orders use Python's :class:`random.Random` (Mersenne Twister), whose sequence for a given seed is stable across
Python versions, so a recorded seed reproduces a session's order exactly.
"""

from __future__ import annotations

import itertools
import random
from collections.abc import Sequence
from typing import TypeVar

__all__ = ["conditions_from_variables", "latin_square", "trial_order", "ORDERS"]

ORDERS = ("fixed", "shuffled", "latin_square")
"""Names of the trial orders :func:`trial_order` knows."""

T = TypeVar("T")


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
        ``{name: [values]}`` or ``{name: {label: value}}``, in the order the protocol lists them. Values are
        whatever the protocol uses (a cone contrast, a DKL direction as a list, a duration in s); a list of
        values is labelled by the values themselves, a mapping by its keys.

    Returns
    -------
    list of dict
        One per combination, ``{"index": i, "label": "direction=L-M, contrast=0.04", "values": {...},
        "labels": {...}}``, ``index`` counting from 0. With no variables, one condition labelled
        "single condition".

    Notes
    -----
    A full factorial design: the number of conditions is the product of the numbers of levels.

    Examples
    --------
    >>> [c["label"] for c in conditions_from_variables({"axis": {"LM": [0, 1, 0]}, "c": [0.02, 0.04]})]
    ['axis=LM, c=0.02', 'axis=LM, c=0.04']
    >>> conditions_from_variables({"background": [[0.5, 0.5, 0.5]]})[0]["label"]
    'background=(0.5, 0.5, 0.5)'
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

    Parameters
    ----------
    n
        Number of treatments, ≥ 1.

    Returns
    -------
    list of list of int
        Rows of treatment indices 0..n − 1: n rows for even ``n``, 2n for odd ``n``. Row r is the order for
        the (r + 1)-th participant.

    Raises
    ------
    ValueError
        If ``n`` is below 1.

    Notes
    -----
    Each treatment appears once in every row and equally often in every column; for even ``n`` each treatment is
    followed by every other exactly once (first-order carry-over balance). For odd ``n`` the square and its
    mirror are stacked (2n rows), which restores that balance. The first row is 0, 1, n − 1, 2, n − 2, …; each
    further row adds 1 modulo n.

    References
    ----------
    Williams, E. J. (1949). Experimental designs balanced for the estimation of residual effects of treatments.
    Australian Journal of Scientific Research, Series A, 2, 149–168.

    Examples
    --------
    >>> latin_square(4)
    [[0, 1, 3, 2], [1, 2, 0, 3], [2, 3, 1, 0], [3, 0, 2, 1]]
    >>> latin_square(3)
    [[0, 1, 2], [1, 2, 0], [2, 0, 1], [2, 1, 0], [0, 2, 1], [1, 0, 2]]
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


def trial_order(items: Sequence[T], order: str, rng: random.Random, participant: int = 1) -> list[T]:
    """``items`` in the given order: as listed, shuffled by ``rng``, or by the participant's Latin-square row.

    Parameters
    ----------
    items
        The conditions (or blocks) to order. Not changed.
    order
        One of :data:`ORDERS`: ``fixed`` (as listed), ``shuffled`` (a permutation drawn from ``rng``),
        ``latin_square`` (the participant's row of :func:`latin_square` for ``len(items)`` treatments).
    rng
        Random generator, seeded with the seed recorded for the session; only ``shuffled`` draws from it.
    participant
        1-based participant number, ≥ 1: participant p gets row (p − 1) modulo the number of rows.

    Returns
    -------
    list
        A new list holding every item once.

    Raises
    ------
    ValueError
        For an unknown ``order``, listing the valid ones.

    References
    ----------
    Williams, E. J. (1949). Australian Journal of Scientific Research, Series A, 2, 149–168 (``latin_square``).

    Examples
    --------
    >>> trial_order(["a", "b", "c", "d"], "shuffled", random.Random(1))
    ['d', 'a', 'c', 'b']
    >>> trial_order(["a", "b", "c", "d"], "latin_square", random.Random(1), participant=2)
    ['b', 'c', 'a', 'd']
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
