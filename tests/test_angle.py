"""Any angle: turned parts and pads, rounded rectangles, outlines with arcs.

Outside references: shapely (distances and areas of shapes built here independently with
shapely.affinity and fine buffers), gerbonara (reads the Gerber files back, aperture macros
and arcs included), the Gerber specification (primitive 21 and 1, G02/G03 arcs), and the
areas of a rectangle with rounded corners, w*h - (4 - pi) r^2, and of a stadium,
(w - h) h + pi (h/2)^2 (plane geometry).
"""
import math
import warnings

import numpy as np
import pytest
import shapely
from shapely import affinity
from shapely.geometry import LineString, Point as SPoint, Polygon, box
from shapely.ops import unary_union

from router.boardfile import dumps_board, loads_board
from router.check import check
from router.cli import main
from router.copper import copper_items, distance
from router.geometry import pad_core, pad_shape, placed_pads
from router.grid import RoutingGrid
from router.outline import edge_distance, edge_distance_xy
from router.units import TOL

FINE = 512        # quad segments for the reference shapes: within 5e-6 of the true radius

FOOT = """
[footprints.mix]
body = [4.0, 3.0]
pads = [
  { pin = "1", offset = [-1.5, 0.5], shape = "rectangle", size = [0.6, 1.2] },
  { pin = "2", offset = [1.5, 0.5], shape = "obround", size = [0.5, 1.4], rotation = 20 },
  { pin = "3", offset = [0.0, -1.0], shape = "rounded-rectangle", size = [1.6, 0.8], corner_radius = 0.2 },
  { pin = "4", offset = [0.0, 1.0], shape = "rounded-rectangle", size = [0.9, 0.9], corner_radius = 0.1, rotation = 70 },
]
"""


def _board(parts: str, outline='size = [30.0, 20.0]', extra="") -> str:
    return f"format = 1\n[board]\nname = \"t\"\n{outline}\n{FOOT}\n{parts}\n{extra}"


def _reference(local, angle, at, side="top"):
    """A footprint pad built independently: shapely shape in local coordinates, turned by its own
    rotation about its centre, mirrored for the bottom, turned by the part, moved to `at`."""
    (ox, oy), shape, (w, h), own, corner = local
    if shape == "rectangle":
        g = box(-w / 2, -h / 2, w / 2, h / 2)
    elif shape == "obround":
        r = min(w, h) / 2
        g = (LineString([(-(w / 2 - r), 0), (w / 2 - r, 0)]) if w > h else
             LineString([(0, -(h / 2 - r)), (0, h / 2 - r)])).buffer(r, quad_segs=FINE)
    else:
        g = box(-w / 2 + corner, -h / 2 + corner, w / 2 - corner, h / 2 - corner).buffer(corner, quad_segs=FINE)
    g = affinity.rotate(g, own, origin=(0, 0))
    g = affinity.translate(g, ox, oy)
    if side == "bottom":
        g = affinity.scale(g, -1, 1, origin=(0, 0))
    g = affinity.rotate(g, angle, origin=(0, 0))
    return affinity.translate(g, at[0], at[1])


LOCAL = [((-1.5, 0.5), "rectangle", (0.6, 1.2), 0, 0), ((1.5, 0.5), "obround", (0.5, 1.4), 20, 0),
         ((0.0, -1.0), "rounded-rectangle", (1.6, 0.8), 0, 0.2),
         ((0.0, 1.0), "rounded-rectangle", (0.9, 0.9), 70, 0.1)]


@pytest.mark.parametrize("angle", [30, 45, 127.5])
@pytest.mark.parametrize("side", ["top", "bottom"])
def test_turned_pads_distances_equal_shapely(angle, side):
    """Every pair of pads of two turned parts: our exact distance equals shapely's distance
    between the same pads built independently (reference library: shapely)."""
    parts = (f'[[parts]]\nref = "A"\nfootprint = "mix"\nat = [10.0, 10.0]\nrotation = {angle}\nside = "{side}"\n'
             f'[[parts]]\nref = "B"\nfootprint = "mix"\nat = [13.7, 11.1]\nrotation = {angle * 2 + 11}\n'
             f'side = "{side}"\n')
    b = loads_board(_board(parts))
    items = [it for it in copper_items(b) if it.kind == "pad"]
    ref = {}
    for part, rot in (("A", angle), ("B", angle * 2 + 11)):
        at = b.part(part).at
        for k, loc in enumerate(LOCAL):
            ref[(part, str(k + 1))] = _reference(loc, rot, at, side)
    checked = 0
    for i in range(len(items)):
        for j in range(i + 1, len(items)):
            a, c = items[i], items[j]
            want = ref[(a.pad.ref, a.pad.pin)].distance(ref[(c.pad.ref, c.pad.pin)])
            got = distance(a, c)
            if want > 0:
                assert got == pytest.approx(want, abs=2e-5), (a.source, c.source)
                checked += 1
            else:
                assert got <= 2e-5
    assert checked >= 20
    for it in items:      # the drawn shape has the area of the reference shape (0.1 %)
        assert pad_shape(it.pad).area == pytest.approx(ref[(it.pad.ref, it.pad.pin)].area, rel=1e-3)


