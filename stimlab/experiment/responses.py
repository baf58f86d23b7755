"""Compiled responses: the ladder of positions an adjustment or a staircase can reach, as device levels.

An adjustment moves a stimulus's colour from its own value along an axis (or in a plane) of cone contrast or
DKL space, in fine steps between limits; a staircase shows ``value × axis`` on the background, with the value
on a ladder of the smallest step. Both compile to a table of device levels per ladder position (``None`` where
the colour would leave the gamut) plus the affine map from position to cone excitations for the log, so the
runner does no colour maths.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import NDArray

from ..colorimetry.device import RGB_linear_to_device_or_none
from ..colorimetry.stimulus import Background
from ..errors import InputError
from .compiled import CompiledResponse

__all__ = ["compile_response", "ladder", "MAX_LADDER_POSITIONS", "MAX_POSITIONS", "DEFAULT_STAIRCASE_RULE",
           "DEFAULT_STOP_REVERSALS", "DEFAULT_MAX_TRIALS", "DEFAULT_COARSE_STEPS"]

MAX_LADDER_POSITIONS = 20_000
"""Most positions on one ladder: a fine step of 10⁻⁴ over limits of ±1 (far finer than one device level in cone
contrast), while the table of device levels sent to the browser stays small. A design limit of this program."""

MAX_POSITIONS = 250_000
"""Most positions in a plane (all pairs of ladder positions): 500 per direction. A design limit of this program,
for the same reason."""

POSITION_TOLERANCE = 1e-9
"""Slack for binary rounding of decimal input, in steps when counting steps and in axis units when comparing with
limits: limits 0 to 0.3 at a step of 0.1 give 0.3 / 0.1 = 2.9999999999999996 steps, which must count as 3 (IEEE 754
double precision; common practice)."""

DEFAULT_COARSE_STEPS = 10
"""Fine steps in a coarse step (with the coarse key held) when ``step_coarse`` is not given (common practice)."""

DEFAULT_STAIRCASE_RULE = {"up": 1, "down": 2}
"""One step up (harder → easier) after one wrong answer, one step down after two right in a row: the transformed
up-down rule that converges on 70.7 % correct (Levitt 1971). Copy it before changing it."""

DEFAULT_STOP_REVERSALS = 8
"""A staircase stops after this many reversals when the protocol does not say (common practice: 6 to 12 reversals,
the threshold taken from the last few; Levitt 1971 discusses the choice)."""

DEFAULT_MAX_TRIALS = 50
"""A staircase stops after this many trials at most when the protocol does not say (common practice)."""


def ladder(low: float, high: float, step: float, where: str) -> NDArray[np.float64]:
    """Positions ``low, low + step, …`` up to ``high`` (inclusive within rounding).

    Parameters
    ----------
    low, high
        The limits, in the response space's axis units (cone contrast or DKL), ``low ≤ high``.
    step
        The smallest step, in the same units (> 0).
    where
        JSON path of the step's field, named in the error.

    Returns
    -------
    NDArray[np.float64]
        The positions, shape (n,), 1 ≤ n ≤ 20,000 (:data:`MAX_LADDER_POSITIONS`).

    Raises
    ------
    InputError
        If more than :data:`MAX_LADDER_POSITIONS` positions would result.

    Examples
    --------
    >>> ladder(-0.1, 0.1, 0.05, "step_fine")
    array([-0.1 , -0.05,  0.  ,  0.05,  0.1 ])
    """
    count = int(np.floor((high - low) / step + POSITION_TOLERANCE)) + 1
    if count > MAX_LADDER_POSITIONS:
        raise InputError(f"{count} positions between the limits at this step; use a larger fine step or narrower "
                         f"limits (at most {MAX_LADDER_POSITIONS:,})", field=where)
    return low + step * np.arange(count)


def _table(background: Background, LMS: NDArray[np.float64]):
    RGB = background.model.LMS_to_RGB_linear(LMS)
    device, inside = RGB_linear_to_device_or_none(RGB, background.model.level_outputs)
    return device, inside, RGB


def compile_response(response: dict, stimuli: dict, background: Background, where: str,
                     values: dict | None = None) -> CompiledResponse:
    """Compile an adjustment or staircase response for one condition (``values``: the condition's variables).

    Parameters
    ----------
    response
        The validated ``response`` of a respond phase: ``method`` (``adjustment`` or ``staircase``), ``target``,
        ``space`` (``cone_contrast`` or ``dkl``), ``axis`` or ``plane``, ``limits``, ``step_fine`` / ``steps`` and
        ``start``, all positions in the space's axis units.
    stimuli
        This condition's :class:`~stimlab.experiment.compiled.CompiledStimulus` by name.
    background
        The adapted background the colours are relative to.
    where
        JSON path of the response, named in errors.
    values
        The condition's variable values by name (for ``"$name"`` references), or ``None``.

    Returns
    -------
    CompiledResponse
        The ladder with linear RGB, device levels (``None`` outside the gamut or the limits) and log maps.

    Raises
    ------
    InputError
        For an all-zero axis, too many positions (20,000 on a line, 250,000 in a plane), a ``start`` of the wrong
        length or, for a staircase, outside the limits.

    References
    ----------
    .. [1] Derrington, A. M., Krauskopf, J. & Lennie, P. (1984). Chromatic mechanisms in lateral geniculate
       nucleus of macaque. J. Physiol. 357, 241–265 (the DKL space).
    .. [2] Levitt, H. (1971). Transformed up-down methods in psychoacoustics. J. Acoust. Soc. Am. 49, 467–477
       (the staircase rule, e.g. 1 up / 2 down).
    """
    values = values or {}
    if isinstance(response.get("axis"), (str, list)):
        axis = response["axis"]
        axis = values[axis[1:]] if isinstance(axis, str) else [values[v[1:]] if isinstance(v, str) else v
                                                                 for v in axis]
        response = {**response, "axis": axis}
    space = response["space"]
    target = stimuli[response["target"]].colour
    if response["method"] == "staircase":
        return _staircase(response, background, space, where)
    limits = response["limits"]
    # Per-direction limits (a plane only): the ladder spans them all, and positions outside a direction's own
    # limits are unreachable (no device levels), so a runner stops there as at the gamut's edge.
    per_axis = [list(map(float, pair)) for pair in limits] if isinstance(limits[0], list) else None
    low, high = (min(p[0] for p in per_axis), max(p[1] for p in per_axis)) if per_axis else map(float, limits)
    axes = np.array([response["axis"]] if "axis" in response else response["plane"], dtype=float)
    if not np.all(np.any(axes != 0, axis=1)):
        raise InputError("an adjustment axis must not be all zeros", field=f"{where}.axis")
    fine = float(response["step_fine"])
    positions = ladder(low, high, fine, f"{where}.step_fine")
    base = background.LMS_to_space(space, np.array(target.lms))
    if len(axes) == 1:
        grid = positions[:, None]
    else:
        if positions.size**2 > MAX_POSITIONS:
            raise InputError(f"{positions.size}² positions in the plane; use a larger fine step (at most "
                             f"{MAX_POSITIONS:,} in all)", field=f"{where}.step_fine")
        p1, p2 = np.meshgrid(positions, positions, indexing="ij")
        grid = np.stack([p1.ravel(), p2.ravel()], axis=-1)
    coordinates = base + grid @ axes
    LMS = background.colour_to_LMS(space, coordinates)
    device, inside, RGB = _table(background, LMS)
    axis_limits = per_axis or [[float(low), float(high)]] * len(axes)
    reachable = np.all([(grid[:, d] >= lo - POSITION_TOLERANCE) & (grid[:, d] <= hi + POSITION_TOLERANCE)
                        for d, (lo, hi) in enumerate(axis_limits)], axis=0)
    if per_axis:
        device = [d if ok else None for d, ok in zip(device, reachable)]
    course = stimuli[response["target"]].time_course
    opposite = None
    if course["kind"] == "square" and course.get("mode") != "on_off":
        # A square-flickering target alternates with its opposite about the background: both need levels.
        opposite, opposite_inside = RGB_linear_to_device_or_none(2 * background.RGB_0 - RGB,
                                                                 background.model.level_outputs)
        inside = inside & opposite_inside
        device = [d if ok and reach else None for d, ok, reach in zip(device, inside, reachable)]
    origin = background.colour_to_LMS(space, base)
    axis_LMS = np.array([background.colour_to_LMS(space, base + a) - origin for a in axes])
    start = np.atleast_1d(np.asarray(response.get("start", 0.0), dtype=float))
    if start.size != len(axes):
        raise InputError(f"start needs {len(axes)} value(s), one per adjustment direction", field=f"{where}.start")
    jitter = float(response.get("start_jitter", 0.0))
    coarse = int(round(float(response.get("step_coarse", DEFAULT_COARSE_STEPS * fine)) / fine))

    # Each direction's first and last reachable position index.
    bounds = [(int(np.ceil((lo - low) / fine - POSITION_TOLERANCE)), int(np.floor((hi - low) / fine + POSITION_TOLERANCE)))
              for lo, hi in axis_limits]
    nominal = [float(s) for s in start]

    def start_index(rng):  # once per trial: plain Python, no array overhead
        values = [s + rng.uniform(-jitter, jitter) if jitter else s for s in nominal]
        index = [min(max(int(round((v - low) / fine)), first), last) for v, (first, last) in zip(values, bounds)]
        return index[0] if len(index) == 1 else index

    return CompiledResponse(
        kind="adjustment", target=response["target"], space=space, positions=positions, axes=axes, base=base,
        grid=grid, RGB=RGB, in_gamut=inside.tolist(), device=device, start=start_index,
        limits=np.array(axis_limits), reachable=reachable,
        fields={"positions": {"low": float(low), "step": fine, "count": int(positions.size), "dimensions": len(axes)},
                "coarse_step_positions": coarse, "device_opposite": opposite, "origin_lms": origin.tolist(),
                "axis_lms": axis_LMS.tolist(), "start_nominal": start.tolist(),
                **({"limits_per_axis": per_axis, "reachable": reachable.tolist()} if per_axis else {})})


def _staircase(response: dict, background: Background, space: str, where: str) -> CompiledResponse:
    low, high = response["limits"]
    steps = [float(s) for s in response["steps"]]
    smallest = min(steps)
    values = ladder(low, high, smallest, f"{where}.steps")
    axis = np.asarray(response["axis"], dtype=float)
    LMS = background.colour_to_LMS(space, values[:, None] * axis)
    device, inside, RGB = _table(background, LMS)
    start = float(response["start"])
    if not low <= start <= high:
        raise InputError(f"start {start:g} lies outside the limits [{low:g}, {high:g}]", field=f"{where}.start")
    return CompiledResponse(
        kind="staircase", target=response["target"], space=space, positions=values, axes=axis[None, :],
        base=np.zeros(3), grid=values[:, None], RGB=RGB, in_gamut=inside.tolist(), device=device,
        fields={"task": response["task"],
                "positions": {"low": low, "step": smallest, "count": int(values.size), "dimensions": 1},
                "start_position": int(round((start - low) / smallest)),
                "step_positions": [int(round(s / smallest)) for s in steps],
                "rule": response.get("rule", dict(DEFAULT_STAIRCASE_RULE)),
                "stop_reversals": response.get("stop_reversals", DEFAULT_STOP_REVERSALS),
                "max_trials": response.get("max_trials", DEFAULT_MAX_TRIALS),
                "origin_lms": background.LMS_0.tolist(),
                "axis_lms": (background.colour_to_LMS(space, axis) - background.LMS_0)[None, :].tolist()})
