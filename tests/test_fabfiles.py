"""Fabrication files read back by an independent reader (gerbonara, tests only).

Every Gerber and drill file `export` writes is opened with gerbonara with its warnings
turned into errors, and the geometry it reads is compared with the board: each pad flashed
once at its place with its size, each trace segment drawn with its width, each hole at its
place with its drill (plated and non-plated apart), the outline's extent; and copper rebuilt
from the files passes our own check exactly as the board does.
"""
import glob
import re
import warnings
from collections import Counter
from pathlib import Path

import pytest
from hypothesis import given, settings, strategies as st
from gerbonara import ExcellonFile, GerberFile
from gerbonara.apertures import CircleAperture, ObroundAperture, RectangleAperture
from gerbonara.graphic_objects import Flash, Line
from shapely.geometry import LineString, Point as SPoint, box
from shapely.ops import polygonize, unary_union

from router.boardfile import load_board, loads_board
from router.check import check
from router.cli import main
from router.copper import copper_items
from router.errors import BoardError
from router.fabfiles import GLYPHS, SILK_GAP, SILK_WIDTH, export, file_names, text_strokes
from router.geometry import ARC_SEGMENTS, outline_polygon, placed_holes, placed_pads
from router.model import Trace, Via
from router.rules import CAUTION
from router.silkscreen import DOT

ROOT = Path(__file__).resolve().parent.parent
BOARD_FILES = sorted(glob.glob(str(ROOT / "boards" / "*.toml")))   # the demo board leaves parts unplaced

# A hand-routed two-layer board. R1, R2: axial resistors, pads (4.92, 5), (15.08, 5), (4.92, 15),
# (15.08, 15), circles 1.8 with drill 0.9. Q1: sot-23 turned 90 at (25, 10): pad 1 at (26.1, 9.05),
# 0.7 x 0.6 (hand computed, as in tests/test_check.py). X2: a footprint of two oval plated pads
# 2.0 x 1.0 at local (-2, 0) and (2, 0), turned 90 at (28, 16): pads at (28, 14) and (28, 18),
# 1.0 x 2.0. C1: a chip-0805 on the bottom side. H1: a 3.2 mm mounting hole at (33, 4).
# Net C goes from Q1.1 on top through a via at (27, 12) to X2.1 on the bottom. Net A has a
# planted fault: a bottom trace that ends 0.075 mm from R2.2 (one clearance violation).
HAND = """format = 1
[board]
name = "hand routed"
size = [40.0, 20.0]
[footprints.ovals]
body = [6.0, 2.0]
pads = [{ pin = "1", offset = [-2.0, 0.0], shape = "obround", size = [2.0, 1.0], drill = 0.6 },
        { pin = "2", offset = [2.0, 0.0], shape = "obround", size = [2.0, 1.0], drill = 0.6 }]
[[parts]]
ref = "R1"
footprint = "axial-10.16"
at = [10.0, 5.0]
[[parts]]
ref = "R2"
footprint = "axial-10.16"
at = [10.0, 15.0]
[[parts]]
ref = "Q1"
footprint = "sot-23"
at = [25.0, 10.0]
rotation = 90
[[parts]]
ref = "X2"
footprint = "ovals"
at = [28.0, 16.0]
rotation = 90
[[parts]]
ref = "C1"
footprint = "chip-0805"
at = [20.0, 10.0]
side = "bottom"
[[parts]]
ref = "H1"
footprint = "hole-3.2"
at = [35.0, 4.0]
[[nets]]
name = "A"
pins = ["R1.1", "R1.2"]
[[nets]]
name = "B"
pins = ["R2.1", "R2.2"]
[[nets]]
name = "C"
pins = ["Q1.1", "X2.1"]
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
[[traces]]
net = "A"
layer = "bottom"
width = 0.25
points = [[15.08, 5.0], [15.08, 13.9]]
[[traces]]
net = "C"
layer = "top"
width = 0.3
points = [[26.1, 9.05], [27.0, 9.05], [27.0, 12.0]]
[[traces]]
net = "C"
layer = "bottom"
width = 0.3
points = [[27.0, 12.0], [28.0, 12.0], [28.0, 14.0]]
[[vias]]
net = "C"
at = [27.0, 12.0]
drill = 0.4
diameter = 0.8
"""

# A hand-routed one-layer board: net A runs on the bottom from R1.2 to a jumper that crosses
# over to R2.2. Jumper ends (20, 5) and (20, 15): drill 0.8, diameter 1.6 (the defaults).
ONE_LAYER = """format = 1
[board]
name = "one layer"
size = [30.0, 20.0]
copper_layers = 1
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
pins = ["R1.2", "R2.2"]
[[traces]]
net = "A"
layer = "bottom"
width = 0.4
points = [[15.08, 5.0], [20.0, 5.0]]
[[traces]]
net = "A"
layer = "bottom"
width = 0.4
points = [[20.0, 15.0], [15.08, 15.0]]
[[jumpers]]
net = "A"
from = [20.0, 5.0]
to = [20.0, 15.0]
"""

