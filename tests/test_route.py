"""The router: the grid's clearance maps against shapely, hand-worked routes, jumpers, failures, determinism."""
import json
import math
from pathlib import Path

import networkx as nx
import numpy as np
import pytest
import shapely
from shapely.geometry import LineString, Point

from router.boardfile import dumps_board, load_board, loads_board
from router.check import check
from router.cli import main
from router.copper import copper_items
from router.geometry import outline_polygon, placed_pads
from router.grid import JUMP_PITCH, RoutingGrid
from router.negotiate import route_board
from router.units import TOL

BOARDS = sorted(Path(__file__).resolve().parent.parent.joinpath("boards").glob("*.toml"))

HEAD = """format = 1
[board]
name = "t"
size = [{w}, {h}]
copper_layers = {layers}
"""


def part(ref, fp, x, y, rot=0, side="top"):
    return f'[[parts]]\nref = "{ref}"\nfootprint = "{fp}"\nat = [{x}, {y}]\nrotation = {rot}\nside = "{side}"\n'


def net(name, *pins, cls=None):
    s = f'[[nets]]\nname = "{name}"\npins = [{", ".join(repr(p).replace(chr(39), chr(34)) for p in pins)}]\n'
    return s + (f'class = "{cls}"\n' if cls else "")


def trace(name, pts, width=0.25, layer="top", fixed=True):
    body = ", ".join(f"[{x}, {y}]" for x, y in pts)
    return (f'[[traces]]\nnet = "{name}"\nlayer = "{layer}"\nwidth = {width}\npoints = [{body}]\n'
            f'fixed = {"true" if fixed else "false"}\n')


def make(body, w=30.0, h=20.0, layers=2):
    return loads_board(HEAD.format(w=w, h=h, layers=layers) + body)


def geometry_clean(board):
    return [v for v in check(board) if v.rule != "placement"]


# ---------------------------------------------------------------- the grid against shapely
def test_open_cells_and_steps_match_shapely_distances():
    """Every cell and step open to net A keeps the clearance from foreign copper, measured by shapely
    on the copper's own shapes; every blocked one (away from the limit) breaks it (shapely as reference)."""
    b = make(part("U1", "soic-8", 10.13, 10.07) + part("R1", "chip-0805", 20.0, 6.3, rot=90)
             + part("J1", "header-1x3", 21.0, 14.0)
             + net("A", "U1.1", "R1.1") + net("B", "U1.2", "J1.2", "R1.2")
             + trace("B", [(18.0, 3.0), (18.0, 9.37)], width=0.3))
    grid = RoutingGrid(b)
    space = grid.space_for("A")
    w = grid.profile_of("A").width
    clear = b.classes["default"].clearance
    foreign = [it for it in copper_items(b) if it.net != "A" and "top" in it.layers]
    cores = [it.core for it in foreign]
    radii = np.array([it.radius for it in foreign])
    outline = outline_polygon(b)
    ec = b.rules.edge_clearance
    rng = np.random.default_rng(3)
    l = grid.layer_index("top")
    checked = 0
    for _ in range(1500):
        j, i = int(rng.integers(0, grid.ny - 1)), int(rng.integers(0, grid.nx - 1))
        x, y = grid.x(i), grid.y(j)
        for kind, geom, is_open in (("cell", Point(x, y), space.open_cell[l, j, i]),
                                    ("h", LineString([(x, y), (x + grid.pitch, y)]), space.open_h[l, j, i]),
                                    ("v", LineString([(x, y), (x, y + grid.pitch)]), space.open_v[l, j, i])):
            gaps = shapely.distance(np.array(cores, dtype=object), geom) - radii - w / 2
            edge = outline.exterior.distance(geom) - w / 2
            margin = min(float(gaps.min()) - clear, edge - ec)
            if abs(margin) < 1e-4:
                continue            # at the limit: either answer is within tolerance
            checked += 1
            assert bool(is_open) == (margin > 0), (kind, x, y, margin)
    assert checked > 3000


