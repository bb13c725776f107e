"""Bends, length, vias, jumpers and lower bounds: one computation for every command.

``report``, ``compare`` and ``route --json`` all print :func:`board_figures`, so
their figures always agree. Everything is computed from the board's own
copper, never from how it was drawn: a polyline split at a corner is the same
copper as the unsplit one, and counts the same.

Bends
    A bend (the contract's word) is a point where a net's path turns a right angle.
    All segments of the net on a layer are taken together; collinear segments that
    overlap or touch are merged into one, then at each end point and crossing the
    horizontal and vertical *arms* are counted (an end of a merged segment is one
    arm, a point inside it two). On one layer a bend is one horizontal arm and one
    vertical arm, at a point inside no pad (of any net, on that layer), no via's or
    jumper end's disc and no one-point trace (a dot of copper). At a via centre or
    a jumper end of the net, the arms of every layer and each jumper wire ending
    there (one arm in its direction) are counted together: exactly two arms at a
    right angle, inside no pad, is a bend, so a corner moved into a via or onto a
    jumper end is still counted (:func:`net_bends`). A T junction (three arms) and
    a crossing (four) are not bends.

Length
    The sum of the lengths of every segment of the net's traces, as drawn:
    overlapping segments count twice, stubs inside pads count. Jumper wires are
    not included (they are in the extra field ``jumper_length``).

Points are compared after snapping to multiples of :data:`router.units.TOL`.

Lower bounds are computed from the net's pads, without the other nets (:mod:`router.bounds`); see
:func:`length_lower_bound`, :func:`bends_lower_bound` and :func:`path_bends_lower_bound`.
Each is at most the figure it bounds for every routed net: ``length_lower_bound``
is the pads' bound less the net's jumper wire (wires carry part of the span and
``length`` leaves them out; the pads' bound itself is ``span_lower_bound``, which
bounds length plus jumper wire), and ``bends_lower_bound_path`` is given only where
its proof holds for the net's copper (:func:`_path_bound_holds`). For a net not yet
routed a bound says what its copper will need at least.
"""
from __future__ import annotations

import math
from bisect import bisect_right
from collections import defaultdict
from typing import Callable, Iterable, Optional, Sequence

from rtree import index as rtree_index
from shapely.geometry import Point as SPoint

from .connectivity import routed as routed_nets
from .bounds import (
    bends_lower_bound, length_lower_bound, one_layer_net, path_bends_lower_bound, vias_lower_bound,
)
from .copper import pad_core
from .geometry import placed_pads
from .layout import resolve
from .model import Board, Point
from .units import TOL, snap

__all__ = [
    "FIELDS", "TOTAL_FIELDS", "board_figures", "bend_points", "trace_length",
    "compare_figures", "format_report", "format_compare",
]

#: The per-net fields of the contract's ``report --json``, in order.
FIELDS = ("name", "routed", "bends", "length", "vias", "jumpers",
          "bends_lower_bound", "length_lower_bound")
#: The totals fields of the contract's ``report --json``, in order.
TOTAL_FIELDS = ("nets", "routed", "bends", "length", "vias", "jumpers",
                "bends_lower_bound", "length_lower_bound")

Rect = tuple[float, float, float, float]
Segment = tuple[Point, Point]


# ------------------------------------------------------------------ bends

def _key(v: float) -> int:
    return int(round(v / TOL))


def _merge(intervals: list[tuple[int, int]]) -> list[tuple[int, int]]:
    """Union of closed integer intervals; intervals that overlap or touch become one."""
    out: list[list[int]] = []
    for a, b in sorted(intervals):
        if out and a <= out[-1][1]:
            if b > out[-1][1]:
                out[-1][1] = b
        else:
            out.append([a, b])
    return [(a, b) for a, b in out]


def _arms(lines: dict[int, tuple[list[int], list[tuple[int, int]]]], line: int, c: int) -> int:
    """Arms at coordinate `c` on `line`: 0 off the copper, 1 at an end, 2 inside a segment."""
    entry = lines.get(line)
    if entry is None:
        return 0
    starts, spans = entry
    i = bisect_right(starts, c) - 1
    if i < 0:
        return 0
    a, b = spans[i]
    if c > b:
        return 0
    return 1 if c in (a, b) else 2


def _spans(segments: Iterable[Segment]) -> tuple[dict, dict]:
    """Segments as merged horizontal spans per y and vertical spans per x, in integer TOL keys."""
    horiz: dict[int, list[tuple[int, int]]] = defaultdict(list)
    vert: dict[int, list[tuple[int, int]]] = defaultdict(list)
    for (xa, ya), (xb, yb) in segments:
        kxa, kya, kxb, kyb = _key(xa), _key(ya), _key(xb), _key(yb)
        dx, dy = abs(kxb - kxa), abs(kyb - kya)
        if dx == 0 and dy == 0:
            continue
        if dx >= dy:
            horiz[kya].append((min(kxa, kxb), max(kxa, kxb)))
        else:
            vert[kxa].append((min(kya, kyb), max(kya, kyb)))
    return ({y: _merge(v) for y, v in horiz.items()}, {x: _merge(v) for x, v in vert.items()})


