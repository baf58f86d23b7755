"""Display profiles: what one calibrated monitor emits, saved as a JSON document with a content hash.

A profile holds the spectral radiance of each primary at full drive *above black* and of black itself (or, when
no spectrometer was available, the primaries' CIE 1931 xyY, flagged as an approximation), one fitted transfer
model per channel with its residuals and the measurements it was fitted to, the bit depth, refresh rate and
screen geometry, who measured it and when. ``sha256`` is the hash of the canonical JSON of everything else, and
every later output cites it.
"""

from __future__ import annotations

import datetime as dt
import hashlib
import json
from pathlib import Path

import numpy as np

from ..colorimetry.transfer import TRANSFER_MODELS, fit_transfer, reading_sigma
from ..errors import InputError
from ..jsonio import loads
from .measurements import CHANNELS, falls
from .validation import check_profile

__all__ = [
    "FORMAT_VERSION",
    "DEFAULT_MAX_AGE_DAYS",
    "build_profile",
    "primaries_xyY_from_white",
    "transfer_entry",
    "profile_hash",
    "load_profile",
    "profile_from_dict",
    "save_profile",
    "profile_age_days",
    "profile_warnings",
    "transfer_warnings",
]

FORMAT_VERSION = 1
DEFAULT_MAX_AGE_DAYS = 30
APPROXIMATION_NOTE = ("primaries given as CIE 1931 xyY, not spectra: cone excitations use a least-squares "
                      "XYZ-to-cone transform and are approximate")


def primaries_xyY_from_white(chromaticities: dict) -> dict:
    """Luminance of each primary from the primaries' xy and the white's xyY (black taken as zero).

    The white is the sum of the three primaries at full drive, so with ``XYZ_i = Y_i · (x_i/y_i, 1, z_i/y_i)``
    the luminances solve one 3×3 linear system (the construction IEC 61966-2-1 uses for the sRGB matrix).

    Parameters
    ----------
    chromaticities
        ``{"red": (x, y), "green": (x, y), "blue": (x, y), "white": (x, y, Y)}``.

    Returns
    -------
    dict
        ``{"red": (x, y, Y), ...}``.
    """
    try:
        xy = np.array([chromaticities[c][:2] for c in CHANNELS], dtype=float)
        x_w, y_w, Y_w = (float(v) for v in chromaticities["white"])
    except (KeyError, TypeError, ValueError):
        raise InputError("give x,y for each primary and x,y,Y for white", field="white") from None
    if not (np.all(np.isfinite(xy)) and np.all(xy > 0) and 0 < x_w < 1 and 0 < y_w < 1 and Y_w > 0):
        raise InputError("chromaticities must be positive and the white luminance above 0", field="white")
    columns = np.array([xy[:, 0] / xy[:, 1], np.ones(3), (1 - xy.sum(axis=1)) / xy[:, 1]])
    white = Y_w * np.array([x_w / y_w, 1.0, (1 - x_w - y_w) / y_w])
    Y = np.linalg.solve(columns, white)
    if np.any(Y <= 0):
        raise InputError("this white cannot be mixed from these primaries (a primary would need negative "
                         "luminance); check the chromaticities", field="white")
    return {c: (float(xy[i, 0]), float(xy[i, 1]), float(Y[i])) for i, c in enumerate(CHANNELS)}


def transfer_entry(levels, luminance, bits: int, transfer_model: str = "gog") -> dict:
    """Fit every transfer model to one channel's measurements and keep the chosen one.

    Parameters
    ----------
    levels
        Digital levels measured, including 0 and ``2^bits − 1``.
    luminance
        Measured luminance at each level, cd/m².
    bits
        Bit depth.
    transfer_model
        The transfer model the profile uses (a key of :data:`stimlab.colorimetry.transfer.TRANSFER_MODELS`); the others are fitted
        too so that their residuals can be compared.
    """
    if transfer_model not in TRANSFER_MODELS:
        raise InputError(f"unknown transfer model {transfer_model!r}; choose one of: {', '.join(TRANSFER_MODELS)}",
                         field="model")
    levels = np.asarray(levels, dtype=float)
    luminance = np.asarray(luminance, dtype=float)
    found = falls(levels, luminance)
    if found and transfer_model == "table":
        at = ", ".join(f"level {f['level']} ({f['from_cd_m2']:g} → {f['to_cd_m2']:g} cd/m²)" for f in found)
        raise InputError(f"luminance falls at {at}; the table model needs monotone data: use the gog or power "
                         "model, or re-measure those levels", field="transfer")
    beyond = [f for f in found if not f["within_tolerance"]]
    if beyond:
        f = beyond[0]
        raise InputError(f"luminance falls from {f['from_cd_m2']:g} to {f['to_cd_m2']:g} cd/m² at level "
                         f"{f['level']}, more than measurement noise; re-measure that level", field="transfer")
    x = levels / (2**bits - 1)
    span = luminance[-1] - luminance[0]
    y = (luminance - luminance[0]) / span
    sigma = reading_sigma(luminance) / span
    fits = {}
    for name in TRANSFER_MODELS:
        try:
            fit = fit_transfer(x, y, name, sigma)
        except ValueError as error:
            if name == transfer_model:
                raise InputError(str(error), field="transfer") from None
            continue
        fits[name] = {"parameters": fit.transfer.parameters(), "rms": fit.rms, "max_abs": fit.max_abs}
    chosen = fits.pop(transfer_model)
    entry = {
        "model": transfer_model,
        **chosen,
        "measured": {"level": [int(v) for v in levels], "luminance_cd_m2": [float(v) for v in luminance]},
        "alternatives": fits,
    }
    if found:
        entry["falls"] = [{k: f[k] for k in ("level", "from_cd_m2", "to_cd_m2")} for f in found]
    return entry


