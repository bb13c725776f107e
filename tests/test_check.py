"""The checks of `elbowroom check`: hand-computed distances, limits, one planted defect per rule."""
import json
import math

import pytest
from hypothesis import given, settings, strategies as st
from shapely.geometry import LineString

from router.boardfile import loads_board
from router.check import RULES, check, format_violations, violations_json, warnings
from router.copper import CopperItem, copper_items, distance
from router.geometry import segment_shape
from router.model import Board, Net, NetClass, Trace
from router.rules import ipc2221_spacing, ipc2221_width_for_current

# Two axial resistors, one net each, each joined by a straight top trace; a mounting hole.
# R1 pads at (4.92, 5) and (15.08, 5); R2 pads at (4.92, 15) and (15.08, 15); circles 1.8, drill 0.9.
BASE = """format = 1
[board]
name = "t"
size = [40.0, 20.0]
[[parts]]
ref = "R1"
footprint = "axial-10.16"
at = [10.0, 5.0]
[[parts]]
ref = "R2"
footprint = "axial-10.16"
at = [10.0, 15.0]
[[parts]]
ref = "H1"
footprint = "hole-3.2"
at = [33.0, 10.0]
[[nets]]
name = "A"
pins = ["R1.1", "R1.2"]
[[nets]]
name = "B"
pins = ["R2.1", "R2.2"]
[[traces]]
net = "A"
layer = "top"
width = 0.25
points = [[4.92, 5.0], [15.08, 5.0]]
[[traces]]
net = "B"
layer = "top"
width = 0.25
points = [[4.92, 15.0], [15.08, 15.0]]
"""


def board(extra="", base=BASE):
    return loads_board(base + extra)


def trace(net, pts, width=0.25, layer="top"):
    body = ", ".join(f"[{x}, {y}]" for x, y in pts)
    return f'[[traces]]\nnet = "{net}"\nlayer = "{layer}"\nwidth = {width}\npoints = [{body}]\n'


def rules_of(vs):
    return sorted(v.rule for v in vs)


def only(vs, rule):
    found = [v for v in vs if v.rule == rule]
    assert len(found) == 1, [v.message for v in vs]
    return found[0]


# ---------------------------------------------------------------- hand-computed distances

def test_rect_pad_to_circle_pad():
    # hand computed: box (0,0)-(2,1) to a circle of radius 0.5 at (5,4): corner (2,1) to (5,4)
    # is sqrt(18), less the radius
    b = board("""[footprints.two]
body = [1.0, 1.0]
pads = [{ pin = "1", offset = [-24.0, -5.5], shape = "rectangle", size = [2.0, 1.0] },
        { pin = "2", offset = [-20.0, -2.0], shape = "round", size = [1.0, 1.0] }]
[[parts]]
ref = "X1"
footprint = "two"
at = [25.0, 6.0]
""")
    pads = [it for it in copper_items(b) if it.source.startswith("pad X1")]
    assert distance(pads[0], pads[1]) == pytest.approx(math.sqrt(18) - 0.5, abs=1e-12)


def test_rotated_part_pads():
    # sot-23 rotated 90 at (10, 10): pad 1 local (-0.95, -1.1) 0.6 x 0.7 goes to (11.1, 9.05), 0.7 x 0.6;
    # pad 3 local (0, 1.1) goes to (8.9, 10.0). Gaps 1.5 in x and 0.35 in y: hand computed
    b = board("""[[parts]]
ref = "Q1"
footprint = "sot-23"
at = [25.0, 10.0]
rotation = 90
""")
    pads = {it.pad.pin: it for it in copper_items(b) if it.kind == "pad" and it.pad.ref == "Q1"}
    assert pads["1"].core.bounds == pytest.approx((25.75, 8.75, 26.45, 9.35))
    assert distance(pads["1"], pads["3"]) == pytest.approx(math.hypot(1.5, 0.35), abs=1e-12)


