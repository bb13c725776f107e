"""Escape vias: a surface pad leaves by a via beside it (router.escape.escape_vias).

The hand-made part is a 0.58 mm square pad in a pocket: a frame of another pin's pads 1.0 mm from
its edge on every side (inner edges 1.3 mm from its centre). With a 0.8 mm class and 0.2 mm
clearance, a trace's centre must keep 0.6 mm from the frame, so the pocket's open grid points lie
within 0.7 mm of the centre on either axis, where a 0.6 mm via overlaps the pad (at the corner
point (0.5, 0.5) by 0.3 - 0.21 x 1.414 mm; the pad is too small to hold one): no via the grid
allows is reachable on the top layer. A via centred 0.75 mm from the pad's centre keeps 1.3 - 0.75 - 0.3 =
0.25 mm from the frame (at least the 0.2 mm clearance) and touches nothing of the pad (0.46 mm
from its edge, more than its 0.3 mm radius): the one way out, by a 0.15 mm neck (the board house's
minimum width: a 0.8 mm link would come 0.15 mm from the frame). The arithmetic is by hand;
shapely measures the routed copper on its own. The via rules (0.3 mm drill, 0.6 mm diameter,
0.15 mm annular ring) are common practice for small boards.
"""
from __future__ import annotations

import pytest
from shapely.geometry import LineString, Point, box

from router.check import check
from router.escape import EscapeVia, escape_via_pads, escape_vias
from router.figures import board_figures, format_report
from router.geometry import placed_pads
from router.grid import RoutingGrid
from router.model import Board, Footprint, Net, NetClass, Pad, Part, Trace, Via
from router.negotiate import route_board
from router.units import TOL

from test_exits import fine_rules

FRAME = {"left": Pad("2", (-1.5, 0.0), "rectangle", (0.4, 3.4)), "right": Pad("2", (1.5, 0.0), "rectangle", (0.4, 3.4)),
         "top": Pad("2", (0.0, 1.5), "rectangle", (3.4, 0.4)), "bottom": Pad("2", (0.0, -1.5), "rectangle", (3.4, 0.4))}


def pocket(layers: int = 2, sides=("left", "right", "top", "bottom")) -> Board:
    """The pocket part U1 at (5, 5) (pad 1 in the pocket, the frame pin 2 in no net) and a
    through-hole header pin J1 7 mm to its right, joined by net P of the 0.8 mm class."""
    fp = Footprint("pocket", (3.4, 3.4), [Pad("1", (0.0, 0.0), "rectangle", (0.58, 0.58))] + [FRAME[s] for s in sides])
    side = "top" if layers == 2 else "bottom"        # one layer: surface pads sit on the copper side
    parts = [Part("U1", "pocket", at=(5.0, 5.0), side=side), Part("J1", "header-1x1", at=(12.0, 5.0))]
    rules = fine_rules()
    return Board("pocket", [(0, 0), (20, 0), (20, 10), (0, 10)], copper_layers=layers, rules=rules,
                 classes={"default": NetClass("default", 0.25, 0.2), "power": NetClass("power", 0.8, 0.2)},
                 footprints={"pocket": fp}, parts=parts, nets=[Net("P", ["U1.1", "J1.1"], "power")])


def _frame_polygons(board: Board):
    return [box(*p.bounds()) for p in placed_pads(board) if p.ref == "U1" and p.pin == "2"]


def test_a_boxed_in_pad_leaves_by_a_via_beside_it():
    b = pocket()
    r = route_board(b)
    assert r.failed == {}
    assert check(r.board) == []
    # the via where the hand arithmetic puts it: on the pad's axis, towards J1, 0.75 mm out
    assert [(v.net, v.at) for v in r.board.vias] == [("P", (5.75, 5.0))]
    via = r.board.vias[0]
    assert (via.drill, via.diameter) == (0.3, 0.6)
    disc = Point(via.at).buffer(via.diameter / 2, 256)
    pad = box(4.71, 4.71, 5.29, 5.29)
    # shapely: the via keeps the class clearance from the frame, and stays outside the pad it serves
    frame = _frame_polygons(r.board)
    assert min(Point(via.at).distance(poly) for poly in frame) - via.diameter / 2 == pytest.approx(0.25)
    assert all(disc.distance(poly) >= 0.2 - 1e-3 for poly in frame)    # the disc as a 1024-gon
    assert Point(via.at).distance(pad) == pytest.approx(0.46)
    assert Point(via.at).distance(pad) >= via.diameter / 2 - TOL
    # the link: a 0.15 mm neck on top from the pad's edge to the via's centre, 0.2 mm from the frame
    link = [t for t in r.board.traces if t.layer == "top"]
    assert len(link) == 1 and link[0].width == pytest.approx(0.15)
    assert link[0].points[0] == (5.29, 5.0) and link[0].points[-1] == (5.75, 5.0)
    for poly in _frame_polygons(r.board):
        assert LineString(link[0].points).distance(poly) - 0.075 >= 0.2 - TOL
    # the via's hole and the header's hole: min_hole_spacing wall to wall
    j1 = next(p for p in placed_pads(r.board) if p.ref == "J1")
    assert Point(via.at).distance(Point(j1.x, j1.y)) - (via.drill + j1.drill) / 2 >= b.rules.min_hole_spacing
    figs = board_figures(r.board)
    assert figs["totals"]["escape_vias"] == 1
    assert [(n["name"], n["escape_vias"], n["escape_via_pads"]) for n in figs["nets"]] == [("P", 1, ["U1.1"])]