def test_via_places_keep_hole_spacing_and_clearance():
    """A via may stand only where its ring keeps clearance on both layers and its hole keeps
    min_hole_spacing from every hole (checked with shapely distances)."""
    b = make(part("U1", "dip-8", 12.0, 10.0) + part("H1", "hole-3.2", 25.0, 10.0)
             + net("A", "U1.1", "U1.8") + net("B", "U1.2", "U1.7"))
    grid = RoutingGrid(b)
    space = grid.space_for("A")
    pads = [it for it in copper_items(b) if it.kind == "pad"]
    rv, dv = b.rules.via_diameter / 2, b.rules.via_drill
    for j in range(0, grid.ny, 2):
        for i in range(0, grid.nx, 2):
            x, y = grid.x(i), grid.y(j)
            margins = []
            for p in pads:
                ring = p.core.distance(Point(x, y)) - rv - p.radius      # shapely distance, ring to pad
                margins.append(ring - (0.2 if p.net != "A" else 0.0))   # no via inside a pad (common practice)
                if p.pad.drill:
                    d = math.hypot(p.pad.x - x, p.pad.y - y)
                    margins.append(d - p.pad.drill / 2 - dv / 2 - b.rules.min_hole_spacing)
            hole = math.hypot(x - 25.0, y - 10.0)
            margins.append(hole - 1.6 - rv - b.rules.edge_clearance)
            margins.append(hole - 1.6 - dv / 2 - b.rules.min_hole_spacing)
            margins.append(min(x, y, 30 - x, 20 - y) - rv - b.rules.edge_clearance)
            m = min(margins)
            if m > 1e-4:
                assert space.via_ok[j, i], (x, y)
            elif m < -1e-4:
                assert not space.via_ok[j, i], (x, y)


# ---------------------------------------------------------------- hand-worked routes
def test_straight_two_pin_net_is_one_straight_trace():
    b = make(part("R1", "axial-10.16", 15.0, 10.0) + net("A", "R1.1", "R1.2"))
    r = route_board(b)
    assert not r.failed
    assert geometry_clean(r.board) == []
    n = r.figures["nets"][0]
    # pads at x = 9.92 and 20.08 (axial-10.16): a grid trace from inside one pad to inside the other
    assert n["bends"] == 0 and n["vias"] == 0
    assert n["length"] <= 10.16 + 1e-9


def test_l_shaped_connection_has_one_bend_and_manhattan_length():
    b = make(part("J1", "header-1x1", 5.0, 5.0) + part("J2", "header-1x1", 20.0, 15.0)
             + net("A", "J1.1", "J2.1"))
    r = route_board(b)
    n = r.figures["nets"][0]
    assert n["routed"] and n["bends"] == 1 and n["vias"] == 0
    # pads 1.7 mm round (from header footprint): the trace may end anywhere inside each
    assert n["length"] <= 15.0 + 10.0 + 1e-9
    assert n["length"] >= 15.0 + 10.0 - 2 * 1.7


def test_multi_pin_net_grows_a_tree_no_longer_than_the_spanning_tree():
    """Nearest-pin-next Steiner growth: never longer than the rectilinear minimum spanning tree
    of the pin centres (networkx as reference), and shorter on a plus-shaped net."""
    pins = [(5.0, 10.0), (25.0, 10.0), (15.0, 3.0), (15.0, 17.0)]
    body = "".join(part(f"J{k}", "header-1x1", x, y) for k, (x, y) in enumerate(pins, 1))
    b = make(body + net("A", *[f"J{k}.1" for k in range(1, 5)]))
    r = route_board(b)
    assert not r.failed and geometry_clean(r.board) == []
    g = nx.Graph()
    for a in range(4):
        for c in range(a + 1, 4):
            g.add_edge(a, c, weight=abs(pins[a][0] - pins[c][0]) + abs(pins[a][1] - pins[c][1]))
    mst = sum(d["weight"] for _, _, d in nx.minimum_spanning_tree(g).edges(data=True))
    assert r.figures["nets"][0]["length"] < mst


