"""Figures of `report`, `compare` and `route --json`: hand-counted bends and lengths, bounds against
networkx and brute force, the comparison, and the command line."""
import glob
import itertools
import json
import math
import random
import subprocess
import sys
from collections import defaultdict
from pathlib import Path

import networkx as nx
import pytest
from shapely.geometry import LineString, Point
from shapely.ops import unary_union

from router.boardfile import load_board, loads_board, save_board
from router.check import check
from router.cli import main
from router.connectivity import routed
from router.bounds import (
    bends_lower_bound, hpwl, length_lower_bound, path_bends_lower_bound, rect_distance, rmst_length,
)
from router.figures import FIELDS, TOTAL_FIELDS, bend_points, board_figures, compare_figures, format_compare, format_report
from router.geometry import placed_pads

ROOT = Path(__file__).resolve().parent.parent
BOARDS = sorted(glob.glob(str(ROOT / "boards" / "*.toml")))


# ---------------------------------------------------------------- building test boards

def make(pads, nets, traces=(), vias=(), jumpers=(), layers=2, unplaced=()):
    """A board of one-pad parts: `pads` ref -> (x, y) (a plated 1 mm square pad) or (x, y, w, h),
    `nets` name -> [refs], `traces` (net, layer, points), `vias` (net, at), `jumpers` (net, a, b)."""
    out = ["format = 1", "[board]", 'name = "t"', "size = [40.0, 40.0]", f"copper_layers = {layers}"]
    sizes = {}
    for ref, spec in pads.items():
        w, h = spec[2:] if len(spec) == 4 else (1.0, 1.0)
        sizes.setdefault((w, h), f"pt{len(sizes)}")
    sizes.setdefault((1.0, 1.0), f"pt{len(sizes)}")
    for (w, h), name in sizes.items():
        out += [f"[footprints.{name}]", "body = [0.2, 0.2]",
                f'pads = [{{ pin = "1", offset = [0.0, 0.0], shape = "rectangle", size = [{w}, {h}], drill = 0.4 }}]']
    for ref, spec in pads.items():
        w, h = spec[2:] if len(spec) == 4 else (1.0, 1.0)
        out += ["[[parts]]", f'ref = "{ref}"', f'footprint = "{sizes[(w, h)]}"', f"at = [{spec[0]}, {spec[1]}]"]
    for ref in unplaced:
        out += ["[[parts]]", f'ref = "{ref}"', f'footprint = "{sizes[(1.0, 1.0)]}"']
    for name, refs in nets.items():
        out += ["[[nets]]", f'name = "{name}"', "pins = [" + ", ".join(f'"{r}.1"' for r in refs) + "]"]
    for net, layer, pts in traces:
        body = ", ".join(f"[{x}, {y}]" for x, y in pts)
        out += ["[[traces]]", f'net = "{net}"', f'layer = "{layer}"', "width = 0.25", f"points = [{body}]"]
    for net, (x, y) in vias:
        out += ["[[vias]]", f'net = "{net}"', f"at = [{x}, {y}]"]
    for net, a, b in jumpers:
        out += ["[[jumpers]]", f'net = "{net}"', f"from = [{a[0]}, {a[1]}]", f"to = [{b[0]}, {b[1]}]"]
    return loads_board("\n".join(out) + "\n")


def net_figs(board, name="A"):
    return next(n for n in board_figures(board)["nets"] if n["name"] == name)


# Two pads, not aligned: A at (5, 5), B at (15, 12); pads 1 mm square.
AB = {"PA": (5.0, 5.0), "PB": (15.0, 12.0)}
NET = {"A": ["PA", "PB"]}


# ---------------------------------------------------------------- bends and length, hand counted

def test_l_shape_one_bend():
    # hand counted: corner (15, 5) lies outside both pads; length 10 + 7
    b = make(AB, NET, [("A", "top", [(5, 5), (15, 5), (15, 12)])])
    f = net_figs(b)
    assert (f["bends"], f["length"], f["vias"], f["routed"]) == (1, 17.0, 0, True)
    assert f["bend_points"] == [[15.0, 5.0]]


@pytest.mark.parametrize("pieces", [
    [[(5, 5), (15, 5)], [(15, 5), (15, 12)]],                       # split at the corner
    [[(15, 12), (15, 5)], [(5, 5), (15, 5)]],                       # reversed and reordered
    [[(5, 5), (9, 5)], [(9, 5), (15, 5), (15, 8)], [(15, 8), (15, 12)]],   # split mid-run too
    [[(5, 5), (12, 5)], [(9, 5), (15, 5)], [(15, 12), (15, 5)]],    # overlapping collinear runs
])
def test_split_polyline_still_one_bend(pieces):
    b = make(AB, NET, [("A", "top", p) for p in pieces])
    f = net_figs(b)
    assert f["bends"] == 1 and f["bend_points"] == [[15.0, 5.0]]
    # length counts every segment as drawn (hand summed), overlaps twice
    assert f["length"] == pytest.approx(sum(abs(x1 - x0) + abs(y1 - y0)
                                            for p in pieces for (x0, y0), (x1, y1) in zip(p, p[1:])))


