"""The frame plan of a compiled protocol: for every phase of each schedule its whole frames and, per stimulus in
drawing order, the time course as steps (see :mod:`stimlab.experiment.timecourse`); for each per-pixel stimulus
(Gaussian blob, grating) its spatial profile as whole numbers; and a hash naming all that fixes what is on screen.

The runner, the reference renderer (:mod:`stimlab.experiment.render`) and the photosensitivity audit all read this
plan, so what is audited is what is shown.

Per-pixel stimuli
-----------------
A patch is ``2·half + 1`` pixels square, ``half = ceil(2σ)`` (σ in pixels), centred on the stimulus position
rounded half up to a whole pixel. Pixel ``(i, j)`` (column, row from the top) lies at ``dx = i − half``,
``dy = half − j`` from the centre and belongs to the patch when ``dx² + dy² ≤ 4σ²``. Its profile value is
``s = floor(S·exp(−r²/2σ²)·cos(2π·c·(dx·cos θ + dy·sin θ)) + ½)`` with ``S`` = :data:`PROFILE_SCALE` (no cosine
for a blob). At a frame with step ``q`` the pixel shows modulation-table entry ``255 + floor((q·s + S/2) / S)``;
a staircase target on its ladder shows entry ``floor((p·q·s + 255·S/2) / (255·S))`` clamped to the ladder, for
ladder position ``p``. Both are whole-number formulas, identical in Python and JavaScript.
"""

from __future__ import annotations

import hashlib
import json
import math

import numpy as np
from numpy.typing import NDArray

from .timecourse import STEPS, course_plan

__all__ = ["PROFILE_SCALE", "PLAN_RULE", "PATCH_RADIUS_SIGMA", "build_plan", "patch_profile", "patch_indices", "plan_sha256"]

PROFILE_SCALE = 16384
"""Whole-number scale of a patch's spatial profile (2¹⁴: a product with a step stays far below 2⁵³)."""

PATCH_RADIUS_SIGMA = 2
"""A per-pixel patch reaches this many σ from its centre, where the Gaussian is exp(−2) ≈ 0.135 of its peak (a
window of ±2σ for Gaussian blobs and Gabor patches is common practice, from memory)."""

PLAN_RULE = "stimlab-frames-1"
"""Names the rules of this module and of timecourse.py, so that a stored plan says how it was made."""


def patch_profile(geometry: dict) -> dict:
    """The whole-number spatial profile of a Gaussian blob or grating (see the module docstring).

    Parameters
    ----------
    geometry
        Compiled geometry: ``sigma_px`` (Gaussian σ, pixels, > 0); for a grating also ``cycles_per_px``
        (spatial frequency, cycles per pixel) and ``orientation_deg`` (degrees anticlockwise from horizontal).

    Returns
    -------
    dict
        ``{"half": h, "values": [...]}``: ``(2h + 1)²`` values row by row from the top, ``None`` outside the patch;
        ``h = ceil(2σ)`` pixels, values from −16384 to 16384 (:data:`PROFILE_SCALE`).

    Examples
    --------
    >>> profile = patch_profile({"sigma_px": 1})
    >>> profile["half"], profile["values"][4 * 5 // 2 + 2]
    (2, 16384)
    """
    sigma = float(geometry["sigma_px"])
    half = math.ceil(PATCH_RADIUS_SIGMA * sigma)
    d = np.arange(-half, half + 1)
    dx = d[None, :]
    dy = -d[:, None]
    r2 = dx * dx + dy * dy
    value = np.exp(-r2 / (2 * sigma * sigma))
    cycles = geometry.get("cycles_per_px")
    if cycles:
        theta = math.radians(geometry.get("orientation_deg", 0.0))
        value = value * np.cos(2 * np.pi * cycles * (dx * math.cos(theta) + dy * math.sin(theta)))
    values = np.floor(PROFILE_SCALE * value + 0.5).astype(int)
    inside = r2 <= (PATCH_RADIUS_SIGMA * sigma) ** 2
    return {"half": half, "values": [int(v) if ok else None for v, ok in zip(values.ravel(), inside.ravel())]}


