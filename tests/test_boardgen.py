"""Random boards of router.boardgen: valid, deterministic, laid out without overlaps, nets as asked.

Overlaps and free area are measured with shapely and pin use with networkx, apart from the
project's own check; the contract is /work/shared/board-format.md.
"""
import math
import subprocess
import sys
from pathlib import Path

import networkx as nx
import pytest
from shapely.geometry import box
from shapely.ops import unary_union

from router.boardfile import dumps_board, load_board, loads_board
from router.boardgen import OFFGRID_STEPS, generate_board
from router.check import check
from router.errors import BoardError
from router.footprints import builtin_footprint
from router.geometry import part_rect, placed_pads

ROOT = Path(__file__).resolve().parents[1]
SEEDS = range(12)
CASES = [dict(nets=10), dict(nets=20), dict(nets=40), dict(nets=60, size=(100.0, 80.0)),
         dict(nets=200, size=(100.0, 80.0)), dict(nets=15, size=(30.0, 20.0))]


def _boards():
    for layers in (1, 2):
        for kw in CASES:
            for seed in (SEEDS if kw["nets"] <= 40 else range(2)):
                yield seed, dict(kw, layers=layers)


BOARDS = list(_boards())


def _id(case):
    seed, kw = case
    return f"{seed}-" + "-".join(f"{k}{v}" for k, v in kw.items())


@pytest.fixture(scope="module", params=BOARDS, ids=[_id(c) for c in BOARDS])
def made(request):
    seed, kw = request.param
    return seed, kw, generate_board(seed, **kw)


def test_round_trip(made):
    # the board file contract: every generated board loads back to an equal board
    _, _, b = made
    text = dumps_board(b)
    again = loads_board(text, "gen.toml")
    assert again == b
    assert dumps_board(again) == text


def test_only_open_violations(made):
    # an unrouted board: every pin of a net is open, nothing else (no placement, clearance,
    # edge or hole-spacing violation)
    _, _, b = made
    found = check(b)
    assert {v.rule for v in found} <= {"open"}


def test_nets_as_asked(made):
    seed, kw, b = made
    assert b.name == f"gen-{seed}"
    assert len(b.nets) == kw["nets"]
    assert all(2 <= len(n.pins) <= 4 for n in b.nets)
    classes = {n.net_class for n in b.nets}
    assert classes == {"default", "power"}
    assert (b.classes["power"].trace_width, b.classes["power"].clearance) == (0.5, 0.25)


def test_no_pin_in_two_nets(made):
    # each pin node of the bipartite net-pin graph has degree 1 (networkx degrees)
    _, _, b = made
    g = nx.Graph()
    for n in b.nets:
        for p in n.pins:
            g.add_edge(("net", n.name), ("pin", p))
    pins = [v for v in g if v[0] == "pin"]
    assert sum(len(n.pins) for n in b.nets) == len(pins)
    assert max(d for v, d in g.degree(pins)) == 1


def test_parts_apart_and_board_half_free(made):
    # part rectangles (bodies and pads) are disjoint by at least 1 mm and inside the board
    # with a margin; together they leave at least 40 % of the board free (shapely areas)
    _, _, b = made
    rects = [box(*part_rect(b, p)) for p in b.parts]
    board = box(0, 0, *b.size)
    for i, a in enumerate(rects):
        assert board.buffer(-1.0).contains(a)
        for c in rects[i + 1:]:
            assert a.distance(c) >= 1.0
    assert unary_union(rects).area <= 0.6 * board.area


def test_surface_pads_on_a_copper_side(made):
    # board-format.md: on a one-layer board the copper is "bottom" and a surface pad must sit
    # on the bottom side; two-layer boards here carry surface parts on top
    _, kw, b = made
    side = "bottom" if kw["layers"] == 1 else "top"
    for p in b.parts:
        if any(pad.drill is None for pad in builtin_footprint(p.footprint).pads):
            assert p.side == side
    if kw["layers"] == 1:
        assert all(pad.layers == ("bottom",) for pad in placed_pads(b))


def _off(v, pitch):
    return abs(round(v / pitch) * pitch - v) > 1e-6


@pytest.mark.parametrize("seed", range(5))
def test_determinism(seed):
    a = dumps_board(generate_board(seed, nets=30))
    b = dumps_board(generate_board(seed, nets=30))
    c = dumps_board(generate_board(seed + 100, nets=30))
    assert a == b
    assert a != c