def bend_points(segments: Iterable[Segment],
                covered: Optional[Callable[[float, float], bool]] = None) -> list[Point]:
    """The bends of one net's segments on one layer.

    Parameters
    ----------
    segments : iterable of ((x0, y0), (x1, y1))
        Axis-parallel segments in mm, in any order and split anywhere. Zero-length
        segments are ignored. A step that moves both x and y by at most
        :data:`~router.units.TOL` (which the board file accepts) counts along its
        longer direction.
    covered : callable (x, y) -> bool, optional
        True where something else is there (a pad, a via, a jumper end): such a
        point is no bend.

    Returns
    -------
    list of (x, y)
        The bend points, sorted, with coordinates snapped to :data:`~router.units.TOL`.

    Notes
    -----
    Collinear segments that overlap or touch are merged first; then a point is a bend
    when it is the end of exactly one horizontal and exactly one vertical merged
    segment and lies inside no other segment. Merged segments on one line are
    disjoint, so at most one horizontal and one vertical pass through any point.

    Examples
    --------
    An L split at its corner is still one bend; a T junction is none:

    >>> bend_points([((0, 0), (2, 0)), ((2, 0), (2, 3))])
    [(2.0, 0.0)]
    >>> bend_points([((0, 0), (4, 0)), ((2, 0), (2, 3))])
    []
    >>> bend_points([((0, 0), (2, 0)), ((2, 0), (2, 3))], covered=lambda x, y: True)
    []
    """
    hl, vl = _spans(segments)
    hidx = {y: ([a for a, _ in s], s) for y, s in hl.items()}
    vidx = {x: ([a for a, _ in s], s) for x, s in vl.items()}
    out = []
    for y, spans in hl.items():
        for a, b in spans:
            for x in (a, b):
                if _arms(vidx, x, y) == 1 and _arms(hidx, y, x) == 1:
                    px, py = snap(x * TOL), snap(y * TOL)
                    if covered is None or not covered(px, py):
                        out.append((px, py))
    return sorted(out)


class _Covers:
    """Things that make a point no bend, per layer: pads, vias, jumper ends, dots of copper.

    Each is a core (an axis-aligned box, possibly a segment or a point) and a radius, as in
    :mod:`router.copper`; a point is covered when it lies within radius + TOL of the core.
    """

    def __init__(self, board: Board, pads):
        self.items: dict[str, list[tuple[Rect, float]]] = {L: [] for L in board.layers}
        for pad in pads:
            core = _cover_core(pad)
            for L in pad.layers:
                self.items.setdefault(L, []).append(core)
        for v in board.vias:
            for L in board.layers:
                self.items[L].append(((v.at[0], v.at[1], v.at[0], v.at[1]), v.diameter / 2))
        for j in board.jumpers:
            for at in (j.start, j.end):
                for L in board.layers:
                    self.items[L].append(((at[0], at[1], at[0], at[1]), j.diameter / 2))
        for t in board.traces:
            if len({(_key(x), _key(y)) for x, y in t.points}) == 1:
                x, y = t.points[0]
                self.items.setdefault(t.layer, []).append(((x, y, x, y), t.width / 2))
        self.index: dict[str, rtree_index.Index] = {}
        self.pads = [_cover_core(p) for p in pads]
        self.pad_index = rtree_index.Index(
            ((i, (b[0] - r - TOL, b[1] - r - TOL, b[2] + r + TOL, b[3] + r + TOL), None)
             for i, (b, r) in enumerate((_box(c), r) for c, r in self.pads))) if self.pads else rtree_index.Index()

    def in_pad(self, x: float, y: float) -> bool:
        """True inside a part's pad on any layer."""
        return any(_within(self.pads[i], x, y) for i in self.pad_index.intersection((x, y, x, y)))

    def _idx(self, layer: str) -> rtree_index.Index:
        if layer not in self.index:
            items = self.items.get(layer, [])
            g = TOL
            self.index[layer] = rtree_index.Index(
                ((i, (b[0] - r - g, b[1] - r - g, b[2] + r + g, b[3] + r + g), None)
                 for i, (b, r) in enumerate((_box(c), r) for c, r in items))) if items else rtree_index.Index()
        return self.index[layer]

    def on(self, layer: str) -> Callable[[float, float], bool]:
        items = self.items.get(layer, [])
        idx = self._idx(layer)

        def covered(x: float, y: float) -> bool:
            return any(_within(items[i], x, y) for i in idx.intersection((x, y, x, y)))
        return covered


def _within(item: tuple, x: float, y: float) -> bool:
    """True when (x, y) lies within a core (a box, or a turned pad's shapely core) plus radius, with TOL."""
    core, r = item[0], item[1]
    if not isinstance(core, tuple):          # a turned pad: its exact core
        return core.distance(SPoint(x, y)) <= r + TOL
    x0, y0, x1, y1 = core
    return math.hypot(max(x0 - x, 0.0, x - x1), max(y0 - y, 0.0, y - y1)) <= r + TOL


def _cover_core(pad) -> tuple:
    """(core, radius) of a pad for :func:`_within`: its box, or its shapely core when turned."""
    core, r = pad_core(pad)
    return (core if pad.angle else tuple(core.bounds), r)


def _box(core) -> Rect:
    return core if isinstance(core, tuple) else tuple(core.bounds)


# ------------------------------------------------------------------ bends of a whole net

