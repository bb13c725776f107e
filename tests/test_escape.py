"""Pad escape, necks and a footprint's own pad spacing (router.escape), and the real-looking boards.

Outside references: JEDEC MO-220 (quad no-lead packages at 0.5 mm pitch with leads 0.18 to
0.30 mm wide: our test row uses 0.25 mm pads, 0.25 mm apart); the contract's "Conventions"
for the own-pad rule; shapely for the exact distances the tests measure on their own.
"""
from __future__ import annotations

import pytest
from shapely.geometry import LineString, box

import router.nets as nets_mod
from router.boardfile import dumps_board, loads_board
from router.check import check, warnings
from router.errors import BoardError
from router.escape import NECK_LENGTH, neck_traces, own_gaps
from router.figures import board_figures, format_report, trace_length
from router.geometry import placed_pads
from router.negotiate import route_board
from router.realgen import real_board
from router.rules import own_pad_clearance
from router.units import TOL

PITCH = 0.5          # JEDEC MO-220 0.5 mm pitch
PAD_W = 0.25         # within MO-220's 0.18-0.30 mm lead width


def row_board(clearance: float, width: float = 0.25, n: int = 6, extra_class: str = "") -> str:
    """A part with two rows of n pads at 0.5 mm pitch (0.25 x 0.8 mm), each pad to its own 0603."""
    pads = []
    for k in range(n):
        x = (k - (n - 1) / 2) * PITCH
        pads.append(f'{{ pin = "{k + 1}", offset = [{x:.3f}, -1.6], shape = "rectangle", size = [{PAD_W}, 0.8] }}')
        pads.append(f'{{ pin = "{2 * n - k}", offset = [{x:.3f}, 1.6], shape = "rectangle", size = [{PAD_W}, 0.8] }}')
    txt = f'''format = 1
[board]
name = "fine-row"
size = [18.0, 16.0]
[rules]
grid = 0.25
[classes.default]
trace_width = {width}
clearance = {clearance}
{extra_class}
[footprints.row-{2 * n}]
body = [3.4, 3.0]
pads = [{", ".join(pads)}]
[[parts]]
ref = "U1"
footprint = "row-{2 * n}"
at = [9.0, 8.0]
'''
    for k in range(n):
        x = 9.0 + (k - (n - 1) / 2) * 2.0
        txt += f'[[parts]]\nref = "R{k + 1}"\nfootprint = "chip-0603"\nat = [{x:.2f}, 3.0]\nrotation = 90\n'
        txt += f'[[parts]]\nref = "C{k + 1}"\nfootprint = "chip-0603"\nat = [{x:.2f}, 13.0]\nrotation = 90\n'
    for k in range(n):
        txt += f'[[nets]]\nname = "A{k + 1}"\npins = ["U1.{k + 1}", "R{k + 1}.2"]\n'
        txt += f'[[nets]]\nname = "B{k + 1}"\npins = ["U1.{2 * n - k}", "C{k + 1}.1"]\n'
    return txt


def test_fine_pitch_row_routes_and_checks_clean():
    """0.25 mm pads at 0.5 mm pitch, 0.2 mm class clearance: every net routed, no violation."""
    b = loads_board(row_board(0.2))
    r = route_board(b)
    assert r.failed == {}
    assert check(r.board) == []


def test_class_clearance_wider_than_own_gap():
    """A 0.3 mm class clearance beside pads 0.25 mm apart: the footprint's business. The router
    reaches every pad; check warns once for the part, reports no violation, and does with --strict."""
    b = loads_board(row_board(0.3))
    assert own_gaps(b)["U1"][0] == pytest.approx(PITCH - PAD_W)
    r = route_board(b)
    assert r.failed == {}
    assert check(r.board) == []
    ws = [w for w in warnings(r.board) if w.rule == "own_pad_gap"]
    assert len(ws) == 1 and "U1" in ws[0].message and "row-12" in ws[0].message
    assert ws[0].actual == pytest.approx(0.25) and ws[0].required == pytest.approx(0.3)
    strict = [v for v in check(r.board, strict=True) if v.rule == "clearance"]
    assert strict and all("U1." in v.message for v in strict)


def test_own_gap_below_house_minimum_is_a_violation():
    """Pads 0.1 mm apart are below rules.min_clearance (0.15): a violation even without --strict."""
    txt = row_board(0.2).replace("size = [0.25, 0.8]", "size = [0.4, 0.8]")
    b = loads_board(txt)
    vs = [v for v in check(b) if v.rule == "clearance"]
    assert vs and all(v.actual == pytest.approx(0.1) and v.required == pytest.approx(0.15) for v in vs)


