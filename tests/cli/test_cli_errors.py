"""Bad input on the command line: exit status 2 and one line naming the file, row, column or option, never a
traceback or an internal error."""

import subprocess
import sys

import pytest

from stimlab.cli import main
from stimlab.profiles.demo import demo_file


@pytest.fixture(autouse=True)
def measurements(tmp_path_factory):
    """The demo display's measurement files, written where the commands can read them."""
    global SPECTRA, TRANSFER
    folder = tmp_path_factory.mktemp("demo")
    SPECTRA, TRANSFER = folder / "spectra.csv", folder / "transfer.csv"
    SPECTRA.write_text(demo_file("vale_street_b12_spectra.csv"))
    TRANSFER.write_text(demo_file("vale_street_b12_transfer.csv"))


def run(capsys, *argv):
    status = main(list(map(str, argv)))
    return status, capsys.readouterr().err


def test_a_spectra_file_of_one_row_names_the_file_and_row(tmp_path, capsys):
    one = tmp_path / "one.csv"
    one.write_text("\n".join(SPECTRA.read_text().splitlines()[:2]) + "\n")
    status, err = run(capsys, "display", "build", "--name", "x", "--transfer", TRANSFER, "--spectra", one, "--bits", 10,
                      "-o", tmp_path / "p.json")
    assert status == 2 and "one.csv row 2" in err and "wavelength" in err


def test_output_to_a_folder_says_so(tmp_path, capsys):
    status, err = run(capsys, "display", "build", "--name", "x", "--transfer", TRANSFER, "--spectra", SPECTRA,
                      "--bits", 10, "-o", tmp_path)
    assert status == 2 and "is a folder" in err and "internal error" not in err


def test_collinear_primaries_are_refused_when_building(tmp_path, capsys):
    status, err = run(capsys, "display", "build", "--name", "x", "--transfer", TRANSFER, "--bits", 10,
                      "--primaries-xyY", "0.3,0.3,10;0.3,0.3,10;0.3,0.3,10", "-o", tmp_path / "p.json")
    assert status == 2 and "at primaries" in err and not (tmp_path / "p.json").exists()


@pytest.mark.parametrize("argv,option", [
    (["display", "build", "--name", "x", "--transfer", "T", "--spectra", "S", "--bits", "100000", "-o", "p"], "--bits"),
    (["export", str(2**70), "-o", "x.csv"], "SESSION"),
    (["audit", "p.json", "--display", "d.json", "--participant", "9" * 5000], "--participant"),
])
def test_numbers_out_of_range_name_the_option(capsys, argv, option):
    status = main([str(SPECTRA) if a == "S" else str(TRANSFER) if a == "T" else a for a in argv])
    err = capsys.readouterr().err
    assert status == 2 and option in err and len(err) < 2000


def test_a_damaged_database_is_named(tmp_path, capsys):
    (tmp_path / "stimlab.sqlite").write_bytes(b"not a database at all" * 100)
    status, err = run(capsys, "export", 1, "-o", tmp_path / "x.csv", "--data", tmp_path)
    assert status == 2 and "stimlab.sqlite" in err and "damaged" in err


def test_deep_nesting_in_a_protocol_file_is_named(tmp_path, capsys):
    deep = tmp_path / "deep.json"
    deep.write_text("[" * 100000 + "]" * 100000)
    status, err = run(capsys, "audit", deep, "--display", tmp_path / "missing.json")
    assert status == 2 and "internal error" not in err


def test_a_closed_pipe_is_not_an_error(tmp_path):
    profile = tmp_path / "p.json"
    assert main(["display", "build", "--name", "x", "--transfer", str(TRANSFER), "--spectra", str(SPECTRA), "--bits", "10",
                 "-o", str(profile)]) == 0
    script = (f"import sys; from stimlab.cli import main; sys.exit(main(['convert', '--display', {str(profile)!r}, "
              "'--dkl', '0,0.1,0', '--json']))")
    pipeline = subprocess.run(f"{sys.executable} -c \"{script}\" | head -c 1", shell=True, capture_output=True,
                              text=True, executable="/bin/bash")
    assert "Traceback" not in pipeline.stderr and "BrokenPipe" not in pipeline.stderr
