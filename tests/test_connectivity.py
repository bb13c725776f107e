"""Union-find connectivity of each net's copper, against networkx on the same touching pairs."""
import itertools
import random

import networkx as nx
import pytest

from router.boardfile import loads_board
from router.connectivity import UnionFind, components, net_groups, routed
from router.copper import copper_items, distance
from router.model import Board, Net, Trace, Via
from router.units import TOL

TWO = """format = 1
[board]
name = "c"
size = [40.0, 20.0]
[[parts]]
ref = "R1"
footprint = "axial-10.16"
at = [10.0, 5.0]
[[parts]]
ref = "C1"
footprint = "chip-0805"
at = [25.0, 5.0]
[[nets]]
name = "A"
pins = ["R1.1", "R1.2", "C1.1"]
[[nets]]
name = "SOLO"
pins = ["C1.2"]
"""


def test_unrouted_pins_are_groups_of_their_own():
    b = loads_board(TWO)
    assert net_groups(b)["A"] == [["R1.1"], ["R1.2"], ["C1.1"]]
    assert routed(b) == {"A": False, "SOLO": True}          # a one-pin net is routed


def test_surface_pad_only_on_its_layer_and_a_via_joins_layers():
    b = loads_board(TWO)
    # chip-0805 pad 1 at (24.05, 5), a surface pad on top
    b.traces = [Trace("A", "top", 0.25, [(4.92, 5.0), (15.08, 5.0)]),
                Trace("A", "bottom", 0.25, [(15.08, 5.0), (20.0, 5.0)]),
                Trace("A", "bottom", 0.25, [(20.0, 5.0), (24.05, 5.0)])]
    assert routed(b)["A"] is False                 # the bottom trace cannot reach a top pad
    b.traces[2].layer = "top"
    assert routed(b)["A"] is False                 # top and bottom meet at (20, 5) with no via
    b.vias = [Via("A", (20.0, 5.0), 0.4, 0.8)]
    assert routed(b)["A"] is True
    assert net_groups(b)["A"] == [["R1.1", "R1.2", "C1.1"]]


def test_touching_within_tol_joins_and_a_gap_does_not():
    b = loads_board(TWO)
    # round end of a 0.25 trace at x = 14.055 reaches the pad circle (r 0.9 at 15.08) exactly
    b.traces = [Trace("A", "top", 0.25, [(4.92, 5.0), (14.055, 5.0)])]
    assert net_groups(b)["A"][0] == ["R1.1", "R1.2"]
    b.traces = [Trace("A", "top", 0.25, [(4.92, 5.0), (14.054, 5.0)])]   # 1 um short
    assert ["R1.2"] in net_groups(b)["A"]


def test_a_pin_on_two_pads_counts_joined_only_when_both_are():
    src = """format = 1
[board]
name = "tab"
size = [30.0, 20.0]
[footprints.tabbed]
body = [6.0, 6.0]
pads = [{ pin = "1", offset = [-2.0, 0.0], shape = "round", size = [1.6, 1.6], drill = 0.8 },
        { pin = "2", offset = [2.0, -2.0], shape = "round", size = [1.6, 1.6], drill = 0.8 },
        { pin = "2", offset = [2.0, 2.0], shape = "rectangle", size = [2.0, 2.0], drill = 1.0 }]
[[parts]]
ref = "U1"
footprint = "tabbed"
at = [10.0, 10.0]
[[parts]]
ref = "J1"
footprint = "header-1x1"
at = [20.0, 8.0]
[[nets]]
name = "OUT"
pins = ["U1.2", "J1.1"]
"""
    b = loads_board(src)
    b.traces = [Trace("OUT", "top", 0.25, [(12.0, 8.0), (20.0, 8.0)])]
    assert routed(b)["OUT"] is False               # the tab at (12, 12) is not joined
    assert sorted(map(sorted, net_groups(b)["OUT"])) == [["J1.1", "U1.2"], ["U1.2"]]
    b.traces.append(Trace("OUT", "bottom", 0.25, [(12.0, 8.0), (12.0, 12.0)]))
    assert routed(b)["OUT"] is True


def test_jumper_joins_its_ends():
    src = """format = 1
[board]
name = "j"
size = [40.0, 20.0]
copper_layers = 1
[[parts]]
ref = "R1"
footprint = "axial-10.16"
at = [10.0, 5.0]
[[nets]]
name = "A"
pins = ["R1.1", "R1.2"]
[[traces]]
net = "A"
layer = "bottom"
width = 0.25
points = [[4.92, 5.0], [4.92, 12.0]]
[[traces]]
net = "A"
layer = "bottom"
width = 0.25
points = [[15.08, 12.0], [15.08, 5.0]]
"""
    b = loads_board(src)
    assert routed(b)["A"] is False
    b2 = loads_board(src + '[[jumpers]]\nnet = "A"\nfrom = [4.92, 12.0]\nto = [15.08, 12.0]\n')
    assert routed(b2)["A"] is True


def test_other_nets_copper_never_joins():
    b = loads_board(TWO)
    b.nets.append(Net("B", []))
    b.traces = [Trace("A", "top", 0.25, [(4.92, 5.0), (10.0, 5.0)]),
                Trace("B", "top", 0.25, [(10.0, 5.0), (15.08, 5.0)])]
    assert routed(b)["A"] is False


def test_union_find_against_networkx_components():
    # reference: networkx connected_components over all touching same-net pairs (networkx)
    rng = random.Random(7)
    b = Board("r", [(0, 0), (50, 0), (50, 50), (0, 50)])
    b.nets = [Net("A", []), Net("B", [])]
    for _ in range(120):
        x, y = rng.randint(0, 40) * 0.5, rng.randint(0, 40) * 0.5
        if rng.random() < 0.5:
            pts = [(x, y), (x + rng.randint(1, 8) * 0.5, y)]
        else:
            pts = [(x, y), (x, y + rng.randint(1, 8) * 0.5)]
        b.traces.append(Trace(rng.choice("AB"), rng.choice(["top", "bottom"]), 0.25, pts))
    for _ in range(15):
        b.vias.append(Via(rng.choice("AB"), (rng.randint(0, 40) * 0.5, rng.randint(0, 40) * 0.5), 0.3, 0.6))
    items = copper_items(b)
    labels = components(b, items)
    g = nx.Graph()
    g.add_nodes_from(range(len(items)))
    for i, j in itertools.combinations(range(len(items)), 2):
        a, c = items[i], items[j]
        if a.net == c.net and set(a.layers) & set(c.layers) and distance(a, c) <= TOL:
            g.add_edge(i, j)
    ours = {}
    for i, lab in enumerate(labels):
        ours.setdefault(lab, set()).add(i)
    assert sorted(map(sorted, ours.values())) == sorted(map(sorted, nx.connected_components(g)))


def test_union_find_small():
    uf = UnionFind(5)
    uf.union(0, 1)
    uf.union(3, 4)
    uf.union(1, 4)
    assert len({uf.find(i) for i in range(5)}) == 2 and uf.find(0) == uf.find(3)
