"""Every bad value a person can type at the command line: exit status 2 and one line that names the option as
typed (``--measured-on``, not the profile's field ``measured_on``) and what to give instead; never a traceback,
and nothing written or created."""

import argparse
import json
import subprocess
import sys
from pathlib import Path

import pytest

from stimlab.cli import build_parser, main
from stimlab.cli.main import explain
from stimlab.errors import InputError
from stimlab.profiles.demo import demo_file, demo_profile
from stimlab.profiles.profile import build_profile, save_profile
from stimlab.sessions.store import Store

PROTOCOL = str(Path(__file__).parents[2] / "protocols" / "afterimage_null.json")
LATIN = PROTOCOL  # its blocks (one per axis) follow a Latin square over participants


@pytest.fixture(scope="module")
def paths(tmp_path_factory):
    """A folder of good and bad files: the demo display's measurements and profile, a profile without a screen
    size, a data folder with a database, an empty folder, an empty file, broken JSON and CSV."""
    root = tmp_path_factory.mktemp("inputs")
    (root / "spectra.csv").write_text(demo_file("vale_street_b12_spectra.csv"))
    (root / "transfer.csv").write_text(demo_file("vale_street_b12_transfer.csv"))
    profile = demo_profile()
    save_profile(profile, root / "display.json")
    save_profile(build_profile("No size", transfer=profile["transfer"], bits=profile["bits"], chromaticities={
        "red": (0.64, 0.33, 20), "green": (0.3, 0.6, 60), "blue": (0.15, 0.06, 5)}), root / "nosize.json")
    rows = demo_file("vale_street_b12_spectra.csv").splitlines()
    for name, value in (("huge_spectra.csv", "1e300"), ("nan_spectra.csv", "nan")):
        (root / name).write_text("\n".join(rows[:5] + [rows[5].split(",", 1)[0] + f",{value},"
                                                         + rows[5].split(",", 2)[2]] + rows[6:]) + "\n")
    (root / "short_transfer.csv").write_text("\n".join(demo_file("vale_street_b12_transfer.csv").splitlines()[:2]))
    Store(root / "data").connect().close()
    (root / "folder").mkdir()
    (root / "empty.csv").write_text("")
    (root / "bad.json").write_text("{not json")
    (root / "bad.csv").write_text("a,b\n1,2\n")
    names = {"spectra": "spectra.csv", "transfer": "transfer.csv", "display": "display.json", "nosize": "nosize.json",
             "data": "data", "folder": "folder", "empty": "empty.csv", "bad_json": "bad.json", "bad_csv": "bad.csv",
             "missing": "missing", "out": "out.json", "huge_spectra": "huge_spectra.csv",
             "nan_spectra": "nan_spectra.csv", "short_transfer": "short_transfer.csv"}
    return {key: str(root / name) for key, name in names.items()} | {"root": str(root)}


BUILD = ["display", "build", "--spectra", "{spectra}", "--transfer", "{transfer}", "--bits", "10",
         "-o", "{out}"]
XYY = ["display", "build", "--transfer", "{transfer}", "--bits", "10", "-o", "{out}", "--primaries-xyY"]
SHOW = ["display", "show"]
CONVERT = ["convert", "--display", "{display}"]
AUDIT = ["audit", PROTOCOL, "--display", "{display}"]
COMPILE = ["compile", PROTOCOL, "--display", "{display}", "-o", "{root}/compiled.json"]
EXPORT = ["export", "--data", "{data}", "-o", "{root}/export.csv"]
SERVE = ["serve"]

