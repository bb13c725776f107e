"""The fan-out plan of fine-pitch rows (router.fanout): one exit per scarce pad, chosen jointly.

Outside references: exhaustive search over every combination of exits (itertools.product) for the
dynamic programme; shapely measures every distance between planned exits and routed copper on its
own; the parts are a 0.5 mm flat-cable connector row (common practice: 0.3 x 1.3 mm pads) and a
JEDEC MO-220 quad no-lead side (0.25 x 0.8 mm pads at 0.5 mm), each placed 0.125 mm off the
0.25 mm grid, with 0402 chips (EIA) at the other ends of the nets. The staircase row keeps a
0.25 mm clearance beside 0.25 mm traces on 0.5 mm pitch (the JEDEC pitch with the class of many
hobby boards, common practice), so that every step onto the grid must be 0.5 mm deeper than its
neighbour's.
"""
from __future__ import annotations

import itertools

import numpy as np
import pytest
from shapely.geometry import LineString, Point

from router.check import check
from router.escape import neck_of
from router.fanout import PLAN_DEEPER, plan_row
from router.grid import RoutingGrid
from router.model import Board, Net, NetClass, Part
from router.negotiate import _Negotiation, _pad_groups, _stake_row, _stakes, _write, route_board
from router.realgen import _chip, _conn, _quad
from router.units import TOL
from test_exits import assert_traces_keep, crowded_row, fine_rules
from test_reorder_planned import _walled


def supply_mid_row() -> Board:
    """A ten-pin 0.5 mm connector row 0.125 mm off the grid with a 0.5 mm supply (pin 5) and a
    0.5 mm ground (pin 6) in the middle of 0.25 mm signals, each signal to a 0402 beside it."""
    k, c = _conn(10), _chip("0402")
    parts = [Part("J1", k.name, at=(18.125, 16.125)),
             Part("C1", c.name, at=(17.6597, 10.0807)), Part("C2", c.name, at=(18.6597, 22.0807)),
             Part("C3", c.name, at=(8.0, 14.4)), Part("C4", c.name, at=(8.125, 21.05)),
             Part("C5", c.name, at=(8.125, 18.8)), Part("C6", c.name, at=(8.05, 16.7)),
             Part("C7", c.name, at=(28.0, 21.05)), Part("C8", c.name, at=(28.125, 18.8)),
             Part("C9", c.name, at=(28.05, 16.7)), Part("C10", c.name, at=(28.0, 14.4))]
    nets = [Net("VCC", ["J1.5", "C1.1", "C2.1"], "power"), Net("GND", ["J1.6", "C1.2", "C2.2"], "power"),
            Net("S1", ["J1.1", "C4.2"]), Net("S2", ["J1.2", "C5.2"]), Net("S3", ["J1.3", "C6.2"]),
            Net("S4", ["J1.4", "C3.2"]), Net("S7", ["J1.7", "C10.1"]), Net("S8", ["J1.8", "C9.1"]),
            Net("S9", ["J1.9", "C8.1"]), Net("S10", ["J1.10", "C7.1"])]
    rules = fine_rules()
    return Board("supply-mid-row", [(2.0, 2.0), (34.0, 2.0), (34.0, 28.0), (2.0, 28.0)], copper_layers=2,
                 rules=rules, classes={"default": NetClass("default", 0.25, 0.2),
                                       "power": NetClass("power", 0.5, 0.2)},
                 footprints={k.name: k, c.name: c}, parts=parts, nets=nets)


def stair_row() -> Board:
    """The quad's bottom row 0.1 mm off the 0.25 mm grid with a 0.25 mm clearance: four signals
    to 0402 chips on the left, two on the right, a 0.4 mm supply and ground to chips below right.
    No two neighbours can step onto the grid at one depth, so the row needs a staircase deeper than
    neck_length."""
    q, c = _quad(32), _chip("0402")
    parts = [Part("U1", q.name, at=(18.1, 16.0)),
             Part("C1", c.name, at=(21.6, 10.0)), Part("C2", c.name, at=(23.0, 12.0), rotation=90),
             Part("C3", c.name, at=(8.0, 13.0)), Part("C4", c.name, at=(8.0, 11.0)),
             Part("C5", c.name, at=(8.0, 9.0)), Part("C6", c.name, at=(8.0, 7.0)),
             Part("C7", c.name, at=(28.0, 9.0)), Part("C8", c.name, at=(28.0, 7.0))]
    nets = [Net("VCC", ["U1.7", "C1.1", "C2.1"], "power"), Net("GND", ["U1.8", "C1.2", "C2.2"], "power"),
            Net("S1", ["U1.1", "C3.2"]), Net("S2", ["U1.2", "C4.2"]), Net("S3", ["U1.3", "C5.2"]),
            Net("S4", ["U1.4", "C6.2"]), Net("S5", ["U1.5", "C7.1"]), Net("S6", ["U1.6", "C8.1"])]
    return Board("stair-row", [(2.0, 2.0), (34.0, 2.0), (34.0, 26.0), (2.0, 26.0)], copper_layers=2,
                 rules=fine_rules(), classes={"default": NetClass("default", 0.25, 0.25),
                                              "power": NetClass("power", 0.4, 0.25)},
                 footprints={q.name: q, c.name: c}, parts=parts, nets=nets)


