"""Fewer vias (router.viapass): the pass after routing, the price of crowded vias, the bound.

Outside references: the trade is our stated rule (a via taken out may cost at most VIA_TRADE mm
of extra trace and bends, common practice, no published figure); lengths are measured here with
shapely, independently of the router's own figures; EIA 0603 chip pads as in router.footprints.
"""
from __future__ import annotations

import numpy as np
from shapely.geometry import LineString

from router.boardfile import loads_board
from router.check import check
from router.figures import board_figures, vias_lower_bound
from router.grid import RoutingGrid
from router.negotiate import DEFAULT_BEND, DEFAULT_VIA, route_board
from router.viapass import CROWD_RADIUS, VIA_TRADE, ViaCrowd


def wall_board(wall_top: float) -> str:
    """Two 0603 parts joined across a keepout on the top layer only, from the lower edge to
    `wall_top`: the net either dives under it (two vias) or goes round its end on the top."""
    return f'''format = 1
[board]
name = "wall"
size = [20.0, 10.0]
[rules]
grid = 0.25
[classes.default]
trace_width = 0.25
clearance = 0.2
[[parts]]
ref = "R1"
footprint = "chip-0603"
at = [4.0, 4.0]
[[parts]]
ref = "R2"
footprint = "chip-0603"
at = [16.0, 4.0]
[[keepouts]]
layers = ["top"]
rect = [9.5, 0.0, 10.5, {wall_top}]
[[nets]]
name = "A"
pins = ["R1.2", "R2.1"]
'''


def _length(board) -> float:
    return sum(LineString(t.points).length for t in board.traces if len(t.points) > 1)


def test_pass_trades_two_vias_for_a_short_detour():
    # round the wall's end: about 2 x 2.9 mm more trace and four bends (9.8 mm at 1 mm a bend),
    # two vias at 2 mm cost 4 mm: the search dives; at 2 + 3 mm a via the detour is cheaper
    b = loads_board(wall_board(6.5))
    with_vias = route_board(b, fewer_vias=False).board
    fewer = route_board(b).board
    assert len(with_vias.vias) == 2
    assert len(fewer.vias) == 0
    assert [v for v in check(fewer) if v.rule != "open"] == []
    assert board_figures(fewer)["totals"]["routed"] == 1
    extra = _length(fewer) - _length(with_vias)
    bends = board_figures(fewer)["totals"]["bends"] - board_figures(with_vias)["totals"]["bends"]
    # the stated rule: cost without congestion (length, bends, vias at the ordinary penalty) rises
    # by at most VIA_TRADE per via taken out, so length and bends by at most VIA_TRADE + the via penalty
    assert 0 < extra + DEFAULT_BEND * bends <= (VIA_TRADE + DEFAULT_VIA) * 2 + 1e-6


def test_pass_keeps_vias_that_would_cost_more_than_the_trade():
    # the wall leaves no room to go round: the vias stay, and the board is still clean
    b = loads_board(wall_board(10.0))
    r = route_board(b)
    assert len(r.board.vias) == 2
    assert [v for v in check(r.board) if v.rule != "open"] == []


def test_crowd_counts_vias_within_the_radius():
    b = loads_board(wall_board(6.5))
    grid = RoutingGrid(b)
    crowd = ViaCrowd(grid)
    crowd.add([(20, 30)], +1)
    g = grid.pitch
    jj, ii = np.nonzero(crowd.count)
    d = np.hypot((jj - 20) * g, (ii - 30) * g)
    assert d.max() <= CROWD_RADIUS + 1e-9
    # every grid point within the radius is counted (brute force over the grid)
    J, I = np.mgrid[0:grid.ny, 0:grid.nx]
    inside = np.hypot((J - 20) * g, (I - 30) * g) <= CROWD_RADIUS + 1e-9
    assert (crowd.count.astype(bool) == inside).all()
    assert crowd.price(200)[20, 30] == 50
    crowd.add([(20, 30)], -1)
    assert not crowd.count.any()


def test_vias_lower_bound():
    top, both = ("top",), ("top", "bottom")
    layers = ["top", "bottom"]
    assert vias_lower_bound([top, top], layers) == 0
    assert vias_lower_bound([top, ("bottom",)], layers) == 1
    assert vias_lower_bound([top, ("bottom",), both], layers) == 0      # a plated hole changes layers
    b = loads_board(wall_board(6.5))
    t = board_figures(route_board(b, fewer_vias=False).board)["totals"]
    assert t["vias_lower_bound"] == 0 and t["vias_on_one_layer_nets"] == t["vias"] == 2