_H_DIRS = (0, 2)        # arm directions: 0 east, 1 north, 2 west, 3 south


def _dirs_on(idx: dict, line: int, c: int, plus: int, minus: int) -> list[int]:
    """Arm directions at coordinate `c` of `line`: [] off the copper, one at an end, two inside."""
    entry = idx.get(line)
    if entry is None:
        return []
    starts, spans = entry
    i = bisect_right(starts, c) - 1
    if i < 0:
        return []
    a, b = spans[i]
    if c > b:
        return []
    if c == a:
        return [plus]
    if c == b:
        return [minus]
    return [plus, minus]


class _LayerLines:
    """One net's segments on one layer as merged horizontal and vertical spans (integer TOL keys)."""

    def __init__(self, segments: Iterable[Segment]):
        self.h, self.v = _spans(segments)
        self.hidx = {y: ([a for a, _ in s], s) for y, s in self.h.items()}
        self.vidx = {x: ([a for a, _ in s], s) for x, s in self.v.items()}

    def dirs(self, kx: int, ky: int) -> list[int]:
        """The arms of the copper at a point: 0 east, 1 north, 2 west, 3 south."""
        return _dirs_on(self.hidx, ky, kx, 0, 2) + _dirs_on(self.vidx, kx, ky, 1, 3)

    def nodes(self) -> set[tuple[int, int]]:
        """Every end of a merged span and every point where a horizontal meets a vertical."""
        out = set()
        for y, spans in self.h.items():
            for a, b in spans:
                out.add((a, y))
                out.add((b, y))
        for x, spans in self.v.items():
            for a, b in spans:
                out.add((x, a))
                out.add((x, b))
        vx = sorted(self.v)
        for y, spans in self.h.items():
            for a, b in spans:
                for x in vx[bisect_right(vx, a - 1):bisect_right(vx, b)]:
                    if _dirs_on(self.vidx, x, y, 1, 3):
                        out.add((x, y))
        return out


def _turns(dirs: Sequence[int]) -> bool:
    """True when the arms hold a horizontal and a vertical one (the copper turns there)."""
    return any(d in _H_DIRS for d in dirs) and any(d not in _H_DIRS for d in dirs)


def net_bends(layers: dict, vias: Sequence[Point], jumpers: Sequence[Segment],
              covered_on: Callable[[str], Callable[[float, float], bool]],
              in_pad: Callable[[float, float], bool]) -> tuple[list[Point], list[Point]]:
    """The bends of one net under the contract's definition, and its uncounted turns.

    Parameters
    ----------
    layers : dict layer -> list of segments
        The net's trace segments per copper layer.
    vias : sequence of (x, y)
        The net's via centres.
    jumpers : sequence of ((x, y), (x, y))
        The net's jumper wires.
    covered_on : callable layer -> (callable (x, y) -> bool)
        Where a point on that layer is no bend of one layer: inside a pad, a via's or a jumper
        end's disc, or a one-point trace.
    in_pad : callable (x, y) -> bool
        True inside a part's pad on any layer (a via centre or jumper end there is no bend).

    Returns
    -------
    (bends, hidden)
        ``bends``: the bend points, sorted. ``hidden``: the points where the copper turns (a
        horizontal and a vertical arm meet) that are not bends (T junctions, crossings,
        corners in pads or off-centre in a via's disc), sorted; the path bound uses them.

    Notes
    -----
    On one layer a point is a bend when exactly two arms of that layer's copper meet there
    at a right angle and nothing else covers it (:func:`bend_points`). At a via centre or a
    jumper end of the net, the arms of every layer are counted together with each jumper wire
    that ends there (one arm in its direction): exactly two arms at a right angle, at a point
    inside no pad, is a bend, whatever layers they are on.

    Examples
    --------
    A corner moved into a via (top east, bottom north) is still a bend; a via where the path
    goes on straight is none:

    >>> never = lambda layer: (lambda x, y: True)
    >>> no_pad = lambda x, y: False
    >>> net_bends({"top": [((0, 0), (2, 0))], "bottom": [((2, 0), (2, 3))]}, [(2, 0)], [], never, no_pad)
    ([(2.0, 0.0)], [])
    >>> net_bends({"top": [((0, 0), (2, 0))], "bottom": [((2, 0), (5, 0))]}, [(2, 0)], [], never, no_pad)
    ([], [])
    """
    lines = {L: _LayerLines(segs) for L, segs in layers.items() if segs}
    special: dict[tuple[int, int], list[int]] = {}
    for x, y in vias:
        special.setdefault((_key(x), _key(y)), [])
    for (xa, ya), (xb, yb) in jumpers:
        ka, kb = (_key(xa), _key(ya)), (_key(xb), _key(yb))
        if ka == kb:
            continue
        if abs(kb[0] - ka[0]) >= abs(kb[1] - ka[1]):
            da, db = (0, 2) if kb[0] > ka[0] else (2, 0)
        else:
            da, db = (1, 3) if kb[1] > ka[1] else (3, 1)
        special.setdefault(ka, []).append(da)
        special.setdefault(kb, []).append(db)
    bends: list[Point] = []
    hidden: list[Point] = []
    for L, ll in lines.items():
        covered = covered_on(L)
        for kx, ky in ll.nodes():
            if (kx, ky) in special:
                continue
            dirs = ll.dirs(kx, ky)
            if not _turns(dirs):
                continue
            p = (snap(kx * TOL), snap(ky * TOL))
            if len(dirs) == 2 and not covered(*p):
                bends.append(p)
            else:
                hidden.append(p)
    for (kx, ky), wires in special.items():
        dirs = list(wires)
        for ll in lines.values():
            dirs.extend(ll.dirs(kx, ky))
        if not _turns(dirs):
            continue
        p = (snap(kx * TOL), snap(ky * TOL))
        if len(dirs) == 2 and not in_pad(*p):
            bends.append(p)
        else:
            hidden.append(p)
    return sorted(bends), sorted(set(hidden))