# (arguments, the option the message must name, a phrase of the fix or the fault)
CASES = [
    # display build
    (BUILD + ["--measured-on", "2024-13-01"], "--measured-on", "YYYY-MM-DD"),
    (BUILD + ["--measured-on", "yesterday"], "--measured-on", "YYYY-MM-DD"),
    (BUILD + ["--measured-on", "2024-1-5"], "--measured-on", "YYYY-MM-DD"),
    (BUILD + ["--measured-on", "2999-01-01"], "--measured-on", "in the future"),
    (BUILD + ["--name", " "], "--name", "cannot be blank"),
    (BUILD + ["--name", "x" * 201], "--name", "at most 200"),
    (BUILD + ["--measured-by", "x" * 201], "--measured-by", "at most 200"),
    (BUILD[:-1] + ["{missing}/p.json"], "-o/--output", "does not exist"),
    (BUILD[:-1] + ["{folder}"], "-o/--output", "is a folder"),
    (BUILD[:-1] + ["{spectra}/p.json"], "-o/--output", "not a folder"),
    (BUILD[:-1] + [""], "-o/--output", "give the path"),
    (BUILD + ["--refresh", "nan"], "--refresh", "20 to 1000 Hz"),
    (BUILD + ["--refresh", "inf"], "--refresh", "20 to 1000 Hz"),
    (BUILD + ["--refresh", "-60"], "--refresh", "20 to 1000 Hz"),
    (BUILD + ["--refresh", ""], "--refresh", "20 to 1000 Hz"),
    (BUILD + ["--refresh", "sixty"], "--refresh", "20 to 1000 Hz"),
    (BUILD + ["--bits", "1e3"], "--bits", "1 to 16"),
    (BUILD + ["--bits", "0"], "--bits", "1 to 16"),
    (BUILD + ["--bits", "8.5"], "--bits", "1 to 16"),
    (BUILD + ["--bits", ""], "--bits", "1 to 16"),
    (BUILD + ["--bits", "8"], "--transfer", "--bits"),  # the demo transfer file has 10-bit levels
    (BUILD + ["--size-cm", "-1,2"], "--size-cm", "above 0"),
    (BUILD + ["--size-cm", "0,0"], "--size-cm", "above 0"),
    (BUILD + ["--size-cm", "nan,1"], "--size-cm", "NaN"),
    (BUILD + ["--size-cm", "53"], "--size-cm", "give 2"),
    (BUILD + ["--size-px", "1.5,2"], "--size-px", "whole"),
    (BUILD + ["--size-px", "1e9,1e9"], "--size-px", "up to 100000"),
    (BUILD + ["--size-px", "1e3,1e3"], "--size-px", "in digits"),
    (BUILD + ["--size-px", "1920,-1080"], "--size-px", "above 0"),
    (BUILD + ["--spectra", "{folder}"], "--spectra", "is a folder"),
    (BUILD + ["--spectra", "{missing}/s.csv"], "--spectra", "file not found"),
    (BUILD + ["--spectra", "{empty}"], "--spectra", "is empty"),
    (BUILD + ["--spectra", "{bad_csv}"], "--spectra", "row 1"),
    (BUILD + ["--spectra", "{huge_spectra}"], "--spectra", "W/sr/m²/nm"),
    (BUILD + ["--spectra", "{nan_spectra}"], "--spectra", "row 6, column 'red'"),
    (BUILD + ["--transfer", "{folder}"], "--transfer", "is a folder"),
    (BUILD + ["--transfer", "{short_transfer}"], "--transfer", "full drive"),
    (BUILD + ["--transfer", "{bad_csv}"], "--transfer", "channel,level,luminance_cd_m2"),
    (BUILD + ["--black", "{missing}/b.csv"], "--black", "file not found"),
    (BUILD + ["--black-xyY", "0.3,0.3,1"], "--black-xyY", "--primaries-xyY"),
    (BUILD + ["--model", "spline"], "--model", "choose from"),
    (XYY + ["0.64,0.33,20"], "--primaries-xyY", "give 9"),
    (XYY + ["0.64,0.33,20;0.3,0.6,60;0.15,0.06,-5"], "--primaries-xyY", "x + y below 1"),
    (XYY + ["0.64,0.33,20;0.3,0.6,60;0.15,0.06,5", "--black-xyY", "2,0.3,1"], "--black-xyY", "x + y below 1"),
    (XYY + ["0.64,0.33,20;0.3,0.6,60;0.15,0.06,5", "--black", "{spectra}"], "--black", "--black-xyY"),
    # display show
    (SHOW + ["{folder}"], "PROFILE.json", "is a folder"),
    (SHOW + ["{missing}/p.json"], "PROFILE.json", "file not found"),
    (SHOW + ["{bad_json}"], "bad.json", "not valid JSON"),
    (SHOW + ["{spectra}"], "spectra.csv", "not valid JSON"),
    (SHOW + ["{display}", "--max-age-days", "-1"], "--max-age-days", "0 to 100000"),
    (SHOW + ["{display}", "--max-age-days", "1e3"], "--max-age-days", "write it in digits: 1000"),
    (SHOW + ["{display}", "--observer", "cie1931"], "--observer", "choose from"),
    # convert
    (["convert", "--display", "{folder}", "--dkl", "0,0,0"], "--display", "is a folder"),
    (["convert", "--display", "{bad_json}", "--dkl", "0,0,0"], "--display", "not valid JSON"),
    (CONVERT + ["--dkl", "0,0.05"], "--dkl", "give 3"),
    (CONVERT + ["--dkl", "nan,0,0"], "--dkl", "NaN"),
    (CONVERT + ["--dkl", "a,b,c"], "--dkl", "3 comma-separated numbers"),
    (CONVERT + ["--dkl", ""], "--dkl", "give 3"),
    (CONVERT + ["--dkl", "1e308,1e308,0"], "--dkl", "too large"),
    (CONVERT + ["--rgb", "-1,0,0"], "--rgb", "luminance above the display's black"),
    (CONVERT + ["--mb", "0,0,0"], "--mb", "luminance"),
    (CONVERT + ["--background", "2,0,0", "--dkl", "0,0.1,0"], "--background", "gamut"),
    (CONVERT + ["--background", "-0.5,0,0", "--dkl", "0,0.1,0"], "--background", "gamut"),
    (CONVERT + ["--background-mb", "0,0,0", "--dkl", "0,0.1,0"], "--background-mb", "luminance"),
    (CONVERT + ["--dkl", "0,0,0", "--cone-contrast", "0,0,0"], "--cone-contrast", "not allowed"),
    (CONVERT + ["--dkl", "0,0,0", "--max-age-days", "inf"], "--max-age-days", "whole number"),
    # audit and compile
    *[(AUDIT + ["--participant", bad], "--participant", "1 to 1000000 or a code such as P07")
      for bad in ("1e3", "0", "-1", "1.5", "", "P 7", "nan", "9" * 5000, "p" * 33)],
    *[(COMPILE + ["--participant", bad], "--participant", "1 to 1000000 or a code such as P07")
      for bad in ("1e3", "0")],
    (AUDIT + ["--seed", "-1"], "--seed", "0 to 4294967295"),
    (AUDIT + ["--seed", "1e3"], "--seed", "write it in digits: 1000"),
    (AUDIT + ["--seed", "nan"], "--seed", "0 to 4294967295"),
    (AUDIT + ["--data", "{missing}"], "--data", "does not exist"),
    (AUDIT + ["--data", "{spectra}"], "--data", "is a file"),
    (AUDIT + ["--data", "{folder}"], "--data", "no stimlab database"),
    (["audit", PROTOCOL, "--display", "{nosize}"], "--display", "screen size"),
    (["audit", "{folder}", "--display", "{display}"], "PROTOCOL.json", "is a folder"),
    (["audit", "{bad_json}", "--display", "{display}"], "bad.json", "not valid JSON"),
    (["audit", "{display}", "--display", "{display}"], "display.json", "The protocol needs"),
    (COMPILE[:-1] + ["{missing}/c.json"], "-o/--output", "does not exist"),
    (COMPILE[:-1] + ["{folder}"], "-o/--output", "is a folder"),
    (COMPILE + ["--data", "{missing}"], "--data", "does not exist"),
    # export
    (["export", "1", "-o", "{root}/x.csv", "--data", "{missing}"], "--data", "does not exist"),
    (["export", "1", "-o", "{root}/x.csv", "--data", "{spectra}"], "--data", "is a file"),
    (["export", "1", "-o", "{root}/x.csv", "--data", "{folder}"], "--data", "no stimlab database"),
    (EXPORT + ["1e3"], "SESSION", "write it in digits: 1000"),
    (EXPORT + ["0"], "SESSION", "from 1 to"),
    (EXPORT + ["-1"], "SESSION", "from 1 to"),
    (EXPORT, "SESSION", "give either a SESSION number or --study"),
    (EXPORT + ["5"], "SESSION", "no session 5"),
    (EXPORT + ["--study", " "], "--study", "cannot be blank"),
    (EXPORT + ["--study", "../secrets"], "--study", "no folders"),
    (EXPORT + ["--study", "nope.json"], "--study", "no sessions"),
    (EXPORT + ["--study", "afterimage_null.json", "--format", "json"], "--format", "a study exports as"),
    (EXPORT + ["1", "--format", "xlsx"], "--format", "choose from"),
    (["export", "1", "--data", "{data}", "-o", "{missing}/x.csv"], "-o/--output", "does not exist"),
    (["export", "1", "--data", "{data}", "-o", "{folder}"], "-o/--output", "is a folder"),
    (["export", "1", "--data", "{data}", "--format", "bids", "-o", "{spectra}"], "-o/--output",
     "writes a folder"),
    # serve: refused before anything listens
    (SERVE + ["--port", "0"], "--port", "1 to 65535"),
    (SERVE + ["--port", "70000"], "--port", "1 to 65535"),
    (SERVE + ["--port", "1e3"], "--port", "write it in digits: 1000"),
    (SERVE + ["--port", "http"], "--port", "1 to 65535"),
    (SERVE + ["--host", ""], "--host", "IP address"),
    (SERVE + ["--host", "lab computer"], "--host", "IP address"),
    (SERVE + ["--data", "{spectra}"], "--data", "is a file"),
    (SERVE + ["--data", "{missing}/deeper"], "--data", "does not exist"),
]


