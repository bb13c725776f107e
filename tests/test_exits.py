"""Exits of fine-pitch rows in negotiation (router.escape): judged exactly, reserved, priced.

Outside references: JEDEC MO-220 (quad no-lead, 0.5 mm pitch, leads 0.18 to 0.30 mm wide: the
test part has 0.25 x 0.8 mm pads), EIA 0402 (1.0 x 0.5 mm chip); shapely measures every distance
the tests compare on its own.
"""
from __future__ import annotations

import pytest
from shapely.geometry import LineString, Point

from router.check import check
from router.copper import copper_items
from router.escape import ExitReserve, exit_conflicts
from router.grid import RoutingGrid
from router.model import Board, NetClass, Net, Part, Rules
from router.negotiate import route_board
from router.nets import NetRoute
from router.realgen import _chip, _quad
from router.units import TOL


def fine_rules() -> Rules:
    """The rules of the hand-made fine-pitch boards: a 0.25 mm grid, a board house's 0.15 mm
    minimum trace and clearance, 0.3 mm vias drilled in 0.6 mm pads (common practice)."""
    return Rules(grid=0.25, edge_clearance=0.4, min_trace_width=0.15, min_clearance=0.15,
                 via_drill=0.3, via_diameter=0.6, min_hole_spacing=0.3)


def crowded_row() -> Board:
    """One side of a 32-pin quad no-lead part placed 0.125 mm off the 0.25 mm grid (so every pad
    must step sideways to a grid line), a 0.5 mm supply among 0.25 mm signals, each pin to a 0402
    beside the part: the row where one net's exit took its neighbour's only way out."""
    q, c = _quad(32), _chip("0402")
    parts = [Part("U1", q.name, at=(18.125, 16.125)),
             Part("C1", c.name, at=(21.6597, 11.0807)), Part("C2", c.name, at=(23.0443, 19.7097), rotation=90),
             Part("C4", c.name, at=(8.125, 21.05)), Part("C5", c.name, at=(8.125, 18.8)),
             Part("C6", c.name, at=(8.05, 16.7)), Part("C7", c.name, at=(8.0, 14.4)),
             Part("C8", c.name, at=(28.0, 21.05)), Part("C9", c.name, at=(28.125, 18.8))]
    nets = [Net("VCC", ["U1.7", "C1.1", "C2.1"], "power"), Net("GND", ["U1.8", "C1.2", "C2.2"], "power"),
            Net("S1", ["U1.1", "C4.2"]), Net("S2", ["U1.2", "C5.2"]), Net("S3", ["U1.3", "C6.2"]),
            Net("S4", ["U1.4", "C7.2"]), Net("S5", ["U1.5", "C8.1"]), Net("S6", ["U1.6", "C9.1"])]
    rules = fine_rules()
    return Board("crowded-row", [(2.0, 2.0), (34.0, 2.0), (34.0, 28.0), (2.0, 28.0)], copper_layers=2, rules=rules,
                 classes={"default": NetClass("default", 0.25, 0.2), "power": NetClass("power", 0.5, 0.2)},
                 footprints={q.name: q, c.name: c}, parts=parts, nets=nets)


def test_crowded_row_routes_completely_and_clean():
    """Every net of the crowded row routed; router.check finds nothing, and shapely's own distances
    between copper items of different nets (traces, pads and vias, radius taken off) keep the
    class clearance, or the own-pad rule where check grants it (check's pairs are the judge there)."""
    b = crowded_row()
    r = route_board(b)
    assert r.failed == {}
    assert [v for v in check(r.board) if v.rule != "open"] == []
    assert_traces_keep(r.board, 0.2)


def assert_traces_keep(board, gap: float) -> None:
    """Every trace keeps `gap` mm from other nets' traces and vias on a layer they share, by
    shapely's distance between the exact cores less both radii (outside reference: shapely)."""
    items = copper_items(board)
    traces = [it for it in items if it.kind == "trace"]
    others = [it for it in items if it.kind in ("trace", "via")]
    for t in traces:
        for o in others:
            if o is t or o.net == t.net or not set(t.layers) & set(o.layers):
                continue
            d = t.core.distance(o.core) - t.radius - o.radius
            assert d >= gap - TOL, (t.net, o.net, d)


def _row_grid():
    b = crowded_row()
    return b, RoutingGrid(b)


