"""bom.csv and placement.csv: read back with Python's csv reader, positions checked against the
pads that router.geometry places (an independent path: the footprint drawn unmirrored, turned by
the listed rotation and moved to the listed x, y, then the board turned back over)."""
import csv
import io
import math

import pytest

from router.assembly import BOM_COLUMNS, PLACEMENT_COLUMNS, bom_csv, placement_csv
from router.boardfile import loads_board
from router.fabfiles import export
from router.footprints import builtin_footprint
from router.geometry import placed_pads

BOARD = """format = 1
[board]
name = "kit"
size = [50.0, 40.0]
[[parts]]
ref = "R10"
footprint = "chip-0603"
value = "10k"
at = [10.0, 10.0]
[[parts]]
ref = "R2"
footprint = "chip-0603"
value = "10k"
at = [10.0, 20.0]
rotation = 90
side = "bottom"
[[parts]]
ref = "R3"
footprint = "chip-0805"
value = "10k"
at = [20.0, 20.0]
[[parts]]
ref = "U1"
footprint = "soic-8"
value = "timer, 555"
at = [30.0, 20.0]
rotation = 270
side = "bottom"
[[parts]]
ref = "H1"
footprint = "hole-3.2"
at = [45.0, 35.0]
"""


def _rows(text):
    lines = [l for l in text.splitlines() if not l.startswith("#")]
    return list(csv.DictReader(io.StringIO("\n".join(lines))))


def test_bom_groups_by_value_and_footprint():
    text = bom_csv(loads_board(BOARD))
    assert text.startswith("# Parts list of board 'kit'")
    rows = _rows(text)
    assert tuple(rows[0]) == BOM_COLUMNS
    got = [(r["value"], r["footprint"], int(r["count"]), r["refs"]) for r in rows]
    assert got == [("10k", "chip-0603", 2, "R2 R10"), ("10k", "chip-0805", 1, "R3"),
                   ("timer, 555", "soic-8", 1, "U1")]     # hole H1 left out; comma quoted by csv
    assert sum(n for _, _, n, _ in got) == 4


def _rot(p, deg):
    c, s = round(math.cos(math.radians(deg)), 12), round(math.sin(math.radians(deg)), 12)
    return (c * p[0] - s * p[1], s * p[0] + c * p[1])


@pytest.mark.parametrize("rotation", [0, 90, 180, 270])
@pytest.mark.parametrize("side", ["top", "bottom"])
def test_placement_convention_puts_every_pad_where_the_board_has_it(rotation, side):
    text = BOARD.replace('ref = "U1"\nfootprint = "soic-8"\nvalue = "timer, 555"\nat = [30.0, 20.0]\n'
                         'rotation = 270\nside = "bottom"',
                         f'ref = "U1"\nfootprint = "soic-8"\nvalue = "timer, 555"\nat = [30.0, 20.0]\n'
                         f'rotation = {rotation}\nside = "{side}"')
    board = loads_board(text)
    row = next(r for r in _rows(placement_csv(board)) if r["ref"] == "U1")
    assert row["side"] == side
    x, y, rot = float(row["x_mm"]), float(row["y_mm"]), int(row["rotation_deg"])
    fp = builtin_footprint("soic-8")
    want = {p.pin: (p.x, p.y) for p in placed_pads(board) if p.ref == "U1"}
    for pad in fp.pads:
        lx, ly = _rot(pad.offset, rot)               # seen from the listed side, unmirrored
        px, py = x + lx, y + ly
        if side == "bottom":
            px = -px                                 # turn the board back over about its y axis
        assert (px, py) == pytest.approx(want[pad.pin], abs=1e-9), pad.pin


def test_placement_file_header_and_columns():
    text = placement_csv(loads_board(BOARD))
    header = [l for l in text.splitlines() if l.startswith("#")]
    assert any("seen from the bottom" in l for l in header)
    assert any("millimetres from the board's origin" in l for l in header)
    rows = _rows(text)
    assert tuple(rows[0]) == PLACEMENT_COLUMNS
    assert [r["ref"] for r in rows] == ["R2", "R3", "R10", "U1"]
    r2 = rows[0]
    assert (r2["x_mm"], r2["y_mm"], r2["rotation_deg"], r2["side"]) == ("-10", "20", "270", "bottom")


def test_export_writes_both_files(tmp_path):
    files = {f.name for f in export(loads_board(BOARD), tmp_path)}
    assert {"bom.csv", "placement.csv"} <= files
    listing = (tmp_path / "kit-files.txt").read_text()
    assert "bom.csv" in listing and "parts list" in listing and "placement.csv" in listing
