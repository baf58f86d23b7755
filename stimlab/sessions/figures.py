"""Figures of a session or a study drawn with matplotlib, as SVG or PDF, cached on disk by content.

Each figure is built from a small JSON-able *spec* (the numbers it shows, taken from the session or study summary)
and drawn, cached and stamped by the shared :mod:`stimlab.figures`: the same numbers are never drawn twice, and new
data make a new figure.
"""

from __future__ import annotations

import textwrap
from pathlib import Path

import numpy as np

from ..experiment.timecourse import DROPPED_FRAME_PERIODS
from ..figures import FORMATS, PALETTE, new_axes
from ..figures import render as render_spec

__all__ = ["session_specs", "study_specs", "render", "FORMATS", "FIGURE_VERSION"]

FIGURE_VERSION = 4  # part of the cache key: raise it when the drawing code changes
_axes = new_axes


def _vectors(spec: dict, figure) -> None:
    ax = _axes(figure)
    span = max([abs(v) for c in spec["conditions"] for v in c["adapt"] + c["mean"] +
                [p for point in c["points"] for p in point]] + [1e-4]) * 1.2
    for i, condition in enumerate(spec["conditions"]):
        colour = PALETTE[i % len(PALETTE)]
        ax.annotate("", xy=condition["adapt"], xytext=(0, 0),
                    arrowprops={"arrowstyle": "-|>", "color": colour, "linestyle": "--", "alpha": 0.6, "lw": 1.2})
        ax.annotate("", xy=condition["mean"], xytext=(0, 0),
                    arrowprops={"arrowstyle": "-|>", "color": colour, "lw": 2})
        points = np.array(condition["points"])
        ax.scatter(points[:, 0], points[:, 1], s=12, color=colour, alpha=0.45, linewidths=0,
                   label=f"{condition['label']}")
    ax.plot([], [], color="0.4", linestyle="--", label=spec["source_name"])
    ax.plot([], [], color="0.4", lw=2, label=f"mean {spec['response_name']}")
    ax.axhline(0, color="0.85", lw=0.8, zorder=0)
    ax.axvline(0, color="0.85", lw=0.8, zorder=0)
    ax.set(xlim=(-span, span), ylim=(-span, span), aspect="equal", xlabel="DKL L−M", ylabel="DKL S",
           title=f"{spec['source_name'].capitalize()} and {spec['response_name']} vectors")
    # Below the plot, a column per entry pair: condition labels are long and must not cover the arrows or axes.
    ax.legend(fontsize=7, frameon=False, loc="upper center", bbox_to_anchor=(0.5, -0.14), ncol=2)


def _intervals(spec: dict, figure) -> None:
    ax = _axes(figure)
    edges = np.array(spec["edges_ms"])
    counts = np.array(spec["counts"])
    limit = DROPPED_FRAME_PERIODS * spec["period_ms"]
    # A log count axis: a handful of dropped frames among thousands of good ones stays visible, and each bin
    # beyond the limit is drawn in the warning colour with its count written above it.
    late = edges[:-1] >= limit - 1e-9
    ax.bar(edges[:-1][~late], counts[~late], width=np.diff(edges)[~late], align="edge", color=PALETTE[0],
           edgecolor="white", lw=0.5, label="frames")
    ax.bar(edges[:-1][late], counts[late], width=np.diff(edges)[late], align="edge", color=PALETTE[1],
           edgecolor="white", lw=0.5, label=f"dropped frames ({int(counts[late].sum())})")
    for left, width, count in zip(edges[:-1][late], np.diff(edges)[late], counts[late]):
        if count:
            ax.annotate(str(int(count)), (left + width / 2, count), ha="center", va="bottom", fontsize=7,
                        color=PALETTE[1])
    ax.axvline(limit, color=PALETTE[1], linestyle="--",
               label=f"dropped-frame limit ({DROPPED_FRAME_PERIODS:g} × {spec['period_ms']:.2f} ms)")
    if counts.sum() > 0:  # an empty log has nothing to scale
        from matplotlib.ticker import FuncFormatter

        ax.set_yscale("log")
        ax.set_ylim(0.7, max(2.0, counts.max() * 3))
        ax.yaxis.set_major_formatter(FuncFormatter(lambda value, _: f"{value:g}"))  # 1, 10, 100: plain numbers
    ax.set(xlabel="frame interval (ms)", ylabel="frames (log scale)", title="Frame intervals")
    ax.legend(fontsize=8, frameon=False)


