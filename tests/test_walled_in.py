"""A pad no route can reach (walled in by keepouts) is found once and reported, and the other
nets still route; the real-looking generator's `enclosed` and `pads` options (router.realgen).

Outside reference: shapely measures that the generated keepout frames keep clear of every pad
(common practice: a keepout does not overlap the copper it surrounds).
"""
from __future__ import annotations

from shapely.geometry import Polygon, box

import router.nets as nets_mod
from router.boardfile import loads_board
from router.geometry import placed_pads
from router.negotiate import route_board
from router.realgen import real_board

FRAMED = '''format = 1
[board]
name = "framed"
size = [24.0, 12.0]
[rules]
grid = 0.25
[[parts]]
ref = "R1"
footprint = "chip-0603"
at = [5.0, 6.0]
[[parts]]
ref = "R2"
footprint = "chip-0603"
at = [19.0, 6.0]
[[parts]]
ref = "R3"
footprint = "chip-0603"
at = [5.0, 9.0]
[[parts]]
ref = "R4"
footprint = "chip-0603"
at = [19.0, 9.0]
[[keepouts]]
rect = [16.5, 4.5, 21.5, 4.8]
[[keepouts]]
rect = [16.5, 7.2, 21.5, 7.5]
[[keepouts]]
rect = [16.5, 4.5, 16.8, 7.5]
[[keepouts]]
rect = [21.2, 4.5, 21.5, 7.5]
[[nets]]
name = "A"
pins = ["R1.2", "R2.1"]
[[nets]]
name = "B"
pins = ["R3.2", "R4.1"]
'''


def test_walled_in_pad_found_once(monkeypatch):
    calls = []
    real = nets_mod.route_net

    def counting(grid, net, *a, **k):
        if net == "A":
            calls.append(k.get("others") is None)
        return real(grid, net, *a, **k)
    monkeypatch.setattr("router.negotiate.route_net", counting)
    r = route_board(loads_board(FRAMED))
    assert "A" in r.failed and "B" not in r.failed
    assert "no way" in r.failed["A"]
    # one search with the other nets' copper passable shows there is no way: it is not tried again
    # in later passes nor in other net orders
    assert calls.count(True) == 1


def test_generator_pads_and_enclosed():
    b = real_board(3, 150, pads=1300, enclosed=2)
    n = len(placed_pads(b))
    assert 1150 <= n <= 1500, n
    assert 130 <= len(b.nets) <= 175, len(b.nets)
    assert len(b.keepouts) == 8
    pads = [box(*p.bounds()) for p in placed_pads(b)]
    for ko in b.keepouts:
        poly = Polygon(ko.polygon)
        assert min(poly.distance(p) for p in pads) > 0.3
    # the default board is unchanged by the new options
    a, c = real_board(3, 60), real_board(3, 60, pads=None, enclosed=0)
    assert [(p.ref, p.at) for p in a.parts] == [(p.ref, p.at) for p in c.parts]


KEPT_OUT = '''format = 1
[board]
name = "kept-out"
size = [30.0, 20.0]
copper_layers = 2
[rules]
grid = 0.25
[[parts]]
ref = "R1"
footprint = "chip-0603"
at = [3.0, 3.0]
[[keepouts]]
layers = ["bottom"]
polygon = [[8.0, 6.0], [14.0, 6.0], [13.0, 9.0], [8.0, 9.5]]
[[keepouts]]
polygon = [[18.0, 8.0], [25.0, 10.0], [20.0, 15.0]]
[[nets]]
name = "A"
pins = ["R1.1", "R1.2"]
'''


def test_segment_clear_keepouts_against_shapely():
    """`RoutingGrid.segment_clear` keeps traces out of polygon keepouts on their layers (the keepout
    shapes are made once per grid; copper may touch them, not enter): each random segment away from the pads and the edge is clear exactly
    when shapely finds it outside every keepout of its layer by more than half the width (interior
    not entered, distance measured by shapely), and the answer is the same asked twice."""
    import random

    from shapely.geometry import LineString

    from router.grid import RoutingGrid
    from router.units import TOL

    b = loads_board(KEPT_OUT)
    grid = RoutingGrid(b)
    shapes = [(set(range(2)) if ko.layers is None else {grid.layers.index(l) for l in ko.layers},
               Polygon(ko.polygon)) for ko in b.keepouts]
    rnd = random.Random(7)
    seen = {True: 0, False: 0}
    for _ in range(400):
        a = (round(rnd.uniform(6.0, 28.0), 3), round(rnd.uniform(5.0, 18.0), 3))
        c = (round(a[0] + rnd.uniform(-4.0, 4.0), 3), round(a[1] + rnd.uniform(-4.0, 4.0), 3))
        c = (min(max(c[0], 6.0), 28.0), min(max(c[1], 5.0), 18.0))
        if a == c:
            continue
        layer, width = rnd.randrange(2), rnd.choice([0.0, 0.25, 0.5])
        line = LineString([a, c])
        want = not any(layer in ls and (poly.buffer(-TOL).intersects(line) or poly.distance(line) < width / 2 - TOL)
                       for ls, poly in shapes)
        got = grid.segment_clear("A", a, c, layer, width)
        assert got == want, (a, c, layer, width)
        assert grid.segment_clear("A", a, c, layer, width) == got
        seen[got] += 1
    assert seen[True] > 50 and seen[False] > 50
