"""Copper pours (router.pour): the fill measured against shapely, the board file, route, check,
report, pictures and Gerber regions read back by gerbonara.

Reference computations in this file use shapely directly (distance, area, buffer) on shapes built
here from the board's own numbers, never the pour module's helpers: the fill is computed with
polygons that circumscribe every circle, the check and these tests measure exactly.
"""
from __future__ import annotations

import math
import warnings
from pathlib import Path

import pytest
import shapely
from shapely.geometry import LineString, Point, Polygon, box

from router.boardfile import load_board, loads_board, save_board
from router.boardgen import generate_board
from router.check import check, warnings as check_warnings
from router.cli import main
from router.connectivity import routed
from router.copper import copper_items
from router.figures import board_figures
from router.geometry import outline_polygon, placed_pads
from router.model import Pour, Thermal
from router.negotiate import route_board
from router.pour import neck_findings, pour_board, pour_geometry, stale_pours

BOARDS = Path(__file__).resolve().parent.parent / "boards"

# A two-layer board built for these tests (our own invention): a 0805 capacitor and a DIP-8
# whose ground pins the bottom pour must reach, and one signal trace (J1.1 to U1.1) across it.
TWO_LAYER = """
format = 1
[board]
name = "pour-test"
size = [30.0, 20.0]
copper_layers = 2
[rules]
grid = 0.25
edge_clearance = 0.5
min_trace_width = 0.15
min_clearance = 0.15
[classes.default]
trace_width = 0.25
clearance = 0.25
[[parts]]
ref = "U1"
footprint = "dip-8"
at = [15.0, 10.0]
[[parts]]
ref = "J1"
footprint = "header-1x2"
at = [4.0, 10.0]
rotation = 90
[[nets]]
name = "GND"
pins = ["U1.4", "J1.2", "U1.5"]
[[nets]]
name = "SIG"
pins = ["U1.1", "J1.1"]
[[traces]]
net = "SIG"
layer = "bottom"
width = 0.25
points = [[4.0, 8.73], [4.0, 4.0], [11.19, 4.0], [11.19, 6.19]]
[[pours]]
net = "GND"
layer = "bottom"
"""


def _board(extra: str = "", text: str = TWO_LAYER):
    return loads_board(text + extra, "pour-test.toml")


def _exact_shape(it):
    """An item's copper as a shapely shape, fine enough to measure to 1e-4 mm."""
    if it.radius > 0:
        return it.core.buffer(it.radius, quad_segs=256)
    return it.core


# --------------------------------------------------------------------------- the fill itself

def test_fill_keeps_the_clearance_from_every_other_net_by_shapely_distance():
    b = pour_board(_board()).board
    fill = pour_geometry(b.pours[0])
    assert fill.area > 100.0
    c = b.net_class("GND").clearance
    for it in copper_items(b):
        if it.kind == "pour" or it.net == "GND" or "bottom" not in it.layers:
            continue
        # shapely: distance from the core less the radius is the exact gap between copper
        gap = shapely.distance(it.core, fill) - it.radius
        assert gap >= c - 1e-6, (it.source, gap)


def test_fill_stays_inside_the_outline_less_the_edge_clearance():
    b = pour_board(_board()).board
    fill = pour_geometry(b.pours[0])
    inner = outline_polygon(b).buffer(-b.rules.edge_clearance, join_style="mitre")
    assert inner.buffer(1e-6).covers(fill)
    assert fill.area <= inner.area


def test_thermal_relief_joins_each_own_pad_by_its_spokes_only():
    b = pour_board(_board()).board
    fill = pour_geometry(b.pours[0])
    th_gap = b.net_class("GND").clearance          # default gap: the pour's clearance
    width = b.net_class("GND").trace_width          # default spoke width: the class width
    for pad in placed_pads(b):
        if pad.net != "GND" or "bottom" not in pad.layers:
            continue
        shape = Point(pad.x, pad.y).buffer(max(pad.w, pad.h) / 2, quad_segs=256) \
            if pad.shape == "round" else box(pad.x - pad.w / 2, pad.y - pad.h / 2, pad.x + pad.w / 2, pad.y + pad.h / 2)
        ring = shape.buffer(th_gap * 0.98).difference(shape.buffer(1e-3))
        copper_in_gap = fill.intersection(ring)
        # four spokes of the class width cross the gap: copper there is about 4 x width x gap
        assert copper_in_gap.area > 0, pad.name
        parts = list(getattr(copper_in_gap, "geoms", [copper_in_gap]))
        # J1.2's spoke towards J1.1 (a SIG pad 2.54 mm below) has no room: three spokes
        want = 3 if pad.name == "J1.2" else 4
        assert len(parts) == want, (pad.name, len(parts))
        assert copper_in_gap.area <= want * width * th_gap * 1.05
        assert fill.distance(shape) <= 1e-6       # the spokes touch the pad


