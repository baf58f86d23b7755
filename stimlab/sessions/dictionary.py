"""The data dictionary: what every exported column means and its unit, for the JSON sidecar beside each table.

Columns are described by rule (a stimulus's colour columns follow one pattern whatever the stimulus is called), so
columns added later by the protocol or by the frame log flow through with a description. The keys follow BIDS
sidecars (``Description``, ``Units``, ``Levels``) so the same text serves the CSV, Parquet and BIDS files.
"""

from __future__ import annotations

import re

__all__ = ["describe", "dictionary", "UNITLESS"]

UNITLESS = "1"  # dimensionless quantities: cone contrast, DKL (BIDS and SI write "1" for a ratio)

_AXIS = {"L": "long-wavelength (L) cone", "M": "middle-wavelength (M) cone", "S": "short-wavelength (S) cone"}
_DKL = {"lum": "luminance axis", "lm": "L−M (isoluminant, constant S) axis", "s": "S (isoluminant, constant L−M) axis"}
_WHOSE = {"start": "the adjustment's start (after jitter)", "response": "the response (the adjustment's final "
          "setting)", "tested": "the staircase's test stimulus on this trial", "background": "the background"}

_FIXED = {
    "session": ("Session number in the stimlab database", None),
    "participant": ("Participant's pseudonymous code", None),
    "session_status": ("Status of the session when exported: running, interrupted, complete or ended_early",
                       None),
    "session_end_reason": ("The experimenter's reason for ending the session early (empty unless ended early)",
                           None),
    "protocol_sha256": ("SHA-256 of the protocol file's canonical JSON (identifies the protocol version)", None),
    "display_sha256": ("SHA-256 of the display profile the session was compiled for", None),
    "trial": ("Trial index in the compiled protocol, counted from 0 (the session page numbers trials from 1); in the "
              "frame log, empty for frames outside trials", None),
    "block": ("Block index, counted from 0 (the session page numbers blocks from 1)", None),
    "condition": ("Condition label: the condition variables and their levels", None),
    "condition_index": ("Condition index in the compiled protocol (0-based)", None),
    "practice": ("True for a practice trial (not for analysis)", None),
    "dry_run": ("True when the whole session was a dry run (not for analysis)", None),
    "target_side": ("Side of the target in a two-alternative forced choice (left or right)", None),
    "completed": ("True when the trial ended with a response or a timeout", None),
    "restarts": ("Times the trial was interrupted and run again", "count"),
    "timed_out": ("True when the respond phase ended without a response", None),
    "dropped_frames": ("Dropped frames (interval ≥ 1.5 refresh periods) during the trial", "count"),
    "end_s": ("End of the trial, from the first frame of the session", "s"),
    "response_method": ("How the response was given (adjustment, 2afc, yes_no, duration)", None),
    "response_key": ("Key that ended the trial (DOM KeyboardEvent.key): the answer key of a choice or duration "
                     "response, the confirming key (e.g. Enter) of an adjustment; empty when the trial timed out",
                     None),
    "response_choice": ("Choice index: 0 for the first key of the response, 1 for the second", None),
    "response_correct": ("True when the choice was correct (2AFC) or 'yes' (yes/no)", None),
    "response_time_s": ("Time from the first frame of the respond phase to the key press", "s"),
    "stimulus_position": ("Staircase value shown on this trial, in units of the response axis", UNITLESS),
    "frame": ("Frame number, counted from 0 at the session's first frame", "count"),
    "t_raf": ("requestAnimationFrame timestamp of the frame (browser clock, exact double)", "ms"),
    "t_callback": ("performance.now() at the start of the frame callback (browser clock, exact double)", "ms"),
    "phase": ("Phase being drawn (settle and pause frames belong to no trial)", None),
    "dropped": ("1 when the interval before this frame was at least 1.5 refresh periods", None),
    "in_phase": ("The frame's index within its trial phase, 0 for the phase's first frame; -1 outside trial phases "
                 "(settle, pause and the screens between trials)", "count"),
    "drawn": ("What the runner drew this frame: device levels 'r,g,b' per stimulus of the phase, ';'-separated, "
              "'patch' for a patterned one; the background first on settle frames and screens", None),
    "onset": ("Time of the phase's first frame from the first frame of the session", "s"),
    "duration": ("Time from this phase's first frame to the next phase's first frame", "s"),
    "trial_type": ("Phase of the trial", None),
    "response_time": ("Time from the onset of the respond phase to the key press", "s"),
    "participant_id": ("BIDS participant label (sub-<label>)", None),
    "run": ("Run number within the participant", None),
}

