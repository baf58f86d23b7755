"""Numbers for the server-side SVG plots: transfer curves, the gamut in the DKL isoluminant plane, the
MacLeod–Boynton diagram and a preview of a phase's first frame. Pure functions; the templates draw them.

Every plot returns plot coordinates already mapped into a view box (``width`` × ``height`` with a margin), so
the templates only place points, lines and labels.
"""

from __future__ import annotations

import math

import numpy as np

from ..colorimetry.display import CHANNELS
from ..colorimetry.gamut import plane_gamut_polygon
from ..colorimetry.spaces import LMS_to_MacLeod_Boynton
from ..colorimetry.transfer import transfer_from_dict

__all__ = ["transfer_plot", "dkl_plane_plot", "macleod_boynton_plot", "frame_preview", "device_to_css"]

WIDTH, HEIGHT, MARGIN = 320, 240, 44
COLOURS = {"red": "#c0392b", "green": "#1e8449", "blue": "#2e5cb8"}


class _Axes:
    def __init__(self, x_range, y_range, width=WIDTH, height=HEIGHT, margin=MARGIN, log_y=False):
        self.x0, self.x1 = x_range
        self.y0, self.y1 = y_range
        self.width, self.height, self.margin, self.log_y = width, height, margin, log_y

    def x(self, value):
        return self.margin + (value - self.x0) / (self.x1 - self.x0) * (self.width - 1.5 * self.margin)

    def y(self, value):
        if self.log_y:
            value, y0, y1 = math.log10(max(value, 1e-12)), math.log10(self.y0), math.log10(self.y1)
        else:
            y0, y1 = self.y0, self.y1
        return self.height - self.margin - (value - y0) / (y1 - y0) * (self.height - 1.5 * self.margin)

    def frame(self, x_ticks, y_ticks, x_label, y_label):
        return {"width": self.width, "height": self.height, "left": self.margin, "right": self.width - self.margin / 2,
                "top": self.margin / 2, "bottom": self.height - self.margin,
                "x_ticks": [{"at": self.x(t), "label": f"{t:.3g}"} for t in x_ticks],
                "y_ticks": [{"at": self.y(t), "label": f"{t:.3g}"} for t in y_ticks],
                "x_label": x_label, "y_label": y_label}

    def polyline(self, xs, ys):
        return " ".join(f"{self.x(a):.1f},{self.y(b):.1f}" for a, b in zip(xs, ys))


