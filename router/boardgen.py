"""Random routable boards for benchmarks and tests.

:func:`generate_board` builds a board of built-in footprints laid out in rows with
wide routing channels between them, and random nets that mostly join nearby
pins, so that a good router can complete it. The same seed gives the same
board, byte for byte once written.

The layout: mounting holes (``hole-3.2``) in the corners, then parts packed in
rows (shelves) inside a margin, each part at a random rotation. Leftover width
and height are shared out between the gaps, so a board with few parts is
spread over the whole area rather than crowded into one corner. The parts'
rectangles (bodies and pads) cover at most about half the board, so at least
about half of it is free for copper.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .errors import BoardError
from .footprints import builtin_footprint
from .geometry import part_rect, transform
from .model import Board, NetClass, Net, Part, Rules
from .units import TOL, snap, to_cell

__all__ = ["generate_board", "POWER_CLASS", "OFFGRID_STEPS"]

#: The class of the generated power nets (width and clearance common practice for a
#: few hundred milliamps on a hobby board).
POWER_CLASS = NetClass("power", trace_width=0.5, clearance=0.25)

#: Offsets added to part positions when ``offgrid=True``: 5 mil, 2.5 mil and 15 mil,
#: none of them a multiple of the usual 0.25 / 0.5 / 1.27 mm grids' cells.
OFFGRID_STEPS = (0.127, 0.0635, 0.381)

MARGIN = 1.5          # board edge to any part rectangle (edge_clearance 0.5 plus room for a trace)
GAP = 2.5             # least channel between two part rectangles: about five 0.25 mm tracks
GAP_DENSE = 2.0       # the channel when many pins must fit
HOLE = "hole-3.2"
HOLE_INSET = 4.0      # corner hole centre from each edge
MAX_COVER = 0.5       # part rectangles cover at most this share of the board
MAX_SHELF_FILL = 0.82  # rectangles grown by the gap fill at most this share of the inner area

# (footprint, weight, fixed, ref letter) per layer count; headers and terminals are connectors.
_SMD = [("chip-0603", 5, "RC"), ("chip-0805", 4, "RC"), ("chip-1206", 2, "RC"),
        ("sot-23", 3, "Q"), ("soic-8", 3, "U"), ("soic-14", 2, "U")]
_THT = [("dip-8", 2, "U"), ("dip-14", 2, "U"), ("to-220", 1, "Q"), ("axial-10.16", 3, "R"),
        ("radial-2.5", 2, "C"), ("terminal-2", 1, "J"), ("terminal-3", 1, "J")]
_HEADERS_1 = [f"header-1x{n}" for n in range(2, 9)]
_HEADERS_2 = [f"header-2x{n}" for n in range(2, 7)]
_CONNECTOR_FAMILIES = ("header", "terminal")


@dataclass
class _Item:
    """A part chosen for the board, before and after layout."""
    footprint: str
    rotation: int
    side: str
    letter: str
    w: float                  # its rectangle (body and pads) at this rotation
    h: float
    dx: float                 # rectangle centre minus part centre
    dy: float
    pins: int
    x: float = 0.0            # rectangle centre after layout
    y: float = 0.0


_PROBE = Board("probe", [(0, 0), (1, 0), (1, 1), (0, 1)])


def _rect_of(fpname: str, rotation: int, side: str):
    part = Part("P", fpname, at=(0.0, 0.0), rotation=rotation, side=side)
    x0, y0, x1, y1 = part_rect(_PROBE, part)
    return x1 - x0, y1 - y0, (x0 + x1) / 2, (y0 + y1) / 2


def _pool(layers: int):
    """(footprint, weight, letters, side) choices for a board of `layers` copper layers."""
    pool = []
    if layers == 2:
        pool += [(f, w, l, "top") for f, w, l in _SMD]
    else:
        # surface pads of a one-layer board go on the copper side, the bottom
        pool += [(f, max(1, w // 2), l, "bottom") for f, w, l in _SMD if f.startswith(("chip", "sot"))]
    pool += [(f, w, l, "top") for f, w, l in _THT]
    pool += [("header-1xN", 2, "J", "top"), ("header-2xN", 2, "J", "top")]
    return pool


def _concrete(rng, name: str) -> str:
    if name == "header-1xN":
        return _HEADERS_1[int(rng.integers(len(_HEADERS_1)))]
    if name == "header-2xN":
        return _HEADERS_2[int(rng.integers(len(_HEADERS_2)))]
    return name


def _pins_of(fpname: str) -> list[str]:
    return builtin_footprint(fpname).pins()


def _new_item(rng, choice) -> _Item:
    name, _, letters, side = choice
    fpname = _concrete(rng, name)
    rot = int(rng.integers(4)) * 90
    w, h, dx, dy = _rect_of(fpname, rot, side)
    letter = letters[int(rng.integers(len(letters)))]
    return _Item(fpname, rot, side, letter, w, h, dx, dy, len(_pins_of(fpname)))


def _area_per_pin(choice, gap) -> float:
    name, _, _, side = choice
    fpname = {"header-1xN": "header-1x5", "header-2xN": "header-2x4"}.get(name, name)
    w, h, _, _ = _rect_of(fpname, 0, side)
    return (w + gap) * (h + gap) / len(_pins_of(fpname))


def _choose(rng, pool, pins_needed: int, area_budget: float, cover_budget: float, gap: float):
    """Parts until there are `pins_needed` pins or the area budgets are spent."""
    weights = np.array([c[1] for c in pool], dtype=float)
    app = np.array([_area_per_pin(c, gap) for c in pool])
    items: list[_Item] = []
    pins = area = cover = 0.0
    misses = 0
    while pins < pins_needed and misses < 20:
        left_area = area_budget - area
        left_pins = pins_needed - pins
        w = weights.copy()
        if left_area <= 0:
            break
        need = left_area / left_pins          # area we may spend per pin still needed
        if need < float(np.average(app, weights=weights)):
            # short of room: only the parts dense enough, else the densest few
            dense = app <= need * 1.2
            if not dense.any():
                dense = app <= np.sort(app)[min(2, len(app) - 1)]
            w = np.where(dense, w, 0.0)
        choice = pool[int(rng.choice(len(pool), p=w / w.sum()))]
        item = _new_item(rng, choice)
        a = (item.w + gap) * (item.h + gap)
        if area + a > area_budget or cover + item.w * item.h > cover_budget:
            misses += 1
            continue
        items.append(item)
        pins += item.pins
        area += a
        cover += item.w * item.h
    return items


def _spread(rng, total: float, n_gaps: int, least: float) -> list[float]:
    """`n_gaps` gaps of at least `least` summing to `total`; the extra shared out at random."""
    extra = total - least * n_gaps
    if n_gaps == 0:
        return []
    share = rng.dirichlet(np.full(n_gaps, 4.0)) * extra
    return [least + float(s) for s in share]


def _row_width(row, gap) -> float:
    return sum(i.w for i in row) + gap * (len(row) - 1)


def _rows(items: list[_Item], width: float, narrow: float, gap: float):
    """First-fit decreasing height: each item, tallest first, into the first row with room.

    Row 0 is `narrow` wide (it runs between two corner holes), the others `width`; the
    row chosen to go last must be narrow too. None when an item is wider than its rows.
    """
    rows: list[list[_Item]] = []
    used: list[float] = []
    for it in sorted(items, key=lambda i: (-i.h, -i.w)):
        for k, row in enumerate(rows):
            cap = narrow if k == 0 else width
            if used[k] + gap + it.w <= cap + TOL:
                row.append(it)
                used[k] += gap + it.w
                break
        else:
            if it.w > (narrow if not rows else width) + TOL:
                if it.w > width + TOL or not rows:
                    return None
            rows.append([it])
            used.append(it.w)
    if len(rows) > 1:
        fits = [k for k in range(1, len(rows)) if used[k] <= narrow + TOL]
        if fits:
            k = fits[-1]
            rows.append(rows.pop(k))
        else:
            # no row is narrow enough to go last: its smallest item starts a row of its own
            row = rows[-1]
            small = min(range(len(row)), key=lambda j: row[j].w)
            if row[small].w > narrow + TOL:
                return None
            rows.append([row.pop(small)])
    return rows


def _pack(rng, items: list[_Item], x0, y0, x1, y1, corner: float, gap: float) -> bool:
    """Rows of items inside (x0, y0, x1, y1); the first and last rows keep out of the corners.

    Sets each item's rectangle centre; False when they do not fit. The rows between the
    first and the last are shuffled, and so are the items of each row, so that part kinds
    are mixed over the board.
    """
    if not items:
        return True
    width, height = x1 - x0, y1 - y0
    narrow = width - 2 * corner
    rows = _rows(items, width, narrow, gap)
    if rows is None:
        return False
    if len(rows) > 3:
        middle = rows[1:-1]
        rng.shuffle(middle)
        rows = [rows[0]] + middle + [rows[-1]]
    for row in rows:
        rng.shuffle(row)
    heights = [max(i.h for i in r) for r in rows]
    # the first and last rows are at least as tall as the corner zones
    heights[0] = max(heights[0], corner - gap)
    if len(rows) > 1:
        heights[-1] = max(heights[-1], corner - gap)
    if sum(heights) + gap * (len(rows) - 1) > height + TOL:
        return False
    # at least `gap` between rows, the rest shared out
    inner = height - sum(heights) - gap * (len(rows) - 1)
    share = _spread(rng, inner, len(rows) + 1, 0.0)
    gaps_y = [share[0]] + [gap + s for s in share[1:-1]] + [share[-1]]
    y = y0 + gaps_y[0]
    last = len(rows) - 1
    for k, (row, rh) in enumerate(zip(rows, heights)):
        lo, hi = (x0 + corner, x1 - corner) if k in (0, last) else (x0, x1)
        inner_w = (hi - lo) - sum(i.w for i in row) - gap * (len(row) - 1)
        share = _spread(rng, max(inner_w, 0.0), len(row) + 1, 0.0)
        x = lo + share[0]
        for j, it in enumerate(row):
            it.x = x + it.w / 2
            slack = rh - it.h
            it.y = y + it.h / 2 + (float(rng.uniform(0.0, slack)) if slack > 0 else 0.0)
            x += it.w + gap + share[j + 1]
        y += rh + gaps_y[k + 1]
    return True


def _snap_to(v: float, pitch: float) -> float:
    return snap(to_cell(v, pitch) * pitch)


def _refs(items: list[_Item]) -> list[str]:
    count: dict[str, int] = {}
    out = []
    for it in items:
        count[it.letter] = count.get(it.letter, 0) + 1
        out.append(f"{it.letter}{count[it.letter]}")
    return out


def _net_sizes(rng, nets: int, max_pins: int) -> list[int]:
    # mostly two- and three-pin nets, as on real boards; the upper end rarer (common practice)
    ks = np.arange(2, max_pins + 1)
    w = 1.0 / (ks - 1.0) ** 1.2
    return [int(k) for k in rng.choice(ks, size=nets, p=w / w.sum())]


def _fit_sizes(sizes: list[int], pins: int) -> list[int]:
    """Shrink the largest nets, then drop nets, until the pins suffice."""
    sizes = list(sizes)
    while sum(sizes) > pins:
        k = max(range(len(sizes)), key=lambda i: sizes[i])
        if sizes[k] > 2:
            sizes[k] -= 1
        else:
            sizes.pop()
    return sizes


def _make_nets(rng, sizes, pin_xy, pin_part, n_power):
    """Nets of the given sizes over free pins, each grown from a random pin to its neighbours."""
    n = len(pin_xy)
    free = np.ones(n, dtype=bool)
    xy = np.asarray(pin_xy, dtype=float)
    part = np.asarray(pin_part)
    nets = []
    power = set(int(i) for i in rng.choice(len(sizes), size=min(n_power, len(sizes)), replace=False))
    for ni, k in enumerate(sizes):
        idx = np.flatnonzero(free)
        if len(idx) < 2:
            break
        first = int(idx[int(rng.integers(len(idx)))])
        members = [first]
        free[first] = False
        while len(members) < k:
            idx = np.flatnonzero(free)
            if len(idx) == 0:
                break
            others = idx[~np.isin(part[idx], part[members])]
            cand = others if len(others) else idx
            d = np.min(np.hypot(xy[cand, None, 0] - xy[None, members, 0],
                                xy[cand, None, 1] - xy[None, members, 1]), axis=1)
            order = cand[np.argsort(d, kind="stable")]
            if rng.random() < 0.85:
                pick = order[int(rng.integers(min(4, len(order))))]
            else:
                pick = order[int(rng.integers(max(1, len(order) // 4)))]
            members.append(int(pick))
            free[int(pick)] = False
        if len(members) >= 2:
            nets.append((members, ni in power))
        else:
            free[members[0]] = True
    return nets


def generate_board(seed, *, nets: int = 20, size=(60.0, 40.0), layers: int = 2, grid: float = 0.25,
                   offgrid: bool = False, max_pins: int = 4, unplaced: bool = False) -> Board:
    """A random routable board of built-in parts and `nets` nets.

    Parameters
    ----------
    seed : int
        The same seed and arguments give the same board.
    nets : int
        How many nets; met exactly when the pins fit on the board, else as many as fit.
    size : (float, float)
        Board width and height in mm.
    layers : int
        Copper layers, 1 or 2. One-layer boards use through-hole parts and surface parts on
        the bottom (the copper side) only.
    grid : float
        Routing grid pitch; part centres sit on it unless `offgrid`.
    offgrid : bool
        Shift every part (not the mounting holes) off the grid by 0.127, 0.0635 or 0.381 mm.
    max_pins : int
        Most pins in one net (at least 2).
    unplaced : bool
        Leave ``at`` out for every part but connectors and mounting holes, which are fixed.

    Returns
    -------
    Board
        Named ``gen-SEED``; classes ``default`` and ``power`` (0.5 mm, 0.25 mm); no copper.

    Raises
    ------
    BoardError
        For an argument out of range.

    Notes
    -----
    Each pin is in at most one net. Nets grow from a random pin by adding, most of the time,
    one of the four free pins nearest to the net (of other parts where there are any), so
    nets are local. Connector and hole parts are marked ``fixed``.

    When the pins do not fit, nets are shrunk towards two pins and then dropped: a
    60 x 40 mm board holds about 100 nets, a 100 x 80 mm board well over 200.

    Examples
    --------
    >>> b = generate_board(1, nets=12)
    >>> b.name, len(b.nets), b.copper_layers
    ('gen-1', 12, 2)
    """
    _arguments(nets, size, layers, grid, max_pins)
    rng = np.random.default_rng(seed)
    width, height = float(size[0]), float(size[1])
    board = Board(f"gen-{seed}", [(0.0, 0.0), (width, 0.0), (width, height), (0.0, height)],
                  copper_layers=layers, rules=Rules(grid=grid), size=(snap(width), snap(height)))
    board.classes["power"] = NetClass(POWER_CLASS.name, POWER_CLASS.trace_width, POWER_CLASS.clearance)

    # mounting holes in the corners, when the board is large enough to spare them
    holes = []
    corner = 0.0
    if min(width, height) >= 25.0:
        c = _snap_to(HOLE_INSET, grid) if grid <= HOLE_INSET else HOLE_INSET
        holes = [(c, c), (snap(width - c), c), (snap(width - c), snap(height - c)), (c, snap(height - c))]
        corner = c + 3.2 / 2 + GAP - MARGIN
    x0, y0, x1, y1 = MARGIN, MARGIN, width - MARGIN, height - MARGIN
    inner = (x1 - x0) * (y1 - y0)

    sizes = _net_sizes(rng, nets, max_pins)
    need = sum(sizes)
    gap = GAP if need <= 0.5 * inner / _area_per_pin(("soic-8", 1, "U", "top"), GAP) else GAP_DENSE
    pool = _pool(layers)
    # some pins stay free so that the nearest-pin growth has choice
    target = int(math.ceil(need * 1.15)) + 2
    area_budget = MAX_SHELF_FILL * inner - 4 * corner * corner
    cover_budget = MAX_COVER * width * height
    items = _choose(rng, pool, target, area_budget, cover_budget, gap)
    for _ in range(40):
        if _pack(rng, items, x0, y0, x1, y1, corner, gap):
            break
        # the rows did not fit: drop the largest part, then top up with parts that fit
        # a budget a little smaller than before
        items.pop(max(range(len(items)), key=lambda i: items[i].w * items[i].h))
        area_budget *= 0.97
        area = sum((i.w + gap) * (i.h + gap) for i in items)
        cover = sum(i.w * i.h for i in items)
        pins = sum(i.pins for i in items)
        if pins < target:
            items += _choose(rng, pool, target - pins, area_budget - area, cover_budget - cover, gap)
    else:
        while items and not _pack(rng, items, x0, y0, x1, y1, corner, gap):
            items.pop(max(range(len(items)), key=lambda i: items[i].w * items[i].h))

    # parts: rectangle centre -> part centre, on the grid (or off it on purpose)
    refs = _refs(items)
    parts: list[Part] = []
    for ref, it in zip(refs, items):
        cx, cy = it.x - it.dx, it.y - it.dy
        cx, cy = _snap_to(cx, grid), _snap_to(cy, grid)
        if offgrid:
            cx = snap(cx + OFFGRID_STEPS[int(rng.integers(len(OFFGRID_STEPS)))])
            cy = snap(cy + OFFGRID_STEPS[int(rng.integers(len(OFFGRID_STEPS)))])
        fixed = it.footprint.split("-")[0] in _CONNECTOR_FAMILIES
        parts.append(Part(ref, it.footprint, "", (cx, cy), it.rotation, it.side, fixed))
    hole_parts = [Part(f"H{k + 1}", HOLE, "", at, 0, "top", True) for k, at in enumerate(holes)]

    # nets over the pins, grown by locality
    pin_names, pin_xy, pin_part = [], [], []
    for k, p in enumerate(parts):
        fp = builtin_footprint(p.footprint)
        seen = set()
        for pad in fp.pads:
            if pad.pin in seen:
                continue
            seen.add(pad.pin)
            pin_names.append(f"{p.ref}.{pad.pin}")
            pin_xy.append(transform(p, pad.offset))
            pin_part.append(k)
    sizes = _fit_sizes(sizes, len(pin_names))
    n_power = max(1, min(8, len(sizes) // 8))
    grown = _make_nets(rng, sizes, pin_xy, pin_part, n_power) if sizes else []
    k_power = k_signal = 0
    for members, is_power in grown:
        if is_power:
            k_power += 1
            name, cls = f"PWR{k_power}", "power"
        else:
            k_signal += 1
            name, cls = f"N{k_signal}", "default"
        board.nets.append(Net(name, [pin_names[m] for m in members], cls))

    if unplaced:
        for p in parts:
            if not p.fixed:
                p.at = None
    board.parts = hole_parts + parts
    return board


def _arguments(nets, size, layers, grid, max_pins):
    def bad(entry, msg):
        raise BoardError(None, entry, msg)
    if isinstance(nets, bool) or not isinstance(nets, int) or nets < 1:
        bad("nets", f"must be a whole number of at least 1, not {nets!r}")
    try:
        w, h = (float(v) for v in size)
    except (TypeError, ValueError):
        bad("size", f"must be a pair (width, height) in mm, not {size!r}")
    if not (math.isfinite(w) and math.isfinite(h)) or w < 10.0 or h < 10.0:
        bad("size", f"must be at least 10 x 10 mm and finite, not {size!r}")
    if layers not in (1, 2):
        bad("layers", f"must be 1 or 2, not {layers!r}")
    if isinstance(grid, bool) or not isinstance(grid, (int, float)) or not math.isfinite(grid) or \
            not 0.01 <= grid <= 2.54:
        bad("grid", f"must be a pitch from 0.01 to 2.54 mm, not {grid!r}")
    if isinstance(max_pins, bool) or not isinstance(max_pins, int) or max_pins < 2:
        bad("max_pins", f"must be a whole number of at least 2, not {max_pins!r}")