def _plan(board):
    grid = RoutingGrid(board)
    neg = _Negotiation(board, grid, [n.name for n in board.nets], _pad_groups(board, grid),
                       bend=400, via=800, jump=2000)
    neg.plan_fanout()
    return grid, neg.fanout


def _pieces(grid, c):
    """A planned exit's copper as (shapely centreline, half width): its segments, and its end
    grid point at the class width."""
    prof = grid.profile_of(c.net)
    end = grid.point(c.cell[1], c.cell[2])
    pts = list(c.path) if c.path else []
    w = getattr(c.path, "width", prof.width) if c.path else prof.width
    out = [(LineString([a, b]), w / 2) for a, b in zip(pts, pts[1:]) if a != b]
    out.append((Point(end), prof.width / 2))
    return out


# ---------------------------------------------------------------- the dynamic programme

def _brute(costs, ok, reach=2):
    best = None
    for pick in itertools.product(*[range(len(c)) for c in costs]):
        if all(ok(k, pick[k], q, pick[q]) for k in range(len(pick)) for q in range(max(0, k - reach), k)):
            v = sum(costs[k][a] for k, a in enumerate(pick))
            if best is None or v < best:
                best = v
    return best


@pytest.mark.parametrize("trial", range(60))
def test_plan_row_matches_exhaustive_search(trial):
    """Random rows of 1 to 6 pads with 1 to 4 exits each, any pair of pads at most two apart
    compatible or not at random: the programme's total is the least over every combination
    (exhaustive search), and it says None exactly when no combination is compatible."""
    rng = np.random.default_rng(trial)
    n = int(rng.integers(1, 7))
    costs = [[int(v) for v in rng.integers(1, 9, size=int(rng.integers(1, 5)))] for _ in range(n)]
    bad = {}
    for k in range(n):
        for q in range(max(0, k - 2), k):
            for a in range(len(costs[k])):
                for b in range(len(costs[q])):
                    bad[(k, a, q, b)] = bool(rng.random() < 0.35)

    def ok(k, a, q, b):
        return not bad.get((k, a, q, b), False)

    pick = plan_row(costs, ok)
    want = _brute(costs, ok)
    if want is None:
        assert pick is None
    else:
        assert pick is not None
        assert all(ok(k, pick[k], q, pick[q]) for k in range(n) for q in range(max(0, k - 2), k))
        assert sum(costs[k][a] for k, a in enumerate(pick)) == want


def test_plan_row_on_a_real_row_matches_exhaustive_search():
    """Four neighbouring pads of the quad's crowded row (0.125 mm off the grid), with their real
    candidate exits: the programme (which checks pads at most two apart) costs what exhaustive
    search over every combination costs when every pair, however far apart, must be clear."""
    from router.fanout import compatible
    grid, plan = _plan(crowded_row())
    keys = sorted((k for k in plan.cands if k[1] == "U1" and k[0] in ("S3", "S4", "S5", "S6")),
                  key=lambda k: plan.cands[k][0].pad.x)
    assert len(keys) == 4
    cs = [plan.cands[k] for k in keys]
    costs = [[c.cost for c in cc] for cc in cs]
    memo = {}

    def ok(k, a, q, b):
        if (k, a, q, b) not in memo:
            memo[(k, a, q, b)] = compatible(grid, cs[k][a], cs[q][b])
        return memo[(k, a, q, b)]

    pick = plan_row(costs, ok)
    want = _brute(costs, ok, reach=len(cs))
    assert pick is not None and want is not None
    assert sum(costs[k][a] for k, a in enumerate(pick)) == pytest.approx(want)


# ---------------------------------------------------------------- the plan on hand-made rows

@pytest.mark.parametrize("make,ref", [(supply_mid_row, "J1"), (crowded_row, "U1")])
def test_planned_exits_keep_clear_by_shapely(make, ref):
    """Every side of the row found a compatible set (no greedy fallback), and every two planned
    exits of different nets keep the class clearance (0.2 mm) by shapely's own distance between
    centrelines less half widths: segments at their width, end grid points at the class width."""
    grid, plan = _plan(make())
    assert plan.notes == []
    chosen = [c for k, c in sorted(plan.chosen.items()) if k[1] == ref]
    assert len(chosen) >= 6
    for a, b in itertools.combinations(chosen, 2):
        if a.net == b.net or a.cell[0] != b.cell[0]:
            continue
        for ga, ra in _pieces(grid, a):
            for gb, rb in _pieces(grid, b):
                assert ga.distance(gb) - ra - rb >= 0.2 - TOL, (a.net, b.net, ga.distance(gb) - ra - rb)


