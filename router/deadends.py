"""Dead-end copper: pieces of a net's copper that end touching nothing of their net.

After a part moves, copper routed to its old place stays in the file: a trace that
ends in the air, a via that joins it to nothing, a jumper whose far end lands
nowhere. ``route`` (without ``--reroute``) takes such copper out before it routes, so
that it is neither measured, nor drawn, nor sent to the board house.

What counts as a dead end (and is removed), repeatedly until nothing changes:

- a segment of a trace that is not ``fixed``, when one of its ends touches no other
  copper of its net (a pad, another segment, a via, a jumper end, a pour);
- a via that touches nothing of its net, or only one trace segment (a trace that
  changes layer into nothing);
- a jumper whose one end touches nothing of its net (the wire joins its own two ends);
- copper not ``fixed`` whose joined piece reaches no pad of its net and holds no fixed
  trace (an island, for instance a loop left behind).

"Touches" is the check's own join (:func:`router.connectivity.components`): copper of
one net at distance 0 (within :data:`router.units.TOL`) on a shared layer. Fixed traces
are never removed, nor anything they hold: a fixed trace's end anchors what touches it.
"""
from __future__ import annotations

import math
from collections import defaultdict
from dataclasses import dataclass, field

from shapely.geometry import Point as SPoint

from .connectivity import UnionFind, touching_pairs
from .layout import resolve
from .model import Board, Trace
from .units import TOL

__all__ = ["Removed", "remove_dead_ends"]


@dataclass
class Removed:
    """What :func:`remove_dead_ends` took out."""
    stubs: int = 0                 # joined pieces of dead-end copper
    length: float = 0.0            # mm of trace
    vias: int = 0
    jumpers: int = 0
    nets: list = field(default_factory=list)

    def __bool__(self) -> bool:
        return bool(self.stubs)

    def add(self, other: "Removed") -> "Removed":
        return Removed(self.stubs + other.stubs, self.length + other.length, self.vias + other.vias,
                       self.jumpers + other.jumpers, sorted(set(self.nets) | set(other.nets)))

    def as_json(self) -> dict:
        return {"stubs": self.stubs, "length": round(self.length, 3), "vias": self.vias,
                "jumpers": self.jumpers, "nets": list(self.nets)}

    def sentence(self) -> str:
        """One line for the route's output, or "" when nothing was removed."""
        if not self.stubs:
            return ""
        extra = "".join(f", {n} {w}{'s' if n != 1 else ''}" for n, w in ((self.vias, "via"),
                                                                        (self.jumpers, "jumper")) if n)
        return (f"removed {self.stubs} dead-end stub{'s' if self.stubs != 1 else ''} that touched nothing "
                f"of their net: {self.length:.2f} mm of trace{extra} ({', '.join(self.nets[:6])}"
                f"{' ...' if len(self.nets) > 6 else ''})")


def _touching(items, idx) -> list[list[int]]:
    out: list[list[int]] = [[] for _ in items]
    for i, j in touching_pairs(items, idx):
        out[i].append(j)
        out[j].append(i)
    return out


def _end_touched(items, i: int, end, others) -> bool:
    """True when some item in `others` touches the round end of segment `i` at point `end`."""
    a = items[i]
    p = SPoint(end)
    return any(items[j].core.distance(p) - items[j].radius - a.radius <= TOL for j in others)


