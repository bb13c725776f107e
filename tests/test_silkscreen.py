"""Silkscreen marks read back with gerbonara and measured with shapely: pin-1 dots, polarity marks
(cathode band, + sign) on pin 1's side for every rotation and both sides, wire links with their
length on one-layer boards, and no silkscreen on a mask opening."""
import warnings

import pytest
from gerbonara import GerberFile
from gerbonara.graphic_objects import Flash, Line
from shapely.geometry import LineString, Point as SPoint, box
from shapely.ops import unary_union

from router.boardfile import loads_board
from router.fabfiles import SILK_GAP, SILK_WIDTH, _opening_shape, _openings, export, file_names, text_strokes
from router.footprints import builtin_footprint
from router.geometry import ARC_SEGMENTS, placed_pads
from router.silkscreen import DOT, silk_layer, to_local

PART = """format = 1
[board]
name = "marks"
size = [40.0, 40.0]
[[parts]]
ref = "U1"
footprint = "{fp}"
at = [20.0, 20.0]
rotation = {rot}
side = "{side}"
"""


def _read(path):
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        return GerberFile.open(path)


def _fn(o):
    return ",".join(dict(o.aperture.attrs or ())[".AperFunction"])


def _export(text, tmp_path):
    board = loads_board(text)
    files = {f.name: f for f in export(board, tmp_path)}
    return board, {role: files[name] for role, name in file_names(board).items()}


def _local_pads(fp):
    return {p.pin: box(p.offset[0] - p.size[0] / 2, p.offset[1] - p.size[1] / 2,
                       p.offset[0] + p.size[0] / 2, p.offset[1] + p.size[1] / 2) for p in fp.pads}


ROTS_SIDES = [(r, s) for r in (0, 90, 180, 270) for s in ("top", "bottom")]


@pytest.mark.parametrize("fp_name", ["dip-8", "sot-23", "soic-8", "header-2x3", "to-220"])
@pytest.mark.parametrize("rot,side", ROTS_SIDES)
def test_pin1_dot_beside_pin1_outside_the_pads(tmp_path, fp_name, rot, side):
    board, files = _export(PART.format(fp=fp_name, rot=rot, side=side), tmp_path)
    part = board.parts[0]
    fp = builtin_footprint(fp_name)
    other = "bottom" if side == "top" else "top"
    dots = [o for o in _read(files[f"silk-{side}"]).objects if isinstance(o, Flash)]
    assert [_fn(o) for o in dots] == ["Other,PinOneMark"]
    assert not [o for o in _read(files[f"silk-{other}"]).objects if isinstance(o, Flash)]
    local = SPoint(to_local(part, (dots[0].x, dots[0].y)))
    pads = _local_pads(fp)
    nearest = min(pads, key=lambda pin: pads[pin].distance(local))
    assert nearest == "1"                                              # beside pin 1
    assert all(local.distance(shape) >= DOT / 2 for shape in pads.values())   # outside every pad
    # pin 1 of these families is at the lower left: the dot is left of the part's pad centre
    assert local.x < sum(p.offset[0] for p in fp.pads) / len(fp.pads)


@pytest.mark.parametrize("fp_name", ["chip-0805", "axial-10.16", "header-1x2"])
def test_no_pin1_dot_on_two_pin_parts(tmp_path, fp_name):
    _, files = _export(PART.format(fp=fp_name, rot=0, side="top"), tmp_path)
    assert not [o for o in _read(files["silk-top"]).objects if isinstance(o, Flash)]


@pytest.mark.parametrize("fp_name", ["diode-10.16", "led-3", "led-5"])
@pytest.mark.parametrize("rot,side", ROTS_SIDES)
def test_cathode_band_at_pin1_end(tmp_path, fp_name, rot, side):
    board, files = _export(PART.format(fp=fp_name, rot=rot, side=side), tmp_path)
    part = board.parts[0]
    fp = builtin_footprint(fp_name)
    band = [o for o in _read(files[f"silk-{side}"]).objects if isinstance(o, Line) and _fn(o) == "Other,PolarityMark"]
    assert band
    pts = [to_local(part, p) for o in band for p in ((o.x1, o.y1), (o.x2, o.y2))]
    # pin 1 (the cathode) is at local -x: the band lies at the body's -x edge, across it
    assert all(x <= -fp.body[0] / 2 + 0.3 + 1e-6 for x, _ in pts)
    assert all(abs(y) <= fp.body[1] / 2 + 1e-6 for _, y in pts)
    other = "bottom" if side == "top" else "top"
    assert not [o for o in _read(files[f"silk-{other}"]).objects if _fn(o) == "Other,PolarityMark"]


@pytest.mark.parametrize("fp_name", ["radial-2.5", "radial-5.0", "tantalum-A", "tantalum-D"])
@pytest.mark.parametrize("rot,side", ROTS_SIDES)
def test_plus_sign_beside_pin1(tmp_path, fp_name, rot, side):
    board, files = _export(PART.format(fp=fp_name, rot=rot, side=side), tmp_path)
    part = board.parts[0]
    fp = builtin_footprint(fp_name)
    plus = [o for o in _read(files[f"silk-{side}"]).objects if isinstance(o, Line) and _fn(o) == "Other,PolarityMark"]
    assert len(plus) == 2                                            # two strokes, crossing
    a, b = (LineString([to_local(part, (o.x1, o.y1)), to_local(part, (o.x2, o.y2))]) for o in plus)
    centre = a.intersection(b)
    assert centre.geom_type == "Point"
    pads = _local_pads(fp)
    assert pads["1"].distance(centre) < pads["2"].distance(centre)   # at pin 1's end (the +)
    assert centre.x < 0


