"""Pictures: PNG and SVG of the example boards and of a hand-routed board, the ratsnest, the chart."""
import colorsys
import glob
import io
import math
import os
import struct
import xml.etree.ElementTree as ET
from pathlib import Path

import matplotlib.colors as mcolors
import matplotlib.image as mimage
import networkx as nx
import numpy as np
import pytest

from router.boardfile import loads_board, load_board
from router.check import check
from router.connectivity import net_groups
from router.errors import BoardError
from router.geometry import placed_pads
from router import draw
from router.draw import OKABE_ITO, STYLE, board_figure, compare_rows, plot_compare, ratsnest, render

BOARDS = sorted(glob.glob(str(Path(__file__).resolve().parent.parent / "boards" / "*.toml")))
SVG_NS = "{http://www.w3.org/2000/svg}"

# Two layers. R1 pads at (4.92, 5) and (15.08, 5), R2 pads at (4.92, 15) and (15.08, 15)
# (axial-10.16: holes 10.16 apart, circles 1.8, drill 0.9). Net A: top trace to a via at (12, 5),
# bottom trace on to R1.2, so A is routed. B is not routed; C (two surface pads of U1) neither.
HAND = """format = 1
[board]
name = "hand"
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
ref = "U1"
footprint = "chip-0805"
at = [30.0, 10.0]
[[parts]]
ref = "H1"
footprint = "hole-3.2"
at = [35.0, 16.0]
[[nets]]
name = "A"
pins = ["R1.1", "R1.2"]
[[nets]]
name = "B"
pins = ["R2.1", "R2.2"]
[[nets]]
name = "C"
pins = ["U1.1", "U1.2"]
[[keepouts]]
rect = [20.0, 0.0, 26.0, 4.0]
[[traces]]
net = "A"
layer = "top"
width = 0.25
points = [[4.92, 5.0], [12.0, 5.0]]
[[vias]]
net = "A"
at = [12.0, 5.0]
drill = 0.4
diameter = 0.8
[[traces]]
net = "A"
layer = "bottom"
width = 0.25
points = [[12.0, 5.0], [15.08, 5.0]]
"""

# One layer with a jumper: J1 pads at (5, 5) and (5, 7.54) (header-1x2 turned 90), a jumper
# from (12, 5) to (12, 15) between two traces on the bottom.
JUMPERED = """format = 1
[board]
name = "jump"
size = [20.0, 20.0]
copper_layers = 1
[[parts]]
ref = "R1"
footprint = "axial-10.16"
at = [10.0, 3.0]
[[parts]]
ref = "R2"
footprint = "axial-10.16"
at = [10.0, 17.0]
[[nets]]
name = "W"
pins = ["R1.2", "R2.2"]
[[traces]]
net = "W"
layer = "bottom"
width = 0.25
points = [[15.08, 3.0], [15.08, 6.0]]
[[traces]]
net = "W"
layer = "bottom"
width = 0.25
points = [[15.08, 14.0], [15.08, 17.0]]
[[jumpers]]
net = "W"
from = [15.08, 6.0]
to = [15.08, 14.0]
"""


def hand():
    return loads_board(HAND)


def png_size(data: bytes):
    # PNG specification (W3C / ISO 15948), 5.2 and 11.2.2: an 8-byte signature, then the IHDR
    # chunk (length, type) whose data begins with width and height as 4-byte big-endian integers
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    assert data[12:16] == b"IHDR"
    return struct.unpack(">II", data[16:24])


def rgb(hex_):
    return np.array(mcolors.to_rgb(hex_))


def pixel(img, fig, ax, x, y):
    """The RGB of the pixel under board point (x, y) (display y runs up, image rows down)."""
    dx, dy = ax.transData.transform((x, y))
    h = img.shape[0]
    return img[int(h - dy), int(dx), :3]


def near(a, b, tol=3 / 255):
    return bool(np.all(np.abs(np.asarray(a) - np.asarray(b)) <= tol))


# ---------------------------------------------------------------- the palette

@pytest.mark.parametrize("name,expected", [
    # Okabe & Ito, "Color Universal Design", 2008, and B. Wong, Nature Methods 8, 441 (2011), Fig. 2:
    # the eight colours as 0-255 RGB (from memory of the published table)
    ("black", (0, 0, 0)), ("orange", (230, 159, 0)), ("sky blue", (86, 180, 233)),
    ("bluish green", (0, 158, 115)), ("yellow", (240, 228, 66)), ("blue", (0, 114, 178)),
    ("vermillion", (213, 94, 0)), ("reddish purple", (204, 121, 167)),
])
def test_palette_is_okabe_ito(name, expected):
    assert tuple(round(255 * c) for c in mcolors.to_rgb(OKABE_ITO[name])) == expected