def test_t_junction_is_no_bend():
    # A (5,5) -- B (15,5) straight; C (10,12) joined by a vertical ending on the run's middle
    pads = {"PA": (5.0, 5.0), "PB": (15.0, 5.0), "PC": (10.0, 12.0)}
    b = make(pads, {"A": ["PA", "PB", "PC"]},
             [("A", "top", [(5, 5), (15, 5)]), ("A", "top", [(10, 5), (10, 12)])])
    f = net_figs(b)
    assert (f["bends"], f["length"], f["routed"]) == (0, 17.0, True)


def test_t_junction_drawn_as_two_ls_is_no_bend():
    # the same T drawn as an L (5,5)-(10,5)-(10,12) and a run (10,5)-(15,5): three arms meet at (10,5)
    pads = {"PA": (5.0, 5.0), "PB": (15.0, 5.0), "PC": (10.0, 12.0)}
    b = make(pads, {"A": ["PA", "PB", "PC"]},
             [("A", "top", [(5, 5), (10, 5), (10, 12)]), ("A", "top", [(10, 5), (15, 5)])])
    assert net_figs(b)["bends"] == 0


def test_corner_past_the_end_stub_is_no_bend():
    # the L with its horizontal run 0.5 mm past the corner: a T, and the stub's end is one arm
    b = make(AB, NET, [("A", "top", [(5, 5), (15.5, 5)]), ("A", "top", [(15, 5), (15, 12)])])
    f = net_figs(b)
    assert (f["bends"], f["length"], f["routed"]) == (0, 17.5, True)
    # the turn hides in a T: the single-path bound (1) would lie above the count, so none is given
    assert f["bends_lower_bound"] == 0 and f["bends_lower_bound_path"] is None
    # the plain L: the path bound holds and is met
    f = net_figs(make(AB, NET, [("A", "top", [(5, 5), (15, 5), (15, 12)])]))
    assert (f["bends"], f["bends_lower_bound_path"]) == (1, 1)


def test_corner_inside_a_pad_is_no_bend():
    # corner at (15, 12), the centre of pad B, and one at (15.3, 12.4), still inside B (0.5 half size)
    b = make(AB, NET, [("A", "top", [(5, 5), (5, 12), (15, 12)])])
    assert net_figs(b)["bends"] == 1                    # (5, 12) is outside both pads
    b = make(AB, NET, [("A", "top", [(5, 5), (15.3, 5), (15.3, 12.4), (15, 12.4)])])
    assert net_figs(b)["bend_points"] == [[15.3, 5.0]]
    # exactly on the pad's edge (15.5) counts as inside: the pad is closed, within TOL
    b = make(AB, NET, [("A", "top", [(5, 5), (15.5, 5), (15.5, 12), (15, 12)])])
    assert net_figs(b)["bend_points"] == [[15.5, 5.0]]


def test_corner_moved_into_a_via_is_a_bend():
    # the contract: at a via centre the arms of both layers count together; top east-west run
    # ending at the via, bottom run leaving north: two arms at a right angle, a bend (hand counted)
    b = make(AB, NET, [("A", "top", [(5, 5), (15, 5)]), ("A", "bottom", [(15, 5), (15, 12)])],
             vias=[("A", (15, 5))])
    f = net_figs(b)
    assert (f["bends"], f["vias"], f["length"], f["routed"]) == (1, 1, 17.0, True)
    assert f["bend_points"] == [[15.0, 5.0]] and f["bends_lower_bound_path"] == 1
    # the same corner on one layer with a via on its centre: still two arms, still a bend
    b = make(AB, NET, [("A", "top", [(5, 5), (15, 5), (15, 12)])], vias=[("A", (15, 5))])
    assert net_figs(b)["bends"] == 1
    # within the via's disc (diameter 0.8) but 0.3 mm from its centre: inside a via, no bend;
    # the turn is not counted, so the single-path bound is not given either
    b = make(AB, NET, [("A", "top", [(5, 5), (15, 5), (15, 12)])], vias=[("A", (15.3, 5))])
    f = net_figs(b)
    assert f["bends"] == 0 and f["bends_lower_bound_path"] is None


@pytest.mark.parametrize("top, bottom, bends", [
    ([(5, 5), (15, 5)], [(15, 5), (25, 5)], 0),           # on straight on the other layer
    ([(5, 5), (15, 5)], [(15, 5), (15, 12)], 1),          # turns at the via
    ([(5, 5), (15, 5)], [(15, 5), (5, 5)], 0),            # back under itself: both arms point west
    ([(5, 5), (25, 5)], [(15, 5), (15, 12)], 0),          # top runs through: three arms, a T
    ([(5, 5), (15, 5)], [(15, 0), (15, 12)], 0),          # bottom runs through: three arms
])
def test_via_arms_counted_across_layers(top, bottom, bends):
    pads = dict(AB, PC=(25.0, 5.0), PD=(15.0, 0.0))
    b = make(pads, {"A": ["PA", "PB", "PC", "PD"]}, [("A", "top", top), ("A", "bottom", bottom)],
             vias=[("A", (15, 5))])
    assert net_figs(b)["bends"] == bends


def test_via_inside_a_pad_is_no_bend():
    # a via on pad B's centre with the corner there: a point inside a pad is never a bend
    b = make(AB, NET, [("A", "top", [(5, 5), (5, 12)]), ("A", "bottom", [(5, 12), (15, 12)])],
             vias=[("A", (5, 12))])
    assert net_figs(b)["bends"] == 1
    b = make(AB, NET, [("A", "top", [(5, 5), (15, 5), (15, 12)])], vias=[("A", (15, 12))])
    assert net_figs(b)["bend_points"] == [[15.0, 5.0]]


