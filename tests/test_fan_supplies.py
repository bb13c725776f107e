"""A quad side whose exits fit only as a deep staircase (router.fanout's further exits), and the
fan-out of a lost net's part planned again with the supplies in it (router.negotiate's
_fan_with_supplies, after the swap).

Outside references: JEDEC MO-220 (quad no-lead, 0.5 mm pitch, 0.25 x 0.8 mm pads), EIA 0402
chips; shapely measures every distance between planned exits and between routed traces on its
own; networkx joins each net's copper on its own (connected components of touching pieces).
"""
from __future__ import annotations

import itertools

import networkx as nx
from shapely.geometry import LineString, Point, box

import router.fanout as fanout
from router.check import check
from router.geometry import placed_pads
from router.model import Board, Net, NetClass, Part
from router.realgen import _chip, _quad
from router.units import TOL
from test_exits import assert_traces_keep, fine_rules
from test_fanout import _pieces, _plan
from test_lanes import _first_order


def quad_side() -> Board:
    """A 32-pin 0.5 mm quad 0.1 mm off the 0.25 mm grid (as placed on real-looking board 3), its
    lower side's pins 2 to 6 signals of 0.2 mm to 0402s below it, pin 7 a 0.4 mm supply and
    pin 8 a 0.4 mm ground (with the exposed pad), every class 0.25 mm apart."""
    q, c = _quad(32), _chip("0402")
    parts = [Part("U1", q.name, at=(20.1, 16.1))]
    nets = []
    for k, pin in enumerate(range(2, 7)):
        parts.append(Part(f"C{k + 1}", c.name, at=(16.0 + 2.0 * k, 9.0), rotation=90))
        nets.append(Net(f"S{pin}", [f"U1.{pin}", f"C{k + 1}.2"]))
    parts += [Part("C6", c.name, at=(28.0, 11.0)), Part("C7", c.name, at=(30.0, 11.0))]
    nets += [Net("VCC", ["U1.7", "C6.1", "C7.1"], "power"),
             Net("GND", ["U1.8", "U1.33", "C6.2", "C7.2"], "power")]
    rules = fine_rules()
    return Board("quad-side", [(2.0, 2.0), (38.0, 2.0), (38.0, 28.0), (2.0, 28.0)], copper_layers=2,
                 rules=rules, classes={"default": NetClass("default", 0.2, 0.25),
                                       "power": NetClass("power", 0.4, 0.25)},
                 footprints={q.name: q, c.name: c}, parts=parts, nets=nets)


def test_the_shortest_exits_leave_the_side_without_a_compatible_set(monkeypatch):
    """With only the shortest exits (as many as before the further ones, and no staircase rows
    below the first), the side's five signals, supply and ground have no compatible set: the plan
    falls back to greedy and says so."""
    monkeypatch.setattr(fanout, "MORE_EXITS", fanout.PLAN_EXITS)
    monkeypatch.setattr(fanout, "stair_depth", lambda grid, nets: 0.0)
    _, plan = _plan(quad_side())
    assert len(plan.notes) == 1 and "planned greedily" in plan.notes[0]
    assert "U1.7" in plan.notes[0]


def test_further_exits_plan_the_side_as_a_staircase_clear_by_shapely():
    """With the further exits, every pad of the side gets an exit (no note), the signals step
    one grid row deeper each, and every two planned exits of different nets keep the class
    clearance (0.25 mm) by shapely's distance between centrelines less half widths."""
    grid, plan = _plan(quad_side())
    assert plan.notes == []
    chosen = {k[2]: c for k, c in plan.chosen.items() if k[1] == "U1"}
    assert set(range(1, 8)) <= set(chosen)          # pins 2..8 (pad indices 1..7)
    rows = [chosen[k].cell[1] for k in range(1, 5)]          # S2..S5: each a row further out
    assert rows == sorted(rows, reverse=True) and len(set(rows)) == 4
    for a, b in itertools.combinations(chosen.values(), 2):
        if a.net == b.net or a.cell[0] != b.cell[0]:
            continue
        for ga, ra in _pieces(grid, a):
            for gb, rb in _pieces(grid, b):
                assert ga.distance(gb) - ra - rb >= 0.25 - TOL, (a.net, b.net)