def _centre_lines_join(lines: dict, vias: Sequence[Point], jumpers: Sequence[Segment], pads) -> bool:
    """True when the centre lines of a net's traces, its via centres and its jumper wires join
    the first pad of `pads` to the second (copper that joins only through its width, or through
    a via's disc off its centre, does not count).

    `lines` is layer -> :class:`_LayerLines`; `pads` a sequence of ((x0, y0, x1, y1) core, radius,
    layers) for the net's pads.
    """
    parent: dict = {}

    def find(a):
        parent.setdefault(a, a)
        while parent[a] != a:
            parent[a] = parent[parent[a]]
            a = parent[a]
        return a

    def union(a, b):
        ra, rb = find(a), find(b)
        if ra != rb:
            parent[ra] = rb

    special = {(_key(x), _key(y)) for x, y in vias}
    for a, b in jumpers:
        ka, kb = (_key(a[0]), _key(a[1])), (_key(b[0]), _key(b[1]))
        special.update((ka, kb))
        union(("s",) + ka, ("s",) + kb)
    for L, ll in lines.items():
        nodes = set(ll.nodes())
        for k in special:
            if ll.dirs(*k):
                nodes.add(k)
                union((L,) + k, ("s",) + k)
        rows: dict[int, list[int]] = defaultdict(list)
        cols: dict[int, list[int]] = defaultdict(list)
        for kx, ky in nodes:
            rows[ky].append(kx)
            cols[kx].append(ky)
        for y, spans in ll.h.items():
            xs = sorted(rows[y])
            for a, b in spans:
                on = xs[bisect_right(xs, a - 1):bisect_right(xs, b)]
                for u, v in zip(on, on[1:]):
                    union((L, u, y), (L, v, y))
        for x, spans in ll.v.items():
            ys = sorted(cols[x])
            for a, b in spans:
                on = ys[bisect_right(ys, a - 1):bisect_right(ys, b)]
                for u, v in zip(on, on[1:]):
                    union((L, x, u), (L, x, v))
        for n, (core, r, pad_layers) in enumerate(pads):
            if L in pad_layers:
                for kx, ky in nodes:
                    if _within((core, r), kx * TOL, ky * TOL):
                        union((L, kx, ky), ("pad", n))
    for n, (core, r, _) in enumerate(pads):
        for kx, ky in special:
            if _within((core, r), kx * TOL, ky * TOL):
                union(("s", kx, ky), ("pad", n))
    return find(("pad", 0)) == find(("pad", 1))


def trace_length(points: Sequence[Point]) -> float:
    """The length of one trace: the sum of its steps.

    >>> trace_length([(0, 0), (3, 0), (3, 4)])
    7.0
    """
    return float(sum(math.hypot(b[0] - a[0], b[1] - a[1]) for a, b in zip(points, points[1:])))


# ------------------------------------------------------------------ the figures


def _path_bound_holds(layers: dict, vias, wires, hidden, rects, pads, routed: bool) -> bool:
    """True when :func:`path_bends_lower_bound` bounds this net's bend count.

    Its proof needs the copper to join the two pads along centre lines and every turn of the
    copper outside the two pads' rectangles to be a bend: then the path from one pad to the
    other turns somewhere outside both, and that turn is counted. A T junction, a crossing,
    a corner off-centre in a via's disc, in another net's pad, or copper joined only through
    its width take the bound away (None), so it never lies above the count.
    """
    if not routed or len(pads) != 2:
        return False
    for x, y in hidden:
        if not any(r[0] - TOL <= x <= r[2] + TOL and r[1] - TOL <= y <= r[3] + TOL for r in rects):
            return False
    lines = {L: _LayerLines(segs) for L, segs in layers.items() if segs}
    return _centre_lines_join(lines, vias, wires, pads)


def _ratio(num: float, den: float) -> Optional[float]:
    return round(num / den, 4) if den > TOL else None


