"""Serving figures: a spec drawn (or taken from the cache) as SVG or PDF, inline for the page or as a download."""

from __future__ import annotations

from collections.abc import Callable

from flask import Response, request

from ..figures import FORMATS
from . import current_store
from .errors import NotFound

__all__ = ["figure_response", "figures_dir"]


def figures_dir():
    """Where drawn figures (and the specs of the editor's plots) are kept: ``<data>/figures``."""
    return current_store().root / "figures"


def figure_response(specs: dict, figure: str, fmt: str, stem: str, render: Callable) -> Response:
    """The figure ``figure`` of ``specs`` drawn by ``render(spec, fmt, cache_dir)``, named ``stem.fmt``.

    ``?download=1`` sends it as an attachment; otherwise it is shown inline (an ``<img>`` on the page).
    """
    if figure not in specs:
        raise NotFound(f"there is no figure {figure!r} here; these are: {', '.join(specs) or 'none'}")
    if fmt not in FORMATS:
        raise NotFound(f"figures download as {' or '.join(FORMATS)}, not {fmt!r}")
    data = render(specs[figure], fmt, figures_dir())
    disposition = "attachment" if request.args.get("download") else "inline"
    return Response(data, mimetype=FORMATS[fmt], headers={
        "Content-Disposition": f'{disposition}; filename="{stem}.{fmt}"', "Cache-Control": "private, max-age=60"})
