"""Every lower bound of `report` is at most the figure it bounds, on generated boards.

A property test (hypothesis): one- and two-layer boards from router.boardgen, routed with
a bend penalty of 1 or 5 mm, then their copper cut about (traces split at inner points,
reversed, some pieces taken away) so that the figures see copper the router did not
draw too. For every routed net: length >= length_lower_bound, length + jumper wire >=
span_lower_bound, bends >= bends_lower_bound and bends >= bends_lower_bound_path where
given; the same in total over the routed nets. The length the bounds are held against is
summed independently with shapely (LineString.length), not taken from the figures.
"""
import copy
import math

from hypothesis import given, settings, strategies as st
from shapely.geometry import LineString

from router.boardgen import generate_board
from router.figures import board_figures
from router.model import Trace
from router.negotiate import route_board

SLACK = 1e-6          # figures are rounded to 1e-6 mm (router.units.snap)


def shapely_length(board, net):
    return sum(LineString(t.points).length for t in board.traces if t.net == net and len(t.points) > 1)


def shapely_wire(board, net):
    return sum(math.dist(j.start, j.end) for j in board.jumpers if j.net == net)


def assert_bounds_hold(board):
    figs = board_figures(board)
    routed = [n for n in figs["nets"] if n["routed"]]
    for n in routed:
        length = shapely_length(board, n["name"])
        wire = shapely_wire(board, n["name"])
        assert abs(length - n["length"]) <= SLACK
        assert n["length_lower_bound"] <= length + SLACK, n
        assert n["span_lower_bound"] <= length + wire + SLACK, n
        assert n["bends_lower_bound"] <= n["bends"], n
        pb = n["bends_lower_bound_path"]
        assert pb is None or pb <= n["bends"], n
    t = figs["totals"]
    assert t["length_lower_bound_routed"] <= sum(shapely_length(board, n["name"]) for n in routed) + SLACK * len(routed)
    assert sum(n["bends_lower_bound"] for n in routed) <= sum(n["bends"] for n in routed)
    if t["routed"] == t["nets"]:
        assert t["length_lower_bound"] <= t["length"] + SLACK * t["nets"]
        assert t["bends_lower_bound"] <= t["bends"]
        assert t["span_lower_bound"] <= t["length"] + t["jumper_length"] + SLACK * t["nets"]
    return figs


def cut_about(board, rnd):
    """The same copper drawn differently (split, reversed) and some of it taken away."""
    b = copy.deepcopy(board)
    traces = []
    for t in b.traces:
        pts = list(t.points)
        if rnd.random() < 0.3:
            pts.reverse()
        k = rnd.randrange(len(pts)) if len(pts) > 2 else 0
        if 0 < k < len(pts) - 1 and rnd.random() < 0.5:
            traces.append(Trace(t.net, t.layer, t.width, pts[:k + 1], t.fixed))
            traces.append(Trace(t.net, t.layer, t.width, pts[k:], t.fixed))
        else:
            traces.append(Trace(t.net, t.layer, t.width, pts, t.fixed))
    rnd.shuffle(traces)
    drop = rnd.random() < 0.5
    b.traces = [t for t in traces if not (drop and rnd.random() < 0.15)]
    b.vias = [v for v in b.vias if not (drop and rnd.random() < 0.15)]
    b.jumpers = [j for j in b.jumpers if not (drop and rnd.random() < 0.15)]
    return b


@settings(max_examples=14, deadline=None)
@given(layers=st.sampled_from([1, 2]), seed=st.integers(0, 10_000), bend=st.sampled_from([1.0, 5.0]),
       rnd=st.randoms(use_true_random=False))
def test_bounds_never_above_their_figures(layers, seed, bend, rnd):
    board = generate_board(seed, nets=7, size=(24.0, 18.0), layers=layers, max_pins=3)
    result = route_board(board, seed=seed, bend_penalty=bend, retries=0)
    figs = assert_bounds_hold(result.board)
    assert figs["totals"]["routed"] >= 1
    for _ in range(3):
        assert_bounds_hold(cut_about(result.board, rnd))