def _joined(board: Board, net: str) -> bool:
    """networkx: the net's pads (axis-aligned rectangles here), traces and vias (touching pieces on a shared layer) form one
    connected component that holds every pad of the net."""
    pieces = []
    for p in placed_pads(board):
        if p.net == net:
            pieces.append((box(p.x - p.w / 2, p.y - p.h / 2, p.x + p.w / 2, p.y + p.h / 2), set(p.layers), True))
    for t in board.traces:
        if t.net == net:
            pieces.append((LineString(t.points).buffer(t.width / 2), {t.layer}, False))
    for v in board.vias:
        if v.net == net:
            pieces.append((Point(v.at).buffer(v.diameter / 2), {"top", "bottom"}, False))
    g = nx.Graph()
    g.add_nodes_from(range(len(pieces)))
    for i, j in itertools.combinations(range(len(pieces)), 2):
        (a, la, _), (b, lb, _) = pieces[i], pieces[j]
        if la & lb and a.distance(b) <= TOL:
            g.add_edge(i, j)
    pads = {i for i, (_, _, pad) in enumerate(pieces) if pad}
    return any(pads <= comp for comp in nx.connected_components(g))


def test_the_lost_row_pad_comes_back_with_the_supply_moved():
    """tests/test_lanes.py's 0.5 mm quad on a 0.1 mm grid: in the first net order the supply's via
    stands in front of U1.8's outer end and S4 is lost after the swap (tests/test_lanes.py); with
    the supply ripped up and negotiated again with the row and its neighbours, every net routes in
    that order, the board is clean (router.check), traces of different nets keep 0.25 mm (shapely)
    and the copper of S4 and of the supply joins their pads (networkx)."""
    out, lost = _first_order(lanes=False)
    assert lost == {}
    assert [v for v in check(out) if v.rule != "open"] == []
    assert_traces_keep(out, 0.25)
    for net in ("S4", "VCC"):
        assert _joined(out, net), net


def test_a_step_that_failed_at_the_same_closed_pads_is_not_made_again(monkeypatch):
    """The tries of one board share what the fan-out with the supplies failed at (lost net, closed
    pads): in tests/test_lanes.py's first order the step brings S4 back (above); told that it
    failed there in an earlier try, it makes no local negotiation and S4 stays lost; told of a
    failure at other pads, it brings S4 back as before (common practice: a cache hit skips the
    work, a miss does it)."""
    from router import negotiate
    from test_lanes import quad_on_fine_grid
    keys, local = [], []
    fan_key, negotiate_local = negotiate._fan_key, negotiate._negotiate_local
    monkeypatch.setattr(negotiate, "_fan_key", lambda net, closed: keys.append(fan_key(net, closed)) or keys[-1])
    monkeypatch.setattr(negotiate, "_negotiate_local", lambda *a: local.append(a[1][0]) or negotiate_local(*a))

    def first_order(in_vain):
        b = quad_on_fine_grid()
        g = b.rules.grid
        bend, via, jump = negotiate._cost(1.0, g), negotiate._cost(2.0, g), negotiate._cost(5.0, g)
        return negotiate._attempt(b, [n.name for n in b.nets], 0, 0, bend, via, jump, None,
                                  False, True, fan_failed=in_vain, classic=False)[1]

    in_vain: set = set()
    assert first_order(in_vain) == {} and in_vain == set()          # brought back: nothing recorded
    key = next(k for k in keys if k[0] == "S4")
    assert local[-1] == "S4"
    keys.clear(), local.clear()
    assert set(first_order({("S4", key[1] + (("U9", 0),))})) == set()     # other pads: made, S4 back
    assert "S4" in local
    keys.clear(), local.clear()
    assert set(first_order({key})) == {"S4"}                        # the same pads: not made again
    assert "S4" not in local and [k for k in keys if k[0] == "S4"] == [key]