def _ids():
    return [" ".join(a for a in argv[1:] if not a.startswith(("{", "/")))[:60] for argv, _, _ in CASES]


@pytest.mark.parametrize("argv,option,phrase", CASES, ids=_ids())
def test_bad_input_exits_2_in_one_line_naming_the_option(paths, capsys, argv, option, phrase):
    status = main([a.format(**paths) for a in argv])
    err = capsys.readouterr().err
    assert status == 2, err
    assert len(err.strip().splitlines()) == 1, err
    assert option in err and phrase in err, err
    assert "Traceback" not in err and "internal error" not in err
    assert len(err) < 600  # a 5,000-digit value is cut short, not echoed
    assert not Path(paths["out"]).exists() and not Path(paths["missing"]).exists()


def test_core_field_names_are_shown_as_the_options_typed(paths):
    """The profile code calls the date ``measured_on``; the person typed ``--measured-on``."""
    args = build_parser().parse_args([a.format(**paths) for a in BUILD])
    message = explain(InputError("measured_on must be a date YYYY-MM-DD, got 'x'", field="measured_on"), args)
    assert message.startswith("--measured-on: must be a date YYYY-MM-DD") and "measured_on" not in message
    message = explain(InputError("1000000000 is out of range", file="x", field="size_px[0]"), args)
    assert message.startswith("--size-px: ")
    message = explain(InputError("not a number", file=paths["spectra"], row=3, field="red"), args)
    assert message == f"--spectra {paths['spectra']} row 3, column 'red': not a number"


