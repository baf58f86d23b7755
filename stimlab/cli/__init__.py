"""The ``stimlab`` command (one module per command group; see :mod:`stimlab.cli.main`)."""

from .main import build_parser, main

__all__ = ["build_parser", "main"]
