"""Placement: legal places on every example board, determinism, wirelength against a random
placement and against hand-computed values, the quadratic start, and boards that cannot fit."""
import itertools
from dataclasses import replace
from pathlib import Path

import networkx as nx
import numpy as np
import pytest
from shapely.geometry import Polygon, box

from placement import place
from placement.anneal import Problem, quadratic_start
from placement.legalize import effective_gap, site_for
from placement.wirelength import CongestionGrid, UTILISATION, hpwl_rows, net_hpwl, total_hpwl
from router.boardfile import dumps_board, load_board, loads_board
from router.check import check
from router.cli import main
from router.errors import PlacementError
from router.geometry import outline_polygon, part_rect
from router.model import Board
from router.units import TOL, on_grid

BOARDS = sorted((Path(__file__).parent.parent / "boards").glob("*.toml"))


def stripped(board: Board) -> Board:
    """The board with every part that is not fixed unplaced."""
    out = board.copy()
    out.parts = [p if p.fixed else replace(p, at=None) for p in out.parts]
    return out


def assert_legal(before: Board, after: Board, gap: float, moved=None):
    """Every rule of a legal placement, measured with shapely (the reference geometry library)."""
    assert [p.ref for p in after.parts] == [p.ref for p in before.parts]
    ec = after.rules.edge_clearance
    region = outline_polygon(after).buffer(-ec, join_style="mitre").buffer(TOL, join_style="mitre")
    rects = {}
    for old, new in zip(before.parts, after.parts):
        assert new.at is not None, new.ref
        if old.fixed or (moved is not None and new.ref not in moved):
            assert (new.at, new.rotation, new.side) == (old.at, old.rotation, old.side), new.ref
            continue
        assert new.rotation in (0, 90, 180, 270), new.ref
        g = after.rules.grid
        assert on_grid(new.at[0], g) and on_grid(new.at[1], g), (new.ref, new.at)
        r = box(*part_rect(after, new))
        # the rectangle holds the body and every pad: all inside the outline less the edge margin
        assert region.covers(r), new.ref
        for ko in after.keepouts:
            assert Polygon(ko.polygon).distance(r) >= gap - TOL, new.ref
        rects[new.ref] = r
    all_rects = {p.ref: box(*part_rect(after, p)) for p in after.parts}
    for a, b in itertools.combinations(all_rects, 2):
        if a in rects or b in rects:
            assert all_rects[a].distance(all_rects[b]) >= gap - TOL, (a, b)
    assert [v.message for v in check(after) if v.rule == "placement"] == []


# ----------------------------------------------------------------------------- example boards

@pytest.fixture(scope="module", params=BOARDS, ids=lambda p: p.stem)
def placed_example(request):
    board = stripped(load_board(request.param))
    text = dumps_board(board)
    result = place(board, seed=0)
    assert dumps_board(board) == text, "the input board was changed"
    return board, result


def test_example_boards_place_legally(placed_example):
    board, result = placed_example
    assert sorted(result.placed) == sorted(p.ref for p in board.parts if not p.fixed)
    assert result.gap >= board.rules.part_gap
    assert_legal(board, result.board, board.rules.part_gap)
    # check's other rules on an unrouted board: only the opens of the unrouted nets
    assert {v.rule for v in check(result.board)} <= {"open"}


def test_example_boards_beat_a_random_legal_placement(placed_example):
    _, result = placed_example
    assert result.random is not None
    assert result.after < result.random
    assert result.after == pytest.approx(total_hpwl(result.board))
    assert "random legal placement" in result.summary()


def test_placed_example_boards_route_completely(placed_example):
    pytest.importorskip("router.negotiate")
    from router import route
    _, result = placed_example
    assert dict(route(result.board, seed=0).failed) == {}


def test_same_seed_same_placement():
    board = stripped(load_board(BOARDS[0]))
    a = dumps_board(place(board, seed=3).board)
    b = dumps_board(place(board, seed=3).board)
    assert a == b


def test_before_is_measured_when_every_part_had_a_place():
    board = load_board(BOARDS[0])
    result = place(board, seed=0, all_parts=True)
    assert result.before == pytest.approx(total_hpwl(board))
    moved = {p.ref for p in board.parts if not p.fixed}
    assert sorted(result.placed) == sorted(moved)
    assert_legal(board, result.board, board.rules.part_gap, moved=moved)
    assert "wirelength before:" in result.summary() and f"{result.before:.1f}" in result.summary()


