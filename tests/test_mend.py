"""A lost net of many pads mended from its way through the others (router.mend, router.negotiate's
_mend_many): its copper cut where it shares cells with another net, the pieces kept, and only the
missing links routed.

Outside references: networkx finds the pieces of the kept copper on its own (connected
components of its grid edges); shapely measures copper against pads and the class clearance.
"""
from __future__ import annotations

import networkx as nx
from shapely.geometry import LineString, Point, box
from shapely.ops import unary_union

from router import negotiate
from router.grid import RoutingGrid
from router.mend import cut
from router.model import Board, Footprint, Keepout, Net, NetClass, Pad, Part, Rules
from router.negotiate import _mend_many, _Negotiation, _pad_groups, _priced_route, _repair
from router.nets import NetRoute
from router.units import TOL

P_X = (1.0, 5.0, 8.0, 16.0, 19.0, 23.0)      # the supply's pads, along y = 6 (the ends 0.5 mm from the edges)


def row() -> Board:
    """A 24 x 12 mm board routed on the top layer only (the bottom is a keepout): a supply P of six
    1 mm pads in a row at y = 6 from edge to edge (nothing passes round its ends), and a net B between two pads above the row, at (10, 11) and (14, 11),
    0.5 mm from the top edge (nothing passes above them)."""
    pin = Footprint("pin", (1.0, 1.0), [Pad("1", (0.0, 0.0), "rectangle", (1.0, 1.0))])
    parts = [Part(f"P{k + 1}", "pin", at=(x, 6.0)) for k, x in enumerate(P_X)]
    parts += [Part("B1", "pin", at=(10.0, 11.0)), Part("B2", "pin", at=(14.0, 11.0))]
    nets = [Net("P", [f"P{k + 1}.1" for k in range(len(P_X))]), Net("B", ["B1.1", "B2.1"])]
    rules = Rules(grid=0.25, edge_clearance=0.5, min_trace_width=0.15, min_clearance=0.15,
                  via_drill=0.3, via_diameter=0.6, min_hole_spacing=0.3)
    return Board("row", [(0.0, 0.0), (24.0, 0.0), (24.0, 12.0), (0.0, 12.0)], copper_layers=2,
                 rules=rules, classes={"default": NetClass("default", 0.25, 0.25)},
                 footprints={"pin": pin}, parts=parts, nets=nets,
                 keepouts=[Keepout([(0.0, 0.0), (24.0, 0.0), (24.0, 12.0), (0.0, 12.0)], layers=["bottom"])])


def _cell(grid, x, y):
    return (0, int(round(y / grid.pitch)) - grid.j0, int(round(x / grid.pitch)) - grid.i0)


def _u_route(grid) -> NetRoute:
    """B laid as a U down to y = 1 and back: across the row's line twice, and nothing passes below it."""
    return _laid(grid, "B", [(10.0, 11.0), (10.0, 1.0), (14.0, 1.0), (14.0, 11.0)])


def _laid(grid, net, pts) -> NetRoute:
    """A route of `net` along the polyline `pts` (grid points, axis-parallel legs) on the top layer."""
    r = NetRoute(net)
    for a, b in zip(pts, pts[1:]):
        ca, cb = _cell(grid, *a), _cell(grid, *b)
        n = abs(cb[1] - ca[1]) + abs(cb[2] - ca[2])
        dj, di = (cb[1] - ca[1]) // n, (cb[2] - ca[2]) // n
        for k in range(n):
            c = (0, ca[1] + k * dj, ca[2] + k * di)
            d = (0, c[1] + dj, c[2] + di)
            r.edges.add((min(c, d), max(c, d)))
            r.cells.update({c, d})
    return r


def _setup():
    b = row()
    grid = RoutingGrid(b)
    neg = _Negotiation(b, grid, ["B", "P"], _pad_groups(b, grid), bend=400, via=800, jump=2000)
    neg.lay("B", _u_route(grid))
    return neg


def _copper(neg, net):
    """The net's traces and pads (shapely)."""
    pads = [_pad_box(p.x, p.y) for grp in neg.groups[net] for p in grp]
    return unary_union([LineString([a, b]).buffer(w / 2) for a, b, l, w in neg.merged_segments(neg.routes[net])
                        if a != b] + pads)


def _pad_box(x, y):
    return box(x - 0.5, y - 0.5, x + 0.5, y + 0.5)


