"""The local re-order with the fan-out plan (router.negotiate._reorder_local with ``plan``), for the
nets a big board still loses at a fine-pitch part after repair.

The hand-made board is test_exits.crowded_row: one side of a JEDEC MO-220 quad no-lead part
(0.25 x 0.8 mm pads at 0.5 mm pitch) 0.125 mm off the 0.25 mm grid, a 0.5 mm supply among 0.25 mm
signals, each pin to an EIA 0402 chip beside the part. Its nets are routed one after the other with
the nets before as walls, in shuffled orders (a stand-in for a big board's one net order): some
orders leave two to four of the row's nets without an exit.

Outside references: networkx (each net's routed copper is one connected graph over its pads),
shapely (every trace keeps the class clearance from other nets' traces and vias:
test_exits.assert_traces_keep), router.check for the rest; common practice: a rip-up and reroute
never leaves a net unrouted that was routed before, and nets share no cell afterwards.
"""
from __future__ import annotations

import itertools
import random

import networkx as nx
import pytest

import router.negotiate as negotiate
from router.check import check
from router.copper import copper_items
from router.grid import RoutingGrid
from router.negotiate import _Negotiation, _pad_groups, _reorder_local, _settle, _write
from router.units import TOL
from test_exits import assert_traces_keep, crowded_row


def _walled(order, make=crowded_row):
    """The nets of `make`'s board (crowded_row) routed once each in `order`, every net before as walls."""
    b = make()
    grid = RoutingGrid(b)
    neg = _Negotiation(b, grid, order, _pad_groups(b, grid), bend=400, via=800, jump=2000)
    lost = {}
    for n in order:
        r = neg.route(n, strict=True)
        if r.failed:
            lost[n] = r.failed
        else:
            neg.lay(n, r)
    return b, grid, neg, lost


def _orders(k):
    names = [n.name for n in crowded_row().nets]
    out = []
    for trial in range(k):
        o = names[:]
        random.Random(trial).shuffle(o)
        out.append(o)
    return out


def _joined(board, net) -> bool:
    """networkx: the net's copper items (pads, traces, vias) as nodes, an edge where two touch
    (shapely distance between cores less both radii at most TOL): one connected graph."""
    items = [it for it in copper_items(board) if it.net == net]
    g = nx.Graph()
    g.add_nodes_from(range(len(items)))
    for a, b in itertools.combinations(range(len(items)), 2):
        if items[a].core.distance(items[b].core) - items[a].radius - items[b].radius <= TOL:
            g.add_edge(a, b)
    return len(items) > 1 and nx.is_connected(g)


@pytest.mark.parametrize("order", _orders(4))
def test_planned_reorder_routes_the_lost_row_nets(order):
    """Two or three of the row's nets lost to the walls; the step routes at least two of them
    and leaves every net it does not report as lost routed, with nothing shared."""
    b, grid, neg, lost = _walled(order)
    lost0 = set(lost)
    assert 2 <= len(lost0) <= 4                  # the walls leave these orders short of exits
    _reorder_local(neg, lost, order, plan=True)
    assert len(lost) <= len(lost0) - 2
    assert {n for n, r in neg.routes.items() if not r.failed} == set(order) - set(lost)
    assert neg.conflicts()[0] == {}
    kept = dict(lost)
    _write(b, grid, neg, order)
    _settle(b, crowded_row(), lost, order)
    assert lost == kept
    assert [v for v in check(b) if v.rule != "open"] == []
    assert_traces_keep(b, 0.2)
    # networkx: each routed net's copper joins its pads (one component of pads, traces and vias)
    assert all(_joined(b, net) for net in order if net not in lost)


def test_planned_reorder_leaves_the_board_as_it_was_when_it_gains_nothing(monkeypatch):
    """When no lost net routes, every route goes back as it was (the same copper, no sharing)."""
    order = _orders(1)[0]
    b, grid, neg, lost = _walled(order)
    before = {n: (sorted(r.edges), sorted(r.vias)) for n, r in neg.routes.items()}
    lost0 = dict(lost)
    monkeypatch.setattr(negotiate, "_priced_route", lambda neg, net: negotiate.NetRoute(net, failed="closed"))
    real_route = _Negotiation.route

    def lost_fail(self, net, *a, **kw):        # the lost nets find no way at all
        if net in lost0:
            return negotiate.NetRoute(net, failed="closed")
        return real_route(self, net, *a, **kw)

    monkeypatch.setattr(_Negotiation, "route", lost_fail)
    _reorder_local(neg, lost, order, plan=True)
    assert lost == lost0
    assert {n: (sorted(r.edges), sorted(r.vias)) for n, r in neg.routes.items()} == before
    assert neg.conflicts()[0] == {}