def test_two_spokes_and_a_wider_gap():
    b = _board()
    b.pours[0].thermal = Thermal(2, 0.3, 0.5)
    b = pour_board(b).board
    fill = pour_geometry(b.pours[0])
    pad = next(p for p in placed_pads(b) if p.name == "J1.2")      # free room left and right
    shape = Point(pad.x, pad.y).buffer(max(pad.w, pad.h) / 2, quad_segs=256) if pad.shape == "round" else \
        box(pad.x - pad.w / 2, pad.y - pad.h / 2, pad.x + pad.w / 2, pad.y + pad.h / 2)
    ring = shape.buffer(0.49).difference(shape.buffer(1e-3))
    parts = list(getattr(fill.intersection(ring), "geoms", [fill.intersection(ring)]))
    assert len(parts) == 2


def test_an_island_touching_no_pad_of_the_net_is_removed():
    # a SIG trace drawn as a closed square on the bottom leaves an island inside it
    extra = """
[[traces]]
net = "SIG"
layer = "bottom"
width = 0.25
points = [[22.0, 3.0], [27.0, 3.0], [27.0, 8.0], [22.0, 8.0], [22.0, 3.0]]
"""
    b = pour_board(_board(extra)).board
    fill = pour_geometry(b.pours[0])
    inside = box(22.5, 3.5, 26.5, 7.5)
    assert fill.intersection(inside).area == pytest.approx(0.0, abs=1e-9)


def test_min_island_area_removes_small_pieces():
    b = pour_board(_board()).board
    areas = sorted(Polygon(p[0], p[1:]).area for p in b.pours[0].filled)
    b2 = _board()
    b2.pours[0].min_island_area = areas[0] + 0.01
    kept = [Polygon(p[0], p[1:]).area for p in pour_board(b2).board.pours[0].filled]
    assert all(a >= areas[0] + 0.01 - 1e-9 for a in kept)
    assert len(kept) < len(areas)


def test_priority_higher_pour_fills_first_and_the_lower_keeps_clear_of_it():
    extra = """
[[pours]]
net = "SIG"
layer = "bottom"
polygon = [[7.0, 1.0], [14.0, 1.0], [14.0, 9.0], [7.0, 9.0]]
priority = 5
"""
    b = pour_board(_board(extra)).board
    gnd, sig = pour_geometry(b.pours[0]), pour_geometry(b.pours[1])
    assert sig.area > 0.5 * 7 * 8          # it holds U1.1 and the SIG trace: it stays
    c = b.net_class("GND").clearance
    assert shapely.distance(gnd, sig) >= c - 1e-6
    # swap the priorities: GND now takes the overlap
    b2 = _board(extra.replace("priority = 5", "priority = -1"))
    b2 = pour_board(b2).board
    assert pour_geometry(b2.pours[1]).area < sig.area


def test_pour_keeps_out_of_keepouts_and_holes():
    extra = """
[[keepouts]]
polygon = [[24.0, 12.0], [28.0, 12.0], [28.0, 17.0], [24.0, 17.0]]
[[parts]]
ref = "H1"
footprint = "hole-3.2"
at = [26.0, 4.0]
"""
    b = pour_board(_board(extra)).board
    fill = pour_geometry(b.pours[0])
    assert fill.intersection(box(24, 12, 28, 17)).area == pytest.approx(0.0, abs=1e-9)
    # an unplated hole keeps the edge clearance (the board's edge inside the hole)
    assert shapely.distance(Point(26.0, 4.0), fill) >= 1.6 + b.rules.edge_clearance - 1e-6


def test_a_generated_two_layer_board_routed_with_a_ground_pour_checks_clean():
    b = generate_board(3, nets=12, layers=2)
    gnd = b.nets[0].name
    b.pours.append(Pour(gnd, "bottom", min_island_area=1.0))
    r = route_board(b)
    assert not r.failed
    assert check(r.board) == []
    assert routed(r.board)[gnd]
    assert not stale_pours(r.board)
    # the pour carries part of the net: no more trace than without it, usually less
    figs = board_figures(r.board)
    assert figs["pours"]["bottom"]["area"] > 0


