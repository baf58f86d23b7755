"""``stimlab audit`` and ``stimlab compile``: check a protocol on a display before anyone runs it."""

from __future__ import annotations

import json
from pathlib import Path

from ..audit.preflight import KINDS, audit_protocol
from ..errors import InputError
from ..experiment.compile import compile_protocol
from ..experiment.protocol import load_protocol
from ..profiles.profile import DEFAULT_MAX_AGE_DAYS, load_profile
from ..sessions.observers import ADJUSTED_PREFIX, observer_for_protocol
from ..sessions.store import Store, default_data_dir
from .arguments import MAX_PARTICIPANT, data_folder, input_file, output_path, participant, whole
from .output import print_json

HEADINGS = {"display": "Display", "gamut": "Gamut", "headroom": "Headroom", "bit_depth": "Bit depth",
            "timing": "Timing", "prediction": "Predicted after-image / induction", "rods": "Rod intrusion",
            "photosensitivity": "Photosensitivity", "geometry": "Geometry"}


def _common(parser) -> None:
    parser.add_argument("protocol", metavar="PROTOCOL.json", type=input_file("protocol file"),
                        help="a protocol file (format in protocols/README.md)")
    parser.add_argument("--display", required=True, metavar="PROFILE.json", type=input_file("display profile"),
                        help="display profile, from 'stimlab display build' or the web app")
    parser.add_argument("--participant", type=participant, default=1, metavar="N|CODE",
                        help=f"participant number 1 to {MAX_PARTICIPANT:,}, or a code such as P07 whose last digits "
                             "give the number as on the Run page; chooses the Latin-square row (default 1)")
    parser.add_argument("--seed", type=whole(0, 2**32 - 1), metavar="N",
                        help="seed for the trial order, 0 to 4294967295 (default: the protocol's own)")
    parser.add_argument("--data", metavar="DIR", type=data_folder(),
                        help="the data folder of 'stimlab serve', for protocols whose observer is "
                             "adjusted:<participant> (default ~/.local/share/stimlab)")
    parser.set_defaults(options={"size_cm": "--display", "size_px": "--display"})


def register(sub, numbers) -> None:
    audit = sub.add_parser("audit", help="check every stimulus, phase and trial of a protocol on a display")
    _common(audit)
    audit.add_argument("--max-age-days", type=whole(0, 100_000), default=DEFAULT_MAX_AGE_DAYS, metavar="DAYS",
                       help=f"warn when the profile is older than this many days (default {DEFAULT_MAX_AGE_DAYS})")
    audit.add_argument("--all", action="store_true", help="also list the informational findings")
    audit.add_argument("--json", action="store_true", help="print the findings as JSON")
    audit.set_defaults(run=run_audit)

    compile_ = sub.add_parser("compile", help="compile a protocol to frames, pixels and device levels")
    _common(compile_)
    compile_.add_argument("-o", "--output", required=True, metavar="COMPILED.json", type=output_path("compiled file"),
                          help="where to write the compiled protocol (JSON); its folder must exist")
    compile_.set_defaults(run=run_compile)


def _load(args):
    protocol = load_protocol(args.protocol)
    profile = load_profile(args.display)
    compiled = compile_protocol(protocol, profile, participant=args.participant, seed=args.seed,
                                obs=_observer(args, protocol), name=args.protocol)
    return protocol, profile, compiled


def _observer(args, protocol):
    """A participant's stored adjustment from the data folder, or ``None`` for a standard observer."""
    if not protocol["about"]["observer"].startswith(ADJUSTED_PREFIX):
        return None
    data = Path(args.data) if args.data else default_data_dir()
    if not (data / "stimlab.sqlite").is_file():
        raise InputError(f"no stimlab data folder at {data}; give the folder 'stimlab serve' uses with --data",
                         field="--data")
    store = Store(data)
    db = store.connect()
    try:
        obs, _ = observer_for_protocol(store, db, protocol)
    except InputError as error:
        raise InputError(error.message, file=args.protocol, field=error.field) from None
    finally:
        db.close()
    return obs


def run_audit(args) -> int:
    protocol, profile, compiled = _load(args)
    report = audit_protocol(compiled, protocol, profile, max_age_days=args.max_age_days)
    if args.json:
        print_json(report)
    else:
        print_report(report, compiled, show_info=args.all)
    return 0 if report["passed"] else 1


def _count(n: int, noun: str) -> str:
    return f"{n} {noun}{'' if n == 1 else 's'}"


def print_report(report: dict, compiled, show_info: bool = False) -> None:
    data = compiled.data
    print(f"{data['protocol']['title']}  on  {data['display']['name']} (sha256 {data['display']['sha256'][:12]}…)")
    print(f"  {_count(len(data['conditions']), 'condition')}, {_count(len(data['trials']), 'trial')}, "
          f"observer {data['observer']['key']}, "
          f"{data['display']['refresh_hz']:g} Hz, {data['pixels_per_degree']:.1f} px/deg, seed {data['seed']}")
    if report["caution"]:
        print(f"\n  CAUTION: {report['caution']}")
    for kind in KINDS:
        # The photosensitivity result is always shown, a pass included: it is what an ethics board asks about.
        rows = [f for f in report["findings"] if f["kind"] == kind
                and (show_info or f["severity"] != "info" or kind == "photosensitivity")]
        if not rows:
            continue
        print(f"\n{HEADINGS[kind]}")
        for f in rows:
            print(f"  {f['severity'].upper():4s}  {f['where']}: {f['message']}")
    counts = report["counts"]
    verdict = "PASSED" if report["passed"] else "FAILED"
    print(f"\n{verdict}: {counts['fail']} failing, {_count(counts['warn'], 'warning')}, {_count(counts['info'], 'note')}"
          + ("" if show_info else " (--all lists the notes)"))


def run_compile(args) -> int:
    _, _, compiled = _load(args)
    Path(args.output).write_text(json.dumps(compiled.data, allow_nan=False) + "\n", encoding="utf-8")
    print(f"wrote {args.output}: {len(compiled.data['trials'])} trials, {len(compiled.data['conditions'])} conditions")
    return 0
