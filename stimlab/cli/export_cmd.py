"""``stimlab export``: a session's data for analysis, from the data folder."""

from __future__ import annotations

import json
from pathlib import Path

from ..errors import InputError
from .arguments import whole


def register(sub, numbers) -> None:
    from ..sessions.store import default_data_dir

    export = sub.add_parser("export", help="export a session: trials CSV, everything as JSON, BIDS events")
    export.add_argument("session", type=whole(1, 2**63 - 1), metavar="SESSION", help="session number (from the Sessions page)")
    export.add_argument("--format", choices=("csv", "json", "bids", "frames"), default="csv",
                        help="csv: one row per trial; json: everything; bids: *_events.tsv and its .json "
                             "sidecar; frames: the frame log (default csv)")
    export.add_argument("-o", "--output", required=True, metavar="PATH", help="file to write")
    export.add_argument("--data", type=Path, default=None, metavar="DIR",
                        help=f"data folder (default {default_data_dir()})")
    export.set_defaults(run=run)


def run(args) -> int:
    from ..sessions.export import (
        BIDS_SIDECAR,
        bids_events,
        events_tsv,
        frames_csv,
        rows_to_csv,
        session_json,
        trial_rows,
    )
    from ..sessions.ingest import get_session
    from ..sessions.store import Store, default_data_dir

    data = args.data or default_data_dir()
    if not (Path(data) / "stimlab.sqlite").exists():
        raise InputError("no stimlab database here; give the folder 'stimlab serve' uses with --data",
                         file=str(data), field="--data")
    store = Store(data)
    db = store.connect()
    session = get_session(db, args.session)
    if session is None:
        raise InputError(f"there is no session {args.session} in {data}", field="SESSION")
    output = Path(args.output)
    output.parent.mkdir(parents=True, exist_ok=True)
    if args.format == "csv":
        rows = trial_rows(db, session)
        output.write_text(rows_to_csv(rows), encoding="utf-8")
        print(f"wrote {output}: {len(rows)} trials")
    elif args.format == "json":
        profile = store.display(db, session["display_id"])["profile"]
        output.write_text(json.dumps(session_json(db, session, profile), indent=1), encoding="utf-8")
        print(f"wrote {output}")
    elif args.format == "bids":
        if not output.name.endswith("_events.tsv"):
            raise InputError("BIDS event files are named *_events.tsv, e.g. sub-P01_task-null_events.tsv",
                             field="--output")
        rows = bids_events(db, session)
        output.write_text(events_tsv(rows), encoding="utf-8")
        sidecar = output.with_name(output.name[: -len(".tsv")] + ".json")
        sidecar.write_text(json.dumps(BIDS_SIDECAR, indent=2), encoding="utf-8")
        print(f"wrote {output} ({len(rows)} events) and {sidecar}")
    else:
        with output.open("w", encoding="utf-8") as out:
            count = frames_csv(db, session["id"], out)
        print(f"wrote {output}: {count} frames")
    return 0
