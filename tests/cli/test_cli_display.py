"""The command line for displays and conversion: the JSON contract, and every bad-input path exits 2 naming
the file, row and column."""

import json
import subprocess
import sys

import pytest

from stimlab.cli import main
from stimlab.profiles.demo import demo_file

SPECTRA = demo_file("vale_street_b12_spectra.csv")
TRANSFER = demo_file("vale_street_b12_transfer.csv")


@pytest.fixture
def files(tmp_path):
    (tmp_path / "spectra.csv").write_text(SPECTRA)
    (tmp_path / "transfer.csv").write_text(TRANSFER)
    return tmp_path


def build(files, *extra, spectra="spectra.csv", transfer="transfer.csv"):
    return main(["display", "build", "--spectra", str(files / spectra), "--transfer", str(files / transfer),
                 "--name", "Test LCD", "--bits", "10", "--size-cm", "53.1,29.9", "--size-px", "1920,1080",
                 "-o", str(files / "profile.json"), *extra])


@pytest.mark.parametrize("background", [[], ["--background", "0,0,0"]])
def test_the_background_itself_has_no_direction_to_scale(files, capsys, background):
    # Round-trip noise (~1e-16 in linear RGB) once reported ×3e15, and on black ×inf, which is not JSON at all.
    assert build(files) == 0
    capsys.readouterr()
    convert = ["convert", "--display", str(files / "profile.json"), "--dkl", "0,0,0", *background]
    assert main([*convert, "--json"]) == 0
    result = json.loads(capsys.readouterr().out)
    assert result["in_gamut"] is True and result["max_scale_in_gamut"] is None and result["limiting_channel"] is None
    assert main(convert) == 0
    assert "the background itself, so there is no direction to scale" in capsys.readouterr().out


def test_build_show_convert(files, capsys):
    assert build(files) == 0
    out = capsys.readouterr().out
    assert "wrote" in out and "gog fit" in out
    assert main(["display", "show", str(files / "profile.json")]) == 0
    out = capsys.readouterr().out
    assert "primaries (CIE 1931 xy)" in out and "L-M" in out and "one digital level" in out
    assert main(["convert", "--display", str(files / "profile.json"), "--dkl", "0,0.05,0", "--json"]) == 0
    result = json.loads(capsys.readouterr().out)
    for key, size in [("rgb_linear", 3), ("rgb_device", 3), ("lms", 3), ("cone_contrast", 3), ("dkl", 3),
                      ("macleod_boynton", 2), ("quantisation_cone_contrast", 3)]:
        assert len(result[key]) == size, key
    assert all(isinstance(v, int) for v in result["rgb_device"])
    assert result["dkl"] == pytest.approx([0, 0.05, 0], abs=1e-12)
    assert result["in_gamut"] is True
    assert result["max_scale_in_gamut"] > 1
    profile = json.loads((files / "profile.json").read_text())
    assert result["display_hash"] == profile["sha256"]
    assert isinstance(result["luminance_cd_m2"], float)


def test_out_of_gamut_conversion_gives_no_device_values(files, capsys):
    build(files)
    capsys.readouterr()
    assert main(["convert", "--display", str(files / "profile.json"), "--cone-contrast", "0.5,0,0"]) == 0
    out = capsys.readouterr().out
    assert "OUT OF GAMUT" in out and "not clipped" in out
    main(["convert", "--display", str(files / "profile.json"), "--cone-contrast", "0.5,0,0", "--json"])
    result = json.loads(capsys.readouterr().out)
    assert result["in_gamut"] is False and result["rgb_device"] is None
    assert result["out_of_gamut"]["red"] > 0
    assert result["max_scale_in_gamut"] < 1


def _error(capsys):
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1, err
    return err[0]


def edit(files, name, text):
    (files / name).write_text(text)


@pytest.mark.parametrize("name, text, expected", [
    ("spectra.csv", SPECTRA.replace("wavelength_nm,red,green,blue,black", "wavelength_nm,red,green,black"),
     "row 1: missing column(s) blue"),
    ("spectra.csv", SPECTRA.replace("wavelength_nm,red,green,blue,black", "wavelength_nm,red,green,blue,black,uv"),
     "unexpected column(s) 'uv'"),
    ("spectra.csv", SPECTRA.replace("\n420,", "\n420,x", 1), "row 22, column 'red': 'x"),
    ("spectra.csv", SPECTRA.replace("\n500,", "\n500,-", 1), "row 62, column 'red': negative value"),
    ("spectra.csv", "\n".join(l for l in SPECTRA.splitlines() if not l.startswith("39") and
                              not l.startswith("38")), "must cover at least 390–780 nm"),
    ("transfer.csv", TRANSFER.replace("red,259,", "red,259.5,"), "row 10, column 'level': level '259.5'"),
    ("transfer.csv", TRANSFER.replace("luminance_cd_m2", "luminance"), "missing column(s) luminance_cd_m2"),
    ("transfer.csv", TRANSFER.replace("green,309,", "green,309,1", 1), "row 33, column 'luminance_cd_m2': "
     "channel green luminance falls"),
    ("transfer.csv", TRANSFER.replace("blue,11,", "blue,11,many", 1), "row 45, column 'luminance_cd_m2': 'many"),
    ("transfer.csv", TRANSFER.replace("red,259,", "red,1024,"), "row 10, column 'level': level '1024' must be"),
    ("transfer.csv", TRANSFER.replace("red,0,", "cyan,0,", 1), "unknown channel 'cyan'"),
])
def test_bad_files_exit_2_naming_file_row_and_column(files, capsys, name, text, expected):
    edit(files, name, text)
    assert build(files) == 2
    message = _error(capsys)
    assert name in message and expected in message