def test_turned_pad_centre_by_hand():
    """45 degrees: the local pad (-1.5, 0.5) of a part at (10, 10) lands at
    (10 + (-1.5 - 0.5) / sqrt 2, 10 + (-1.5 + 0.5) / sqrt 2) (rotation matrix, worked by hand)."""
    b = loads_board(_board('[[parts]]\nref = "A"\nfootprint = "mix"\nat = [10.0, 10.0]\nrotation = 45\n'))
    p = placed_pads(b)[0]
    assert (p.x, p.y) == pytest.approx((10 - 2 / math.sqrt(2), 10 - 1 / math.sqrt(2)), abs=1e-9)
    assert p.angle == pytest.approx(45)
    # a pad turned 20 inside a part turned 70 stands at a quarter turn: axis-aligned, w and h swapped
    q = loads_board(_board('[[parts]]\nref = "A"\nfootprint = "mix"\nat = [10.0, 10.0]\nrotation = 70\n'))
    p2 = placed_pads(q)[1]
    assert p2.angle == 0.0 and (p2.w, p2.h) == (1.4, 0.5)


@pytest.mark.parametrize("gap,violation", [(0.19, True), (0.21, False)])
def test_check_measures_a_turned_pad_exactly(gap, violation):
    """A trace laid `gap` (shapely distance) from a 45-degree rectangle's corner: a clearance
    violation below the class's 0.2 mm, none above; `actual` is shapely's distance."""
    b = loads_board(_board('[[parts]]\nref = "A"\nfootprint = "mix"\nat = [10.0, 10.0]\nrotation = 45\n'
                           '[[nets]]\nname = "N"\npins = ["A.1"]\n[[nets]]\nname = "M"\npins = ["A.2"]\n'))
    pad = placed_pads(b)[0]
    poly = pad_shape(pad)
    right = max(x for x, _ in poly.exterior.coords)        # the corner farthest along +x
    x = right + gap + 0.125
    extra = (f'[[traces]]\nnet = "M"\nlayer = "top"\nwidth = 0.25\npoints = [[{x}, 8.0], [{x}, 12.0]]\n')
    b2 = loads_board(_board('[[parts]]\nref = "A"\nfootprint = "mix"\nat = [10.0, 10.0]\nrotation = 45\n'
                            '[[nets]]\nname = "N"\npins = ["A.1"]\n[[nets]]\nname = "M"\npins = ["A.2"]\n', extra=extra))
    trace = LineString([(x, 8.0), (x, 12.0)]).buffer(0.125, quad_segs=FINE)
    want = poly.distance(trace)
    found = [v for v in check(b2) if v.rule == "clearance" and "pad A.1" in v.message]
    if violation:
        assert len(found) == 1 and found[0].actual == pytest.approx(want, abs=1e-5)
    else:
        assert not found


def test_grid_blocks_by_the_exact_distance():
    """Every grid point near a 127.5-degree part: blocked for a default-class trace of another net
    exactly where shapely puts the point closer than clearance + half width to a pad."""
    b = loads_board(_board('[[parts]]\nref = "A"\nfootprint = "mix"\nat = [10.0, 10.0]\nrotation = 127.5\n'
                           '[rules]\ngrid = 0.1\n'))
    g = RoutingGrid(b)
    k = g.profiles["default"].index
    pads = [p for p in placed_pads(b) if "top" in p.layers]
    ref = [_reference(LOCAL[p.index], 127.5, (10.0, 10.0)) for p in pads]
    need = 0.2 + 0.125
    X, Y = np.meshgrid(g.xs, g.ys)
    sel = (np.abs(X - 10) < 3.5) & (np.abs(Y - 10) < 3.5)
    pts = shapely.points(X[sel], Y[sel])
    d = np.min([shapely.distance(r, pts) for r in ref], axis=0)
    blocked = g.hard_cell[k, 0][sel] > 0
    sure = np.abs(d - need) > 1e-4          # points within the reference polygons' error are left out
    assert sure.sum() > 2000
    assert np.array_equal(blocked[sure], (d < need)[sure])


