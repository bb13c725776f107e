"""Route varied random boards unlike router.boardgen's, and report what breaks.

Usage::

    python scripts/stress_route.py [--seeds A B] [--nets N] [--only FEATURE ...] [--save DIR]

Each seed in ``A .. B-1`` makes one board with a random mix of features:

    layers1     one copper layer (surface parts on the bottom, jumpers allowed)
    outline     a polygon outline: an L shape, a notched rectangle, or chamfered corners
    custom      footprints of the file's own: circle/rect/oval pads of odd sizes, drills,
                one pin on two pads, ``keepout_body``, non-plated holes
    rotated     parts at 90, 180, 270
    bottom      (two layers) surface parts on the bottom side
    keepouts    rect and polygon keepouts on one layer or both
    fixed       hand-drawn fixed traces (whole L-shaped connections and stubs from pads)
    classes     net classes with voltage and current
    offgrid     parts placed off the grid (pads off the grid)
    bignets     nets of up to 12 pins
    onepin      one-pin nets
    rules       other design rules: via and jumper sizes, edge clearance, default class
    spread      some many-pin nets over pins far apart (a ground or a bus), and nets within one part
    tight       parts closer to the edge and to keepouts (a channel of 1.2 mm, not 2.5 mm)
    grid=G      the routing grid pitch

Parts are spread out (their rectangles grown by a 2.5 mm channel never overlap, and
cover at most about 40 % of the board), so the boards should be routable. Each board
is written with ``dumps_board`` and read back with ``loads_board`` (so it is valid input),
checked, routed with ``route_board(board, seed=0)`` and checked again. One line per board:

    seed  features  nets  routed/nets  seconds  new violations by rule  [exception]

A violation is new when its (rule, message) was not in the check before routing; the
open rule is left out (unrouted nets are counted in ``routed``). A traceback follows the
line of a board whose routing raised. The last line sums up.
"""
from __future__ import annotations

import argparse
import math
import sys
import time
import traceback
from collections import Counter
from pathlib import Path

import numpy as np
from shapely.geometry import LineString, Polygon, box

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from router.boardfile import dumps_board, loads_board  # noqa: E402
from router.check import check  # noqa: E402
from router.footprints import builtin_footprint  # noqa: E402
from router.geometry import part_rect, placed_pads  # noqa: E402
from router.model import Board, Footprint, Hole, Keepout, Net, NetClass, Pad, Part, Rules, Trace  # noqa: E402
from router.negotiate import route_board  # noqa: E402

GRIDS = (0.1, 0.127, 0.2, 0.25, 0.5, 0.635, 1.27)
FEATURES = ("layers1", "outline", "custom", "rotated", "bottom", "keepouts", "fixed", "classes",
            "offgrid", "bignets", "onepin", "rules", "spread", "tight")
MARGIN = 1.5     # outline to a part rectangle
GAP = 2.5        # part rectangle to part rectangle (about five 0.25 mm tracks)
COVER = 0.40     # share of the board the part rectangles may cover

_SMD = ["chip-0603", "chip-0805", "chip-1206", "sot-23", "soic-8", "soic-14"]
_THT = ["dip-8", "dip-14", "to-220", "axial-10.16", "radial-2.5", "radial-5.0", "terminal-2", "terminal-3",
        "header-1x4", "header-1x6", "header-2x3", "header-2x5"]


def _r(v: float, nd: int = 3) -> float:
    return float(round(v, nd))


# ----------------------------------------------------------------------------- footprints

