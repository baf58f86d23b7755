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
    """Text of a file shipped in ``stimlab/data/demo``.

    Parameters
    ----------
    name
        File name inside the folder, e.g. ``vale_street_b12_spectra.csv`` (primary and black spectra,
        W·sr⁻¹·m⁻²·nm⁻¹) or ``vale_street_b12_transfer.csv`` (luminance in cd/m² at measured digital levels).

    Returns
    -------
    str
        The file's text, read as UTF-8.

    Raises
    ------
    FileNotFoundError
        If no such file ships with stimlab.

    Examples
    --------
    >>> demo_file("vale_street_b12_transfer.csv").splitlines()[0]
    'channel,level,luminance_cd_m2'
    """
    return resources.files("stimlab.data.demo").joinpath(name).read_text(encoding="utf-8")


DEMO_BITS = 10


def demo_profile(measured_on: str = DEMO_MEASURED_ON, transfer_model: str = "gog") -> dict:
    """The demo display's profile (a 10-bit panel), built from its shipped measurement files.

    Parameters
    ----------
    measured_on
        Measurement date recorded in the profile, ISO ``YYYY-MM-DD``.
    transfer_model
        Transfer model of every channel, a key of :data:`stimlab.colorimetry.transfer.TRANSFER_MODELS`
        (``power``, ``gog`` or ``table``); the others are fitted too, for comparison.

    Returns
    -------
    dict
        A display profile as :func:`stimlab.profiles.profile.build_profile` makes it: digital levels 0..1023,
        60 Hz, a 53.1 cm × 29.9 cm screen of 1920 × 1080 pixels, measured primary and black spectra.

    Raises
    ------
    stimlab.errors.InputError
        For an unknown transfer model, listing the valid ones.

    Notes
    -----
    The display, its measurements and the laboratory are invented; the spectra are synthetic.

    Examples
    --------
    >>> profile = demo_profile()
    >>> profile["name"], profile["bits"], profile["size_px"], profile["transfer"]["red"]["model"]
    ('Vale Street B12 LCD', 10, [1920, 1080], 'gog')
    """
    wavelengths, primaries, black = parse_spectra(demo_file("vale_street_b12_spectra.csv"),
                                                  "vale_street_b12_spectra.csv")
    measurements = parse_transfer(demo_file("vale_street_b12_transfer.csv"), DEMO_BITS,
                                  "vale_street_b12_transfer.csv", transfer_model)
    transfer = {c: transfer_entry(levels, lum, DEMO_BITS, transfer_model) for c, (levels, lum) in measurements.items()}
    return build_profile(DEMO_DISPLAY_NAME, transfer=transfer, bits=DEMO_BITS, refresh_hz=60.0,
                         spectra=(wavelengths, primaries, black), size_cm=(53.1, 29.9), size_px=(1920, 1080),
                         measured_by="T. Okafor, Vale Street Colour Vision Laboratory", measured_on=measured_on,
                         notes="demo display: invented, with synthetic spectra")


def install_demo(store) -> list[str]:
    """Add the demo display and the shipped demo protocols to a data folder, where missing; return what was added.

    Parameters
    ----------
    store
        The data folder, a :class:`stimlab.sessions.store.Store`.

    Returns
    -------
    list of str
        The display's name if it was added, then the file name of each protocol copied. Nothing already in the
        folder is replaced, so a second call adds nothing.

    Examples
    --------
    >>> import tempfile
    >>> from stimlab.sessions.store import Store
    >>> with tempfile.TemporaryDirectory() as folder:
    ...     store = Store(folder)
    ...     first, again = install_demo(store), install_demo(store)
    >>> first[0], "afterimage_null.json" in first, again
    ('Vale Street B12 LCD', True, [])
    """
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