def board_figures(board: Board, layout=None) -> dict:
    """Bends, length, vias, jumpers and lower bounds per net and in total.

    Parameters
    ----------
    board : Board
    layout : Layout, optional
        `board` resolved (:func:`router.layout.resolve`); default: resolved here (once per
        board state).

    Returns
    -------
    dict
        The contract's ``report --json`` object::

            {"nets": [{"name", "routed", "bends", "length", "vias", "jumpers",
                       "bends_lower_bound", "length_lower_bound", ...}],
             "totals": {"nets", "routed", "bends", "length", "vias", "jumpers",
                        "bends_lower_bound", "length_lower_bound", ...}}

        Nets in file order. ``length_lower_bound`` is the pads' bound
        (:func:`length_lower_bound`) less the net's jumper wire, never below 0. Extra
        fields per net: ``pads`` (pads of its pins on placed parts), ``unplaced`` (its pins
        on parts with no place), ``jumper_length`` (mm of jumper wire),
        ``span_lower_bound`` (the pads' bound, which bounds length plus jumper wire),
        ``length_ratio`` (length / length_lower_bound, None when the bound is 0),
        ``span_ratio`` ((length + jumper_length) / span_lower_bound), ``bends_over_bound``,
        ``bends_lower_bound_path`` (:func:`path_bends_lower_bound` where its proof holds for
        the net's copper, else None) and ``bend_points``. Extra totals: ``unplaced`` (nets
        with an unplaced pin), ``jumper_length``, ``span_lower_bound``, ``length_ratio``,
        ``span_ratio``, ``length_lower_bound_routed`` and ``length_ratio_routed`` (over the
        routed nets only, so unrouted nets do not make a board look better than its
        bounds), ``bends_over_bound`` and ``copper_layers``.

    Notes
    -----
    ``routed`` is :func:`router.connectivity.routed`, the same as ``check``'s ``open``
    rule. A net with a pin on an unplaced part has both bounds 0 (its pads' places are not
    known). Lengths are in mm, rounded to 1e-6.

    Examples
    --------
    >>> from router.boardfile import loads_board
    >>> b = loads_board('''format = 1
    ... [board]
    ... name = "t"
    ... size = [20.0, 10.0]
    ... [[parts]]
    ... ref = "R1"
    ... footprint = "axial-10.16"
    ... at = [10.0, 5.0]
    ... [[nets]]
    ... name = "A"
    ... pins = ["R1.1", "R1.2"]
    ... [[traces]]
    ... net = "A"
    ... layer = "top"
    ... width = 0.25
    ... points = [[4.92, 5.0], [15.08, 5.0]]
    ... ''')
    >>> f = board_figures(b)["nets"][0]
    >>> f["routed"], f["bends"], f["length"], f["length_lower_bound"]
    (True, 0, 10.16, 8.36)
    """
    lay = resolve(board) if layout is None else layout      # the board resolved once (router.layout)
    items = list(lay.items)
    is_routed = routed_nets(board, items, lay.labels())
    pads = list(lay.pads)
    covers = _Covers(board, pads)
    placed = {p.ref for p in board.parts if p.at is not None}
    rects_of: dict[str, list[Rect]] = defaultdict(list)
    pads_of: dict[str, list] = defaultdict(list)
    layers_of: dict[str, list] = defaultdict(list)
    for pad in pads:
        rects_of[pad.net].append(pad.bounds())
        core, r = _cover_core(pad)
        pads_of[pad.net].append((core, r, tuple(pad.layers)))
        layers_of[pad.net].append(tuple(pad.layers))
    segs_of: dict[str, dict[str, list[Segment]]] = defaultdict(lambda: defaultdict(list))
    length_of: dict[str, float] = defaultdict(float)
    for t in board.traces:
        pts = [(float(x), float(y)) for x, y in t.points]
        segs_of[t.net][t.layer].extend(zip(pts, pts[1:]))
        length_of[t.net] += trace_length(pts)
    vias_at: dict[str, list[Point]] = defaultdict(list)
    for v in board.vias:
        vias_at[v.net].append((float(v.at[0]), float(v.at[1])))
    wires_of: dict[str, list[Segment]] = defaultdict(list)
    jlen_of: dict[str, float] = defaultdict(float)
    for j in board.jumpers:
        wires_of[j.net].append(((float(j.start[0]), float(j.start[1])), (float(j.end[0]), float(j.end[1]))))
        jlen_of[j.net] += trace_length([j.start, j.end])

    nets = []
    poured = {p.net for p in board.pours}
    for net in board.nets:
        unplaced = [p for p in net.pins if p.split(".", 1)[0] not in placed]
        rects = rects_of.get(net.name, [])
        layers = segs_of.get(net.name, {})
        vias, wires = vias_at.get(net.name, []), wires_of.get(net.name, [])
        bends_at, hidden = net_bends(layers, vias, wires, covers.on, covers.in_pad)
        routed = bool(is_routed.get(net.name, False))
        length, jlen = length_of.get(net.name, 0.0), jlen_of.get(net.name, 0.0)
        if unplaced or net.name in poured:     # a pour may join every pad: no trace is needed
            span_lb, bb, pb = 0.0, 0, None
        else:
            span_lb, bb, pb = length_lower_bound(rects), bends_lower_bound(rects), path_bends_lower_bound(rects)
        if pb and not _path_bound_holds(layers, vias, wires, hidden, rects, pads_of[net.name], routed):
            pb = None
        lb = max(0.0, span_lb - jlen)          # jumper wires carry part of the span: traces need the rest
        nets.append({
            "name": net.name,
            "routed": routed,
            "bends": len(bends_at),
            "length": snap(length),
            "vias": len(vias),
            "jumpers": len(wires),
            "bends_lower_bound": bb,
            "length_lower_bound": snap(lb),
            "pads": len(rects),
            "unplaced": unplaced,
            "jumper_length": snap(jlen),
            "span_lower_bound": snap(span_lb),
            "length_ratio": _ratio(length, lb),
            "span_ratio": _ratio(length + jlen, span_lb),
            "bends_over_bound": len(bends_at) - bb,
            "bends_lower_bound_path": pb,
            "bend_points": [list(p) for p in bends_at],
            "vias_lower_bound": 0 if (unplaced or net.name in poured) else vias_lower_bound(layers_of.get(net.name, []),
                                                                                         board.layers),
            "_exact": (length, jlen, lb, span_lb),
        })
    from .escape import neck_traces          # pad exits narrower than the class (router.escape)
    neck_at: dict[str, list] = defaultdict(list)
    for ti, at in sorted(neck_traces(board).items()):
        neck_at[board.traces[ti].net].append([snap(at[0]), snap(at[1])])
    from .escape import escape_via_pads      # vias beside surface pads (router.escape)
    via_pads: dict[str, list] = defaultdict(list)
    for vi, name in sorted(escape_via_pads(board).items()):
        via_pads[board.vias[vi].net].append(name)
    for n in nets:
        n["necks"] = len(neck_at.get(n["name"], ()))
        n["neck_points"] = neck_at.get(n["name"], [])
        n["escape_vias"] = len(via_pads.get(n["name"], ()))
        n["escape_via_pads"] = via_pads.get(n["name"], [])
    tot_len = sum(n["_exact"][0] for n in nets)
    tot_j = sum(n["_exact"][1] for n in nets)
    tot_lb = sum(n["_exact"][2] for n in nets)
    tot_span = sum(n["_exact"][3] for n in nets)
    r_len = sum(n["_exact"][0] for n in nets if n["routed"])
    r_lb = sum(n["_exact"][2] for n in nets if n["routed"])
    for n in nets:
        del n["_exact"]
    totals = {
        "nets": len(nets),
        "routed": sum(1 for n in nets if n["routed"]),
        "bends": sum(n["bends"] for n in nets),
        "length": snap(tot_len),
        "vias": sum(n["vias"] for n in nets),
        "jumpers": sum(n["jumpers"] for n in nets),
        "bends_lower_bound": sum(n["bends_lower_bound"] for n in nets),
        "length_lower_bound": snap(tot_lb),
        "unplaced": sum(1 for n in nets if n["unplaced"]),
        "jumper_length": snap(tot_j),
        "span_lower_bound": snap(tot_span),
        "length_ratio": _ratio(tot_len, tot_lb),
        "span_ratio": _ratio(tot_len + tot_j, tot_span),
        "length_lower_bound_routed": snap(r_lb),
        "length_ratio_routed": _ratio(r_len, r_lb),
        "bends_over_bound": sum(n["bends_over_bound"] for n in nets),
        "necks": sum(n["necks"] for n in nets),
        "escape_vias": sum(n["escape_vias"] for n in nets),
        "copper_layers": len(board.layers),
        "vias_lower_bound": sum(n["vias_lower_bound"] for n in nets),
        "vias_on_one_layer_nets": sum(n["vias"] for n in nets
                                      if one_layer_net(layers_of.get(n["name"], []), board.layers)),
    }
    out = {"nets": nets, "totals": totals}
    if board.pours:                  # poured area and share of the board per layer (router.pour)
        from .pour import poured_area
        out["pours"] = poured_area(board)
    return out