def _custom_footprints(rng) -> dict[str, Footprint]:
    """Three to five footprints of the file's own, of four kinds."""
    out = {}
    kinds = ["conn", "smd", "relay", "testpoint", "tab"]
    for k in range(int(rng.integers(3, 6))):
        kind = kinds[int(rng.integers(len(kinds)))]
        name = f"x{k}-{kind}"
        pads: list[Pad] = []
        holes: list[Hole] = []
        keepout = False
        if kind == "conn":       # one or two rows of plated pads, an odd pitch
            n = int(rng.integers(2, 7))
            rows = int(rng.integers(1, 3))
            pitch = float(rng.choice([2.0, 2.54, 3.0, 3.5, 3.96]))
            shape = str(rng.choice(["round", "rectangle", "obround"]))
            d = _r(rng.uniform(0.7, 1.0), 2)
            sw = _r(rng.uniform(d + 0.45, min(pitch - 0.45, d + 0.9)), 2)
            sh = sw if shape == "round" else _r(rng.uniform(sw, sw + 0.6), 2)
            pin = 1
            for r in range(rows):
                for i in range(n):
                    x = (i - (n - 1) / 2) * pitch
                    y = (r - (rows - 1) / 2) * (pitch + max(0.0, sh - sw))
                    pads.append(Pad(str(pin), (_r(x), _r(y)), "rectangle" if pin == 1 else shape, (sw, sh), d))
                    pin += 1
            body = (_r(n * pitch + 0.6), _r(rows * (pitch + max(0.0, sh - sw)) + 0.6))
        elif kind == "smd":      # two rows of surface pads
            n = int(rng.integers(1, 6))
            pitch = float(rng.choice([1.0, 1.27, 1.5, 2.0]))
            span = _r(rng.uniform(3.0, 6.0), 2)
            shape = str(rng.choice(["rectangle", "obround"]))
            pw = _r(rng.uniform(0.45, min(0.9, pitch - 0.4)), 2)
            ph = _r(rng.uniform(1.0, 1.8), 2)
            pin = 1
            for side, y in ((0, -span / 2), (1, span / 2)):
                idx = range(n) if side == 0 else reversed(range(n))
                for i in idx:
                    x = (i - (n - 1) / 2) * pitch
                    pads.append(Pad(str(pin), (_r(x), _r(y)), shape, (pw, ph), None))
                    pin += 1
            body = (_r(n * pitch + 0.8), _r(span - ph))
        elif kind == "relay":    # a large body that keeps other nets out, pads at the corners, a hole
            bw, bh = _r(rng.uniform(10, 16), 1), _r(rng.uniform(7, 11), 1)
            d = _r(rng.uniform(0.9, 1.2), 2)
            s = _r(d + rng.uniform(0.6, 1.0), 2)
            corners = [(-bw / 2 + 1.6, -bh / 2 + 1.6), (bw / 2 - 1.6, -bh / 2 + 1.6),
                       (bw / 2 - 1.6, bh / 2 - 1.6), (-bw / 2 + 1.6, bh / 2 - 1.6)]
            for i, (x, y) in enumerate(corners):
                pads.append(Pad(str(i + 1), (_r(x), _r(y)), "round", (s, s), d))
            if rng.random() < 0.5:
                pads.append(Pad("5", (0.0, _r(-bh / 2 + 1.6)), "obround", (s, _r(s + 0.8)), d))
            holes.append(Hole((0.0, _r(bh / 4)), 2.2))
            keepout = bool(rng.random() < 0.8)
            body = (bw, bh)
        elif kind == "testpoint":   # one odd pad, surface or plated
            s = _r(rng.uniform(1.0, 2.2), 2)
            if rng.random() < 0.5:
                pads.append(Pad("1", (0.0, 0.0), "round", (s, s), None))
            else:
                pads.append(Pad("1", (0.0, 0.0), "round", (s + 0.3, s + 0.3), _r(s * 0.5, 2)))
            body = (_r(s + 0.4), _r(s + 0.4))
        else:                    # "tab": a power part whose middle pin is also a large tab
            pitch = 2.3
            for i in range(3):
                pads.append(Pad(str(i + 1), (_r((i - 1) * pitch), -3.0), "rectangle", (1.0, 1.6), None))
            pads.append(Pad("2", (0.0, 2.5), "rectangle", (_r(rng.uniform(4.0, 6.0), 2), _r(rng.uniform(2.5, 3.5), 2)),
                            None))
            body = (6.6, 6.2)
        out[name] = Footprint(name, body, pads, holes, keepout)
    return out


def _has_surface(fp: Footprint) -> bool:
    return any(p.drill is None for p in fp.pads)


def _coarse(fp: Footprint) -> bool:
    """True when a wide trace can leave every pad (pads 2 mm or more apart)."""
    pts = [p.offset for p in fp.pads]
    for i in range(len(pts)):
        for j in range(i + 1, len(pts)):
            if math.dist(pts[i], pts[j]) < 1.99 and fp.pads[i].pin != fp.pads[j].pin:
                return False
    return True


