"""A net routed within a budget (router.nets.route_net's ``budget``, used by the via pass that
moves the nets in the way): a budget at or above the route's own cost gives the same route, a
route dearer than the budget and its stated slack is refused early.

Outside references: the trace length of each route is measured with shapely, independently of the
router's cost; the slack per search (two bends) is our rule, worked by hand in route_net's
docstring (common practice: a search bound must be a lower bound of what the caller refuses).
"""
from __future__ import annotations

from shapely.geometry import LineString

from router.boardgen import generate_board
from router.grid import RoutingGrid
from router.negotiate import _Negotiation, _pad_groups, _pure_cost
from router.search import STEP


def _setup(seed: int, nets: int):
    b = generate_board(seed, nets=nets, size=(30.0, 20.0))
    grid = RoutingGrid(b)
    groups = _pad_groups(b, grid)
    names = [n.name for n in b.nets if len(groups.get(n.name, [])) > 1]
    return grid, _Negotiation(b, grid, names, groups, bend=400, via=800, jump=2000), names


def _length(grid, r) -> float:
    return sum(LineString([a, b]).length for a, b, _, _ in r.segments(grid, 0.25, necks=False))


def test_budget_at_the_routes_cost_keeps_the_route():
    for seed in (1, 2):
        grid, neg, names = _setup(seed, 8)
        for net in names:
            free = neg.route(net, strict=True)
            assert not free.failed
            cost = _pure_cost(neg, free)
            # the cost counts every grid step at STEP: the shapely length of the grid copper
            assert cost >= STEP * (_length(grid, free) - sum(LineString([a, b]).length for a, b, _ in free.stubs)) / grid.pitch - 1e-6
            for budget in (cost, cost + 1, 10 * cost):
                r = neg.route(net, strict=True, budget=budget)
                assert not r.failed
                assert r.edges == free.edges and r.vias == free.vias and r.stubs == free.stubs
            neg.lay(net, free)


def test_a_route_far_over_its_budget_is_refused():
    grid, neg, names = _setup(3, 6)
    refused = 0
    for net in names:
        free = neg.route(net, strict=True)
        terms = sum(len(g) for g in neg.groups[net])
        slack = 2 * neg.bend * terms
        if _pure_cost(neg, free) > slack + 2 * STEP:
            r = neg.route(net, strict=True, budget=0)
            assert r.failed and "within the cost allowed" in r.failed
            assert net not in neg.blind          # a refused budget says nothing about the fixed copper
            refused += 1
        neg.lay(net, free)
    assert refused