# An L-shaped outline (hand drawn): extent 30 x 25, area 30*10 + 12*15 = 480.
L_SHAPED = """format = 1
[board]
name = "L shape"
outline = [[0, 0], [30, 0], [30, 10], [12, 10], [12, 25], [0, 25]]
[[parts]]
ref = "R1"
footprint = "axial-10.16"
at = [15.0, 5.0]
"""

UNPLACED = HAND.replace('ref = "C1"\nfootprint = "chip-0805"\nat = [20.0, 10.0]\n',
                        'ref = "C1"\nfootprint = "chip-0805"\n')

# Gerber coordinates are written in format 4.6 (1 nm) and read back as floats: the same within
# float round-off. Drill coordinates are written with four decimals (0.1 um).
GERBER_TOL = 1e-6
DRILL_TOL = 5e-5


def _boards():
    out = [(Path(f).name, load_board(f)) for f in BOARD_FILES]
    out += [("hand", loads_board(HAND)), ("one-layer", loads_board(ONE_LAYER)),
            ("l-shaped", loads_board(L_SHAPED))]
    return out


BOARDS = _boards()


@pytest.fixture(params=[b for b in BOARDS], ids=[name for name, _ in BOARDS])
def exported(request, tmp_path):
    _, board = request.param
    files = export(board, tmp_path / "fab")
    return board, files


def _read_gerber(path) -> GerberFile:
    with warnings.catch_warnings():
        warnings.simplefilter("error")        # the reader must accept the file without complaint
        return GerberFile.open(path)


def _read_drill(path) -> ExcellonFile:
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        return ExcellonFile.open(path)


def _role_path(board, files, role) -> Path:
    name = file_names(board)[role]
    return next(f for f in files if f.name == name)


def _function(obj) -> str:
    return ",".join(dict(obj.aperture.attrs or ())[".AperFunction"])


def _k(v: float, tol: float) -> int:
    return round(v / tol)


def _pad_key(x, y, shape, w, h, tol=GERBER_TOL):
    if shape == "obround" and abs(w - h) < 1e-9:
        shape = "round"
    if shape == "round":
        w = h = min(w, h)
    return (_k(x, tol), _k(y, tol), shape, _k(w, tol), _k(h, tol))


def _flash_key(f: Flash):
    ap = f.aperture
    if isinstance(ap, CircleAperture):
        return _pad_key(f.x, f.y, "round", ap.diameter, ap.diameter)
    if isinstance(ap, RectangleAperture):
        return _pad_key(f.x, f.y, "rectangle", ap.w, ap.h)
    if isinstance(ap, ObroundAperture):
        return _pad_key(f.x, f.y, "obround", ap.w, ap.h)
    raise AssertionError(f"unexpected aperture {ap}")


def _seg_key(a, b, width):
    a, b = sorted([(_k(a[0], GERBER_TOL), _k(a[1], GERBER_TOL)), (_k(b[0], GERBER_TOL), _k(b[1], GERBER_TOL))])
    return (a, b, _k(width, GERBER_TOL))


def _flash_shape(f: Flash):
    ap = f.aperture
    if isinstance(ap, CircleAperture):
        return SPoint(f.x, f.y).buffer(ap.diameter / 2, quad_segs=ARC_SEGMENTS)
    if isinstance(ap, RectangleAperture):
        return box(f.x - ap.w / 2, f.y - ap.h / 2, f.x + ap.w / 2, f.y + ap.h / 2)
    r = min(ap.w, ap.h) / 2
    if ap.w > ap.h:
        axis = LineString([(f.x - ap.w / 2 + r, f.y), (f.x + ap.w / 2 - r, f.y)])
    else:
        axis = LineString([(f.x, f.y - ap.h / 2 + r), (f.x, f.y + ap.h / 2 - r)])
    return axis.buffer(r, quad_segs=ARC_SEGMENTS)


# ----------------------------------------------------------------------------- the reader accepts every file