def _psychometric(spec: dict, figure) -> None:
    from .psychometric import weibull

    ax = _axes(figure)
    for i, condition in enumerate(spec["conditions"]):
        colour = PALETTE[i % len(PALETTE)]
        levels = np.array(condition["levels"], dtype=float)
        ax.scatter(levels[:, 0], levels[:, 1] / levels[:, 2], s=12 + 8 * levels[:, 2], color=colour, alpha=0.7,
                   label=f"{condition['label']}: data (area ∝ trials)")
        if "threshold" in condition:
            x = np.linspace(0, levels[:, 0].max() * 1.1, 200)
            ax.plot(x, weibull(x, condition["threshold"], condition["slope"], condition["guess"], condition["lapse"]),
                    color=colour, label=f"{condition['label']}: fit, threshold {condition['threshold']:.4f}")
            ax.axvspan(*condition["ci95"], color=colour, alpha=0.12, label="95 % interval (bootstrap)")
    ax.set(xlabel="stimulus strength (axis units)", ylabel="proportion correct" if spec["task"] == "2afc" else
           "proportion 'yes'", ylim=(0, 1.02), title="Psychometric function (maximum likelihood)")
    ax.legend(fontsize=7, frameon=False, loc="lower right")


def _study(spec: dict, figure) -> None:
    ax = _axes(figure)
    labels = spec["conditions"]
    for row_index, row in enumerate(spec["participants"]):
        xs = [i + (row_index - (len(spec["participants"]) - 1) / 2) * 0.04 for i in range(len(labels))]
        ax.scatter(xs, row["values"], s=14, color="0.6", label="participants" if row_index == 0 else None)
    means = [p["mean"] if p else np.nan for p in spec["pooled"]]
    low = [p["mean"] - p["ci95"][0] if p and p["ci95"] else 0 for p in spec["pooled"]]
    high = [p["ci95"][1] - p["mean"] if p and p["ci95"] else 0 for p in spec["pooled"]]
    ax.errorbar(range(len(labels)), means, yerr=[low, high], fmt="o", color="black", capsize=4,
                label="mean over participants, 95 % CI")
    ax.axhline(0, color="0.85", lw=0.8, zorder=0)
    ax.set_xticks(range(len(labels)), labels, rotation=20, ha="right", fontsize=8)
    ax.set_xlim(-0.5, len(labels) - 0.5)  # one condition too: participants stay beside their mean
    ax.set_ylabel(textwrap.fill(spec["measure"], 34))
    ax.set_title(textwrap.fill(spec["title"], 60), fontsize=9)
    ax.legend(fontsize=8, frameon=False)


BUILDERS = {"vectors": (_vectors, (6.4, 4.4)), "intervals": (_intervals, (5.6, 3.4)),
            "psychometric": (_psychometric, (5.6, 4.0)), "study": (_study, (6.0, 4.0))}


def session_specs(summary: dict) -> dict[str, dict]:
    """The figures of a session summary (:func:`stimlab.sessions.summary.session_summary`): name → spec."""
    specs = {"intervals": {"kind": "intervals", "edges_ms": summary["timing"]["histogram"]["edges_ms"],
                           "counts": summary["timing"]["histogram"]["counts"],
                           "period_ms": summary["timing"]["period_ms"]}}
    induction = summary["adaptation_model"] == "induction"
    vectors = [{"label": c["label"], "adapt": c["adapt_dkl"], "mean": c["response_dkl_mean"],
                "points": [[r["response_dkl_lm"], r["response_dkl_s"]] for r in summary["rows"]
                           if r["condition"] == c["label"] and r["completed"] and not r.get("practice")
                           and r.get("response_dkl_lm") is not None]}
               for c in summary["conditions"] if "adapt_dkl" in c]
    if vectors:
        specs["vectors"] = {"kind": "vectors", "conditions": vectors,
                            "source_name": "surround" if induction else "adapter",
                            "response_name": "match" if induction else "null"}
    fits = [{"label": c["label"], **{k: c["threshold"][k] for k in ("levels", "threshold", "slope", "guess", "lapse",
                                                                     "ci95") if k in c["threshold"]}}
            if "error" not in c["threshold"] else {"label": c["label"], "levels": c["threshold"]["levels"]}
            for c in summary["conditions"] if "threshold" in c and c["threshold"]["levels"]]
    if fits:
        task = next((c["threshold"].get("guess") for c in summary["conditions"] if "threshold" in c), 0.5)
        specs["psychometric"] = {"kind": "psychometric", "conditions": fits,
                                 "task": "2afc" if task == 0.5 else "yes_no"}
    return specs


def study_specs(study: dict) -> dict[str, dict]:
    """The figures of a study summary (:func:`stimlab.sessions.study.study_summary`): one per pooled measure."""
    specs = {}
    for measure, description in study["measures"].items():
        specs[measure] = {"kind": "study", "title": study["title"], "measure": description,
                          "conditions": study["conditions"],
                          "participants": [{"participant": row["participant"],
                                            "values": [np.nan if row["conditions"][c][measure] is None
                                                       else row["conditions"][c][measure] for c in study["conditions"]]}
                                           for row in study["table"]],
                          "pooled": [study["pooled"][c][measure] for c in study["conditions"]]}
    return specs


def render(spec: dict, fmt: str, cache_dir: Path | None = None) -> bytes:
    """The figure of ``spec`` as SVG or PDF bytes, from ``cache_dir`` when the same spec was drawn before."""
    return render_spec(spec, fmt, BUILDERS, FIGURE_VERSION, cache_dir)