def test_segments_on_two_layers_do_not_meet():
    # top horizontal and bottom vertical end at the same point with no via: no layer holds two
    # segments there, so no bend (and the net is not joined: check agrees)
    b = make(AB, NET, [("A", "top", [(5, 5), (15, 5)]), ("A", "bottom", [(15, 5), (15, 12)])])
    f = net_figs(b)
    assert (f["bends"], f["routed"]) == (0, False)
    assert any(v.rule == "open" for v in check(b))


def test_corners_on_both_layers_add_up():
    # a staircase on top (3 bends) then a via and an L on the bottom (1 bend), hand counted
    pads = {"PA": (5.0, 5.0), "PB": (30.0, 30.0)}
    b = make(pads, {"A": ["PA", "PB"]},
             [("A", "top", [(5, 5), (10, 5), (10, 10), (15, 10), (15, 15)]),
              ("A", "bottom", [(15, 15), (15, 30), (30, 30)])],
             vias=[("A", (15, 15))])
    f = net_figs(b)
    assert f["bends"] == 4 and f["length"] == pytest.approx(5 + 5 + 5 + 5 + 15 + 15)
    assert f["bend_points"] == [[10.0, 5.0], [10.0, 10.0], [15.0, 10.0], [15.0, 30.0]]


def test_crossing_and_u_shape():
    # a plus sign (no bend at the crossing, ends free) and a U (two bends), hand counted
    assert bend_points([((0, 5), (10, 5)), ((5, 0), (5, 10))]) == []
    assert bend_points([((0, 0), (0, 4)), ((0, 0), (6, 0)), ((6, 0), (6, 4))]) == [(0.0, 0.0), (6.0, 0.0)]
    # a closed square: four bends
    sq = [(0, 0), (3, 0), (3, 3), (0, 3), (0, 0)]
    assert len(bend_points(list(zip(sq, sq[1:])))) == 4
    # a square split at a corner of its polyline start still has four
    sq2 = [(1, 0), (3, 0), (3, 3), (0, 3), (0, 0), (1, 0)]
    assert len(bend_points(list(zip(sq2, sq2[1:])))) == 4


def test_points_equal_within_tol():
    # a corner whose two ends differ by 4e-7 mm (below TOL = 1e-6) is still one corner
    assert bend_points([((0, 0), (2, 0)), ((2.0000004, 0), (2.0000004, 3))]) == [(2.0, 0.0)]
    # 1e-4 apart they do not meet: two free ends, no bend
    assert bend_points([((0, 0), (2, 0)), ((2.0001, 0.0001), (2.0001, 3))]) == []


def test_one_layer_board_jumpers():
    # one layer (bottom): run east to (10, 5), a jumper north from (10, 5) to (10, 12), run east
    # to B. At each jumper end a trace leaves across the wire: two arms at a right angle, so
    # both are bends (the contract); the wire is no length
    b = make(AB, NET, [("A", "bottom", [(5, 5), (10, 5)]), ("A", "bottom", [(10, 12), (15, 12)])],
             jumpers=[("A", (10, 5), (10, 12))], layers=1)
    f = net_figs(b)
    assert (f["bends"], f["jumpers"], f["vias"], f["routed"]) == (2, 1, 0, True)
    assert f["bend_points"] == [[10.0, 5.0], [10.0, 12.0]]
    assert f["length"] == 10.0 and f["jumper_length"] == 7.0
    # the pads' bound: rectangles (4.5..5.5) and (14.5..15.5) x, (4.5..5.5) and (11.5..12.5) y:
    # 9 + 6 = 15 for traces and wire together; the wire carries 7, so the traces need 8
    assert f["span_lower_bound"] == pytest.approx(15.0)
    assert f["length_lower_bound"] == pytest.approx(8.0) and f["length_lower_bound"] <= f["length"]
    assert f["span_ratio"] == pytest.approx(17.0 / 15.0, abs=1e-4)
    assert f["length_ratio"] == pytest.approx(10.0 / 8.0, abs=1e-4)
    assert f["bends_lower_bound_path"] == 1


@pytest.mark.parametrize("traces, bends", [
    ([[(5, 5), (10, 5)], [(10, 12), (10, 14), (15, 14)]], 2),    # across at (10, 5), straight on at (10, 12), corner (10, 14)
    ([[(5, 5), (10, 5)], [(10, 12), (15, 12)], [(10, 12), (10, 9)]], 1),   # a stub back under the wire: 3 arms
    ([[(10, 0), (10, 5)], [(10, 12), (15, 12)]], 1),              # in along the wire's line: straight
])
def test_jumper_end_arms_hand_counted(traces, bends):
    pads = dict(AB, PC=(10.0, 0.0), PD=(15.0, 14.0))
    b = make(pads, {"A": ["PA", "PB", "PC", "PD"]}, [("A", "bottom", t) for t in traces],
             jumpers=[("A", (10, 5), (10, 12))], layers=1)
    assert net_figs(b)["bends"] == bends