def test_every_file_read_back(exported):
    board, files = exported
    names = file_names(board)
    assert sorted(f.name for f in files) == sorted(names.values())
    assert all(f.exists() for f in files)
    # file functions as the Gerber specification names them (Ucamco, Gerber Layer Format, X2)
    expected = {"outline": ("Profile", "NP"), "silk-top": ("Legend", "Top"), "silk-bottom": ("Legend", "Bot")}
    for i, layer in enumerate(board.layers, start=1):
        side = {"top": "Top", "bottom": "Bot"}[layer]
        expected[f"copper-{layer}"] = ("Copper", f"L{i}", side)
        expected[f"mask-{layer}"] = ("Soldermask", side)
    for role, function in expected.items():
        g = _read_gerber(_role_path(board, files, role))
        assert g.file_attrs[".FileFunction"] == function, role
        polarity = g.file_attrs.get(".FilePolarity")
        if role.startswith("mask"):
            assert polarity == ("Negative",)     # the mask image is its openings (Gerber spec)
        else:
            assert polarity == ("Positive",)
        for obj in g.objects:                    # every aperture carries its function (X2)
            assert ".AperFunction" in dict(obj.aperture.attrs or ()), (role, obj)
    _read_drill(_role_path(board, files, "drill-plated"))
    _read_drill(_role_path(board, files, "drill-nonplated"))


def test_gerber_header_and_aperture_attributes(tmp_path):
    # Gerber spec: FS with 4.6 in mm, MO in mm; each aperture definition preceded by its
    # .AperFunction attribute. Checked in the text, the way a board house's reader sees it.
    board = loads_board(HAND)
    for f in export(board, tmp_path):
        if f.suffix != ".gbr":
            continue
        text = f.read_text()
        assert "%FSLAX46Y46*%" in text and "%MOMM*%" in text
        assert text.rstrip().endswith("M02*")
        current = None
        for line in text.splitlines():
            if line.startswith("%TA.AperFunction,"):
                current = line
            elif line == "%TD*%":
                current = None
            elif line.startswith("%ADD"):
                assert current is not None, (f.name, line)


# ----------------------------------------------------------------------------- copper

def test_each_pad_flashed_once_with_its_size(exported):
    board, files = exported
    pads = placed_pads(board)
    for layer in board.layers:
        g = _read_gerber(_role_path(board, files, f"copper-{layer}"))
        flashed = Counter(_flash_key(o) for o in g.objects
                          if isinstance(o, Flash) and _function(o) in ("SMDPad,CuDef", "ComponentPad")
                          and ".P" in o.attrs)
        want = Counter(_pad_key(p.x, p.y, p.shape, p.w, p.h) for p in pads if layer in p.layers)
        assert flashed == want
        assert max(flashed.values(), default=1) == 1
        # pad attributes name the pin (X2 object attribute .P)
        pins = Counter(o.attrs[".P"] for o in g.objects if isinstance(o, Flash) and ".P" in o.attrs)
        assert pins == Counter((p.ref, p.pin) for p in pads if layer in p.layers)


def test_surface_pads_only_on_their_side(tmp_path):
    board = loads_board(HAND)
    files = export(board, tmp_path)
    refs = {layer: {o.attrs[".P"][0] for o in _read_gerber(_role_path(board, files, f"copper-{layer}")).objects
                    if ".P" in o.attrs} for layer in board.layers}
    assert refs["top"] == {"R1", "R2", "Q1", "X2"}          # Q1 (sot-23) is surface, on top
    assert refs["bottom"] == {"R1", "R2", "X2", "C1"}       # C1 (chip-0805) is on the bottom


def test_rotated_pads_by_hand(tmp_path):
    # hand computed: sot-23 pad 1, local (-0.95, -1.1), 0.6 x 0.7, turned 90 about (25, 10) lands at
    # (26.1, 9.05) as 0.7 x 0.6; the oval 2.0 x 1.0 at local (-2, 0), turned 90 about (28, 16), lands
    # at (28, 14) as 1.0 x 2.0 (an upright obround).
    board = loads_board(HAND)
    g = _read_gerber(_role_path(board, export(board, tmp_path), "copper-top"))
    by_pin = {o.attrs[".P"]: o for o in g.objects if ".P" in o.attrs}
    q = by_pin[("Q1", "1")]
    assert isinstance(q.aperture, RectangleAperture)
    assert (q.x, q.y, q.aperture.w, q.aperture.h) == pytest.approx((26.1, 9.05, 0.7, 0.6), abs=GERBER_TOL)
    x = by_pin[("X2", "1")]
    assert isinstance(x.aperture, ObroundAperture)
    assert (x.x, x.y, x.aperture.w, x.aperture.h) == pytest.approx((28.0, 14.0, 1.0, 2.0), abs=GERBER_TOL)


def test_each_trace_segment_drawn_with_its_width(exported):
    board, files = exported
    for layer in board.layers:
        g = _read_gerber(_role_path(board, files, f"copper-{layer}"))
        lines = [o for o in g.objects if isinstance(o, Line)]
        assert all(_function(o) == "Conductor" for o in lines)
        assert all(isinstance(o.aperture, CircleAperture) for o in lines)   # round ends and corners
        drawn = Counter(_seg_key((o.x1, o.y1), (o.x2, o.y2), o.aperture.diameter) for o in lines)
        want = Counter(_seg_key(a, b, t.width) for t in board.traces if t.layer == layer
                       for a, b in zip(t.points, t.points[1:]) if tuple(a) != tuple(b))
        assert drawn == want