def test_placed_parts_keep_their_place_without_all():
    board = load_board(BOARDS[-1])
    keep = {p.ref for p in board.parts[:4]}
    board.parts = [p if p.ref in keep or p.fixed else replace(p, at=None) for p in board.parts]
    result = place(board, seed=1)
    assert_legal(board, result.board, board.rules.part_gap,
                 moved={p.ref for p in board.parts if p.at is None})
    assert result.before is None and "not every part had a place" in result.summary()


def test_nothing_to_place_changes_nothing():
    board = load_board(BOARDS[0])
    result = place(board)
    assert result.placed == [] and dumps_board(result.board) == dumps_board(board)
    assert result.before == result.after and "nothing to place" in result.summary()


def test_gap_option_is_kept():
    board = stripped(load_board(BOARDS[-1]))
    result = place(board, gap=2.0, random_baseline=False)
    assert result.least_gap == 2.0
    assert_legal(board, result.board, 2.0)


def test_negative_gap_is_refused():
    with pytest.raises(PlacementError, match="gap"):
        place(stripped(load_board(BOARDS[0])), gap=-1.0)


def test_gap_is_raised_to_the_largest_class_clearance():
    board = stripped(load_board(BOARDS[0]))
    need = max(nc.clearance for nc in board.classes.values())
    assert effective_gap(board, 0.0) >= need


@pytest.mark.parametrize("seed,options", [
    (1, dict(nets=12, size=(40, 30), layers=1)),
    (2, dict(nets=30, size=(60, 40), offgrid=True)),
    (3, dict(nets=40, size=(60, 45), grid=0.5, max_pins=6)),
    (4, dict(nets=25, size=(70, 50), layers=1, grid=1.27)),
])
def test_generated_boards_place_legally(seed, options):
    from router.boardgen import generate_board
    board = generate_board(seed, unplaced=True, **options)
    result = place(board, seed=seed)
    assert_legal(board, result.board, board.rules.part_gap)
    assert result.after < result.random


# ----------------------------------------------------------------------------- outline, keepouts

L_SHAPE = """format = 1
[board]
name = "l-shape"
outline = [[0, 0], [50, 0], [50, 20], [20, 20], [20, 45], [0, 45]]
[rules]
grid = 0.5
edge_clearance = 1.0
[[keepouts]]
polygon = [[8, 8], [14, 8], [11, 14]]
[[keepouts]]
rect = [30.0, 5.0, 40.0, 12.0]
[[parts]]
ref = "J1"
footprint = "header-1x4"
at = [10.0, 40.0]
fixed = true
"""


def l_board(n_parts=12):
    text = L_SHAPE
    names = ["chip-0805", "soic-8", "sot-23", "radial-2.5", "axial-7.62", "chip-1206"]
    pins = {"chip-0805": 2, "soic-8": 8, "sot-23": 3, "radial-2.5": 2, "axial-7.62": 2, "chip-1206": 2}
    parts = []
    for k in range(n_parts):
        fp = names[k % len(names)]
        parts.append((f"P{k + 1}", fp))
        text += f'[[parts]]\nref = "P{k + 1}"\nfootprint = "{fp}"\nrotation = 90\n'
    rng = np.random.default_rng(5)
    allpins = [f"{r}.{i + 1}" for r, fp in parts for i in range(pins[fp])] + [f"J1.{i}" for i in range(1, 5)]
    rng.shuffle(allpins)
    for k in range(0, len(allpins) - 2, 3):
        text += f'[[nets]]\nname = "N{k}"\npins = {allpins[k:k + 3]!r}\n'.replace("'", '"')
    return loads_board(text, "l.toml")


def test_polygon_outline_and_keepouts():
    board = l_board()
    result = place(board, seed=2)
    assert_legal(board, result.board, board.rules.part_gap)
    assert result.after < result.random


COPPER = """format = 1
[board]
name = "copper"
size = [40.0, 30.0]
[[parts]]
ref = "J1"
footprint = "header-1x2"
at = [4.0, 15.0]
rotation = 90
fixed = true
""" + "".join(f'[[parts]]\nref = "R{k}"\nfootprint = "chip-0805"\n' for k in range(1, 7)) + """
[[parts]]
ref = "U1"
footprint = "soic-8"
[[nets]]
name = "GND"
pins = ["J1.2", "R1.1", "R2.1", "U1.4"]
[[nets]]
name = "S"
pins = ["J1.1", "R3.1", "U1.2", "R4.2", "R5.1", "R6.2"]
[[traces]]
net = "GND"
layer = "top"
width = 0.5
points = [[4.0, 16.27], [20.0, 16.27], [20.0, 28.0]]
fixed = true
[[vias]]
net = "GND"
at = [20.0, 28.0]
drill = 0.4
diameter = 0.8
"""


