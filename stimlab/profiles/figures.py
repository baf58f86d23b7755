"""Figures of a display profile drawn with matplotlib, as SVG or PDF, cached on disk by content.

Three figures: the transfer curves (measured points and the fitted model per channel, with residuals), the gamut in
the DKL isoluminant plane around mid-grey (:mod:`stimlab.profiles.plane_figure`) and the primaries and white in the
MacLeod–Boynton diagram. Each is a JSON-able spec of plain numbers (:func:`display_specs`) drawn by the shared
renderer of :mod:`stimlab.figures`.

References
----------
- MacLeod, D. I. A., & Boynton, R. M. (1979). Chromaticity diagram showing cone excitation by stimuli of equal
  luminance. JOSA, 69, 1183–1186.
- CIE 170-2:2015, the MacLeod–Boynton scaling of the Stockman & Sharpe fundamentals.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from ..colorimetry.display import CHANNELS, DisplayModel
from ..colorimetry.spaces import LMS_to_MacLeod_Boynton
from ..colorimetry.stimulus import Background
from ..colorimetry.transfer import transfer_from_dict
from ..figures import new_axes, plain
from ..figures import render as render_spec
from .plane_figure import draw_plane, plane_spec
from .summary import MID_GREY

__all__ = ["display_specs", "transfer_spec", "macleod_boynton_spec", "render", "CHANNEL_COLOURS",
           "FIGURE_VERSION", "LOCUS_STEP_NM"]

FIGURE_VERSION = 1  # part of the cache key: raise it when the drawing code changes
CHANNEL_COLOURS = {"red": "#C0392B", "green": "#1E8449", "blue": "#2E5CB8"}
LOCUS_STEP_NM = 20
"""The spectrum locus is labelled every this many nanometres (labels closer than a few points are merged)."""
LABEL_CHAR_PT, LABEL_HEIGHT_PT, LABEL_OFFSET_PT = 4.4, 8.0, 7.0  # 7-point digits, their line, their gap
LINEAR_BELOW = 1e-3
"""s below this is drawn on a linear scale (the long-wavelength locus has s = 0), above it on a log scale."""


def transfer_spec(profile: dict) -> dict:
    """Measured luminance, the fitted model and its residuals per channel, as plain numbers.

    Returns
    -------
    dict
        ``kind: "transfer"``, ``bits`` and per channel: the model's name and RMS residual, the measured levels and
        luminance (cd/m²), the model's luminance on a grid of levels and the residuals (model − measured, as a
        fraction of the channel's full output above black).
    """
    bits = int(profile["bits"])
    d_max = 2**bits - 1
    grid = np.unique(np.round(np.linspace(0, d_max, 129)))
    channels = []
    for channel in CHANNELS:
        entry = profile["transfer"][channel]
        levels = np.asarray(entry["measured"]["level"], dtype=float)
        luminance = np.asarray(entry["measured"]["luminance_cd_m2"], dtype=float)
        black, span = luminance[0], luminance[-1] - luminance[0]
        model = transfer_from_dict(entry)
        channels.append({
            "channel": channel, "model": entry["model"], "rms": float(entry["rms"]),
            "level": levels.astype(int).tolist(), "luminance_cd_m2": luminance.round(6).tolist(),
            "grid": grid.astype(int).tolist(),
            "fit_cd_m2": (black + span * model.forward(grid / d_max)).round(6).tolist(),
            "residual": (model.forward(levels / d_max) - (luminance - black) / span).round(7).tolist(),
        })
    return {"kind": "transfer", "bits": bits, "channels": channels}


def _level_ticks(bits: int) -> list[int]:
    """0, quarter, half, three quarters and full drive, on powers of two where they fall: 0 256 512 768 1023."""
    d_max = 2**bits - 1
    return [0, 2 ** (bits - 2), 2 ** (bits - 1), 3 * 2 ** (bits - 2), d_max] if bits >= 2 else [0, d_max]


def _draw_transfer(spec: dict, figure) -> None:
    top, bottom = figure.subplots(2, 1, sharex=True, height_ratios=[3, 1.3])
    for ax in (top, bottom):
        plain(ax)
        ax.spines[["top", "right"]].set_visible(False)
    for entry in spec["channels"]:
        colour = CHANNEL_COLOURS[entry["channel"]]
        top.plot(entry["grid"], entry["fit_cd_m2"], color=colour, lw=1.4,
                 label=f"{entry['channel']}: {entry['model']} fit, RMS {entry['rms']:.4f}")
        top.plot(entry["level"], entry["luminance_cd_m2"], "o", color=colour, ms=3.2, mec="white", mew=0.4)
        bottom.plot(entry["level"], entry["residual"], "o-", color=colour, ms=3, lw=0.7, label=entry["channel"])
    top.plot([], [], "o", color="0.4", ms=3.2, label="measured (points)")
    d_max = 2 ** spec["bits"] - 1
    top.set(ylabel="luminance (cd/m²)", xlim=(0, d_max), ylim=(0, None),
            title=f"Transfer curves, {spec['bits']}-bit levels")
    top.legend(fontsize=7.5, frameon=False, loc="upper left")
    bottom.axhline(0, color="0.6", lw=0.8, zorder=0)
    bottom.set(xlabel=f"digital level (0–{d_max})", ylabel="residual\n(fraction of full)")
    bottom.set_xticks(_level_ticks(spec["bits"]))


def macleod_boynton_spec(model: DisplayModel) -> dict:
    """The spectrum locus, its wavelength marks and the display's primaries and white in MacLeod–Boynton (l, s).

    The locus is the observer's own (:attr:`stimlab.colorimetry.display.DisplayModel.observer`) over its whole
    wavelength range; marks every :data:`LOCUS_STEP_NM` nm. The primaries include the display's black level
    (each channel at full drive, the others at 0), as the display shows them.
    """
    obs = model.observer
    wavelengths = np.asarray(obs.wavelengths, dtype=float)
    locus = LMS_to_MacLeod_Boynton(obs.lms, obs.w_L, obs.w_M, obs.k_S)[:, :2]
    step = wavelengths % 2 == 0
    first = int(np.ceil(wavelengths[0] / LOCUS_STEP_NM) * LOCUS_STEP_NM)
    marks = [w for w in range(first, int(wavelengths[-1]) + 1, LOCUS_STEP_NM) if w in wavelengths]
    corners = np.array([model.LMS_black + model.M_LMS[:, i] for i in range(3)])
    primaries = LMS_to_MacLeod_Boynton(corners, obs.w_L, obs.w_M, obs.k_S)[:, :2]
    white = LMS_to_MacLeod_Boynton(model.LMS_black + model.M_LMS.sum(axis=1), obs.w_L, obs.w_M, obs.k_S)[:2]
    at = {float(w): i for i, w in enumerate(wavelengths)}
    return {
        "kind": "macleod_boynton", "observer": obs.name,
        "locus": {"nm": wavelengths[step].round(1).tolist(), "l": locus[step, 0].round(6).tolist(),
                  "s": locus[step, 1].round(7).tolist()},
        "marks": [{"nm": w, "l": round(float(locus[at[w], 0]), 6), "s": round(float(locus[at[w], 1]), 7)}
                  for w in marks],
        "primaries": [{"channel": c, "l": float(l), "s": float(s)} for c, (l, s) in zip(CHANNELS, primaries)],
        "white": {"l": float(white[0]), "s": float(white[1])},
    }


def _label_box(ax, group: list[dict], centre) -> tuple[np.ndarray, np.ndarray, str, str, str]:
    """Where a locus label goes, in points on the page: the box's centre and half-size, its text and alignment."""
    to_points = ax.transData + ax.figure.dpi_scale_trans.inverted()
    mark = group[0]
    place = to_points.transform((mark["l"], mark["s"])) * 72
    away = place - to_points.transform(centre) * 72
    away = away / (np.hypot(*away) or 1.0)
    text = f"{mark['nm']}" if len(group) == 1 else f"{mark['nm']}–{group[-1]['nm']}"
    ha = "left" if away[0] > 0.3 else "right" if away[0] < -0.3 else "center"
    va = "bottom" if away[1] > 0.3 else "top" if away[1] < -0.3 else "center"
    half = np.array([LABEL_CHAR_PT * len(text) / 2, LABEL_HEIGHT_PT / 2])
    box = place + LABEL_OFFSET_PT * away + half * [{"left": 1, "right": -1, "center": 0}[ha],
                                                   {"bottom": 1, "top": -1, "center": 0}[va]]
    return box, half, text, ha, va


