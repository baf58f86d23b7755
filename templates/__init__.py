"""Shipped with stimlab as the package stimlab.templates (see pyproject.toml), found through importlib.resources."""