def patch_indices(profile: dict, step: int, ladder_position: int | None = None,
                  ladder_size: int | None = None) -> NDArray[np.int64]:
    """Table indices of every patch pixel at modulation ``step`` (−1 outside the patch), shape (2h+1, 2h+1).

    Parameters
    ----------
    profile
        A profile from :func:`patch_profile`.
    step
        Time-course step, −255 to 255.
    ladder_position, ladder_size
        For a staircase target: its position on the ladder (0 to ``ladder_size − 1``) and the ladder's length
        (entries); ``None`` for the stimulus's own 511-entry modulation table.

    Returns
    -------
    NDArray[np.int64]
        Rows from the top, columns from the left: 0 to 510 (or to ``ladder_size − 1``), −1 outside the patch.
    """
    size = 2 * profile["half"] + 1
    values = np.array([v if v is not None else 0 for v in profile["values"]], dtype=np.int64).reshape(size, size)
    inside = np.array([v is not None for v in profile["values"]]).reshape(size, size)
    if ladder_position is None:
        index = STEPS + (step * values + PROFILE_SCALE // 2) // PROFILE_SCALE
        index = np.clip(index, 0, 2 * STEPS)
    else:
        index = (ladder_position * step * values + STEPS * PROFILE_SCALE // 2) // (STEPS * PROFILE_SCALE)
        index = np.clip(index, 0, ladder_size - 1)
    return np.where(inside, index, -1)


def build_plan(stimuli: dict, schedules: dict, refresh_hz: float) -> dict:
    """Courses for every phase's stimuli (added to ``schedules`` in place) and the plan's shared parts.

    Parameters
    ----------
    stimuli
        One condition's :class:`~stimlab.experiment.compiled.CompiledStimulus` by name (time courses and geometry
        do not depend on the condition).
    schedules
        The compiled schedules; each phase gets ``"courses"``, one index into the plan's ``courses`` per stimulus.
    refresh_hz
        The display's refresh rate (Hz, > 0).

    Returns
    -------
    dict
        ``rule`` (:data:`PLAN_RULE`), ``steps`` (255), ``profile_scale``, ``courses`` (course plans from
        :func:`~stimlab.experiment.timecourse.course_plan`, each once) and ``patches`` (profiles by stimulus name).
    """
    courses: list = []
    seen: dict = {}
    for schedule in schedules.values():
        for phase in schedule:
            frames = phase.get("frames")
            ids = []
            for name in phase["stimuli"]:
                course = course_plan(stimuli[name].time_course, refresh_hz, frames)
                key = json.dumps(course, separators=(",", ":"))
                if key not in seen:
                    seen[key] = len(courses)
                    courses.append(course)
                ids.append(seen[key])
            phase["courses"] = ids
    patches = {name: patch_profile(s.geometry) for name, s in stimuli.items()
               if s.geometry["shape"] in ("gaussian", "grating")}
    return {"rule": PLAN_RULE, "steps": STEPS, "profile_scale": PROFILE_SCALE, "courses": courses,
            "patches": patches}


def plan_sha256(data: dict) -> str:
    """SHA-256 of everything in compiled data that fixes what is on screen at any frame (canonical JSON).

    Parameters
    ----------
    data
        Compiled protocol data (its ``display``, ``background``, ``fixation``, ``schedules``, ``conditions``,
        ``trials`` and ``plan`` are hashed; missing keys count as ``null``).

    Returns
    -------
    str
        64 lowercase hexadecimal digits.

    Raises
    ------
    ValueError
        If the data hold NaN or infinity (not valid JSON).
    """
    keys = ("display", "background", "fixation", "schedules", "conditions", "trials", "plan")
    text = json.dumps({k: data.get(k) for k in keys}, sort_keys=True, separators=(",", ":"), allow_nan=False)
    return hashlib.sha256(text.encode()).hexdigest()
