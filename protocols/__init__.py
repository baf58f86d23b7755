"""Shipped with stimlab as the package stimlab.protocols (see pyproject.toml), found through importlib.resources."""
