"""Audit of what surrounds the trials: the text colour (in gamut, and no flash when a text panel appears or goes),
the response keys (no key with two meanings), and the session's total duration with its pre-adaptation periods,
practice trials and breaks.

The flash test uses the WCAG 2.2 general-flash definition (a pair of opposing changes in relative luminance of
10 % or more of the maximum, the darker state below 0.80): a text panel whose change from the background stays
under 10 % of the display's white cannot make a general flash however often it appears.
"""

from __future__ import annotations

from ..experiment.screens import key_collisions
from .flashes import GENERAL_FLASH_CHANGE, GENERAL_FLASH_DARK_LIMIT

__all__ = ["audit_screens"]


def _relative_luminance(model, RGB) -> float:
    """Luminance above black over the display white's, as the photosensitivity audit measures it."""
    per_RGB = model.observer.w_L * model.M_LMS[0] + model.observer.w_M * model.M_LMS[1]
    return float(RGB @ per_RGB / per_RGB.sum())


def audit_screens(findings, compiled, protocol: dict) -> None:
    """Add findings about the text colour, the keys and the session's duration to ``findings``."""
    data = compiled.data
    text = data.get("text")
    if text is None:
        return
    where = "session.text_luminance"
    if not text["in_gamut"]:
        findings.add("gamut", "fail", where,
                     f"the text colour (DKL luminance {text['dkl_luminance']:+g} from the background) is outside the "
                     "display's gamut; bring it closer to 0", rgb_linear=text["rgb_linear"])
    else:
        background = _relative_luminance(compiled.model, compiled.background.RGB_0)
        shown = _relative_luminance(compiled.model, text["rgb_linear"]) if text["in_gamut"] else background
        change = abs(shown - background)
        if change >= GENERAL_FLASH_CHANGE and min(shown, background) < GENERAL_FLASH_DARK_LIMIT:
            findings.add("screens", "fail", where,
                         f"text panels change relative luminance by {change:.3f} of the display's white when they "
                         f"appear or go (a WCAG 2.2 flash transition is {GENERAL_FLASH_CHANGE:g} or more); bring "
                         "text_luminance closer to 0", change=change)
    for problem in key_collisions(data.get("keys")):
        findings.add("screens", "fail", "response.keys", f"{problem}: give each key one meaning")
    _duration(findings, data)


def _duration(findings, data) -> None:
    refresh = data["display"]["refresh_hz"]
    schedules = data["schedules"]

    def timed(schedule):
        return sum(p.get("frames", 0) for p in schedule)

    pre = data["pre_adaptation"]["frames"]
    breaks = data.get("breaks", [])
    trial_frames = sum(timed(schedules["practice" if t.get("practice") else
                                     "first" if t["schedule"] == "first" else "repeat"]) for t in data["trials"])
    break_frames = sum(b["minimum_frames"] for b in breaks)
    pre_total = pre * (1 + len(breaks))
    total_s = (trial_frames + break_frames + pre_total) / refresh
    practice = sum(1 for t in data["trials"] if t.get("practice"))
    parts = [f"pre-adaptation {pre / refresh:g} s" + (f" × {1 + len(breaks)} (again after each break)" if breaks
                                                     else ""),
             f"{len(data['trials'])} trials" + (f" ({practice} practice)" if practice else "")]
    if breaks:
        minimum = breaks[0]["minimum_frames"] / refresh
        parts.append(f"{len(breaks)} break{'s' if len(breaks) != 1 else ''}"
                     + (f" of at least {minimum:g} s" if minimum > 0 else " (as long as the participant likes)"))
    findings.add("timing", "info", "session",
                 f"the session lasts at least {total_s / 60:.1f} min plus response times and pauses: "
                 + ", ".join(parts),
                 total_s=total_s, pre_adaptation_s=pre_total / refresh, trials_s=trial_frames / refresh,
                 breaks_s=break_frames / refresh)
