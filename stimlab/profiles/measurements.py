"""Readers for a technician's measurement files, with every problem named by file, row and column.

Two formats, both plain CSV with a header row:

- spectra: ``wavelength_nm,red,green,blue`` (optionally ``black``), spectral radiance in W·sr⁻¹·m⁻²·nm⁻¹ of each
  primary at full drive with the others at zero, as measured (black included); evenly spaced, 1–5 nm, covering
  at least 390–780 nm. A separate black file has ``wavelength_nm,black``.
- transfer: ``channel,level,luminance_cd_m2`` with channel one of red, green, blue; each channel measured at
  level 0 and at full drive, and at levels in between.

A real display's toe is flat, so its readings can fall slightly from one level to the next by noise alone. Only
the table model needs monotone data; the fitted models (power, gain-offset-gamma) accept a fall of up to
:data:`FALL_TOLERANCE_RELATIVE` of the highest reading so far plus :data:`FALL_TOLERANCE_CD_M2`, and the profile
reports it (:func:`falls`).
"""

from __future__ import annotations

import csv
import io
import math
from pathlib import Path

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ..colorimetry.display import CHANNELS
from ..errors import InputError

__all__ = ["read_text", "parse_spectra", "parse_black", "parse_transfer", "falls", "CHANNELS", "SPECTRAL_RANGE_NM",
           "FALL_TOLERANCE_RELATIVE", "FALL_TOLERANCE_CD_M2"]

SPECTRAL_RANGE_NM = (390.0, 780.0)
"""Range the spectra must cover: where the cone fundamentals and V(λ) are not negligible."""

FALL_TOLERANCE_RELATIVE = 0.02
FALL_TOLERANCE_CD_M2 = 0.015
"""A fall below the highest reading so far of at most 2 % of it plus 0.015 cd/m² is taken as noise by the fitted
models: about five standard deviations of the difference of two readings under the fit's noise model (0.3 % of the
reading + 0.002 cd/m², :func:`stimlab.colorimetry.transfer.reading_sigma`). A larger fall is a fault to re-measure."""


def read_text(path: str | Path) -> str:
    """The text of a measurement file, read as UTF-8 (a byte-order mark is dropped).

    Parameters
    ----------
    path
        The file.

    Returns
    -------
    str
        Its text.

    Raises
    ------
    InputError
        If the file does not exist or is not UTF-8 text, naming the file and the fix.
    """
    path = Path(path)
    if not path.is_file():
        raise InputError("file not found; check the path", file=str(path))
    try:
        return path.read_text(encoding="utf-8-sig")
    except UnicodeDecodeError:
        raise InputError("not a UTF-8 text file; export the measurements as CSV", file=str(path)) from None


def _rows(text: str, name: str, expected: tuple[str, ...], optional: tuple[str, ...] = ()) -> list[tuple[int, dict]]:
    """Parse CSV text into (row number, record) pairs, checking the header."""
    text = text.lstrip("\ufeff")
    reader = csv.reader(io.StringIO(text))
    try:
        header = [h.strip() for h in next(reader)]
    except StopIteration:
        raise InputError(f"the file is empty; expected a header {','.join(expected)}", file=name) from None
    missing = [c for c in expected if c not in header]
    extra = [c for c in header if c not in expected + optional]
    if missing or extra:
        what = []
        if missing:
            what.append("missing column(s) " + ", ".join(missing))
        if extra:
            what.append("unexpected column(s) " + ", ".join(repr(c) for c in extra))
        raise InputError(f"{'; '.join(what)}; the header must be {','.join(expected)}", file=name, row=1)
    rows = []
    for number, values in enumerate(reader, start=2):
        if not values or all(not v.strip() for v in values):
            continue
        if len(values) != len(header):
            raise InputError(f"has {len(values)} values but the header has {len(header)}", file=name, row=number)
        rows.append((number, dict(zip(header, (v.strip() for v in values)))))
    if not rows:
        raise InputError("has a header but no data rows", file=name)
    return rows


def _number(text: str, name: str, row: int, column: str, *, non_negative: bool = False) -> float:
    try:
        value = float(text)
    except ValueError:
        raise InputError(f"{text!r} is not a number", file=name, row=row, field=column) from None
    if not math.isfinite(value):
        raise InputError(f"{text!r} is not a finite number", file=name, row=row, field=column)
    if non_negative and value < 0:
        raise InputError(f"negative value {value:g}; radiance and luminance cannot be negative "
                         "(subtract nothing before export, or set tiny negatives from noise to 0)",
                         file=name, row=row, field=column)
    return value