def test_fixed_trace_is_kept_and_avoided():
    """A hand-drawn fixed trace of B across the board's middle forces A to a via on two layers."""
    b = make(part("J1", "header-1x1", 15.0, 4.0) + part("J2", "header-1x1", 15.0, 16.0)
             + part("J3", "header-1x1", 1.5, 10.0) + part("J4", "header-1x1", 28.5, 10.0)
             + part("R1", "chip-0805", 8.0, 4.0) + part("R2", "chip-0805", 8.0, 16.0)
             + net("A", "R1.1", "R2.1") + net("B", "J3.1", "J4.1")
             + trace("B", [(1.5, 10.0), (28.5, 10.0)], width=0.4))
    r = route_board(b)
    assert not r.failed
    assert any(t.fixed and t.net == "B" for t in r.board.traces)
    assert geometry_clean(r.board) == []
    a = next(n for n in r.figures["nets"] if n["name"] == "A")
    assert a["vias"] == 2          # down under B and up again: the chip pads are on top only


def test_off_grid_soic_routes_clean():
    """SOIC-8 at 1.27 mm pitch, placed off the 0.25 mm grid, its pins fanned out to a header."""
    body = part("U1", "soic-8", 12.127, 10.063) + part("J1", "header-1x8", 12.0, 2.5)
    body += "".join(net(f"N{k}", f"U1.{k}", f"J1.{k}") for k in range(1, 9))
    b = make(body)
    r = route_board(b)
    assert not r.failed, r.failed
    assert geometry_clean(r.board) == []


def test_one_layer_crossing_uses_a_jumper_of_whole_tenths_of_an_inch():
    """On one layer, net A must cross net B's fixed trace: a jumper, its length a multiple of 2.54 mm."""
    b = make(part("J1", "header-1x1", 15.0, 3.0) + part("J2", "header-1x1", 15.0, 17.0)
             + part("J3", "header-1x1", 1.5, 10.0) + part("J4", "header-1x1", 28.5, 10.0)
             + net("A", "J1.1", "J2.1") + net("B", "J3.1", "J4.1")
             + trace("B", [(1.5, 10.0), (28.5, 10.0)], width=0.4, layer="bottom"), layers=1)
    r = route_board(b)
    assert not r.failed, r.failed
    assert geometry_clean(r.board) == []
    assert len(r.board.jumpers) == 1
    jm = r.board.jumpers[0]
    length = abs(jm.start[0] - jm.end[0]) + abs(jm.start[1] - jm.end[1])
    assert jm.start[0] == jm.end[0] or jm.start[1] == jm.end[1]
    m = length / JUMP_PITCH
    assert abs(m - round(m)) < 1e-6


def test_unreachable_pad_reports_the_pin(tmp_path, capsys):
    """Two layers, a pad buried under a keepout on both: the net fails, its reason names the pad."""
    text = (HEAD.format(w=30.0, h=20.0, layers=2) + part("J1", "header-1x1", 15.0, 10.0)
            + part("J2", "header-1x1", 25.0, 10.0) + net("A", "J1.1", "J2.1")
            + '[[keepouts]]\nrect = [12.0, 7.0, 18.0, 13.0]\n')
    src = tmp_path / "b.toml"
    src.write_text(text)
    out = tmp_path / "o.toml"
    rc = main(["route", str(src), "-o", str(out), "--json"])
    assert rc == 1 and out.exists()
    data = json.loads(capsys.readouterr().out)
    assert data["failed"][0]["net"] == "A" and "J1.1" in data["failed"][0]["reason"]
    assert not load_board(out).traces