@pytest.mark.parametrize("seed", range(5))
def test_on_grid_centres(seed):
    b = generate_board(seed, nets=25, grid=0.5)
    assert b.rules.grid == 0.5
    assert not any(_off(v, 0.5) for p in b.parts for v in p.at)


@pytest.mark.parametrize("seed", range(5))
def test_offgrid(seed):
    b = generate_board(seed, nets=25, offgrid=True)
    assert check(b) and {v.rule for v in check(b)} == {"open"}
    moved = [p for p in b.parts if not p.footprint.startswith("hole-")]
    # every moved centre is off the 0.25 mm grid in both coordinates, by one of the steps
    for p in moved:
        for v in p.at:
            assert _off(v, 0.25)
            r = v - math.floor(v / 0.25) * 0.25
            assert any(abs(r - s % 0.25) < 1e-6 for s in OFFGRID_STEPS)
    pads = [pad for pad in placed_pads(b) if not pad.ref.startswith("H")]
    assert all(_off(pad.x, 0.25) or _off(pad.y, 0.25) for pad in pads)


@pytest.mark.parametrize("seed", range(4))
def test_unplaced_is_the_placed_board_without_positions(seed):
    placed = generate_board(seed, nets=30)
    loose = generate_board(seed, nets=30, unplaced=True)
    assert loose.nets == placed.nets
    for a, b in zip(placed.parts, loose.parts):
        assert (a.ref, a.footprint, a.rotation, a.side, a.fixed) == (b.ref, b.footprint, b.rotation, b.side, b.fixed)
        family = a.footprint.split("-")[0]
        assert a.fixed == (family in ("header", "terminal", "hole"))
        assert b.at == (a.at if a.fixed else None)
    assert any(p.at is None for p in loose.parts)
    assert loads_board(dumps_board(loose)) == loose


def test_corner_holes_and_locality():
    # four 3.2 mm mounting holes (M3 clearance, common practice) at the corners; a net's
    # pins lie mostly close together: the median net spans well under half the board
    b = generate_board(3, nets=60, size=(100.0, 80.0))
    holes = [p for p in b.parts if p.footprint == "hole-3.2"]
    assert sorted(p.at for p in holes) == [(4.0, 4.0), (4.0, 76.0), (96.0, 4.0), (96.0, 76.0)]
    where = {pad.name: (pad.x, pad.y) for pad in placed_pads(b)}
    spans = sorted(max(math.dist(where[p], where[q]) for p in n.pins for q in n.pins) for n in b.nets)
    assert spans[len(spans) // 2] < 0.5 * math.hypot(100.0, 80.0)


@pytest.mark.parametrize("kw", [dict(max_pins=2), dict(max_pins=8, nets=30)])
def test_max_pins(kw):
    b = generate_board(5, **kw)
    assert max(len(n.pins) for n in b.nets) <= kw["max_pins"]
    assert min(len(n.pins) for n in b.nets) >= 2
    if kw["max_pins"] == 8:
        assert max(len(n.pins) for n in b.nets) > 4


def test_too_many_nets_for_the_board_gives_what_fits():
    b = generate_board(1, nets=200, size=(30.0, 20.0))
    assert 5 <= len(b.nets) < 200
    assert {v.rule for v in check(b)} == {"open"}


@pytest.mark.parametrize("kw", [dict(nets=0), dict(layers=3), dict(size=(5.0, 40.0)),
                                dict(size=(math.nan, 40.0)), dict(max_pins=1), dict(grid=0.0)])
def test_bad_arguments(kw):
    with pytest.raises(BoardError):
        generate_board(1, **kw)


def test_script_writes_the_same_board(tmp_path):
    out = tmp_path / "b.toml"
    run = subprocess.run([sys.executable, str(ROOT / "scripts" / "genboard.py"), "9", "-o", str(out),
                          "--nets", "25", "--layers", "1", "--size", "70", "50"],
                         capture_output=True, text=True)
    assert run.returncode == 0, run.stderr
    assert load_board(out) == generate_board(9, nets=25, layers=1, size=(70.0, 50.0))
    bad = subprocess.run([sys.executable, str(ROOT / "scripts" / "genboard.py"), "9", "-o", str(out),
                          "--nets", "0"], capture_output=True, text=True)
    assert bad.returncode == 2
    assert len(bad.stderr.strip().splitlines()) == 1 and "Traceback" not in bad.stderr
    assert load_board(out).name == "gen-9"      # the earlier file is untouched
