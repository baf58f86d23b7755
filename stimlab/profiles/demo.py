"""The shipped demo: an invented display of the fictional Vale Street Colour Vision Laboratory."""

from __future__ import annotations

from importlib import resources

from ..assets import asset_folder
from .measurements import parse_spectra, parse_transfer
from .profile import build_profile, transfer_entry

__all__ = ["DEMO_DISPLAY_NAME", "demo_file", "demo_profile"]

DEMO_DISPLAY_NAME = "Vale Street B12 LCD"
DEMO_MEASURED_ON = "2026-11-24"


def demo_file(name: str) -> str:
    """Text of a file shipped in ``stimlab/data/demo``."""
    return resources.files("stimlab.data.demo").joinpath(name).read_text(encoding="utf-8")


DEMO_BITS = 10


def demo_profile(measured_on: str = DEMO_MEASURED_ON, model: str = "gog") -> dict:
    """The demo display's profile (a 10-bit panel), built from its shipped measurement files."""
    wavelengths, primaries, black = parse_spectra(demo_file("vale_street_b12_spectra.csv"),
                                                  "vale_street_b12_spectra.csv")
    measurements = parse_transfer(demo_file("vale_street_b12_transfer.csv"), DEMO_BITS,
                                  "vale_street_b12_transfer.csv")
    transfer = {c: transfer_entry(levels, lum, DEMO_BITS, model) for c, (levels, lum) in measurements.items()}
    return build_profile(DEMO_DISPLAY_NAME, transfer=transfer, bits=DEMO_BITS, refresh_hz=60.0,
                         spectra=(wavelengths, primaries, black), size_cm=(53.1, 29.9), size_px=(1920, 1080),
                         measured_by="T. Okafor, Vale Street Colour Vision Laboratory", measured_on=measured_on,
                         notes="demo display: invented, with synthetic spectra")


def install_demo(store) -> list[str]:
    """Add the demo display and the shipped demo protocols to a data folder, where missing; return what was added."""
    import shutil

    added = []
    db = store.connect()
    try:
        if not any(d["name"] == DEMO_DISPLAY_NAME for d in store.displays(db)):
            store.add_display(db, demo_profile())
            added.append(DEMO_DISPLAY_NAME)
    finally:
        db.close()
    shipped = asset_folder("protocols")
    for path in sorted(shipped.glob("*.json")):
        target = store.protocols / path.name
        deleted = any((store.protocols / ".trash").glob(f"*--{path.name}"))  # the lab deleted it: leave it there
        if not target.exists() and not deleted:
            shutil.copyfile(path, target)
            added.append(path.name)
    return added