def test_a_long_wire_takes_the_length_bound_to_zero():
    # a wire longer than the span: the traces need no length at all
    b = make(AB, NET, [("A", "bottom", [(5, 5), (5, 15)]), ("A", "bottom", [(15, 15), (15, 12)])],
             jumpers=[("A", (5, 15), (15, 15))], layers=1)
    f = net_figs(b)
    assert f["routed"] and f["jumper_length"] == 10.0 and f["span_lower_bound"] == 15.0
    assert f["length_lower_bound"] == 5.0 and f["length"] == 13.0


def test_totals_are_sums_and_contract_keys():
    pads = {"PA": (5.0, 5.0), "PB": (15.0, 12.0), "PC": (5.0, 30.0), "PD": (20.0, 30.0)}
    b = make(pads, {"A": ["PA", "PB"], "B": ["PC", "PD"]},
             [("A", "top", [(5, 5), (15, 5), (15, 12)]), ("B", "bottom", [(5, 30), (20, 30)])])
    figs = board_figures(b)
    assert list(figs["nets"][0])[:len(FIELDS)] == list(FIELDS)
    assert list(figs["totals"])[:len(TOTAL_FIELDS)] == list(TOTAL_FIELDS)
    t = figs["totals"]
    assert (t["nets"], t["routed"], t["bends"], t["length"], t["vias"]) == (2, 2, 1, 32.0, 0)
    # bounds hand computed on the 1 mm pad rectangles: A 9 + 6 = 15, B 14
    assert [n["length_lower_bound"] for n in figs["nets"]] == [15.0, 14.0]
    assert t["length_lower_bound"] == 29.0
    json.dumps(figs)     # plain JSON


def test_unplaced_pin_bounds_zero_and_not_routed():
    b = make({"PA": (5.0, 5.0), "PB": (15.0, 12.0)}, {"A": ["PA", "PB", "PU"]}, unplaced=["PU"],
             traces=[("A", "top", [(5, 5), (15, 5), (15, 12)])])
    f = net_figs(b)
    assert (f["routed"], f["length_lower_bound"], f["bends_lower_bound"]) == (False, 0.0, 0)
    assert f["unplaced"] == ["PU.1"] and f["bends"] == 1
    assert board_figures(b)["totals"]["unplaced"] == 1


def test_routed_agrees_with_connectivity_and_check():
    b = make(AB, NET, [("A", "top", [(5, 5), (15, 5), (15, 12)])])
    assert net_figs(b)["routed"] == routed(b)["A"] is True
    assert not [v for v in check(b) if v.rule == "open"]
    b = make(AB, NET, [("A", "top", [(5, 5), (15, 5), (15, 10)])])   # stops 1.5 mm short of B
    assert net_figs(b)["routed"] == routed(b)["A"] is False
    assert [v for v in check(b) if v.rule == "open"]


def test_bends_inside_another_nets_pad_follow_the_contract():
    # the contract: a bend is inside no pad (of any net); a corner on net B's pad is a short
    # that check reports, and not a bend
    pads = {"PA": (5.0, 5.0), "PB": (15.0, 12.0), "PX": (15.0, 5.0), "PY": (30.0, 5.0)}
    b = make(pads, {"A": ["PA", "PB"], "X": ["PX", "PY"]},
             [("A", "top", [(5, 5), (15, 5), (15, 12)])])
    assert net_figs(b)["bends"] == 0
    assert any(v.rule == "short" for v in check(b))


# ---------------------------------------------------------------- the bend counter against a grid oracle

def _grid_oracle_bends(edges, terminals):
    """Bends of copper made of unit grid edges, counted on the graph (an independent count):
    a node with exactly two edges, one along x and one along y, that is not a terminal."""
    g = nx.Graph(edges)
    out = []
    for node in g.nodes:
        if node in terminals:
            continue
        nbrs = list(g.neighbors(node))
        if len(nbrs) == 2:
            (ax, ay), (bx, by) = nbrs
            if (ax == node[0]) != (bx == node[0]):
                out.append((float(node[0]), float(node[1])))
    return sorted(out)


def _shuffled(edges, rng):
    """The unit edges in random order, each in a random direction."""
    segs = [(a, b) if rng.random() < 0.5 else (b, a) for a, b in edges]
    rng.shuffle(segs)
    return segs


def _runs(edges, rng):
    """The same copper as maximal straight runs, each then cut at a random inner grid point."""
    out = []
    for axis in (0, 1):            # axis 0: runs along x (edges with equal y)
        starts = defaultdict(list)
        for a, b in edges:
            a, b = sorted((a, b))
            if a[1 - axis] == b[1 - axis]:
                starts[a[1 - axis]].append(a[axis])
        for line, cs in starts.items():
            cs.sort()
            run = [cs[0], cs[0] + 1]
            for c in cs[1:] + [None]:
                if c is not None and c == run[1]:
                    run[1] = c + 1
                    continue
                lo, hi = run
                cut = rng.randint(lo, hi)
                for u, v in ((lo, cut), (cut, hi)):
                    if u != v:
                        out.append(((u, line), (v, line)) if axis == 0 else ((line, u), (line, v)))
                if c is not None:
                    run = [c, c + 1]
    return out