_PATTERNS = [
    (re.compile(r"^var_(?P<name>.+)$"), lambda m: (f"Level of the condition variable {m['name']!r}", None)),
    (re.compile(r"^onset_(?P<phase>.+)_s$"), lambda m: (f"Onset (first frame) of the {m['phase']} phase, from the "
                                                        "first frame of the session", "s")),
    (re.compile(r"^onset_(?P<phase>.+)_frame$"), lambda m: (f"Frame number of the {m['phase']} phase's onset",
                                                            "count")),
    (re.compile(r"^(?P<who>start|response)_position(_(?P<i>\d))?$"),
     lambda m: (f"Position of {_WHOSE[m['who']]} along the adjustment "
                f"{'axis' if not m['i'] else 'direction ' + m['i']} (axis units; 1 = the axis vector)", UNITLESS)),
    (re.compile(r"^(?P<who>.+?)(?P<second>_second)?(?P<opposite>_opposite)?_cone_contrast_(?P<a>[LMS])$"),
     lambda m: (f"{_AXIS[m['a']]} contrast of {_who(m)} against the background (ΔL/L0 etc.)", UNITLESS)),
    (re.compile(r"^(?P<who>.+?)(?P<second>_second)?(?P<opposite>_opposite)?_dkl_(?P<a>lum|lm|s)$"),
     lambda m: (f"DKL {_DKL[m['a']]} coordinate of {_who(m)} (Brainard 1996 scaling: pooled cone contrast 1)",
                UNITLESS)),
    (re.compile(r"^(?P<who>.+?)(?P<second>_second)?(?P<opposite>_opposite)?_device_(?P<c>[rgb])$"),
     lambda m: (f"Device level of the {'red green blue'.split()['rgb'.index(m['c'])]} channel for {_who(m)} "
                "(empty when out of gamut or patterned)", "level")),
]


def _who(m) -> str:
    text = _plain_who(m)
    if m.groupdict().get("opposite"):
        return (f"the opposite extreme of {text} (2·LMS0 − LMS: the other phase of a square or counterphase flicker "
                "or of a grating's bars)")
    return text


def _plain_who(m) -> str:
    who = m["who"]
    if who == "drawn_background":
        return "the background as drawn in this frame (empty on paused frames, which draw nothing)"
    if who.startswith("drawn_"):
        return f"the {who[len('drawn_'):]!r} stimulus as drawn in this frame (empty when the phase does not show it)"
    if who in _WHOSE:
        return _WHOSE[who]
    return f"the {who!r} stimulus's {'second colour (surround, or the other half)' if m['second'] else 'colour'}"


def describe(column: str) -> dict:
    """The sidecar entry of one column: ``{"Description": …, "Units": …}`` (Units only where the column has one).

    Examples
    --------
    >>> describe("surround_second_dkl_lm")["Units"]
    '1'
    >>> describe("response_time_s")["Units"]
    's'
    """
    if column in _FIXED:
        text, units = _FIXED[column]
    else:
        text, units = next((rule(m) for pattern, rule in _PATTERNS if (m := pattern.match(column))),
                           (f"Column {column!r} of the frame log or trial table", None))
    entry = {"Description": text}
    if units:
        entry["Units"] = units
    return entry


def dictionary(columns) -> dict:
    """The data dictionary of a table: ``{column: describe(column)}`` in column order."""
    return {c: describe(c) for c in columns}
