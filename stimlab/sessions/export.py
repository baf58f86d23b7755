"""Session and study exports, one dispatch for the ``stimlab export`` command and the web routes.

Each format is one file (:class:`ExportFile`); a table comes with a JSON data dictionary and a provenance
sidecar (:data:`SIDECARS`). Tables: the trial table (:mod:`.trials`), the frame table (:mod:`.frame_table`);
archives: everything as JSON, a BIDS behavioural dataset (:mod:`.bids`, zipped), a whole study as Parquet
(:mod:`.parquet`, zipped); and the session summary (:mod:`.summary`) as JSON. No web import.
"""

from __future__ import annotations

import csv
import io
import json
import zipfile
from dataclasses import dataclass

from ..errors import InputError
from ..version import __version__
from .bids import bids_events, bids_files, tsv
from .dictionary import dictionary
from .frame_table import frame_columns, frames_csv_chunks
from .ingest import iter_frames
from .provenance import provenance
from .timing import timing
from .trials import response_LMS, session_events, trial_rows

__all__ = ["ExportFile", "SESSION_FORMATS", "STUDY_FORMATS", "SIDECARS", "session_export", "study_export",
           "study_sessions", "provenance", "rows_to_csv", "trial_rows", "timing", "session_json", "bids_events",
           "events_tsv", "frames_csv", "frames_csv_chunks", "response_LMS"]

SESSION_FORMATS = {
    "csv": "trials (CSV)", "dictionary": "trials data dictionary (JSON)", "frames": "frame log (CSV)",
    "frames-dictionary": "frame log data dictionary (JSON)", "provenance": "provenance (JSON)",
    "bids": "BIDS dataset (zip)", "summary": "summary (JSON)", "json": "everything (JSON)",
}
STUDY_FORMATS = {"csv": "all trials (CSV)", "dictionary": "trials data dictionary (JSON)",
                 "summary": "pooled summary (JSON)", "bids": "BIDS dataset (zip)", "parquet": "Parquet dataset (zip)"}
SIDECARS = {"csv": ("dictionary", "provenance"), "frames": ("frames-dictionary", "provenance")}


@dataclass
class ExportFile:
    """One exported file: its name, media type and content (text, bytes, or an iterator of text chunks)."""

    name: str
    mimetype: str
    content: object


def rows_to_csv(rows: list[dict]) -> str:
    """Rows as CSV with the union of their columns; None is an empty cell, booleans True/False."""
    columns = []
    for row in rows:
        columns += [k for k in row if k not in columns]
    out = io.StringIO()
    writer = csv.DictWriter(out, fieldnames=columns, lineterminator="\n")
    writer.writeheader()
    writer.writerows({k: ("" if v is None else v) for k, v in row.items()} for row in rows)
    return out.getvalue()


def _columns(rows: list[dict]) -> list[str]:
    columns: list[str] = []
    for row in rows:
        columns += [k for k in row if k not in columns]
    return columns


def session_json(db, session: dict, profile: dict) -> dict:
    """Everything about a session, for archiving: protocol, compiled trials, profile, logs, checks."""
    frames = [list(f) for f in iter_frames(db, session["id"])]
    return {"stimlab_session_export": 1, "software_version": __version__, "exporter_version": __version__,
            "session": {k: session[k] for k in ("id", "participant", "status", "started_at", "ended_at",
                                                "protocol_file", "protocol_sha256", "software_version")}
            | {"end_reason": session.get("end_reason"), "dry_run": session.get("dry_run")},
            "provenance": provenance(db, session),
            "acknowledgement": session["acknowledgement"], "checks": session["checks"],
            "observer": session["compiled"]["observer"], "display_profile": profile,
            "display_sha256": profile["sha256"], "compiled": session["compiled"],
            "events": session_events(db, session["id"]),
            "frames": {"columns": ["frame", "t_raf", "t_callback", "trial", "phase", "dropped", "drawn"],
                       "rows": frames},
            "trials": trial_rows(db, session), "timing": timing(db, session)}


def events_tsv(rows: list[dict]) -> str:
    """BIDS events as TSV text (see :func:`stimlab.sessions.bids.bids_events`)."""
    return tsv(rows, _columns([{"onset": None, "duration": None, "trial_type": None}] + rows))


def frames_csv(db, session, out) -> int:
    """Write the frame table of ``session`` (a session, or its number) as CSV to a text stream; return the frame
    count."""
    if isinstance(session, int):
        from .ingest import get_session

        session = get_session(db, session)
    lines = 0
    for text in frames_csv_chunks(db, session):
        out.write(text)
        lines += text.count("\n")
    return lines - 1


def _zip(files: dict[str, bytes], folder: str) -> bytes:
    out = io.BytesIO()
    with zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as archive:
        for path, content in sorted(files.items()):
            archive.writestr(f"{folder}/{path}", content)
    return out.getvalue()


def _json(value) -> str:
    return json.dumps(value, indent=1, ensure_ascii=False, default=str)