def test_copper_already_on_the_board_is_kept_clear():
    board = loads_board(COPPER, "copper.toml")
    result = place(board, seed=0)
    assert_legal(board, result.board, board.rules.part_gap)
    copper = [box(3.75, 16.02, 20.25, 16.52), box(19.75, 16.02, 20.25, 28.25), box(19.6, 27.6, 20.4, 28.4)]
    for p in result.board.parts:
        if p.ref != "J1":
            r = box(*part_rect(result.board, p))
            assert min(c.distance(r) for c in copper) >= board.rules.part_gap - TOL, p.ref
    # nothing but the opens of nets whose parts are not joined yet: no short, no clearance
    assert {v.rule for v in check(result.board)} <= {"open"}


# ----------------------------------------------------------------------------- cannot fit

CROWDED = """format = 1
[board]
name = "crowded"
size = [20.0, 20.0]
""" + "".join(f'[[parts]]\nref = "U{k}"\nfootprint = "dip-14"\n' for k in range(1, 11))


def test_crowded_board_exits_2_with_the_numbers(tmp_path, capsys):
    src = tmp_path / "crowded.toml"
    src.write_text(CROWDED)
    out = tmp_path / "out.toml"
    assert main(["place", str(src), "-o", str(out)]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and "Traceback" not in err
    # by hand: dip-14 rectangle 17.78 x 9.22 mm (pads 1.6 mm on rows 7.62 apart: 7.62 + 1.6 = 9.22,
    # body 6.35); grown by the 0.5 mm gap, 18.28 x 9.72 = 177.68 mm^2 each, 1776.8 mm^2 for ten;
    # inside the 0.5 mm edge clearance 19 x 19 = 361 mm^2.
    assert "crowded.toml" in err and "1776.8 mm^2" in err and "361.0 mm^2" in err
    assert not out.exists()


def test_part_too_large_for_the_board_is_placement_error(tmp_path, capsys):
    text = 'format = 1\n[board]\nname = "narrow"\nsize = [60.0, 6.0]\n' \
           '[[parts]]\nref = "U1"\nfootprint = "dip-14"\n'
    src = tmp_path / "narrow.toml"
    src.write_text(text)
    out = tmp_path / "out.toml"
    assert main(["place", str(src), "-o", str(out)]) == 2
    err = capsys.readouterr().err
    assert "U1" in err and "no free place" in err and "Traceback" not in err
    assert not out.exists()


def test_cli_place_writes_the_board(tmp_path, capsys):
    src = tmp_path / "b.toml"
    src.write_text(dumps_board(stripped(load_board(BOARDS[-1]))))
    out = tmp_path / "placed.toml"
    assert main(["place", str(src), "-o", str(out), "--seed", "4"]) == 0
    placed = load_board(out)
    assert all(p.at is not None for p in placed.parts)
    assert "wirelength after" in capsys.readouterr().out


# ----------------------------------------------------------------------------- wirelength

HAND = """format = 1
[board]
name = "hand"
size = [40.0, 30.0]
[[parts]]
ref = "R1"
footprint = "chip-0805"
at = [10.0, 10.0]
[[parts]]
ref = "R2"
footprint = "chip-0805"
at = [20.0, 15.0]
rotation = 90
[[parts]]
ref = "U1"
footprint = "dip-8"
at = [30.0, 20.0]
[[nets]]
name = "A"
pins = ["R1.2", "R2.1"]
[[nets]]
name = "B"
pins = ["R1.1", "R2.2", "U1.1"]
[[nets]]
name = "C"
pins = ["U1.8"]
"""


def test_hpwl_against_hand_computed_values():
    # chip-0805 pads at x = -/+0.95 (IPC-7351B nominal, from memory, as router.footprints has them);
    # R2 turned by 90: pad 1 at (20, 14.05), pad 2 at (20, 15.95); dip-8 pin 1 at (-3.81, -3.81)
    # (JEDEC MS-001: 7.62 mm rows, 2.54 mm pitch), so U1.1 at (26.19, 16.19).
    # A: R1.2 (10.95, 10) to R2.1 (20, 14.05): 9.05 + 4.05 = 13.1
    # B: R1.1 (9.05, 10), R2.2 (20, 15.95), U1.1 (26.19, 16.19): 17.14 + 6.19 = 23.33
    # C: one pin: 0
    b = loads_board(HAND)
    h = net_hpwl(b)
    assert h["A"] == pytest.approx(13.1, abs=TOL)
    assert h["B"] == pytest.approx(23.33, abs=TOL)
    assert h["C"] == 0.0
    assert total_hpwl(b) == pytest.approx(36.43, abs=TOL)


def test_hpwl_rows_pad_by_repeating():
    tx = np.array([0.0, 3.0, 1.0, 5.0])
    ty = np.array([0.0, 4.0, 2.0, 1.0])
    rows = np.array([[0, 1, 0], [2, 3, 2], [0, 1, 2]])
    assert hpwl_rows(tx, ty, rows).tolist() == [7.0, 5.0, 7.0]


def _rmst(pts):
    g = nx.Graph()
    for (i, a), (j, b) in itertools.combinations(enumerate(pts), 2):
        g.add_edge(i, j, weight=abs(a[0] - b[0]) + abs(a[1] - b[1]))
    return nx.minimum_spanning_tree(g).size(weight="weight")


@pytest.mark.parametrize("seed", range(8))
def test_hpwl_bounds_against_the_rectilinear_spanning_tree(seed):
    # HPWL is a lower bound of every rectilinear tree, equal to the shortest one for up to three
    # pins (M. Hanan, "On Steiner's problem with rectilinear distance", 1966), and the rectilinear
    # spanning tree is at most 3/2 of the shortest tree (F. K. Hwang, 1976): HPWL <= RMST and, for
    # 2 or 3 pins, RMST <= 1.5 * HPWL. The spanning tree comes from networkx.
    rng = np.random.default_rng(seed)
    for k in (2, 3, 5, 9):
        pts = [tuple(p) for p in rng.uniform(0, 50, (k, 2)).round(2)]
        xs, ys = [p[0] for p in pts], [p[1] for p in pts]
        h = (max(xs) - min(xs)) + (max(ys) - min(ys))
        t = _rmst(pts)
        assert h <= t + TOL
        if k <= 3:
            assert t <= 1.5 * h + TOL


def test_congestion_grid_hand_computed():
    # a 10 x 10 mm area in 10 cells of 1 mm; two layers, 0.1 mm pitch: capacity UTILISATION * 2 * 1 / 0.1
    g = CongestionGrid((0.0, 0.0, 10.0, 10.0), layers=2, pitch=0.1, cells=10)
    assert (g.nx, g.ny, g.cell) == (10, 10, 1.0)
    assert g.capacity == pytest.approx(UTILISATION * 2 * 1.0 / 0.1)
    g.add_box(0.5, 0.5, 2.5, 1.5)           # 3 x 2 cells, 2 + 1 = 3 mm of track: 0.5 each
    assert g.demand[0:3, 0:2].tolist() == [[0.5, 0.5]] * 3 and g.demand.sum() == pytest.approx(3.0)
    assert g.overflow() == pytest.approx(6 * max(0.5 - g.capacity, 0))
    g.add_pads([0.2, 0.3], [0.2, 0.4], [1.5, 1.0])   # both in cell (0, 0): 0.5 + 2.5 = 3.0
    assert g.overflow() == pytest.approx(max(3.0 - g.capacity, 0) + 5 * max(0.5 - g.capacity, 0))
    g.add_box(0.5, 0.5, 2.5, 1.5, -1.0)
    assert g.demand[1:, :].sum() == pytest.approx(0.0)


# ----------------------------------------------------------------------------- quadratic start

def test_quadratic_start_hand_computed():
    # One part on springs to two fixed pads: weight 1 each (two-pin nets), so its centre sits at
    # the pads' mean, up to the weak pull to the middle of the region, 1e-3 of the mean spring
    # weight (2): x = (2 * mean + 2e-3 * middle) / (2 + 2e-3). Worked example of the quadratic
    # placement of K. M. Hall (1970).
    text = """format = 1
[board]
name = "q"
size = [40.0, 30.0]
[[parts]]
ref = "J1"
footprint = "header-1x2"
at = [6.27, 10.0]
fixed = true
[[parts]]
ref = "J2"
footprint = "header-1x2"
at = [22.47, 14.0]
fixed = true
[[parts]]
ref = "R1"
footprint = "chip-0805"
[[nets]]
name = "A"
pins = ["J1.2", "R1.1"]
[[nets]]
name = "B"
pins = ["J2.1", "R1.2"]
"""
    b = loads_board(text)
    stay = [p for p in b.parts if p.at is not None]
    mov = [p for p in b.parts if p.at is None]
    prob = Problem(b, mov, stay, site_for(b, 0.5, stay))
    xy = quadratic_start(prob)
    # pads: J1.2 at (7.54, 10), J2.1 at (21.2, 14); mean (14.37, 12)
    eps = 2e-3
    bx0, by0, bx1, by1 = prob.region_bounds
    assert xy[0, 0] == pytest.approx((2 * 14.37 + eps * (bx0 + bx1) / 2) / (2 + eps), abs=1e-9)
    assert xy[0, 1] == pytest.approx((2 * 12.0 + eps * (by0 + by1) / 2) / (2 + eps), abs=1e-9)