def test_unplaced_part_fails_its_nets_only(capsys):
    b = make('[[parts]]\nref = "U9"\nfootprint = "chip-0603"\n' + part("J1", "header-1x2", 5.0, 5.0)
             + part("J2", "header-1x2", 20.0, 5.0)
             + net("A", "U9.1", "J1.1") + net("B", "J1.2", "J2.2"))
    r = route_board(b)
    assert set(r.failed) == {"A"} and "U9" in r.failed["A"]
    assert next(n for n in r.figures["nets"] if n["name"] == "B")["routed"]


def test_reroute_removes_copper_that_is_not_fixed():
    b = make(part("R1", "axial-10.16", 15.0, 10.0) + net("A", "R1.1", "R1.2")
             + trace("A", [(9.92, 10.0), (9.92, 15.0), (20.08, 15.0), (20.08, 10.0)], fixed=False))
    kept = route_board(b)
    assert len(kept.board.traces) == 1                     # routed already: nothing to do
    redone = route_board(b, reroute=True)
    assert redone.figures["nets"][0]["bends"] == 0
    assert all(t.points != b.traces[0].points for t in redone.board.traces)


def test_penalties_trade_bends_for_length():
    """A huge bend penalty never gives more bends; a huge via penalty never more vias."""
    b = load_board(BOARDS[[p.name for p in BOARDS].index("starter-blinker.toml")])
    lo = route_board(b, bend_penalty=0.1).figures["totals"]
    hi = route_board(b, bend_penalty=20.0).figures["totals"]
    assert hi["bends"] <= lo["bends"]
    few = route_board(b, via_penalty=50.0).figures["totals"]
    assert few["vias"] <= route_board(b, via_penalty=0.3).figures["totals"]["vias"]


# ---------------------------------------------------------------- the example boards
@pytest.mark.parametrize("path", BOARDS, ids=lambda p: p.stem)
def test_example_boards_route_completely_and_check_clean(path):
    b = load_board(path)
    if any(p.at is None for p in b.parts):
        pytest.skip("has unplaced parts")
    r = route_board(b)
    assert r.failed == {}
    assert r.figures["totals"]["routed"] == r.figures["totals"]["nets"]
    assert check(r.board) == []


def test_same_seed_same_bytes(tmp_path):
    src = BOARDS[[p.name for p in BOARDS].index("starter-blinker.toml")]
    outs = []
    for k in range(2):
        out = tmp_path / f"o{k}.toml"
        assert main(["route", str(src), "-o", str(out), "--quiet", "--seed", "7"]) == 0
        outs.append(out.read_bytes())
    assert outs[0] == outs[1]


