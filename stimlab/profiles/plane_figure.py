"""The gamut where the DKL isoluminant plane cuts a display's RGB cube, with stimuli and adjustment ranges on it.

:func:`plane_spec` gives the numbers (JSON-able), :func:`draw_plane` draws them with matplotlib. The view is scaled
to the gamut, never to one far-out stimulus: it spans the gamut and what lies within :data:`VIEW_LIMIT` times the
gamut's extent, and anything beyond is marked by an arrow at the edge and named with its coordinates.
"""

from __future__ import annotations

import textwrap

import numpy as np

from ..colorimetry.gamut import plane_gamut_polygon
from ..figures import PALETTE, new_axes

__all__ = ["plane_spec", "plane_view", "draw_plane", "pointing", "VIEW_LIMIT", "MAX_MARKS", "DRAWING_STYLE"]

VIEW_LIMIT = 1.2
"""The widest view, as a multiple of the gamut polygon's extent along each axis."""
MARGIN = 1.08
"""Room around the gamut and the stimuli inside the view, as a multiple of their extent."""
MAX_MARKS = 30
"""Stimuli and ranges drawn at most (each numbered in the legend); the rest are counted."""
AXES_HEIGHT_IN = 3.8
"""About the height of the plot area in a figure of the default size, inches."""
AROUND_AXES_IN = 4.0
"""Width of the axis labels and the legend beside the plot area, inches."""
IN_GAMUT, OUT_OF_GAMUT, RANGE = PALETTE[0], PALETTE[1], PALETTE[2]
DRAWING_STYLE = 2
"""Part of every spec, so that a figure kept from an older way of drawing it is drawn again."""
ON_AXIS = 0.04
"""A mark this close to an axis, as a fraction of the view's half-width across it, counts as on that axis."""
ARROWS = (r"$\rightarrow$", r"$\nearrow$", r"$\uparrow$", r"$\nwarrow$", r"$\leftarrow$", r"$\swarrow$",
          r"$\downarrow$", r"$\searrow$")
"""Arrows for the eight directions, counter-clockwise from the right (matplotlib mathtext)."""


def _groups(entries, key) -> list[dict]:
    """Entries at the same place merged into one, their conditions listed together."""
    merged: dict[tuple, dict] = {}
    for entry in entries:
        place = key(entry)
        if place in merged:
            merged[place]["conditions"].append(entry.get("condition"))
            merged[place]["ok"] = merged[place]["ok"] and entry["ok"]
        else:
            merged[place] = {**entry, "conditions": [entry.get("condition")]}
    result = []
    for entry in merged.values():
        conditions = [c for c in dict.fromkeys(entry.pop("conditions")) if c]
        entry.pop("condition", None)
        where = "; ".join(conditions) if len(conditions) <= 2 else f"{len(conditions)} conditions"
        entry["label"] = f"{entry['name']} ({where})" if where else entry["name"]
        result.append(entry)
    return result


def plane_view(polygon, points=(), segments=()) -> dict:
    """The half-widths of the view (L−M, S) and which marks lie outside it.

    Parameters
    ----------
    polygon
        The gamut polygon's vertices (L−M, S), shape (K, 2).
    points
        ``[{"lm", "s", ...}]``.
    segments
        ``[{"from": (lm, s), "to": (lm, s), ...}]``.

    Returns
    -------
    dict
        ``lm`` and ``s``: half-widths of the view, between :data:`MARGIN` and :data:`VIEW_LIMIT` times the gamut's
        extent; ``outside``: indices of the points outside the view; ``beyond``: indices of the segments that run
        past it.
    """
    polygon = np.asarray(polygon, dtype=float).reshape(-1, 2)
    gamut = np.abs(polygon).max(axis=0) if len(polygon) else np.array([1.0, 1.0])
    gamut = np.maximum(gamut, 1e-6)
    window = VIEW_LIMIT * gamut
    places = [np.array([p["lm"], p["s"]]) for p in points]
    places += [np.array(end) for seg in segments for end in (seg["from"], seg["to"])]
    inside = [np.abs(p) for p in places if np.all(np.abs(p) <= window)]
    reach = np.max([gamut, *inside], axis=0)
    half = np.minimum(window, MARGIN * reach)
    beyond = lambda p: bool(np.any(np.abs(np.asarray(p, dtype=float)) > half + 1e-12))  # noqa: E731
    return {"lm": float(half[0]), "s": float(half[1]),
            "outside": [i for i, p in enumerate(points) if beyond((p["lm"], p["s"]))],
            "beyond": [i for i, s in enumerate(segments) if beyond(s["from"]) or beyond(s["to"])]}