def test_vias_and_jumper_ends_flashed_on_every_layer(tmp_path):
    board = loads_board(HAND)
    files = export(board, tmp_path / "two")
    for layer in ("top", "bottom"):
        g = _read_gerber(_role_path(board, files, f"copper-{layer}"))
        vias = [o for o in g.objects if isinstance(o, Flash) and _function(o) == "ViaPad"]
        assert [v for o in vias for v in (o.x, o.y, o.aperture.diameter)] == pytest.approx([27.0, 12.0, 0.8])
    one = loads_board(ONE_LAYER)
    files = export(one, tmp_path / "one")
    g = _read_gerber(_role_path(one, files, "copper-bottom"))
    ends = sorted((o.x, o.y, o.aperture.diameter) for o in g.objects
                  if isinstance(o, Flash) and ".P" not in o.attrs)
    assert [v for e in ends for v in e] == pytest.approx([20.0, 5.0, 1.6, 20.0, 15.0, 1.6])


def test_copper_shapes_match_the_board(exported):
    # reference: shapely; the union of the copper read back equals the union of the board's copper
    board, files = exported
    items = copper_items(board)
    for layer in board.layers:
        g = _read_gerber(_role_path(board, files, f"copper-{layer}"))
        shapes = [_flash_shape(o) if isinstance(o, Flash) else
                  LineString([(o.x1, o.y1), (o.x2, o.y2)]).buffer(o.aperture.diameter / 2, quad_segs=ARC_SEGMENTS)
                  for o in g.objects]
        read = unary_union(shapes)
        want = unary_union([it.shape() for it in items if layer in it.layers])
        assert read.symmetric_difference(want).area < 1e-6


def test_copper_rebuilt_from_gerber_passes_the_same_check(tmp_path):
    # The board's traces and vias are replaced by what the reader finds in the copper files
    # (each drawn line a trace of its width and net, each via flash a via with the drill the
    # plated drill file has at that place); our check must find exactly the same violations.
    board = loads_board(HAND)
    files = export(board, tmp_path)
    holes = {(_k(o.x, DRILL_TOL), _k(o.y, DRILL_TOL)): o.aperture.diameter
             for o in _read_drill(_role_path(board, files, "drill-plated")).objects}
    rebuilt = board.copy()
    rebuilt.traces, rebuilt.vias = [], []
    for layer in board.layers:
        for o in _read_gerber(_role_path(board, files, f"copper-{layer}")).objects:
            net = o.attrs[".N"][0]
            if isinstance(o, Line):
                rebuilt.traces.append(Trace(net, layer, o.aperture.diameter, [(o.x1, o.y1), (o.x2, o.y2)]))
            elif _function(o) == "ViaPad" and layer == board.layers[0]:
                drill = holes[(_k(o.x, DRILL_TOL), _k(o.y, DRILL_TOL))]
                rebuilt.vias.append(Via(net, (o.x, o.y), drill, o.aperture.diameter))
    assert len(rebuilt.traces) == 7 and len(rebuilt.vias) == 1

    def found(b):
        return sorted(((v.rule, tuple(sorted(v.nets)), v.layer,
                        None if v.actual is None else round(v.actual, 6),
                        None if v.required is None else round(v.required, 6)) for v in check(b)), key=repr)

    want = found(board)
    assert [v[0] for v in want] == ["clearance"]          # the planted fault, nothing else
    assert want[0][4] == 0.2 and want[0][3] == pytest.approx(0.075, abs=1e-6)   # hand computed
    assert found(rebuilt) == want


def test_one_layer_copper_rebuilt_passes_the_same_check(tmp_path):
    board = loads_board(ONE_LAYER)
    files = export(board, tmp_path)
    rebuilt = board.copy()
    rebuilt.traces = [Trace(o.attrs[".N"][0], "bottom", o.aperture.diameter, [(o.x1, o.y1), (o.x2, o.y2)])
                      for o in _read_gerber(_role_path(board, files, "copper-bottom")).objects
                      if isinstance(o, Line)]
    assert check(board) == [] and check(rebuilt) == []
    # and a trace made too narrow in the board shows up in both the same way
    narrow = board.copy()
    narrow.traces[0].width = 0.1
    narrow.rules.min_trace_width = 0.05
    files = export(narrow, tmp_path / "narrow")
    rebuilt.traces = [Trace(o.attrs[".N"][0], "bottom", o.aperture.diameter, [(o.x1, o.y1), (o.x2, o.y2)])
                      for o in _read_gerber(_role_path(narrow, files, "copper-bottom")).objects
                      if isinstance(o, Line)]
    assert [v.rule for v in check(narrow)] == [v.rule for v in check(rebuilt)] == ["width"]


