"""A net of many pads mended, not routed again: its route kept but for the copper in other nets' way.

A supply or ground that the router has to take out (it shares cells with other nets, or a later
rip-up took it away) is routed again from nothing with every other net's copper as a wall, and
on a full board its tree of dozens of pads finds no way where the other nets took its old one.
Most of that old tree is still clear of everyone. :func:`cut` keeps it: the copper at the
cells given (those shared with other nets) is taken out, the ends left dangling by that are
trimmed back to the next joint or pad, and what is left falls into pieces, each joined to some
of the net's pads. :func:`router.nets.route_net` then joins the pieces and the pads no piece
holds (its ``pieces``): only the missing links are searched for.

The pieces are found by a union-find over the copper's end points (grid points, the ends of
stubs and necks; a via joins its point on both layers). A pad holds a piece when a point of the
piece on one of the pad's layers lies in the pad's copper (its exact core and radius, within
:data:`router.units.TOL`). Written here rather than through :mod:`router.connectivity`: that
module joins a board's copper items by touching shapes, while a route in negotiation is still
grid edges and stubs with no board around it; the grid's end points join exactly.
"""
from __future__ import annotations

from collections import defaultdict, deque
from dataclasses import dataclass

from shapely.geometry import Point as SPoint

from .nets import NetRoute
from .units import TOL

__all__ = ["Mend", "cut", "merged"]


@dataclass
class Mend:
    """What :func:`cut` keeps of a route: the copper (`kept`, a route of its own) and its pieces,
    each (pads it joins, the grid cells (l, j, i) of its copper), for :func:`router.nets.route_net`;
    `loose`: the groups of pads no piece joins (routed to as usual)."""
    kept: NetRoute
    pieces: list
    loose: list


def _key(l: int, p) -> tuple:
    return (l, round(p[0], 5), round(p[1], 5))


class _Find:
    def __init__(self):
        self.up: dict = {}

    def find(self, a):
        self.up.setdefault(a, a)
        while self.up[a] != a:
            self.up[a] = self.up[self.up[a]]
            a = self.up[a]
        return a

    def union(self, a, b) -> None:
        ra, rb = self.find(a), self.find(b)
        if ra != rb:
            self.up[max(ra, rb)] = min(ra, rb)