# --------------------------------------------------------------------------- routing with a pour

def test_one_layer_example_pour_saves_traces_and_jumpers():
    plain = load_board(BOARDS / "soil-alarm-1layer.toml")
    poured = load_board(BOARDS / "soil-alarm-1layer-poured.toml")
    a, b = route_board(plain), route_board(poured)
    assert not a.failed and not b.failed
    assert check(b.board) == []
    fa, fb = board_figures(a.board), board_figures(b.board)
    ta, tb = fa["totals"], fb["totals"]
    assert tb["length"] < ta["length"]
    assert tb["jumpers"] <= ta["jumpers"]


def test_vias_into_a_bottom_pour_join_top_surface_pads():
    # two 0805 capacitors on top whose ground pads reach the bottom pour only through vias
    text = TWO_LAYER.replace('''[[parts]]
ref = "J1"''', '''[[parts]]
ref = "C1"
footprint = "chip-0805"
at = [25.0, 5.0]
[[parts]]
ref = "C2"
footprint = "chip-0805"
at = [25.0, 15.0]
[[parts]]
ref = "J1"''').replace('pins = ["U1.4", "J1.2", "U1.5"]', 'pins = ["U1.4", "J1.2", "U1.5", "C1.2", "C2.2"]')
    text = text.replace('pins = ["U1.1", "J1.1"]', 'pins = ["U1.1", "J1.1"]\n[[nets]]\nname = "VCC"\n'
                        'pins = ["U1.8", "C1.1", "C2.1"]')
    b = loads_board(text, "vias.toml")
    r = route_board(b)
    assert not r.failed, r.failed
    assert check(r.board) == []
    assert routed(r.board)["GND"]
    gnd_vias = [v for v in r.board.vias if v.net == "GND"]
    assert gnd_vias, "the top pads of GND reach the bottom pour by vias"


def test_a_pad_the_pour_cannot_reach_is_an_open_in_check():
    # a closed SIG ring drawn round J1.2 (at 4, 11.27) on the bottom shuts the pour out of it
    extra = """
[[traces]]
net = "SIG"
layer = "bottom"
width = 0.25
points = [[2.0, 10.0], [6.0, 10.0], [6.0, 12.8], [2.0, 12.8], [2.0, 10.0]]
"""
    res = pour_board(_board(extra))
    opens = [v for v in check(res.board) if v.rule == "open"]
    assert opens and "GND" in opens[0].nets


# --------------------------------------------------------------------------- check

def test_check_finds_a_pour_moved_onto_other_copper():
    b = pour_board(_board()).board
    # plant a defect: a piece of GND pour over the SIG trace's corner at (4, 4)
    b.pours[0].filled.append([[(3.7, 3.7), (4.3, 3.7), (4.3, 4.3), (3.7, 4.3)]])
    found = [v for v in check(b) if v.rule in ("clearance", "short")]
    assert found
    sig = next(it for it in copper_items(b) if it.net == "SIG" and it.kind == "trace")
    assert shapely.distance(sig.core, box(3.7, 3.7, 4.3, 4.3)) - sig.radius < 0


def test_check_finds_a_pour_neck_narrower_than_the_minimum_width():
    b = pour_board(_board()).board
    # two squares joined by a 0.1 mm neck, below min_trace_width 0.15 (shapely builds it)
    neck = shapely.union_all([box(22, 2, 24, 4), box(24, 2.95, 25, 3.05), box(25, 2, 27, 4)])
    b.pours[0].filled = [[list(neck.exterior.coords)[:-1]]]
    assert neck_findings(b)
    assert any(v.rule == "width" for v in check(b))


def test_a_stale_fill_is_a_warning_after_copper_changes():
    b = pour_board(_board()).board
    assert not stale_pours(b)
    b.parts[1].at = (4.0, 9.0)
    assert stale_pours(b) == [0]
    assert any(w.rule == "stale_pour" for w in check_warnings(b))


# --------------------------------------------------------------------------- file and command line

def test_fill_round_trips_through_the_board_file(tmp_path):
    b = pour_board(_board()).board
    save_board(b, tmp_path / "p.toml")
    back = load_board(tmp_path / "p.toml")
    assert not stale_pours(back)
    a1, a2 = pour_geometry(b.pours[0]).area, pour_geometry(back.pours[0]).area
    assert a2 == pytest.approx(a1, rel=1e-6)