@pytest.mark.parametrize("a,b,wa,wb,expected", [
    (((0, 0), (1, 0)), ((1.5, 0), (3, 0)), 0.4, 0.2, 0.2),        # end to end in line
    (((0, 0), (1, 0)), ((1.3, 0.4), (1.3, 2)), 0.4, 0.2, 0.2),    # round ends 0.5 apart (3-4-5)
    (((0, 0), (4, 0)), ((2, 1), (2, 3)), 0.2, 0.2, 0.8),          # end to the side of a segment
    (((0, 0), (4, 0)), ((2, -1), (2, 3)), 0.2, 0.2, -0.2),        # crossing: overlap
])
def test_round_trace_ends(a, b, wa, wb, expected):
    # hand computed: centre-line distance less the two half widths
    ta = CopperItem("trace", "A", ("top",), "a", LineString(a), wa / 2)
    tb = CopperItem("trace", "B", ("top",), "b", LineString(b), wb / 2)
    assert distance(ta, tb) == pytest.approx(expected, abs=1e-12)
    # reference: shapely on the buffered polygons agrees within the polygon error (shapely)
    if expected > 0:
        poly = segment_shape(*a, wa).distance(segment_shape(*b, wb))
        assert poly == pytest.approx(expected, abs=2e-3)


# ---------------------------------------------------------------- limits

def test_clean_board_reports_nothing():
    b = board()
    assert check(b) == []
    assert format_violations([], b) == "no violations"
    assert violations_json([]) == {"violations": [], "counts": {}}


def test_exactly_at_the_limit_meets_and_one_micron_short_fails():
    # default clearance 0.2: traces 0.25 wide with centres 0.45 apart leave exactly 0.2 (common practice)
    at_limit = board(trace("B", [(7.0, 5.45), (13.0, 5.45)]))
    assert check(at_limit) == []
    short = board(trace("B", [(7.0, 5.449), (13.0, 5.449)]))
    v = only(check(short), "clearance")
    assert v.nets == ["A", "B"] and v.layer == "top"
    assert v.actual == pytest.approx(0.199) and v.required == pytest.approx(0.2)
    assert 7.0 <= v.at[0] <= 13.0 and v.at[1] == pytest.approx((5.0 + 0.125 + 5.449 - 0.125) / 2)
    assert "A and B on top: 0.20 mm apart at" in v.message and "0.20 mm required" in v.message


# ---------------------------------------------------------------- one planted defect per rule

def test_clearance_defect():
    v = only(check(board(trace("B", [(7.0, 5.4), (13.0, 5.4)]))), "clearance")
    assert v.actual == pytest.approx(0.15) and v.at[1] == pytest.approx(5.2)


def test_short_defect():
    vs = check(board(trace("B", [(10.0, 3.0), (10.0, 8.0)])))   # crosses trace A at (10, 5)
    v = only(vs, "short")
    assert rules_of(vs) == ["short"]
    assert v.nets == ["A", "B"] and v.layer == "top"
    assert v.at == pytest.approx((10.0, 5.0), abs=0.13)


def test_short_on_the_other_layer_is_none():
    assert check(board(trace("B", [(10.0, 3.0), (10.0, 8.0)], layer="bottom"))) == []


def test_open_defect():
    b = board()
    b.traces[0].points = [(4.92, 5.0), (9.0, 5.0)]
    vs = check(b)
    v = only(vs, "open")
    assert rules_of(vs) == ["open"]
    assert v.nets == ["A"] and v.at == (15.08, 5.0)
    assert [w.at for w in warnings(b)] == [(9.0, 5.0)]        # the dangling end


def test_open_across_layers_joined_by_a_via():
    b = board(
        '[[vias]]\nnet = "A"\nat = [10.0, 5.0]\ndrill = 0.4\ndiameter = 0.8\n')
    b.traces[0].points = [(4.92, 5.0), (10.0, 5.0)]
    b.traces.append(Trace("A", "bottom", 0.25, [(10.0, 5.0), (15.08, 5.0)]))
    assert check(b) == []
    b.vias.clear()
    assert rules_of(check(b)) == ["open"]


