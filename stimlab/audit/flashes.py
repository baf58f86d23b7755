"""Counting general and red flashes in a frame-by-frame signal, after WCAG 2.2 success criterion 2.3.1.

Definitions (WCAG 2.2, "general flash and red flash thresholds"):

- a *transition* runs between adjacent peaks and valleys of a signal over time;
- a *general flash* is a pair of opposing transitions in relative luminance of 10 % or more of the maximum
  relative luminance (1.0 here: luminance over the display's white), where the darker state is below 0.80;
- a *red flash* is a pair of opposing transitions involving a saturated red, R/(R+G+B) ≥ 0.8 in either state.
  Two working definitions are implemented, and a result says which fired:
  ``"wcag22"`` (WCAG 2.2 / ISO 9241-391: the two states differ by more than 0.2 in CIE 1976 u′v′) and
  ``"harding"`` (the older definition: the change in max(0, (R − G − B)·320) exceeds 20).

Counting (the conservative reading adopted here): a flash is a pair of opposing transitions, and an odd
transition left over in a one-second window counts as a flash in progress, so a window holds
``ceil(transitions / 2)`` flashes and seven transitions within a second are four flashes, more than three.

Content fails only when more than three flashes fall in some one-second window *and* the flashing area exceeds
0.006 sr within a 10° field; the area half is decided by the audit, which knows the stimulus geometry.
"""

from __future__ import annotations

import numpy as np

__all__ = ["turning_points", "chromaticity_states", "flashes_per_window", "max_flashes_per_second",
           "general_flash_transitions", "red_flash_transitions", "GENERAL_FLASH_CHANGE", "GENERAL_FLASH_DARK_LIMIT",
           "MAX_FLASHES_PER_SECOND", "RED_DEFINITIONS"]

GENERAL_FLASH_CHANGE = 0.10
GENERAL_FLASH_DARK_LIMIT = 0.80
MAX_FLASHES_PER_SECOND = 3
RED_DEFINITIONS = ("wcag22", "harding")


def turning_points(signal) -> np.ndarray:
    """Frame indices of the first sample, every peak and valley (plateaus counted once), and the last sample.

    Examples
    --------
    >>> turning_points([0, 0, 1, 1, 0, 0, 1]).tolist()
    [0, 2, 4, 6]
    """
    signal = np.asarray(signal, dtype=float)
    if signal.size < 2:
        return np.arange(signal.size)
    changes = np.flatnonzero(np.diff(signal) != 0) + 1  # first frame of each new value
    if changes.size == 0:
        return np.array([0])
    starts = np.r_[0, changes]
    values = signal[starts]
    direction = np.sign(np.diff(values))
    keep = np.r_[True, direction[1:] != direction[:-1], True]
    return starts[keep]


def chromaticity_states(uv) -> np.ndarray:
    """Frame indices of the states between which a chromaticity moves: the 2-D analogue of :func:`turning_points`.

    Starting from the first frame, a transition runs while the chromaticity keeps moving away from the state it
    started at (its u′v′ distance from that state grows); the frame where the distance stops growing is the next
    state, and the next transition starts from there. Along a line this is exactly the peaks and valleys of the
    signal; off a line it also finds changes of hue that leave any one-dimensional red measure constant.

    Parameters
    ----------
    uv
        CIE 1976 u′v′ per frame, shape (frames, 2).

    Returns
    -------
    ndarray of int
        The first frame, each state (the first frame of a plateau) and the last frame.

    Examples
    --------
    >>> uv = [[0.45, 0.52], [0.45, 0.52], [0.20, 0.47], [0.20, 0.47], [0.45, 0.52], [0.45, 0.52]]
    >>> chromaticity_states(uv).tolist()
    [0, 2, 4]
    """
    uv = np.asarray(uv, dtype=float)
    if uv.shape[0] < 2:
        return np.arange(uv.shape[0])
    changes = np.flatnonzero(np.any(np.diff(uv, axis=0) != 0, axis=1)) + 1
    if changes.size == 0:
        return np.array([0])
    starts = np.r_[0, changes]  # first frame of each new value
    values = uv[starts]
    states = [0]
    anchor, previous = values[0], 0.0
    for i in range(1, len(starts)):
        distance = float(np.hypot(*(values[i] - anchor)))
        if distance <= previous:  # stopped moving away: the previous value was a state
            states.append(i - 1)
            anchor = values[i - 1]
            distance = float(np.hypot(*(values[i] - anchor)))
        previous = distance
    states.append(len(starts) - 1)
    return starts[np.unique(states)]