def test_missing_file_and_bad_options(files, capsys):
    assert build(files, transfer="nope.csv") == 2
    assert "nope.csv: file not found" in _error(capsys)
    build(files)
    capsys.readouterr()
    assert main(["convert", "--display", str(files / "profile.json"), "--background", "1.2,0.5,0.5",
                 "--dkl", "0,0,0"]) == 2
    assert "option --background" in (message := _error(capsys)) and "outside the display gamut" in message
    assert main(["convert", "--display", str(files / "profile.json"), "--dkl", "0,zero,0"]) == 2
    assert "--dkl" in capsys.readouterr().err


def test_no_traceback_from_the_installed_command(files):
    edit(files, "transfer.csv", TRANSFER.replace("red,0,", "red,0,oops", 1))
    run = subprocess.run([sys.executable, "-m", "stimlab.cli", "display", "build", "--spectra",
                          str(files / "spectra.csv"), "--transfer", str(files / "transfer.csv"), "--name", "x",
                          "-o", str(files / "p.json")], capture_output=True, text=True)
    assert run.returncode == 2
    assert "Traceback" not in run.stderr
    assert "row 2, column 'luminance_cd_m2': 'oops0.3500' is not a number" in run.stderr


def test_primaries_from_xyY(files, capsys):
    assert main(["display", "build", "--primaries-xyY", "0.64,0.33,17;0.30,0.60,57.2;0.15,0.06,5.8",
                 "--transfer", str(files / "transfer.csv"), "--bits", "10", "--name", "Colorimeter only",
                 "-o", str(files / "xyY.json")]) == 0
    assert "approximate" in capsys.readouterr().out
    main(["convert", "--display", str(files / "xyY.json"), "--dkl", "0,0.02,0"])
    assert "approximation" in capsys.readouterr().out


def test_convert_on_a_background_at_the_gamut_edge(files, capsys):
    # Hand-computed from the RGB cube: from (1, 0.5, 0) the step (−0.1, +0.1, +0.05) fits ×5, limited by green.
    build(files)
    capsys.readouterr()
    args = ["convert", "--display", str(files / "profile.json"), "--background", "1,0.5,0", "--rgb", "0.9,0.6,0.05"]
    assert main(args + ["--json"]) == 0
    result = json.loads(capsys.readouterr().out)
    assert result["max_scale_in_gamut"] == pytest.approx(5.0)
    assert result["limiting_channel"] == "green"
    assert None in result["dkl_display_maximum"] and "gamut's edge" in result["dkl_display_maximum_note"]
    assert main(args) == 0
    out = capsys.readouterr().out
    assert "undefined" in out and "×5.000" in out and "green" in out


# A flat, noisy toe: the red reading falls from 0.35294 to 0.35085 cd/m² (0.6 %) at level 32, row 4 of the file,
# and level 59 (0.3525) stays below 0.35294 too.
# The tolerance it must fall within (2 % of the reading + 0.015 cd/m²) is the stated noise model, common practice.
TOE = TRANSFER.replace("red,11,0.3500", "red,11,0.35294").replace("red,32,0.3500", "red,32,0.35085")


@pytest.mark.parametrize("model", ["gog", "power"])
def test_fitted_models_accept_a_noisy_toe_and_report_it(files, capsys, model):
    edit(files, "transfer.csv", TOE)
    assert build(files, "--model", model) == 0
    out = capsys.readouterr().out
    assert "WARNING: red readings fall at level(s) 32, 59" in out
    profile = json.loads((files / "profile.json").read_text())
    assert profile["transfer"]["red"]["falls"] == [{"level": 32, "from_cd_m2": 0.35294, "to_cd_m2": 0.35085},
                                                   {"level": 59, "from_cd_m2": 0.35294, "to_cd_m2": 0.3525}]
    assert "falls" not in profile["transfer"]["green"]
    assert main(["display", "show", str(files / "profile.json")]) == 0
    assert "WARNING: red readings fall at level(s) 32, 59" in capsys.readouterr().out


def test_table_model_names_the_rows_that_break_monotonicity_and_offers_the_fitted_models(files, capsys):
    edit(files, "transfer.csv", TOE.replace("red,91,0.3823", "red,91,0.3400"))
    assert build(files, "--model", "table") == 2
    message = _error(capsys)
    assert "row 4 (level 32: 0.35294 → 0.35085 cd/m²)" in message
    assert "row 5 (level 59: 0.35294 → 0.3525 cd/m²)" in message
    assert "row 6 (level 91: 0.35294 → 0.34 cd/m²)" in message
    assert "--model gog" in message and "--model power" in message


def test_a_fall_beyond_noise_is_refused_for_every_model(files, capsys):
    # 0.9 → 0.5 cd/m² is far beyond 2 % + 0.015 cd/m².
    edit(files, "transfer.csv", TRANSFER.replace("red,212,0.9084", "red,212,0.5"))
    assert build(files, "--model", "gog") == 2
    assert "more than measurement noise" in _error(capsys)