def test_copper_colours_are_palette_colours_and_distinct():
    palette = set(OKABE_ITO.values())
    for key in ("top", "bottom", "jumper", "ratsnest", "violation", "via", "keepout"):
        assert STYLE[key] in palette, key
    assert STYLE["top"] != STYLE["bottom"]
    # not the common red-over-blue look: top is not a red, bottom not a blue (hue in degrees,
    # red near 0/360, blue near 210-250; common practice)
    hue = lambda c: 360 * colorsys.rgb_to_hsv(*mcolors.to_rgb(c))[0]
    assert 20 < hue(STYLE["top"]) < 340
    assert not 190 < hue(STYLE["bottom"]) < 260
    # the board is no green: its green channel does not stand above red and blue (common practice)
    r, g, b = mcolors.to_rgb(STYLE["board"])
    assert g <= max(r, b) + 1e-9


# ---------------------------------------------------------------- ratsnest

def test_ratsnest_hand_board():
    lines = ratsnest(hand())
    # A is routed; B joins its two pads; C its two 0805 pads at 30 -+ 0.95 (EIA 0805 body, pads of the footprint)
    assert [(n, a, b) for n, a, b in lines] == [
        ("B", (4.92, 15.0), (15.08, 15.0)),
        ("C", (29.05, 10.0), (30.95, 10.0)),
    ]


@pytest.mark.parametrize("path", BOARDS, ids=lambda p: Path(p).stem)
def test_ratsnest_is_a_minimum_spanning_tree(path):
    # reference: networkx minimum_spanning_tree over the pin groups, two groups as far apart as
    # their nearest pads (networkx)
    board = load_board(path)
    groups = net_groups(board)
    pads = {}
    for p in placed_pads(board):
        pads.setdefault((p.net, p.name), []).append((p.x, p.y))
    lines = ratsnest(board, groups)
    for net in board.nets:
        gs = [[xy for pin in g for xy in pads.get((net.name, pin), [])] for g in groups[net.name]]
        gs = [g for g in gs if g]
        mine = [math.dist(a, b) for n, a, b in lines if n == net.name]
        assert len(mine) == max(len(gs) - 1, 0)
        G = nx.Graph()
        G.add_nodes_from(range(len(gs)))
        for i in range(len(gs)):
            for j in range(i + 1, len(gs)):
                G.add_edge(i, j, weight=min(math.dist(a, b) for a in gs[i] for b in gs[j]))
        ref = sum(d["weight"] for _, _, d in nx.minimum_spanning_tree(G).edges(data=True))
        assert sum(mine) == pytest.approx(ref, abs=1e-9)


# ---------------------------------------------------------------- PNG

@pytest.mark.parametrize("path", BOARDS, ids=lambda p: Path(p).stem)
def test_png_of_example_boards(path, tmp_path):
    board = load_board(path)
    out = render(board, tmp_path / "b.png", dpi=60)
    data = out.read_bytes()
    img = mimage.imread(out)
    w, h = png_size(data)
    assert img.shape == (h, w, 4)
    fig, _ = board_figure(board, dpi=60)
    # the figure's size in inches times the dots per inch, within the one pixel of rounding
    assert abs(h - fig.get_figheight() * 60) <= 1 and abs(w - fig.get_figwidth() * 60) <= 1
    paper, bg = rgb(STYLE["paper"]), rgb(STYLE["board"])
    drawn = ~(np.all(np.abs(img[:, :, :3] - paper) < 1e-3, axis=2) | np.all(np.abs(img[:, :, :3] - bg) < 1e-3, axis=2))
    assert drawn.mean() > 0.01      # pads, bodies, refs and unrouted lines


@pytest.mark.parametrize("path", BOARDS, ids=lambda p: Path(p).stem)
def test_png_unrouted_lines_where_the_ratsnest_is(path, tmp_path, monkeypatch):
    # the picture with the unrouted lines differs from one without them, and inside the board's
    # axes only within two pixels of a line (the line is 0.6 pt, antialiased)
    board = load_board(path)
    lines = ratsnest(board)
    assert lines                      # the examples are unrouted
    with_lines = mimage.imread(render(board, tmp_path / "a.png", dpi=80))[:, :, :3]
    fig, ax = board_figure(board, dpi=80)
    monkeypatch.setattr(draw, "ratsnest", lambda *a, **k: [])
    without = mimage.imread(render(board, tmp_path / "b.png", dpi=80))[:, :, :3]
    h = with_lines.shape[0]
    rows, cols = np.nonzero(np.any(np.abs(with_lines - without) > 1 / 255, axis=2))
    x, y = cols + 0.5, h - rows - 0.5
    (bx0, by0), (bx1, by1) = ax.bbox.get_points()
    inside = (x > bx0) & (x < bx1) & (y > by0) & (y < by1)
    x, y = x[inside], y[inside]
    assert len(x) > 0
    segs = np.array([ax.transData.transform([a, b]) for _, a, b in lines])   # (n, 2, 2)
    p0, p1 = segs[:, 0][None], segs[:, 1][None]
    q = np.stack([x, y], axis=1)[:, None]
    d = p1 - p0
    t = np.clip(((q - p0) * d).sum(-1) / np.maximum((d * d).sum(-1), 1e-12), 0, 1)
    dist = np.linalg.norm(q - (p0 + t[..., None] * d), axis=-1).min(axis=1)
    assert dist.max() <= 2.0