def test_neck_where_the_class_width_does_not_fit():
    """A 0.35 mm class beside 0.25 mm gaps: the exits narrow to neck_width for at most neck_length,
    each a trace of its own that report counts; a narrow trace elsewhere is still a width violation."""
    b = loads_board(row_board(0.25, width=0.35))
    nc = b.classes["default"]
    assert nc.neck_width is None and nc.neck_length is None        # defaults: min_trace_width, NECK_LENGTH
    r = route_board(b)
    assert r.failed == {}
    assert check(r.board) == []
    necks = neck_traces(r.board)
    assert necks
    pads = {(p.net): p for p in placed_pads(r.board) if p.ref == "U1"}
    for ti in necks:
        t = r.board.traces[ti]
        assert t.width == pytest.approx(b.rules.min_trace_width)
        assert trace_length(t.points) <= NECK_LENGTH + TOL
        p = pads[t.net]
        assert box(*p.bounds()).distance(LineString(t.points) if len(t.points) > 1 else None) <= TOL
    figs = board_figures(r.board)
    assert figs["totals"]["necks"] == len(necks)
    assert sum(n["necks"] for n in figs["nets"]) == len(necks)
    assert f"necks: {len(necks)}" in format_report(figs, r.board)
    # the same narrow width far from any pad is a width violation
    bad = r.board.copy()
    t = bad.traces[next(iter(necks))]
    bad.traces.append(type(t)(t.net, t.layer, t.width, [(1.0, 1.0), (1.0, 2.0)]))
    assert any(v.rule == "width" for v in check(bad))


def test_exits_keep_the_relaxed_rule_exactly():
    """Shapely's distance from every trace near the part to the part's other pads is at least the
    own-pad rule (larger of min_clearance and the footprint's gap, capped by the class clearance)."""
    b = loads_board(row_board(0.3))
    r = route_board(b)
    gap = own_gaps(b)["U1"][0]
    rule = own_pad_clearance(b, 0.3, gap)
    assert rule == pytest.approx(0.25)
    u1 = [p for p in placed_pads(r.board) if p.ref == "U1"]
    near = 0
    for t in r.board.traces:
        line = LineString(t.points)
        for p in u1:
            if p.net == t.net or t.layer not in p.layers:
                continue
            d = line.distance(box(*p.bounds())) - t.width / 2
            if d < 0.3:
                near += 1
            assert d >= rule - TOL
    assert near, "some exit runs beside a neighbouring pad closer than the class clearance"


def test_neck_keys_validate_and_round_trip():
    extra = "[classes.fine]\ntrace_width = 0.3\nclearance = 0.2\nneck_width = 0.18\nneck_length = 0.8\n"
    b = loads_board(row_board(0.2, extra_class=extra))
    assert (b.classes["fine"].neck_width, b.classes["fine"].neck_length) == (0.18, 0.8)
    b2 = loads_board(dumps_board(b))
    assert (b2.classes["fine"].neck_width, b2.classes["fine"].neck_length) == (0.18, 0.8)
    with pytest.raises(BoardError, match="neck_width"):
        loads_board(row_board(0.2, extra_class=extra.replace("0.18", "0.1")))
    with pytest.raises(BoardError, match="neck_length"):
        loads_board(row_board(0.2, extra_class=extra.replace("0.8", "-1")))


def test_neck_width_below_minimum_exits_2(tmp_path, capsys):
    from router.cli import main
    f = tmp_path / "b.toml"
    f.write_text(row_board(0.2, extra_class="[classes.fine]\ntrace_width = 0.3\nclearance = 0.2\nneck_width = 0.05\n"))
    assert main(["check", str(f)]) == 2
    err = capsys.readouterr().err
    assert "neck_width" in err and len(err.strip().splitlines()) == 1


def test_real_looking_board_routes_clean():
    """A generated board with a 0.5 mm pitch part, its supply and ground, passives and a 0.5 mm connector."""
    b = loads_board(dumps_board(real_board(3, 40)))
    assert any(f.startswith(("quad-", "dual-")) for f in b.footprints)
    assert any(f.startswith("flat-") for f in b.footprints)
    assert max(len(n.pins) for n in b.nets) >= 6
    r = route_board(b)
    assert r.failed == {}
    assert check(r.board) == []


def test_unreachable_pad_found_once(monkeypatch):
    """A 3 mm class beside its part's other pad, necks allowed only 0.2 mm: no exit reaches the grid.
    The net is reported with the pad and the reason, and the pad is looked at once, not every pass."""
    txt = '''format = 1
[board]
name = "fat"
size = [20.0, 12.0]
[rules]
via_diameter = 1.0
[classes.fat]
trace_width = 3.0
clearance = 0.2
neck_length = 0.2
[[parts]]
ref = "R1"
footprint = "chip-0603"
at = [6.0, 6.0]
[[parts]]
ref = "R2"
footprint = "chip-0603"
at = [14.0, 6.0]
[[nets]]
name = "A"
pins = ["R1.1", "R2.1"]
class = "fat"
[[nets]]
name = "B"
pins = ["R1.2", "R2.2"]
'''
    b = loads_board(txt)
    calls = []
    real = nets_mod._access

    def counting(grid, space, net, pad, others=None):
        if pad.name == "R1.1":
            calls.append(others is None)
        return real(grid, space, net, pad, others)
    monkeypatch.setattr(nets_mod, "_access", counting)
    r = route_board(b, retries=0)
    assert "A" in r.failed and "R1.1" in r.failed["A"] and "no open grid point" in r.failed["A"]
    assert "B" not in r.failed
    assert len(calls) == 1