# ------------------------------------------------------------------ comparison

#: How :func:`compare_figures` names the best boards (its ``"ranking"``, printed by compare).
RANKING = ("most nets routed first; among the boards that route the most, the lowest value "
           "(a board that routes fewer nets wins no figure)")

#: Fields compared per net and in total, in the order they are shown.
COMPARED = ("routed", "bends", "length", "vias", "jumpers", "bends_lower_bound", "length_lower_bound")


def _differ(values: list) -> bool:
    present = [v for v in values if v is not None]
    if not present:
        return False
    if len(present) != len(values):
        return True
    if all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in present):
        return max(present) - min(present) > TOL
    return any(v != present[0] for v in present)


def compare_figures(labelled: Sequence[tuple[str, dict]]) -> dict:
    """The figures of several boards side by side, nets matched by name.

    Parameters
    ----------
    labelled : sequence of (label, figures)
        Each figures dict as :func:`board_figures` returns it; labels are usually paths.

    Returns
    -------
    dict
        ``{"boards": [label, ...], "fields": [...], "nets": [...], "totals": {...}}``. Each
        entry of ``nets`` is ``{"name": N, "present": [bool per board], F: [value per board
        or None], ..., "differs": [fields whose values differ]}`` for each field F of
        ``fields``, nets in first-seen order; a net missing from some board has None there
        and ``"present"`` in ``differs``; its fields are compared among the boards that have
        it. ``totals`` is ``{F: [value per board], "differs": [...], "best": {...}}``;
        ``best`` ranks by nets routed first: ``best["routed"]`` are the boards that route
        the most nets, and ``best[F]`` for bends, length, vias and jumpers the ones among
        them with the lowest value, so a board that routes fewer nets never wins a figure.
        ``"ranking"`` says so in words (:data:`RANKING`). Numbers differ when they are
        more than :data:`~router.units.TOL` apart.

    Examples
    --------
    >>> a = {"nets": [{"name": "A", "bends": 1, "length": 2.0}], "totals": {"routed": 1, "bends": 1, "length": 2.0}}
    >>> b = {"nets": [{"name": "A", "bends": 3, "length": 2.0}], "totals": {"routed": 1, "bends": 3, "length": 2.0}}
    >>> c = compare_figures([("a", a), ("b", b)])
    >>> c["nets"][0]["bends"], c["nets"][0]["differs"], c["totals"]["best"]["bends"]
    ([1, 3], ['bends'], ['a'])
    >>> u = {"nets": [], "totals": {"routed": 0, "bends": 0, "length": 0.0}}   # routes nothing
    >>> compare_figures([("a", a), ("u", u)])["totals"]["best"]["bends"]
    ['a']
    """
    labels = [lab for lab, _ in labelled]
    order: list[str] = []
    by_board: list[dict[str, dict]] = []
    for _, figs in labelled:
        m = {}
        for n in figs.get("nets", []):
            m[n["name"]] = n
            if n["name"] not in order:
                order.append(n["name"])
        by_board.append(m)
    nets = []
    for name in order:
        row: dict = {"name": name, "present": [name in m for m in by_board]}
        differs = ["present"] if not all(row["present"]) else []
        for f in COMPARED:
            vals = [m[name].get(f) if name in m else None for m in by_board]
            row[f] = vals
            # a missing net is marked once, under "present"; fields compare the boards that have it
            if _differ([v for v, here in zip(vals, row["present"]) if here]):
                differs.append(f)
        row["differs"] = differs
        nets.append(row)
    tfields = ("nets", "routed") + COMPARED[1:] + ("copper_layers",)
    totals: dict = {}
    tdiff = []
    for f in tfields:
        vals = [figs.get("totals", {}).get(f) for _, figs in labelled]
        if f == "copper_layers" and all(v is None for v in vals):
            continue
        totals[f] = vals
        if _differ(vals):
            tdiff.append(f)
    totals["differs"] = tdiff
    # nets routed first: a board that routes fewer nets wins no figure against one that routes more
    routed = totals["routed"]
    most = max((v for v in routed if v is not None), default=None)
    contenders = [k for k, v in enumerate(routed) if most is None or v == most]
    best = {"routed": [labels[k] for k in contenders]} if most is not None else {}
    for f in ("bends", "length", "vias", "jumpers"):
        vals = totals[f]
        present = [vals[k] for k in contenders if vals[k] is not None]
        if present:
            lo = min(present)
            best[f] = [labels[k] for k in contenders if vals[k] is not None and vals[k] - lo <= TOL]
    totals["best"] = best
    return {"boards": labels, "fields": list(COMPARED), "nets": nets, "totals": totals, "ranking": RANKING}