@pytest.mark.parametrize("seed", range(40))
def test_bend_points_match_grid_oracle(seed):
    # random subgraphs of a 6x6 grid graph (networkx): counting per node on the graph is the
    # contract's definition when every segment is one grid edge
    rng = random.Random(seed)
    grid = nx.grid_2d_graph(6, 6)
    edges = [e for e in grid.edges if rng.random() < 0.45]
    terminals = set(rng.sample(sorted(grid.nodes), 3))
    covered = lambda x, y: (round(x), round(y)) in terminals and abs(x - round(x)) < 1e-9
    expected = _grid_oracle_bends(edges, terminals)
    assert bend_points(_shuffled(edges, rng), covered) == expected
    # the same copper drawn as longer runs cut elsewhere: the same bends
    assert bend_points(_runs(edges, rng), covered) == expected


# ---------------------------------------------------------------- bends bounds by brute force

def _node_cover(rects):
    def covered(x, y):
        return any(r[0] - 1e-9 <= x <= r[2] + 1e-9 and r[1] - 1e-9 <= y <= r[3] + 1e-9 for r in rects)
    return covered


def _nodes_in(rect, n):
    return [(x, y) for x in range(n) for y in range(n)
            if rect[0] <= x <= rect[2] and rect[1] <= y <= rect[3]]


PAD_PAIRS = [
    ((0, 0, 0, 0), (3, 3, 3, 3)),            # not aligned: one bend
    ((0, 0, 0, 0), (3, 0, 3, 0)),            # same row: none
    ((0, 0, 0.4, 0.4), (3, 2, 3.4, 3)),      # not aligned
    ((0, 0, 1, 1), (3, 1, 3.5, 3)),          # y-ranges touch at 1: none
    ((0, 0, 0, 2), (2, 3, 3, 3)),            # x 0..0 vs 2..3, y 0..2 vs 3..3: one
    ((1, 1, 2, 2), (2, 2, 3, 3)),            # touching corners: none
]


@pytest.mark.parametrize("a,b", PAD_PAIRS)
def test_path_bends_bound_is_the_brute_force_minimum(a, b):
    # every simple path of a 4x4 grid graph (networkx all_simple_paths) from a node in pad A to
    # one in pad B: the fewest bends any of them has equals the bound (exact for this model)
    n = 4
    grid = nx.grid_2d_graph(n, n)
    covered = _node_cover([a, b])
    best = math.inf
    for s in _nodes_in(a, n):
        for t in _nodes_in(b, n):
            if s == t:
                best = 0
                continue
            for path in nx.all_simple_paths(grid, s, t):
                segs = list(zip(path, path[1:]))
                best = min(best, len(bend_points(segs, covered)))
    assert path_bends_lower_bound([a, b]) == best


@pytest.mark.parametrize("terminals", [
    [(0, 0), (2, 2)], [(0, 2), (2, 0)], [(0, 0), (1, 2), (2, 0)], [(0, 1), (2, 2), (1, 0)],
])
def test_bends_bound_zero_is_tight_by_brute_force(terminals):
    # every edge subset of a 3x3 grid graph (4096 of them) that joins the terminals: the fewest
    # bends (the contract's count) is 0, so the bound 0 is the best one; on the same copper the
    # fewest bends among single simple paths of two terminals is the path bound, 1
    grid = nx.grid_2d_graph(3, 3)
    edges = list(grid.edges)
    rects = [(x, y, x, y) for x, y in terminals]
    covered = _node_cover(rects)
    best = math.inf
    for mask in range(1 << len(edges)):
        chosen = [e for i, e in enumerate(edges) if mask >> i & 1]
        g = nx.Graph(chosen)
        if not all(t in g for t in terminals):
            continue
        comp = nx.node_connected_component(g, terminals[0])
        if not all(t in comp for t in terminals):
            continue
        best = min(best, len(bend_points(chosen, covered)))
        if best == 0:
            break
    assert best == bends_lower_bound(rects) == 0


# ---------------------------------------------------------------- length bounds against references

@pytest.mark.parametrize("a,b,d", [
    ((0, 0, 1, 1), (3, 2, 4, 5), 3.0),       # 2 in x, 1 in y
    ((0, 0, 1, 1), (1, 1, 2, 2), 0.0),       # touching corners
    ((0, 0, 4, 4), (1, 1, 2, 2), 0.0),       # inside
    ((0, 0, 1, 1), (0.5, 3, 2, 4), 2.0),     # x-ranges overlap
])
def test_rect_distance_hand_computed(a, b, d):
    assert rect_distance(a, b) == d == rect_distance(b, a)


def _random_rects(rng, n, grow=True):
    out = []
    for _ in range(n):
        x, y = rng.uniform(0, 30), rng.uniform(0, 30)
        w, h = (rng.uniform(0, 3), rng.uniform(0, 3)) if grow else (0.0, 0.0)
        out.append((x, y, x + w, y + h))
    return out


@pytest.mark.parametrize("seed", range(20))
def test_rmst_against_networkx(seed):
    # reference: networkx minimum_spanning_tree on the complete graph with rectangle-to-rectangle
    # rectilinear distances; for points the Manhattan distance
    rng = random.Random(seed)
    for grow in (False, True):
        rects = _random_rects(rng, rng.randint(2, 12), grow)
        g = nx.Graph()
        for i, j in itertools.combinations(range(len(rects)), 2):
            a, b = rects[i], rects[j]
            if grow:
                # the distance by sampling-free brute force: the L1 gap of the x and y ranges
                dx = max(0.0, max(a[0], b[0]) - min(a[2], b[2]))
                dy = max(0.0, max(a[1], b[1]) - min(a[3], b[3]))
            else:
                dx, dy = abs(a[0] - b[0]), abs(a[1] - b[1])
            g.add_edge(i, j, weight=dx + dy)
        ref = nx.minimum_spanning_tree(g).size(weight="weight")
        assert rmst_length(rects) == pytest.approx(ref, abs=1e-9)