def test_route_json_has_the_contract_figures_and_seconds(tmp_path, capsys):
    src = BOARDS[[p.name for p in BOARDS].index("starter-blinker.toml")]
    assert main(["route", str(src), "-o", str(tmp_path / "o.toml"), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert {"nets", "routed", "bends", "length", "vias", "jumpers", "bends_lower_bound",
            "length_lower_bound", "seconds"} <= set(data["totals"])
    assert data["totals"]["routed"] == data["totals"]["nets"]


# ---------------------------------------------------------------- generated boards, checked independently
GENERATED = [
    dict(seed=11, nets=20, size=(50.0, 40.0), layers=2),
    dict(seed=12, nets=20, size=(50.0, 40.0), layers=2, offgrid=True),
    dict(seed=13, nets=20, size=(50.0, 40.0), layers=1),
    dict(seed=14, nets=20, size=(50.0, 40.0), layers=1, offgrid=True),
    dict(seed=15, nets=12, size=(50.0, 40.0), layers=2, max_pins=8),
    dict(seed=16, nets=12, size=(50.0, 40.0), layers=1, max_pins=8),
]


@pytest.mark.parametrize("spec", GENERATED, ids=lambda s: "-".join(f"{k}{v}" for k, v in s.items() if k != "size"))
def test_generated_boards_route_completely_with_no_violation(spec):
    """Seeded generated boards (router.boardgen): every net routed, and the exact check, which
    measures the written file with shapely and knows nothing of the grid, finds nothing."""
    from router.boardgen import generate_board
    spec = dict(spec)
    b = generate_board(spec.pop("seed"), **spec)
    r = route_board(b)
    assert r.failed == {}
    assert check(r.board) == []
    # what was written reads back as the same board, and the figures agree with the file
    again = loads_board(dumps_board(r.board))
    assert len(again.traces) == len(r.board.traces) and check(again) == []
    for t in r.board.traces:
        for (x0, y0), (x1, y1) in zip(t.points, t.points[1:]):
            assert x0 == x1 or y0 == y1
    if spec.get("layers") == 1:
        for jm in r.board.jumpers:
            m = (abs(jm.start[0] - jm.end[0]) + abs(jm.start[1] - jm.end[1])) / JUMP_PITCH
            assert abs(m - round(m)) < 1e-6


def test_progress_bar_only_when_asked(capsys):
    b = make(part("R1", "axial-10.16", 15.0, 10.0) + net("A", "R1.1", "R1.2"))
    route_board(b, progress=False)
    assert capsys.readouterr().err == ""
    route_board(b, progress=True)
    assert "pass 1" in capsys.readouterr().err


def test_tiny_off_grid_pads_are_reached_by_stubs():
    """Pads smaller than the grid pitch, crossed by no grid line: an L-shaped stub from the pad's
    centre reaches the grid, and the exact check finds nothing (0.2 mm test pads, our own footprint)."""
    b = loads_board('''format = 1
[board]
name = "tiny"
size = [20.0, 12.0]
[rules]
grid = 0.5
min_trace_width = 0.15
[classes.default]
trace_width = 0.15
clearance = 0.15
[footprints.probe]
body = [0.4, 0.4]
pads = [{ pin = "1", offset = [0.0, 0.0], shape = "rectangle", size = [0.2, 0.2] }]
[[parts]]
ref = "P1"
footprint = "probe"
at = [4.13, 6.17]
[[parts]]
ref = "P2"
footprint = "probe"
at = [15.88, 3.29]
[[nets]]
name = "A"
pins = ["P1.1", "P2.1"]
''')
    r = route_board(b)
    assert r.failed == {}
    assert check(r.board) == []
    ends = {tuple(p) for t in r.board.traces for p in (t.points[0], t.points[-1])}
    assert (4.13, 6.17) in ends and (15.88, 3.29) in ends


def test_rerouting_every_net_each_pass_also_completes():
    """The original negotiation (every net ripped up each pass) reaches a legal, complete routing too."""
    b = load_board(BOARDS[[p.name for p in BOARDS].index("bench-power-monitor.toml")])
    r = route_board(b, every_net=True)
    assert r.failed == {} and check(r.board) == []


def test_stubs_of_two_nets_do_not_cross_on_a_coarse_grid():
    """On a 1.27 mm grid two SOT-23 pads leave by stubs; the stubs are kept clear of each other
    (a case the stress script found: it used to end in a short and one net dropped)."""
    b = loads_board('''format = 1
[board]
name = "stub-short"
size = [70.0, 45.0]
[rules]
grid = 1.27
[[parts]]
ref = "Q5"
footprint = "sot-23"
at = [37.445, 4.178]
rotation = 270
[[parts]]
ref = "Q12"
footprint = "sot-23"
at = [39.354, 13.038]
[[parts]]
ref = "R32"
footprint = "chip-1206"
at = [49.851, 11.893]
rotation = 270
[[nets]]
name = "N4"
pins = ["Q12.3", "Q5.3"]
[[nets]]
name = "N37"
pins = ["Q5.1", "R32.2"]
''')
    r = route_board(b)
    assert r.failed == {} and check(r.board) == []