def _flash_area(path):
    from gerbonara import GerberFile
    from gerbonara.graphic_objects import Flash
    from gerbonara.graphic_primitives import ArcPoly, Circle, Rectangle
    from gerbonara.utils import MM
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        gf = GerberFile.open(path)
    out = []
    for obj in gf.objects:
        if not isinstance(obj, Flash):
            continue
        shapes = []
        for prim in obj.to_primitives(MM):
            if isinstance(prim, Circle):
                shapes.append(SPoint(prim.x, prim.y).buffer(prim.r, quad_segs=FINE))
            elif isinstance(prim, Rectangle):
                shapes.append(affinity.rotate(box(prim.x - prim.w / 2, prim.y - prim.h / 2, prim.x + prim.w / 2,
                                                  prim.y + prim.h / 2), prim.rotation, origin=(prim.x, prim.y),
                                              use_radians=True))
            elif isinstance(prim, ArcPoly):
                shapes.append(Polygon(prim.outline))
            else:
                raise AssertionError(f"unexpected primitive {prim!r}")
        out.append(((obj.x, obj.y), unary_union(shapes)))
    return out


@pytest.mark.parametrize("angle", [0, 30, 45, 127.5])
def test_turned_pads_in_gerber_read_back_with_their_area(tmp_path, angle):
    """Copper pads flashed with our aperture macros, read back by gerbonara: each flash at its pad,
    with the pad's area within 0.1 % (rectangle w h; stadium (w - h) h + pi (h/2)^2; rounded
    rectangle w h - (4 - pi) r^2) and lying on the pad's exact copper."""
    from router.fabfiles import export, file_names
    b = loads_board(_board(f'[[parts]]\nref = "A"\nfootprint = "mix"\nat = [10.0, 10.0]\nrotation = {angle}\n'))
    export(b, tmp_path)
    flashes = _flash_area(tmp_path / file_names(b)["copper-top"])
    pads = placed_pads(b)
    assert len(flashes) == len(pads)

    def area(p):
        if p.shape == "rectangle":
            return p.w * p.h
        if p.shape == "obround":
            s = min(p.w, p.h)
            return (max(p.w, p.h) - s) * s + math.pi * s * s / 4
        return p.w * p.h - (4 - math.pi) * p.corner ** 2
    for p in pads:
        (x, y), shape = min(flashes, key=lambda f: math.hypot(f[0][0] - p.x, f[0][1] - p.y))
        assert (x, y) == pytest.approx((p.x, p.y), abs=1e-6)
        assert shape.area == pytest.approx(area(p), rel=1e-3)
        assert shape.symmetric_difference(pad_shape(p)).area < 2e-3 * area(p)
    mask = _flash_area(tmp_path / file_names(b)["mask-top"])
    e = b.rules.mask_expansion
    for p in pads:          # mask openings: the pad grown by the expansion, turned with it
        _, shape = min(mask, key=lambda f: math.hypot(f[0][0] - p.x, f[0][1] - p.y))
        assert shape.area > area(p)
        assert shape.buffer(1e-6).covers(pad_shape(p).buffer(e - 1e-3))


ARC_OUTLINE = ('outline = [[5, 0], [35, 0], { to = [40, 5], centre = [35, 5] }, [40, 25], '
               '{ to = [35, 30], centre = [35, 25] }, [22, 30], { to = [18, 30], centre = [20, 30], clockwise = true }, '
               '[5, 30], { to = [0, 25], centre = [5, 25] }, [0, 5], { to = [5, 0], centre = [5, 5] }]')


def _fine_edge():
    """The same outline drawn by shapely with fine arcs (a point within 1e-7 mm of each arc)."""
    def arc(c, r, a0, a1, n=4000):
        return [(c[0] + r * math.cos(a0 + (a1 - a0) * k / n), c[1] + r * math.sin(a0 + (a1 - a0) * k / n))
                for k in range(n + 1)]
    pts = [(5, 0), (35, 0)] + arc((35, 5), 5, -math.pi / 2, 0) + [(40, 25)] + arc((35, 25), 5, 0, math.pi / 2) \
        + [(22, 30)] + arc((20, 30), 2, 0, -math.pi) + [(5, 30)] + arc((5, 25), 5, math.pi / 2, math.pi) \
        + [(0, 5)] + arc((5, 5), 5, math.pi, 1.5 * math.pi)
    return LineString(pts + [pts[0]])