def _gaps_shapely(rects, axis):
    """Reference for the half-perimeter term: the hull of the pads' ranges on one axis less their
    union, measured with shapely on lines along that axis (shapely)."""
    lines = [LineString([(r[axis], 0), (r[axis + 2], 0)]) if r[axis + 2] > r[axis] else Point(r[axis], 0)
             for r in rects]
    lo, hi = min(r[axis] for r in rects), max(r[axis + 2] for r in rects)
    return (hi - lo) - unary_union(lines).length


@pytest.mark.parametrize("seed", range(20))
def test_hpwl_against_shapely(seed):
    rng = random.Random(500 + seed)
    rects = _random_rects(rng, rng.randint(2, 10))
    assert hpwl(rects) == pytest.approx(_gaps_shapely(rects, 0) + _gaps_shapely(rects, 1), abs=1e-9)


def test_copper_through_a_pad_stays_above_the_bound():
    # pads conduct: A (5, 5), a 10 mm wide pad M centred at (15, 5), B at (25, 5); two traces
    # A -> M's left end and M's right end -> B, 4.5 + 4.5 mm (hand computed), are routed copper.
    # The span between A's and B's rectangles is 19 mm, so a bound that ignored the pad would
    # lie above the copper; the gaps between the three pads are 4.5 + 4.5 = 9 mm.
    pads = {"PA": (5.0, 5.0), "PM": (15.0, 5.0, 10.0, 1.0), "PB": (25.0, 5.0)}
    b = make(pads, {"A": ["PA", "PM", "PB"]},
             [("A", "top", [(5.5, 5), (10, 5)]), ("A", "top", [(20, 5), (24.5, 5)])])
    f = net_figs(b)
    assert f["routed"] and f["length"] == 9.0
    assert f["length_lower_bound"] == pytest.approx(9.0)
    assert f["length_lower_bound"] <= f["length"]


def test_router_output_stays_above_the_bounds(tmp_path):
    # every net the router joins is at least as long as its bound (route, then report the file)
    pytest.importorskip("router.negotiate")
    out = tmp_path / "r.toml"
    assert main(["route", str(ROOT / "boards" / "starter-blinker.toml"), "-o", str(out), "-q"]) == 0
    for n in board_figures(load_board(out))["nets"]:
        assert n["routed"]
        assert n["length"] >= n["length_lower_bound"] - 1e-6, n["name"]
        assert n["length"] + n["jumper_length"] >= n["span_lower_bound"] - 1e-6, n["name"]


def test_hpwl_hand_computed():
    # points: half perimeter of the bounding box (common practice)
    assert hpwl([(1, 2, 1, 2), (4, 7, 4, 7), (3, 0, 3, 0)]) == 3 + 7
    # rectangles overlapping in x span nothing in x
    assert hpwl([(0, 0, 2, 1), (1, 5, 3, 6)]) == 0 + 4
    # a pad between two others covers part of the span: gaps 1 + 2 in x, hand computed
    assert hpwl([(0, 0, 1, 1), (2, 0, 5, 1), (7, 0, 8, 1)]) == 3
    assert hpwl([(0, 0, 1, 1)]) == 0.0 and hpwl([]) == 0.0


def _rsmt_hanan(points):
    """Exact rectilinear Steiner minimum tree length of a few points: Hanan's theorem puts the
    Steiner points on the grid of the points' x and y lines (Hanan 1966); a Steiner tree with n
    terminals needs at most n - 2 of them; the tree is then an MST over terminals and those points."""
    xs = sorted({p[0] for p in points})
    ys = sorted({p[1] for p in points})
    hanan = [(x, y) for x in xs for y in ys if (x, y) not in set(points)]
    best = math.inf
    for k in range(0, len(points) - 1):
        for extra in itertools.combinations(hanan, k):
            pts = list(points) + list(extra)
            g = nx.Graph()
            for i, j in itertools.combinations(range(len(pts)), 2):
                g.add_edge(i, j, weight=abs(pts[i][0] - pts[j][0]) + abs(pts[i][1] - pts[j][1]))
            best = min(best, nx.minimum_spanning_tree(g).size(weight="weight"))
    return best


def test_hwang_cross_is_tight():
    # worked example: the four points of a plus sign, RMST 6, RSMT 4 (one Steiner point at the
    # centre); 2/3 * 6 = 4 and HPWL = 4, so the bound equals the Steiner tree here
    pts = [(0, 1), (1, 0), (2, 1), (1, 2)]
    rects = [(x, y, x, y) for x, y in pts]
    assert rmst_length(rects) == 6.0 and _rsmt_hanan(pts) == 4.0
    assert length_lower_bound(rects) == pytest.approx(4.0)


