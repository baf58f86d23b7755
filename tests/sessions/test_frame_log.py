"""The frame-log block: packed and list forms, the stored form, CSV, and every refusal naming its field."""

import base64
import csv
import io
import struct

import numpy as np
import pytest

from stimlab.errors import InputError
from stimlab.sessions.frame_log import FRAME_COLUMNS, NO_LABEL, FrameBlock, read_block

# Doubles as a browser reports them, including ones with no short decimal (0.1 + 0.2) and 5 µs steps.
TIMES = [16.665, 33.33, 0.1 + 0.2, 1234.5650000000001]


def lists(**changes):
    block = {"frame": [10, 11, 12, 13], "t_raf": TIMES, "t_callback": [t + 0.05 for t in TIMES],
             "trial": [0, 0, None, 1], "phase": ["adapt", "adapt", "pause", "test"], "dropped": [0, 1, 0, 0],
             "drawn": ["512,498,530", "512,498,530", None, "patch"], "in_phase": [0, 1, None, 0]}
    block.update(changes)
    return block


def test_the_list_form_reads_back_exactly():
    rows = read_block(lists()).rows()
    assert rows == list(zip(*lists().values()))
    assert [r[1] for r in rows] == TIMES  # bit for bit, not rounded


def test_a_packed_block_written_by_hand_reads_as_the_runner_means_it():
    # The bytes the runner sends, built here with struct (not numpy): little-endian columns in base64.
    def column(fmt, values):
        return base64.b64encode(struct.pack("<" + fmt * len(values), *values)).decode()

    block = {"count": 2, "labels": ["adapt", "512,498,530"], "frame": column("I", [7, 8]),
             "t_raf": column("d", [1.5, 18.25]), "t_callback": column("d", [1.55, 18.3]), "trial": column("i", [3, -1]),
             "phase": column("H", [0, 0]), "dropped": column("B", [0, 1]), "drawn": column("H", [1, NO_LABEL])}
    assert read_block(block).rows() == [(7, 1.5, 1.55, 3, "adapt", 0, "512,498,530", None),
                                        (8, 18.25, 18.3, None, "adapt", 1, None, None)]  # no in_phase: older runner
    block["in_phase"] = column("i", [42, -1])
    assert [r[7] for r in read_block(block).rows()] == [42, None]


def test_blocks_stored_before_the_frame_index_within_the_phase_still_read():
    block = read_block(lists())
    stored = block.stored()
    labels = struct.unpack_from("<4sII", stored)[2]
    body = stored[12 + labels:]
    old = b"SLF1" + stored[4:12 + labels] + body[:len(body) - 4 * len(block)]  # seven columns, no in_phase
    assert FrameBlock.from_stored(old).rows() == [row[:7] + (None,) for row in block.rows()]


def test_packed_and_stored_forms_round_trip():
    block = read_block(lists())
    assert read_block(block.packed()).rows() == block.rows()
    assert FrameBlock.from_stored(block.stored()).rows() == block.rows()
    assert (block.first_frame, block.last_frame, block.dropped, len(block)) == (10, 13, 1, 4)


def test_csv_lines_parse_back_to_the_same_values():
    text = read_block(lists()).csv()
    rows = list(csv.reader(io.StringIO(text)))
    assert rows[2] == ["12", repr(0.1 + 0.2), repr(0.1 + 0.2 + 0.05), "", "pause", "0", "", ""]
    assert [r[7] for r in rows] == ["0", "1", "", "0"]
    assert [float(r[1]) for r in rows] == TIMES
    assert [r[6] for r in rows] == ["512,498,530", "512,498,530", "", "patch"]  # quoted: it holds commas
    assert text.count("\n") == 4


def test_concatenated_blocks_share_one_label_table():
    first = read_block(lists())
    second = read_block(lists(frame=[14, 15, 16, 17], phase=["test", "respond", "respond", None],
                              drawn=["patch", "1,2,3", None, None]))
    joined = FrameBlock.concatenate([first, second])
    assert joined.rows() == first.rows() + second.rows()
    assert sorted(joined.labels) == sorted({"adapt", "pause", "test", "respond", "512,498,530", "patch", "1,2,3"})


@pytest.mark.parametrize("change, field", [
    ({"t_raf": [0.0, float("nan"), 2.0, 3.0]}, "frames.t_raf"),
    ({"t_callback": [0.0, 1.0, float("inf"), 3.0]}, "frames.t_callback"),
    ({"frame": [10, 11, 11, 12]}, "frames.frame"),
    ({"frame": [10, 11, 12]}, "frames.t_raf"),
    ({"frame": [10, 11, 12, 1.5]}, "frames.frame[3]"),
    ({"t_raf": [0.0, "1", 2.0, 3.0]}, "frames.t_raf[1]"),
    ({"trial": [0, -2, 0, 0]}, "frames.trial"),
    ({"dropped": [0, 2, 0, 0]}, "frames.dropped"),
    ({"in_phase": [0, -2, 0, 0]}, "frames.in_phase"),
    ({"in_phase": [0, 1.5, 0, 0]}, "frames.in_phase[1]"),
    ({"phase": ["adapt", 3, "adapt", "adapt"]}, "frames.phase[1]"),
    ({"phase": ["adapt", ["x"], "adapt", "adapt"]}, "frames.phase[1]"),
    ({"drawn": ['say "hi"', None, None, None]}, "frames.drawn[0]"),
    ({"dropped": [0, 1, True, 0.5]}, "frames.dropped[3]"),
    ({"frame": []}, "frames.frame"),
])
def test_bad_list_blocks_name_the_field(change, field):
    with pytest.raises(InputError) as error:
        read_block(lists(**change))
    assert error.value.field == field


def packed(**changes):
    block = read_block(lists()).packed()
    block.update(changes)
    return block


@pytest.mark.parametrize("change, field", [
    ({"count": 0}, "frames.count"),
    ({"count": 5}, "frames.frame"),  # 4 frames' bytes for 5
    ({"t_raf": "not base64!"}, "frames.t_raf"),
    ({"labels": "adapt"}, "frames.labels"),
    ({"labels": ["adapt"]}, "frames.phase"),  # codes point past the one label
])
def test_bad_packed_blocks_name_the_field(change, field):
    with pytest.raises(InputError) as error:
        read_block(packed(**change))
    assert error.value.field == field


def test_every_column_is_checked():
    assert set(read_block(lists()).columns) == set(FRAME_COLUMNS)
    with pytest.raises(InputError) as error:
        read_block({k: v for k, v in lists().items() if k != "drawn"})
    assert error.value.field == "frames.drawn"
    with pytest.raises(InputError):
        read_block([1, 2, 3])
    assert np.array_equal(read_block(lists()).in_phase("adapt"), [True, True, False, False])