def test_edge_defect():
    # a stub 0.25 wide ending 0.5 from the bottom edge: 0.375 mm of copper to edge, 0.5 required
    v = only(check(board(trace("A", [(4.92, 5.0), (4.92, 0.5)]))), "edge")
    assert v.actual == pytest.approx(0.375) and v.required == 0.5
    assert v.at == pytest.approx((4.92, 0.5)) and v.nets == ["A"]


def test_edge_off_the_board():
    v = only(check(board(trace("A", [(15.08, 5.0), (45.0, 5.0)]))), "edge")
    assert "off the board" in v.message and v.at[0] > 40.0


def test_edge_near_a_non_plated_hole():
    # hole-3.2 at (33, 10): a trace at x = 31.0 leaves 2.0 - 1.6 - 0.125 = 0.275 mm (hand computed)
    v = only(check(board(trace("B", [(15.08, 15.0), (31.0, 15.0), (31.0, 10.0)]))), "edge")
    assert v.actual == pytest.approx(0.275) and v.at == pytest.approx((31.0, 10.0))


def test_keepout_defect_and_touching_edge():
    ko = '[[keepouts]]\nrect = [20.0, 0.0, 25.0, 20.0]\n'
    v = only(check(board(ko + trace("A", [(15.08, 5.0), (22.0, 5.0)]))), "keepout")
    assert v.nets == ["A"] and 20.0 <= v.at[0] <= 22.0 and v.at[1] == 5.0
    # the round end touches the keepout's edge exactly: allowed
    assert check(board(ko + trace("A", [(15.08, 5.0), (19.875, 5.0)]))) == []
    # a keepout on the bottom only does not stop top copper
    ko_b = '[[keepouts]]\nlayers = ["bottom"]\nrect = [20.0, 0.0, 25.0, 20.0]\n'
    assert check(board(ko_b + trace("A", [(15.08, 5.0), (22.0, 5.0)]))) == []


def test_keepout_body():
    fp = """[footprints.quiet]
body = [4.0, 4.0]
keepout_body = true
pads = [{ pin = "1", offset = [0.0, 0.0], shape = "round", size = [1.6, 1.6], drill = 0.8 }]
[[parts]]
ref = "K1"
footprint = "quiet"
at = [25.0, 10.0]
"""
    v = only(check(board(fp + trace("B", [(15.08, 15.0), (25.0, 15.0), (25.0, 11.5)]))), "keepout")
    assert v.nets == ["B"] and "K1" in v.message and v.at[1] < 12.0
    assert check(board(fp + trace("B", [(15.08, 15.0), (25.0, 15.0), (25.0, 12.125)]))) == []


def test_width_defect():
    b = board()
    b.traces[1].width = 0.2
    v = only(check(b), "width")
    assert v.nets == ["B"] and v.actual == 0.2 and v.required == 0.25 and v.at == (10.0, 15.0)


def test_drill_ring_and_hole_spacing():
    via = '[[vias]]\nnet = "A"\nat = [{x}, 10.0]\ndrill = {d}\ndiameter = {D}\n'
    v = only(check(board(via.format(x=20.0, d=0.25, D=0.8))), "drill")
    assert v.actual == 0.25 and v.required == 0.3 and v.at == (20.0, 10.0)
    v = only(check(board(via.format(x=20.0, d=0.4, D=0.6))), "annular_ring")
    assert v.actual == pytest.approx(0.1) and v.required == 0.15
    # two vias of one net: drill walls exactly 0.5 apart meet, 0.4 apart do not (hand computed)
    assert check(board(via.format(x=20.0, d=0.4, D=0.8) + via.format(x=20.9, d=0.4, D=0.8))) == []
    v = only(check(board(via.format(x=20.0, d=0.4, D=0.8) + via.format(x=20.8, d=0.4, D=0.8))),
             "hole_spacing")
    assert v.actual == pytest.approx(0.4) and v.at == pytest.approx((20.4, 10.0))


