"""The swap after repair (router.negotiate._swap): a lost net routes when one net in its way is
ripped up, the lost net is routed with walls and the ripped-up net is routed again with walls.

Outside references: shapely measures the two nets' copper (the class clearance apart, each net's
copper one connected piece touching both its pads) and networkx finds, on the grid graph of the
free grid points, that the net moved still has a way with the lost net's route laid (so the
board is routable as drawn: common practice, a hand-made board).
"""
from __future__ import annotations

import networkx as nx
from shapely.geometry import LineString, Point, box
from shapely.ops import unary_union

from router.grid import RoutingGrid
from router.model import Board, Footprint, Keepout, Net, NetClass, Pad, Part, Rules
from router.negotiate import _Negotiation, _pad_groups, _swap
from router.units import TOL


def across() -> Board:
    """A 20 x 12 mm board routed on the top layer only (the bottom is a keepout): net A from a
    pad at each side edge, straight across the middle, and net B from a pad above that line to
    one below it. A's pads sit 0.5 mm from the edge (less than the edge clearance plus a trace and
    a clearance): nothing passes round them, so B routes only when A goes round B's upper pad."""
    tp = Footprint("tp", (1.5, 1.5), [Pad("1", (0.0, 0.0), "rectangle", (1.5, 1.5))])
    pin = Footprint("pin", (1.0, 1.0), [Pad("1", (0.0, 0.0), "rectangle", (1.0, 1.0))])
    parts = [Part("A1", "tp", at=(1.25, 6.0)), Part("A2", "tp", at=(18.75, 6.0)),
             Part("B1", "pin", at=(10.0, 8.5)), Part("B2", "pin", at=(10.0, 3.0))]
    nets = [Net("A", ["A1.1", "A2.1"]), Net("B", ["B1.1", "B2.1"])]
    rules = Rules(grid=0.25, edge_clearance=0.5, min_trace_width=0.15, min_clearance=0.15,
                  via_drill=0.3, via_diameter=0.6, min_hole_spacing=0.3)
    return Board("across", [(0.0, 0.0), (20.0, 0.0), (20.0, 12.0), (0.0, 12.0)], copper_layers=2,
                 rules=rules, classes={"default": NetClass("default", 0.25, 0.25)},
                 footprints={"tp": tp, "pin": pin}, parts=parts, nets=nets,
                 keepouts=[Keepout([(0.0, 0.0), (20.0, 0.0), (20.0, 12.0), (0.0, 12.0)], layers=["bottom"])])


def _copper(neg, net):
    segs = [LineString([a, b]).buffer(w / 2) for a, b, l, w in neg.merged_segments(neg.routes[net]) if a != b]
    return unary_union(segs)


def test_the_net_in_the_way_moves_and_the_lost_net_routes():
    b = across()
    grid = RoutingGrid(b)
    neg = _Negotiation(b, grid, ["A", "B"], _pad_groups(b, grid), bend=400, via=800, jump=2000)
    a = neg.route("A", strict=True)
    assert not a.failed
    neg.lay("A", a)                       # A first: straight across, B's pads on either side of it
    assert neg.route("B", strict=True, explain=False).failed
    lost = {"B": "no way"}
    _swap(neg, lost)
    assert lost == {} and set(neg.routes) == {"A", "B"}
    assert not any(neg.conflicts()[0].values())
    ca, cb = _copper(neg, "A"), _copper(neg, "B")
    assert ca.distance(cb) >= 0.25 - TOL                      # the class clearance (shapely)
    for net, shape, half, pads in (("A", ca, 0.75, ((1.25, 6.0), (18.75, 6.0))),
                                   ("B", cb, 0.5, ((10.0, 8.5), (10.0, 3.0)))):
        assert shape.geom_type == "Polygon"                   # one connected piece
        assert all(shape.intersects(box(x - half, y - half, x + half, y + half)) for x, y in pads), net
    # networkx: on the free grid points of the top layer (0.25 + 0.125 mm from B's copper and B's
    # pads, 0.5 + 0.125 mm inside the edge), A's pads still join: the way round B's upper pad
    keep = unary_union([cb, box(9.5, 8.0, 10.5, 9.0), box(9.5, 2.5, 10.5, 3.5)])
    g = nx.grid_2d_graph(81, 49)
    free = [n for n in g if 0.625 - TOL <= n[0] * 0.25 <= 19.375 + TOL and 0.625 - TOL <= n[1] * 0.25 <= 11.375 + TOL
            and keep.distance(Point(n[0] * 0.25, n[1] * 0.25)) >= 0.375 - TOL]
    sub = g.subgraph(free)
    assert nx.has_path(sub, (9, 24), (71, 24))               # beside A's pads, at y = 6


def test_nothing_moves_when_no_swap_routes_the_lost_net():
    b = across()
    b.parts[2].at = (10.0, 11.0)              # B's pads 0.5 mm from the top and bottom edges: once B
    b.parts[3].at = (10.0, 1.0)               # routes, nothing passes round it, so A cannot route
    grid = RoutingGrid(b)
    neg = _Negotiation(b, grid, ["A", "B"], _pad_groups(b, grid), bend=400, via=800, jump=2000)
    a = neg.route("A", strict=True)
    neg.lay("A", a)
    before = neg.routes["A"]
    lost = {"B": "no way"}
    _swap(neg, lost)
    assert set(lost) == {"B"} and neg.routes["A"] is before and "B" not in neg.routes


def test_the_fan_out_negotiation_keeps_to_its_work_budget(monkeypatch):
    """_fan_with_supplies' local negotiation (router.negotiate._fan_negotiation) stops its
    searches at FAN_SWEEPS times the board's search states: with no budget at all it expands
    almost nothing, and the nets that failed only because a search was cut are not taken as
    ones no route reaches (``neg.blind`` as it was). With the real budget the same negotiation
    routes both nets of the hand-made board clear of each other (shapely, the class clearance)."""
    import router.negotiate as negotiate
    from router.search import states_expanded

    def start():
        b = across()
        grid = RoutingGrid(b)
        neg = _Negotiation(b, grid, ["A", "B"], _pad_groups(b, grid), bend=400, via=800, jump=2000)
        neg.lay("A", neg.route("A", strict=True))         # A straight across: B hemmed in
        return neg

    neg = start()
    e0 = states_expanded()
    negotiate._fan_negotiation(neg, ["B", "A"])
    full = states_expanded() - e0
    assert full > 0 and not any(neg.conflicts()[0].values())
    assert _copper(neg, "A").distance(_copper(neg, "B")) >= 0.25 - TOL

    monkeypatch.setattr(negotiate, "FAN_SWEEPS", 0)
    neg = start()
    blind = dict(neg.blind)
    e0 = states_expanded()
    negotiate._fan_negotiation(neg, ["B", "A"])
    cut = states_expanded() - e0
    assert cut < full / 10, (cut, full)
    assert neg.blind == blind