_coord = st.floats(min_value=0.5, max_value=39.5, allow_nan=False, allow_infinity=False)


@st.composite
def _routes(draw):
    """Random axis-step traces (any float coordinates) and vias on a 40 x 20 board."""
    traces = []
    for _ in range(draw(st.integers(1, 4))):
        x, y = draw(_coord), draw(_coord) / 2
        pts = [(x, y)]
        for step in range(draw(st.integers(1, 4))):
            if step % 2 == 0:
                x = draw(_coord)
            else:
                y = draw(_coord) / 2
            pts.append((x, y))
        width = draw(st.floats(min_value=0.15, max_value=2.0))
        traces.append(Trace("A", draw(st.sampled_from(["top", "bottom"])), width, pts))
    vias = [Via("A", (draw(_coord), draw(_coord) / 2), 0.4, 0.8) for _ in range(draw(st.integers(0, 3)))]
    return traces, vias


@settings(max_examples=25, deadline=None)
@given(_routes())
def test_any_coordinates_read_back_within_a_nanometre(tmp_path_factory, routes):
    # format 4.6 in mm is 1 nm resolution (Gerber spec, FS command): whatever the floats, the
    # reader finds every segment and via within 1e-6 mm of where the board has it
    traces, vias = routes
    board = loads_board('format = 1\n[board]\nname = "p"\nsize = [40.0, 20.0]\n')
    board.traces, board.vias = traces, vias
    files = export(board, tmp_path_factory.mktemp("fab"))
    for layer in board.layers:
        objs = _read_gerber(_role_path(board, files, f"copper-{layer}")).objects
        def nm(p):      # the file's resolution: pair segments up by their coordinates at 1 nm
            return (round(p[0], 6), round(p[1], 6))

        got = sorted([(min(nm((o.x1, o.y1)), nm((o.x2, o.y2))), max(nm((o.x1, o.y1)), nm((o.x2, o.y2))),
                       round(o.aperture.diameter, 6)) for o in objs if isinstance(o, Line)])
        want = sorted([(min(nm(a), nm(b)), max(nm(a), nm(b)), round(t.width, 6)) for t in traces if t.layer == layer
                       for a, b in zip(t.points, t.points[1:]) if a != b])
        assert len(got) == len(want)
        for g, w in zip(got, want):
            assert g[0] == pytest.approx(w[0], abs=1e-6) and g[1] == pytest.approx(w[1], abs=1e-6)
            assert g[2] == pytest.approx(w[2], abs=1e-6)
        flashes = sorted((o.x, o.y) for o in objs if isinstance(o, Flash) and _function(o) == "ViaPad")
        want_vias = sorted(v.at for v in vias)
        assert len(flashes) == len(want_vias)
        for g, w in zip(flashes, want_vias):
            assert g == pytest.approx(w, abs=1e-6)


# ----------------------------------------------------------------------------- holes

def test_each_hole_at_its_place_with_its_drill(exported):
    board, files = exported
    pth = _read_drill(_role_path(board, files, "drill-plated"))
    npth = _read_drill(_role_path(board, files, "drill-nonplated"))

    def key(x, y, d):
        return (_k(x, DRILL_TOL), _k(y, DRILL_TOL), _k(d, DRILL_TOL))

    got_p = Counter(key(o.x, o.y, o.aperture.diameter) for o in pth.objects)
    got_n = Counter(key(o.x, o.y, o.aperture.diameter) for o in npth.objects)
    want_p = Counter([key(p.x, p.y, p.drill) for p in placed_pads(board) if p.drill is not None]
                     + [key(*v.at, v.drill) for v in board.vias]
                     + [key(*at, j.drill) for j in board.jumpers for at in (j.start, j.end)])
    want_n = Counter(key(h.x, h.y, h.drill) for h in placed_holes(board))
    assert got_p == want_p and got_n == want_n
    assert not (set(got_p) & set(got_n))


