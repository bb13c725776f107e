"""router.layout: the board resolved once.

Checked against the functions each consumer used before (placed_pads, copper_items, holes,
placed_holes, body_polygon), against a brute-force scan with shapely distances for the index,
and, for every consumer, against outputs stored before the consumers moved onto the layout
(tests/data/layout/, written by scripts/layout_golden.py at 913f18d: see its docstring).
"""
from __future__ import annotations

import copy
import importlib.util
import json
import random
import sys
from pathlib import Path

import pytest
from shapely.geometry import LineString, Point as SPoint, box

from router.boardfile import load_board
from router.boardgen import generate_board
from router.copper import copper_items, holes
from router.geometry import body_polygon, body_rect, placed_holes, placed_pads
from router.layout import builds, resolve
from router.realgen import real_board

DATA = Path(__file__).parent / "data" / "layout"


def _golden_module():
    spec = importlib.util.spec_from_file_location(
        "layout_golden", Path(__file__).parent.parent / "scripts" / "layout_golden.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


@pytest.fixture(scope="module")
def boards():
    return {name: load_board(DATA / f"{name}.toml") for name in ("demo", "gen", "real")}


def _same_item(a, b):
    return (a.kind, a.net, a.layers, a.source, a.radius, a.index, a.width, a.pad) == \
           (b.kind, b.net, b.layers, b.source, b.radius, b.index, b.width, b.pad) and a.core.equals_exact(b.core, 0.0)


@pytest.mark.parametrize("name", ["demo", "gen", "real"])
def test_layout_holds_what_the_functions_made(boards, name):
    b = boards[name]
    lay = resolve(b)
    assert list(lay.pads) == placed_pads(b)
    old = copper_items(b)
    assert len(lay.items) == len(old) and all(_same_item(x, y) for x, y in zip(lay.items, old))
    assert list(lay.holes) == holes(b)
    assert list(lay.npth) == placed_holes(b)
    placed = [p for p in b.parts if p.at is not None]
    assert [bd.ref for bd in lay.bodies] == [p.ref for p in placed]
    for bd, p in zip(lay.bodies, placed):
        assert bd.polygon.equals_exact(body_polygon(b, p), 0.0) and bd.rect == tuple(body_rect(b, p))
        assert bd.owners == {pd.net for pd in lay.pads if pd.ref == p.ref}
    assert [k.polygon.bounds for k in lay.keepouts] == [box(*k.polygon.bounds).bounds for k in lay.keepouts]
    for k, it in enumerate(lay.items[:len(lay.pads)]):
        assert it.pad is lay.pads[k]
    assert lay.copper_bounds.tolist() == [list(it.bounds()) for it in old]


@pytest.mark.parametrize("name", ["demo", "real"])
def test_index_answers_as_a_brute_force_scan(boards, name):
    """Random boxes and points: the index's answers against every shape scanned (shapely distances)."""
    b = boards[name]
    lay = resolve(b)
    rng = random.Random(7)
    x0, y0, x1, y1 = lay.outline.bounds
    shapes = [(kind, k) for kind, seq in (("copper", lay.items), ("hole", lay.holes), ("body", lay.bodies),
                                          ("keepout", lay.keepouts)) for k in range(len(seq))]

    def bounds_of(kind, k):
        s = lay.shape(kind, k)
        if kind == "copper":
            return s.bounds()
        if kind == "hole":
            r = max(s.drill, s.diameter or 0.0) / 2
            return (s.x - r, s.y - r, s.x + r, s.y + r)
        return s.rect if kind == "body" else s.polygon.bounds

    for _ in range(60):
        cx, cy = rng.uniform(x0, x1), rng.uniform(y0, y1)
        w, h = rng.uniform(0, 6), rng.uniform(0, 6)
        q = (cx - w / 2, cy - h / 2, cx + w / 2, cy + h / 2)
        qb = box(*q)
        want = [s for s in shapes if box(*bounds_of(*s)).intersects(qb)]
        assert lay.query(q) == sorted(want, key=shapes.index)
        layer = rng.choice(lay.layers)
        got = lay.copper_near(q, layer)
        assert got == [k for kind, k in want if kind == "copper" and layer in lay.items[k].layers]
        # exact copper within d of a point and of a segment: shapely distance to every item
        d = rng.uniform(0, 1.0)
        for geom in (SPoint(cx, cy), LineString([(cx, cy), (cx + w, cy)])):
            brute = [k for k, it in enumerate(lay.items)
                     if layer in it.layers and it.core.distance(geom) - it.radius <= d + 1e-6]
            assert lay.copper_within(geom, d, layer) == brute


def test_copper_pairs_are_every_overlapping_box(boards):
    import numpy as np
    lay = resolve(boards["gen"])
    bounds = np.array([it.bounds(0.2) for it in lay.items])
    I, J = lay.copper_pairs(bounds)
    got = set(zip(I.tolist(), J.tolist()))
    want = {(i, j) for i in range(len(lay.items)) for j in range(len(lay.items))
            if box(*bounds[i]).intersects(box(*lay.items[j].bounds()))}
    assert got == want and list(zip(I.tolist(), J.tolist())) == sorted(got)


def test_one_layout_per_board_state():
    b = generate_board(2, nets=6)
    lay = resolve(b)
    assert resolve(b) is lay
    assert resolve(copy.deepcopy(b)) is lay            # an equal board: the same state
    placed = builds["placed"]
    b.traces.append(_trace(b))
    lay2 = resolve(b)
    assert lay2 is not lay and len(lay2.items) == len(lay.items) + 1
    assert builds["placed"] == placed                  # only copper changed: pads not placed again
    assert lay2.pads is lay.pads
    part = next(p for p in b.parts if p.ref == lay.pads[0].ref)
    part.at = (part.at[0] + 0.5, part.at[1])
    lay3 = resolve(b)
    assert builds["placed"] == placed + 1 and lay3.pads != lay.pads
    assert list(lay3.pads) == placed_pads(b)


def _trace(b):
    from router.model import Trace
    p = placed_pads(b)[0]
    return Trace(p.net, p.layers[0], 0.25, [p.at, (p.x + 1.0, p.y)])


@pytest.mark.parametrize("name", ["demo", "gen", "real"])
def test_outputs_are_the_bytes_made_before_the_layout(boards, name):
    """Check, warnings, figures, SVG, HTML page and every fabrication file of three routed boards
    (the demo with its pour, a generated board, a real-looking board with turned pads and arcs,
    each also with traces moved into violations) against digests stored before the change
    (scripts/layout_golden.py says which six changed on purpose, and why)."""
    mod = _golden_module()
    want = {k: v for k, v in json.loads((DATA / "golden.json").read_text(encoding="utf-8")).items()
            if k.split("/")[0] in (name, name + "+shifted")}
    got = mod.outputs(name, boards[name])
    assert {k: v for k, v in got.items() if want.get(k) != v} == {}
    assert set(got) == set(want) and len(want) > 20


def test_layout_built_once_per_board_state_in_each_command(tmp_path, monkeypatch, capsys):
    """`route`, `check` and `export` of the demo, each as in a fresh process (caches emptied):
    the parts are placed once per command, and each board state a command resolves is built
    once, however many modules ask for it."""
    import sys as _sys
    from collections import Counter

    import router.layout as L
    from router.boardfile import save_board
    from router.cli import main

    seen = Counter()
    real = L.resolve

    def counting(board):
        seen[L.state_key(board)] += 1
        return real(board)
    for mod in list(_sys.modules.values()):             # modules that imported resolve by name
        if getattr(mod, "__name__", "").startswith("router") and getattr(mod, "resolve", None) is real:
            monkeypatch.setattr(mod, "resolve", counting)
    b = load_board(DATA / "demo.toml")
    b.traces.clear(); b.vias.clear(); b.jumpers.clear()
    for p in b.pours:
        p.filled, p.filled_for = [], None
    save_board(b, tmp_path / "in.toml")
    out = {}
    for cmd in (["route", str(tmp_path / "in.toml"), "-o", str(tmp_path / "out.toml"), "--quiet"],
                ["check", str(tmp_path / "out.toml")],
                ["export", str(tmp_path / "out.toml"), "-o", str(tmp_path / "fab"), "--quiet"]):
        L._LAYOUTS.clear(); L._PLACED.clear(); seen.clear()
        before = dict(L.builds)
        assert main(cmd) == 0
        out[cmd[0]] = (sum(seen.values()), len(seen), L.builds["placed"] - before["placed"],
                       L.builds["layout"] - before["layout"])
    capsys.readouterr()
    for name, (calls, states, placed, built) in out.items():
        assert placed == 1, (name, out)
        assert built == states, (name, out)             # no state built twice
    assert out["check"][1] == 1 and out["export"][1] == 1
    assert out["export"][0] > 1 and out["route"][0] > out["route"][1]   # asked again, built once
