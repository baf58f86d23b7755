"""``stimlab display build`` and ``stimlab display show``."""

from __future__ import annotations

from pathlib import Path

import numpy as np

from ..colorimetry.display import DisplayModel
from ..colorimetry.observers import OBSERVERS
from ..colorimetry.transfer import TRANSFER_MODELS
from ..errors import InputError
from ..profiles.measurements import (
    CHANNELS,
    parse_black,
    parse_spectra,
    parse_transfer,
    read_text,
)
from ..profiles.profile import (
    DEFAULT_MAX_AGE_DAYS,
    build_profile,
    load_profile,
    save_profile,
    transfer_entry,
    transfer_warnings,
)
from ..profiles.summary import display_summary
from .arguments import OBSERVER_HELP, date, input_file, number, output_path, text, whole


def register(sub, numbers) -> None:

    display = sub.add_parser("display", help="build or inspect a display profile")
    actions = display.add_subparsers(dest="action", metavar="ACTION", required=True)

    build = actions.add_parser("build", help="build a profile from measurement files")
    source = build.add_mutually_exclusive_group(required=True)
    source.add_argument("--spectra", metavar="FILE.csv", type=input_file("spectra CSV file"),
                        help="primary spectra: wavelength_nm,red,green,blue[,black], spectral radiance in "
                             "W/sr/m²/nm at full drive")
    source.add_argument("--primaries-xyY", metavar="x,y,Y;x,y,Y;x,y,Y", type=numbers(9),
                        help="CIE 1931 x, y and luminance Y in cd/m² of red, green and blue at full drive, when no "
                             "spectra exist (approximate; quote it: the ';' ends a shell command)")
    build.add_argument("--transfer", metavar="FILE.csv", required=True, type=input_file("transfer CSV file"),
                       help="transfer measurements: channel,level,luminance_cd_m2 (levels 0 to 2^bits−1)")
    build.add_argument("--black", metavar="FILE.csv", type=input_file("black spectrum CSV file"),
                       help="black spectrum, with --spectra: wavelength_nm,black in W/sr/m²/nm (default: the "
                            "spectra file's black column, else zero)")
    build.add_argument("--black-xyY", metavar="x,y,Y", type=numbers(3),
                       help="CIE 1931 x, y and luminance Y in cd/m² of black, with --primaries-xyY (default zero)")
    build.add_argument("--bits", type=whole(1, 16), default=8, metavar="N",
                       help="bits per channel, 1 to 16 (default 8)")
    build.add_argument("--refresh", type=number(20, 1000, "Hz"), default=60.0, metavar="HZ",
                       help="refresh rate in Hz, 20 to 1000 (default 60)")
    build.add_argument("--size-cm", type=numbers(2, positive=True, high=1000), metavar="W,H",
                       help="visible screen width and height in cm (needed to compile protocols)")
    build.add_argument("--size-px", type=numbers(2, integer=True, positive=True, high=100_000), metavar="W,H",
                       help="screen width and height in pixels (needed to compile protocols)")
    build.add_argument("--model", choices=tuple(TRANSFER_MODELS), default="gog",
                       help="transfer model the profile uses (default gog); all are fitted and compared")
    build.add_argument("--name", type=text("the display's name"), metavar="NAME",
                       help="the display's name, at most 200 characters (default: the output file's name "
                            "without .json)")
    build.add_argument("--measured-by", default="", metavar="WHO", type=text("who measured", blank=True),
                       help="who measured the display, at most 200 characters (default none)")
    build.add_argument("--measured-on", metavar="YYYY-MM-DD", type=date,
                       help="date of the measurements (default today)")
    build.add_argument("-o", "--output", required=True, metavar="PROFILE.json",
                       type=output_path("profile"), help="where to write the profile; its folder must exist")
    build.set_defaults(run=run_build, options={
        "name": "--name", "bits": "--bits", "refresh": "--refresh", "measured_on": "--measured-on",
        "measured_by": "--measured-by", "size-cm": "--size-cm", "size_cm": "--size-cm", "size-px": "--size-px",
        "size_px": "--size-px", "red": "--primaries-xyY", "green": "--primaries-xyY", "blue": "--primaries-xyY",
        "black": "--black-xyY", "transfer": "--transfer", "spectra": "--spectra"})

    show = actions.add_parser("show", help="summarise a profile")
    show.add_argument("profile", metavar="PROFILE.json", type=input_file("display profile"),
                      help="a profile written by 'stimlab display build' or the web app")
    show.add_argument("--observer", choices=OBSERVERS, default="ss2",
                      help=OBSERVER_HELP)
    show.add_argument("--max-age-days", type=whole(0, 100_000), default=DEFAULT_MAX_AGE_DAYS, metavar="DAYS",
                      help=f"warn when the profile is older than this many days (default {DEFAULT_MAX_AGE_DAYS})")
    show.set_defaults(run=run_show)