def dead_items(board: Board) -> set[int]:
    """Positions in :func:`router.copper.copper_items` of `board` of the dead-end copper."""
    if not (board.traces or board.vias or board.jumpers):
        return set()                     # no copper but pads (and pours): nothing can be a dead end
    lay = resolve(board)                 # the board resolved once (router.layout): items and index
    items = list(lay.items)
    touch = _touching(items, lay.copper_index)
    fixed = {ti for ti, t in enumerate(board.traces) if t.fixed}
    removable = [it.kind in ("via", "jumper_end") or (it.kind == "trace" and it.index[0] not in fixed)
                 for it in items]
    jumper_pair: dict[int, list[int]] = defaultdict(list)
    for i, it in enumerate(items):
        if it.kind == "jumper_end":
            jumper_pair[it.index[0]].append(i)
    dead: set[int] = set()
    changed = True
    while changed:
        changed = False
        for i, it in enumerate(items):
            if i in dead or not removable[i]:
                continue
            alive = [j for j in touch[i] if j not in dead]
            kill = False
            if it.kind == "trace":
                pts = list(it.core.coords)
                ends = [pts[0]] if len(pts) == 1 else [pts[0], pts[-1]]
                kill = any(not _end_touched(items, i, e, alive) for e in ends)
            elif it.kind == "via":
                kill = not alive or (len(alive) == 1 and items[alive[0]].kind == "trace")
            else:                                   # a jumper end: the wire joins the pair
                pair = jumper_pair[it.index[0]]
                kill = any(not [j for j in touch[e] if j not in dead] for e in pair)
                if kill:
                    dead.update(pair)
                    changed = True
                    continue
            if kill:
                dead.add(i)
                changed = True
    # islands: joined copper that reaches no pad of its net and holds nothing fixed
    uf = UnionFind(len(items))
    for i in range(len(items)):
        if i in dead:
            continue
        for j in touch[i]:
            if j not in dead:
                uf.union(i, j)
    for pair in jumper_pair.values():
        if len(pair) == 2 and not (set(pair) & dead):
            uf.union(pair[0], pair[1])
    anchored = {uf.find(i) for i, it in enumerate(items) if i not in dead and (not removable[i])
                and it.kind != "via"}
    for i in range(len(items)):
        if i not in dead and removable[i] and uf.find(i) not in anchored:
            dead.add(i)
    return dead


def remove_dead_ends(board: Board) -> tuple[Board, Removed]:
    """A copy of `board` without its dead-end copper (module docstring), and what went.

    Examples
    --------
    >>> from router.model import Board, Trace
    >>> b = Board("t", [(0, 0), (10, 0), (10, 10), (0, 10)])
    >>> b.traces = [Trace("A", "top", 0.25, [(1.0, 1.0), (4.0, 1.0), (4.0, 3.0)])]
    >>> out, gone = remove_dead_ends(b)
    >>> out.traces, gone.stubs, round(gone.length, 2)
    ([], 1, 5.0)
    """
    dead = dead_items(board)
    if not dead:
        return board, Removed()
    items = resolve(board).items
    out = board.copy()
    gone = Removed()
    # group the dead items into stubs (joined pieces)
    dl = sorted(dead)
    pos = {i: k for k, i in enumerate(dl)}
    uf = UnionFind(len(dl))
    touch = _touching([items[i] for i in dl], None)
    for k, nbrs in enumerate(touch):
        for q in nbrs:
            uf.union(k, q)
    by_jumper: dict[int, list[int]] = defaultdict(list)
    for i in dl:
        if items[i].kind == "jumper_end":
            by_jumper[items[i].index[0]].append(pos[i])
    for pair in by_jumper.values():
        if len(pair) == 2:
            uf.union(pair[0], pair[1])
    gone.stubs = len({uf.find(k) for k in range(len(dl))})
    gone.nets = sorted({items[i].net for i in dl})
    dead_segs: dict[int, set[int]] = defaultdict(set)
    dead_vias, dead_jumpers = set(), set()
    for i in dl:
        it = items[i]
        if it.kind == "trace":
            dead_segs[it.index[0]].add(it.index[1])
            pts = list(it.core.coords)
            gone.length += math.dist(pts[0], pts[-1]) if len(pts) > 1 else 0.0
        elif it.kind == "via":
            dead_vias.add(it.index[0])
        else:
            dead_jumpers.add(it.index[0])
    gone.vias, gone.jumpers = len(dead_vias), len(dead_jumpers)
    traces = []
    for ti, t in enumerate(board.traces):
        if ti not in dead_segs:
            traces.append(t)
            continue
        pts = [tuple(map(float, p)) for p in t.points]
        segs = [(a, b) for a, b in zip(pts, pts[1:]) if a != b]
        run: list = []
        for si, (a, b) in enumerate(segs):        # the live runs of the trace stay, each a trace
            if si in dead_segs[ti]:
                if run:
                    traces.append(Trace(t.net, t.layer, t.width, run, t.fixed))
                run = []
                continue
            run = run + [b] if run else [a, b]
        if run:
            traces.append(Trace(t.net, t.layer, t.width, run, t.fixed))
    out.traces = traces
    out.vias = [v for k, v in enumerate(board.vias) if k not in dead_vias]
    out.jumpers = [j for k, j in enumerate(board.jumpers) if k not in dead_jumpers]
    return out, gone