def test_the_local_steps_are_left_out_only_where_they_cannot_reach_the_best_try():
    """_hopeless counts the lost nets the swap and the step may bring back (few pads, some route
    reaches them, not skipped): a try is hopeless only when bringing back every one of them would
    still leave more lost nets than the best earlier try (common practice: a bound that prunes
    only what cannot be kept)."""
    from types import SimpleNamespace
    from router import negotiate
    two, six = [[object()], [object()]], [[object()] for _ in range(6)]
    neg = SimpleNamespace(blind={}, groups={"S1": two, "S2": two, "VCC": six})
    lost = {"S1": "", "S2": "", "VCC": ""}
    assert not negotiate._hopeless(neg, lost, None)              # no earlier try: nothing to reach
    assert not negotiate._hopeless(neg, lost, 1)                 # S1 and S2 back: 1 lost, as the best
    assert negotiate._hopeless(neg, lost, 0)                     # VCC is never brought back here
    assert negotiate._hopeless(neg, lost, 1, skip={"S2"})        # only S1 left to try: 2 > 1
    neg.blind["S1"] = "closed"
    assert negotiate._hopeless(neg, lost, 1)


def test_the_row_of_a_lost_pad_is_its_side_of_the_part():
    """_row_nets: the routed nets with a pad on the lost pad's side of its part. shapely decides
    the side on its own: the pads of the same part and size whose centre lies on the line through
    the lost pad's centre along the side (distance 0), within 5 mm (`PLAN_WINDOW`) of it; a failed
    net, the lost net itself and the square exposed pad's net through its square pad are left out."""
    from types import SimpleNamespace
    from router import negotiate
    b = quad_side()
    pads = placed_pads(b)
    names = [n.name for n in b.nets]
    neg = SimpleNamespace(grid=SimpleNamespace(pads=pads), nets=names,
                          routes={n: SimpleNamespace(failed=None) for n in names if n != "S4"})
    lost = next(p for p in pads if p.name == "U1.4")
    line = LineString([(lost.x - 50.0, lost.y), (lost.x + 50.0, lost.y)])     # the lower side runs along x
    want = {q.net for q in pads if q.ref == "U1" and q.net in neg.routes and abs(q.w - lost.w) <= TOL
            and abs(q.h - lost.h) <= TOL and line.distance(Point(q.x, q.y)) <= TOL
            and Point(q.x, q.y).distance(Point(lost.x, lost.y)) <= negotiate.PLAN_WINDOW + TOL}
    assert want == {"S2", "S3", "S5", "S6", "VCC", "GND"}
    assert set(negotiate._row_nets(neg, "S4", [lost])) == want
    assert negotiate._row_nets(neg, "S4", [lost]) == [n for n in names if n in want]     # negotiation order
    neg.routes["S3"] = SimpleNamespace(failed="no way")
    assert set(negotiate._row_nets(neg, "S4", [lost])) == want - {"S3"}
    exposed = next(p for p in pads if p.name == "U1.33")
    assert negotiate._row_nets(neg, "GND", [exposed]) == []


def test_the_classic_negotiation_routes_the_row_in_the_first_order(monkeypatch):
    """The same first order negotiated classically (every net routed again in every pass, the
    present price growing by CLASSIC_GROW): the neighbours of the supply's via step aside while
    the nets negotiate, and every net routes with no later step at all (the swap and the fan-out
    with the supplies left out); negotiated as on a big board (only the nets that share, the
    present price growing by PRESENT_GROW) the same order loses S4 (tests/test_lanes.py). The
    board is clean (router.check), traces of different nets keep 0.25 mm (shapely) and every
    net's copper joins its pads (networkx)."""
    from router import negotiate
    monkeypatch.setattr(negotiate, "_swap", lambda neg, lost: None)
    _, lost = _first_order(lanes=False, monkeypatch=monkeypatch)
    assert list(lost) == ["S4"]
    out, lost = _first_order(lanes=False, monkeypatch=monkeypatch, classic=True)
    assert lost == {}
    assert [v for v in check(out) if v.rule != "open"] == []
    assert_traces_keep(out, 0.25)
    for net in [n.name for n in out.nets]:
        assert _joined(out, net), net
