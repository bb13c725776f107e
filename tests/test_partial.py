"""A net the router cannot complete keeps the copper joining the pads it reaches.

A supply that misses one pad of thirty is worth more to a user as twenty-nine joined pads and one
ratsnest line than as no copper at all: the next ``route`` of the file completes it from the copper
kept (the contract: ``route`` keeps all copper already in the file). Here a net of three pads has one
pad walled in by keepout strips (as ``router.realgen``'s ``enclosed`` pads are): its other two pads
are joined, the check finds the net open at the walled pad and nothing else.
"""
from router.boardfile import dumps_board, loads_board
from router.check import check
from router.connectivity import net_groups
from router.model import Board, Footprint, Keepout, Net, NetClass, Pad, Part, Rules
from router.negotiate import route_board


def _board(layers: int = 2) -> Board:
    pin = Footprint("pin", (1.2, 1.2), [Pad("1", (0.0, 0.0), "round", (1.2, 1.2), drill=0.6)])   # through: one layer too
    parts = [Part("A", "pin", at=(3.0, 3.0)), Part("B", "pin", at=(17.0, 3.0)), Part("C", "pin", at=(10.0, 10.0)),
             Part("D", "pin", at=(3.0, 10.0)), Part("E", "pin", at=(17.0, 10.0))]
    x, y, e = 10.0, 10.0, 1.2          # a frame of strips round C, clear of its pad (all layers)
    strips = [(x - e - 0.2, y - e - 0.2, x + e + 0.2, y - e), (x - e - 0.2, y + e, x + e + 0.2, y + e + 0.2),
              (x - e - 0.2, y - e, x - e, y + e), (x + e, y - e, x + e + 0.2, y + e)]
    keepouts = [Keepout([(x0, y0), (x1, y0), (x1, y1), (x0, y1)], None, True) for x0, y0, x1, y1 in strips]
    rules = Rules(grid=0.25, edge_clearance=0.4, min_trace_width=0.15, min_clearance=0.15,
                  via_drill=0.3, via_diameter=0.6, min_hole_spacing=0.3)
    return Board("walled", [(0.0, 0.0), (20.0, 0.0), (20.0, 14.0), (0.0, 14.0)], copper_layers=layers, rules=rules,
                 classes={"default": NetClass("default", 0.25, 0.2)}, footprints={"pin": pin}, parts=parts,
                 nets=[Net("P", ["A.1", "B.1", "C.1"]), Net("Q", ["D.1", "E.1"])], keepouts=keepouts)


def test_a_net_that_cannot_be_completed_keeps_the_pads_it_joins():
    for layers in (1, 2):
        r = route_board(_board(layers), seed=0)
        assert set(r.failed) == {"P"} and "C.1" in r.failed["P"]
        groups = {frozenset(g) for g in net_groups(r.board)["P"]}
        assert groups == {frozenset({"A.1", "B.1"}), frozenset({"C.1"})}
        assert any(t.net == "P" for t in r.board.traces)
        found = check(r.board)
        assert [v.rule for v in found] == ["open"] and found[0].nets == ["P"]


def test_the_copper_kept_is_kept_by_the_next_route():
    b = route_board(_board(), seed=0).board
    text = dumps_board(b)
    again = route_board(loads_board(text), seed=0)
    assert set(again.failed) == {"P"}
    kept = sorted((t.layer, tuple(map(tuple, t.points))) for t in b.traces if t.net == "P")
    now = sorted((t.layer, tuple(map(tuple, t.points))) for t in again.board.traces if t.net == "P")
    assert kept == now                                  # nothing of it taken out, nothing added


def test_a_net_of_two_pads_is_not_searched_again(monkeypatch):
    """A lost net of two pads has nothing to keep (its one link is what failed): no partial route is
    searched for it, and it gets no copper."""
    from router import negotiate
    asked = []
    route_net = negotiate.route_net
    monkeypatch.setattr(negotiate, "route_net",
                        lambda *a, **kw: asked.append((a[1], kw.get("partial"))) or route_net(*a, **kw))
    b = _board()
    b.nets = [Net("P", ["A.1", "C.1"]), Net("Q", ["D.1", "E.1"])]
    r = route_board(b, seed=0)
    assert set(r.failed) == {"P"}
    assert ("P", True) not in asked and ("P", False) in asked
    assert not any(t.net == "P" for t in r.board.traces) and not any(v.net == "P" for v in r.board.vias)
    b = _board()                                                  # the three-pad net is searched so
    asked.clear()
    route_board(b, seed=0)
    assert ("P", True) in asked


def test_the_exact_check_takes_out_partial_copper_before_a_routed_net():
    # a lost net's partial copper that meets a routed net's copper: the partial copper goes, the routed
    # net stays, and the lost net keeps its own reason (negotiate._settle); the lost net is named Z so
    # that it comes after the routed net Q in the violation's nets
    import copy
    from router.model import Trace
    from router.negotiate import _settle
    original = _board()
    original.nets = [Net("Z", ["A.1", "B.1", "C.1"]), Net("Q", ["D.1", "E.1"])]
    b = copy.deepcopy(original)
    b.traces = [Trace("Q", "top", 0.25, [(3.0, 10.0), (3.0, 12.5), (17.0, 12.5), (17.0, 10.0)]),   # Q routed
                Trace("Z", "top", 0.25, [(3.0, 3.0), (5.0, 3.0), (5.0, 12.3)])]      # too close to Q's trace
    assert {tuple(v.nets) for v in check(b) if v.rule != "open"} == {("Q", "Z")}
    for order in (["Z", "Q"], ["Q", "Z"]):
        got = copy.deepcopy(b)
        failed = {"Z": "pad C.1 has no open grid point within reach"}
        _settle(got, original, failed, order)
        assert [t.net for t in got.traces] == ["Q"]
        assert failed == {"Z": "pad C.1 has no open grid point within reach"}


def test_route_says_how_many_pins_the_kept_copper_joins(tmp_path, capsys):
    import json
    from router.cli import main
    src, out = tmp_path / "walled.toml", tmp_path / "routed.toml"
    src.write_text(dumps_board(_board()))
    assert main(["route", str(src), "-o", str(out)]) == 1                  # P stays unrouted
    text = capsys.readouterr().out
    assert "not routed: P:" in text and "its copper joins 2 of its 3 pins (kept in the file)" in text
    assert main(["route", str(src), "-o", str(out), "--json"]) == 1
    failed = json.loads(capsys.readouterr().out)["failed"]
    assert failed == [{"net": "P", "reason": failed[0]["reason"], "pins_joined": 2, "pins": 3}]
