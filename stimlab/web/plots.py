"""Numbers for the live editor's preview of each phase's first frame, drawn as SVG by ``templates/_svg.html``.

The display's and the editor's plots are matplotlib figures (:mod:`stimlab.profiles.figures`).
"""

from __future__ import annotations

__all__ = ["frame_preview", "device_to_css"]

def device_to_css(device, bits: int) -> str:
    """A colour for the preview: device levels shown at 8 bits on this screen (not a calibrated rendering)."""
    if device is None:
        return "none"
    d_max = 2**bits - 1
    r, g, b = (int(round(v * 255 / d_max)) for v in device)
    return f"#{r:02x}{g:02x}{b:02x}"


def frame_preview(data: dict, condition: int, schedule: str = "first", scale: float = 0.25) -> list[dict]:
    """The first frame of each phase: the background and each stimulus with its real device levels.

    Returns one entry per phase with SVG shapes in screen pixels times ``scale``; out-of-gamut stimuli are drawn
    as hatched outlines (never as a clipped colour).
    """
    width, height = data["display"]["size_px"]
    bits = data["display"]["bits"]
    background = device_to_css(data["background"]["device"], bits)
    stimuli = data["conditions"][condition]["stimuli"]
    phases = []
    for phase in data["schedules"][schedule]:
        shapes = []
        for name in phase["stimuli"]:
            stimulus = stimuli[name]
            g = stimulus["geometry"]
            cx = (width / 2 + g["position_px"][0]) * scale
            cy = (height / 2 - g["position_px"][1]) * scale
            fill = device_to_css(stimulus["colour"]["device"], bits)
            second = device_to_css(stimulus.get("second_colour", {}).get("device"), bits) \
                if "second_colour" in stimulus else None
            size = (g.get("size_px") or 4 * g.get("sigma_px", 0)) * scale
            shapes.append({"name": name, "shape": g["shape"], "cx": cx, "cy": cy, "r": size / 2, "fill": fill,
                           "second": second, "inner_r": (g.get("inner_size_px") or 0) * scale / 2,
                           "outer_r": (g.get("surround_size_px") or 0) * scale / 2,
                           "ok": stimulus["colour"]["in_gamut"] and
                           stimulus.get("second_colour", {"in_gamut": True})["in_gamut"]})
        fixation = data.get("fixation")
        phases.append({"phase": phase["phase"], "frames": phase.get("frames"), "shapes": shapes,
                       "width": width * scale, "height": height * scale, "background": background,
                       "fixation": fixation and phase.get("fixation", True) and {
                           "x": width * scale / 2, "y": height * scale / 2,
                           "size": max(3.0, fixation["size_px"] * scale), "shape": fixation["shape"],
                           "fill": device_to_css(fixation["device"], bits)}})
    return phases