def transfer_plot(profile: dict) -> dict:
    """Measured points and the fitted model per channel (normalised output against level), with residuals."""
    d_max = 2 ** profile["bits"] - 1
    axes = _Axes((0, d_max), (0, 1))
    residual_axes = _Axes((0, d_max), (-0.02, 0.02), height=120)
    series = []
    for channel in CHANNELS:
        entry = profile["transfer"][channel]
        levels = np.array(entry["measured"]["level"], dtype=float)
        luminance = np.array(entry["measured"]["luminance_cd_m2"])
        y = (luminance - luminance[0]) / (luminance[-1] - luminance[0])
        model = transfer_from_dict(entry)
        grid = np.linspace(0, d_max, 129)
        residual = np.clip(model.forward(levels / d_max) - y, -0.02, 0.02)
        series.append({
            "channel": channel, "colour": COLOURS[channel], "model": entry["model"], "rms": entry["rms"],
            "points": [{"x": axes.x(a), "y": axes.y(b), "level": int(a), "value": float(b)} for a, b in zip(levels, y)],
            "curve": axes.polyline(grid, model.forward(grid / d_max)),
            "residuals": [{"x": residual_axes.x(a), "y": residual_axes.y(b)} for a, b in zip(levels, residual)],
        })
    ticks = [0, d_max // 4, d_max // 2, 3 * d_max // 4, d_max]
    return {"frame": axes.frame(ticks, [0, 0.25, 0.5, 0.75, 1], "digital level", "output (fraction of full)"),
            "residual_frame": residual_axes.frame(ticks, [-0.02, 0, 0.02], "digital level", "residual"),
            "residual_zero": residual_axes.y(0), "series": series}


def dkl_plane_plot(background, points=(), segments=(), extent: float | None = None) -> dict:
    """The gamut in the isoluminant plane of DKL space around ``background`` (L−M across, S up).

    ``points``: ``[{"label", "lm", "s", "ok"}]``; ``segments``: ``[{"label", "from": (lm, s), "to": (lm, s),
    "ok"}]`` (adjustment ranges).
    """
    model = background.model
    u = model.M_LMS_inverse @ background.D[:, 1]
    v = model.M_LMS_inverse @ background.D[:, 2]
    polygon = plane_gamut_polygon(background.RGB_0, u, v)
    reach = np.abs(polygon).max(axis=0) if polygon.size else np.array([1.0, 1.0])
    values = [reach[0], reach[1]] + [abs(p["lm"]) for p in points] + [abs(p["s"]) for p in points]
    values += [abs(c) for seg in segments for end in ("from", "to") for c in seg[end]]
    span = extent or 1.1 * max(values)
    axes = _Axes((-span, span), (-span, span), width=300, height=300)
    ticks = [round(t, 3) for t in np.linspace(-span, span, 5)]
    return {
        "frame": axes.frame(ticks, ticks, "L−M (DKL)", "S (DKL)"),
        "origin": {"x": axes.x(0), "y": axes.y(0)},
        "polygon": axes.polyline(polygon[:, 0], polygon[:, 1]) if polygon.size else "",
        "limits": {"lm": background.DKL_limits[1].tolist(), "s": background.DKL_limits[2].tolist()},
        "points": [{**p, "x": axes.x(p["lm"]), "y": axes.y(p["s"])} for p in points],
        "segments": [{**s, "x1": axes.x(s["from"][0]), "y1": axes.y(s["from"][1]), "x2": axes.x(s["to"][0]),
                      "y2": axes.y(s["to"][1])} for s in segments],
    }


def macleod_boynton_plot(model) -> dict:
    """The spectrum locus and the display's triangle of primaries in the MacLeod–Boynton diagram (log s)."""
    obs = model.observer
    locus = LMS_to_MacLeod_Boynton(obs.lms[obs.luminous_efficiency > 1e-4], obs.w_L, obs.w_M, obs.k_S)
    keep = (locus[:, 1] > 1e-4)
    locus = locus[keep]
    wavelengths = obs.wavelengths[obs.luminous_efficiency > 1e-4][keep]
    axes = _Axes((0.45, 1.0), (1e-4, 1.5), log_y=True)
    corners = np.array([model.LMS_black + model.M_LMS[:, i] for i in range(3)])
    triangle = LMS_to_MacLeod_Boynton(corners, obs.w_L, obs.w_M, obs.k_S)
    labels = [w for w in (420, 450, 480, 500, 520, 550, 580, 620, 680) if w in wavelengths]
    return {
        "frame": axes.frame([0.5, 0.6, 0.7, 0.8, 0.9, 1.0], [0.001, 0.01, 0.1, 1], "l = L/(L+M)", "s (log)"),
        "locus": axes.polyline(locus[:, 0], locus[:, 1]),
        "locus_labels": [{"x": axes.x(locus[list(wavelengths).index(w), 0]),
                          "y": axes.y(locus[list(wavelengths).index(w), 1]), "label": f"{w}"} for w in labels],
        "triangle": axes.polyline(np.r_[triangle[:, 0], triangle[0, 0]], np.r_[triangle[:, 1], triangle[0, 1]]),
        "primaries": [{"x": axes.x(l), "y": axes.y(s), "channel": c, "colour": COLOURS[c], "l": l, "s": s}
                      for (l, s, _), c in zip(triangle, CHANNELS)],
    }


def device_to_css(levels, bits: int) -> str:
    """A colour for the preview: device levels shown at 8 bits on this screen (not a calibrated rendering)."""
    if levels is None:
        return "none"
    d_max = 2**bits - 1
    r, g, b = (int(round(v * 255 / d_max)) for v in levels)
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