# ----------------------------------------------------------------------------- the board

def _outline(rng, w: float, h: float, kind: str):
    if kind == "L":
        cw, ch = _r(w * rng.uniform(0.25, 0.45), 1), _r(h * rng.uniform(0.25, 0.45), 1)
        c = int(rng.integers(4))
        pts = {0: [(0, 0), (w, 0), (w, h - ch), (w - cw, h - ch), (w - cw, h), (0, h)],
               1: [(0, 0), (w, 0), (w, h), (cw, h), (cw, h - ch), (0, h - ch)],
               2: [(cw, 0), (w, 0), (w, h), (0, h), (0, ch), (cw, ch)],
               3: [(0, 0), (w - cw, 0), (w - cw, ch), (w, ch), (w, h), (0, h)]}[c]
    elif kind == "chamfer":    # 45-degree corners
        c = _r(min(w, h) * rng.uniform(0.08, 0.2), 1)
        pts = [(c, 0), (w - c, 0), (w, c), (w, h - c), (w - c, h), (c, h), (0, h - c), (0, c)]
    else:   # a notch in the middle of the bottom or the top edge
        nw, nh = _r(w * rng.uniform(0.15, 0.3), 1), _r(h * rng.uniform(0.15, 0.3), 1)
        x0 = _r((w - nw) / 2 + rng.uniform(-w / 6, w / 6), 1)
        if rng.random() < 0.5:
            pts = [(0, 0), (x0, 0), (x0, nh), (x0 + nw, nh), (x0 + nw, 0), (w, 0), (w, h), (0, h)]
        else:
            pts = [(0, 0), (w, 0), (w, h), (x0 + nw, h), (x0 + nw, h - nh), (x0, h - nh), (x0, h), (0, h)]
    return [(float(x), float(y)) for x, y in pts]


