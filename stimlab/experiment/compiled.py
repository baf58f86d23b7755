"""Typed results of compiling: a colour, a stimulus, a response and a condition, each with the live arrays the
audit needs as attributes and a ``to_json()`` giving exactly what the runner receives; and the whole compiled
protocol (:class:`Compiled`), which :func:`stimlab.experiment.compile.compile_protocol` returns.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Callable

import numpy as np
from numpy.typing import NDArray

__all__ = ["Compiled", "CompiledColour", "CompiledStimulus", "CompiledResponse", "CompiledCondition"]


@dataclass
class CompiledColour:
    """One colour of a stimulus in one condition.

    ``delta_RGB`` is the linear-RGB change from the background that modulation 1 shows; ``extremes`` lists each
    modulation the time course and shape reach with its linear RGB, device levels and gamut flag.
    """

    lms: list
    cone_contrast: list
    rgb_linear: list
    device: list | None
    extremes: list
    in_gamut: bool
    delta_RGB: NDArray[np.float64]
    modulation_table: list | None = None

    def to_json(self) -> dict:
        """The colour as the runner receives it.

        Returns
        -------
        dict
            ``lms`` (cone excitations, relative units of the observer's fundamentals), ``cone_contrast`` (unitless,
            > −1), ``rgb_linear`` (0..1 inside the gamut), ``device`` (digital levels, 0 to 2^bits − 1, or
            ``None`` out of gamut), ``extremes``, ``in_gamut`` and, for a modulated stimulus, its 511-entry
            ``modulation_table`` (modulation −1 to 1).
        """
        entry = {"lms": self.lms, "cone_contrast": self.cone_contrast, "rgb_linear": self.rgb_linear,
                 "device": self.device, "extremes": self.extremes, "in_gamut": self.in_gamut}
        if self.modulation_table is not None:
            entry["modulation_table"] = self.modulation_table
        return entry


@dataclass
class CompiledStimulus:
    """A stimulus in one condition: its pixel geometry, frame-count time course and compiled colours."""

    name: str
    geometry: dict
    time_course: dict
    source: dict
    colour: CompiledColour | None = None
    second_colour: CompiledColour | None = None

    def colours(self) -> dict[str, CompiledColour]:
        """The compiled colours this stimulus has.

        Returns
        -------
        dict of str to CompiledColour
            ``{"colour": …, "second_colour": …}``, absent ones left out (so 0 to 2 entries).
        """
        return {k: c for k, c in (("colour", self.colour), ("second_colour", self.second_colour)) if c is not None}

    def to_json(self) -> dict:
        """The stimulus as the runner receives it.

        Returns
        -------
        dict
            ``name``, ``geometry`` (pixels), ``time_course`` (ramps in whole frames, shown frequency in Hz) and one
            entry per colour as :meth:`CompiledColour.to_json` gives it.
        """
        entry = {"name": self.name, "geometry": self.geometry, "time_course": self.time_course}
        entry.update({k: c.to_json() for k, c in self.colours().items()})
        return entry


@dataclass
class CompiledResponse:
    """An adjustment or staircase ladder for one condition.

    Attributes
    ----------
    positions
        The ladder's values along one direction, shape (n,).
    axes
        One row per direction, in the response's colour space, shape (d, 3).
    base
        The space coordinates of position 0, shape (3,).
    grid
        The position of every ladder entry, shape (n**d, d).
    RGB
        Linear RGB of every ladder entry, shape (n**d, 3).
    limits, reachable
        ``[low, high]`` per direction (shape (d, 2)) and whether each ladder entry lies within its direction's
        limits (a plane may have a narrower range along one direction than the ladder spans).
    fields
        The remaining JSON fields the runner receives (ladder device levels, start, steps, …).
    """

    kind: str
    target: str
    space: str
    positions: NDArray[np.float64]
    axes: NDArray[np.float64]
    base: NDArray[np.float64]
    grid: NDArray[np.float64]
    RGB: NDArray[np.float64]
    in_gamut: list
    device: list
    fields: dict = field(default_factory=dict)
    start: Callable[[Any], Any] | None = None
    limits: NDArray[np.float64] | None = None
    reachable: NDArray[np.bool_] | None = None

    def axis_limits(self) -> NDArray[np.float64]:
        """The range of each direction: the protocol's own limits, or the ladder's ends.

        Returns
        -------
        NDArray[np.float64]
            ``[low, high]`` per direction, shape (d, 2), d = 1 (axis) or 2 (plane), in the response space's axis
            units (cone contrast or DKL), ``low < high``.
        """
        if self.limits is not None:
            return np.asarray(self.limits, dtype=float)
        return np.array([[self.positions[0], self.positions[-1]]] * len(self.axes))

    def to_json(self) -> dict:
        """The response as the runner receives it.

        Returns
        -------
        dict
            ``kind``, ``target``, ``space``, ``axes`` (shape (d, 3) as lists), the ladder fields, ``device``
            (digital levels per ladder position, ``None`` out of gamut or out of the limits) and ``in_gamut``.
        """
        return {"kind": self.kind, "target": self.target, "space": self.space, "axes": self.axes.tolist(),
                **self.fields, "device": self.device, "in_gamut": self.in_gamut}


@dataclass
class CompiledCondition:
    """One condition: its index and labels, its stimuli by name and its response (or ``None``)."""

    index: int
    label: str
    labels: dict
    stimuli: dict
    response: CompiledResponse | None = None

    def to_json(self) -> dict:
        """The condition as the runner receives it.

        Returns
        -------
        dict
            ``index`` (from 0), ``label``, ``labels`` (by variable), ``stimuli`` by name as
            :meth:`CompiledStimulus.to_json` gives them, and ``response`` as :meth:`CompiledResponse.to_json` gives
            it, or ``None``.
        """
        return {"index": self.index, "label": self.label, "labels": self.labels,
                "stimuli": {n: s.to_json() for n, s in self.stimuli.items()},
                "response": self.response.to_json() if self.response else None}


class Compiled:
    """A compiled protocol: ``data`` (JSON-able, for the runner) plus the typed conditions the audit reads.

    Attributes
    ----------
    data
        What the runner receives.
    model, background
        The display model and background the colours were compiled for.
    conditions
        One :class:`CompiledCondition` per condition, in index order.
    """

    def __init__(self, data, model, background, conditions):
        self.data = data
        self.model = model
        self.background = background
        self.conditions = conditions

    @property
    def stimuli(self) -> list[dict[str, CompiledStimulus]]:
        """The compiled stimuli of every condition, looked up as ``[condition][name]``.

        Returns
        -------
        list of dict of str to CompiledStimulus
            One mapping per condition, in condition index order (0 to n − 1), stimulus name →
            :class:`CompiledStimulus`.
        """
        return [c.stimuli for c in self.conditions]

    @property
    def responses(self) -> list[CompiledResponse | None]:
        """The compiled response of every condition, looked up as ``[condition]``.

        Returns
        -------
        list of CompiledResponse or None
            One entry per condition, in condition index order: the
            :class:`CompiledResponse` of an adjustment or staircase, ``None`` for
            other methods or without a respond phase.
        """
        return [c.response for c in self.conditions]