def _fine_distance(geoms):
    """shapely's distance from each geometry to the finely drawn outline (an STRtree over its
    segments: the same distance, found fast)."""
    c = np.asarray(_fine_edge().coords)
    tree = shapely.STRtree(shapely.linestrings(np.stack([c[:-1], c[1:]], 1)))
    (gi, _), d = tree.query_nearest(np.asarray(geoms, dtype=object), return_distance=True, all_matches=False)
    out = np.empty(len(geoms))
    out[gi] = d
    return out


def test_arc_outline_edge_distance_equals_shapely():
    """Points, segments and turned boxes near the arcs (convex corners and a concave notch): the
    exact edge distance equals shapely's distance to a finely drawn outline (reference: shapely)."""
    b = loads_board(_board("", outline=ARC_OUTLINE))
    rng = np.random.default_rng(7)
    xy = rng.uniform([-1, -1], [41, 31], size=(400, 2))
    pts = shapely.points(xy)
    assert np.allclose(edge_distance_xy(b, xy[:, 0], xy[:, 1]), _fine_distance(pts), atol=1e-6)
    assert np.allclose(edge_distance(b, pts), _fine_distance(pts), atol=1e-6)
    segs = shapely.linestrings(np.stack([xy, xy + rng.uniform(-2, 2, size=(400, 2))], 1))
    assert np.allclose(edge_distance(b, segs), _fine_distance(segs), atol=1e-6)
    boxes = [affinity.rotate(box(x - 0.4, y - 0.2, x + 0.4, y + 0.2), a) for (x, y), a in
             zip(xy[:100], rng.uniform(0, 180, 100))]
    assert np.allclose(edge_distance(b, boxes), _fine_distance(boxes), atol=1e-6)


@pytest.mark.parametrize("gap,violation", [(0.45, True), (0.55, False)])
def test_check_edge_clearance_at_an_arc(gap, violation):
    """A via placed on the diagonal of a rounded corner (radius 5, centre (35, 5)) `gap` from the
    arc: an edge violation below edge_clearance 0.5, none above; actual = 5 - |p - c| - 0.4."""
    d = 5 - gap - 0.4
    x, y = 35 + d / math.sqrt(2), 5 - d / math.sqrt(2)
    extra = f'[[nets]]\nname = "N"\npins = ["A.1"]\n[[vias]]\nnet = "N"\nat = [{x}, {y}]\n'
    b = loads_board(_board('[[parts]]\nref = "A"\nfootprint = "mix"\nat = [10.0, 10.0]\n', outline=ARC_OUTLINE,
                           extra=extra))
    found = [v for v in check(b) if v.rule == "edge" and "via" in v.message]
    if violation:
        assert len(found) == 1 and found[0].actual == pytest.approx(gap, abs=1e-5)
    else:
        assert not found
    g = RoutingGrid(b)
    k = g.profiles["default"].index
    X, Y = np.meshgrid(g.xs, g.ys)
    dist = _fine_distance(shapely.points(X.ravel(), Y.ravel())).reshape(X.shape)
    inside = shapely.contains_xy(Polygon(b.outline), X, Y)
    need = 0.5 + 0.125
    sure = np.abs(dist - need) > 1e-5
    ok = g.base_cell[k, 0]
    assert np.array_equal(ok[sure & inside], (dist >= need)[sure & inside])


def test_arc_outline_round_trip_and_gerber(tmp_path):
    """The outline's arcs are written back as given, and the profile file carries them as arcs:
    gerbonara reads its extent as the board's (the notch arc dips to y = 28)."""
    from gerbonara import GerberFile
    from gerbonara.graphic_objects import Arc
    from router.fabfiles import export, file_names
    b = loads_board(_board('[[parts]]\nref = "A"\nfootprint = "mix"\nat = [10.0, 10.0]\nrotation = 127.5\n',
                           outline=ARC_OUTLINE))
    again = loads_board(dumps_board(b))
    assert again.outline_path == b.outline_path and again.outline == b.outline
    assert again.parts[0].rotation == 127.5 and again.footprints == b.footprints
    export(b, tmp_path)
    gf = GerberFile.open(tmp_path / file_names(b)["outline"])
    arcs = [o for o in gf.objects if isinstance(o, Arc)]
    assert len(arcs) == 5
    (x0, y0), (x1, y1) = gf.bounding_box()
    w = 0.1 / 2                                # the profile line's half width
    assert (x0 + w, y0 + w, x1 - w, y1 - w) == pytest.approx((0, 0, 40, 30), abs=1e-4)