# ------------------------------------------------------------------ text output

def _fmt(v, f: str) -> str:
    if v is None:
        return "-"
    if isinstance(v, bool):
        return "yes" if v else "no"
    if isinstance(v, float) or f in ("length", "length_lower_bound"):
        return f"{float(v):.2f}"
    return str(v)


def _table(header: list[str], rows: list[list[str]], left: int = 1) -> list[str]:
    widths = [max(len(r[i]) for r in [header] + rows) for i in range(len(header))]

    def line(r):
        cells = [c.ljust(w) if i < left else c.rjust(w) for i, (c, w) in enumerate(zip(r, widths))]
        return "  ".join(cells).rstrip()
    return [line(header), "  ".join("-" * w for w in widths)] + [line(r) for r in rows]


def format_report(figs: dict, board: Optional[Board] = None) -> str:
    """The figures as a readable table, with a totals line showing how far above the bounds.

    Parameters
    ----------
    figs : dict
        As :func:`board_figures` returns it.
    board : Board, optional
        Only for the title (its name).

    Examples
    --------
    >>> figs = {"nets": [{"name": "A", "routed": True, "bends": 2, "length": 12.0, "vias": 1,
    ...         "jumpers": 0, "bends_lower_bound": 0, "length_lower_bound": 10.0}],
    ...         "totals": {"nets": 1, "routed": 1, "bends": 2, "length": 12.0, "vias": 1,
    ...         "jumpers": 0, "bends_lower_bound": 0, "length_lower_bound": 10.0}}
    >>> print(format_report(figs).splitlines()[-1])
    length 12.00 mm, bound 10.00 mm: 1.20x, 2.00 mm above
    """
    head = ["net", "routed", "bends", "bound", "path>=", "length", "bound", "ratio", "vias", "jumpers"]
    rows = []
    for n in figs["nets"]:
        ratio = n.get("length_ratio", _ratio(n["length"], n["length_lower_bound"]))
        pb = n.get("bends_lower_bound_path")
        rows.append([n["name"], _fmt(n["routed"], ""), str(n["bends"]), str(n["bends_lower_bound"]),
                     "-" if pb is None else str(pb),
                     _fmt(n["length"], "length"), _fmt(n["length_lower_bound"], "length"),
                     "-" if ratio is None else f"{ratio:.2f}", str(n["vias"]), str(n["jumpers"])])
    t = figs["totals"]
    out = []
    if board is not None:
        out.append(f"board {board.name}: {t['nets']} nets, {t['routed']} routed")
    out.extend(_table(head, rows))
    out.append("")
    unrouted = t["nets"] - t["routed"]
    out.append(f"totals: {t['routed']} of {t['nets']} nets routed"
               + (f" ({unrouted} not)" if unrouted else "")
               + f", {t['vias']} vias, {t['jumpers']} jumpers")
    if "vias_lower_bound" in t and t["vias"]:
        out.append(f"vias {t['vias']}, bound {t['vias_lower_bound']}: {t.get('vias_on_one_layer_nets', 0)} "
                   f"on nets whose pads all lie on one layer (they could route with none)")
    if t.get("necks"):
        where = [f"{n['name']} at ({p[0]:.2f}, {p[1]:.2f})" for n in figs["nets"] for p in n.get("neck_points", [])]
        out.append(f"necks: {t['necks']} (pad exits narrower than the class): " + ", ".join(where[:8])
                   + (" ..." if len(where) > 8 else ""))
    if t.get("escape_vias"):
        where = [f"{n['name']} at {p}" for n in figs["nets"] for p in n.get("escape_via_pads", [])]
        out.append(f"escape vias: {t['escape_vias']} (vias beside surface pads): " + ", ".join(where[:8])
                   + (" ..." if len(where) > 8 else ""))
    for layer, pa in (figs.get("pours") or {}).items():
        out.append(f"poured {layer}: {pa['area']:.1f} mm^2, {100 * pa['share']:.1f} % of the board")
    out.append(f"bends {t['bends']}, bound {t['bends_lower_bound']}: "
               f"{t['bends'] - t['bends_lower_bound']} above (a turn at a via or a jumper end counts)")
    paths = [n for n in figs["nets"] if n.get("bends_lower_bound_path") is not None]
    if paths:
        out.append(f"  (the bound is 0 for any copper, since a T with a short overhang is not a bend; "
                   f"path>= is the bound for a two-pad net whose copper joins its pads along one path "
                   f"with every turn counted: {len(paths)} such nets, "
                   f"{sum(n['bends'] for n in paths)} bends, path bound {sum(n['bends_lower_bound_path'] for n in paths)})")
    tj = t.get("jumper_length", 0.0) or 0.0
    lb = t["length_lower_bound"]
    line = f"length {t['length']:.2f} mm, bound {lb:.2f} mm"
    if not unrouted:
        ratio = _ratio(t["length"], lb)
        line += (f": {ratio:.2f}x, {t['length'] - lb:.2f} mm above" if ratio is not None else "")
    elif t["routed"] == 0:
        line += "; no net routed yet (a net's bound is what its copper will need at least)"
    else:
        r_len = sum(n["length"] for n in figs["nets"] if n["routed"])
        r_lb = sum(n["length_lower_bound"] for n in figs["nets"] if n["routed"])
        ratio = _ratio(r_len, r_lb)
        line += (f"; the {t['routed']} routed nets {r_len:.2f} mm against {r_lb:.2f} mm"
                 + (f": {ratio:.2f}x, {r_len - r_lb:.2f} mm above" if ratio is not None else ""))
    out.append(line)
    if tj:
        span = t.get("span_lower_bound", lb)
        out.append(f"  (jumper wires {tj:.2f} mm carry part of each net's span: a net's length bound is the "
                   f"pads' bound less its jumper wire; traces and wires together "
                   f"{t['length'] + tj:.2f} mm against the pads' bound {span:.2f} mm)")
    return "\n".join(out)