def plane_spec(background, points=(), segments=(), title: str = "", headroom: bool = True,
               equal_aspect: bool = True) -> dict:
    """The numbers of a gamut-plane figure around ``background``.

    Parameters
    ----------
    background
        A :class:`~stimlab.colorimetry.stimulus.Background`; the plane is its DKL isoluminant plane, in pooled cone
        contrast (L−M across, S up).
    points
        Stimuli: ``[{"name", "condition", "lm", "s", "ok"}]`` (``ok``: the display can show it). Stimuli at the
        same place are merged, their conditions listed.
    segments
        Adjustment or staircase ranges: ``[{"name", "condition", "from": (lm, s), "to": (lm, s), "ok"}]``.
    title
        The figure's title.
    headroom
        Mark the gamut's limits along the L−M and S axes.
    equal_aspect
        One unit as long across as up (true shapes and angles); ``False`` scales each axis to the view, which
        spreads stimuli out when the gamut is far narrower along L−M than along S (as in pooled cone contrast).

    Returns
    -------
    dict
        ``kind: "gamut_plane"``, the polygon, the headroom limits, the merged points and segments (at most
        :data:`MAX_MARKS` in all, with ``more`` counting the rest) and the :func:`plane_view`.
    """
    model = background.model
    u = model.M_LMS_inverse @ background.D[:, 1]
    v = model.M_LMS_inverse @ background.D[:, 2]
    polygon = plane_gamut_polygon(background.RGB_0, u, v)
    points = _groups(points, lambda p: (round(p["lm"], 6), round(p["s"], 6), p["name"]))
    segments = _groups(segments, lambda s: (*np.round(s["from"], 6), *np.round(s["to"], 6), s["name"]))
    total = len(points) + len(segments)
    points = points[:MAX_MARKS]
    segments = segments[:max(0, MAX_MARKS - len(points))]
    return {
        "kind": "gamut_plane", "style": DRAWING_STYLE, "title": title, "headroom": headroom, "equal_aspect": equal_aspect,
        "background_rgb": [round(float(c), 6) for c in background.RGB_0],
        "polygon": np.round(polygon, 6).tolist(),
        "limits": {"lm": np.round(background.DKL_limits[1], 6).tolist(),
                   "s": np.round(background.DKL_limits[2], 6).tolist()},
        "points": [{"label": p["label"], "lm": float(p["lm"]), "s": float(p["s"]), "ok": bool(p["ok"])}
                   for p in points],
        "segments": [{"label": s["label"], "from": [float(c) for c in s["from"]], "to": [float(c) for c in s["to"]],
                      "ok": bool(s["ok"])} for s in segments],
        "more": total - len(points) - len(segments),
        "view": plane_view(polygon, points, segments),
    }


def _on_screen(lm: float, s: float, view: dict) -> np.ndarray:
    """The direction from the background towards (lm, s) as drawn (each axis scaled to its half-width), unit length."""
    direction = np.array([lm / view["lm"], s / view["s"]])
    length = np.hypot(*direction)
    return direction / length if length else np.array([1.0, 0.0])


