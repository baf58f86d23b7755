"""Shipped with stimlab as the package stimlab.static (see pyproject.toml), found through importlib.resources."""