def transfer_warnings(data: dict) -> list[str]:
    """One warning per channel whose readings fall (within noise) and were fitted through, for every report."""
    warnings = []
    for channel in CHANNELS:
        entry = data["transfer"][channel]
        found = entry.get("falls") or []
        if found:
            largest = max(f["from_cd_m2"] - f["to_cd_m2"] for f in found)
            levels = ", ".join(str(f["level"]) for f in found)
            warnings.append(f"{channel} readings fall at level(s) {levels} (by up to {largest:.4g} cd/m², within "
                            f"measurement noise); the {entry['model']} fit smooths over them: check the toe if "
                            "dark stimuli matter")
    return warnings


def profile_hash(data: dict) -> str:
    """sha256 of the canonical JSON of a profile, leaving out its own ``sha256`` field."""
    body = {k: v for k, v in data.items() if k != "sha256"}
    text = json.dumps(body, sort_keys=True, separators=(",", ":"), allow_nan=False)
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def _pair(value, name: str, kind=float):
    if value is None:
        return None
    if len(value) != 2 or not all(np.isfinite(v) and v > 0 for v in value):
        raise InputError(f"{name} needs two positive numbers W,H; got {value!r}", field=name)
    return [kind(v) for v in value]


def build_profile(name: str, *, transfer: dict, bits: int = 8, refresh_hz: float = 60.0,
                  spectra: tuple | None = None, chromaticities: dict | None = None,
                  size_cm=None, size_px=None, measured_by: str = "", measured_on: str | None = None,
                  notes: str = "") -> dict:
    """Assemble and hash a display profile.

    Parameters
    ----------
    name
        The display's name, as the lab calls it.
    transfer
        ``{channel: transfer_entry(...)}`` for red, green and blue.
    bits
        Bit depth per channel, ≥ 1 (8, 10, …).
    refresh_hz
        Refresh rate, Hz.
    spectra
        ``(wavelengths_nm, primaries (N, 3) as measured, black (N,) or None)``; the black spectrum is subtracted
        from each primary (tiny negatives from measurement noise become 0 and are counted in ``notes``).
    chromaticities
        Used when there are no spectra: ``{"red": (x, y, Y), "green": …, "blue": …, "black": (x, y, Y)?}``, Y in
        cd/m² at full drive.
    size_cm, size_px
        Screen width and height in cm and in pixels.
    measured_by, measured_on
        Who measured the display and on what date (ISO ``YYYY-MM-DD``; default today).
    """
    if not name or not str(name).strip():
        raise InputError("a display needs a name", field="name")
    if int(bits) != bits or not 1 <= bits <= 16:
        raise InputError(f"bits must be a whole number from 1 to 16, got {bits!r}", field="bits")
    if not np.isfinite(refresh_hz) or not 20 <= refresh_hz <= 1000:
        raise InputError(f"refresh rate must be 20–1000 Hz, got {refresh_hz!r}", field="refresh")
    measured_on = measured_on or dt.date.today().isoformat()
    try:
        dt.date.fromisoformat(measured_on)
    except ValueError:
        raise InputError(f"measured_on must be a date YYYY-MM-DD, got {measured_on!r}", field="measured_on") from None
    missing = [c for c in CHANNELS if c not in transfer]
    if missing:
        raise InputError(f"transfer measurements missing for {', '.join(missing)}", field="transfer")
    notes = [notes] if notes else []
    if spectra is not None:
        wavelengths, measured, black = spectra
        if black is None:
            notes.append("no black spectrum given: black taken as zero radiance")
            black = np.zeros(len(wavelengths))
        black = np.asarray(black, dtype=float)
        above = np.asarray(measured, dtype=float) - black[:, None]
        negatives = int(np.sum(above < 0))
        if negatives:
            notes.append(f"{negatives} primary samples fell below black (measurement noise) and were set to 0")
        above = np.clip(above, 0.0, None)
        primaries = {"kind": "spectra", "wavelength_nm": [float(v) for v in wavelengths],
                     **{c: [float(v) for v in above[:, i]] for i, c in enumerate(CHANNELS)},
                     "black": [float(v) for v in black]}
    elif chromaticities is not None:
        primaries = {"kind": "chromaticities"}
        if "white" in chromaticities:
            chromaticities = {**chromaticities, **primaries_xyY_from_white(chromaticities)}
        for channel in CHANNELS + ("black",):
            value = chromaticities.get(channel, (0.3127, 0.3290, 0.0) if channel == "black" else None)
            if value is None or len(value) != 3 or not all(np.isfinite(v) for v in value):
                raise InputError(f"{channel} needs x,y,Y", field=channel)
            x, y, Y = (float(v) for v in value)
            if not (0 < x < 1 and 0 < y < 1 and x + y < 1) or Y < 0 or (channel != "black" and Y <= 0):
                raise InputError(f"{channel} xyY ({x:g}, {y:g}, {Y:g}) is not a valid chromaticity and "
                                 "luminance", field=channel)
            primaries[channel] = [x, y, Y]
        notes.append(APPROXIMATION_NOTE)
    else:
        raise InputError("give the primaries' spectra or their xyY chromaticities", field="spectra")
    data = {
        "stimlab_display_profile": FORMAT_VERSION,
        "name": str(name).strip(),
        "measured_by": measured_by,
        "measured_on": measured_on,
        "built_at": dt.datetime.now(dt.timezone.utc).replace(microsecond=0).isoformat(),
        "bits": int(bits),
        "refresh_hz": float(refresh_hz),
        "size_cm": _pair(size_cm, "size-cm"),
        "size_px": _pair(size_px, "size-px", int),
        "primaries": primaries,
        "transfer": {c: transfer[c] for c in CHANNELS},
        "notes": notes,
    }
    data["sha256"] = profile_hash(data)
    return check_profile(data, data["name"] or "profile")