def test_the_cut_keeps_two_pieces_with_their_pads_and_no_dangling_end():
    neg = _setup()
    grid = neg.grid
    way = _priced_route(neg, "P")                 # through B's U, twice
    assert not way.failed
    neg.lay("P", way)
    _, cells = neg.conflicts(only=["P"])
    neg.rip("P")
    drop = {tuple(int(v) for v in c) for arr in cells for c in arr}
    assert drop
    m = cut(grid, way, drop, neg.groups["P"])
    kept = m.kept
    assert kept.edges <= way.edges and not any(a in drop or b in drop for a, b in kept.edges)
    # networkx: the kept grid edges, joined also through the pads' copper (a grid point in a pad),
    # fall into the pieces cut reports
    g = nx.Graph()
    g.add_edges_from(kept.edges)
    j = g.copy()
    for c in g.nodes:
        x, y = grid.point(c[1], c[2])
        j.add_edges_from((c, ("pad", px)) for px in P_X if _pad_box(px, 6.0).distance(Point(x, y)) <= TOL)
    comps = [{c for c in comp if c[0] != "pad"} for comp in nx.connected_components(j)]
    assert set(map(frozenset, comps)) == {frozenset(c) for _, c in m.pieces}     # (subsets sort in no fixed order)
    assert len(m.pieces) == 2 and not m.loose
    for pads, cells_ in m.pieces:
        xs = sorted(p.x for p in pads)
        assert xs in ([1.0, 5.0, 8.0], [16.0, 19.0, 23.0])
        # shapely: the piece's copper touches exactly those pads
        piece = unary_union([LineString([grid.point(a[1], a[2]), grid.point(b[1], b[2])]).buffer(0.125)
                             for a, b in kept.edges if a in set(cells_)])
        touched = sorted(x for x in P_X if piece.intersects(_pad_box(x, 6.0)))
        assert touched == xs
    # no dangling end: every end of the kept copper lies in a pad of P
    for c, d in g.degree():
        if d == 1:
            x, y = grid.point(c[1], c[2])
            assert any(_pad_box(px, 6.0).distance(Point(x, y)) <= TOL for px in P_X), (x, y)


def test_the_mend_moves_the_net_in_the_way_and_keeps_the_pieces():
    # P's six pads are more than LOCAL_MOST_PADS (4): a net the swap leaves out, so it is mended
    neg = _setup()
    assert neg.route("P", strict=True, explain=False).failed     # B's U closes the row's way
    way = _priced_route(neg, "P")
    lost = {"P": "no way"}
    _mend_many(neg, lost)
    assert lost == {} and set(neg.routes) == {"B", "P"}
    assert not any(neg.conflicts()[0].values())
    p, b = neg.routes["P"], neg.routes["B"]
    assert not p.failed and not b.failed
    # the pieces of the way through B are kept: P's copper away from B's old U is as it was
    u = box(9.0, 0.0, 15.0, 12.0)
    outside = {e for e in way.edges if not any(u.contains(Point(*neg.grid.point(c[1], c[2]))) for c in e)}
    assert outside and outside <= p.edges
    # shapely: P is one piece over all six pads, B joins its two, and they keep the 0.25 mm clearance
    cp, cb = _copper(neg, "P"), _copper(neg, "B")
    assert cp.geom_type == "Polygon" and all(cp.intersects(_pad_box(x, 6.0)) for x in P_X)
    assert cb.intersects(_pad_box(10.0, 11.0)) and cb.intersects(_pad_box(14.0, 11.0))
    assert cp.distance(cb) >= 0.25 - TOL


def test_nothing_changes_when_the_mend_finds_no_way(monkeypatch):
    """B's pads on either side of the row, each 0.5 mm from an edge: on one layer B and P cannot
    both route, so the mend (P's pieces joined, B moved) cannot keep both, and every route goes back
    as it was."""
    tried = []
    monkeypatch.setattr(negotiate, "cut", lambda *a: tried.append(a[1].net) or cut(*a))
    b = row()
    b.parts[-2].at, b.parts[-1].at = (12.0, 11.0), (12.0, 1.0)
    grid = RoutingGrid(b)
    neg = _Negotiation(b, grid, ["B", "P"], _pad_groups(b, grid), bend=400, via=800, jump=2000)
    rb = neg.route("B", strict=True)
    assert not rb.failed
    neg.lay("B", rb)
    lost = {"P": "no way"}
    _mend_many(neg, lost)
    assert tried and tried[0] == "P"                           # the mend was made
    assert set(lost) == {"P"} and "P" not in neg.routes and neg.routes["B"] is rb


