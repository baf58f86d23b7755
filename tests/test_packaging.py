"""An ordinary (non-editable) install serves every page: build the wheel, install it into a fresh virtual
environment without the network, start ``stimlab serve --demo`` from it and fetch the pages and files it ships."""

from __future__ import annotations

import json
import shutil
import subprocess
import sys
import sysconfig
import urllib.request
import venv
import zipfile
from pathlib import Path

import pytest
from browser_support import Server

ROOT = Path(__file__).parents[1]
SKIP = shutil.ignore_patterns(".venv", ".tools", ".git", "instance", "build", "*.egg-info", "__pycache__", "test-artifacts")


@pytest.fixture(scope="module")
def wheel(tmp_path_factory) -> Path:
    source = tmp_path_factory.mktemp("source") / "stimlab"
    shutil.copytree(ROOT, source, ignore=SKIP)
    out = tmp_path_factory.mktemp("wheel")
    subprocess.run([sys.executable, "-m", "pip", "wheel", "--no-deps", "--no-build-isolation", "--no-index", "-q",
                    "-w", str(out), str(source)], check=True, capture_output=True)
    return next(out.glob("stimlab-*.whl"))


def test_wheel_ships_templates_static_files_and_protocols(wheel):
    names = set(zipfile.ZipFile(wheel).namelist())
    for shipped in ("stimlab/templates/base.html", "stimlab/static/js/runner/main.js", "stimlab/static/style.css",
                    "stimlab/protocols/afterimage_null.json", "stimlab/data/protocol.schema.json",
                    "stimlab/data/demo/vale_street_b12_spectra.csv"):
        assert shipped in names, f"{shipped} is missing from the wheel"


def test_installed_wheel_serves_every_page(wheel, tmp_path):
    env_dir = tmp_path / "env"
    venv.EnvBuilder(with_pip=False).create(env_dir)
    python = env_dir / "bin" / "python"
    # The dependencies come from the test environment (no network); stimlab itself only from the wheel.
    site = Path(subprocess.check_output([python, "-c", "import sysconfig; print(sysconfig.get_paths()['purelib'])"],
                                        text=True).strip())
    (site / "test_environment.pth").write_text(sysconfig.get_paths()["purelib"] + "\n")
    shutil.unpack_archive(wheel, site, format="zip")
    where = subprocess.check_output([python, "-c", "import stimlab; print(stimlab.__file__)"], text=True,
                                    cwd=tmp_path).strip()
    assert Path(where).is_relative_to(site), f"stimlab was imported from {where}, not from the installed wheel"

    server = Server(tmp_path / "data", python=str(python), cwd=tmp_path).start()  # not the source tree
    try:
        def get(path):
            with urllib.request.urlopen(server.url + path, timeout=10) as response:
                return response.status, response.read().decode("utf-8")

        status, page = get("/")
        assert status == 200
        status, page = get("/protocols/afterimage_null.json")
        assert status == 200 and "afterimage_null" in page
        status, script = get("/static/js/runner/main.js")
        assert status == 200 and "import" in script
        status, listing = get("/api/protocols")
        names = {p["name"] for p in json.loads(listing)["protocols"]}
        assert {"afterimage_null.json", "contrast_match.json", "flicker_photometry.json"} <= names
    finally:
        server.stop()