def test_drill_tools_sorted_by_size(tmp_path):
    board = loads_board(HAND)
    files = export(board, tmp_path)
    text = _role_path(board, files, "drill-plated").read_text()
    header = text.split("\n%\n")[0]
    assert text.startswith("M48\n") and "METRIC" in header and text.rstrip().endswith("M30")
    tools = re.findall(r"^T(\d+)C([0-9.]+)$", header, re.M)
    # HAND has drills 0.4 (via), 0.6 (oval pads), 0.9 (axial pads): hand listed
    assert [(int(t), float(d)) for t, d in tools] == [(1, 0.4), (2, 0.6), (3, 0.9)]
    drill = _read_drill(_role_path(board, files, "drill-plated"))
    seen = []
    for o in drill.objects:
        if not seen or seen[-1] != o.aperture.diameter:
            seen.append(o.aperture.diameter)
    assert seen == sorted(seen) == [0.4, 0.6, 0.9]
    n = _read_drill(_role_path(board, files, "drill-nonplated"))
    assert [v for o in n.objects for v in (o.x, o.y, o.aperture.diameter)] == pytest.approx([35.0, 4.0, 3.2])


# Drill aperture functions the open Gerber specification lists for drill and rout layers
# (Ucamco, "The Gerber Layer Format Specification", revision 2023.08, section 5.6.10), with
# their optional second fields; OtherDrill takes a free text field.
SPEC_DRILL_FUNCTIONS = {
    "ViaDrill": {None, "Ia", "Ib", "IIa", "IIb", "IIIa", "IIIb", "IVa", "IVb", "V", "VI", "VII", "None"},
    "BackDrill": {None},
    "ComponentDrill": {None, "PressFit"},
    "MechanicalDrill": {None, "Tooling", "BreakOut", "Other"},
    "CastellatedDrill": {None},
    "Slot": {None}, "CutOut": {None}, "Cavity": {None},
}


def _drill_attr_values(text):
    """Every .AperFunction value in a drill file, with the tool it stands before."""
    out, lines = [], text.splitlines()
    for i, line in enumerate(lines):
        if line.startswith("; #@! TA.AperFunction,"):
            out.append((line.split(",", 1)[1], lines[i + 1]))
    return out


def _spec_value(value: str) -> bool:
    fields = value.split(",")
    if fields[0] == "OtherDrill":
        return len(fields) == 2 and fields[1] != ""
    if fields[0] not in SPEC_DRILL_FUNCTIONS or len(fields) > 2:
        return False
    return (fields[1] if len(fields) == 2 else None) in SPEC_DRILL_FUNCTIONS[fields[0]]


def test_drill_aperture_functions_are_the_specs_values(exported):
    board, files = exported
    for role in ("drill-plated", "drill-nonplated"):
        text = _role_path(board, files, role).read_text()
        values = _drill_attr_values(text)
        assert len(values) == len(re.findall(r"^T\d+C", text, re.M))     # one before every tool
        for value, tool in values:
            assert _spec_value(value), (role, value)
            assert re.fullmatch(r"T\d+C[0-9.]+", tool)
    assert not _spec_value("Plated,PTH,ViaDrill") and not _spec_value("OtherDrill")


def test_vias_and_leads_of_one_size_get_tools_of_their_own(tmp_path):
    # a via drilled 0.9 beside the axial leads' 0.9 mm holes: two tools of 0.9, one ViaDrill,
    # one ComponentDrill; the jumper ends of a one-layer board are component (wire lead) holes
    board = loads_board(HAND)
    board.vias[0].drill = 0.9
    board.vias[0].diameter = 1.6
    files = export(board, tmp_path / "two")
    text = _role_path(board, files, "drill-plated").read_text()
    assert _drill_attr_values(text) == [("ComponentDrill", "T1C0.600"), ("ComponentDrill", "T2C0.900"),
                                        ("ViaDrill", "T3C0.900")]
    body = text.split("\n%\n")[1]
    assert "T3\nX27.0000Y12.0000\n" in body
    one = loads_board(ONE_LAYER)
    text = _role_path(one, export(one, tmp_path / "one"), "drill-plated").read_text()
    assert [v for v, _ in _drill_attr_values(text)] == ["ComponentDrill", "ComponentDrill"]  # 0.8 ends, 0.9 leads
    text = _role_path(board, files, "drill-nonplated").read_text()
    assert _drill_attr_values(text) == [("MechanicalDrill", "T1C3.200")]


# ----------------------------------------------------------------------------- outline, mask, silk

def test_outline_extent_equals_the_board(exported):
    board, files = exported
    g = _read_gerber(_role_path(board, files, "outline"))
    lines = [o for o in g.objects if isinstance(o, Line)]
    assert all(_function(o) == "Profile" for o in lines)
    xs = [v for o in lines for v in (o.x1, o.x2)]
    ys = [v for o in lines for v in (o.y1, o.y2)]
    assert (min(xs), min(ys), max(xs), max(ys)) == pytest.approx(outline_polygon(board).bounds, abs=GERBER_TOL)
    # the lines close into the board's own polygon (shapely polygonize)
    polys = list(polygonize([LineString([(o.x1, o.y1), (o.x2, o.y2)]) for o in lines]))
    assert len(polys) == 1
    assert polys[0].symmetric_difference(outline_polygon(board)).area < 1e-9