def format_compare(comp: dict) -> str:
    """A comparison as text: one block per field, one column per board, '*' where values differ.

    Examples
    --------
    >>> a = {"nets": [{"name": "A", "bends": 1}], "totals": {"bends": 1}}
    >>> b = {"nets": [{"name": "A", "bends": 3}], "totals": {"bends": 3}}
    >>> "* A" in format_compare(compare_figures([("a", a), ("b", b)]))
    True
    """
    labels = comp["boards"]
    cols = [f"[{i + 1}]" for i in range(len(labels))]
    out = [f"{c} {lab}" for c, lab in zip(cols, labels)]
    out.append("")
    head = ["  net", "field"] + cols
    rows = []
    for n in comp["nets"]:
        for f in ["present"] + comp["fields"]:
            if f == "present" and "present" not in n["differs"]:
                continue
            mark = "*" if f in n["differs"] else " "
            rows.append([f"{mark} {n['name']}", f] + [_fmt(v, f) for v in n[f]])
    out.extend(_table(head, rows, left=2))
    out.append("")
    t = comp["totals"]
    trows = []
    for f in [k for k in t if k not in ("differs", "best")]:
        mark = "*" if f in t["differs"] else " "
        trows.append([f"{mark} totals", f] + [_fmt(v, f) for v in t[f]])
    out.extend(_table(["  ", "field"] + cols, trows, left=2))
    best = t.get("best", {})
    if best and len(labels) > 1:
        out.append("")
        out.append("ranking: " + comp.get("ranking", RANKING))
        words = {"routed": "most nets routed", "bends": "fewest bends", "length": "shortest",
                 "vias": "fewest vias", "jumpers": "fewest jumpers"}
        for f, labs in best.items():
            if len(labs) < len(labels):
                out.append(f"{words.get(f, f)}: " + ", ".join(labs))
    out.append("")
    out.append("* the boards differ there")
    return "\n".join(out)
