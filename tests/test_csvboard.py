"""`elbowroom new`: a board file from a parts CSV and a nets CSV (router/csvboard.py).

Outside sources: RFC 4180 (CSV: a header row, fields in double quotes may hold the
delimiter and line breaks, a quote inside a quoted field is doubled); the Unicode
Standard, ch. 23.8 (the byte order mark U+FEFF is EF BB BF in UTF-8, FF FE in UTF-16LE);
the semicolon delimiter and decimal comma of spreadsheets in comma-decimal locales are
common practice. The rows are read back independently with the standard library's
``csv.DictReader`` and compared with what the project's own loader reads.
"""
from __future__ import annotations

import csv
import io
import math
from pathlib import Path

import pytest

from router import load_board
from router.cli import main
from router.csvboard import ROUTING_FACTOR, estimate_size, nearest_footprints, read_csv_board
from router.footprints import builtin_footprint
from router.model import Board, Part

PARTS = """ref,footprint,value,x,y,rotation,side,fixed
U1,dip-8,555 timer,,,,,
R1,chip-0805,10k,,,,,
C1,chip-0603,10 nF,,,,,
J1,header-1x2,battery,3,8,90,top,true
"""
NETS = """net,pin,class
VCC,U1.8,power
VCC,R1.1,
VCC,J1.1,
GND,U1.1,power
GND,C1.2,
GND,J1.2,
TH,U1.6,
TH,C1.1,
TH,R1.2,
"""


def _write(tmp_path, parts=PARTS, nets=NETS, encoding="utf-8"):
    p, n = tmp_path / "parts.csv", tmp_path / "nets.csv"
    p.write_bytes(parts.encode(encoding) if isinstance(parts, str) else parts)
    n.write_bytes(nets.encode(encoding) if isinstance(nets, str) else nets)
    return p, n


def _new(tmp_path, p, n, *extra):
    out = tmp_path / "board.toml"
    code = main(["new", "--parts", str(p), "--nets", str(n), "-o", str(out), "-q", *extra])
    return code, out


# ------------------------------------------------------------------ good files

def test_round_trip_matches_the_csv(tmp_path):
    """The written board loads with the project's loader; parts, nets and pins are the CSV's
    (read back independently with csv.DictReader)."""
    p, n = _write(tmp_path)
    code, out = _new(tmp_path, p, n)
    assert code == 0
    board = load_board(out)
    want_parts = list(csv.DictReader(io.StringIO(PARTS)))
    assert [(q.ref, q.footprint, q.value) for q in board.parts] == \
        [(r["ref"], r["footprint"], r["value"]) for r in want_parts]
    want_nets: dict[str, list[str]] = {}
    for r in csv.DictReader(io.StringIO(NETS)):
        want_nets.setdefault(r["net"], []).append(r["pin"])
    assert {net.name: net.pins for net in board.nets} == want_nets
    assert board.net("VCC").net_class == "power" and board.net("TH").net_class == "default"
    # a class the CSV names is made with the default class's rules
    assert (board.classes["power"].trace_width, board.classes["power"].clearance) == \
        (board.classes["default"].trace_width, board.classes["default"].clearance)
    # no x/y: unplaced; x/y, rotation, side, fixed carried over
    assert [q.at for q in board.parts[:3]] == [None, None, None]
    j1 = board.part("J1")
    assert (j1.at, j1.rotation, j1.side, j1.fixed) == ((3.0, 8.0), 90, "top", True)
    assert board.copper_layers == 2 and board.name == "board"


def test_byte_order_mark_utf8_and_utf16(tmp_path):
    """A UTF-8 BOM (EF BB BF) or a UTF-16LE BOM (FF FE) before the header does not spoil 'ref'."""
    p, n = _write(tmp_path, parts=b"\xef\xbb\xbf" + PARTS.encode(), nets=NETS.encode("utf-16"))
    assert NETS.encode("utf-16")[:2] == b"\xff\xfe"
    code, out = _new(tmp_path, p, n)
    assert code == 0
    assert [q.ref for q in load_board(out).parts] == ["U1", "R1", "C1", "J1"]


