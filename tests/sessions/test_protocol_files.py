"""Protocol files: create, duplicate, rename, delete to the trash and restore, never overwriting a file."""

import json

import pytest

from stimlab.errors import ConflictError, InputError, NotFoundError
from stimlab.experiment.paradigms import paradigm_protocol
from stimlab.sessions.protocol_files import (
    create_protocol,
    delete_protocol,
    duplicate_protocol,
    rename_protocol,
    restore_protocol,
    trash_entries,
)
from stimlab.sessions.store import Store, text_sha256


@pytest.fixture
def store(tmp_path):
    return Store(tmp_path / "data")


def test_create_refuses_a_name_in_use_and_an_invalid_protocol(store):
    protocol = paradigm_protocol("afterimage_duration", seed=1)
    assert create_protocol(store, "pilot", protocol) == "pilot.json"
    with pytest.raises(ConflictError):
        create_protocol(store, "pilot.json", protocol)
    protocol["trial"][0]["duration_s"] = -1
    with pytest.raises(InputError):
        create_protocol(store, "other", protocol)
    assert store.protocol_names() == ["pilot.json"]
    with pytest.raises(InputError):
        create_protocol(store, "../escape", paradigm_protocol("afterimage_duration", seed=1))


def test_duplicate_rename_delete_restore(store):
    create_protocol(store, "a", paradigm_protocol("detection_staircase", seed=1))
    text = (store.protocols / "a.json").read_text()
    assert duplicate_protocol(store, "a.json", "b") == "b.json"
    with pytest.raises(ConflictError):
        rename_protocol(store, "b.json", "a.json")
    with pytest.raises(ConflictError):  # changed since it was read
        rename_protocol(store, "b.json", "c.json", base_sha256="0" * 64)
    assert rename_protocol(store, "b.json", "c.json", base_sha256=text_sha256(text)) == "c.json"
    assert store.protocol_names() == ["a.json", "c.json"]
    entry = delete_protocol(store, "a.json")
    assert store.protocol_names() == ["c.json"]
    assert [e["name"] for e in trash_entries(store)] == ["a.json"]
    # The name is taken again meanwhile: the file comes back beside it, not over it.
    duplicate_protocol(store, "c.json", "a.json")
    assert restore_protocol(store, entry) == "a-restored.json"
    assert (store.protocols / "a-restored.json").read_text() == text
    assert trash_entries(store) == []
    with pytest.raises(NotFoundError):
        restore_protocol(store, entry)
    with pytest.raises(NotFoundError):
        delete_protocol(store, "missing.json")
    assert json.loads((store.protocols / "a.json").read_text())["about"]["title"]


def test_a_deleted_demo_protocol_stays_in_the_trash_when_the_demo_is_installed_again(store):
    from stimlab.profiles.demo import install_demo

    install_demo(store)
    delete_protocol(store, "afterimage_null.json")
    install_demo(store)
    assert "afterimage_null.json" not in store.protocol_names()