def test_png_pixels_of_hand_board(tmp_path):
    board = hand()
    out = render(board, tmp_path / "hand.png", dpi=150)
    img = mimage.imread(out)
    fig, ax = board_figure(board, dpi=150)
    assert abs(img.shape[0] - fig.get_figheight() * 150) <= 1
    assert abs(img.shape[1] - fig.get_figwidth() * 150) <= 1
    top, bottom, bg = rgb(STYLE["top"]), rgb(STYLE["bottom"]), rgb(STYLE["board"])
    # bottom copper drawn opaque; top copper at alpha 0.9 over the board (source-over compositing)
    assert near(pixel(img, fig, ax, 13.5, 5.0), bottom)
    assert near(pixel(img, fig, ax, 7.5, 5.0), 0.9 * top + 0.1 * bg)
    assert near(pixel(img, fig, ax, 12.0, 5.0), rgb(STYLE["drill"]))          # the via's drill
    assert near(pixel(img, fig, ax, 12.0 + 0.3, 5.0 + 0.1), rgb(STYLE["via"]))   # its ring
    assert near(pixel(img, fig, ax, 4.92, 5.0), rgb(STYLE["drill"]))          # R1.1's drill
    assert near(pixel(img, fig, ax, 4.92 + 0.7, 5.0 + 0.1), rgb(STYLE["through_pad"]))   # its ring
    assert near(pixel(img, fig, ax, 30.0 - 0.95, 10.0 + 0.5), 0.9 * top + 0.1 * bg)      # U1.1, a top pad
    assert near(pixel(img, fig, ax, 35.0 + 1.2, 16.0), rgb(STYLE["drill"]))   # mounting hole, beside its ref
    assert near(pixel(img, fig, ax, 32.0, 4.0), bg)                           # empty board
    assert near(pixel(img, fig, ax, -0.8, -0.8), rgb(STYLE["paper"]))         # off the board
    # the unrouted line of B: some pixel near (7, 15) leans to the ratsnest colour
    dx, dy = ax.transData.transform((7.0, 15.0))
    col = img[int(img.shape[0] - dy) - 3:int(img.shape[0] - dy) + 4, int(dx), :3]
    rats = rgb(STYLE["ratsnest"])
    assert min(np.abs(c - rats).sum() for c in col) < np.abs(bg - rats).sum() / 2


def test_png_marks_violations(tmp_path):
    board = hand()
    vs = check(board)
    opens = [v for v in vs if v.rule == "open"]
    assert opens and all(v.at is not None for v in opens)
    out = render(board, tmp_path / "v.png", violations=vs, dpi=150)
    img = mimage.imread(out)
    fig, ax = board_figure(board, violations=vs, dpi=150)
    for v in opens:
        assert near(pixel(img, fig, ax, *v.at), rgb(STYLE["violation"])), v.message
    # without violations the same point is no marker
    plain = mimage.imread(render(board, tmp_path / "p.png", dpi=150))
    assert not near(pixel(plain, fig, ax, *opens[0].at), rgb(STYLE["violation"]))


def test_png_jumper_wire(tmp_path):
    board = loads_board(JUMPERED)
    img = mimage.imread(render(board, tmp_path / "j.png", dpi=150))
    fig, ax = board_figure(board, dpi=150)
    assert near(pixel(img, fig, ax, 15.08, 10.0), rgb(STYLE["jumper"]))
    assert near(pixel(img, fig, ax, 15.08, 4.5), rgb(STYLE["bottom"]))        # one layer: copper is bottom
    assert near(pixel(img, fig, ax, 15.08, 6.0), rgb(STYLE["drill"]))         # the jumper end's hole


# ---------------------------------------------------------------- SVG