def test_without_the_via_beside_it_the_pad_has_no_way(monkeypatch):
    """The same board with escape vias turned off fails: the via above is the only way out."""
    import router.escape as esc
    monkeypatch.setattr(esc, "escape_vias", lambda *a, **k: {})
    r = route_board(pocket())
    assert "P" in r.failed and r.board.vias == []


def test_a_pad_with_a_free_exit_spends_no_via():
    """The frame open towards J1: via places beside the pad are offered to the search (and priced),
    but the way out on the pad's own layer costs less, so no via is spent."""
    b = pocket(sides=("left", "top", "bottom"))
    grid = RoutingGrid(b)
    pad = next(p for p in grid.pads if p.ref == "U1" and p.pin == "1")
    offered = escape_vias(grid, grid.space_for("P"), "P", pad)
    assert offered and all(isinstance(v, EscapeVia) and c[0] == 1 for c, v in offered.items())
    r = route_board(b)
    assert r.failed == {}
    assert check(r.board) == []
    assert r.board.vias == []
    assert board_figures(r.board)["totals"]["escape_vias"] == 0


def test_one_layer_board_never_uses_one():
    b = pocket(layers=1)
    grid = RoutingGrid(b)
    pad = next(p for p in grid.pads if p.ref == "U1" and p.pin == "1")
    assert escape_vias(grid, grid.space_for("P"), "P", pad) == {}
    r = route_board(b)
    assert "P" in r.failed                           # boxed in, and no via to leave by
    assert r.board.vias == []


def test_report_counts_escape_vias_and_names_their_pads():
    """A hand-drawn board: one via joined to U1.1 by a trace from its centre to the pad (counted),
    one via touching pad J2.1's edge (counted), one via 3 mm from any pad (not counted), one via
    joined to a pad by a trace but farther than neck_length (1.0 mm) from it (not counted)."""
    b = pocket(sides=())
    b.parts.append(Part("J2", "pocket", at=(5.0, 8.0)))
    b.nets.append(Net("Q", ["J2.1"]))
    b.traces += [Trace("P", "top", 0.3, [(5.29, 5.0), (5.75, 5.0)]),
                 Trace("P", "bottom", 0.8, [(5.75, 5.0), (11.25, 5.0)]),
                 Trace("P", "top", 0.3, [(5.0, 4.71), (5.0, 3.25)])]
    b.vias += [Via("P", (5.75, 5.0), 0.3, 0.6), Via("Q", (5.59, 8.0), 0.3, 0.6), Via("P", (8.0, 5.0), 0.3, 0.6),
               Via("P", (5.0, 3.25), 0.3, 0.6)]
    assert escape_via_pads(b) == {0: "U1.1", 1: "J2.1"}
    figs = board_figures(b)
    assert figs["totals"]["escape_vias"] == 2
    per = {n["name"]: (n["escape_vias"], n["escape_via_pads"]) for n in figs["nets"]}
    assert per["P"] == (1, ["U1.1"]) and per["Q"] == (1, ["J2.1"])
    assert figs["totals"]["vias"] == 4                  # escape vias are vias too
    text = format_report(figs, b)
    assert "escape vias: 2" in text and "P at U1.1" in text and "Q at J2.1" in text
    # a one-layer board has none
    assert escape_via_pads(pocket(layers=1)) == {}


def test_a_fine_pitch_pad_off_the_grid_gets_a_via_place_by_its_middle_line():
    """A 0.5 mm pitch row (JEDEC MO-220 quad no-lead: 0.8 x 0.25 mm pads, the test part of
    tests/test_exits.py) whose pads' middle lines lie half a pitch off the grid: a link along a
    pad's edge line passes 0.25 mm from the neighbouring pad, less the 0.075 mm half neck leaves
    0.175 mm, under the 0.2 mm clearance; out along the middle line (0.375 - 0.075 = 0.3 mm from
    the neighbour) and one step of 0.125 mm sideways it fits. shapely measures the offered link
    and via against every other pad of the row."""
    from router.realgen import _quad
    from router.escape import _escape_via_places
    q = _quad(32)
    rules = fine_rules()
    b = Board("row", [(0, 0), (30, 0), (30, 30), (0, 30)], copper_layers=2, rules=rules,
              classes={"default": NetClass("default", 0.25, 0.2), "power": NetClass("power", 0.5, 0.2)},
              footprints={q.name: q}, parts=[Part("U1", q.name, at=(18.125, 16.125))],
              nets=[Net("VCC", ["U1.15"], "power")])
    grid = RoutingGrid(b)
    pad = next(p for p in grid.pads if p.name == "U1.15")
    assert abs(pad.y / 0.25 - round(pad.y / 0.25)) == pytest.approx(0.5)      # its middle line off the grid
    places = _escape_via_places(grid, "VCC", pad, 0, 8)
    assert places
    others = [box(*p.bounds()) for p in grid.pads if p.ref == "U1" and p.pin != "15"]
    for _, _, ev in places:
        assert len(ev) == 3 and ev[0][1] == ev[1][1] == pytest.approx(pad.y)       # out along the middle line
        assert abs(ev[2][1] - pad.y) == pytest.approx(0.125)                    # one short step sideways
        line = LineString(ev)
        assert min(line.distance(o) for o in others) - ev.width / 2 >= 0.2 - TOL
        assert min(Point(ev[-1]).distance(o) for o in others) - 0.3 >= 0.2 - TOL
        assert Point(ev[-1]).distance(box(*pad.bounds())) >= 0.3 - TOL        # outside the pad's copper