def test_l_shaped_outline_by_hand(tmp_path):
    board = loads_board(L_SHAPED)
    g = _read_gerber(_role_path(board, export(board, tmp_path), "outline"))
    poly = list(polygonize([LineString([(o.x1, o.y1), (o.x2, o.y2)]) for o in g.objects]))[0]
    assert poly.bounds == pytest.approx((0, 0, 30, 25)) and poly.area == pytest.approx(480.0)


def test_mask_opens_pads_by_the_expansion_and_covers_vias(tmp_path):
    # common practice: the mask opening is the pad grown by the mask expansion on every side;
    # vias stay covered (tented) unless asked.
    board = loads_board(HAND)
    board.rules.mask_expansion = 0.1
    e = 0.1
    for open_vias in (False, True):
        files = export(board, tmp_path / str(open_vias), open_vias=open_vias)
        for layer in board.layers:
            g = _read_gerber(_role_path(board, files, f"mask-{layer}"))
            got = Counter(_flash_key(o) for o in g.objects)
            want = Counter(_pad_key(p.x, p.y, p.shape, p.w + 2 * e, p.h + 2 * e)
                           for p in placed_pads(board) if layer in p.layers)
            want += Counter(_pad_key(h.x, h.y, "round", h.drill + 2 * e, h.drill + 2 * e)
                            for h in placed_holes(board))
            if open_vias:
                want += Counter(_pad_key(*v.at, "round", v.diameter + 2 * e, v.diameter + 2 * e)
                                for v in board.vias)
            assert got == want


def test_silkscreen_stays_off_openings_and_on_the_board(exported):
    board, files = exported
    inside = outline_polygon(board)
    for side in ("top", "bottom"):
        g = _read_gerber(_role_path(board, files, f"silk-{side}"))
        lines = [LineString([(o.x1, o.y1), (o.x2, o.y2)]) for o in g.objects if isinstance(o, Line)]
        assert all(o.aperture.diameter == pytest.approx(SILK_WIDTH) for o in g.objects if isinstance(o, Line))
        dots = [o for o in g.objects if isinstance(o, Flash)]
        assert all(o.aperture.diameter == pytest.approx(DOT) for o in dots)     # pin-1 marks
        openings = []
        for layer in board.layers:
            mask = _read_gerber(_role_path(board, files, f"mask-{layer}"))
            openings += [_flash_shape(o) for o in mask.objects]
        keep_off = unary_union(openings) if openings else None
        for ln in lines:
            assert inside.buffer(1e-9).contains(ln.buffer(SILK_WIDTH / 2, quad_segs=ARC_SEGMENTS))
            if keep_off is not None:
                assert ln.distance(keep_off) >= SILK_WIDTH / 2 + SILK_GAP - 1e-3  # polygon error of arcs
        for o in dots:
            assert inside.contains(SPoint(o.x, o.y).buffer(DOT / 2))
            if keep_off is not None:
                assert SPoint(o.x, o.y).distance(keep_off) >= DOT / 2 + SILK_GAP - 1e-3
        parts = [p for p in board.parts if p.side == side]
        if parts:
            assert lines                       # outlines and refs are drawn for the side's parts


def test_stroke_font_glyphs():
    # our own font: every capital and digit exists, stays in its 4 x 6 cell, and no two look alike
    chars = "ABCDEFGHIJKLMNOPQRSTUVWXYZ0123456789"
    for c in chars:
        pts = [p for stroke in GLYPHS[c] for p in stroke]
        assert pts and all(0 <= x <= 4 and 0 <= y <= 6 for x, y in pts), c
    drawn = {c: unary_union([LineString(s) for s in GLYPHS[c] if len(s) > 1]) for c in chars}
    for a in chars:
        for b in chars:
            if a < b:
                assert not drawn[a].equals(drawn[b]), (a, b)
    # text is centred where asked and mirrored for the bottom (hand computed: "L" 6 high, 4 wide)
    assert text_strokes("L", (10.0, 0.0), 6.0) == [[(8.0, 3.0), (8.0, -3.0), (12.0, -3.0)]]
    assert text_strokes("L", (10.0, 0.0), 6.0, mirror=True) == [[(12.0, 3.0), (12.0, -3.0), (8.0, -3.0)]]


# ----------------------------------------------------------------------------- the list of files

def test_list_of_files(tmp_path):
    board = loads_board(HAND)
    files = export(board, tmp_path)
    text = _role_path(board, files, "list").read_text()
    for f in files:
        assert f.name in text
    assert "40 x 20 mm" in text and "Copper layers:         2" in text
    assert "Smallest trace width:  0.25 mm" in text        # default class 0.25, traces 0.25 and 0.3
    assert "Smallest clearance:    0.2 mm" in text         # the default class's clearance
    assert "Smallest drill:        0.4 mm" in text         # the via
    assert CAUTION in text