@pytest.mark.parametrize("path", BOARDS, ids=lambda p: Path(p).stem)
def test_svg_of_example_boards(path, tmp_path):
    board = load_board(path)
    root = ET.parse(render(board, tmp_path / "b.svg")).getroot()
    assert root.tag == SVG_NS + "svg"
    texts = {"".join(t.itertext()).strip() for t in root.iter(SVG_NS + "text")}
    assert {p.ref for p in board.parts if p.at is not None} <= texts
    ids = {e.get("id") for e in root.iter() if e.get("id")}
    assert {"outline", "plated-pads", "unrouted"} <= ids


def test_svg_of_hand_board(tmp_path):
    root = ET.parse(render(hand(), tmp_path / "h.svg")).getroot()
    ids = {e.get("id") for e in root.iter() if e.get("id")}
    assert {"copper-top", "copper-bottom", "vias", "holes", "keepout-1", "unrouted"} <= ids
    # the one via is one path in its group
    via = next(e for e in root.iter() if e.get("id") == "vias")
    assert len(list(via.iter(SVG_NS + "path"))) == 1


def test_svg_is_the_same_twice(tmp_path):
    a = render(hand(), tmp_path / "a.svg").read_bytes()
    b = render(hand(), tmp_path / "b.svg").read_bytes()
    assert a == b


# ---------------------------------------------------------------- bad input and atomic writes

def test_unknown_suffix_is_bad_input(tmp_path):
    with pytest.raises(BoardError) as exc:
        render(hand(), tmp_path / "b.jpg")
    assert "b.jpg" in str(exc.value) and ".png or .svg" in str(exc.value)
    assert list(tmp_path.iterdir()) == []


def test_failed_render_keeps_the_old_file(tmp_path, monkeypatch):
    out = tmp_path / "b.png"
    out.write_bytes(b"old picture")

    def broken(*a, **k):
        raise RuntimeError("drawing failed")

    monkeypatch.setattr(draw.io, "BytesIO", broken)
    with pytest.raises(RuntimeError):
        render(hand(), out)
    assert out.read_bytes() == b"old picture"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["b.png"]


# ---------------------------------------------------------------- comparison chart

def _figs(length, bends, vias):
    t = {"nets": 1, "routed": 1, "bends": bends, "length": length, "vias": vias, "jumpers": 0,
         "bends_lower_bound": 0, "length_lower_bound": 1.0}
    return {"nets": [dict(t, name="A")], "totals": t}


def test_compare_rows_forms():
    pairs = [("a.toml", _figs(10.16, 0, 1)), ("b.toml", _figs(12.0, 2, 0))]
    want = [("a.toml", 10.16), ("b.toml", 12.0)]
    assert [(l, t["length"]) for l, t in compare_rows(pairs)] == want
    assert [(l, t["length"]) for l, t in compare_rows(dict(pairs))] == want
    cols = {"boards": ["a.toml", "b.toml"], "totals": {"length": [10.16, 12.0], "bends": [0, 2],
                                                      "vias": [1, 0], "differs": ["bends", "length"]}}
    assert [(l, t["length"]) for l, t in compare_rows(cols)] == want
    with pytest.raises(ValueError):
        compare_rows({"nothing": 1})


def test_compare_chart_of_hand_board(tmp_path):
    # the hand board's net A: traces of 7.08 and 3.08 mm (hand computed: 12 - 4.92 and 15.08 - 12), one via
    try:
        from router.figures import board_figures, compare_figures
    except ImportError:
        board_figures = compare_figures = None
    if board_figures is not None:
        figs = board_figures(hand())
        comp = compare_figures([("hand.toml", figs), ("again.toml", figs)])
    else:
        comp = [("hand.toml", _figs(10.16, 0, 1)), ("again.toml", _figs(10.16, 0, 1))]
    fig = draw.compare_figure(comp)
    heights = {}
    for ax in fig.axes:
        for c in ax.containers:
            heights[c.patches[0].get_gid().rsplit("-", 1)[0]] = [round(b.get_height(), 6) for b in c]
    assert heights["bar-length"] == [10.16, 10.16]
    assert heights["bar-vias"] == [1, 1]
    png = plot_compare(comp, tmp_path / "c.png")
    img = mimage.imread(png)
    assert abs(img.shape[0] - fig.get_figheight() * 150) <= 1
    assert abs(img.shape[1] - fig.get_figwidth() * 150) <= 1
    root = ET.parse(plot_compare(comp, tmp_path / "c.svg")).getroot()
    ids = {e.get("id") for e in root.iter() if e.get("id")}
    assert {f"bar-{k}-{i}" for k in ("bends", "length", "vias") for i in (1, 2)} <= ids
    with pytest.raises(BoardError):
        plot_compare(comp, tmp_path / "c.gif")