def test_exit_conflicts_measure_exactly():
    """Two exits of neighbouring 0.5 mm pads, stepping left at depths one grid pitch apart, keep
    0.2 mm (shapely): no conflict, though a grid point beside one lies within the other's reach
    (the count of grid points beside a stub took that for sharing). Stepping at the same depth,
    one exit's step comes 0.125 mm from the other: a conflict, for both nets."""
    b, grid = _row_grid()
    # S4's pad at x = 17.875, S5's at 18.375; pad ends at y = 13.225
    s4 = NetRoute("S4", stubs=[((17.875, 13.225), (17.875, 13.0), 0), ((17.875, 13.0), (17.75, 13.0), 0)])
    s5_deeper = NetRoute("S5", stubs=[((18.375, 13.225), (18.375, 12.75), 0), ((18.375, 12.75), (18.25, 12.75), 0)])
    s5_same = NetRoute("S5", stubs=[((18.375, 13.225), (18.375, 13.0), 0), ((18.375, 13.0), (18.25, 13.0), 0)])

    def shapely_gap(a, b_):
        la = [LineString([p, q]) for p, q, _ in a.stubs]
        lb = [LineString([p, q]) for p, q, _ in b_.stubs]
        return min(x.distance(y) for x in la for y in lb) - 0.25

    for s5, clash in ((s5_deeper, False), (s5_same, True)):
        routes = {"S4": s4, "S5": s5}
        soft = {n: grid.soft_items(n, [(p, q, l, 0.25) for p, q, l in r.stubs], [], []) for n, r in routes.items()}
        shared, cells = exit_conflicts(grid, routes, soft)
        assert (shapely_gap(s4, s5) < 0.2 - TOL) == clash
        assert set(shared) == ({"S4", "S5"} if clash else set())
        assert bool(cells) == clash
    # the grid point (18.0, 13.0) lies within half a pitch of S4's exit and within half widths
    # plus clearance (0.45 mm) of S5's deeper exit
    beside = Point(18.0, 13.0)
    assert beside.distance(LineString([(17.875, 13.225), (17.875, 13.0)])) <= 0.125 + TOL
    assert beside.distance(LineString([(18.375, 13.225), (18.375, 12.75)])) < 0.45


def test_reserved_exits_cost_other_nets_only():
    """A scarce pad's exits cost every other net RESERVE_STEPS grid steps per point within reach
    of its trace or via, and the net itself nothing; a via place is reserved as far as a via
    would come too close (shapely distance from the exit less radius and half width)."""
    from router.escape import RESERVE_STEPS, Neck
    from router.search import STEP
    b, grid = _row_grid()
    pad = next(p for p in grid.pads if p.ref == "U1" and p.pin == "4")
    path = Neck([(17.875, 13.225), (17.875, 13.0), (17.75, 13.0)])
    path.width = 0.25
    cell = (0, int(round(13.0 / grid.pitch)) - grid.j0, int(round(17.75 / grid.pitch)) - grid.i0)
    grid._access_cache = {("S4", "U1", pad.index): {cell: path}}
    res = ExitReserve(grid)
    res.add("S4", [pad])
    assert res.extra_for("S4")[0].max() == 0 and res.extra_for("S4")[1].max() == 0
    cells, vias = res.extra_for("S3")
    unit = RESERVE_STEPS * STEP
    line = LineString(list(path) + [grid.point(cell[1], cell[2])])
    for j in range(cell[1] - 4, cell[1] + 5):
        for i in range(cell[2] - 4, cell[2] + 5):
            x, y = grid.point(j, i)
            d = Point(x, y).distance(line)
            thin = 0.125                      # the board's narrowest class: half of 0.25 mm
            if abs(d - (0.125 + 0.2 + thin)) > 1e-3:
                assert (cells[0, j, i] == unit) == (d < 0.125 + 0.2 + thin), (x, y, d)
            if abs(d - (0.125 + 0.2 + 0.3)) > 1e-3:
                assert (vias[j, i] == unit) == (d < 0.125 + 0.2 + 0.3), (x, y, d)
            assert cells[1, j, i] == 0         # the exit is on the top layer only


def test_exits_taken_by_routed_copper_are_named_so():
    """When other nets' routed copper (walls) takes every exit of a pad that the fixed copper
    leaves open, the reason says so, rather than blaming the pads or the file's copper."""
    from router.negotiate import _Negotiation, _name_takers, _pad_groups
    b = crowded_row()
    grid = RoutingGrid(b)
    groups = _pad_groups(b, grid)
    neg = _Negotiation(b, grid, [n.name for n in b.nets], groups, bend=400, via=800, jump=2000)
    # S6's copper laid across the front of the row, under U1.7's exits (0.25 mm traces)
    wall = NetRoute("S6", stubs=[((18.5, y), (20.5, y), 0) for y in (13.0, 12.75, 12.5, 12.25, 12.0, 11.75)])
    neg.lay("S6", wall)
    r = neg.route("VCC", strict=True)
    assert r.failed and "taken by other nets' routed copper" in r.failed, r.failed
    # after routing the reason names the net (router.negotiate._name_takers), the routing unchanged
    before = dict(neg.routes)
    assert _name_takers(neg, "VCC", r.failed) == r.failed + ": S6 (taking it away opens an exit)"
    assert r.failed.startswith("pad U1.7: ")
    assert neg.routes == before and neg.conflicts() == ({}, [])