def test_file_names_are_safe_and_our_own():
    board = loads_board(HAND)
    names = file_names(board)
    assert names["copper-top"] == "hand-routed-copper-top.gbr"
    assert names["drill-plated"] == "hand-routed-holes-plated.drl"
    assert names["drill-nonplated"] == "hand-routed-holes-unplated.drl"
    assert all(re.fullmatch(r"[A-Za-z0-9._-]+", n) for n in names.values())


# ----------------------------------------------------------------------------- failures leave nothing behind

def _snapshot(folder: Path):
    return {p.name: p.read_bytes() for p in folder.iterdir()}


def test_unplaced_part_leaves_the_folder_untouched(tmp_path):
    out = tmp_path / "fab"
    export(loads_board(HAND), out)
    (out / "notes.txt").write_text("mine")
    before = _snapshot(out)
    board = loads_board(UNPLACED, "b.toml")
    board.source = "b.toml"                      # as load_board sets it
    with pytest.raises(BoardError) as exc:
        export(board, out)
    assert str(exc.value) == ("b.toml: part 5 (C1): the part has no place, so it has no copper to "
                              "export; place it first (elbowroom place)")
    assert _snapshot(out) == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["fab"]     # no temporary folder left


def test_failure_while_writing_leaves_the_folder_untouched(tmp_path, monkeypatch):
    import router.fabfiles as fab
    out = tmp_path / "fab"
    export(loads_board(ONE_LAYER), out)
    before = _snapshot(out)
    real, calls = fab._write, []

    def failing(path, text):
        calls.append(path)
        if len(calls) == 3:
            raise OSError("disk full")
        real(path, text)

    monkeypatch.setattr(fab, "_write", failing)
    board = loads_board(HAND.replace('name = "hand routed"', 'name = "one layer"'))
    with pytest.raises(BoardError, match="disk full"):
        export(board, out)
    assert len(calls) == 3
    assert _snapshot(out) == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["fab"]


def test_output_that_is_a_file(tmp_path, capsys):
    (tmp_path / "fab").write_text("not a folder")
    src = tmp_path / "b.toml"
    src.write_text(HAND)
    assert main(["export", str(src), "-o", str(tmp_path / "fab")]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "is a file, not a folder" in err[0]
    assert (tmp_path / "fab").read_text() == "not a folder"


def test_re_export_replaces_own_files_only(tmp_path):
    out = tmp_path / "fab"
    out.mkdir()
    (out / "keep.txt").write_text("mine")
    board = loads_board(HAND)
    export(board, out)
    board.traces[0].width = 0.3
    files = export(board, out)
    assert (out / "keep.txt").read_text() == "mine"
    assert "%ADD" in files[0].read_text() and "0.300000" in files[0].read_text()


# ----------------------------------------------------------------------------- command line

def test_cli_export(tmp_path, capsys):
    src = tmp_path / "b.toml"
    src.write_text(HAND)
    assert main(["export", str(src), "-o", str(tmp_path / "fab")]) == 0
    out = capsys.readouterr().out
    assert "hand-routed-copper-top.gbr" in out and CAUTION in out
    src.write_text(UNPLACED)
    assert main(["export", str(src), "-o", str(tmp_path / "fab2")]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "part 5 (C1)" in err[0] and "place it first" in err[0]
    assert not (tmp_path / "fab2").exists()


def test_routed_demo_copper_rebuilt_gives_the_same_check(tmp_path):
    # a board routed by our router (where this version has one): its traces rebuilt from the
    # copper files read back by gerbonara give the same violations as the board itself
    pytest.importorskip("router.negotiate")
    from router import route
    from router.demo import demo_text
    from placement import place
    board = route(place(loads_board(demo_text()), seed=0).board, seed=0).board
    assert board.traces
    files = export(board, tmp_path)
    rebuilt = board.copy()
    rebuilt.traces = [Trace(o.attrs[".N"][0], layer, o.aperture.diameter, [(o.x1, o.y1), (o.x2, o.y2)])
                      for layer in board.layers
                      for o in _read_gerber(_role_path(board, files, f"copper-{layer}")).objects
                      if isinstance(o, Line)]
    assert len(rebuilt.traces) == sum(len(t.points) - 1 for t in board.traces
                                      if all(tuple(a) != tuple(b) for a, b in zip(t.points, t.points[1:])))

    def found(b):
        return sorted(((v.rule, tuple(sorted(v.nets)), v.layer, None if v.actual is None else round(v.actual, 6))
                       for v in check(b)), key=repr)

    assert found(rebuilt) == found(board)