def test_supply_neighbours_turn_away():
    """In the connector row the 0.5 mm supply and ground leave one end of their pads and their
    signal neighbours the other (the row's pads are free at both ends): a designer's fan-out."""
    grid, plan = _plan(supply_mid_row())
    side = {}
    for (net, ref, _), c in plan.chosen.items():
        start = list(c.path)[0]
        side[net] = 1 if start[1] > c.pad.y else -1
    assert side["VCC"] == side["GND"]
    assert all(side[n] == -side["VCC"] for n in ("S3", "S4", "S7", "S8"))


@pytest.mark.parametrize("make", [supply_mid_row, crowded_row])
def test_planned_row_routes_completely_and_clean(make):
    """With the plan made before the first try, every net of the row routes; router.check finds
    nothing, and shapely's distances between traces and other nets' traces and vias keep 0.2 mm."""
    r = route_board(make(), fanout_first=True, retries=0)
    assert r.failed == {}
    assert [v for v in check(r.board) if v.rule != "open"] == []
    assert_traces_keep(r.board, 0.2)


def test_stair_row_planned_deeper_than_the_shorter_exits_reach():
    """The staircase row: the shortest exits and those a few grid rows further have no compatible
    set, the staircase's rows have one (no greedy fallback); at least one chosen exit steps onto
    the grid further from its pad than any of the earlier exits reach; every two chosen exits of
    different nets keep 0.25 mm by shapely's own distances."""
    board = stair_row()
    grid, plan = _plan(board)
    assert plan.notes == []
    chosen = [c for k, c in sorted(plan.chosen.items()) if k[1] == "U1" and c.pad.y < 16.0]
    assert len(chosen) == 7
    _, nl = neck_of(board, board.classes["default"])
    reach = max(nl, 2 * grid.pitch) + PLAN_DEEPER * grid.pitch
    run = [sum(abs(a[0] - b[0]) + abs(a[1] - b[1]) for a, b in zip(list(c.path), list(c.path)[1:]))
           for c in chosen]
    assert max(run) > reach + TOL
    for a, b in itertools.combinations(chosen, 2):
        if a.net == b.net or a.cell[0] != b.cell[0]:
            continue
        for ga, ra in _pieces(grid, a):
            for gb, rb in _pieces(grid, b):
                assert ga.distance(gb) - ra - rb >= 0.25 - TOL, (a.net, b.net)


def test_stair_row_routes_completely_and_clean():
    """The staircase row routes completely, router.check finds nothing, and shapely's distances
    between different nets' copper keep 0.25 mm."""
    r = route_board(stair_row())
    assert r.failed == {}
    assert [v for v in check(r.board) if v.rule != "open"] == []
    assert_traces_keep(r.board, 0.25)


def _greedy_row():
    """The staircase row's nets routed with walls one at a time, the row's neighbours first:
    the negotiation as it stands when a lost pad's neighbours took its exits."""
    return _walled(["S3", "S5", "S2", "S6", "S1", "VCC", "GND", "S4"], stair_row)


def test_a_route_with_walls_is_offered_the_planned_exits():
    """S4's planned exit (a staircase row deeper than the exits a route finds alone) staked
    among its neighbours' planned exits: with walls, S4 routes through it only while the plan's
    exits are offered (grid.planned_exits), and finds no exit without them."""
    board = stair_row()
    grid = RoutingGrid(board)
    neg = _Negotiation(board, grid, [n.name for n in board.nets], _pad_groups(board, grid),
                       bend=400, via=800, jump=2000)
    neg.plan_fanout()
    chosen = {k[0]: c for k, c in neg.fanout.chosen.items() if k[1] == "U1" and c.pad.y < 16.0}
    for n in ("S3", "S5", "S6", "VCC"):
        neg.lay(n, _stakes(neg, n, [(chosen[n].cell, chosen[n].path)]))
    assert not neg.route("S4", strict=True).failed
    planned = grid.planned_exits
    grid.planned_exits = {}
    assert "every exit to the grid is taken" in neg.route("S4", strict=True).failed
    grid.planned_exits = planned


def test_stake_row_brings_back_row_nets_whose_exits_neighbours_took():
    """Routed with walls one at a time, S4 and S6 find every exit taken by their neighbours; the
    row stake-out lays the part's planned fan-out and brings both back, every net that was
    routed still routed, nothing shared; the written board has no violation but the lost net's
    opens (router.check), and shapely's distances keep 0.25 mm."""
    board, grid, neg, lost = _greedy_row()
    assert {"S4", "S6"} <= set(lost)
    routed = set(neg.routes)
    _stake_row(neg, lost)
    assert "S4" not in lost and "S6" not in lost
    assert routed | {"S4", "S6"} <= set(neg.routes)
    assert not any(neg.conflicts()[0].values())
    _write(board, grid, neg, [n.name for n in board.nets])
    assert [v for v in check(board) if v.rule != "open"] == []
    assert_traces_keep(board, 0.25)


def test_pads_with_grid_points_are_not_planned():
    """A pad with more than SCARCE grid points in its copper is not planned (the plan must not
    eat the board): the quad's corner pad U1.1 and the 0402 chips are left alone."""
    grid, plan = _plan(crowded_row())
    refs = {k[1] for k in plan.chosen}
    assert refs == {"U1"}
    assert ("S1", "U1", 0) not in plan.chosen