def _locus_labels(ax, marks: list[dict], centre) -> list[tuple[list[dict], tuple]]:
    """Locus marks grouped so that no two labels overlap: a mark whose label would touch the last one joins it
    (``640–820``)."""
    groups: list[list[dict]] = []
    for mark in marks:
        if groups:
            box, half, *_ = _label_box(ax, [mark], centre)
            last, last_half, *_ = _label_box(ax, groups[-1], centre)
            if np.all(np.abs(box - last) < half + last_half + 1.5):
                groups[-1].append(mark)
                continue
        groups.append([mark])
    return [(group, _label_box(ax, group, centre)) for group in groups]


def _draw_macleod_boynton(spec: dict, figure) -> None:
    ax = new_axes(figure)
    ax.set_yscale("symlog", linthresh=LINEAR_BELOW, linscale=0.6)
    ax.set(xlim=(0.48, 1.0), ylim=(-0.0006, 1.6))
    ax.set_yticks([0, 0.001, 0.01, 0.1, 1], ["0", "0.001", "0.01", "0.1", "1"])
    ax.set(xlabel="l = L / (L + M)", ylabel=f"s = S / (L + M)   (log above {LINEAR_BELOW:g}, linear below)")
    ax.set_title(f"MacLeod–Boynton diagram, {spec['observer']}", fontsize=9)
    locus = spec["locus"]
    ax.plot(locus["l"], locus["s"], color="0.15", lw=1.2, label="spectrum locus (nm)")
    corners = [(p["l"], p["s"]) for p in spec["primaries"]]
    # Mixtures lie on straight lines in linear (l, s); the log scale bends them, so each edge is drawn as points.
    edge = np.linspace(0, 1, 60)[:, None]
    outline = np.concatenate([np.array(a) * (1 - edge) + np.array(b) * edge
                              for a, b in zip(corners, corners[1:] + corners[:1])])
    ax.fill(outline[:, 0], outline[:, 1], facecolor="0.88", edgecolor="0.4", lw=0.9, label="display gamut")
    figure.draw_without_rendering()  # lay the figure out first, so that label spacing is measured on the page
    centre = (spec["white"]["l"], spec["white"]["s"])
    for group, (box, half, text, ha, va) in _locus_labels(ax, spec["marks"], centre):
        ax.plot([m["l"] for m in group], [m["s"] for m in group], "o", color="0.15", ms=2.2)
        to_points = ax.transData + ax.figure.dpi_scale_trans.inverted()
        offset = box - half * [{"left": 1, "right": -1, "center": 0}[ha], {"bottom": 1, "top": -1, "center": 0}[va]]
        offset = offset - to_points.transform((group[0]["l"], group[0]["s"])) * 72
        ax.annotate(text, (group[0]["l"], group[0]["s"]), xytext=offset, textcoords="offset points", fontsize=7,
                    color="0.2", ha=ha, va=va)
    for primary in spec["primaries"]:
        ax.plot(primary["l"], primary["s"], "o", color=CHANNEL_COLOURS[primary["channel"]], ms=7, mec="white",
                label=f"{primary['channel']} primary (l {primary['l']:.4f}, s {primary['s']:.4f})")
    ax.plot(spec["white"]["l"], spec["white"]["s"], "s", color="white", mec="black", ms=6,
            label=f"white, all channels full (l {spec['white']['l']:.4f}, s {spec['white']['s']:.4f})")
    ax.legend(fontsize=7, frameon=False, loc="upper right")


BUILDERS = {"transfer": (_draw_transfer, (5.6, 4.6)), "gamut_plane": (draw_plane, (5.8, 5.0)),
            "macleod_boynton": (_draw_macleod_boynton, (5.6, 4.6))}


def display_specs(profile: dict) -> dict[str, dict]:
    """The figures of a display profile: name → spec (``transfer``, ``gamut``, ``macleod_boynton``)."""
    model = DisplayModel(profile)
    background = Background(model, MID_GREY)
    return {"transfer": transfer_spec(profile),
            "gamut": plane_spec(background, title="Gamut in the DKL isoluminant plane through mid-grey"),
            "macleod_boynton": macleod_boynton_spec(model)}


def render(spec: dict, fmt: str, cache_dir: Path | None = None) -> bytes:
    """The figure of a display spec (or a gamut-plane spec) as SVG or PDF bytes, cached in ``cache_dir``."""
    return render_spec(spec, fmt, BUILDERS, FIGURE_VERSION, cache_dir)