def test_polarised_own_footprint(tmp_path):
    text = """format = 1
[board]
name = "own"
size = [30.0, 20.0]
[footprints.zener]
body = [4.0, 2.0]
polarised = true
polarity = "cathode"
pads = [{ pin = "1", offset = [3.0, 0.0], shape = "rectangle", size = [1.6, 1.6], drill = 0.8 },
        { pin = "2", offset = [-3.0, 0.0], shape = "round", size = [1.6, 1.6], drill = 0.8 }]
[[parts]]
ref = "D1"
footprint = "zener"
at = [15.0, 10.0]
"""
    board, files = _export(text, tmp_path)
    band = [o for o in _read(files["silk-top"]).objects if _fn(o) == "Other,PolarityMark"]
    assert band and all(o.x1 >= 16.7 - 1e-6 and o.x2 >= 16.7 - 1e-6 for o in band)   # pin 1 at +x here
    saved = loads_board(text).footprints["zener"]
    assert saved.polarised and saved.polarity == "cathode"


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
points = [[15.08, 5.0], [22.0, 5.0]]
[[traces]]
net = "A"
layer = "bottom"
width = 0.4
points = [[22.0, 12.62], [22.0, 15.0], [15.08, 15.0]]
[[jumpers]]
net = "A"
from = [22.0, 5.0]
to = [22.0, 12.62]
"""


def test_wire_link_drawn_on_the_part_side_with_its_length(tmp_path):
    board, files = _export(ONE_LAYER, tmp_path)
    objs = _read(files["silk-top"]).objects
    link = [o for o in objs if _fn(o) == "Other,WireLink"]
    assert link and all(o.x1 == pytest.approx(22.0) and o.x2 == pytest.approx(22.0) for o in link)
    # the link runs between the ends' mask openings: 7.62 less one opening radius and gap at each end
    e = board.rules.mask_expansion
    cut = 1.6 / 2 + e + SILK_GAP + SILK_WIDTH / 2
    assert sum(abs(o.y2 - o.y1) for o in link) == pytest.approx(7.62 - 2 * cut, abs=0.01)
    assert not [o for o in _read(files["silk-bottom"]).objects if _fn(o) == "Other,WireLink"]
    # the length "J 7.62" set beside the link, right or left of it: its strokes are in the file
    texts = [o for o in objs if _fn(o) == "Other,PartReference"]
    segs = {(round(o.x1, 4), round(o.y1, 4), round(o.x2, 4), round(o.y2, 4)) for o in texts}
    silk = silk_layer(board, "top", [_opening_shape(o) for o in _openings(board, "top", placed_pads(board), False)])
    label = [c for t, c in silk.labels if t == "J 7.62"]
    assert len(label) == 1
    want = {(round(a[0], 4), round(a[1], 4), round(b[0], 4), round(b[1], 4))
            for s in text_strokes("J 7.62", label[0]) for a, b in zip(s, s[1:])}
    assert want <= segs
    assert abs(label[0][0] - 22.0) > 1.0 and label[0][1] == pytest.approx(8.81)   # beside, at mid height


def test_silkscreen_never_on_a_mask_opening(tmp_path):
    # a crowded board: polarised parts, pin-1 marks and refs beside pads, read back and measured
    text = """format = 1
[board]
name = "crowd"
size = [30.0, 20.0]
[[parts]]
ref = "U1"
footprint = "soic-8"
at = [8.0, 6.0]
[[parts]]
ref = "D1"
footprint = "led-3"
at = [8.0, 13.5]
rotation = 90
[[parts]]
ref = "C1"
footprint = "tantalum-A"
at = [16.0, 6.0]
rotation = 180
[[parts]]
ref = "C2"
footprint = "radial-2.5"
at = [17.0, 14.0]
side = "bottom"
[[parts]]
ref = "D2"
footprint = "diode-7.62"
at = [24.0, 10.0]
rotation = 270
"""
    board, files = _export(text, tmp_path)
    for side in ("top", "bottom"):
        mask = unary_union([_flash(o) for o in _read(files[f"mask-{side}"]).objects])
        drawn = []
        for o in _read(files[f"silk-{side}"]).objects:
            if isinstance(o, Line):
                drawn.append(LineString([(o.x1, o.y1), (o.x2, o.y2)]).buffer(SILK_WIDTH / 2, quad_segs=ARC_SEGMENTS))
            else:
                drawn.append(SPoint(o.x, o.y).buffer(o.aperture.diameter / 2, quad_segs=ARC_SEGMENTS))
        assert drawn
        ink = unary_union(drawn)
        assert ink.intersection(mask).area == 0.0                         # nothing inside an opening
        assert ink.distance(mask) >= SILK_GAP - 2e-3                      # and the margin kept
    listing = files["list"].read_text()
    assert "silkscreen top:" in listing.lower() and "mm clipped" in listing


def _flash(o):
    from gerbonara.apertures import CircleAperture, RectangleAperture
    ap = o.aperture
    if isinstance(ap, CircleAperture):
        return SPoint(o.x, o.y).buffer(ap.diameter / 2, quad_segs=ARC_SEGMENTS)
    if isinstance(ap, RectangleAperture):
        return box(o.x - ap.w / 2, o.y - ap.h / 2, o.x + ap.w / 2, o.y + ap.h / 2)
    r = min(ap.w, ap.h) / 2
    axis = (LineString([(o.x - ap.w / 2 + r, o.y), (o.x + ap.w / 2 - r, o.y)]) if ap.w > ap.h else
            LineString([(o.x, o.y - ap.h / 2 + r), (o.x, o.y + ap.h / 2 - r)]))
    return axis.buffer(r, quad_segs=ARC_SEGMENTS)