@pytest.mark.parametrize("seed", range(25))
def test_length_bound_below_brute_force_rsmt(seed):
    # Hwang (1976): RSMT >= 2/3 RMST; with HPWL the bound stays below the exact Steiner tree of
    # the Hanan-grid brute force, for points and for any points chosen inside pad rectangles
    rng = random.Random(1000 + seed)
    n = rng.randint(2, 5)
    pts = [(rng.randint(0, 8), rng.randint(0, 8)) for _ in range(n)]
    pts = list(dict.fromkeys(pts))
    rsmt = _rsmt_hanan(pts)
    assert length_lower_bound([(x, y, x, y) for x, y in pts]) <= rsmt + 1e-9
    assert rsmt <= rmst_length([(x, y, x, y) for x, y in pts]) + 1e-9
    # rectangles around the points: a tree touching them at the points is no shorter than the bound
    rects = [(x - rng.uniform(0, 1.5), y - rng.uniform(0, 1.5), x + rng.uniform(0, 1.5),
              y + rng.uniform(0, 1.5)) for x, y in pts]
    assert length_lower_bound(rects) <= rsmt + 1e-9


def test_length_bound_of_a_routed_board_below_its_length():
    b = make(AB, NET, [("A", "top", [(5, 5), (15, 5), (15, 12)])])
    f = net_figs(b)
    assert f["length_lower_bound"] == 15.0 <= f["length"] == 17.0


# ---------------------------------------------------------------- the example boards

@pytest.mark.parametrize("path", BOARDS)
def test_example_boards_unrouted(path):
    b = load_board(path)
    figs = board_figures(b)
    assert [n["name"] for n in figs["nets"]] == [n.name for n in b.nets]
    pads = placed_pads(b)
    for n in figs["nets"]:
        assert (n["routed"], n["bends"], n["length"], n["vias"], n["jumpers"]) == (False, 0, 0.0, 0, 0)
        # the bound recomputed independently: networkx MST over the pad rectangles
        rects = [p.bounds() for p in pads if p.net == n["name"]]
        g = nx.Graph()
        g.add_nodes_from(range(len(rects)))
        for i, j in itertools.combinations(range(len(rects)), 2):
            a, c = rects[i], rects[j]
            g.add_edge(i, j, weight=max(0.0, max(a[0], c[0]) - min(a[2], c[2]))
                       + max(0.0, max(a[1], c[1]) - min(a[3], c[3])))
        mst = nx.minimum_spanning_tree(g).size(weight="weight")
        xs, ys = _gaps_shapely(rects, 0), _gaps_shapely(rects, 1)
        # a poured net may be joined by its pour alone: no trace is needed, the bound is 0
        want = 0.0 if n["name"] in {p.net for p in b.pours} else max(xs + ys, 2 * mst / 3)
        assert n["length_lower_bound"] == pytest.approx(want, abs=1e-6)
        assert n["bends_lower_bound"] == 0
    t = figs["totals"]
    assert (t["nets"], t["routed"], t["bends"], t["length"]) == (len(b.nets), 0, 0, 0.0)
    assert t["length_lower_bound"] == pytest.approx(sum(n["length_lower_bound"] for n in figs["nets"]))
    text = format_report(figs, b)
    assert "no net routed yet" in text and all(n.name in text for n in b.nets)


# ---------------------------------------------------------------- comparison

def test_compare_matches_nets_by_name():
    pads = {"PA": (5.0, 5.0), "PB": (15.0, 12.0), "PC": (5.0, 30.0), "PD": (20.0, 30.0)}
    one = make(pads, {"A": ["PA", "PB"], "B": ["PC", "PD"]},
               [("A", "top", [(5, 5), (15, 5), (15, 12)]), ("B", "top", [(5, 30), (20, 30)])])
    # the other board lists the nets the other way round and routes A with its corner in a via
    # (still a bend) and B with a jog (two more bends, 2 mm longer)
    two = make(pads, {"B": ["PC", "PD"], "A": ["PA", "PB"]},
               [("A", "top", [(5, 5), (15, 5)]), ("A", "bottom", [(15, 5), (15, 12)]),
                ("B", "top", [(5, 30), (10, 30), (10, 31), (15, 31), (15, 30), (20, 30)])],
               vias=[("A", (15, 5))])
    comp = compare_figures([("one", board_figures(one)), ("two", board_figures(two))])
    assert comp["boards"] == ["one", "two"]
    rows = {r["name"]: r for r in comp["nets"]}
    assert rows["A"]["bends"] == [1, 1] and rows["A"]["vias"] == [0, 1]
    assert rows["A"]["differs"] == ["vias"]
    assert rows["B"]["differs"] == ["bends", "length"] and rows["B"]["length"] == [15.0, 17.0]
    assert comp["totals"]["bends"] == [1, 5] and comp["totals"]["best"]["bends"] == ["one"]
    assert comp["totals"]["best"]["length"] == ["one"]
    text = format_compare(comp)
    assert "* A" in text and "* B" in text and "[2] two" in text
    json.dumps(comp)


def test_compare_marks_a_missing_net():
    a = make(AB, NET, [("A", "top", [(5, 5), (15, 5), (15, 12)])])
    pads = dict(AB, PC=(30.0, 30.0), PD=(35.0, 30.0))
    b = make(pads, dict(NET, Z=["PC", "PD"]), [("A", "top", [(5, 5), (15, 5), (15, 12)])])
    comp = compare_figures([("a", board_figures(a)), ("b", board_figures(b))])
    z = next(r for r in comp["nets"] if r["name"] == "Z")
    assert z["present"] == [False, True] and z["differs"] == ["present"] and z["bends"] == [None, 0]
    a_row = next(r for r in comp["nets"] if r["name"] == "A")
    assert a_row["differs"] == []
    assert "* Z" in format_compare(comp)