@pytest.mark.parametrize("extra,words", [
    ('[[pours]]\nnet = "VBAT"\nlayer = "bottom"\n', ["pours", "unknown net", "VBAT"]),
    ('[[pours]]\nnet = "GND"\nlayer = "inner1"\n', ["pours", "layer"]),
    ('[[pours]]\nnet = "GND"\nlayer = "top"\npolygon = [[0, 0], [40, 0], [40, 20], [0, 20]]\n',
     ["polygon", "outside the board"]),
    ('[[pours]]\nnet = "GND"\nlayer = "top"\nthermal = { gap = 0.1 }\n', ["thermal gap", "min_clearance"]),
    ('[[pours]]\nnet = "GND"\nlayer = "top"\nthermal = { spokes = 3 }\n', ["spokes", "2 or 4"]),
])
def test_bad_pours_exit_2_with_one_line_and_write_nothing(tmp_path, capsys, extra, words):
    src = tmp_path / "bad.toml"
    src.write_text(TWO_LAYER + extra)
    out = tmp_path / "out.toml"
    assert main(["pour", str(src), "-o", str(out)]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and "bad.toml" in err, err
    for w in words:
        assert w in err, (w, err)
    assert not out.exists()


def test_pour_command_writes_the_fill_and_report_gives_area_and_share(tmp_path, capsys):
    src = tmp_path / "b.toml"
    src.write_text(TWO_LAYER)
    out = tmp_path / "poured.toml"
    assert main(["pour", str(src), "-o", str(out)]) == 0
    said = capsys.readouterr().out
    assert "pour 1: GND on bottom" in said
    b = load_board(out)
    area = pour_geometry(b.pours[0]).area
    assert main(["report", str(out), "--json"]) == 0
    import json
    figs = json.loads(capsys.readouterr().out)
    assert figs["pours"]["bottom"]["area"] == pytest.approx(area, abs=1e-3)
    assert figs["pours"]["bottom"]["share"] == pytest.approx(area / (30 * 20), abs=1e-4)


# --------------------------------------------------------------------------- pictures and Gerber

def test_render_draws_the_pour_under_the_traces(tmp_path):
    b = pour_board(_board()).board
    save_board(b, tmp_path / "p.toml")
    assert main(["render", str(tmp_path / "p.toml"), "-o", str(tmp_path / "p.svg"), "-q"]) == 0
    svg = (tmp_path / "p.svg").read_text()
    assert 'id="pour-bottom"' in svg
    # drawn before (under) the traces
    assert svg.index('id="pour-bottom"') < svg.index('id="copper-bottom"')


def test_gerber_regions_read_back_by_gerbonara_match_the_fill_area(tmp_path):
    gerbonara = pytest.importorskip("gerbonara")
    from gerbonara.graphic_objects import Region
    b = pour_board(generate_board(3, nets=12, layers=2)).board
    b.pours.append(Pour(b.nets[0].name, "bottom", min_island_area=1.0))
    b = pour_board(b).board
    from router.fabfiles import export
    files = export(b, tmp_path / "fab")
    bottom = next(f for f in files if "bottom" in Path(f).name.lower() and "copper" in Path(f).name.lower())
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        g = gerbonara.GerberFile.open(bottom)
    dark, clear = [], []
    for obj in g.objects:
        if isinstance(obj, Region):
            pts = [(float(x), float(y)) for x, y in obj.outline]
            (dark if obj.polarity_dark else clear).append(Polygon(pts))
    assert dark
    read = shapely.union_all(dark).difference(shapely.union_all(clear)) if clear else shapely.union_all(dark)
    want = pour_geometry(b.pours[0]).area
    assert read.area == pytest.approx(want, rel=1e-3)    # the issue asks 0.1 %


def test_route_says_which_pads_the_pour_does_not_join_and_why(tmp_path, capsys):
    text = TWO_LAYER.replace('''[[parts]]
ref = "J1"''', '''[[parts]]
ref = "C1"
footprint = "chip-0805"
at = [25.0, 5.0]
[[parts]]
ref = "J1"''').replace('pins = ["U1.4", "J1.2", "U1.5"]', 'pins = ["U1.4", "J1.2", "U1.5", "C1.2"]')
    src = tmp_path / "b.toml"
    src.write_text(text)
    assert main(["route", str(src), "-o", str(tmp_path / "r.toml")]) in (0, 1)
    out = capsys.readouterr().out
    assert "pour of GND on bottom joins 3 of 4 pads" in out
    assert "C1.2 is joined by traces or vias instead: a surface pad on top" in out
    b = load_board(tmp_path / "r.toml")
    assert routed(b)["GND"] and check(b) == []
