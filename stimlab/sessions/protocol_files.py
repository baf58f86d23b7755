"""Protocol files as a researcher manages them: new (from a paradigm template), duplicate, rename, and delete to a
trash folder they can be restored from.

Deleted files go to ``protocols/.trash/`` under a name that starts with the deletion time (UTC), so nothing is
ever lost by a click and the same name can be deleted twice. Sessions keep the compiled protocol and its hash, so
renaming or deleting a file never changes a stored session.
"""

from __future__ import annotations

import datetime as dt
import json
import os
import re

from ..errors import ConflictError, InputError, NotFoundError
from ..experiment.protocol import parse_protocol
from .store import Store, safe_protocol_name, text_sha256

__all__ = ["create_protocol", "duplicate_protocol", "rename_protocol", "delete_protocol", "trash_entries",
           "restore_protocol", "TRASH"]

TRASH = ".trash"
_ENTRY = re.compile(r"^(\d{8}T\d{6}(?:\.\d+)?Z)--([A-Za-z0-9][A-Za-z0-9_.-]{0,80}\.json)$")


def _path(store: Store, name: str):
    return store.protocols / safe_protocol_name(name)


def _existing(store: Store, name: str):
    path = _path(store, name)
    if not path.is_file():
        raise NotFoundError(f"there is no protocol {path.name!r}; pick one from the list", field="name")
    return path


def _free(store: Store, name: str):
    path = _path(store, name)
    if path.exists():
        raise ConflictError(f"a protocol called {path.name!r} already exists; choose another file name",
                            field="new_name")
    return path


def _write_new(path, text: str) -> None:
    # 'x' mode: two requests creating the same name cannot both succeed.
    try:
        with open(path, "x", encoding="utf-8") as handle:
            handle.write(text)
    except FileExistsError:
        raise ConflictError(f"a protocol called {path.name!r} already exists; choose another file name",
                            field="new_name") from None


def create_protocol(store: Store, name: str, protocol: dict) -> str:
    """Write a new, validated protocol file; refuse a name already in use. Returns the file name."""
    path = _free(store, name)
    text = json.dumps(protocol, indent=2, ensure_ascii=False) + "\n"
    parse_protocol(text, path.name)
    _write_new(path, text)
    return path.name


def duplicate_protocol(store: Store, name: str, new_name: str) -> str:
    """Copy a protocol file (as it is on disk, even if it does not validate) under a new name."""
    source = _existing(store, name)
    target = _free(store, new_name)
    _write_new(target, source.read_text(encoding="utf-8"))
    return target.name


def rename_protocol(store: Store, name: str, new_name: str, base_sha256: str | None = None) -> str:
    """Give a protocol file a new name; with ``base_sha256``, refuse if it changed since it was read."""
    source = _existing(store, name)
    target = _free(store, new_name)
    if base_sha256 is not None and text_sha256(source.read_text(encoding="utf-8")) != base_sha256:
        raise ConflictError("the protocol file changed on disk since you opened it; reload the page before renaming",
                            file=source.name)
    os.link(source, target)  # fails if the target appeared meanwhile, unlike a plain rename
    source.unlink()
    return target.name


def _stamp(now: dt.datetime | None = None) -> str:
    now = now or dt.datetime.now(dt.timezone.utc)
    return now.strftime("%Y%m%dT%H%M%S.%f") + "Z"


def delete_protocol(store: Store, name: str) -> str:
    """Move a protocol file to the trash; returns the trash entry's name (for :func:`restore_protocol`)."""
    source = _existing(store, name)
    trash = store.protocols / TRASH
    trash.mkdir(exist_ok=True)
    entry = f"{_stamp()}--{source.name}"
    os.replace(source, trash / entry)
    return entry


def trash_entries(store: Store) -> list[dict]:
    """Deleted protocols, newest first: ``{"entry", "name", "deleted_at"}`` (ISO 8601, UTC)."""
    trash = store.protocols / TRASH
    entries = []
    for path in trash.glob("*.json") if trash.is_dir() else []:
        match = _ENTRY.match(path.name)
        if match:
            when = dt.datetime.strptime(match.group(1), "%Y%m%dT%H%M%S.%fZ").replace(tzinfo=dt.timezone.utc)
            entries.append({"entry": path.name, "name": match.group(2),
                            "deleted_at": when.replace(microsecond=0).isoformat()})
    return sorted(entries, key=lambda e: e["entry"], reverse=True)


def restore_protocol(store: Store, entry: str, new_name: str | None = None) -> str:
    """Bring a deleted protocol back, under its old name or, if that is taken, ``new_name`` or a free variant."""
    match = _ENTRY.match(entry or "")
    path = store.protocols / TRASH / (entry or "")
    if not match or not path.is_file():
        raise NotFoundError(f"there is no deleted protocol {entry!r} in the trash", field="entry")
    wanted = safe_protocol_name(new_name) if new_name else match.group(2)
    stem = wanted[:-5]
    candidates = [wanted] + [f"{stem}-restored{'' if i == 1 else f'-{i}'}.json" for i in range(1, 100)]
    for candidate in candidates:
        target = store.protocols / candidate
        try:
            os.link(path, target)
        except FileExistsError:
            continue
        path.unlink()
        return candidate
    raise InputError(f"no free name for {wanted!r}; rename the protocol that uses it first", field="entry")