def test_compare_ranks_by_nets_routed_first(capsys, tmp_path):
    # board "few" routes A with no bend but leaves B unrouted: 0 bends, 10 mm; board "all" routes
    # both, with more bends and length. Lowest figures alone would crown "few"; nets routed first
    # gives every figure to "all" (hand counted: all 3 bends, 16 + 20 mm; few 0 bends, 10 mm)
    pads = {"PA": (5.0, 5.0), "PB": (15.0, 5.0), "PC": (5.0, 30.0), "PD": (20.0, 35.0)}
    nets = {"A": ["PA", "PB"], "B": ["PC", "PD"]}
    few = make(pads, nets, [("A", "top", [(5, 5), (15, 5)])])
    every = make(pads, nets, [("A", "top", [(5, 5), (5, 8), (15, 8), (15, 5)]),
                              ("B", "top", [(5, 30), (20, 30), (20, 35)])])
    comp = compare_figures([("few", board_figures(few)), ("all", board_figures(every))])
    t = comp["totals"]
    assert t["routed"] == [1, 2] and t["bends"] == [0, 3] and t["length"] == [10.0, 36.0]
    assert t["best"] == {"routed": ["all"], "bends": ["all"], "length": ["all"], "vias": ["all"],
                         "jumpers": ["all"]}
    assert "routed first" in comp["ranking"]
    text = format_compare(comp)
    assert "ranking: most nets routed first" in text
    assert "fewest bends: all" in text and "shortest: all" in text and "most nets routed: all" in text
    # equal nets routed: the figure decides
    comp = compare_figures([("a", board_figures(every)), ("b", board_figures(few)), ("c", board_figures(every))])
    assert comp["totals"]["best"]["routed"] == ["a", "c"] and comp["totals"]["best"]["bends"] == ["a", "c"]
    # the command line says it too, in text and JSON
    pa, pb = tmp_path / "few.toml", tmp_path / "all.toml"
    save_board(few, pa)
    save_board(every, pb)
    assert main(["compare", str(pa), str(pb), "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["totals"]["best"]["bends"] == [str(pb)] and "routed first" in out["ranking"]
    assert main(["compare", str(pa), str(pb)]) == 0
    assert "ranking: most nets routed first" in capsys.readouterr().out


def test_compare_chart_of_one_layer_boards_shows_jumpers(tmp_path):
    from router.draw import chart_keys, compare_figure
    one = make(AB, NET, [("A", "bottom", [(5, 5), (10, 5)]), ("A", "bottom", [(10, 12), (15, 12)])],
               jumpers=[("A", (10, 5), (10, 12))], layers=1)
    plain = make(AB, NET, [("A", "bottom", [(5, 5), (15, 5), (15, 12)])], layers=1)
    comp = compare_figures([("one", board_figures(one)), ("plain", board_figures(plain))])
    assert comp["totals"]["copper_layers"] == [1, 1]
    fig = compare_figure(comp)
    titles = [ax.get_title() for ax in fig.axes]
    assert titles == ["bends", "length (mm)", "jumpers"]
    heights = {c.patches[0].get_gid().rsplit("-", 1)[0]: [b.get_height() for b in c]
               for ax in fig.axes for c in ax.containers}
    assert heights["bar-jumpers"] == [1, 0] and "bar-vias" not in heights
    # a two-layer board beside them: both panels
    two = make(AB, NET, [("A", "top", [(5, 5), (15, 5)]), ("A", "bottom", [(15, 5), (15, 12)])],
               vias=[("A", (15, 5))])
    comp = compare_figures([("one", board_figures(one)), ("two", board_figures(two))])
    assert chart_keys([(l, {k: v[i] for k, v in comp["totals"].items() if isinstance(v, list)})
                       for i, l in enumerate(comp["boards"])]) == ["bends", "length", "vias", "jumpers"]
    assert [ax.get_title() for ax in compare_figure(comp).axes] == ["bends", "length (mm)", "vias", "jumpers"]


# ---------------------------------------------------------------- the command line

def test_cli_report_json(capsys):
    path = str(ROOT / "boards" / "starter-blinker.toml")
    assert main(["report", path, "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert set(FIELDS) <= set(out["nets"][0]) and set(TOTAL_FIELDS) <= set(out["totals"])
    assert out == board_figures(load_board(path))
    assert main(["report", path]) == 0
    assert "totals:" in capsys.readouterr().out


def test_cli_compare(capsys):
    paths = [str(ROOT / "boards" / "starter-blinker.toml")] * 2
    assert main(["compare", *paths, "--json"]) == 0
    comp = json.loads(capsys.readouterr().out)
    assert all(r["differs"] == [] for r in comp["nets"])


def test_cli_report_subprocess():
    r = subprocess.run([sys.executable, "-m", "router.cli", "report",
                        str(ROOT / "boards" / "starter-blinker.toml"), "--json"],
                       capture_output=True, text=True)
    assert r.returncode == 0, r.stderr
    assert json.loads(r.stdout)["totals"]["nets"] == 7