def session_stem(session: dict) -> str:
    """The start of every export file name of a session; a dry run says so in it."""
    return f"session-{session['id']}_{session['participant']}" + ("_dry-run" if session.get("dry_run") else "")


def session_export(db, store, session: dict, fmt: str) -> ExportFile:
    """One export of one session in format ``fmt`` (a key of :data:`SESSION_FORMATS`)."""
    from .summary import session_summary

    stem = session_stem(session)
    if fmt == "csv":
        return ExportFile(f"{stem}_trials.csv", "text/csv", rows_to_csv(trial_rows(db, session)))
    if fmt == "dictionary":
        return ExportFile(f"{stem}_trials.json", "application/json",
                          _json(dictionary(_columns(trial_rows(db, session)))))
    if fmt == "frames":  # streamed: an hour's log is tens of MB
        return ExportFile(f"{stem}_frames.csv", "text/csv", frames_csv_chunks(db, session))
    if fmt == "frames-dictionary":
        return ExportFile(f"{stem}_frames.json", "application/json",
                          _json(dictionary(frame_columns(session["compiled"]))))
    if fmt == "provenance":
        return ExportFile(f"{stem}_provenance.json", "application/json", _json(provenance(db, session)))
    if fmt == "summary":
        summary = session_summary(db, session)
        summary.pop("rows")
        return ExportFile(f"{stem}_summary.json", "application/json", _json(summary))
    if fmt == "json":
        profile = store.display(db, session["display_id"])["profile"]
        return ExportFile(f"{stem}.json", "application/json", _json(session_json(db, session, profile)))
    if fmt == "bids":
        name = f"{session['compiled']['protocol']['title']}: session {session['id']}"
        return ExportFile(f"{stem}_bids.zip", "application/zip",
                          _zip(bids_files(db, [session], name=name), f"{stem}_bids"))
    raise InputError(f"unknown export format {fmt!r}; choose one of: {', '.join(SESSION_FORMATS)}", field="format")


def study_sessions(db, protocol_file: str, *, include_dry_runs: bool = False) -> list[dict]:
    """Every session of one protocol file, in start order (dry runs left out unless asked for)."""
    from .ingest import get_session

    ids = [r[0] for r in db.execute("SELECT id FROM sessions WHERE protocol_file = ? ORDER BY started_at, id",
                                    (protocol_file,))]
    sessions = [get_session(db, i) for i in ids]
    if not include_dry_runs:
        sessions = [s for s in sessions if not (s.get("dry_run") or s["compiled"].get("dry_run"))]
    return sessions


def no_study_message(db, protocol_file: str) -> str:
    """Why a protocol has no study yet: no sessions at all, or only dry runs (which analysis leaves out)."""
    dry = len(study_sessions(db, protocol_file, include_dry_runs=True))
    if dry:
        return (f"the {dry} session{'s' if dry != 1 else ''} of {protocol_file!r} so far "
                f"{'are dry runs' if dry != 1 else 'is a dry run'}, which analysis leaves out; a study page needs "
                "a real session")
    return f"there are no sessions of {protocol_file!r} yet; run the protocol first"


def study_export(db, store, protocol_file: str, fmt: str) -> ExportFile:
    """One export of a whole study (every session of ``protocol_file``) in ``fmt`` (a key of STUDY_FORMATS)."""
    from .study import study_summary

    sessions = study_sessions(db, protocol_file)
    if not sessions:
        raise InputError(no_study_message(db, protocol_file), field="protocol")
    stem = f"study_{protocol_file.removesuffix('.json')}"
    if fmt in ("csv", "dictionary"):
        rows = [row for s in sessions for row in trial_rows(db, s)]
        if fmt == "csv":
            return ExportFile(f"{stem}_trials.csv", "text/csv", rows_to_csv(rows))
        return ExportFile(f"{stem}_trials.json", "application/json", _json(dictionary(_columns(rows))))
    if fmt == "summary":
        summary = study_summary(db, protocol_file, sessions)
        return ExportFile(f"{stem}_summary.json", "application/json", _json(summary))
    if fmt == "bids":
        name = sessions[0]["compiled"]["protocol"]["title"]
        return ExportFile(f"{stem}_bids.zip", "application/zip", _zip(bids_files(db, sessions, name=name),
                                                                      f"{stem}_bids"))
    if fmt == "parquet":
        import tempfile
        from pathlib import Path

        from .parquet import write_study_parquet

        with tempfile.TemporaryDirectory() as folder:
            write_study_parquet(db, store, sessions, Path(folder))
            files = {str(p.relative_to(folder)): p.read_bytes() for p in sorted(Path(folder).rglob("*")) if p.is_file()}
        return ExportFile(f"{stem}_parquet.zip", "application/zip", _zip(files, f"{stem}_parquet"))
    raise InputError(f"unknown study export format {fmt!r}; choose one of: {', '.join(STUDY_FORMATS)}",
                     field="format")