def test_current_defect():
    # IPC-2221 formula: 1 A at 10 C rise in 1 oz outer copper needs about 0.30 mm (worked example)
    cls = "[classes.power]\ntrace_width = 0.25\nclearance = 0.2\ncurrent = 1.0\n"
    b = board(cls)
    b.nets[0].net_class = "power"
    v = only(check(b), "current")
    assert v.nets == ["A"] and v.actual == 0.25 and v.required == pytest.approx(0.30, abs=0.005)
    ok = board(cls.replace("0.25", "0.35"))
    ok.nets[0].net_class = "power"
    ok.traces[0].width = 0.35
    assert check(ok) == []
    ok.traces[0].width = 0.28     # below the class's 0.35 and below IPC-2221's 0.30: both rules
    assert rules_of(check(ok)) == ["current", "width"]


def test_voltage_defect():
    # IPC-2221 Table 6-1 B2: 31-150 V needs 0.6 mm (from memory of the published table)
    b = board("[classes.hv]\ntrace_width = 0.25\nclearance = 0.3\nvoltage = 60.0\n")
    b.nets[1].net_class = "hv"
    v = only(check(b), "voltage")
    assert v.nets == ["B"] and v.actual == 0.3 and v.required == 0.6


def test_voltage_raises_the_clearance():
    # IPC-2221 Table 6-1 B2, 31-150 V: 0.6 mm (from memory): the class's 0.3 is raised to 0.6
    cls = "[classes.hv]\ntrace_width = 0.25\nclearance = 0.3\nvoltage = 60.0\n"
    b = board(cls + trace("B", [(7.0, 5.65), (13.0, 5.65)]))   # 0.65 apart: 0.4 mm of gap
    b.nets[1].net_class = "hv"
    vs = check(b)
    assert rules_of(vs) == ["clearance", "voltage"]
    v = only(vs, "clearance")
    assert v.actual == pytest.approx(0.4) and v.required == 0.6
    b.nets[1].net_class = "default"
    assert check(b) == []


BLOBS = """[footprints.blob]
body = [4.0, 4.0]
pads = []
"""


def test_placement_overlap_and_off_board():
    b = board(BLOBS + '[[parts]]\nref = "P1"\nfootprint = "blob"\nat = [25.0, 10.0]\n'
                      '[[parts]]\nref = "P2"\nfootprint = "blob"\nat = [28.0, 11.0]\n')
    v = only(check(b), "placement")
    assert v.at == pytest.approx((26.5, 10.5)) and "P1 and P2" in v.message
    # bodies that only touch do not overlap
    b.part("P2").at = (29.0, 10.0)
    assert check(b) == []
    b.part("P2").at = (38.5, 4.0)
    assert "off the board" in only(check(b), "placement").message


ONE_LAYER = """format = 1
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
[[jumpers]]
net = "A"
from = [4.92, 5.0]
to = [15.08, 5.0]
"""


def test_jumper_wire_over_a_body_and_crossing_jumpers():
    b = loads_board(ONE_LAYER)
    v = only(check(b), "placement")          # the wire runs over R1's own body
    assert "R1" in v.message and "wire" in v.message
    b.part("R1").at = (10.0, 5.0)
    b.jumpers[0].start, b.jumpers[0].end = (4.92, 5.0), (4.92, 12.0)
    b.traces.append(Trace("A", "bottom", 0.25, [(4.92, 12.0), (15.08, 12.0), (15.08, 5.0)]))
    assert check(b) == []
    from router.model import Jumper
    b.nets.append(Net("C", []))
    b.jumpers.append(Jumper("C", (2.0, 9.0), (8.0, 9.0), 0.8, 1.6))
    v = only(check(b), "placement")
    assert "cross" in v.message and v.at == pytest.approx((4.92, 9.0))


def test_lone_pad_is_a_net_of_its_own():
    # a pad in no net: trace A runs over it -> a short with the pad's own net
    b = board('[[parts]]\nref = "R9"\nfootprint = "chip-0805"\nat = [10.0, 5.5]\nrotation = 90\n')
    vs = [v for v in check(b) if v.rule == "short"]
    assert vs and all("A" in v.nets for v in vs)
    assert any("R9.1 (no net)" in v.message or "R9.2 (no net)" in v.message for v in vs)