def _edge(lm: float, s: float, view: dict) -> tuple[float, float]:
    """Where the ray from the background towards (lm, s) leaves the view, a little inside it."""
    scale = min(view["lm"] / abs(lm) if lm else np.inf, view["s"] / abs(s) if s else np.inf) * 0.96
    return lm * scale, s * scale


def pointing(lm: float, s: float, view: dict) -> str:
    """The arrow (one of :data:`ARROWS`) that points from the background the way (lm, s) lies, as drawn."""
    x, y = _on_screen(lm, s, view)
    return ARROWS[int(np.round(np.arctan2(y, x) / (np.pi / 4))) % 8]


def _label_place(lm: float, s: float, view: dict) -> dict:
    """Where a mark's number goes: above a mark on the L−M axis, right of one on the S axis (both clear of the axis
    line, the dashed headroom and any range drawn along it), else outward, away from the background."""
    near_lm_axis = abs(s) <= ON_AXIS * view["s"]
    near_s_axis = abs(lm) <= ON_AXIS * view["lm"]
    if near_lm_axis and not near_s_axis:
        return {"xytext": (0, 5), "ha": "center", "va": "bottom"}
    if near_s_axis and not near_lm_axis:
        return {"xytext": (5, 0), "ha": "left", "va": "center"}
    x, y = _on_screen(lm, s, view) if (lm or s) else (1.0, 1.0)
    return {"xytext": (5 * np.sign(x), 4 * np.sign(y)), "ha": "left" if x >= 0 else "right",
            "va": "bottom" if y >= 0 else "top"}


def _arrow_label_place(direction) -> dict:
    """Where the number of an out-of-view mark goes: beside the middle of its arrow, below a level arrow and left of
    an upright one, so clear of the axis line and of the numbers :func:`_label_place` puts above and to the right."""
    dx, dy = direction
    middle = (-13 * dx, -13 * dy)
    if abs(dy) < 0.38:
        return {"xytext": (middle[0], middle[1] - 5), "ha": "center", "va": "top"}
    if abs(dx) < 0.38:
        return {"xytext": (middle[0] - 5, middle[1]), "ha": "right", "va": "center"}
    across = np.array([dy, -dx]) if dy * dx > 0 else np.array([-dy, dx])  # the side below the arrow
    return {"xytext": (middle[0] + 6 * across[0], middle[1] + 6 * across[1]), "ha": "center", "va": "top"}


def _number(value: float, form: str = ".3g") -> str:
    """A number as the axes write it, with a true minus sign; rounding noise (6.9e−17) and −0 read as 0."""
    value = round(float(value), 6)
    if value == 0:
        value = 0.0  # no "−0"
    return format(value, form).replace("-", "−")


def _wrap(text: str) -> str:
    return textwrap.fill(text, 44, subsequent_indent="   ")


