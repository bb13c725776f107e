"""A net of many pads mended, not routed again: its route kept but for the copper in other nets' way.

A supply or ground that the router has to take out (it shares cells with other nets, or a later
rip-up took it away) is routed again from nothing with every other net's copper as a wall, and
on a full board its tree of dozens of pads finds no way where the other nets took its old one.
Most of that old tree is still clear of everyone. :func:`cut` keeps it: the copper at the
cells given (those shared with other nets) is taken out, the ends left dangling by that are
trimmed back to the next joint or pad, and what is left falls into pieces, each joined to some
of the net's pads. :func:`router.nets.route_net` then joins the pieces and the pads no piece
holds (its ``pieces``): only the missing links are searched for.

The pieces are found by a union-find (:class:`router.connectivity.UnionFind`) over the copper's
end points (grid points, the ends of stubs and necks; a via joins its point on both layers). A pad
holds a piece when a point of the piece on one of the pad's layers lies in the pad's copper (its
exact core and radius, within :data:`router.units.TOL`). Not through connectivity's joining of
touching shapes: a route in negotiation is still grid edges and stubs with no board around it, and
the grid's end points join exactly. Two-layer boards only (the router mends nothing on one layer,
where jumper wires would have to be cut too).
"""
from __future__ import annotations

from collections import defaultdict, deque
from dataclasses import dataclass, replace

from shapely.geometry import Point as SPoint

from .connectivity import UnionFind
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


def cut(grid, r: NetRoute, drop: set, groups: list) -> Mend:
    """`r` (a route on a two-layer board: grid edges, vias, stubs, necks; no jumper wires) of the
    net whose pads are `groups` (lists of pads already joined by fixed copper), less its copper at
    the cells `drop` ((l, j, i)); see the module's text.

    A grid edge goes with either end in `drop`, a via with its point on any layer, a stub or neck
    with a grid point within half a pitch of it (:meth:`RoutingGrid.near_points`). Ends left
    dangling (a point with one piece of copper, in no pad of the net) are trimmed back.
    """
    def cell_of(l: int, p):
        j = int(round(p[1] / grid.pitch)) - grid.j0
        i = int(round(p[0] / grid.pitch)) - grid.i0
        c = (l, j, i)
        if c in r.cells and grid.point(j, i) == (round(p[0], 6), round(p[1], 6)):
            return c                     # (a stub's point on the grid that the route does not hold is not a cell of it)
        return None

    def near(pts, l) -> set:
        return {c for a, b in zip(pts, pts[1:]) for c in grid.near_points(a, b, l)}

    # every piece of copper: (kind, item, end point keys, grid cells, cells whose loss takes it out)
    segs = []
    for e in r.edges:
        (l, j, i), (_, j2, i2) = e
        segs.append(("edge", e, [_key(l, grid.point(j, i)), _key(l, grid.point(j2, i2))], [e[0], e[1]], ()))
    for v in dict.fromkeys(r.vias):
        p = grid.point(*v)
        cells = [(l, v[0], v[1]) for l in range(grid.L)]
        segs.append(("via", v, [_key(l, p) for l in range(grid.L)], cells, ()))
    for s in r.stubs:
        a, b, l = s
        segs.append(("stub", s, [_key(l, a), _key(l, b)], [c for c in (cell_of(l, a), cell_of(l, b)) if c],
                     near((a, b), l)))
    for nk in r.necks:
        pts, l, _ = nk
        segs.append(("neck", nk, [_key(l, pts[0]), _key(l, pts[-1])], [c for c in (cell_of(l, q) for q in pts) if c],
                     near(pts, l)))
    live = [not any(c in drop for c in cells) and not any(c in drop for c in close)
            for _, _, _, cells, close in segs]

    pads = [p for g in groups for p in g]
    shapes = []
    for p in pads:
        core, rad = grid.layout.core_of(p)
        shapes.append((core, rad, {grid.layer_index(n) for n in p.layers}, core.bounds))
    held: dict = {}

    def pads_at(k) -> list:
        """The pads (their numbers in `pads`) whose copper holds the end point `k`."""
        got = held.get(k)
        if got is None:
            l, x, y = k
            got = held[k] = [q for q, (core, rad, layers, bx) in enumerate(shapes)
                             if l in layers and bx[0] - rad - TOL <= x <= bx[2] + rad + TOL
                             and bx[1] - rad - TOL <= y <= bx[3] + rad + TOL
                             and core.distance(SPoint(x, y)) <= rad + TOL]
        return got

    # trim the ends left dangling: a point with one live piece of copper, in no pad of the net
    at = defaultdict(list)
    deg = defaultdict(int)
    for s, seg in enumerate(segs):
        for k in seg[2]:
            at[k].append(s)
            deg[k] += live[s]
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

    # the pieces: end points joined through their copper, and through a pad group's fixed copper
    # (one union-find node per point, then one per group)
    points = {k: n for n, k in enumerate(k for k, d in deg.items() if d > 0)}
    group_of = {id(p): g for g, grp in enumerate(groups) for p in grp}
    uf = UnionFind(len(points) + len(groups))
    for s, seg in enumerate(segs):
        if live[s]:
            for k in seg[2][1:]:
                uf.union(points[seg[2][0]], points[k])
    touched = set()
    for k, n in points.items():
        for q in pads_at(k):
            g = group_of[id(pads[q])]
            uf.union(n, len(points) + g)
            touched.add(g)
    groups_of = defaultdict(set)             # root -> the pad groups its piece holds
    for g in touched:
        groups_of[uf.find(len(points) + g)].add(g)
    cells_of = defaultdict(set)              # root -> the grid cells of its piece
    for s, seg in enumerate(segs):
        if live[s]:
            cells_of[uf.find(points[seg[2][0]])].update(seg[3])
    kept = NetRoute(r.net)
    for s, (kind, item, keys, cells, close) in enumerate(segs):
        root = uf.find(points[keys[0]]) if live[s] else None
        if root not in groups_of or not cells_of[root]:
            continue                         # a piece joined to no pad; one with no grid point (its pads: loose)
        if kind == "edge":
            kept.edges.add(item)
        elif kind == "via":
            kept.vias.append(item)
        else:
            (kept.stubs if kind == "stub" else kept.necks).append(item)
            kept.near.update(close)
        kept.cells.update(cells)
    pieces, used = [], set()
    for root, gs in groups_of.items():
        if cells_of[root]:
            used |= gs
            pieces.append(([p for g in sorted(gs) for p in groups[g]], sorted(cells_of[root])))
    loose = [grp for g, grp in enumerate(groups) if g not in used]
    return Mend(kept, pieces, loose)


def merged(kept: NetRoute, new: NetRoute) -> NetRoute:
    """One route of the kept copper and the links `new` laid between its pieces (`new`'s name and failure)."""
    return replace(kept.plus(new), net=new.net, failed=new.failed, blind=new.blind, closed=new.closed)