def _spectral_table(text: str, name: str, columns: tuple[str, ...],
                    optional: tuple[str, ...] = ()) -> tuple[np.ndarray, np.ndarray, bool]:
    rows = _rows(text, name, ("wavelength_nm",) + columns, optional)
    columns = columns + tuple(c for c in optional if c in rows[0][1])
    wavelengths = np.array([_number(r["wavelength_nm"], name, n, "wavelength_nm") for n, r in rows])
    values = np.array([[_number(r[c], name, n, c, non_negative=True) for c in columns] for n, r in rows])
    if len(rows) < 3:
        raise InputError(f"{len(rows)} wavelength row(s); a spectrum needs the visible range (380–780 nm) in steps of "
                         "1–5 nm", file=name, row=rows[-1][0] if rows else None, field="wavelength_nm")
    steps = np.diff(wavelengths)
    if np.any(steps <= 0):
        bad = int(np.flatnonzero(steps <= 0)[0])
        raise InputError("wavelengths must increase from row to row", file=name, row=rows[bad + 1][0],
                         field="wavelength_nm")
    if not np.allclose(steps, steps[0], atol=1e-6) or not 1.0 <= steps[0] <= 5.0:
        raise InputError(f"wavelengths must be evenly spaced 1–5 nm apart (found steps of "
                         f"{steps.min():g}–{steps.max():g} nm); resample the export", file=name,
                         field="wavelength_nm")
    low, high = SPECTRAL_RANGE_NM
    if wavelengths[0] > low or wavelengths[-1] < high:
        raise InputError(f"spectra cover {wavelengths[0]:g}–{wavelengths[-1]:g} nm but must cover at least "
                         f"{low:g}–{high:g} nm; measure the full visible range", file=name, field="wavelength_nm")
    return wavelengths, values, len(columns) > 3


def parse_spectra(text: str, name: str = "spectra") -> tuple[NDArray[np.float64], NDArray[np.float64],
                                                             NDArray[np.float64] | None]:
    """Parse primary spectra from CSV text.

    Parameters
    ----------
    text
        CSV with header ``wavelength_nm,red,green,blue`` and optionally ``black``.
    name
        What to call the file in messages.

    Returns
    -------
    wavelengths : ndarray of float64, shape (N,)
        nm, evenly spaced 1–5 nm apart, covering at least :data:`SPECTRAL_RANGE_NM`.
    primaries : ndarray of float64, shape (N, 3)
        Radiance of red, green, blue at full drive as measured (black included), W·sr⁻¹·m⁻²·nm⁻¹, ≥ 0.
    black : ndarray of float64, shape (N,), or None
        Radiance at all-zero drive when the file has a ``black`` column.

    Raises
    ------
    InputError
        Naming the file, row and column: a wrong header, a value that is not a finite number, a negative
        radiance, wavelengths that do not increase evenly by 1–5 nm, or too short a range.

    Examples
    --------
    >>> rows = "".join(f"{w},0.001,0.002,0.0005\\n" for w in range(390, 781, 5))
    >>> wavelengths, primaries, black = parse_spectra("wavelength_nm,red,green,blue\\n" + rows)
    >>> wavelengths.size, primaries.shape, black is None
    (79, (79, 3), True)
    """
    wavelengths, values, has_black = _spectral_table(text, name, CHANNELS, ("black",))
    return wavelengths, values[:, :3], (values[:, 3] if has_black else None)