def test_the_display_name_defaults_to_the_output_file_name(paths, tmp_path, capsys):
    out = tmp_path / "Vale Street B12.json"
    assert main([a.format(**paths) for a in BUILD[:-1]] + [str(out)]) == 0
    assert json.loads(out.read_text())["name"] == "Vale Street B12"
    assert "wrote" in capsys.readouterr().out


def test_a_participant_code_gives_the_row_of_its_number(paths, tmp_path):
    """``--participant P02`` orders the blocks (Latin square by axis) as participant 2, as the web app's Run page
    does with that code."""
    orders = {}
    for given in ("P02", "2", "1"):
        out = tmp_path / f"{given}.json"
        assert main(["compile", LATIN, "--display", paths["display"], "-o", str(out), "--participant", given]) == 0
        orders[given] = [t["condition"] for t in json.loads(out.read_text())["trials"]]
    assert orders["P02"] == orders["2"] != orders["1"]


def test_a_negative_value_can_follow_its_option(paths, capsys):
    assert main(["convert", "--display", paths["display"], "--dkl", "-0.05,0,0", "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["dkl"][0] == pytest.approx(-0.05)
    assert main(["convert", "--display", paths["display"], "--cone-contrast", "-.02,-1e-2,0", "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["cone_contrast"] == pytest.approx([-0.02, -0.01, 0])


def _commands(parser, prefix=""):
    for action in parser._actions:
        if isinstance(action, argparse._SubParsersAction):
            for name, sub in action.choices.items():
                yield from _commands(sub, f"{prefix} {name}".strip())
            return
    yield prefix, parser


@pytest.mark.parametrize("command,parser", list(_commands(build_parser())), ids=lambda v: v if isinstance(v, str)
                         else "")
def test_every_option_with_a_default_says_it_in_its_help(command, parser):
    for action in parser._actions:
        if not action.option_strings or action.nargs == 0 or action.default in (None, argparse.SUPPRESS):
            continue
        assert action.help and "default" in action.help, f"stimlab {command} {action.option_strings[-1]}"


def test_the_installed_command_prints_no_traceback(paths):
    result = subprocess.run([sys.executable, "-m", "stimlab.cli", "audit", PROTOCOL, "--display",
                             paths["display"], "--participant", "1e3"], capture_output=True, text=True,
                            timeout=300)
    assert result.returncode == 2
    assert "Traceback" not in result.stderr and "--participant" in result.stderr


def test_an_unwritable_output_names_the_option(paths, tmp_path, capsys, monkeypatch):
    """As root every folder is writable, so the refusal the file system gives is simulated."""

    def refuse(self, *args, **kwargs):
        raise PermissionError(13, "Permission denied", str(self))

    out = tmp_path / "compiled.json"
    monkeypatch.setattr(Path, "write_text", refuse)
    status = main(["compile", PROTOCOL, "--display", paths["display"], "-o", str(out)])
    err = capsys.readouterr().err
    assert status == 2 and f"-o/--output {out}: permission denied" in err and "Traceback" not in err
