"""The reference renderer: any frame of a compiled plan as an array of device levels, drawn with numpy by the
canvas's rules (static/js/runner/paint.js), for tests and for the photosensitivity audit.

Geometry: the origin is the screen centre, x to the right and y up in stimulus positions; the canvas row runs
down. A sample is a pixel, taken at its centre ``(column + ½, row + ½)``. A disc covers a pixel whose centre lies
within its radius, an annulus the pixels between its radii, a square the centres in ``[x − r, x + r)``; a
centre–surround is its surround disc with the centre disc drawn over it, a bipartite field has its first colour
left of the vertical through its centre and its second colour right of it; Gaussian blobs and gratings are drawn
from the plan's whole-number profile at a whole-pixel offset (:mod:`stimlab.experiment.plan`); the fixation mark
is drawn last (a dot, or a cross of lines ``max(1, size/8)`` pixels wide). Stimuli are drawn in the order the
phase lists them, later ones on top.

Anti-aliased edges: the canvas blends the colours of pixels that a shape's edge crosses, which this renderer does
not imitate. :func:`render_frame` therefore also returns an *edge mask*, every pixel whose centre lies within
:data:`EDGE_PX` of a shape's outline or of the fixation cross; comparisons with a browser's canvas leave those
pixels out and require every other pixel to be identical. Patches have no blended edges (they are whole pixels).
The audit uses the renderer's regions, which assign each edge pixel wholly to one side: at the audit's coarser
sampling one pixel's blend changes the flashing area by far less than its resolution.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from .plan import patch_indices
from .timecourse import STEPS, steps_at

__all__ = ["EDGE_PX", "Item", "Regions", "frame_items", "phase_regions", "region_levels", "render_frame",
           "render_frames", "schedule_of", "trial_frames"]

EDGE_PX = 1.0
"""Pixels within this distance (px) of an outline may be blended by the canvas: left out of comparisons."""


@dataclass
class Item:
    """One stimulus as drawn in one phase of one trial: its geometry, course and what its colours come from."""

    name: str
    geometry: dict
    course: dict
    stimulus: dict  # the condition's JSON stimulus
    response: dict | None  # the condition's response when this stimulus is its target
    ladder: int | None  # the ladder entry shown (an adjustment's or a staircase's position)
    patch: dict | None


def schedule_of(data: dict, trial: dict, first_in_run: bool = False) -> str:
    """Which schedule a trial uses: the first trial of a run (or after a pause) adapts fully.

    Parameters
    ----------
    data
        Compiled data (unused; kept for a uniform call).
    trial
        A compiled trial (its ``schedule``).
    first_in_run
        Whether the trial starts a run or follows a pause.

    Returns
    -------
    str
        ``"first"`` or ``"repeat"``.
    """
    return "first" if first_in_run or trial["schedule"] == "first" else "repeat"


def trial_frames(data: dict, trial: dict, phase_index: int, first_in_run: bool = False) -> dict:
    """The schedule's phase entry for a trial.

    Parameters
    ----------
    data
        Compiled data with its schedules.
    trial
        A compiled trial.
    phase_index
        The phase's index in the schedule (0-based).
    first_in_run
        Whether the trial starts a run (see :func:`schedule_of`).

    Returns
    -------
    dict
        The phase: ``phase``, ``frames`` (whole frames, or ``None`` when open-ended), ``stimuli`` and ``courses``.
    """
    return data["schedules"][schedule_of(data, trial, first_in_run)][phase_index]


def _start_position(response: dict, trial: dict):
    if response["kind"] == "staircase":
        return response["start_position"]
    count = response["positions"]["count"]
    start = trial.get("start", count // 2)
    return start[0] * count + start[1] if isinstance(start, list) else start


def frame_items(data: dict, trial: dict, phase: dict, *, ladder: int | None = None) -> list[Item]:
    """The stimuli of a phase of a trial in drawing order (``ladder``: an adjustment's position, default its start).

    Parameters
    ----------
    data
        Compiled data with its frame plan.
    trial
        A compiled trial (``condition``, optional ``target_side`` and ``start``).
    phase
        The trial's phase entry (see :func:`trial_frames`).
    ladder
        Ladder entry shown by the response's target (0 to the ladder's size − 1), or ``None`` for the trial's start.

    Returns
    -------
    list of Item
        Later items are drawn on top; positions in pixels from the screen centre, y up.
    """
    condition = data["conditions"][trial["condition"]]
    response = condition["response"]
    items = []
    for name, course_id in zip(phase["stimuli"], phase["courses"]):
        stimulus = condition["stimuli"][name]
        geometry = dict(stimulus["geometry"])
        target = response is not None and response["target"] == name
        if trial.get("target_side") and target:
            geometry["position_px"] = [(-1 if trial["target_side"] == "left" else 1) * abs(geometry["position_px"][0]),
                                       geometry["position_px"][1]]
        uses_ladder = target and (response["kind"] == "staircase" or phase["phase"] == "respond")
        position = (ladder if ladder is not None else _start_position(response, trial)) if uses_ladder else None
        items.append(Item(name, geometry, data["plan"]["courses"][course_id], stimulus,
                          response if uses_ladder else None, position, data["plan"]["patches"].get(name)))
    return items


def _device_or_marker(device) -> tuple:
    return tuple(device) if device is not None else (-1, -1, -1)


def region_levels(item: Item, region: str, step: int, profile_value: int | None = None) -> tuple:
    """Device levels (``(-1, -1, -1)`` out of gamut) of one region of an item at a modulation step.

    Parameters
    ----------
    item
        An item from :func:`frame_items`.
    region
        ``"colour"`` or ``"second_colour"``.
    step
        The item's time-course step this frame, −255 to 255.
    profile_value
        A patch pixel's whole-number profile value (Gaussian blobs and gratings, −16384 to 16384), else ``None``.

    Returns
    -------
    tuple of int
        Device levels (R, G, B), or ``(-1, -1, -1)`` out of gamut.
    """
    stimulus, response = item.stimulus, item.response
    if response is not None and region == "second_colour":  # a ladder sets the first colour only
        return _device_or_marker(stimulus["second_colour"]["device"])
    if response is not None:
        if response["kind"] == "adjustment":
            table = response["device_opposite"] if step < 0 and response.get("device_opposite") else response["device"]
            return _device_or_marker(table[item.ladder])
        if item.patch is None:
            return _device_or_marker(response["device"][item.ladder])
        profile = {"half": 0, "values": [profile_value]}
        index = int(patch_indices(profile, step, item.ladder, len(response["device"]))[0, 0])
        return _device_or_marker(response["device"][index])
    colour = stimulus[region]
    table = stimulus["colour"].get("modulation_table")
    if item.patch is not None:
        index = int(patch_indices({"half": 0, "values": [profile_value]}, step)[0, 0])
        return _device_or_marker(table[index])
    if table is not None and step != STEPS and colour.get("modulation_table") is not None:
        return _device_or_marker(colour["modulation_table"][step + STEPS])
    return _device_or_marker(colour["device"])


@dataclass
class Regions:
    """Which drawn region each sample shows in one phase: ``labels`` (one per sample) index ``keys``.

    A key is ``("background",)``, ``("fixation",)`` or ``(item, region, profile value or None)``.
    """

    labels: np.ndarray
    keys: list
    edges: np.ndarray


def _grid(size_px, columns, rows):
    width, height = size_px
    columns = np.arange(width) if columns is None else np.asarray(columns)
    rows = np.arange(height) if rows is None else np.asarray(rows)
    X = (columns + 0.5)[None, :] - width / 2
    Y = height / 2 - (rows + 0.5)[:, None]  # y up, from the screen centre
    return columns, rows, X, Y


def phase_regions(data: dict, items: list[Item], fixation: bool, columns=None, rows=None) -> Regions:
    """The region shown at every sample (pixel columns × rows, default all) for a phase's items.

    Parameters
    ----------
    data
        Compiled data (``display.size_px`` and ``fixation``).
    items
        The phase's items in drawing order (see :func:`frame_items`).
    fixation
        Whether the fixation mark is drawn in this phase.
    columns, rows
        Pixel columns (0 to width − 1, from the left) and rows (0 to height − 1, from the top) to sample.

    Returns
    -------
    Regions
        Labels of shape (rows, columns) indexing the region keys, and the edge mask.
    """
    columns, rows, X, Y = _grid(data["display"]["size_px"], columns, rows)
    shape = (rows.size, columns.size)
    keys: list = [("background",)]
    labels = np.zeros(shape, dtype=np.int32)
    edges = np.zeros(shape, dtype=bool)
    width, height = data["display"]["size_px"]

    def paint(mask, key):
        keys.append(key)
        labels[mask] = len(keys) - 1

    for i, item in enumerate(items):
        g = item.geometry
        x, y = g["position_px"]
        dx, dy = X - x, Y - y
        d = np.hypot(dx, dy)
        r = (g.get("size_px") or 0) / 2
        kind = g["shape"]
        if kind == "uniform_field":
            paint(np.ones(shape, dtype=bool), (i, "colour", None))
        elif kind == "square":
            paint((dx >= -r) & (dx < r) & (dy > -r) & (dy <= r), (i, "colour", None))
            edges |= ((np.abs(np.abs(dx) - r) < EDGE_PX) & (np.abs(dy) < r + EDGE_PX)) | \
                ((np.abs(np.abs(dy) - r) < EDGE_PX) & (np.abs(dx) < r + EDGE_PX))
        elif kind == "annulus":
            inner = g["inner_size_px"] / 2
            paint((d <= r) & (d > inner), (i, "colour", None))
            edges |= (np.abs(d - r) < EDGE_PX) | (np.abs(d - inner) < EDGE_PX)
        elif kind == "centre_surround":
            outer = g["surround_size_px"] / 2
            paint(d <= outer, (i, "second_colour", None))
            paint(d <= r, (i, "colour", None))
            edges |= (np.abs(d - r) < EDGE_PX) | (np.abs(d - outer) < EDGE_PX)
        elif kind == "bipartite":
            paint((d <= r) & (dx < 0), (i, "colour", None))
            paint((d <= r) & (dx >= 0), (i, "second_colour", None))
            edges |= (np.abs(d - r) < EDGE_PX) | ((np.abs(dx) < EDGE_PX) & (d < r + EDGE_PX))
        elif kind in ("gaussian", "grating"):
            profile = item.patch
            half = profile["half"]
            size = 2 * half + 1
            # Canvas pixel of the patch's first column/row: the centre rounded half up, as Math.round does.
            left = math.floor(width / 2 + x + 0.5) - half
            top = math.floor(height / 2 - y + 0.5) - half
            i_col = columns - left
            j_row = rows - top
            cols_in = (i_col >= 0) & (i_col < size)
            rows_in = (j_row >= 0) & (j_row < size)
            values = np.array([v if v is not None else np.iinfo(np.int32).min for v in profile["values"]],
                              dtype=np.int64).reshape(size, size)
            sub = values[np.ix_(j_row[rows_in], i_col[cols_in])]
            block = labels[np.ix_(rows_in, cols_in)]
            for value in np.unique(sub[sub != np.iinfo(np.int32).min]):
                keys.append((i, "colour", int(value)))
                block[sub == value] = len(keys) - 1
            labels[np.ix_(rows_in, cols_in)] = block
        else:  # disc
            paint(d <= r, (i, "colour", None))
            edges |= np.abs(d - r) < EDGE_PX
    spec = data.get("fixation")
    if fixation and spec:
        size = spec["size_px"]
        if spec["shape"] == "dot":
            d = np.hypot(X, Y)
            radius = max(1.0, size / 2)
            paint(d <= radius, ("fixation",))
            edges |= np.abs(d - radius) < EDGE_PX
        else:
            w = max(1.0, size / 8) / 2
            bars = ((np.abs(Y) <= w) & (np.abs(X) <= size / 2)) | ((np.abs(X) <= w) & (np.abs(Y) <= size / 2))
            paint(bars, ("fixation",))
            edges |= (np.abs(X) < size / 2 + w + EDGE_PX + 1) & (np.abs(Y) < size / 2 + w + EDGE_PX + 1) & \
                ((np.abs(X) < w + EDGE_PX + 1) | (np.abs(Y) < w + EDGE_PX + 1))
    return Regions(labels, keys, edges)


def key_levels(data: dict, items: list[Item], key: tuple, steps: list[int]) -> tuple:
    """Device levels of one region key given each item's step this frame.

    Parameters
    ----------
    data
        Compiled data (background and fixation device levels).
    items
        The phase's items.
    key
        A region key of :class:`Regions`.
    steps
        Each item's step this frame, −255 to 255.

    Returns
    -------
    tuple of int
        Device levels (R, G, B), or ``(-1, -1, -1)`` out of gamut.
    """
    if key[0] == "background":
        return tuple(data["background"]["device"])
    if key[0] == "fixation":
        return tuple(data["fixation"]["device"])
    i, region, value = key
    return region_levels(items[i], region, steps[i], value)


def render_frame(data: dict, trial_index: int, phase_index: int, frame: int, *, columns=None, rows=None,
                 first_in_run: bool | None = None,
                 ladder: int | None = None) -> tuple[NDArray[np.int_], NDArray[np.bool_]]:
    """Device levels of every sample of one frame, and the edge mask (see the module docstring).

    Parameters
    ----------
    data
        Compiled data (``Compiled.data``), with its frame plan.
    trial_index, phase_index, frame
        The trial (compiled order), the phase within its schedule and the frame within the phase (0-based).
    columns, rows
        Pixel columns and rows to sample (default: all; a stride gives a coarser scale).
    first_in_run
        Whether the trial is the first of a run (full adaptation); default: only trial 0.
    ladder
        An adjustment's or staircase's ladder entry to show (default: the trial's start).

    Returns
    -------
    device : ndarray of int, shape (rows, columns, 3)
        Device levels; −1 where a colour is out of gamut.
    edges : ndarray of bool, shape (rows, columns)
        Pixels an anti-aliased outline may blend.
    """
    device, edges = next(render_frames(data, trial_index, phase_index, [frame], columns=columns, rows=rows,
                                       first_in_run=first_in_run, ladder=ladder))
    return device, edges


def render_frames(data: dict, trial_index: int, phase_index: int, frames, *, columns=None, rows=None,
                  first_in_run: bool | None = None, ladder: int | None = None):
    """:func:`render_frame` for several frames of one phase, drawing the phase's regions once.

    Parameters are those of :func:`render_frame`, with ``frames`` an iterable of frame indices within the phase.

    Yields
    ------
    device : NDArray[np.int_], shape (rows, columns, 3)
        Device levels; −1 where a colour is out of gamut.
    edges : NDArray[np.bool_], shape (rows, columns)
        Pixels an anti-aliased outline may blend.
    """
    trial = data["trials"][trial_index]
    phase = trial_frames(data, trial, phase_index, trial_index == 0 if first_in_run is None else first_in_run)
    items = frame_items(data, trial, phase, ladder=ladder)
    regions = phase_regions(data, items, phase.get("fixation", True), columns, rows)
    for frame in frames:
        steps = [steps_at(item.course, frame, phase.get("frames")) for item in items]
        palette = np.array([key_levels(data, items, key, steps) for key in regions.keys], dtype=int)
        yield palette[regions.labels], regions.edges