def cut(grid, r: NetRoute, drop: set, groups: list) -> Mend:
    """`r` (a two-layer route of the net whose pads are `groups`, lists of pads already joined
    by fixed copper) less its copper at the cells `drop` ((l, j, i)); see the module's text.

    A grid edge goes with either end in `drop`, a via with its point on any layer, a stub, neck
    or jumper with a grid point within half a pitch of it (:meth:`RoutingGrid.near_points`).
    Ends left dangling (a point with one piece of copper, in no pad of the net) are trimmed back.
    """
    net = r.net

    def cell_of(l: int, p):
        j = int(round(p[1] / grid.pitch)) - grid.j0
        i = int(round(p[0] / grid.pitch)) - grid.i0
        c = (l, j, i)
        if c in r.cells and grid.point(j, i) == (round(p[0], 6), round(p[1], 6)):
            return c                     # (a stub's point on the grid that the route does not hold is not a cell of it)
        return None

    # every piece of copper: (kind, item, end point keys, grid cells)
    segs = []
    for e in r.edges:
        (l, j, i), (_, j2, i2) = e
        segs.append(("edge", e, [_key(l, grid.point(j, i)), _key(l, grid.point(j2, i2))], [e[0], e[1]]))
    for v in dict.fromkeys(r.vias):
        p = grid.point(*v)
        segs.append(("via", v, [_key(l, p) for l in range(grid.L)], [(l, v[0], v[1]) for l in range(grid.L)]))
    for s in r.stubs:
        a, b, l = s
        cells = [c for c in (cell_of(l, a), cell_of(l, b)) if c is not None]
        segs.append(("stub", s, [_key(l, a), _key(l, b)], cells))
    for nk in r.necks:
        pts, l, _ = nk
        cells = [c for c in (cell_of(l, q) for q in pts) if c is not None]
        segs.append(("neck", nk, [_key(l, pts[0]), _key(l, pts[-1])], cells))
    for jw in r.jumpers:
        a, b = jw
        cells = [c for c in (cell_of(0, a), cell_of(0, b)) if c is not None]
        segs.append(("jumper", jw, [_key(0, a), _key(0, b)], cells))

    def hit(kind, item, cells) -> bool:
        if any(c in drop for c in cells):
            return True
        if kind == "stub":
            return any(c in drop for c in grid.near_points(item[0], item[1], item[2]))
        if kind == "neck":
            pts, l, _ = item
            return any(c in drop for a, b in zip(pts, pts[1:]) for c in grid.near_points(a, b, l))
        return False

    live = [not hit(kind, item, cells) for kind, item, _, cells in segs]

    pads = [p for g in groups for p in g]
    shapes = []
    for p in pads:
        core, rad = grid.layout.core_of(p)
        layers = {grid.layer_index(n) for n in p.layers}
        shapes.append((core, rad, layers, core.bounds))

    anchored_cache: dict = {}

    def pads_at(k) -> list:
        got = anchored_cache.get(k)
        if got is None:
            l, x, y = k
            got = []
            for q, (core, rad, layers, bx) in enumerate(shapes):
                if l in layers and bx[0] - rad - TOL <= x <= bx[2] + rad + TOL \
                        and bx[1] - rad - TOL <= y <= bx[3] + rad + TOL \
                        and core.distance(SPoint(x, y)) <= rad + TOL:
                    got.append(q)
            anchored_cache[k] = got
        return got

    # trim the ends left dangling: a point with one live piece of copper, in no pad of the net
    at = defaultdict(list)
    for s, (_, _, keys, _) in enumerate(segs):
        for k in keys:
            at[k].append(s)
    deg = defaultdict(int)
    for s, (_, _, keys, _) in enumerate(segs):
        if live[s]:
            for k in keys:
                deg[k] += 1
    queue = deque(k for k, d in deg.items() if d == 1)
    while queue:
        k = queue.popleft()
        if deg[k] != 1 or pads_at(k):
            continue
        s = next(s for s in at[k] if live[s])
        live[s] = False
        for q in segs[s][2]:
            deg[q] -= 1
            if deg[q] == 1:
                queue.append(q)

    # the pieces: joined through shared end points, and through the fixed copper of a pad group
    uf = _Find()
    for s, (_, _, keys, _) in enumerate(segs):
        if live[s]:
            for k in keys[1:]:
                uf.union(keys[0], k)
    group_of = {}
    for g, grp in enumerate(groups):
        for p in grp:
            group_of[id(p)] = g
    holds: dict = defaultdict(set)           # root -> pad numbers
    for k in list(deg):
        if deg[k] > 0:
            for q in pads_at(k):
                holds[uf.find(k)].add(q)
    for root, qs in list(holds.items()):     # pieces holding pads of one group are one terminal
        for q in qs:
            uf.union(root, (-1 - group_of[id(pads[q])], 0.0, 0.0))
    held_groups: dict = defaultdict(set)
    for root, qs in holds.items():
        for q in qs:
            held_groups[uf.find(root)].add(group_of[id(pads[q])])
    cells_of: dict = defaultdict(set)
    for s, (kind, item, keys, cells) in enumerate(segs):
        if live[s]:
            root = uf.find(keys[0])
            if root in held_groups:              # a piece joined to no pad is left out
                cells_of[root].update(cells)
    kept = NetRoute(net)
    for s, (kind, item, keys, cells) in enumerate(segs):
        if not live[s] or not cells_of.get(uf.find(keys[0])):
            continue                             # (a piece with no grid point: its pads are routed to as usual)
        if kind == "edge":
            kept.edges.add(item)
        elif kind == "via":
            kept.vias.append(item)
        elif kind == "stub":
            kept.stubs.append(item)
            kept.near.update(grid.near_points(item[0], item[1], item[2]))
        elif kind == "neck":
            kept.necks.append(item)
            pts, l, _ = item
            for a, b in zip(pts, pts[1:]):
                kept.near.update(grid.near_points(a, b, l))
        else:
            kept.jumpers.append(item)
        kept.cells.update(cells)
    pieces, used = [], set()
    for root, gs in held_groups.items():
        if not cells_of[root]:
            continue
        used |= gs
        pieces.append(([p for g in sorted(gs) for p in groups[g]], sorted(cells_of[root])))
    loose = [grp for g, grp in enumerate(groups) if g not in used]
    return Mend(kept, pieces, loose)


def merged(kept: NetRoute, new: NetRoute) -> NetRoute:
    """One route of the kept copper and the links `new` laid between its pieces."""
    out = NetRoute(new.net, edges=kept.edges | new.edges, stubs=kept.stubs + new.stubs,
                   vias=list(dict.fromkeys(kept.vias + new.vias)), jumpers=kept.jumpers + new.jumpers,
                   cells=kept.cells | new.cells, near=kept.near | new.near, failed=new.failed,
                   blind=new.blind, necks=kept.necks + new.necks, closed=new.closed)
    return out
