"""Readable pictures: refs never on a pad or trace, violation numbers apart and listed, millimetre
ticks, net names along long traces. Text boxes are measured on matplotlib's own renderer (the
drawn extent, not our estimate) and compared with the copper as shapely shapes."""
from pathlib import Path
from types import SimpleNamespace

import pytest
from shapely.geometry import box

from router.boardfile import load_board, loads_board
from router.boardgen import generate_board
from router.draw import board_figure
from router.geometry import pad_shape, placed_pads, trace_shape
from router.labels import Placer, copper_obstacles, ref_labels
from router.realgen import real_board

ROOT = Path(__file__).resolve().parent.parent


def _text_boxes(fig, ax, prefix):
    renderer = fig.canvas.get_renderer()
    inv = ax.transData.inverted()
    out = {}
    for t in ax.texts:
        gid = t.get_gid() or ""
        if gid.startswith(prefix):
            bb = t.get_window_extent(renderer)
            (x0, y0), (x1, y1) = inv.transform([(bb.x0, bb.y0), (bb.x1, bb.y1)])
            out[gid[len(prefix):]] = box(x0, y0, x1, y1)
    return out


@pytest.fixture(scope="module")
def routed_blinker(tmp_path_factory):
    from router import route
    return route(load_board(ROOT / "boards" / "starter-blinker.toml")).board


def _boards(routed_blinker):
    return [("blinker routed", routed_blinker),
            ("one layer", load_board(ROOT / "boards" / "soil-alarm-1layer.toml")),
            ("generated", generate_board(3, nets=30)),
            ("real-looking", real_board(1, nets=30))]


def test_no_ref_label_over_a_pad_or_trace(routed_blinker):
    for name, board in _boards(routed_blinker):
        fig, ax = board_figure(board)
        boxes = _text_boxes(fig, ax, "ref-")
        assert set(boxes) == {p.ref for p in board.parts if p.at is not None}, name
        copper = [pad_shape(p) for p in placed_pads(board)] + [trace_shape(t) for t in board.traces]
        for ref, b in boxes.items():
            hits = [c for c in copper if c.intersects(b)]
            assert not hits, (name, ref)
        refs = list(boxes.values())                         # and no two refs overlap
        for i, a in enumerate(refs):
            assert not any(a.intersects(b) for b in refs[i + 1:]), name


def test_crowded_part_gets_its_label_outside_with_a_leader():
    # a soic-8 whose body is full of traces: the ref goes outside, off the pads, with a leader line
    text = """format = 1
[board]
name = "crowded"
size = [20.0, 14.0]
[[parts]]
ref = "U1"
footprint = "soic-8"
at = [10.0, 7.0]
[[nets]]
name = "A"
pins = ["U1.1", "U1.8"]
[[traces]]
net = "A"
layer = "bottom"
width = 0.8
points = [[5.0, 7.0], [15.0, 7.0]]
[[traces]]
net = "A"
layer = "bottom"
width = 0.8
points = [[5.0, 6.2], [15.0, 6.2]]
[[traces]]
net = "A"
layer = "bottom"
width = 0.8
points = [[5.0, 7.8], [15.0, 7.8]]
"""
    board = loads_board(text)
    limits = (-1.0, -1.0, 21.0, 15.0)
    labels = ref_labels(board, 1.0, limits, Placer(copper_obstacles(board), limits))
    lab = labels[0]
    assert not any(o.intersects(lab.box()) for o in copper_obstacles(board))
    body = box(10.0 - 4.88 / 2, 7.0 - 1.95, 10.0 + 4.88 / 2, 7.0 + 1.95)   # soic-8 body 4.88 x 3.9
    assert not body.contains(lab.box())


def test_violation_numbers_apart_and_listed():
    board = loads_board('format = 1\n[board]\nname = "v"\nsize = [20.0, 10.0]\n')
    # twelve violations within half a millimetre of each other
    vs = [SimpleNamespace(rule="clearance", message=f"fault {k}", at=(10.0 + 0.05 * k, 5.0 + 0.03 * k))
          for k in range(12)]
    fig, ax = board_figure(board, vs)
    boxes = list(_text_boxes(fig, ax, "violation-").values())
    assert len(boxes) == 12
    for i, a in enumerate(boxes):
        assert not any(a.intersects(b) for b in boxes[i + 1:])
    rows = sorted((t.get_gid(), t.get_text()) for t in fig.texts if (t.get_gid() or "").startswith("violation-row-"))
    assert len(rows) == 12 and "1  clearance: fault 0" in [r[1] for r in rows]


def test_millimetre_ticks_on_the_edges():
    board = loads_board('format = 1\n[board]\nname = "t"\nsize = [40.0, 30.0]\n')
    fig, ax = board_figure(board)
    xt = [round(v, 6) for v in ax.get_xticks() if -1.3 <= v <= 41.3]
    yt = [round(v, 6) for v in ax.get_yticks() if -1.3 <= v <= 31.3]
    assert xt == [0, 5, 10, 15, 20, 25, 30, 35, 40] and yt == [0, 5, 10, 15, 20, 25, 30]


def test_net_names_along_long_traces(routed_blinker):
    board = routed_blinker
    fig, ax = board_figure(board, labels="nets")
    named = _text_boxes(fig, ax, "net-")
    plain, ax2 = board_figure(board)
    assert not _text_boxes(plain, ax2, "net-")
    long_nets = {t.net for t in board.traces for a, b in zip(t.points, t.points[1:])
                 if abs(a[0] - b[0]) + abs(a[1] - b[1]) >= 15.0}
    assert long_nets and long_nets <= set(named)
    refs = list(_text_boxes(fig, ax, "ref-").values())
    for b in named.values():
        assert not any(b.intersects(r) for r in refs)
