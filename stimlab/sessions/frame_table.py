"""The frame log as a typed table: one column per stored number, and the drawn device levels split into one
integer column per stimulus and channel (``drawn_<stimulus>_device_r`` …) instead of ``"632,794,770"`` text.

What the runner logs as ``drawn`` (static/js/runner/schedule.js, screens.js), and how each is read:

- a trial phase: the device levels of each of the phase's stimuli, in the phase's order, ``;``-separated (a
  patterned item, grating or Gaussian, as ``patch``: no single level). The background is drawn under them on every
  frame but not logged, so its levels are the compiled background's (``data["background"]["device"]``);
- ``settle`` (after entering full screen): the background alone;
- the screens between trials (``pre_adapt``, ``break``): the background first, then ``text r,g,b`` and
  ``fixation r,g,b``;
- ``pause``: nothing is drawn (the column is empty).

Times stay the browser's exact doubles (written as the shortest decimal that reads back as the same double).
Columns are read from :data:`~stimlab.sessions.frame_log.FRAME_COLUMNS`, so a column added there flows through.
"""

from __future__ import annotations

import numpy as np

from .frame_log import FRAME_COLUMNS, FrameBlock
from .ingest import frame_blocks
from .trials import CHANNELS

__all__ = ["frame_columns", "frame_chunks", "frame_arrays", "frames_csv_chunks", "CHUNK_BLOCKS", "TEXT_COLUMNS"]

CHUNK_BLOCKS = 64  # stored blocks handled together: about a minute of frames, a few MB at most
TEXT_COLUMNS = ("phase", "drawn")
NONE = -1


def _drawn_names(data: dict) -> list[str]:
    names = list(data["conditions"][0]["stimuli"]) if data["conditions"] else []
    return names + ["background"]


def frame_columns(data: dict) -> list[str]:
    """The frame table's columns for a compiled protocol, in order."""
    plain = [c for c in FRAME_COLUMNS if c != "drawn"]
    return plain + [f"drawn_{n}_device_{c}" for n in _drawn_names(data) for c in CHANNELS]


def _phase_stimuli(data: dict) -> dict[str, list[str]]:
    """The stimuli each trial phase logs, in order (the background, drawn under them, is not logged)."""
    return {p["phase"]: list(p.get("stimuli") or []) for p in data["schedules"]["first"] + data["schedules"]["repeat"]}


def _device_text(item: str) -> list[int] | None:
    parts = item.split(",")
    return [int(v) for v in parts] if len(parts) == 3 and all(v.strip().isdigit() for v in parts) else None


def _levels(block: FrameBlock, data: dict) -> np.ndarray:
    """(frames, 3 · stimuli) device levels, -1 where a stimulus is not drawn or is patterned."""
    names = _drawn_names(data)
    where = {n: i for i, n in enumerate(names)}
    stimuli = _phase_stimuli(data)
    n_labels = len(block.labels)
    phase = np.minimum(block.columns["phase"].astype(np.int64), n_labels)
    drawn = np.minimum(block.columns["drawn"].astype(np.int64), n_labels)
    pairs, inverse = np.unique(phase * (n_labels + 1) + drawn, return_inverse=True)
    labels = [*block.labels, None]
    table = np.full((pairs.size, 3 * len(names)), NONE, dtype=np.int32)
    background = 3 * where["background"]
    for row, pair in enumerate(pairs.tolist()):
        phase_label, drawn_label = labels[pair // (n_labels + 1)], labels[pair % (n_labels + 1)]
        if drawn_label is None:  # a paused frame: nothing drawn
            continue
        if phase_label in stimuli:  # a trial phase: its stimuli over the compiled background
            table[row, background: background + 3] = data["background"]["device"]
            for name, item in zip(stimuli[phase_label], drawn_label.split(";") if drawn_label else []):
                if name in where and (values := _device_text(item)) is not None:
                    table[row, 3 * where[name]: 3 * where[name] + 3] = values
        elif (values := _device_text(drawn_label.split(";")[0])) is not None:  # settle, screens: background first
            table[row, background: background + 3] = values
    return table[inverse.ravel()]


def frame_chunks(db, session: dict):
    """The frame table in chunks of about a minute, as ``(block, device)``: the stored columns of the frames
    (:class:`~stimlab.sessions.frame_log.FrameBlock`, text columns as codes into ``block.labels``) and their drawn
    device levels, a (frames, 3 · stimuli) integer array with -1 where a stimulus is not drawn (columns in the
    order of :func:`frame_columns`)."""
    data = session["compiled"]
    chunk: list = []
    for block in frame_blocks(db, session["id"]):
        chunk.append(block)
        if len(chunk) == CHUNK_BLOCKS:
            merged = FrameBlock.concatenate(chunk)
            yield merged, _levels(merged, data)
            chunk = []
    if chunk:
        merged = FrameBlock.concatenate(chunk)
        yield merged, _levels(merged, data)


def frame_arrays(block: FrameBlock, device: np.ndarray, columns: list[str]) -> dict:
    """One chunk as ``{column: numpy array}``: text columns as object arrays (None for none)."""
    out = {name: (np.array(block.text(name), dtype=object) if name in TEXT_COLUMNS else block.columns[name])
           for name in FRAME_COLUMNS if name != "drawn"}
    drawn = [c for c in columns if c.startswith("drawn_")]
    return out | {name: device[:, i] for i, name in enumerate(drawn)}


def _text(values: np.ndarray, name: str) -> list[str]:
    if values.dtype == object:
        return ["" if v is None else str(v) for v in values.tolist()]
    if values.dtype.kind == "f":
        return list(map(repr, values.tolist()))
    if name == "trial" or name.startswith("drawn_"):
        return [str(v) if v >= 0 else "" for v in values.tolist()]
    return list(map(str, values.tolist()))


def frames_csv_chunks(db, session: dict):
    """The frame table as CSV text in chunks (the header, then about a minute of frames each): memory stays flat.
    Text cells never hold commas or quotes (phase names are checked on the way in)."""
    columns = frame_columns(session["compiled"])
    yield ",".join(columns) + "\n"
    for block, device in frame_chunks(db, session):
        fields = [_text(values, name) for name, values in frame_arrays(block, device, columns).items()]
        yield "\n".join(map(",".join, zip(*fields))) + "\n"
