"""The per-frame log of a session: one block of frames per log batch, in columns.

The runner records, for every requestAnimationFrame callback, the frame number, the callback's timestamp
(``t_raf``), ``performance.now()`` at the callback's start (``t_callback``), the trial, the phase, whether the
frame was dropped and what was drawn. It sends them as *packed* columns: each column the base64 of its
little-endian binary array, with the text columns (phase, drawn) as indices into the block's ``labels``::

    {"count": 120, "labels": ["adapt", "512,498,530"],
     "frame": <uint32>, "t_raf": <float64>, "t_callback": <float64>, "trial": <int32, -1 for none>,
     "phase": <uint16 label index>, "dropped": <uint8 0 or 1>, "drawn": <uint16 label index, 65535 for none>}

Packed, an hour at 120 Hz is about 17 MB of text instead of 22–33 MB as JSON lists (as the times need more or
fewer digits), 13 MB stored; parsing it costs next to nothing, and the exact doubles the browser measured are
kept bit for bit. A block can also be given as plain JSON lists, one per
column (``{"frame": [0, 1], "t_raf": [0.0, 16.7], …}``), which is converted to the same columns. Both are
checked by :func:`read_block`, which names the first bad field.

``in_phase`` (int32) is the frame's index within its phase, -1 outside trials: with the trial, the phase and the
compiled frame plan (named by ``plan_sha256`` in the session's compiled data) it says exactly what was on screen.
Blocks from runners that did not send it read as -1 (empty in CSV).

The database stores a block as one binary value (:meth:`FrameBlock.stored`): ``b"SLF2"``, the frame count and
the byte length of the labels (two little-endian uint32), the labels as UTF-8 JSON, then the eight columns'
bytes in the order of :data:`FRAME_COLUMNS`. Blocks stored as ``b"SLF1"`` (the first seven columns) still read.
"""

from __future__ import annotations

import base64
import binascii
import json
import math
import struct

import numpy as np

from ..errors import InputError

__all__ = ["FRAME_COLUMNS", "FrameBlock", "read_block", "MAX_FRAMES_PER_BLOCK"]

FRAME_COLUMNS = ("frame", "t_raf", "t_callback", "trial", "phase", "dropped", "drawn", "in_phase")
OPTIONAL_COLUMNS = ("in_phase",)
DTYPES = {"frame": "<u4", "t_raf": "<f8", "t_callback": "<f8", "trial": "<i4", "phase": "<u2", "dropped": "u1",
          "drawn": "<u2", "in_phase": "<i4"}
NO_LABEL = 65535
MAX_FRAMES_PER_BLOCK = 100_000  # far above a second at any refresh rate; bounds one request's work
MAX_LABEL_CHARS = 500
BITS = np.array(["0", "1"], dtype=object)
STORED_MAGIC = b"SLF2"
STORED_MAGIC_V1 = b"SLF1"
STORED_HEADER = struct.Struct("<4sII")
_DTYPES = tuple((name, np.dtype(DTYPES[name])) for name in FRAME_COLUMNS)
_sum, _min, _max = np.add.reduce, np.minimum.reduce, np.maximum.reduce
_all, _any = np.logical_and.reduce, np.logical_or.reduce