def draw_plane(spec: dict, figure) -> None:
    """Draw a :func:`plane_spec` on ``figure``: gamut, headroom, numbered stimuli and ranges, legend beside."""
    ax = new_axes(figure)
    view = spec["view"]
    polygon = np.array(spec["polygon"]).reshape(-1, 2)
    if len(polygon):
        ax.fill(polygon[:, 0], polygon[:, 1], facecolor="0.9", edgecolor="0.35", lw=1.2,
                label="gamut (what the display can show)")
    ax.axhline(0, color="0.75", lw=0.7, zorder=0)
    ax.axvline(0, color="0.75", lw=0.7, zorder=0)
    ax.plot([0], [0], marker="+", color="black", ms=9, ls="none",
            label="background (linear RGB {:.2f}, {:.2f}, {:.2f})".format(*spec["background_rgb"]))
    if spec["headroom"]:
        (lm_low, lm_high), (s_low, s_high) = spec["limits"]["lm"], spec["limits"]["s"]
        ax.plot([lm_low, lm_high], [0, 0], color="0.45", lw=1, ls="--")
        ax.plot([0, 0], [s_low, s_high], color="0.45", lw=1, ls="--")
        ax.plot([lm_low, lm_high, 0, 0], [0, 0, s_low, s_high], "D", color="0.3", ms=4,
                label=_wrap(f"headroom along the axes: L−M {_number(lm_low, '+.3f')} to "
                            f"{_number(lm_high, '+.3f')}, S {_number(s_low, '+.3f')} to {_number(s_high, '+.3f')}"))
    number = 0
    for index, seg in enumerate(spec["segments"]):
        number += 1
        (x0, y0), (x1, y1) = seg["from"], seg["to"]
        colour = RANGE if seg["ok"] else OUT_OF_GAMUT
        past = " (runs past the view)" if index in view["beyond"] else ""
        ax.plot([x0, x1], [y0, y1], color=colour, lw=3, alpha=0.7, solid_capstyle="butt",
                ls="-" if seg["ok"] else (0, (3, 1.5)),
                label=_wrap(f"{number}  {seg['label']}{'' if seg['ok'] else ', out of gamut'}{past}"))
        # numbered at the far end: ranges are often centred on the background, where the stimuli crowd
        end = (x1, y1) if np.hypot(x1, y1) >= np.hypot(x0, y0) else (x0, y0)
        end = _edge(*end, view) if past else end
        ax.annotate(str(number), end, textcoords="offset points", fontsize=7, color=colour, **_label_place(*end, view))
    for index, point in enumerate(spec["points"]):
        number += 1
        colour = IN_GAMUT if point["ok"] else OUT_OF_GAMUT
        marker = "o" if point["ok"] else "X"
        status = "" if point["ok"] else ", out of gamut"
        if index in view["outside"]:
            x, y = _edge(point["lm"], point["s"], view)
            direction = _on_screen(point["lm"], point["s"], view)
            ax.annotate("", xy=(x, y), xytext=(-26 * direction[0], -26 * direction[1]), textcoords="offset points",
                        xycoords="data", arrowprops={"arrowstyle": "-|>", "color": colour, "lw": 1.6})
            ax.annotate(str(number), (x, y), textcoords="offset points", fontsize=7, color=colour,
                        **_arrow_label_place(direction))
            ax.plot([], [], marker=pointing(point["lm"], point["s"], view), ms=9, ls="none", color=colour,
                    label=_wrap(f"{number}  {point['label']}{status}: outside the view, at L−M {_number(point['lm'])}, "
                                f"S {_number(point['s'])}"))
        else:
            ax.plot([point["lm"]], [point["s"]], marker=marker, ms=6, ls="none", color=colour, mec="white", mew=0.6,
                    label=_wrap(f"{number}  {point['label']}{status}"))
            ax.annotate(str(number), (point["lm"], point["s"]), textcoords="offset points", fontsize=7,
                        color=colour, **_label_place(point["lm"], point["s"], view))
    if spec["more"]:
        ax.plot([], [], ls="none", label=f"and {spec['more']} more not drawn")
    ax.set(xlim=(-view["lm"], view["lm"]), ylim=(-view["s"], view["s"]),
           aspect="equal" if spec.get("equal_aspect", True) else "auto",
           xlabel="DKL L−M (pooled cone contrast)", ylabel="DKL S (pooled cone contrast)")
    # the title heads the legend: above a narrow plot it would wrap into a column or run over the legend
    figure.legend(fontsize=7, frameon=False, loc="outside right upper", alignment="left", title_fontsize=8.5,
                  title=textwrap.fill(spec["title"] or "Gamut in the DKL isoluminant plane", 44,
                                      break_on_hyphens=False))
    if spec.get("equal_aspect", True):  # a figure as wide as the plane needs, not a narrow plot in white space
        axes_width = float(np.clip(AXES_HEIGHT_IN * view["lm"] / view["s"], 1.0, 4.5))
        figure.set_size_inches(AROUND_AXES_IN + axes_width, figure.get_size_inches()[1])
