"""``stimlab convert``: one colour, given in cone contrast, DKL or linear RGB, in every space and as device RGB."""

from __future__ import annotations

import numpy as np

from ..colorimetry.display import DisplayModel
from ..colorimetry.observers import OBSERVERS
from ..colorimetry.stimulus import Background
from ..errors import InputError
from ..profiles.profile import DEFAULT_MAX_AGE_DAYS, load_profile, profile_warnings
from .arguments import OBSERVER_HELP, input_file, whole
from .output import print_json


def register(sub, numbers) -> None:

    convert = sub.add_parser("convert", help="convert one colour to device RGB and every other space")
    convert.add_argument("--display", required=True, metavar="PROFILE.json", type=input_file("display profile"),
                         help="display profile, from 'stimlab display build' or the web app")
    convert.add_argument("--observer", choices=OBSERVERS, default="ss2", help=OBSERVER_HELP)
    background = convert.add_mutually_exclusive_group()
    background.add_argument("--background", type=numbers(3), default=[0.5, 0.5, 0.5], metavar="R,G,B",
                            help="background in linear RGB, each 0..1 above black (default 0.5,0.5,0.5)")
    background.add_argument("--background-mb", type=numbers(3), metavar="l,s,cd",
                            help="background as MacLeod–Boynton l, s and luminance in cd/m²")
    colour = convert.add_mutually_exclusive_group(required=True)
    colour.add_argument("--cone-contrast", type=numbers(3), metavar="cL,cM,cS",
                        help="L, M and S cone contrast from the background, as fractions (0.1 = 10 %%)")
    colour.add_argument("--dkl", type=numbers(3), metavar="lum,lm,s",
                        help="DKL luminance, L−M and S from the background, in pooled cone contrast (fractions)")
    colour.add_argument("--rgb", type=numbers(3), metavar="r,g,b",
                        help="linear RGB, each 0..1 above black (outside that is reported out of gamut)")
    colour.add_argument("--mb", type=numbers(3), metavar="l,s,cd",
                        help="MacLeod–Boynton l, s and luminance in cd/m²")
    convert.add_argument("--max-age-days", type=whole(0, 100_000), default=DEFAULT_MAX_AGE_DAYS, metavar="DAYS",
                         help=f"warn when the profile is older than this many days (default {DEFAULT_MAX_AGE_DAYS})")
    convert.add_argument("--json", action="store_true", help="print one JSON object")
    convert.set_defaults(run=run)


def run(args) -> int:
    profile = load_profile(args.display)
    model = DisplayModel(profile, args.observer)
    if args.background_mb:
        background = Background.from_MacLeod_Boynton(model, *args.background_mb, field="--background-mb")
    else:
        background = Background(model, args.background, field="--background")
    for option, space in (("cone_contrast", "cone_contrast"), ("dkl", "dkl"), ("rgb", "rgb_linear"),
                          ("mb", "macleod_boynton")):
        values = getattr(args, option)
        if values is not None:
            flag = "--" + option.replace("_", "-")
            try:
                with np.errstate(over="raise", invalid="raise"):
                    LMS = background.colour_to_LMS(space, values)
            except FloatingPointError:
                raise InputError("these values are too large to convert; give contrasts of a size a display can "
                                 "show (cone contrast and DKL are fractions: 0.1 is 10 %)", field=flag) from None
            except InputError:
                raise
            except ValueError as error:
                raise InputError(str(error), field=flag) from None
    try:
        result = background.describe(LMS)
    except InputError:
        raise
    except ValueError as error:  # e.g. a colour at or below black, where MacLeod–Boynton is undefined
        raise InputError(f"{error}; give a colour with some light (luminance above the display's black)",
                         field=flag) from None
    result["warnings"] = profile_warnings(profile, args.max_age_days)
    if args.json:
        print_json(result)
    else:
        print_table(result)
    return 0


def _row(label, values, fmt="{:+.5f}"):
    return f"  {label:31s}" + "  ".join(("—" if v is None else fmt.format(v)).rjust(11) for v in values)


def print_table(r: dict) -> None:
    print(f"display {r['display_name']} (sha256 {r['display_hash'][:12]}…), observer {r['observer']}")
    print(_row("background linear RGB", r["background_rgb_linear"], "{:.5f}"))
    print(_row("", ("L / lum / R", "M / L−M / G", "S / S / B"), "{}"))
    print(_row("cone contrast", r["cone_contrast"]))
    print(_row("DKL (pooled cone contrast)", r["dkl"]))
    print(_row("DKL (fraction of display max)", r["dkl_display_maximum"]))
    if r["dkl_display_maximum_note"]:
        print(f"  {'':31s}— undefined: {r['dkl_display_maximum_note']}")
    print(_row("LMS", r["lms"], "{:.4f}"))
    print(_row("MacLeod–Boynton l, s", r["macleod_boynton"], "{:.6f}"))
    print(_row("CIE 1931 xyY", r["xyY"], "{:.4f}"))
    print(_row("linear RGB", r["rgb_linear"], "{:.6f}"))
    print(f"  {'luminance':31s}{r['luminance_cd_m2']:11.3f} cd/m²")
    if r["rod_contrast"] is None:
        print(f"  {'rod contrast':31s}not available ({r['rods_note']})")
    else:
        print(f"  {'scotopic luminance':31s}{r['scotopic_luminance_cd_m2']:11.3f} scotopic cd/m² "
              f"(background {r['background_scotopic_luminance_cd_m2']:.3f})")
        print(f"  {'rod contrast':31s}{r['rod_contrast']:+11.5f}  (a three-primary display cannot silence rods)")
    if r["in_gamut"]:
        print(_row("device RGB", r["rgb_device"], "{:d}"))
        print(_row("one level, in cone contrast", r["quantisation_cone_contrast"], "{:.5f}"))
        if r["max_scale_in_gamut"] is None:
            print("  in gamut: yes; this is the background itself, so there is no direction to scale")
        else:
            print(f"  in gamut: yes; this direction can be scaled ×{r['max_scale_in_gamut']:.3f} before the "
                  f"{r['limiting_channel']} channel limits it")
    else:
        over = ", ".join(f"{c} {v:+.4f}" for c, v in r["out_of_gamut"].items())
        fits = r["max_scale_in_gamut"]
        print(f"  OUT OF GAMUT: {over} beyond 0..1 in linear RGB; no device values given (not clipped). "
              + (f"The same direction fits at ×{fits:.3f} of this contrast." if fits >= 5e-4 else
                 "This direction cannot be shown at all from this background: "
                 f"the {r['limiting_channel'] or 'limiting'} channel is already at its limit."))
    for warning in r["warnings"]:
        print(f"  WARNING: {warning}")
