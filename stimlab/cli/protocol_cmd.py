"""``stimlab audit`` and ``stimlab compile``: check a protocol on a display before anyone runs it."""

from __future__ import annotations

import json
from pathlib import Path

from ..audit.preflight import KINDS, audit_protocol
from ..experiment.compile import compile_protocol
from ..experiment.protocol import load_protocol
from ..profiles.profile import DEFAULT_MAX_AGE_DAYS, load_profile
from .arguments import whole
from .output import print_json

HEADINGS = {"display": "Display", "gamut": "Gamut", "headroom": "Headroom", "bit_depth": "Bit depth",
            "timing": "Timing", "prediction": "Predicted after-image / induction",
            "photosensitivity": "Photosensitivity", "geometry": "Geometry"}


def _common(parser) -> None:
    parser.add_argument("protocol", metavar="PROTOCOL.json")
    parser.add_argument("--display", required=True, metavar="PROFILE.json", help="display profile")
    parser.add_argument("--participant", type=whole(0, 1_000_000), default=1,
                        help="participant number for Latin-square counterbalancing (default 1)")
    parser.add_argument("--seed", type=whole(0, 2**32 - 1), help="override the protocol's seed for trial order")


def register(sub, numbers) -> None:
    audit = sub.add_parser("audit", help="check every stimulus, phase and trial of a protocol on a display")
    _common(audit)
    audit.add_argument("--max-age-days", type=whole(0, 100_000), default=DEFAULT_MAX_AGE_DAYS,
                       help=f"warn when the profile is older than this (default {DEFAULT_MAX_AGE_DAYS})")
    audit.add_argument("--all", action="store_true", help="also list the informational findings")
    audit.add_argument("--json", action="store_true", help="print the findings as JSON")
    audit.set_defaults(run=run_audit)

    compile_ = sub.add_parser("compile", help="compile a protocol to frames, pixels and device levels")
    _common(compile_)
    compile_.add_argument("-o", "--output", required=True, metavar="COMPILED.json")
    compile_.set_defaults(run=run_compile)


def _load(args):
    if args.participant < 1:
        raise ValueError("--participant must be 1 or more")
    protocol = load_protocol(args.protocol)
    profile = load_profile(args.display)
    compiled = compile_protocol(protocol, profile, participant=args.participant, seed=args.seed,
                                name=args.protocol)
    return protocol, profile, compiled


def run_audit(args) -> int:
    protocol, profile, compiled = _load(args)
    report = audit_protocol(compiled, protocol, profile, max_age_days=args.max_age_days)
    if args.json:
        print_json(report)
    else:
        print_report(report, compiled, show_info=args.all)
    return 0 if report["passed"] else 1


def print_report(report: dict, compiled, show_info: bool = False) -> None:
    data = compiled.data
    print(f"{data['protocol']['title']}  on  {data['display']['name']} (sha256 {data['display']['sha256'][:12]}…)")
    print(f"  {len(data['conditions'])} conditions, {len(data['trials'])} trials, observer {data['observer']['key']}, "
          f"{data['display']['refresh_hz']:g} Hz, {data['pixels_per_degree']:.1f} px/deg, seed {data['seed']}")
    if report["caution"]:
        print(f"\n  CAUTION: {report['caution']}")
    for kind in KINDS:
        rows = [f for f in report["findings"] if f["kind"] == kind and (show_info or f["severity"] != "info")]
        if not rows:
            continue
        print(f"\n{HEADINGS[kind]}")
        for f in rows:
            print(f"  {f['severity'].upper():4s}  {f['where']}: {f['message']}")
    counts = report["counts"]
    verdict = "PASSED" if report["passed"] else "FAILED"
    print(f"\n{verdict}: {counts['fail']} failing, {counts['warn']} warnings, {counts['info']} notes"
          + ("" if show_info else " (--all lists the notes)"))


def run_compile(args) -> int:
    _, _, compiled = _load(args)
    Path(args.output).write_text(json.dumps(compiled.data, allow_nan=False) + "\n", encoding="utf-8")
    print(f"wrote {args.output}: {len(compiled.data['trials'])} trials, {len(compiled.data['conditions'])} conditions")
    return 0