def test_semicolons_and_decimal_comma(tmp_path):
    """Semicolon-separated files from comma-decimal locales: 12,5 is 12.5 (common practice)."""
    parts = "Ref;Footprint;Value;X;Y\nU1;dip-8;1,5 nF cap;12,5;10\nR1;chip-0805;4,7k;;\n"
    nets = "Net;Pin\nA;U1.1\nA;R1.1\n"
    p, n = _write(tmp_path, parts, nets)
    code, out = _new(tmp_path, p, n)
    assert code == 0
    b = load_board(out)
    assert b.part("U1").at == (12.5, 10.0) and b.part("U1").value == "1,5 nF cap"
    assert b.part("R1").value == "4,7k" and b.part("R1").at is None


def test_tabs_and_footprint_names_in_capitals(tmp_path):
    parts = "ref\tfootprint\tvalue\nU1\tSOIC-8\top-amp\n"
    nets = "net\tpin\nX\tU1.3\n"
    p, n = _write(tmp_path, parts, nets)
    code, out = _new(tmp_path, p, n)
    assert code == 0 and load_board(out).part("U1").footprint == "soic-8"


def test_quoted_fields(tmp_path):
    """RFC 4180: a quoted field holds the delimiter, a line break and doubled quotes."""
    parts = ('ref,footprint,value\n'
             'R1,chip-0603,"10k, 1%"\n'
             'J1,header-1x2,"2-pin ""power"" plug"\n'
             'C1,chip-0603,"100 nF\nX7R"\n'
             'U1 , " soic-8 ",  "a, b"\n')
    nets = 'net,pin\n"VCC, 5 V",R1.1\n"VCC, 5 V",J1.1\nN2,C1.1\n'
    p, n = _write(tmp_path, parts, nets)
    code, out = _new(tmp_path, p, n)
    assert code == 0
    b = load_board(out)
    assert b.part("R1").value == "10k, 1%"
    assert b.part("J1").value == '2-pin "power" plug'
    assert b.part("C1").value == "100 nF\nX7R"
    assert b.part("U1").footprint == "soic-8" and b.part("U1").value == "a, b"
    assert b.net("VCC, 5 V").pins == ["R1.1", "J1.1"]


def test_semicolon_file_whose_values_hold_commas(tmp_path):
    """The header decides when the Sniffer's guess does not give the required columns."""
    parts = "ref;footprint;value\n" + "".join(f"R{i};chip-0603;1,{i} k, 1 %, thin film\n" for i in range(1, 6))
    nets = "net;pin\nA;R1.1\nA;R2.1\n"
    p, n = _write(tmp_path, parts, nets)
    code, out = _new(tmp_path, p, n)
    assert code == 0
    assert load_board(out).part("R3").value == "1,3 k, 1 %, thin film"


def test_column_names_any_case_extra_columns_and_blank_lines(tmp_path, capsys):
    parts = " REF , FootPrint ,Value, Supplier \nU1,dip-8,x,shop\n\n,,,\nR1,chip-0805,y,\n"
    nets = "NET,PIN,Class\nA,U1.1,\nA,R1.1,\n"
    p, n = _write(tmp_path, parts, nets)
    out = tmp_path / "b.toml"
    assert main(["new", "--parts", str(p), "--nets", str(n), "-o", str(out)]) == 0
    assert "columns not used: supplier" in capsys.readouterr().out
    assert [q.ref for q in load_board(out).parts] == ["U1", "R1"]


def test_one_layer_and_size_options(tmp_path):
    parts = "ref,footprint,value,side\nU1,dip-8,x,\nR1,chip-0805,y,bottom\n"
    nets = "net,pin\nA,U1.1\nA,R1.1\n"
    p, n = _write(tmp_path, parts, nets)
    code, out = _new(tmp_path, p, n, "--layers", "1", "--size", "30", "20")
    assert code == 0
    b = load_board(out)
    assert b.copper_layers == 1 and b.size == (30.0, 20.0) and b.part("R1").side == "bottom"


# ------------------------------------------------------------------ bad rows