TILTED = """format = 1
[board]
name = "tilted greenhouse node"
outline = [[4, 0], [36, 0], { to = [40, 4], centre = [36, 4] }, [40, 26], { to = [36, 30], centre = [36, 26] }, [4, 30], { to = [0, 26], centre = [4, 26] }, [0, 4], { to = [4, 0], centre = [4, 4] }]
[footprints.tilt-pair]
body = [3.0, 2.0]
pads = [
  { pin = "1", offset = [-1.2, 0.0], shape = "rounded-rectangle", size = [1.0, 1.4], corner_radius = 0.25 },
  { pin = "2", offset = [1.2, 0.0], shape = "obround", size = [1.0, 1.6], rotation = 30 },
]
[[parts]]
ref = "U1"
footprint = "soic-8"
at = [12.0, 15.0]
rotation = 45
[[parts]]
ref = "C1"
footprint = "tilt-pair"
at = [28.0, 10.0]
rotation = 45
[[parts]]
ref = "R1"
footprint = "chip-0805"
at = [28.0, 22.0]
rotation = 45
[[parts]]
ref = "J1"
footprint = "header-1x4"
at = [33.0, 15.0]
rotation = 90
[[nets]]
name = "A"
pins = ["U1.1", "C1.1", "J1.1"]
[[nets]]
name = "B"
pins = ["U1.8", "R1.1", "J1.2"]
[[nets]]
name = "C"
pins = ["U1.4", "C1.2", "J1.3"]
[[nets]]
name = "D"
pins = ["U1.5", "R1.2", "J1.4"]
[[nets]]
name = "E"
pins = ["U1.2", "U1.7"]
"""


def test_board_of_45_degree_parts_routes_clean():
    """Parts at 45 degrees on a board with rounded corners: every net routed, traces along x and
    y only, and the exact check finds nothing."""
    from router import route
    b = loads_board(TILTED)
    res = route(b, seed=1)
    routed, figures = res
    assert not res.failed
    assert check(routed) == []
    for t in routed.traces:
        for (xa, ya), (xb, yb) in zip(t.points, t.points[1:]):
            assert abs(xa - xb) <= TOL or abs(ya - yb) <= TOL


@pytest.mark.parametrize("pad,words", [
    ('{ pin = "1", offset = [0, 0], shape = "rounded-rectangle", size = [1.0, 0.6], corner_radius = 0.31 }',
     ["pad of pin 1", "corner_radius 0.31 is more than half"]),
    ('{ pin = "1", offset = [0, 0], shape = "rounded-rectangle", size = [1.0, 0.6] }',
     ["pad of pin 1", "needs corner_radius"]),
    ('{ pin = "1", offset = [0, 0], shape = "rectangle", size = [1.0, 0.6], corner_radius = 0.1 }',
     ["pad of pin 1", "only a rounded-rectangle pad has a corner_radius"]),
    ('{ pin = "1", offset = [0, 0], shape = "rounded-rectangle", size = [1.0, 0.6], corner_radius = -0.1 }',
     ["corner_radius", "greater than zero"]),
    ('{ pin = "1", offset = [0, 0], shape = "round", size = [1.0, 1.0], rotation = "east" }',
     ["pad of pin 1 rotation", "must be a number"]),
])
def test_bad_pads_exit_2_with_one_line(tmp_path, capsys, pad, words):
    text = f'format = 1\n[board]\nname = "t"\nsize = [20.0, 20.0]\n[footprints.f]\nbody = [2.0, 2.0]\npads = [{pad}]\n'
    path = tmp_path / "bad.toml"
    path.write_text(text)
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and str(path) in err and "Traceback" not in err
    for w in words:
        assert w in err


@pytest.mark.parametrize("outline,words", [
    ('[[0, 0], [10, 0], { to = [12, 3], centre = [10, 2] }, [0, 3]]', ["board.outline[2]", "equally far"]),
    ('[[0, 0], [10, 0], { to = [10, 0], centre = [10, 2] }, [0, 3]]', ["board.outline[2]", "ends where it starts"]),
    ('[[0, 0], [10, 0], { to = [10, 4], middle = [10, 2] }, [0, 4]]', ["board.outline[2]", "unknown field 'middle'"]),
    ('[[0, 0], [10, 0], { to = [10, 4], centre = [10, 2], clockwise = true }, [0, 4], [10, 2]]',
     ["board.outline", "not simple"]),
])
def test_bad_arcs_exit_2_with_one_line(tmp_path, capsys, outline, words):
    path = tmp_path / "bad.toml"
    path.write_text(f'format = 1\n[board]\nname = "t"\noutline = {outline}\n')
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and str(path) in err
    for w in words:
        assert w in err