class FrameBlock:
    """One batch's frames as numpy columns plus the labels its ``phase`` and ``drawn`` codes point into."""

    def __init__(self, columns: dict[str, np.ndarray], labels: list[str]):
        self.columns = columns
        self.labels = labels

    def __len__(self) -> int:
        return int(self.columns["frame"].size)

    @property
    def first_frame(self) -> int:
        return int(self.columns["frame"][0])

    @property
    def last_frame(self) -> int:
        return int(self.columns["frame"][-1])

    @property
    def dropped(self) -> int:
        return int(np.count_nonzero(self.columns["dropped"]))

    def in_phase(self, name: str) -> np.ndarray:
        """Which frames are in the phase ``name`` (a boolean mask)."""
        return np.isin(self.columns["phase"], [i for i, label in enumerate(self.labels) if label == name])

    def text(self, column: str, labels=None, none=None) -> list:
        """A label column (``phase`` or ``drawn``) as its labels (or ``labels``, one per label), ``none`` where a
        frame has none."""
        table = np.array([*(self.labels if labels is None else labels), none], dtype=object)
        return table[np.minimum(self.columns[column], len(self.labels))].tolist()  # NO_LABEL reads as none

    def rows(self) -> list[tuple]:
        """The frames as ``(frame, t_raf, t_callback, trial, phase, dropped, drawn, in_phase)`` tuples."""
        c = self.columns
        trial = [None if t < 0 else t for t in c["trial"].tolist()]
        in_phase = [None if k < 0 else k for k in c["in_phase"].tolist()]
        return list(zip(c["frame"].tolist(), c["t_raf"].tolist(), c["t_callback"].tolist(), trial,
                        self.text("phase"), c["dropped"].tolist(), self.text("drawn"), in_phase))

    def csv(self) -> str:
        """The frames as CSV lines (no header), ``drawn`` quoted; each time as the shortest decimal that reads back
        as the same double."""
        c = self.columns
        quoted = [f'"{label}"' for label in self.labels]  # labels hold no quotes (checked on the way in)
        trials, trial = np.unique(c["trial"], return_inverse=True)  # a block spans a trial or two
        trials = np.array([str(t) if t >= 0 else "" for t in trials.tolist()], dtype=object)
        fields = zip(map(str, c["frame"].tolist()), map(repr, c["t_raf"].tolist()), map(repr, c["t_callback"].tolist()),
                     trials[trial].tolist(), self.text("phase", none=""), BITS[c["dropped"]].tolist(),
                     self.text("drawn", quoted, '""'),
                     [str(k) if k >= 0 else "" for k in c["in_phase"].tolist()])
        return "\n".join(map(",".join, fields)) + "\n"

    @classmethod
    def concatenate(cls, blocks: list["FrameBlock"]) -> "FrameBlock":
        """One block of several, in order, with one table of labels (to format many frames at once)."""
        if len(blocks) == 1:
            return blocks[0]
        index: dict[str, int] = {}
        remapped = {"phase": [], "drawn": []}
        for block in blocks:
            table = np.array([*(index.setdefault(label, len(index)) for label in block.labels), NO_LABEL],
                             dtype=DTYPES["phase"])
            for name in remapped:
                remapped[name].append(table[np.minimum(block.columns[name], len(block.labels))])
        columns = {name: np.concatenate(remapped[name]) if name in remapped else
                   np.concatenate([b.columns[name] for b in blocks]) for name in FRAME_COLUMNS}
        return cls(columns, list(index))

    def packed(self) -> dict:
        """The block in the packed form the runner sends (see the module docstring)."""
        body = {"count": len(self), "labels": self.labels}
        body.update((name, base64.b64encode(self.columns[name].tobytes()).decode("ascii")) for name in FRAME_COLUMNS)
        return body

    def stored(self) -> bytes:
        """The block as the one binary value the database keeps (see the module docstring)."""
        labels = json.dumps(self.labels, separators=(",", ":")).encode()
        return b"".join([STORED_HEADER.pack(STORED_MAGIC, len(self), len(labels)), labels,
                         *(self.columns[name].tobytes() for name in FRAME_COLUMNS)])

    @classmethod
    def from_stored(cls, data: bytes) -> "FrameBlock":
        """Read a stored block (it was checked when it was written)."""
        magic, count, size = STORED_HEADER.unpack_from(data)
        if magic not in (STORED_MAGIC, STORED_MAGIC_V1):
            raise ValueError("not a stored frame block")
        offset = STORED_HEADER.size + size
        labels = json.loads(data[STORED_HEADER.size:offset])
        columns = {}
        for name in FRAME_COLUMNS:
            if magic == STORED_MAGIC_V1 and name in OPTIONAL_COLUMNS:
                columns[name] = np.full(count, -1, dtype=DTYPES[name])
                continue
            columns[name] = np.frombuffer(data, dtype=DTYPES[name], count=count, offset=offset)
            offset += columns[name].nbytes
        return cls(columns, labels)


def _check_label(label, field: str) -> None:
    if not isinstance(label, str) or len(label) > MAX_LABEL_CHARS or '"' in label or "\n" in label:
        raise InputError(f"must be text of at most {MAX_LABEL_CHARS} characters without quotes or line breaks",
                         field=field)


def _labels(value) -> list[str]:
    if not isinstance(value, list) or len(value) >= NO_LABEL:
        raise InputError(f"labels must be a list of fewer than {NO_LABEL} strings", field="frames.labels")
    for i, label in enumerate(value):
        _check_label(label, f"frames.labels[{i}]")
    return value


def _unpack(block: dict) -> tuple[dict, list[str]]:
    count = block.get("count")
    if type(count) is not int or not 0 < count <= MAX_FRAMES_PER_BLOCK:
        raise InputError(f"count must be a whole number of frames from 1 to {MAX_FRAMES_PER_BLOCK:,}",
                         field="frames.count")
    labels = _labels(block.get("labels"))
    columns = {}
    for name, dtype in _DTYPES:
        text = block.get(name)
        if text is None and name in OPTIONAL_COLUMNS:
            columns[name] = np.full(count, -1, dtype=dtype)  # from a runner that did not send it
            continue
        try:  # strict: only the base64 alphabet with correct padding (a str must be ASCII)
            data = binascii.a2b_base64(text or "", strict_mode=True)
        except (binascii.Error, TypeError, ValueError):
            raise InputError("must be base64 text of the column's little-endian values", field=f"frames.{name}") \
                from None
        if len(data) != count * dtype.itemsize:
            raise InputError(f"holds {len(data)} bytes; {count} frames of {dtype.name} need {count * dtype.itemsize}",
                             field=f"frames.{name}")
        columns[name] = np.frombuffer(data, dtype=dtype)
    return columns, labels


