"""``stimlab export``: a session's or a whole study's data for analysis, from the data folder.

The formats and their content come from :mod:`stimlab.sessions.export` (the web app's downloads use the same
dispatch); this module only chooses the session or study and writes the files.
"""

from __future__ import annotations

import io
import zipfile
from pathlib import Path

from ..errors import InputError
from .arguments import data_folder, output_path, text, whole

SESSION_HELP = ("csv: one row per trial (+ data dictionary and provenance beside it); frames: the frame log (+ the "
                "same sidecars); json: everything; summary: per-condition measures; bids: a BIDS dataset (a folder, "
                "or a .zip); dictionary, frames-dictionary, provenance: one sidecar alone")
STUDY_HELP = "with --study: csv, dictionary, summary, bids (folder or .zip), parquet (folder or .zip)"


def register(sub, numbers) -> None:
    from ..sessions.export import SESSION_FORMATS, STUDY_FORMATS
    from ..sessions.store import default_data_dir

    export = sub.add_parser("export", help="export a session or a whole study: trials, frames, BIDS, Parquet, JSON")
    export.add_argument("session", type=whole(1, 2**63 - 1), nargs="?", metavar="SESSION",
                        help="session number, 1 or more (from the Sessions page); leave out with --study")
    export.add_argument("--study", metavar="PROTOCOL", type=text("the protocol file name, e.g. afterimage_null.json"),
                        help="export every session of this protocol instead: its file name in the data folder, "
                             "e.g. afterimage_null.json")
    export.add_argument("--format", choices=sorted(set(SESSION_FORMATS) | set(STUDY_FORMATS)), default="csv",
                        help=f"{SESSION_HELP}; {STUDY_HELP} (default csv)")
    export.add_argument("-o", "--output", required=True, metavar="PATH", type=output_path("export", folder_ok=True),
                        help="file (or, for bids and parquet, folder) to write; its folder must exist")
    export.add_argument("--data", type=data_folder(), default=None, metavar="DIR",
                        help=f"the data folder 'stimlab serve' uses (default {default_data_dir()})")
    export.set_defaults(run=run, options={"protocol": "--study", "name": "--study", "format": "--format"})


def _write(exported, output: Path) -> list[Path]:
    content = exported.content
    if exported.mimetype == "application/zip" and output.suffix != ".zip":
        written = []
        with zipfile.ZipFile(io.BytesIO(content)) as archive:
            for name in archive.namelist():
                target = output / name.split("/", 1)[1]
                target.parent.mkdir(parents=True, exist_ok=True)
                target.write_bytes(archive.read(name))
                written.append(target)
        return written
    if isinstance(content, bytes):
        output.write_bytes(content)
    elif isinstance(content, str):
        output.write_text(content, encoding="utf-8")
    else:
        with output.open("w", encoding="utf-8", newline="") as out:
            for chunk in content:
                out.write(chunk)
    return [output]


def run(args) -> int:
    from ..sessions.export import SESSION_FORMATS, SIDECARS, STUDY_FORMATS, session_export, study_export
    from ..sessions.ingest import get_session
    from ..sessions.store import Store, default_data_dir, safe_protocol_name

    if (args.session is None) == (args.study is None):
        raise InputError("give either a SESSION number or --study PROTOCOL (not both)", field="SESSION")
    formats = STUDY_FORMATS if args.study is not None else SESSION_FORMATS
    if args.format not in formats:
        raise InputError(f"{'a study' if args.study is not None else 'a session'} exports as "
                         f"{', '.join(formats)}", field="--format")
    output = Path(args.output)
    folder = args.format in ("bids", "parquet") and output.suffix != ".zip"
    if output.is_dir() and not folder:
        raise InputError(f"{output} is a folder; give a file name inside it", field="-o/--output")
    if output.exists() and not output.is_dir() and folder:
        raise InputError(f"{output} is a file; {args.format} writes a folder: give a new folder name, or a name "
                         "ending .zip", field="-o/--output")
    data = args.data or default_data_dir()
    if not (Path(data) / "stimlab.sqlite").is_file():
        raise InputError(f"no stimlab database in {data}; give the folder 'stimlab serve' uses with --data",
                         field="--data")
    store = Store(data)
    db = store.connect()
    if args.study is not None:
        written = _write(study_export(db, store, safe_protocol_name(args.study), args.format), output)
    else:
        session = get_session(db, args.session)
        if session is None:
            raise InputError(f"there is no session {args.session} in {data}; the Sessions page lists the session "
                             "numbers", field="SESSION")
        written = _write(session_export(db, store, session, args.format), output)
        stem = output.with_suffix("")
        for sidecar in SIDECARS.get(args.format, ()):
            suffix = "_provenance.json" if sidecar == "provenance" else ".json"
            written += _write(session_export(db, store, session, sidecar), stem.with_name(stem.name + suffix))
    print(f"wrote {len(written)} file{'s' if len(written) != 1 else ''}: " + ", ".join(map(str, written[:6]))
          + (" …" if len(written) > 6 else ""))
    return 0
