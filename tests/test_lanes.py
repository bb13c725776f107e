"""The lanes out of fine-pitch row pads' outer ends, kept free of other nets' vias (the try of
route_board with ExitReserve(lanes=True)).

Outside references: JEDEC MO-220 (quad no-lead, 0.5 mm pitch: the test part has 0.25 x 0.8 mm
pads), EIA 0402 (1.0 x 0.5 mm chip); shapely measures every distance the tests compare.
"""
from __future__ import annotations

from shapely.geometry import LineString, Point

from router import negotiate
from router.check import check
from router.geometry import placed_pads
from router.model import Board, NetClass, Net, Part, Rules
from router.realgen import _chip, _quad


def quad_on_fine_grid() -> Board:
    """A 20-pin 0.5 mm quad on a 0.1 mm grid (every pad holds grid points of its own, so none
    counts as scarce), its supply pin U1.9 beside signal U1.8, each pin to an 0402: in the
    first net order the supply's via lands just in front of U1.8's outer end."""
    q, c = _quad(20), _chip("0402")
    parts = [Part("U1", q.name, at=(18.0, 16.0)), Part("C1", c.name, at=(20.4127, 11.2743)),
             Part("C2", c.name, at=(22.9507, 18.5377), rotation=90), Part("C3", c.name, at=(17.0139, 20.5721)),
             Part("C5", c.name, at=(28.0, 21.125)), Part("C6", c.name, at=(28.05, 18.8)),
             Part("C7", c.name, at=(28.1, 16.7)), Part("C8", c.name, at=(28.125, 14.4)),
             Part("C9", c.name, at=(28.0, 12.325)), Part("C4", c.name, at=(8.1, 21.0)),
             Part("C10", c.name, at=(8.0, 18.85)), Part("C11", c.name, at=(8.0, 16.6))]
    nets = [Net("VCC", ["U1.4", "C1.1", "U1.9", "C2.1", "U1.15", "C3.1"], "power"),
            Net("GND", ["C1.2", "C2.2", "C3.2", "U1.5", "U1.11", "U1.21"], "power"),
            Net("S2", ["U1.6", "C5.1"]), Net("S3", ["U1.7", "C6.1"]), Net("S4", ["U1.8", "C7.1"]),
            Net("S5", ["U1.10", "C8.1"]), Net("S6", ["U1.12", "C9.1"]), Net("S1", ["U1.3", "C4.2"]),
            Net("S7", ["U1.13", "C10.2"]), Net("S8", ["U1.14", "C11.2"])]
    rules = Rules(grid=0.1, edge_clearance=0.4, min_trace_width=0.15, min_clearance=0.15,
                  via_drill=0.3, via_diameter=0.6, min_hole_spacing=0.3)
    return Board("lane-row", [(2.0, 2.0), (34.0, 2.0), (34.0, 28.0), (2.0, 28.0)], copper_layers=2, rules=rules,
                 classes={"default": NetClass("default", 0.25, 0.25), "power": NetClass("power", 0.5, 0.25)},
                 footprints={q.name: q, c.name: c}, parts=parts, nets=nets)


def _first_order(lanes: bool, monkeypatch=None, classic: bool = False):
    """The first net order's routing, negotiated as on a big board unless `classic` (the classic
    negotiation routes this row in the first order: tests/test_fan_supplies.py); with
    `monkeypatch`, the fan-out with the supplies after the swap
    (:func:`router.negotiate._fan_with_supplies`, tests/test_fan_supplies.py) left out."""
    if monkeypatch is not None:
        monkeypatch.setattr(negotiate, "_fan_with_supplies", lambda neg, lost, **kw: None)
    b = quad_on_fine_grid()
    g = b.rules.grid
    bend, via, jump = negotiate._cost(1.0, g), negotiate._cost(2.0, g), negotiate._cost(5.0, g)
    out, lost, *_ = negotiate._attempt(b, [n.name for n in b.nets], 0, 0, bend, via, jump,
                                       None, False, True, lanes=lanes, classic=classic)
    return out, lost


def _vias_in_lane(board: Board) -> list:
    """Other nets' vias that would come within the class clearance (0.25 mm) of a 0.25 mm trace
    run straight out of U1.8's outer end for neck_length (1 mm), by shapely's distance."""
    pad = next(p for p in placed_pads(board) if p.ref == "U1" and p.pin == "8")
    assert (pad.w, pad.h) == (0.8, 0.25)             # the right-hand side: its outer end at x + 0.4
    lane = LineString([(pad.x + 0.4, pad.y), (pad.x + 1.4, pad.y)])
    reach = 0.125 + 0.25 + 0.3                        # half the trace, clearance, the via's radius
    return [v for v in board.vias if v.net != "S4" and Point(v.at).distance(lane) < reach]


def test_a_via_in_front_of_a_row_pad_closes_it_without_lanes(monkeypatch):
    out, lost = _first_order(lanes=False, monkeypatch=monkeypatch)
    assert list(lost) == ["S4"]
    assert [v.net for v in _vias_in_lane(out)] == ["VCC"]


def test_lanes_keep_the_row_pad_open_and_every_net_routes():
    out, lost = _first_order(lanes=True)
    assert lost == {}
    assert _vias_in_lane(out) == []
    assert [v for v in check(out) if v.rule != "open"] == []