def _from_lists(block: dict) -> tuple[dict, list[str]]:
    lists = {name: block.get(name) for name in FRAME_COLUMNS}
    for name in OPTIONAL_COLUMNS:
        if lists[name] is None and isinstance(lists["frame"], list):
            lists[name] = [-1] * len(lists["frame"])
    missing = [name for name, values in lists.items() if not isinstance(values, list)]
    if missing:
        raise InputError(f"frames must be packed (with count and labels) or an object of equal-length lists: "
                         f"{', '.join(FRAME_COLUMNS)}", field=f"frames.{missing[0]}")
    count = len(lists["frame"])
    if not 0 < count <= MAX_FRAMES_PER_BLOCK:
        raise InputError(f"a batch holds 1 to {MAX_FRAMES_PER_BLOCK:,} frames", field="frames.frame")
    for name, values in lists.items():
        if len(values) != count:
            raise InputError(f"has {len(values)} values for {count} frames", field=f"frames.{name}")
    labels: dict[str, int] = {}

    def codes(name):
        out = []
        for i, value in enumerate(lists[name]):
            if value is None:
                out.append(NO_LABEL)
            elif isinstance(value, str) and value in labels:
                out.append(labels[value])
            else:
                _check_label(value, f"frames.{name}[{i}]")
                out.append(labels.setdefault(value, len(labels)))
        return out

    def numbers(name, kinds, none=None):
        values = lists[name]
        if none is not None:
            values = [none if v is None else v for v in values]
        bad = next((i for i, v in enumerate(values) if type(v) not in kinds), None)
        if bad is not None:
            raise InputError("must be a number" if float in kinds else "must be a whole number",
                             field=f"frames.{name}[{bad}]")
        return values

    columns = {"frame": numbers("frame", (int,)), "t_raf": numbers("t_raf", (int, float)),
               "t_callback": numbers("t_callback", (int, float)), "trial": numbers("trial", (int,), none=-1),
               "dropped": [int(v) for v in numbers("dropped", (int, bool))],
               "phase": codes("phase"), "drawn": codes("drawn"),
               "in_phase": numbers("in_phase", (int,), none=-1)}
    if len(labels) >= NO_LABEL:
        raise InputError(f"a batch can hold fewer than {NO_LABEL} different phase and drawn texts", field="frames.drawn")
    arrays = {}
    for name, values in columns.items():
        info = np.iinfo(DTYPES[name]) if np.dtype(DTYPES[name]).kind in "iu" else None
        if info is not None and not all(info.min <= v <= info.max for v in (min(values), max(values))):
            raise InputError(f"values must lie in {info.min}–{info.max}", field=f"frames.{name}")
        arrays[name] = np.asarray(values, dtype=DTYPES[name])
    return arrays, list(labels)


def read_block(block) -> FrameBlock:
    """Check a batch's ``frames`` (packed or as lists) and return it as a :class:`FrameBlock`.

    Raises
    ------
    InputError
        Naming the first bad field: a column of the wrong length, a time that is not a finite number, frame
        numbers that do not increase, a label index with no label, a trial below -1.
    """
    if not isinstance(block, dict):
        raise InputError("frames must be an object", field="frames")
    columns, labels = _unpack(block) if "count" in block else _from_lists(block)
    # The checks call the ufuncs' reductions directly: on a second of frames the array methods' Python wrappers
    # cost more than the work. A sum is finite only if every value is (frame times are far below overflow).
    for name in ("t_raf", "t_callback"):
        if not math.isfinite(_sum(columns[name])):
            raise InputError("frame times must be finite numbers (ms)", field=f"frames.{name}")
    frame = columns["frame"]
    if frame.size > 1 and not _all(np.greater(frame[1:], frame[:-1])):
        raise InputError("frame numbers must increase within a batch", field="frames.frame")
    if _min(columns["trial"]) < -1:
        raise InputError("a trial index is a whole number from 0, or -1 (null) for none", field="frames.trial")
    if _min(columns["in_phase"]) < -1:
        raise InputError("a frame's index within its phase is a whole number from 0, or -1 (null) outside trials",
                         field="frames.in_phase")
    if _max(columns["dropped"]) > 1:
        raise InputError("dropped is 0 or 1", field="frames.dropped")
    for name in ("phase", "drawn"):
        codes = columns[name]
        if _max(codes) >= len(labels) and _any((codes >= len(labels)) & (codes != NO_LABEL)):
            raise InputError(f"points past the {len(labels)} labels", field=f"frames.{name}")
    return FrameBlock(columns, labels)

