"""Experiments: protocol files, factorial design, and compiling a protocol for one display and observer."""