def test_only_the_missing_link_is_routed_between_the_pieces():
    """With B taken up, P routed from its pieces lays only the link across the gap the cut left,
    and the link with the pieces is one copper over all six pads (shapely)."""
    neg = _setup()
    way = _priced_route(neg, "P")
    neg.lay("P", way)
    _, cells = neg.conflicts(only=["P"])
    neg.rip("P")
    drop = {tuple(int(v) for v in c) for arr in cells for c in arr}
    neg.rip("B")
    neg.mend["P"] = m = cut(neg.grid, way, drop, neg.groups["P"])
    r = neg.route("P", strict=True, explain=False)
    assert not r.failed
    new = r.edges - m.kept.edges
    assert m.kept.edges <= r.edges and new
    xs = [neg.grid.point(c[1], c[2])[0] for e in new for c in e]
    assert 7.5 <= min(xs) and max(xs) <= 16.5                  # from the pad at 8 to the pad at 16 only
    neg.lay("P", r)
    cp = _copper(neg, "P")
    assert cp.geom_type == "Polygon" and all(cp.intersects(_pad_box(x, 6.0)) for x in P_X)


def test_repair_mends_a_supply_in_the_way_and_keeps_the_rest_of_it():
    """P laid with a detour below the row between its first two pads and a bump up to the top
    edge round x = 12, which closes in B's pads (at (10, 11) and (14, 11), B ripped up). Repair
    routes B through the bump; P, in its way, is cut there and joined again along the row: its
    detour, clear of B, is kept as it was (P routed again whole would straighten it: so it is
    without ``mend_victims``)."""
    b = row()
    grid = RoutingGrid(b)
    neg = _Negotiation(b, grid, ["B", "P"], _pad_groups(b, grid), bend=400, via=800, jump=2000)
    detour = [(1.0, 6.0), (2.0, 6.0), (2.0, 4.0), (4.0, 4.0), (4.0, 6.0)]
    neg.lay("P", _laid(grid, "P", detour + [(11.0, 6.0), (11.0, 11.25), (13.0, 11.25), (13.0, 6.0), (23.0, 6.0)]))
    assert neg.route("B", strict=True, explain=False).failed
    neg.mend_victims = True               # as on a big board, or in route_board's last try
    lost = {"B": "no way"}
    _repair(neg, lost, rounds=8)
    assert lost == {} and set(neg.routes) == {"B", "P"} and not any(neg.conflicts()[0].values())
    assert _laid(grid, "P", detour).edges <= neg.routes["P"].edges
    cp, cb = _copper(neg, "P"), _copper(neg, "B")
    assert cp.geom_type == "Polygon" and all(cp.intersects(_pad_box(x, 6.0)) for x in P_X)
    assert cb.intersects(_pad_box(10.0, 11.0)) and cb.intersects(_pad_box(14.0, 11.0))
    assert cp.distance(cb) >= 0.25 - TOL


def test_without_mend_victims_repair_routes_the_supply_again_whole():
    b = row()
    grid = RoutingGrid(b)
    neg = _Negotiation(b, grid, ["B", "P"], _pad_groups(b, grid), bend=400, via=800, jump=2000)
    detour = [(1.0, 6.0), (2.0, 6.0), (2.0, 4.0), (4.0, 4.0), (4.0, 6.0)]
    neg.lay("P", _laid(grid, "P", detour + [(11.0, 6.0), (11.0, 11.25), (13.0, 11.25), (13.0, 6.0), (23.0, 6.0)]))
    lost = {"B": "no way"}
    _repair(neg, lost, rounds=8)
    assert lost == {} and not any(neg.conflicts()[0].values())
    assert not _laid(grid, "P", detour).edges <= neg.routes["P"].edges


def test_a_net_of_few_pads_is_not_mended(monkeypatch):
    """A lost net of at most LOCAL_MOST_PADS pads is left to the swap and the fan-out, which rip it
    up and route it whole: here LOCAL_MOST_PADS is raised to P's six pads, and the mend leaves P."""
    monkeypatch.setattr(negotiate, "LOCAL_MOST_PADS", 6)
    neg = _setup()
    u = neg.routes["B"]
    lost = {"P": "no way"}
    _mend_many(neg, lost)
    assert set(lost) == {"P"} and "P" not in neg.routes and neg.routes["B"] is u    # the U left as laid