def run_build(args) -> int:
    spectra = chromaticities = None
    if args.spectra and args.black_xyY:
        raise InputError("--black-xyY goes with --primaries-xyY; with --spectra give the black spectrum as "
                         "--black FILE.csv or a black column")
    if args.primaries_xyY and args.black:
        raise InputError("--black FILE.csv goes with --spectra; with --primaries-xyY give --black-xyY x,y,Y")
    name = args.name or Path(args.output).stem
    if args.spectra:
        wavelengths, primaries, black = parse_spectra(read_text(args.spectra), name=args.spectra)
        if args.black:
            black_wl, black = parse_black(read_text(args.black), name=args.black)
            if black_wl.shape != wavelengths.shape or not np.allclose(black_wl, wavelengths):
                raise InputError("the black spectrum must use the same wavelengths as the primaries "
                                 f"({args.spectra})", file=args.black, field="wavelength_nm")
        spectra = (wavelengths, primaries, black)
    else:
        values = args.primaries_xyY
        chromaticities = {c: values[3 * i:3 * i + 3] for i, c in enumerate(CHANNELS)}
        if args.black_xyY:
            chromaticities["black"] = args.black_xyY
    transfer_text = read_text(args.transfer)
    try:
        measurements = parse_transfer(transfer_text, args.bits, name=args.transfer, transfer_model=args.model)
    except InputError as error:
        if error.field != "level" or f"at {args.bits} bits" not in error.message:
            raise
        raise InputError(f"{error.message} (--bits {args.bits}); if the display has more bits per channel, give "
                         "--bits to match", file=error.file, row=error.row, field=error.field) from None
    transfer = {}
    for channel, (levels, luminance) in measurements.items():
        try:
            transfer[channel] = transfer_entry(levels, luminance, args.bits, args.model)
        except InputError as error:
            raise InputError(f"channel {channel}: {error.message}", file=args.transfer) from None
    try:
        profile = build_profile(name, transfer=transfer, bits=args.bits, refresh_hz=args.refresh,
                                spectra=spectra, chromaticities=chromaticities, size_cm=args.size_cm,
                                size_px=args.size_px, measured_by=args.measured_by, measured_on=args.measured_on)
    except InputError as error:
        if spectra is not None and (error.field or "").startswith("primaries."):
            raise InputError(f"{error.message.split(';')[0]}; check the file's units (spectral radiance in "
                             "W/sr/m²/nm)", field="spectra") from None
        if error.field not in (*CHANNELS, "black") or chromaticities is None:
            raise
        raise InputError(f"{error.message}: x and y must be above 0 with x + y below 1, and Y (cd/m²) above 0 "
                         "(0 allowed for black)", field=error.field) from None
    save_profile(profile, args.output)
    model = DisplayModel(profile)
    print(f"wrote {args.output}: {profile['name']}, white {model.white_luminance:.2f} cd/m², "
          f"sha256 {profile['sha256'][:12]}")
    for channel in CHANNELS:
        entry = profile["transfer"][channel]
        print(f"  {channel:5s} {entry['model']} fit: rms {entry['rms']:.4f}, max {entry['max_abs']:.4f} "
              "(fraction of full output)")
    for note in profile["notes"]:
        print(f"  note: {note}")
    for warning in transfer_warnings(profile):
        print(f"  WARNING: {warning}")
    return 0


def run_show(args) -> int:
    profile = load_profile(args.profile)
    summary = display_summary(profile, args.observer, args.max_age_days)
    print(f"{summary['name']}  (sha256 {summary['sha256'][:12]}…)")
    print(f"  measured by {summary['measured_by'] or 'unknown'} on {summary['measured_on']}, "
          f"{summary['age_days']} days ago")
    px = summary["size_px"] or ["?", "?"]
    cm = summary["size_cm"] or ["?", "?"]
    print(f"  {summary['bits']} bits, {summary['refresh_hz']:g} Hz, {px[0]}×{px[1]} px, {cm[0]}×{cm[1]} cm")
    print(f"  white {summary['white_cd_m2']:.2f} cd/m², black {summary['black_cd_m2']:.3f} cd/m² "
          f"(observer {summary['observer']})")
    print("  primaries (CIE 1931 xy):")
    for channel, (x, y) in summary["primaries_xy"].items():
        print(f"    {channel:5s} x {x:.4f}  y {y:.4f}")
    print("  transfer fits (residual as fraction of full output):")
    for channel, entry in summary["transfer"].items():
        others = ", ".join(f"{k} {v:.4f}" for k, v in entry["alternatives"].items())
        params = ", ".join(f"{k} {v:.4g}" for k, v in entry["parameters"].items())
        print(f"    {channel:5s} {entry['model']} ({params or 'table'}) rms {entry['rms']:.4f}; others: {others}")
    print("  largest contrast along each DKL axis from the mid-grey background (pooled cone contrast):")
    for axis, (low, high) in summary["dkl_limits"].items():
        print(f"    {axis:4s} {low:+.4f} … {high:+.4f}")
    q = summary["quantisation_cone_contrast"]
    print(f"  one digital level at the background = cone contrast L {q[0]:.5f}, M {q[1]:.5f}, S {q[2]:.5f}")
    rods = summary["rods"]
    if not rods["available"]:
        print(f"  {rods['note']}")
    else:
        contrasts = ", ".join(f"{axis} {value:+.4f}" for axis, value in rods["dkl_unit"].items())
        print(f"  rods (CIE 1951 V′): white {rods['white_scotopic_cd_m2']:.2f} scotopic cd/m²; rod "
              f"contrast of each unit DKL stimulus from mid-grey: {contrasts}")
    for warning in summary["warnings"]:
        print(f"  WARNING: {warning}")
    return 0
