"""Where the shipped folders are: templates, static files and demo protocols, found through importlib.resources.

They live at the top of the source tree (``templates/``, ``static/``, ``protocols/``) and are packaged as
``stimlab.templates``, ``stimlab.static`` and ``stimlab.protocols`` (see pyproject.toml), so an editable install
and a wheel find them the same way (each folder has an ``__init__.py`` so that an editable install maps it too).
"""

from __future__ import annotations

from importlib import resources
from pathlib import Path

__all__ = ["asset_folder"]

FOLDERS = ("templates", "static", "protocols")


def asset_folder(name: str) -> Path:
    """The folder of shipped files ``name`` (one of ``templates``, ``static``, ``protocols``) as a real path.

    Flask serves templates and static files from a directory, so the resource must be a folder on disk, which it
    is for a wheel and for an editable install alike.
    """
    if name not in FOLDERS:
        raise ValueError(f"name must be one of {', '.join(FOLDERS)}, got {name!r}")
    folder = Path(str(resources.files(f"stimlab.{name}")))
    if not folder.is_dir():  # e.g. run from a zip: Flask needs real folders
        raise FileNotFoundError(f"the shipped folder {name!r} is not a folder on disk in this installation")
    return folder