def make_board(seed: int, nets: int | None = None, only: list[str] | None = None):
    """A varied board for `seed`; returns (board, features)."""
    rng = np.random.default_rng(seed)
    rng2 = np.random.default_rng([seed, 2])     # the later features draw from here
    if only is None:
        feats = {f for f in FEATURES[:11] if rng.random() < (0.3 if f == "layers1" else 0.5)}
        feats |= {f for f in FEATURES[11:] if rng2.random() < 0.35}
    else:
        feats = {f for f in only if f in FEATURES}
        rng.random(len(FEATURES))
    layers = 1 if "layers1" in feats else 2
    feats.discard("bottom") if layers == 1 else None
    grid_p = [0.08, 0.12, 0.12, 0.2, 0.2, 0.14, 0.14]
    grid = float(rng.choice(GRIDS, p=np.array(grid_p) / sum(grid_p)))
    n_nets = int(nets) if nets else int(rng.integers(8, 121))
    if grid <= 0.1 and n_nets > 60:
        n_nets = int(rng.integers(8, 61))      # keep the finest grid's boards small enough to be quick
    max_pins = 12 if "bignets" in feats else 4

    # net sizes, mostly two or three pins (common practice)
    ks = np.arange(2, max_pins + 1)
    wk = 1.0 / (ks - 1.0) ** 1.3
    sizes = [int(k) for k in rng.choice(ks, size=n_nets, p=wk / wk.sum())]
    n_one = int(rng.integers(1, 5)) if "onepin" in feats else 0
    pins_needed = int(sum(sizes) * 1.25) + n_one + 4

    area = pins_needed * float(rng.uniform(13.0, 18.0)) * (1.6 if layers == 1 else 1.0)
    area = max(area, 900.0)
    aspect = float(rng.uniform(1.0, 1.7))
    okind = str(rng.choice(["L", "notch"])) if "outline" in feats else "rect"
    if okind != "rect" and rng2.random() < 0.3:
        okind = "chamfer"
    grow = 1.3 if okind != "rect" else 1.0
    if "keepouts" in feats:
        grow *= 1.1
    w = _r(math.sqrt(area * grow * aspect), 0)
    h = _r(math.sqrt(area * grow / aspect), 0)
    rules = Rules(grid=grid)
    if "rules" in feats:
        vd = float(rng2.choice([0.3, 0.35, 0.4, 0.5]))
        rules.via_drill = vd
        rules.via_diameter = _r(vd + 2 * float(rng2.choice([0.15, 0.2, 0.25])), 3)
        rules.edge_clearance = float(rng2.choice([0.25, 0.3, 0.5, 0.8, 1.0]))
        rules.min_hole_spacing = float(rng2.choice([0.25, 0.5, 0.6]))
        jd = float(rng2.choice([0.6, 0.8, 1.0]))
        rules.jumper_drill = jd
        rules.jumper_diameter = _r(jd + float(rng2.choice([0.6, 0.8, 1.0])), 3)
    tight = "tight" in feats
    gap = 1.2 if tight else GAP
    margin = 0.9 + rules.edge_clearance if tight else MARGIN + max(0.0, rules.edge_clearance - 0.5)
    if okind == "rect":
        outline = [(0.0, 0.0), (w, 0.0), (w, h), (0.0, h)]
        size = (w, h)
    else:
        outline = _outline(rng, w, h, okind)
        size = None
    board = Board(f"stress-{seed}", outline, copper_layers=layers, rules=rules, size=size)
    board.classes["power"] = NetClass("power", 0.5, 0.25, current=1.0)
    if "rules" in feats:
        board.classes["default"] = NetClass("default", float(rng2.choice([0.15, 0.2, 0.25, 0.3])),
                                            float(rng2.choice([0.15, 0.2, 0.25])))
    if "classes" in feats:
        board.classes["power"] = NetClass("power", 0.6, 0.3, current=1.2, voltage=24.0)
        board.classes["mains"] = NetClass("mains", 0.4, 0.3, voltage=float(rng.choice([60.0, 120.0])))
        board.classes["thin"] = NetClass("thin", 0.2, 0.15)
        board.classes["wide"] = NetClass("wide", 1.0, 0.3, current=2.2)
    custom = _custom_footprints(rng) if "custom" in feats else {}
    board.footprints = dict(custom)

    room = Polygon(outline).buffer(-margin, join_style=2)
    blocked = []      # grown rectangles and keepouts as shapely shapes
    # keepouts first, in free space
    if "keepouts" in feats:
        for _ in range(int(rng.integers(1, 4))):
            for _try in range(50):
                kw, kh = float(rng.uniform(3, 9)), float(rng.uniform(3, 9))
                minx, miny, maxx, maxy = room.bounds
                x = float(rng.uniform(minx, maxx - kw))
                y = float(rng.uniform(miny, maxy - kh))
                x, y, kw, kh = _r(x, 1), _r(y, 1), _r(kw, 1), _r(kh, 1)
                if rng.random() < 0.5:
                    poly = [(x, y), (x + kw, y), (x + kw, y + kh), (x, y + kh)]
                    is_rect = True
                else:   # a triangle or an L
                    if rng.random() < 0.5:
                        poly = [(x, y), (x + kw, y), (x, y + kh)]
                    else:
                        poly = [(x, y), (x + kw, y), (x + kw, _r(y + kh / 2)), (_r(x + kw / 2), _r(y + kh / 2)),
                                (_r(x + kw / 2), y + kh), (x, y + kh)]
                    is_rect = False
                shp = Polygon(poly)
                if not room.contains(shp) or any(shp.intersects(b) for b in blocked):
                    continue
                if layers == 1:
                    klayers = None if rng.random() < 0.5 else ["bottom"]
                else:
                    klayers = [None, ["top"], ["bottom"], ["top", "bottom"]][int(rng.integers(4))]
                board.keepouts.append(Keepout(poly, klayers, is_rect))
                blocked.append(shp.buffer(gap / 2, join_style=2))
                break

    # parts by rejection: random place, rectangle grown by the channel clear of all others
    pool_fp = []
    for f in _SMD:
        pool_fp.append((f, True))
    for f in _THT:
        pool_fp.append((f, False))
    for name, fp in custom.items():
        pool_fp += [(name, _has_surface(fp))] * 3
    parts: list[Part] = []
    cover = 0.0
    board_area = Polygon(outline).area
    pins = 0
    misses = 0
    count = Counter()
    while pins < pins_needed and misses < 200 and cover < COVER * board_area:
        fpname, surface = pool_fp[int(rng.integers(len(pool_fp)))]
        rot = int(rng.integers(4)) * 90 if "rotated" in feats else 0
        if layers == 1:
            side = "bottom" if surface else "top"
        elif "bottom" in feats and surface and rng.random() < 0.4:
            side = "bottom"
        elif "bottom" in feats and not surface and rng.random() < 0.1:
            side = "bottom"
        else:
            side = "top"
        probe = Part("P", fpname, at=(0.0, 0.0), rotation=rot, side=side)
        x0, y0, x1, y1 = part_rect(board, probe)
        minx, miny, maxx, maxy = room.bounds
        px = float(rng.uniform(minx - x0, maxx - x1)) if maxx - x1 > minx - x0 else None
        py = float(rng.uniform(miny - y0, maxy - y1)) if maxy - y1 > miny - y0 else None
        if px is None or py is None:
            misses += 1
            continue
        if "offgrid" in feats:
            px, py = _r(px, 3), _r(py, 3)
        else:
            px, py = _r(round(px / grid) * grid, 4), _r(round(py / grid) * grid, 4)
        rect = box(px + x0, py + y0, px + x1, py + y1)
        if not room.contains(rect) or any(rect.intersects(b) for b in blocked):
            misses += 1
            continue
        misses = 0
        fp = custom.get(fpname) or builtin_footprint(fpname)
        letter = "X" if fpname in custom else {"chip": "R", "sot": "Q", "soic": "U", "dip": "U", "to": "Q",
                                                "axial": "R", "radial": "C", "terminal": "J",
                                                "header": "J"}[fpname.split("-")[0]]
        count[letter] += 1
        parts.append(Part(f"{letter}{count[letter]}", fpname, "", (px, py), rot, side, False))
        blocked.append(rect.buffer((gap if not tight or rng2.random() < 0.5 else GAP) / 2, join_style=2))
        cover += rect.area
        pins += len(fp.pins())
    board.parts = parts

    # nets by locality over the pins (one entry per pin name)
    pin_names, pin_xy, pin_part, pin_coarse = [], [], [], []
    for k, p in enumerate(parts):
        fp = custom.get(p.footprint) or builtin_footprint(p.footprint)
        coarse = _coarse(fp)
        pads = [pp for pp in placed_pads(board, [p])]
        seen = set()
        for pp in pads:
            if pp.pin in seen:
                continue
            seen.add(pp.pin)
            pin_names.append(f"{p.ref}.{pp.pin}")
            pin_xy.append((pp.x, pp.y))
            pin_part.append(k)
            pin_coarse.append(coarse)
    xy = np.asarray(pin_xy, dtype=float).reshape(-1, 2)
    part_of = np.asarray(pin_part)
    free = np.ones(len(pin_names), dtype=bool)
    # shrink the sizes until the pins suffice (with a fifth of them left free)
    budget = int(len(pin_names) * 0.8) - n_one
    while sizes and sum(sizes) > budget:
        k = max(range(len(sizes)), key=lambda i: sizes[i])
        if sizes[k] > 2:
            sizes[k] -= 1
        else:
            sizes.pop()
    classes = ["default"]
    if "classes" in feats:
        classes = ["power", "mains", "thin", "wide"]
    n_special = max(1, len(sizes) // 6)
    special = set(int(i) for i in rng.choice(len(sizes), size=min(n_special, len(sizes)), replace=False)) \
        if sizes else set()
    k_net = 0
    for ni, k in enumerate(sizes):
        idx = np.flatnonzero(free)
        if len(idx) < 2:
            break
        first = int(idx[int(rng.integers(len(idx)))])
        members = [first]
        free[first] = False
        far = "spread" in feats and k >= 5 and rng2.random() < 0.5
        within = "spread" in feats and k == 2 and rng2.random() < 0.15
        while len(members) < k:
            idx = np.flatnonzero(free)
            if len(idx) == 0:
                break
            others = idx[~np.isin(part_of[idx], part_of[members])]
            same = idx[np.isin(part_of[idx], part_of[members])]
            cand = others if len(others) else idx
            if within and len(same):
                cand = same
            d = np.min(np.hypot(xy[cand, None, 0] - xy[None, members, 0], xy[cand, None, 1] - xy[None, members, 1]),
                       axis=1)
            order = cand[np.argsort(d, kind="stable")]
            pick = int(order[int(rng.integers(min(3, len(order))))])
            if far and len(order) > 3:
                pick = int(order[int(rng2.integers(len(order)))])
            members.append(pick)
            free[pick] = False
        cls = "default"
        if ni in special:
            c = classes[int(rng.integers(len(classes)))] if "classes" in feats else "power"
            if c == "thin" or all(pin_coarse[m] for m in members):
                cls = c
        k_net += 1
        board.nets.append(Net(f"N{k_net}" if cls == "default" else f"{cls.upper()}{k_net}",
                              [pin_names[m] for m in members], cls))
    for _ in range(n_one):
        idx = np.flatnonzero(free)
        if not len(idx):
            break
        m = int(idx[int(rng.integers(len(idx)))])
        free[m] = False
        k_net += 1
        board.nets.append(Net(f"ONE{k_net}", [pin_names[m]], "default"))

    if "fixed" in feats:
        _fixed_traces(rng, board)
    return board, feats, grid


def _fixed_traces(rng, board: Board) -> None:
    """Hand-drawn fixed copper: whole L-shaped connections of some two-pin nets, and pad stubs."""
    pads = placed_pads(board)
    by_net: dict[str, list] = {}
    for p in pads:
        by_net.setdefault(p.net, []).append(p)
    edge = Polygon(board.outline).buffer(-(board.rules.edge_clearance + 0.6), join_style=2)
    drawn: list = []         # (shape, layer)

    def free_path(pts, layer, net, width):
        line = LineString(pts)
        shp = line.buffer(width / 2 + 0.6)
        if not edge.contains(line.buffer(width / 2)):
            return False
        for q in pads:
            if q.net != net and layer in q.layers and shp.intersects(box(*q.bounds())):
                return False
            if q.net != net and q.drill is not None and shp.intersects(box(*q.bounds())):
                return False
        for k in board.keepouts:
            if (k.layers is None or layer in k.layers) and shp.intersects(Polygon(k.polygon)):
                return False
        for part in board.parts:
            fp = board.footprints.get(part.footprint)
            if fp is not None and (fp.keepout_body or fp.holes):
                x0, y0, x1, y1 = part_rect(board, part)
                if shp.intersects(box(x0, y0, x1, y1)) and not any(q.ref == part.ref for q in by_net.get(net, [])):
                    return False
        for s, l in drawn:
            if l == layer and shp.intersects(s):
                return False
        return True

    n_done = 0
    for net in board.nets:
        if n_done >= 4:
            break
        ps = by_net.get(net.name, [])
        if len(net.pins) != 2 or len(ps) != 2 or rng.random() < 0.6:
            continue
        a, b = ps
        common = [l for l in board.layers if l in a.layers and l in b.layers]
        if not common:
            continue
        layer = common[int(rng.integers(len(common)))]
        width = board.classes[net.net_class].trace_width
        for corner in ((b.x, a.y), (a.x, b.y)):
            pts = [(a.x, a.y), corner, (b.x, b.y)]
            pts = [p for i, p in enumerate(pts) if i == 0 or p != pts[i - 1]]
            if len(pts) < 2:
                break
            if free_path(pts, layer, net.name, width):
                board.traces.append(Trace(net.name, layer, width, pts, True))
                drawn.append((LineString(pts).buffer(width / 2), layer))
                n_done += 1
                break
    # stubs: a short straight trace out of a pad of a multi-pin net
    for _ in range(int(rng.integers(1, 4))):
        multi = [n for n in board.nets if len(n.pins) >= 3]
        if not multi:
            break
        net = multi[int(rng.integers(len(multi)))]
        ps = by_net.get(net.name, [])
        if not ps:
            continue
        p = ps[int(rng.integers(len(ps)))]
        layer = p.layers[int(rng.integers(len(p.layers)))]
        width = board.classes[net.net_class].trace_width
        L = float(rng.uniform(1.5, 4.0))
        for dx, dy in [(1, 0), (-1, 0), (0, 1), (0, -1)]:
            pts = [(p.x, p.y), (_r(p.x + dx * L), _r(p.y + dy * L))]
            if free_path(pts, layer, net.name, width):
                board.traces.append(Trace(net.name, layer, width, pts, True))
                drawn.append((LineString(pts).buffer(width / 2), layer))
                break


# ----------------------------------------------------------------------------- running

def _viol_keys(vs):
    return Counter((v.rule, v.message) for v in vs if v.rule not in ("open", "dangling_end"))


def run_one(seed: int, nets: int | None, only, save: Path | None):
    t0 = time.perf_counter()
    board, feats, grid = make_board(seed, nets, only)
    text = dumps_board(board)
    if save is not None:
        save.mkdir(parents=True, exist_ok=True)
        (save / f"stress-{seed}.toml").write_text(text)
    board = loads_board(text, f"stress-{seed}.toml")
    before = _viol_keys(check(board))
    t1 = time.perf_counter()
    exc = None
    res = None
    try:
        res = route_board(board, seed=0)
    except Exception:   # report every crash, keep going
        exc = traceback.format_exc()
    secs = time.perf_counter() - t1
    routable = [n for n in board.nets if len(n.pins) >= 1]
    line = {"seed": seed, "features": ",".join(sorted(feats)) + f",grid={grid}", "nets": len(routable),
            "pre": sum(before.values()),
            "seconds": secs, "gen_seconds": t1 - t0}
    if exc is not None:
        line.update(routed=None, new={}, exc=exc, failed={})
        return line
    after = _viol_keys(check(res.board))
    new = after - before
    by_rule = Counter()
    for (rule, _), c in new.items():
        by_rule[rule] += c
    line.update(routed=res.figures["totals"]["routed"], new=dict(by_rule), exc=None, failed=dict(res.failed),
                new_msgs=sorted(new))
    if save is not None:
        (save / f"stress-{seed}-routed.toml").write_text(dumps_board(res.board))
    return line


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(prog="stress_route", description=__doc__.split("\n")[0])
    ap.add_argument("--seeds", type=int, nargs=2, metavar=("A", "B"), default=(0, 20),
                    help="seeds A .. B-1 (default 0 20)")
    ap.add_argument("--nets", type=int, default=None, help="nets per board (default: random 8 to 120)")
    ap.add_argument("--only", nargs="*", default=None, help=f"exactly these features ({', '.join(FEATURES)})")
    ap.add_argument("--save", type=Path, default=None, help="write each board (and its routed board) here")
    ap.add_argument("-v", "--verbose", action="store_true", help="print the new violations' messages and reasons")
    args = ap.parse_args(argv)
    tot = Counter()
    secs = 0.0
    for seed in range(args.seeds[0], args.seeds[1]):
        try:
            ln = run_one(seed, args.nets, args.only, args.save)
        except Exception:
            print(f"seed={seed} GENERATOR FAILED\n{traceback.format_exc()}", flush=True)
            tot["generator_failed"] += 1
            continue
        tot["boards"] += 1
        secs += ln["seconds"]
        if ln["exc"] is not None:
            tot["crashes"] += 1
            head = ln["exc"].strip().splitlines()[-1]
            print(f"seed={seed} {ln['features']} nets={ln['nets']} CRASH {ln['seconds']:.1f}s {head}")
            print(ln["exc"], flush=True)
            continue
        full = ln["routed"] == ln["nets"]
        tot["fully_routed"] += full
        tot["with_new_violations"] += bool(ln["new"])
        new = " ".join(f"{k}={v}" for k, v in sorted(ln["new"].items())) or "-"
        print(f"seed={seed} {ln['features']} nets={ln['nets']} routed={ln['routed']}/{ln['nets']} "
              f"{ln['seconds']:.1f}s pre={ln['pre']} new: {new}", flush=True)
        if args.verbose:
            for rule, msg in ln["new_msgs"]:
                print(f"    NEW {rule}: {msg}")
            for net, why in ln["failed"].items():
                print(f"    FAILED {net}: {why}")
            sys.stdout.flush()
    print(f"TOTAL boards={tot['boards']} fully_routed={tot['fully_routed']} "
          f"with_new_violations={tot['with_new_violations']} crashes={tot['crashes']} "
          f"generator_failed={tot['generator_failed']} route_seconds={secs:.1f}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