BAD = [
    # (what, parts, nets, file, line, words in the message)
    ("unknown footprint", "ref,footprint,value\nU1,dip-8,x\nU2,soic-7,y\n", "net,pin\nA,U1.1\n",
     "parts.csv", 3, ["soic-7", "soic-8"]),
    ("pin the footprint lacks", PARTS, NETS.replace("TH,R1.2", "TH,R1.3"), "nets.csv", 10, ["R1", "'3'", "1, 2"]),
    ("ref used twice", PARTS + "R1,chip-0603,again,,,,,\n", NETS, "parts.csv", 6, ["R1", "line 3"]),
    ("pin in two nets", PARTS, NETS + "TH,U1.8,\n", "nets.csv", 11, ["U1.8", "VCC", "line 2"]),
    ("pin twice in one net", PARTS, NETS + "TH,C1.1,\n", "nets.csv", 11, ["C1.1", "twice"]),
    ("broken x", PARTS.replace("U1,dip-8,555 timer,,", "U1,dip-8,555 timer,12.5mm,4"), NETS,
     "parts.csv", 2, ["12.5mm", "not a number"]),
    ("broken rotation", PARTS.replace("3,8,90", "3,8,ninety"), NETS, "parts.csv", 5, ["ninety", "rotation"]),
    ("nan is not a number", PARTS.replace("3,8,90", "nan,8,90"), NETS, "parts.csv", 5, ["nan"]),
    ("decimal comma in a comma file", 'ref,footprint,value,x,y\nU1,dip-8,x,"12,5",3\n', "net,pin\nA,U1.1\n",
     "parts.csv", 2, ["12,5"]),
    ("x without y", PARTS.replace("U1,dip-8,555 timer,,", "U1,dip-8,555 timer,4,"), NETS,
     "parts.csv", 2, ["no y"]),
    ("missing parts column", "ref,value\nU1,x\n", NETS, "parts.csv", 1, ["'footprint'"]),
    ("missing nets column", PARTS, "net,class\nA,power\n", "nets.csv", 1, ["'pin'"]),
    ("misspelt column", "ref,footprint,value,rotaton\nU1,dip-8,x,90\n", "net,pin\nA,U1.1\n",
     "parts.csv", 1, ["rotaton", "rotation"]),
    ("no such part", PARTS, NETS + "TH,R2.1,\n", "nets.csv", 11, ["R2", "R1"]),
    ("pin not REF.PIN", PARTS, NETS + "TH,R1,\n", "nets.csv", 11, ["REF.PIN"]),
    ("empty ref", PARTS + ",chip-0603,x,,,,,\n", NETS, "parts.csv", 6, ["ref is empty"]),
    ("ref with a dot", PARTS + "R.9,chip-0603,x,,,,,\n", NETS, "parts.csv", 6, ["dots"]),
    ("fixed without a place", PARTS.replace("C1,chip-0603,10 nF,,,,,", "C1,chip-0603,10 nF,,,,,yes"), NETS,
     "parts.csv", 4, ["fixed"]),
    ("bad fixed", PARTS.replace("3,8,90,top,true", "3,8,90,top,maybe"), NETS, "parts.csv", 5, ["maybe"]),
    ("bad side", PARTS.replace("3,8,90,top", "3,8,90,up"), NETS, "parts.csv", 5, ["'up'"]),
    ("two classes for a net", PARTS, NETS.replace("GND,C1.2,", "GND,C1.2,signal"), "nets.csv", 6,
     ["power", "signal", "line 5"]),
    ("too many cells", "ref,footprint,value\nR1,chip-0603,1,5 k\n", "net,pin\nA,R1.1\n", "parts.csv", 2,
     ["cells", "quote"]),
    ("broken quotes", 'ref,footprint,value\nU1,dip-8,"a"b\n', "net,pin\nA,U1.1\n", "parts.csv", 2, ["quote"]),
    ("not UTF-8", "ref,footprint,value\nR1,chip-0603,10 \xb5F\n".encode("latin-1"), "net,pin\nA,R1.1\n",
     "parts.csv", 2, ["UTF-8"]),
    ("empty file", "", NETS, "parts.csv", 1, ["empty"]),
    ("line break in a footprint name", 'ref,footprint,value\nU1,"dip-8\nx",v\n', "net,pin\nA,U1.1\n",
     "parts.csv", 2, ["dip-8\\nx"]),
    ("part below zero", PARTS.replace("3,8,90", "-5,8,90"), NETS, "parts.csv", 5, ["(0, 0)"]),
]