def _transitions(signal, qualifies) -> np.ndarray:
    """End frames of the qualifying transitions between consecutive turning points."""
    points = turning_points(signal)
    if points.size < 2:
        return np.array([], dtype=int)
    signal = np.asarray(signal, dtype=float)
    ok = qualifies(points[:-1], points[1:])
    return points[1:][ok]


def general_flash_transitions(relative_luminance) -> np.ndarray:
    """End frames of transitions that can make a general flash (≥ 10 % change, darker state below 0.80)."""
    Y = np.asarray(relative_luminance, dtype=float)

    def qualifies(a, b):
        return (np.abs(Y[b] - Y[a]) >= GENERAL_FLASH_CHANGE - 1e-12) & (np.minimum(Y[a], Y[b]) < GENERAL_FLASH_DARK_LIMIT)

    return _transitions(Y, qualifies)


def red_flash_transitions(RGB_linear, uv, definition: str = "wcag22") -> np.ndarray:
    """End frames of transitions that can make a red flash.

    Parameters
    ----------
    RGB_linear
        Linear RGB per frame, shape (frames, 3), 0..1.
    uv
        CIE 1976 u′v′ per frame, shape (frames, 2).
    definition
        ``"wcag22"`` or ``"harding"``.
    """
    RGB = np.asarray(RGB_linear, dtype=float)
    total = RGB.sum(axis=-1)
    with np.errstate(divide="ignore", invalid="ignore"):
        saturated = np.where(total > 0, RGB[:, 0] / total, 0.0) >= 0.8
    redness = np.maximum(0.0, (RGB[:, 0] - RGB[:, 1] - RGB[:, 2]) * 320.0)
    if definition == "wcag22":
        # The states are where the chromaticity itself turns (chromaticity_states), so a change in u′v′ is
        # found even when R − G − B stays constant.
        uv = np.asarray(uv, dtype=float)
        points = chromaticity_states(uv)
        if points.size < 2:
            return np.array([], dtype=int)
        a, b = points[:-1], points[1:]
        ok = (saturated[a] | saturated[b]) & (np.linalg.norm(uv[b] - uv[a], axis=-1) > 0.2)
        return b[ok]
    if definition == "harding":
        # The older definition is about the red content itself: its states are the peaks and valleys of
        # max(0, R − G − B).
        def qualifies(a, b):
            return (saturated[a] | saturated[b]) & (np.abs(redness[b] - redness[a]) > 20.0)

        return _transitions(redness, qualifies)
    raise ValueError(f"unknown red flash definition {definition!r}; choose one of: {', '.join(RED_DEFINITIONS)}")


def flashes_per_window(transition_frames, total_frames: int, refresh_hz: float) -> np.ndarray:
    """Flashes in the one-second window ``[t, t + 1 s)`` starting at each frame t: ``ceil(transitions / 2)``.

    A flash is a pair of opposing transitions; an odd transition left over in the window is counted as a flash in
    progress (the conservative reading of WCAG 2.2's "more than three flashes", see the module notes).

    Examples
    --------
    >>> flashes_per_window([10, 20, 30, 40, 50], 60, 60.0)[[0, 15, 45]].tolist()
    [3, 2, 1]
    """
    frames = np.sort(np.asarray(transition_frames, dtype=int))
    starts = np.arange(total_frames)
    window = int(round(refresh_hz))
    transitions = np.searchsorted(frames, starts + window) - np.searchsorted(frames, starts)
    return (transitions + 1) // 2


def max_flashes_per_second(transition_frames, refresh_hz: float) -> tuple[int, int]:
    """The most flashes in any one-second window, and the window's first frame.

    Windows are half-open, ``[t, t + 1 s)``, and slide frame by frame.

    Examples
    --------
    >>> frames = np.arange(10, 600, 10)  # a 3 Hz square wave at 60 Hz: a transition every 10 frames
    >>> max_flashes_per_second(frames, 60.0)[0]
    3
    """
    frames = np.asarray(transition_frames, dtype=int)
    if frames.size == 0:
        return 0, 0
    counts = flashes_per_window(frames, int(frames.max()) + 1, refresh_hz)
    best = int(np.argmax(counts))
    return int(counts[best]), best
