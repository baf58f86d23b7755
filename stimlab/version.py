"""The version of stimlab, recorded with every session and export."""

__version__ = "0.1.0"