def test_json_and_human_output():
    b = board(trace("B", [(10.0, 3.0), (10.0, 8.0)]))
    vs = check(b)
    out = violations_json(vs)
    assert set(out) == {"violations", "counts"} and out["counts"] == {"short": 1}
    assert set(out["violations"][0]) == {"rule", "nets", "layer", "at", "actual", "required", "message"}
    json.dumps(out)
    text = format_violations(vs, b)
    assert text.splitlines()[0] == "short (1):"
    assert all(v.rule in RULES for v in vs)


# ---------------------------------------------------------------- property (hypothesis)

def _two_traces(gap, shift):
    b = Board("p", [(0, 0), (100, 0), (100, 100), (0, 100)])
    b.nets = [Net("A", []), Net("B", [])]
    b.traces = [Trace("A", "top", 0.25, [(30.0, 50.0), (60.0, 50.0)]),
                Trace("B", "top", 0.25, [(30.0 + shift, 50.0 + gap), (60.0 + shift, 50.0 + gap)])]
    return b


@settings(max_examples=60, deadline=None)
@given(gap=st.floats(0.0, 2.0), more=st.floats(0.0, 2.0), shift=st.floats(-10.0, 10.0))
def test_moving_traces_apart_never_adds_a_violation(gap, more, shift):
    # property (common practice): clearance is monotone in distance. A short may turn into a
    # clearance violation as the traces part, but the count never grows and no other rule appears
    near = check(_two_traces(gap, shift))
    far = check(_two_traces(gap + more, shift))
    assert len(far) <= len(near)
    allowed = {v.rule for v in near} | ({"clearance"} if any(v.rule == "short" for v in near) else set())
    assert {v.rule for v in far} <= allowed
    if any(v.rule == "clearance" for v in near) and any(v.rule == "clearance" for v in far):
        assert min(v.actual for v in far) >= min(v.actual for v in near) - 1e-9


# IPC-2221 Table 6-1, column B2 (external, uncoated, sea level to 3050 m), one voltage per band;
# values from memory of the published table. The check's required spacing follows the band.
@pytest.mark.parametrize("volts,mm", [(12.0, 0.1), (24.0, 0.1), (48.0, 0.6), (120.0, 0.6),
                                      (160.0, 1.25), (230.0, 1.25), (300.0, 1.25), (400.0, 2.5)])
def test_voltage_band_b2(volts, mm):
    assert ipc2221_spacing(volts, "B2") == mm
    b = board(f"[classes.hv]\ntrace_width = 0.25\nclearance = 0.2\nvoltage = {volts}\n")
    b.nets[1].net_class = "hv"
    found = [v for v in check(b) if v.rule == "voltage"]
    if mm > 0.2:
        assert len(found) == 1 and found[0].required == mm
    else:
        assert found == []


def test_current_worked_example_through_the_check():
    # IPC-2221 section 6.2 worked example: 1 A, 10 C rise, 1 oz outer copper -> about 0.30 mm
    assert ipc2221_width_for_current(1.0, 1.0, 10.0) == pytest.approx(0.30, abs=0.005)
    b = board("[rules]\ncopper_oz = 2.0\n[classes.power]\ntrace_width = 0.25\nclearance = 0.2\ncurrent = 1.0\n")
    b.nets[0].net_class = "power"
    assert [v.rule for v in check(b)] == []       # 2 oz halves the width: 0.15 mm is enough


def test_unplaced_part_leaves_its_net_open():
    b = board()
    b.part("R2").at = None
    b.traces.pop()
    vs = check(b)
    assert rules_of(vs) == ["open"]                  # R2.1 and R2.2 loose: two pieces, one cut off
    b.nets[1].pins = ["R2.1"]
    assert check(b) == []                            # a one-pin net is routed