@pytest.mark.parametrize("what,parts,nets,file,line,words", BAD, ids=[b[0] for b in BAD])
def test_bad_row_one_line_exit_2_nothing_written(tmp_path, capsys, what, parts, nets, file, line, words):
    p, n = _write(tmp_path, parts, nets)
    out = tmp_path / "board.toml"
    out.write_text("an older board, kept\n")
    code = main(["new", "--parts", str(p), "--nets", str(n), "-o", str(out)])
    err = capsys.readouterr()
    assert code == 2, what
    lines = err.err.strip().splitlines()
    assert len(lines) == 1, lines
    assert f"{tmp_path / file}: line {line}" in lines[0], lines[0]
    for w in words:
        assert w in lines[0], (w, lines[0])
    assert "Traceback" not in err.err and err.out == ""
    assert out.read_text() == "an older board, kept\n"
    assert sorted(f.name for f in tmp_path.iterdir()) == ["board.toml", "nets.csv", "parts.csv"]


def test_one_layer_surface_pad_on_top(tmp_path, capsys):
    p, n = _write(tmp_path, "ref,footprint,value\nU1,dip-8,x\nR1,chip-0805,y\n", "net,pin\nA,U1.1\n")
    code, out = _new(tmp_path, p, n, "--layers", "1")
    line = capsys.readouterr().err.strip()
    assert code == 2 and f"{p}: line 3 (R1)" in line and "bottom" in line and not out.exists()


def test_part_outside_given_size(tmp_path, capsys):
    p, n = _write(tmp_path, "ref,footprint,value,x,y\nU1,dip-8,x,38,10\n", "net,pin\nA,U1.1\n")
    code, out = _new(tmp_path, p, n, "--size", "40", "30")
    line = capsys.readouterr().err.strip()
    assert code == 2 and f"{p}: line 2 (U1)" in line and "--size" in line and not out.exists()


def test_missing_file_and_output_onto_input(tmp_path, capsys):
    p, n = _write(tmp_path)
    assert main(["new", "--parts", str(tmp_path / "nope.csv"), "--nets", str(n), "-o",
                 str(tmp_path / "b.toml")]) == 2
    assert "nope.csv: no such file" in capsys.readouterr().err
    assert main(["new", "--parts", str(p), "--nets", str(n), "-o", str(p)]) == 2
    assert "-o" in capsys.readouterr().err and p.read_text() == PARTS


# ------------------------------------------------------------------ names and size

def test_nearest_footprints_are_known_names():
    for typo, want in [("soic-7", "soic-8"), ("dipp-8", "dip-8"), ("header-1x41", "header-1x40"),
                       ("chip-0806", "chip-0805"), ("sot23", "sot-23"), ("qfn-32-ep", "qfn-32-0.5-ep"),
                       ("sot223", "sot-223"), ("tssop-19", "tssop-20"), ("crystal-3215", "crystal-3225")]:
        near = nearest_footprints(typo)
        assert want in near, (typo, near)
        assert all(builtin_footprint(x) is not None for x in near)


def test_estimated_size_hand_worked():
    """dip-8 (JEDEC MS-001: 4 x 2.54 mm pitch, rows 7.62 mm apart, 1.6 mm pads): the part
    rectangle is 10.16 x 9.22 mm (pads reach 3.81 + 0.8 from the centre across the rows);
    the two-trace gap of the default class is (0.25 + 2 x 0.2) + (0.25 + 0.2) = 1.1 mm.
    Area (11.26 x 10.32) x 2.0 = 232.4 mm^2; width sqrt(1.5 x 232.4) = 18.67, height
    12.45; plus 2 x 0.5 mm edge clearance, rounded up: 20 x 14 mm."""
    b = Board("b", [(0, 0), (1, 0), (1, 1), (0, 1)], parts=[Part("U1", "dip-8")])
    area = (10.16 + 1.1) * (9.22 + 1.1) * ROUTING_FACTOR[2]
    w = math.sqrt(1.5 * area)
    assert (math.ceil(w + 1.0), math.ceil(area / w + 1.0)) == (20, 14)
    assert estimate_size(b) == (20.0, 14.0)
    # a placed part far out grows the board to hold it, with the edge clearance
    b.parts.append(Part("J1", "header-1x2", at=(40.0, 3.0)))
    w2, h2 = estimate_size(b)
    assert w2 >= 40.0 + 2.54 + 0.5 and h2 >= 14.0


