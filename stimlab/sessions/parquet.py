"""A whole study as a Parquet dataset, partitioned by participant and session (Hive-style folders), readable as it
is by DuckDB, Spark, pandas or polars::

    <folder>/trials/participant=<code>/session=<id>/part-0.parquet     the trial table
    <folder>/frames/participant=<code>/session=<id>/part-0.parquet     the frame table (exact doubles)
    <folder>/sessions.parquet                                          one row of provenance per session
    <folder>/trials.json, frames.json                                  the data dictionaries

``participant`` and ``session`` live in the folder names, not in the files (the readers add them back). With DuckDB:

    import duckdb
    trials = "read_parquet('study/trials/*/*/*.parquet', hive_partitioning = true, union_by_name = true)"
    duckdb.sql(f"SELECT participant, condition, avg(response_dkl_lm) FROM {trials} GROUP BY ALL").df()

and with pandas: ``pandas.read_parquet("study/trials")``.
"""

from __future__ import annotations

import json
import re
from pathlib import Path

import numpy as np
import pyarrow as pa
import pyarrow.parquet as pq

from .dictionary import dictionary
from .frame_table import TEXT_COLUMNS, frame_chunks, frame_columns
from .provenance import provenance
from .trials import trial_rows

__all__ = ["write_study_parquet", "write_frames_parquet", "partition_value"]

PARTITION = ("participant", "session")


def partition_value(text: str) -> str:
    """A participant code safe as a folder name (letters, digits, '-' and '_'; others become '_')."""
    return re.sub(r"[^A-Za-z0-9_-]", "_", str(text)) or "_"


def _trial_table(rows: list[dict]) -> pa.Table:
    columns: list[str] = []
    for row in rows:
        columns += [k for k in row if k not in columns and k not in PARTITION]
    return pa.table({c: pa.array([row.get(c) for row in rows]) for c in columns})


def _frame_table(block, device: np.ndarray, columns: list[str]) -> pa.Table:
    """One chunk as an Arrow table straight from the stored columns: text columns as dictionary arrays over the
    block's labels (no Python objects per frame), whole-number columns with -1 for none as nulls."""
    arrays = {}
    for name in columns:
        if name in TEXT_COLUMNS:
            codes = block.columns[name].astype(np.int32)
            none = codes >= len(block.labels)
            indices = pa.array(np.where(none, 0, codes), mask=none)
            arrays[name] = pa.DictionaryArray.from_arrays(indices, pa.array(block.labels or [""], type=pa.string()))
        elif name.startswith("drawn_"):
            values = device[:, columns.index(name) - columns.index(next(c for c in columns if c.startswith("drawn_")))]
            arrays[name] = pa.array(values, mask=values < 0)
        elif name == "trial":
            values = block.columns[name]
            arrays[name] = pa.array(values, mask=values < 0)
        else:
            arrays[name] = pa.array(block.columns[name])
    return pa.table(arrays)


def _partition(folder: Path, table: str, session: dict) -> Path:
    path = folder / table / f"participant={partition_value(session['participant'])}" / f"session={session['id']}"
    path.mkdir(parents=True, exist_ok=True)
    return path / "part-0.parquet"


def write_frames_parquet(db, session: dict, path: Path) -> int:
    """Write one session's frame table as one Parquet file (a row group per chunk); return the frame count."""
    writer, count = None, 0
    columns = frame_columns(session["compiled"])
    for block, device in frame_chunks(db, session):
        batch = _frame_table(block, device, columns)
        if writer is None:
            # dictionary encoding only where it pays (the text columns): on times and device levels it costs twice the
            # write time for no smaller file
            writer = pq.ParquetWriter(path, batch.schema, compression="zstd", use_dictionary=list(TEXT_COLUMNS))
        writer.write_table(batch)
        count += batch.num_rows
    if writer is not None:
        writer.close()
    return count


def write_study_parquet(db, store, sessions: list[dict], folder: Path) -> dict:
    """Write the Parquet dataset of ``sessions`` into ``folder``; return the row counts written."""
    folder = Path(folder)
    counts = {"sessions": 0, "trials": 0, "frames": 0}
    described: dict[str, list] = {"trials": [], "frames": []}
    records = []
    for session in sessions:
        rows = trial_rows(db, session)
        if rows:
            table = _trial_table(rows)
            pq.write_table(table, _partition(folder, "trials", session), compression="zstd")
            described["trials"] += [c for c in table.column_names if c not in described["trials"]]
            counts["trials"] += table.num_rows
        counts["frames"] += write_frames_parquet(db, session, _partition(folder, "frames", session))
        described["frames"] = described["frames"] or frame_columns(session["compiled"])
        info = provenance(db, session)
        records.append({"participant": session["participant"], "session": session["id"],
                        "status": session["status"], "end_reason": session.get("end_reason"),
                        "started_at": session["started_at"],
                        "protocol_sha256": info["protocol"]["sha256"], "display_sha256": info["display_profile"]["sha256"],
                        "display_version": info["display_profile"]["version"], "observer": info["observer"]["key"],
                        "software_version": info["session"]["software_version"],
                        "dry_run": info["session"]["dry_run"], "provenance": json.dumps(info)})
        counts["sessions"] += 1
    if records:
        pq.write_table(pa.Table.from_pylist(records), folder / "sessions.parquet")
    for name, columns in described.items():
        (folder / f"{name}.json").write_text(json.dumps(dictionary(columns), indent=1, ensure_ascii=False),
                                             encoding="utf-8")
    return counts
