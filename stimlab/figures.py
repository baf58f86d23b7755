"""Figures drawn with matplotlib from small JSON-able *specs*, as SVG or PDF, cached on disk by content.

A spec holds the numbers a figure shows and its ``kind``; a *builder* (a function of the spec and a
``matplotlib.figure.Figure``) draws it. The cache key is the SHA-256 of the spec, the format and the drawing code's
version, so the same numbers are never drawn twice and new numbers make a new figure. matplotlib's object interface
is used (``Figure``, no pyplot), which keeps no global figure state between requests; dates are left out of the
files so the same figure is the same bytes. Used by the display figures (:mod:`stimlab.profiles.figures`) and the
session and study figures (:mod:`stimlab.sessions.figures`).
"""

from __future__ import annotations

import hashlib
import io
import json
import os
import re
import threading
from collections.abc import Callable, Mapping
from pathlib import Path

__all__ = ["FORMATS", "PALETTE", "Builder", "new_axes", "plain", "spec_key", "render", "remember_spec", "recall_spec"]

FORMATS = {"svg": "image/svg+xml", "pdf": "application/pdf"}
METADATA = {"svg": {"Date": None, "Creator": "stimlab"}, "pdf": {"CreationDate": None, "Creator": "stimlab"}}
DRAWING = threading.Lock()  # matplotlib's settings are process-wide; one figure is drawn at a time
# Okabe & Ito (2008) colour-blind-safe palette, common practice for figures in vision science.
PALETTE = ["#0072B2", "#D55E00", "#009E73", "#CC79A7", "#E69F00", "#56B4E9", "#F0E442", "#000000"]
KEY = re.compile(r"[0-9a-f]{64}")

Builder = tuple[Callable[[dict, object], None], tuple[float, float]]
"""How a kind of figure is drawn: ``(draw(spec, figure), (width, height) in inches)``."""


def new_axes(figure, **options):
    """Axes on ``figure`` with plain tick labels (no ``1.02e+03``, no offsets) and no top or right spine."""
    ax = figure.add_subplot(**options)
    plain(ax)
    ax.spines[["top", "right"]].set_visible(False)
    return ax


def plain(ax) -> None:
    """Plain tick labels on linear axes of ``ax``: 1023, not 1.02e+03 or an offset."""
    for axis in ("x", "y"):
        if getattr(ax, f"get_{axis}scale")() == "linear":
            ax.ticklabel_format(axis=axis, style="plain", useOffset=False)


def spec_key(spec: dict, fmt: str = "", version: object = None) -> str:
    """The SHA-256 (hex) of a spec with its format and drawing version: the figure's name in the cache."""
    text = json.dumps({"spec": spec, "format": fmt, "version": version}, sort_keys=True, default=float)
    return hashlib.sha256(text.encode()).hexdigest()


def _write(path: Path, data: bytes) -> None:
    path.parent.mkdir(parents=True, exist_ok=True)
    temporary = path.with_suffix(f".{os.getpid()}.{threading.get_ident()}.part")
    temporary.write_bytes(data)
    os.replace(temporary, path)  # readers see a whole file or none


def render(spec: dict, fmt: str, builders: Mapping[str, Builder], version: object,
           cache_dir: Path | None = None) -> bytes:
    """The figure of ``spec`` as SVG or PDF bytes, from ``cache_dir`` when the same spec was drawn before.

    Parameters
    ----------
    spec
        JSON-able numbers with a ``kind`` naming its builder.
    fmt
        ``"svg"`` or ``"pdf"`` (a key of :data:`FORMATS`).
    builders
        ``kind → (draw, size in inches)``.
    version
        The drawing code's version, part of the cache key: raise it when the drawing changes.
    cache_dir
        Folder of drawn figures; ``None`` draws every time.
    """
    import matplotlib
    from matplotlib.figure import Figure

    key = spec_key(spec, fmt, version)
    path = Path(cache_dir) / f"{key}.{fmt}" if cache_dir else None
    if path is not None and path.exists():
        return path.read_bytes()
    build, size = builders[spec["kind"]]
    out = io.BytesIO()
    # SVG text stays text (searchable, selectable, readable by screen readers); PDF embeds TrueType fonts
    with DRAWING, matplotlib.rc_context({"svg.fonttype": "none", "pdf.fonttype": 42, "font.size": 9,
                                         "axes.formatter.useoffset": False}):
        figure = Figure(figsize=size, layout="constrained")
        build(spec, figure)
        figure.savefig(out, format=fmt, metadata=METADATA[fmt])
    data = out.getvalue()
    if path is not None:
        _write(path, data)
    return data


def remember_spec(spec: dict, cache_dir: Path) -> str:
    """Keep ``spec`` in ``cache_dir`` under its key, for a figure asked for later by that key alone."""
    key = spec_key(spec)
    path = Path(cache_dir) / "specs" / f"{key}.json"
    if not path.exists():
        _write(path, json.dumps(spec, sort_keys=True, default=float).encode())
    return key


def recall_spec(key: str, cache_dir: Path) -> dict | None:
    """The spec kept by :func:`remember_spec` under ``key``; ``None`` for an unknown or malformed key."""
    if not KEY.fullmatch(key or ""):
        return None
    path = Path(cache_dir) / "specs" / f"{key}.json"
    try:
        return json.loads(path.read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return None