def test_estimated_board_places_and_routes(tmp_path):
    """The estimated size leaves room: place and route the small CSV board completely."""
    p, n = _write(tmp_path)
    r = read_csv_board(p, n, name="t")
    assert r.estimated and r.board.size[0] >= r.board.size[1]
    out = tmp_path / "b.toml"
    code, out = _new(tmp_path, p, n)
    assert code == 0
    assert main(["place", str(out), "-o", str(tmp_path / "p.toml"), "-q"]) == 0
    assert main(["route", str(tmp_path / "p.toml"), "-o", str(tmp_path / "r.toml"), "-q"]) == 0
    assert main(["check", str(tmp_path / "r.toml")]) == 0


@pytest.mark.parametrize("example,nets", [("greenhouse-node", 14), ("beehive-scale", 18)])
def test_example_new_place_route_check(tmp_path, capsys, example, nets):
    """boards/<example>: the README's three commands give a complete, clean board (the beehive
    scale carries a 0.5 mm pitch QFN-32 with its exposed pad, a TSSOP-16, a SOT-223, a 4-pad
    crystal and tactile switches, at the default 0.25 mm grid)."""
    import json
    from pathlib import Path
    src = Path(__file__).resolve().parent.parent / "boards" / example
    new, placed, routed = (tmp_path / f for f in ("node.toml", "placed.toml", "routed.toml"))
    assert main(["new", "--parts", str(src / "parts.csv"), "--nets", str(src / "nets.csv"),
                 "-o", str(new), "-q"]) == 0
    board = load_board(new)
    assert sum(p.at is None for p in board.parts) == len(board.parts) - 1   # J1 is fixed
    assert main(["place", str(new), "-o", str(placed), "-q"]) == 0
    capsys.readouterr()
    assert main(["route", str(placed), "-o", str(routed), "--json"]) == 0
    totals = json.loads(capsys.readouterr().out)["totals"]
    assert totals["routed"] == totals["nets"] == len(board.nets) == nets
    assert main(["check", str(routed), "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["violations"] == []


def test_new_board_is_written_by_tomli_w_and_reads_back_exactly(tmp_path):
    # tomli-w writes the file; the standard library's tomllib (an independent reader) parses it
    import tomllib
    from router.boardfile import dumps_board, load_board
    from router.csvboard import read_csv_board, write_csv_board
    here = Path(__file__).resolve().parent.parent / "boards" / "beehive-scale"
    out = tmp_path / "b.toml"
    write_csv_board(here / "parts.csv", here / "nets.csv", out)
    text = out.read_text()
    assert text.startswith("# written by elbowroom new from parts.csv and nets.csv")
    data = tomllib.loads(text)
    assert [p["ref"] for p in data["parts"]] == [p.ref for p in load_board(out).parts]
    built = read_csv_board(here / "parts.csv", here / "nets.csv").board
    assert dumps_board(load_board(out)) == dumps_board(built)


def test_a_part_may_sit_at_any_angle(tmp_path):
    # the board file takes any rotation in degrees; so does the parts file
    from router.csvboard import read_csv_board
    (tmp_path / "p.csv").write_text(PARTS.replace("3,8,90", "3,8,37.5"))
    (tmp_path / "n.csv").write_text(NETS)
    b = read_csv_board(tmp_path / "p.csv", tmp_path / "n.csv").board
    assert next(p for p in b.parts if p.ref == "J1").rotation == 37.5