def profile_from_dict(data: dict, name: str = "profile") -> dict:
    """Check a profile read from JSON: its format, every field (:func:`check_profile`) and its hash."""
    if not isinstance(data, dict) or data.get("stimlab_display_profile") != FORMAT_VERSION:
        raise InputError(f"not a stimlab display profile (format {FORMAT_VERSION}); build one with "
                         "'stimlab display build'", file=name)
    check_profile(data, name)
    for key in ("name", "bits", "refresh_hz", "primaries", "transfer", "sha256"):
        if key not in data:
            raise InputError(f"missing field {key!r}; rebuild the profile", file=name, field=key)
    if profile_hash(data) != data["sha256"]:
        raise InputError("content does not match its sha256: the file was edited after it was built; rebuild it "
                         "from the measurements", file=name, field="sha256")
    return data


def load_profile(path) -> dict:
    """Read and check a profile JSON file."""
    path = Path(path)
    if not path.is_file():
        raise InputError("display profile not found; check the path", file=str(path))
    try:
        data = loads(path.read_bytes(), file=str(path))
    except OSError as error:
        raise InputError(f"cannot read the file ({error.strerror})", file=str(path)) from None
    return profile_from_dict(data, str(path))


def save_profile(data: dict, path) -> None:
    """Write a profile as indented JSON."""
    Path(path).write_text(json.dumps(data, indent=1, allow_nan=False) + "\n", encoding="utf-8")


def profile_age_days(data: dict, today: dt.date | None = None) -> int:
    """Days since the display was measured."""
    today = today or dt.date.today()
    return (today - dt.date.fromisoformat(data["measured_on"])).days


def profile_warnings(data: dict, max_age_days: int = DEFAULT_MAX_AGE_DAYS, today: dt.date | None = None) -> list:
    """Warnings every output that uses this profile should carry."""
    warnings = []
    age = profile_age_days(data, today)
    if age > max_age_days:
        warnings.append(f"profile measured {age} days ago (more than {max_age_days}); recalibrate the display")
    if data["primaries"]["kind"] == "chromaticities":
        warnings.append("approximation: " + APPROXIMATION_NOTE)
    warnings.extend(transfer_warnings(data))
    return warnings
