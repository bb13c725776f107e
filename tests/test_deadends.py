"""Dead-end copper: `route` (without --reroute) takes out copper that ends touching nothing of
its net, says how much, and the picture's title counts the check's warnings.

Lengths are worked by hand from the coordinates in each board; touching is shapely's distance
(the check's own join), so the oracle is outside the router.
"""
import json

import pytest
from shapely.geometry import LineString, Point

from router.boardfile import load_board, loads_board
from router.check import check, warnings
from router.cli import main
from router.deadends import dead_items, remove_dead_ends
from router.draw import board_figure
from router.negotiate import route_board

HEAD = """format = 1
[board]
name = "moved"
size = [40.0, 20.0]
copper_layers = {layers}
[[parts]]
ref = "R1"
footprint = "axial-10.16"
at = [10.0, 5.0]
[[parts]]
ref = "R2"
footprint = "axial-10.16"
at = [10.0, 15.0]
[[nets]]
name = "A"
pins = ["R1.1", "R1.2"]
[[nets]]
name = "B"
pins = ["R2.1", "R2.2"]
"""


def tr(net, pts, fixed=False, width=0.25, layer="top"):
    body = ", ".join(f"[{x}, {y}]" for x, y in pts)
    return (f'[[traces]]\nnet = "{net}"\nlayer = "{layer}"\nwidth = {width}\npoints = [{body}]\n'
            f'fixed = {"true" if fixed else "false"}\n')


def make(extra, layers=2):
    return loads_board(HEAD.format(layers=layers) + extra)


# R1's pads sit at (4.92, 5) and (15.08, 5); A is joined by a straight trace. A stub of A runs from
# the pad at (15.08, 5) up to (15.08, 8) and right to (20, 8): where R1 used to have a pad. Its
# far end touches nothing: 3 + 4.92 = 7.92 mm of dead copper, one stub.
JOINED = tr("A", [(4.92, 5.0), (15.08, 5.0)]) + tr("B", [(4.92, 15.0), (15.08, 15.0)])
STUB = tr("A", [(15.08, 5.0), (15.08, 8.0), (20.0, 8.0)])


def test_a_stub_that_ends_in_the_air_is_removed_and_measured():
    b = make(JOINED + STUB)
    assert any(w.rule == "dangling_end" for w in warnings(b))
    out, gone = remove_dead_ends(b)
    assert gone.stubs == 1 and gone.nets == ["A"]
    assert gone.length == pytest.approx(3.0 + 4.92, abs=1e-9)          # by hand
    assert len(out.traces) == 2 and not any(w.rule == "dangling_end" for w in warnings(out))
    # the copper left is exactly the joined copper (shapely: the union of what stays)
    kept = [LineString(t.points) for t in out.traces]
    assert sum(k.length for k in kept) == pytest.approx(2 * 10.16, abs=1e-9)


def test_fixed_copper_stays_and_anchors_what_touches_it():
    b = make(JOINED + tr("A", [(15.08, 5.0), (15.08, 8.0)], fixed=True) + tr("A", [(15.08, 8.0), (18.0, 8.0)]))
    out, gone = remove_dead_ends(b)
    # the unfixed piece beyond the fixed one ends in the air: it goes; the fixed one stays
    assert gone.stubs == 1 and gone.length == pytest.approx(2.92, abs=1e-9)
    assert any(t.fixed and t.points == [(15.08, 5.0), (15.08, 8.0)] for t in out.traces)


def test_a_trace_joining_two_pads_and_a_t_junction_are_not_dead_ends():
    tee = tr("A", [(10.0, 5.0), (10.0, 8.0), (4.92, 8.0), (4.92, 5.0)])   # a loop back to the pad
    b = make(JOINED + tee)
    assert dead_items(b) == set()
    assert remove_dead_ends(b)[1].stubs == 0


def test_a_via_into_nothing_and_its_trace_go_together():
    # A leaves the pad on top, drops through a via at (15.08, 9) and ends there: the via touches
    # one trace only (a trace that changes layer into nothing), so via and trace are dead.
    via = '[[vias]]\nnet = "A"\nat = [15.08, 9.0]\n'
    b = make(JOINED + tr("A", [(15.08, 5.0), (15.08, 9.0)]) + via)
    out, gone = remove_dead_ends(b)
    assert (gone.stubs, gone.vias) == (1, 1) and gone.length == pytest.approx(4.0, abs=1e-9)
    assert out.vias == []
    # a via that carries the net on to the other layer and back to a pad is kept
    on = tr("A", [(15.08, 9.0), (4.92, 9.0), (4.92, 5.0)], layer="bottom")
    b2 = make(JOINED + tr("A", [(15.08, 5.0), (15.08, 9.0)]) + via + on)
    assert remove_dead_ends(b2)[1].stubs == 0


def test_a_jumper_whose_far_end_lands_nowhere_is_removed():
    # one layer: the copper is bottom; a jumper from the pad at (15.08, 5) to (15.08, 10.08) lands on nothing
    j = '[[jumpers]]\nnet = "A"\nfrom = [15.08, 5.0]\nto = [15.08, 10.08]\n'
    b = make(tr("A", [(4.92, 5.0), (15.08, 5.0)], layer="bottom") + j, layers=1)
    out, gone = remove_dead_ends(b)
    assert (gone.stubs, gone.jumpers) == (1, 1) and out.jumpers == []


def test_an_island_loop_touching_no_pad_is_removed():
    loop = tr("B", [(25.0, 5.0), (30.0, 5.0), (30.0, 8.0), (25.0, 8.0), (25.0, 5.0)])
    b = make(JOINED + loop)
    out, gone = remove_dead_ends(b)
    assert gone.stubs == 1 and gone.length == pytest.approx(16.0, abs=1e-9)     # 5 + 3 + 5 + 3


def test_route_removes_dead_ends_and_says_how_much(tmp_path, capsys):
    src = tmp_path / "moved.toml"
    src.write_text(HEAD.format(layers=2) + JOINED + STUB)
    out = tmp_path / "routed.toml"
    assert main(["route", str(src), "-o", str(out)]) == 0
    text = capsys.readouterr().out
    assert "removed 1 dead-end stub that touched nothing of their net: 7.92 mm of trace (A)" in text
    routed = load_board(out)
    assert not any(w.rule == "dangling_end" for w in warnings(routed)) and check(routed) == []
    assert main(["route", str(src), "-o", str(out), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["removed"] == {"stubs": 1, "length": 7.92, "vias": 0, "jumpers": 0, "nets": ["A"]}
    # --reroute removes all unfixed copper anyway and has nothing to say about stubs
    assert main(["route", str(src), "-o", str(out), "--reroute"]) == 0
    assert "dead-end" not in capsys.readouterr().out


def test_route_result_lengths_leave_out_the_removed_stub():
    b = make(JOINED + STUB)
    r = route_board(b)
    assert r.removed.stubs == 1
    assert r.figures["totals"]["length"] == pytest.approx(2 * 10.16, abs=1e-6)


def test_picture_title_counts_warnings():
    b = make(JOINED + STUB)
    vs = check(b)
    fig, _ = board_figure(b, violations=vs, dpi=40)
    titles = [t.get_text() for t in fig.texts]
    n = len(warnings(b))
    assert n >= 1
    assert any(f"0 violations, {n} warning" in t for t in titles), titles


def test_page_lists_warnings_beside_violations():
    from router.page import page_html
    b = make(JOINED + STUB)
    n = len(warnings(b))
    html = page_html(b, violations=check(b))
    assert n >= 1 and f"<h2>Warnings ({n})</h2>" in html and "dangling_end" in html