def parse_black(text: str, name: str = "black") -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Parse a black (all-zero drive) spectrum from CSV text: ``wavelength_nm,black``.

    Returns wavelengths (nm, shape (N,)) and radiance (W·sr⁻¹·m⁻²·nm⁻¹, shape (N,)); raises :class:`InputError`
    for the problems :func:`parse_spectra` names.
    """
    wavelengths, values, _ = _spectral_table(text, name, ("black",))
    return wavelengths, values[:, 0]


def falls(levels: ArrayLike, luminance: ArrayLike) -> list[dict]:
    """Where readings fall below the highest reading at a lower level.

    Parameters
    ----------
    levels
        Digital levels, increasing.
    luminance
        Readings at those levels, cd/m².

    Returns
    -------
    list of dict
        One ``{"index", "level", "from_cd_m2", "to_cd_m2", "within_tolerance"}`` per falling reading, ``from`` being
        the highest reading so far; ``within_tolerance`` applies :data:`FALL_TOLERANCE_RELATIVE` and
        :data:`FALL_TOLERANCE_CD_M2`.

    Examples
    --------
    >>> [f["level"] for f in falls([0, 16, 24, 32], [0.35, 0.35294, 0.35085, 0.36])]
    [24]
    """
    levels = np.asarray(levels, dtype=float)
    luminance = np.asarray(luminance, dtype=float)
    highest = np.maximum.accumulate(luminance)
    found = []
    for i in np.flatnonzero(luminance[1:] < highest[:-1]) + 1:
        top = float(highest[i - 1])
        found.append({"index": int(i), "level": int(levels[i]), "from_cd_m2": top, "to_cd_m2": float(luminance[i]),
                      "within_tolerance": bool(top - luminance[i]
                                               <= FALL_TOLERANCE_RELATIVE * top + FALL_TOLERANCE_CD_M2)})
    return found


def parse_transfer(text: str, bits: int, name: str = "transfer",
                   transfer_model: str = "gog") -> dict[str, tuple[np.ndarray, np.ndarray]]:
    """Parse transfer measurements from CSV text.

    Parameters
    ----------
    text
        CSV with header ``channel,level,luminance_cd_m2``.
    bits
        Bit depth of the display; levels must lie in 0..2^bits − 1.
    name
        What to call the file in messages.
    transfer_model
        The transfer model the readings are for. ``"table"`` needs monotone readings: any fall is refused, naming
        every row that breaks it. The fitted models accept falls within the tolerance (:func:`falls`).

    Returns
    -------
    dict
        ``{channel: (levels, luminance_cd_m2)}`` for red, green and blue: device levels (0..2^bits − 1, as float)
        and readings in cd/m², both ndarray of float64 sorted by level.

    Raises
    ------
    InputError
        Naming the file, row and column: a wrong header, an unknown channel, a level that is not a whole number
        in range, a negative or non-numeric reading, a channel without level 0 or full drive, a level measured
        twice, a fall in the readings (any for ``"table"``, one beyond the tolerance otherwise), or a channel no
        brighter at full drive than at 0.

    Examples
    --------
    >>> text = "channel,level,luminance_cd_m2\\n" + "".join(
    ...     f"{c},{level},{cd_m2}\\n" for c in CHANNELS for level, cd_m2 in ((0, 0.2), (128, 22.0), (255, 100.0)))
    >>> levels, luminance = parse_transfer(text, bits=8)["red"]
    >>> levels.tolist(), luminance.tolist()
    ([0.0, 128.0, 255.0], [0.2, 22.0, 100.0])
    """
    d_max = 2**bits - 1
    by_channel: dict[str, list[tuple[int, float, int]]] = {c: [] for c in CHANNELS}
    for row, record in _rows(text, name, ("channel", "level", "luminance_cd_m2")):
        channel = record["channel"].lower()
        if channel not in by_channel:
            raise InputError(f"unknown channel {record['channel']!r}; use red, green or blue", file=name, row=row,
                             field="channel")
        level = _number(record["level"], name, row, "level")
        if level != int(level) or not 0 <= level <= d_max:
            raise InputError(f"level {record['level']!r} must be a whole number in 0..{d_max} at {bits} bits",
                             file=name, row=row, field="level")
        luminance = _number(record["luminance_cd_m2"], name, row, "luminance_cd_m2", non_negative=True)
        by_channel[channel].append((int(level), luminance, row))
    result = {}
    for channel, points in by_channel.items():
        points.sort()
        levels = [p[0] for p in points]
        if 0 not in levels or d_max not in levels:
            raise InputError(f"channel {channel} must be measured at level 0 and at full drive ({d_max}); "
                             f"found levels {levels or 'none'}", file=name, field="level")
        if len(set(levels)) != len(levels):
            dup = next(p for i, p in enumerate(points[1:]) if p[0] == points[i][0])
            raise InputError(f"channel {channel} level {dup[0]} is measured twice; average the repeats",
                             file=name, row=dup[2], field="level")
        luminance = np.array([p[1] for p in points])
        found = falls(levels, luminance)
        if found and transfer_model == "table":
            rows = "; ".join(f"row {points[f['index']][2]} (level {f['level']}: {f['from_cd_m2']:g} → "
                             f"{f['to_cd_m2']:g} cd/m²)" for f in found)
            raise InputError(f"channel {channel} luminance falls at {rows}; the table model needs monotone data. "
                             "Use --model gog or --model power, which fit a curve through the noise, or re-measure "
                             "those levels", file=name, row=points[found[0]["index"]][2], field="luminance_cd_m2")
        beyond = [f for f in found if not f["within_tolerance"]]
        if beyond:
            f = beyond[0]
            raise InputError(f"channel {channel} luminance falls from {f['from_cd_m2']:g} to {f['to_cd_m2']:g} "
                             f"cd/m² at level {f['level']}, more than measurement noise "
                             f"({FALL_TOLERANCE_RELATIVE:.0%} of the reading + {FALL_TOLERANCE_CD_M2:g} cd/m²); "
                             "re-measure that level", file=name, row=points[f["index"]][2], field="luminance_cd_m2")
        if luminance[-1] <= luminance[0]:
            raise InputError(f"channel {channel} is no brighter at full drive than at 0", file=name,
                             field="luminance_cd_m2")
        result[channel] = (np.array(levels, dtype=float), luminance)
    return result