def test_exits_taken_by_two_nets_together_are_named_together():
    """Two nets' copper across the front of the row, neither alone closing every exit of U1.7
    (S6's rows near the pad ends, S5's further out): the reason names both, together; a reason
    naming a pad that is not closed, or a pad whose exits are open, is kept as it was (common
    practice: name what closes it)."""
    from router.negotiate import _Negotiation, _name_takers, _pad_groups
    b = crowded_row()
    grid = RoutingGrid(b)
    neg = _Negotiation(b, grid, [n.name for n in b.nets], _pad_groups(b, grid), bend=400, via=800, jump=2000)
    for name, ys in (("S6", (13.0, 12.75, 12.5)), ("S5", (12.25, 12.0, 11.75))):
        neg.lay(name, NetRoute(name, stubs=[((18.5, y), (20.5, y), 0) for y in ys]))
    r = neg.route("VCC", strict=True)
    assert _name_takers(neg, "VCC", r.failed) == r.failed + ": S5 and S6 together"
    assert _name_takers(neg, "VCC", r.failed.replace("U1.7", "U1.8")) == r.failed.replace("U1.7", "U1.8")
    neg.rip("S5")
    neg.rip("S6")
    assert _name_takers(neg, "VCC", "as it was") == "as it was"


def test_exit_conflicts_match_shapely_on_many_exits():
    """Exits spread over a board in runs (the broad phase measures each run against the items near
    it only): every exit segment counted as too close is one whose shapely distance to another
    net's copper item, less half widths and radius, is below the class clearance, and no other
    (outside reference: shapely)."""
    import numpy as np
    b, grid = _row_grid()
    rng = np.random.default_rng(7)
    routes, soft = {}, {}
    for k in range(60):
        net = f"N{k}"
        x, y = (float(v) for v in rng.uniform(3.0, 33.0, 2))
        dx, dy = (0.3, 0.0) if k % 2 else (0.0, 0.3)
        stubs = [((x, y), (round(x + dx, 3), round(y + dy, 3)), int(k % 3 == 0))]
        routes[net] = NetRoute(net, stubs=stubs)
        tx, ty = (float(v) for v in rng.uniform(3.0, 33.0, 2))
        soft[net] = grid.soft_items(net, [(p, q, l, 0.25) for p, q, l in stubs]
                                    + [((tx, ty), (tx + 2.0, ty), 0, 0.25)], [], [])
    shared, _ = exit_conflicts(grid, routes, soft)
    want = {}
    for net, r in routes.items():
        for p, q, l in r.stubs:
            seg = LineString([p, q])
            for other, items in soft.items():
                if other == net:
                    continue
                for ob in items:
                    if l not in ob.layers:
                        continue
                    x0, y0, x1, y1 = ob.box
                    core = LineString([(x0, y0), (x1, y1)]) if (x0, y0) != (x1, y1) else Point(x0, y0)
                    if seg.distance(core) - 0.125 - ob.radius < 0.2 - TOL:
                        want[net] = want.get(net, 0) + 1
                        break
                else:
                    continue
                break
    assert want and shared == want


def test_lane_of_a_row_pad_holding_grid_points_costs_other_nets_vias():
    """A pad inside a 0.5 mm row that holds grid points of its own (on a fine grid many, so it
    does not count as scarce by its access) leaves only along the lane straight out of its outer
    end: with lanes (ExitReserve(lanes=True)), another net's via within the lane's reach (the
    pad's class width plus clearance plus the via's radius from the lane, measured by shapely)
    costs LANE_STEPS grid steps; the pad's own net pays nothing, traces pay nothing, a pad beside
    which traces pass (a passive's) gets no lane, and without lanes nothing is priced."""
    from router.escape import LANE_STEPS, SCARCE
    from router.search import STEP
    b, grid = _row_grid()
    pad = next(p for p in grid.pads if p.ref == "U1" and p.pin == "4")       # S4, x = 17.875
    chip = next(p for p in grid.pads if p.ref == "C7" and p.pin == "2")      # S4's 0402
    j = int(round(13.5 / grid.pitch)) - grid.j0
    inside = {(0, j, int(round(x / grid.pitch)) - grid.i0): None for x in (17.75, 18.0)}
    # more than SCARCE grid points in the pad's copper (as on a 0.1 mm grid)
    many = {(0, j + k, c[2]): None for c in inside for k in range(3)}
    assert len(many) > SCARCE
    grid._access_cache = {("S4", "U1", pad.index): many, ("S4", "C7", chip.index): dict(many)}
    res = ExitReserve(grid)
    res.add("S4", [pad, chip])
    assert res.extra_for("S3") is None
    res = ExitReserve(grid, lanes=True)
    res.add("S4", [pad, chip])
    cells, vias = res.extra_for("S3")
    assert cells.max() == 0 and vias.max() > 0
    own = res.extra_for("S4")
    assert own[0].max() == 0 and own[1].max() == 0
    lane = LineString([(17.875, 13.225), (17.875, 12.225)])      # out of the row, neck_length (1 mm) long
    reach = 0.125 + 0.2 + 0.3                                    # half the class width, clearance, via radius
    unit = LANE_STEPS * STEP
    for jj in range(grid.ny):
        for ii in range(grid.nx):
            x, y = grid.point(jj, ii)
            d = Point(x, y).distance(lane)
            if abs(d - reach) > 1e-3:
                assert (vias[jj, ii] == unit) == (d < reach), (x, y, d)
