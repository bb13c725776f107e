"""One net: its pins' access to the grid, and its rectilinear Steiner tree grown by A*.

A net's pads are grouped by the copper that already joins them (a group is one
*terminal*). Each terminal reaches the grid through its *access cells*: grid points
on the pad's layers that lie inside the pad's copper (a trace ending there touches
the pad), or, where none is open, grid points a short straight *stub* away (the stub
leaves the pad along x or y and is checked exactly against every obstacle).

The tree grows from the copper it already has, nearest pin next: each search starts
from every cell of the tree so far and ends at the first cell of any terminal not yet
joined, so the cheapest join (length, bends, vias, congestion) decides which pin comes
next. This is the sequential Steiner-tree heuristic of grid routers; joining the tree
anywhere along its traces makes the shared trunks that a chain of pin-to-pin routes
cannot.

References
----------
.. [1] C. Y. Lee, "An algorithm for path connections and its applications", 1961.
.. [2] P. E. Hart, N. J. Nilsson, B. Raphael, "A formal basis for the heuristic
   determination of minimum cost paths", 1968.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field
from functools import lru_cache
from typing import Optional

import numpy as np
from shapely.geometry import Point as SPoint

from .copper import pad_core
from .grid import JUMP_PITCH, RoutingGrid, box_of_core
from .search import OVER_BOUND, SearchSpace, find_path
from .units import TOL

__all__ = ["Terminal", "NetRoute", "terminals", "route_net", "UNNAMED", "TAKEN"]

#: A lost net's reason when other nets' routed copper takes every exit of one of its pads (the nets are
#: named after routing: router.negotiate._name_takers).
TAKEN = "every exit to the grid is taken by other nets' routed copper"

#: The end of a failed route's reason when the obstacles were not named (``explain`` False).
UNNAMED = " past the obstacles around it"


@dataclass
class Terminal:
    """Pads of one net already joined to each other, and their access to the grid."""
    pads: list                                   # PlacedPad
    cells: dict = field(default_factory=dict)    # (l, j, i) -> stub points ((x, y), ...) from the pad, or None

    @property
    def name(self) -> str:
        return self.pads[0].name


@dataclass
class NetRoute:
    """The copper one net's search laid: unit grid edges, stubs, vias and jumpers."""
    net: str
    edges: set = field(default_factory=set)      # ((l, j, i), (l, j, i)) with the smaller cell first
    stubs: list = field(default_factory=list)    # ((x, y), (x, y), layer index)
    vias: list = field(default_factory=list)     # (j, i)
    jumpers: list = field(default_factory=list)  # ((x, y), (x, y))
    cells: set = field(default_factory=set)      # every (l, j, i) its copper uses
    near: set = field(default_factory=set)       # grid points within half a pitch of its stubs (for sharing)
    failed: Optional[str] = None
    blind: bool = False                          # failed because a pad has no way to the grid at all
    necks: list = field(default_factory=list)    # (points, layer index, width): pad exits narrower than the class (router.escape)
    closed: Optional[object] = None              # the PlacedPad whose every exit other nets' copper took (failed: TAKEN)
    # what the negotiation laid for this route on a grid (negotiate._Negotiation.lay): (grid, net, soft items,
    # own counts, off-grid items), made once; a route is not changed once made, so it is laid again as it was
    laid: Optional[tuple] = field(default=None, repr=False, compare=False)

    def segments(self, grid: RoutingGrid, width: float, necks: bool = True):
        for (l, j, i), (_, j2, i2) in sorted(self.edges):
            yield grid.point(j, i), grid.point(j2, i2), l, width
        for a, b, l in self.stubs:
            yield a, b, l, width
        if necks:
            for pts, l, w in self.necks:
                for a, b in zip(pts, pts[1:]):
                    yield a, b, l, w

    def via_points(self, grid: RoutingGrid):
        return [grid.point(j, i) for j, i in self.vias]

    def plus(self, other: "NetRoute") -> "NetRoute":
        """One route of this route's copper and `other`'s (this one's first), with this one's name
        and failure."""
        return NetRoute(self.net, edges=self.edges | other.edges, stubs=self.stubs + other.stubs,
                        vias=list(dict.fromkeys(self.vias + other.vias)), jumpers=self.jumpers + other.jumpers,
                        cells=self.cells | other.cells, near=self.near | other.near, failed=self.failed,
                        blind=self.blind, necks=self.necks + other.necks, closed=self.closed)


def _access(grid: RoutingGrid, space: SearchSpace, net: str, pad, others=None) -> dict:
    """Access cells of one pad: inside its copper, or one straight stub away, or (a pad no grid
    line crosses) an L-shaped stub from its centre, or a pad escape (:mod:`router.escape`).

    On a two-layer board a surface pad that none of these reaches is offered via places beside
    it instead (:func:`router.escape.escape_vias`): cells on the other layer, priced like a via
    the search lays and its link like grid steps (:func:`_exit_price`). Any other surface pad
    gets them too when no search finds a way (:func:`route_net`: a pad boxed in on its own
    layer, whose access cells lead nowhere), priced the same, so a via is spent only there.
    (Offered beside every pad with few ways out as well, they changed the negotiation of the
    real-looking boards of ``scripts/stress_real.py`` for the worse, seeds 0 to 2: vias 35 -> 39
    and 78 -> 90 on two boards, and on the third 164 -> 145 vias but one net fewer routed, a
    supply whose fine-pitch pad's exits other nets' copper took.)"""
    out = _plain_access(grid, space, net, pad, others)
    if not out and grid.L == 2 and pad.drill is None:
        from .escape import escape_vias
        out = escape_vias(grid, space, net, pad, others)
    return out


def _widen(grid: RoutingGrid, space: SearchSpace, net: str, terms: list, left: list, tree: dict,
           tree_cells, others, via: int, bend: int) -> bool:
    """Every surface pad's via places beside it (:func:`router.escape.escape_vias`) added to
    its terminal: priced targets for the terminals not yet joined, sources for the tree's
    (free, as every source is: this is the way out of a pad boxed in on its own layer).
    Returns whether any was added."""
    from .escape import escape_vias
    added = False
    for k, t in enumerate(terms):
        for pad in t.pads:
            if pad.drill is not None:
                continue
            for c, ev in escape_vias(grid, space, net, pad, others).items():
                if c in t.cells:
                    continue
                t.cells[c] = ev
                added = True
                if k in left:
                    space.raise_cell(c, _exit_price(grid, space, c, ev, via, bend))
                elif c not in tree:
                    tree[c] = ev
                    tree_cells.add(c)
    return added


def _plain_access(grid: RoutingGrid, space: SearchSpace, net: str, pad, others=None) -> dict:
    """Access cells of one pad on its own layers (see :func:`_access`)."""
    core, rad = grid.layout.core_of(pad)       # the pad's exact copper, resolved once (router.layout)
    bx = box_of_core(core)
    g = grid.pitch
    out: dict = {}
    layers = [grid.layer_index(l) for l in pad.layers if l in grid.layers]
    reach = rad + 2 * g
    ia, ib, ja, jb = grid.index_box(bx, reach)
    X, Y = grid.xs[ia:ib], grid.ys[ja:jb]
    gx = np.maximum(np.maximum(bx[0] - X, 0.0), X - bx[2])
    gy = np.maximum(np.maximum(bx[1] - Y, 0.0), Y - bx[3])
    d2 = gy[:, None] ** 2 + gx[None, :] ** 2
    inside = d2 <= (rad + TOL) ** 2
    if pad.angle:                        # a turned pad: grid points inside its exact copper
        inside = grid._core_distance(core, X, Y) <= rad + TOL
    for l in layers:
        oc = space.open_cell[l, ja:jb, ia:ib].astype(bool)
        jj, ii = np.nonzero(inside & oc)
        for j, i in zip(jj, ii):
            out[(l, int(j + ja), int(i + ia))] = None
    if out:
        return out
    # stubs: a straight run from a point inside the pad to a grid point
    width = grid.profile_of(net).width
    cands = []
    for l in layers:
        oc = space.open_cell[l, ja:jb, ia:ib].astype(bool)
        for j, i in zip(*np.nonzero(oc & ~inside)):
            x, y = float(X[i]), float(Y[j])
            stub = None
            if pad.angle:
                if core.distance(SPoint(x, y)) - rad <= _STUB_MAX * g:
                    stub = _turned_stub(core, rad, (x, y), reach)
            elif gx[i] <= rad - TOL or (rad == 0 and gx[i] == 0):
                q = (x, min(max(y, bx[1]), bx[3]))
                stub = (q, (x, y))
            elif gy[j] <= rad - TOL or (rad == 0 and gy[j] == 0):
                q = (min(max(x, bx[0]), bx[2]), y)
                stub = (q, (x, y))
            if stub is None:
                continue
            length = abs(stub[0][0] - stub[1][0]) + abs(stub[0][1] - stub[1][1])
            cands.append((length, l, int(j + ja), int(i + ia), stub))
    cands.sort(key=lambda c: (c[0], c[1], c[2], c[3]))
    for length, l, j, i, stub in cands[:24]:
        pts = tuple((round(p[0], 6), round(p[1], 6)) for p in stub)
        if length <= _STUB_MAX * grid.pitch and grid.segment_clear(net, pts[0], pts[1], l, width, others):
            out[(l, j, i)] = pts
            if len(out) >= 6:
                break
    if out:
        return out
    # a pad no grid line crosses: leave its centre along x to a grid column, then along y
    lcands = []
    for l in layers:
        oc = space.open_cell[l, ja:jb, ia:ib].astype(bool)
        for j, i in zip(*np.nonzero(oc)):
            x, y = float(X[i]), float(Y[j])
            for corner in ((x, pad.y), (pad.x, y)):
                pts = tuple((round(p[0], 6), round(p[1], 6)) for p in ((pad.x, pad.y), corner, (x, y)))
                length = abs(pad.x - x) + abs(pad.y - y)
                lcands.append((length, l, int(j + ja), int(i + ia), pts))
    lcands.sort(key=lambda c: (c[0], c[1], c[2], c[3], c[4]))
    for length, l, j, i, pts in lcands[:48]:
        if (l, j, i) in out:
            continue
        if all(grid.segment_clear(net, a, b, l, width, others) for a, b in zip(pts, pts[1:]) if a != b):
            out[(l, j, i)] = pts
            if len(out) >= 6:
                break
    if out:
        return out
    # a pad escape: straight out of the pad's end, then to the grid, narrowed where needed (router.escape)
    from .escape import escape_access
    return escape_access(grid, space, net, pad, others)


def _turned_stub(core, rad: float, p, reach: float):
    """A straight stub along x or y from grid point `p` into a turned pad's copper (the
    shorter way), or None: the stub's pad end is found exactly on the copper's edge."""
    from shapely.geometry import LineString
    from shapely.ops import nearest_points
    from .geometry import ray_through
    best = None
    for d in ((1.0, 0.0), (-1.0, 0.0), (0.0, 1.0), (0.0, -1.0)):
        far = (p[0] + d[0] * 2 * reach, p[1] + d[1] * 2 * reach)
        ray = LineString([p, far])
        if core.distance(ray) > rad - TOL:
            continue                     # this way misses the pad (or only grazes it)
        q = nearest_points(ray, core)[0]
        tmax = abs(q.x - p[0]) + abs(q.y - p[1])
        t = ray_through(core, rad, p, d, tmax, entering=True)
        if best is None or t < best[0]:
            best = (t, (p[0] + d[0] * t, p[1] + d[1] * t))
    if best is None:
        return None
    return (best[1], p)


#: Longest straight stub, in grid pitches (a stub is free in the search, so it is kept short).
_STUB_MAX = 1.5


def _add_stub(grid: RoutingGrid, space: SearchSpace, route: NetRoute, stub, layer: int) -> None:
    """Lay a stub's segments, and count the grid points near it as cells the net uses; an
    escape via (:class:`router.escape.EscapeVia`) lays its via and its link on the pad's layer."""
    neck = getattr(stub, "width", None)
    if _is_via(stub):
        j, i = stub.via
        route.vias.append((j, i))
        route.cells.update({(stub.layer, j, i), (layer, j, i)})
        _block_hole(grid, space, grid.point(j, i), grid.via_drill)
        if len(stub) < 2:
            return                       # the via's disc touches the pad
        layer = stub.layer               # its link lies on the pad's layer
        if neck >= grid.profile_of(route.net).width - TOL:
            neck = None                  # a link of the class width is laid as any stub
    if neck is not None:                 # a neck is written as a trace of its own width
        route.necks.append((tuple(stub), layer, neck))
    for a, b in zip(stub, stub[1:]):
        if a == b:
            continue
        if neck is None:
            route.stubs.append((a, b, layer))
        route.near.update(grid.near_points(a, b, layer))


def terminals(grid: RoutingGrid, space: SearchSpace, net: str, pad_groups: list[list], others=None,
              cache: bool = False) -> list[Terminal]:
    """The terminals of `net`: groups of already-joined pads with their access cells.

    With `cache`, a pad's access is computed once per grid and net (valid while the search
    space's open cells are the fixed copper's only, as in negotiation)."""
    store = grid.__dict__.setdefault("_access_cache", {}) if cache and others is None else None
    out = []
    for pads in pad_groups:
        t = Terminal(list(pads))
        for p in pads:
            key = (net, p.ref, p.index)
            acc = store.get(key) if store is not None else None
            if acc is None:
                acc = _access(grid, space, net, p, others)
                if store is not None:
                    store[key] = acc
                elif others is not None:
                    acc = {**_planned_access(grid, space, net, key, others), **acc}
            for c, stub in acc.items():
                if c not in t.cells or (t.cells[c] is not None and stub is None):
                    t.cells[c] = stub
        out.append(t)
    return out


def _planned_access(grid: RoutingGrid, space: SearchSpace, net: str, key: tuple, others) -> dict:
    """The exits of pad `key` = (net, ref, pad index) that a fan-out plan chose
    (``grid.planned_exits``, :meth:`router.negotiate._Negotiation.plan_fanout`) and that the
    copper laid for other nets (`others`) leaves clear: offered to a route with walls as well,
    which finds its exits again against the walls and, from the shortest, seldom reaches the
    deeper rows of a planned staircase. A planned exit was measured against the fixed copper
    when it was found, so only the walls are measured here."""
    got = grid.__dict__.get("planned_exits", {}).get(key)
    if not got:
        return {}
    out = {}
    for (l, j, i), path in got.items():
        if not space.open_cell[l, j, i]:
            continue
        pts = list(path) + [grid.point(j, i)]
        w = getattr(path, "width", grid.profile_of(net).width)
        if all(grid.clear_of(others, a, b, l, w) for a, b in zip(pts, pts[1:]) if a != b):
            out[(l, j, i)] = path
    return out


def _block_hole(grid: RoutingGrid, space: SearchSpace, at, drill: float) -> None:
    """No other via or jumper end of this net within hole spacing of a new hole at `at`."""
    own = grid.jump_drill if grid.one_layer else grid.via_drill
    need = drill / 2 + own / 2 + grid.rules.min_hole_spacing + grid.jump_slack
    box = (at[0], at[1], at[0], at[1])
    ia, ib, ja, jb = grid.index_box(box, need)       # only the window near the hole changes
    if ia >= ib or ja >= jb:
        return
    arr = np.zeros((jb - ja, ib - ia), np.int32)
    grid._stamp_points(box, need, 1, arr, at=(ia, ja))
    if grid.one_layer:
        space.jump_ok = np.ascontiguousarray(space.jump_ok, dtype=np.uint8)
        space.jump_ok[ja:jb, ia:ib] &= (arr == 0)
    else:
        space.via_ok[ja:jb, ia:ib] &= (arr == 0)


def _path_holes(grid: RoutingGrid, cells: np.ndarray) -> list:
    """The holes a path would drill, in order: ((j, i) of the grid point, (x, y) of the hole)."""
    out = []
    g = grid.pitch
    arr = np.asarray(cells, dtype=np.int64).reshape(-1, 3)
    d = np.abs(np.diff(arr, axis=0))
    moves = np.flatnonzero((d[:, 0] != 0) | (d[:, 1] + d[:, 2] > 1)) + 1     # vias and jumpers only
    for k in moves.tolist():
        p, c = cells[k - 1], cells[k]
        if p[0] != c[0]:
            out.append(((int(c[1]), int(c[2])), grid.point(int(c[1]), int(c[2]))))
            continue
        dist = abs(int(p[1]) - int(c[1])) + abs(int(p[2]) - int(c[2]))
        if dist > 1:
            m = _k_to_m(g)[dist]
            a = grid.point(int(p[1]), int(p[2]))
            ux = (int(c[2]) - int(p[2])) / dist
            uy = (int(c[1]) - int(p[1])) / dist
            end = (round(a[0] + ux * m * JUMP_PITCH, 6), round(a[1] + uy * m * JUMP_PITCH, 6))
            out.append(((int(p[1]), int(p[2])), a))
            out.append(((int(c[1]), int(c[2])), end))
    return out


def _hole_clash(grid: RoutingGrid, cells: np.ndarray):
    """The grid point of the first hole of a path closer than min_hole_spacing to an earlier one."""
    drill = grid.jump_drill if grid.one_layer else grid.via_drill
    need = drill + grid.rules.min_hole_spacing - TOL
    holes = _path_holes(grid, cells)
    for k in range(1, len(holes)):
        for q in range(k):
            if math.dist(holes[k][1], holes[q][1]) < need:
                return holes[k][0]
    if grid.one_layer:
        # jumper wires of one path may not cross each other either (holes come in pairs per jumper)
        wires = [(holes[k][1], holes[k + 1][1], holes[k][0]) for k in range(0, len(holes) - 1, 2)]
        for k in range(1, len(wires)):
            for q in range(k):
                if _wires_cross(wires[k][:2], wires[q][:2]):
                    return wires[k][2]
    return None


def _wires_cross(a, b) -> bool:
    """True when two axis-parallel wires share a point (touching counts: one wire may not rest on another)."""
    ax0, ax1 = sorted((a[0][0], a[1][0]))
    ay0, ay1 = sorted((a[0][1], a[1][1]))
    bx0, bx1 = sorted((b[0][0], b[1][0]))
    by0, by1 = sorted((b[0][1], b[1][1]))
    return ax0 <= bx1 + TOL and bx0 <= ax1 + TOL and ay0 <= by1 + TOL and by0 <= ay1 + TOL


@lru_cache(maxsize=8)
def _k_to_m(g: float) -> dict:
    """Jumper length in cells -> the multiple of 2.54 mm it stands for (the first that rounds to it)."""
    k_to_m = {}
    for m in range(1, 64):
        k_to_m.setdefault(int(round(m * JUMP_PITCH / g)), m)
    return k_to_m


def _lay_path(grid: RoutingGrid, space: SearchSpace, route: NetRoute, cells: np.ndarray) -> list:
    """Turn a found path into edges, vias and jumpers; returns the new tree cells."""
    new = []
    g = grid.pitch
    k_to_m = _k_to_m(g)
    rows = [tuple(r) for r in np.asarray(cells, dtype=np.int64).tolist()]     # plain ints, once
    for k in range(len(rows)):
        c = rows[k]
        new.append(c)
        route.cells.add(c)
        if k == 0:
            continue
        p = rows[k - 1]
        if p[0] != c[0]:
            route.vias.append((c[1], c[2]))
            route.cells.add(p)
            _block_hole(grid, space, grid.point(c[1], c[2]), grid.via_drill)
            continue
        dist = abs(p[1] - c[1]) + abs(p[2] - c[2])
        if dist == 1:
            route.edges.add((min(p, c), max(p, c)))
            continue
        # a jumper: exactly m * 2.54 mm from the start; a stub joins its far end to the grid point
        kcells = dist
        m = k_to_m[kcells]
        a = grid.point(p[1], p[2])
        b = grid.point(c[1], c[2])
        ux = (c[2] - p[2]) / kcells
        uy = (c[1] - p[1]) / kcells
        end = (round(a[0] + ux * m * JUMP_PITCH, 6), round(a[1] + uy * m * JUMP_PITCH, 6))
        route.jumpers.append((a, end))
        if end != b:
            route.stubs.append((b, end, c[0]))
        if space.wire_block is not None:
            sj, si = grid.wire_cells(a, end)
            space.wire_block[sj, si] = 1
            space._wire_rows = space._wire_cols = None
        _block_hole(grid, space, a, grid.jump_drill)
        _block_hole(grid, space, end, grid.jump_drill)
    return new


def route_net(grid: RoutingGrid, net: str, space: SearchSpace, pad_groups: list[list], *,
              bend: int, via: int, jump: int, others=None, order=(0, 1, 2, 3),
              explain: bool = False, cache: bool = False, budget: Optional[int] = None,
              pieces: Optional[list] = None, partial: bool = False) -> NetRoute:
    """Grow the rectilinear Steiner tree of one net.

    Parameters
    ----------
    grid : RoutingGrid
    net : str
    space : SearchSpace
        The net's search space (:meth:`RoutingGrid.space_for`), with its congestion costs.
    pad_groups : list of lists of PlacedPad
        The net's pads, grouped by the copper that already joins them.
    bend, via, jump : int
        Penalties in search units (:data:`router.search.STEP` per grid step).
    others : tuple of arrays, optional
        Copper the router laid for other nets (:meth:`RoutingGrid.obstacle_arrays`): stubs,
        which leave the grid, must keep clear of it too (used when other nets are walls).
    order : sequence of the headings 0..3
        The order the search tries steps in: it picks among paths of equal cost (the seed's ties).
    explain : bool
        When no way is found, name the kind of obstacle that closes it (:mod:`router.blockage`;
        a few more searches, so only for the attempt whose reason is reported).
    cache : bool
        The space's open cells are the fixed copper's only (negotiation): pads' access is kept
        on the grid and reused (:func:`terminals`).
    budget : int, optional
        The caller takes the route only when its cost without congestion (``STEP`` per grid step,
        `bend` per bend as the contract counts them, `via` per via, jumpers as the search prices
        them) is at most this. Each search is then bounded (:func:`router.search.find_path`'s
        ``bound``) by what is left of it, plus ``2 * bend`` for each search the net may need (a
        path leaving the tree from a cell where one arm ends makes a bend there that the search
        does not pay), and the route fails as soon as one search finds nothing within its bound:
        a route the caller would refuse is not searched for to the end. No bound once a via
        place beside a pad becomes a source (its via costs the search nothing).
    pieces : list of (pads, cells), optional
        Copper of the net kept from an earlier route (:func:`router.mend.cut`): each piece a
        terminal of the pads it joins, reached at any of its grid cells (l, j, i) with no stub;
        `pad_groups` are then the groups no piece holds. The route holds only the new links.
    partial : bool
        For a net that cannot be completed: join what can be joined. A pad with no way to the grid
        is left out, and the terminals the tree cannot reach grow trees of their own (each as
        far as it goes), so the route holds every link there is; ``failed`` still says why the
        net is not complete.

    Returns
    -------
    NetRoute
        Its copper; ``failed`` names the reason when some pins could not be joined
        (the copper of the pins that were joined is kept in the route).
    """
    route = NetRoute(net)
    pieces = pieces or []
    if not grid.one_layer:               # vias inside the net's large surface pads (router.escape)
        from .escape import pad_vias
        pad_vias(grid, space, net, [p for g in pad_groups for p in g] + [p for ps, _ in pieces for p in ps],
                 strict=others is not None)
    terms = [Terminal(list(ps), {tuple(c): None for c in cells}) for ps, cells in pieces]
    terms += terminals(grid, space, net, pad_groups, others, cache=cache)
    if len(terms) <= 1:
        return route
    blind = [t for t in terms if not t.cells]
    if blind and partial:
        why = f"pad {blind[0].name} has no open grid point within reach for a {grid.profile_of(net).width:g} mm trace"
        if len(terms) - len(blind) < 2:
            return NetRoute(net, failed=why)
        route = _grown_apart(grid, net, space, [t for t in terms if t.cells], bend=bend, via=via, jump=jump,
                             others=others, order=order)
        route.failed = route.failed or why
        return route
    if blind and others is not None and terminals(grid, grid.space_for(net), net, [blind[0].pads])[0].cells:
        # walls of other nets' routed copper, not the fixed copper, take every exit (asked of the
        # fixed copper's own space: the walled space has the routed copper's cells closed too)
        route.failed = (f"pad {blind[0].name}: {TAKEN} "
                        f"(for a {grid.profile_of(net).width:g} mm trace)")
        route.closed = blind[0].pads[0]
        return route
    if blind:
        from .blockage import pad_closed_by      # name what closes the pad in (router.blockage)
        why = pad_closed_by(grid, net, space, blind[0].pads[0]) if len(blind[0].pads) == 1 else \
            "too close to other copper or the edge"
        route.failed = (f"pad {blind[0].name} has no open grid point within reach for a "
                        f"{grid.profile_of(net).width:g} mm trace: {why}")
        route.blind = others is None     # against fixed copper only: the same in every pass
        return route
    # start from the terminal nearest the net's centre, so the tree grows outwards
    cx = np.mean([p.x for t in terms for p in t.pads])
    cy = np.mean([p.y for t in terms for p in t.pads])
    # (a terminal reached only by escape vias starts no search: a source costs nothing, its via would be free)
    if pieces:                           # the largest piece kept (router.mend): the others join it
        first = max(range(len(pieces)), key=lambda k: (len(terms[k].cells), -k))
    else:
        first = min(range(len(terms)), key=lambda k: (_via_only(terms[k]),
                                                      math.hypot(terms[k].pads[0].x - cx, terms[k].pads[0].y - cy), k))
    tree: dict = _price_exits(grid, space, terms, first, via, bend)  # cell -> stub to add when a path leaves from it
    if first < len(pieces):              # every cell of a kept piece is a source, however priced (the call
        tree = dict(terms[first].cells)  # above is still what prices the other terminals' exits)
    # the first terminal's via places left out as dearer than its other cells: sources after all
    # when no search from those finds a way (a pad boxed in on its own layer). (Every cell left
    # out, with a fan-out plan, measured worse: real_board(1, 60)'s planned try lost 3 nets, not 0.)
    spare = {c: s for c, s in terms[first].cells.items() if _is_via(s) and c not in tree}
    widened = False
    vias_in_tree = True                  # the tree may hold via places (first terminal, spare, widen)
    used_stub: set = set()
    left = [k for k in range(len(terms)) if k != first]
    slack = None if budget is None else int(budget) + 2 * bend * len(left)
    near = _Nearest(terms, left, list(tree))
    tree_cells = _SortedCells(grid, tree)
    dead: set = set()                    # terminals a search aimed at them alone could not reach
    while left:
        # the few terminals nearest the tree are the targets (a tight box keeps A* focused on a
        # net of many pads); only when none of them can be reached, every terminal left. Terminals
        # found out of reach so are not aimed at alone again (each such try swept all the board
        # the tree reaches, once per pin on a net of many pads); they stay targets of the search
        # for every terminal left, which reaches them when the tree comes to where they are
        live = [k for k in left if k not in dead]
        tries = [near.closest(live, NEAREST)] if len(left) > NEAREST and live else []
        tries.append(left)
        for aim in tries:
            owner: dict = {}
            for k in aim:
                for c in terms[k].cells:
                    owner.setdefault(c, k)
            path = _find(grid, space, tree_cells.array(),
                         np.array(sorted(owner), dtype=np.int64), bend, via, jump, order,
                         escapes=(tree, owner, terms, route), bound=slack)
            if path is OVER_BOUND:
                route.failed = f"no way from {terms[first].name} within the cost allowed"
                return route
            if path is not None:
                break
            if aim is not left:
                dead.update(aim)
        if path is None and spare:
            slack = None                 # a source's via is free to the search: no bound from here
            vias_in_tree = True
            for c, st in spare.items():
                tree[c] = st
                tree_cells.add(c)
            spare = {}
            continue
        if path is None and not widened and grid.L == 2:
            widened = True               # every surface pad's via places, once (a pad boxed in)
            slack = None
            if _widen(grid, space, net, terms, left, tree, tree_cells, others, via, bend):
                vias_in_tree = True
                continue
        if path is None:
            names = ", ".join(terms[k].name for k in left[:3]) + (" ..." if len(left) > 3 else "")
            route.failed = f"no way from {terms[first].name} to {names}"
            if explain:                  # the obstacle that closes the way (router.blockage)
                from .blockage import closed_by
                sources = tree_cells.array()
                targets = np.array(sorted(c for k in left for c in terms[k].cells), dtype=np.int64)
                route.failed += ": " + closed_by(grid, net, space, sources, targets)
            else:
                route.failed += UNNAMED
            if partial and len(left) > 1:        # the terminals this tree cannot reach, joined to each other
                route = route.plus(_grown_apart(grid, net, space, [terms[k] for k in left], bend=bend, via=via,
                                                jump=jump, others=others, order=order))
            return route
        start = tuple(int(v) for v in path.cells[0])
        end = tuple(int(v) for v in path.cells[-1])
        stub = tree.get(start)
        if stub is not None and start not in used_stub:
            _add_stub(grid, space, route, stub, start[0])
            used_stub.add(start)
            tree[start] = None
        new = _lay_path(grid, space, route, path.cells)
        if slack is not None:
            slack -= path.cost
        k = owner[end]
        stub = terms[k].cells[end]
        if stub is not None:
            _add_stub(grid, space, route, stub, end[0])
        # every terminal whose pad holds the end point directly is joined as well
        joined = {k} | {q for q in left if terms[q].cells.get(end, 0) is None}
        for q in sorted(joined):
            for c, s in terms[q].cells.items():
                if c not in tree and not _is_via(s):       # an unused via beside a joined pad is no copper
                    tree[c] = s
                    tree_cells.add(c)
        # (only where via places came in: going over the whole tree after every path made a net
        # of many pads quadratic)
        unused = [c for c, s in tree.items() if _is_via(s)] if vias_in_tree else []
        vias_in_tree = False
        if unused:                       # the first terminal's via places, once a path has left it
            for c in unused:
                del tree[c]
            tree_cells = _SortedCells(grid, tree)
        for c in new:                    # the route's cells so far: these and those of earlier paths
            if c not in tree:
                tree_cells.add(c)
            tree[c] = None
        left = [q for q in left if q not in joined]
        spare = {}
        near.grow(new + [c for q in joined for c in terms[q].cells])
    return route


def _grown_apart(grid, net, space, terms: list, **kw) -> NetRoute:
    """:func:`route_net` with ``partial`` over the pads of `terms` (Terminals with a way to the grid;
    their accesses are found again, the same search space)."""
    return route_net(grid, net, space, [t.pads for t in terms], partial=True, **kw)


class _SortedCells:
    """A tree's cells as a sorted (l, j, i) array, kept as the tree grows (sorting the whole
    tree again for every search cost more than the searches on nets of many pads)."""

    def __init__(self, grid, cells):
        self.ny, self.nx = grid.ny, grid.nx
        self.keys = np.unique(np.array([self._key(c) for c in cells], dtype=np.int64))
        self.new: list = []
        self._rows = None

    def _key(self, c) -> int:
        return (c[0] * self.ny + c[1]) * self.nx + c[2]     # ordered as the cells (l, j, i) are

    def add(self, c) -> None:
        self.new.append(self._key(c))

    def array(self) -> np.ndarray:
        if self.new:
            add = np.unique(np.array(self.new, dtype=np.int64))
            at = np.searchsorted(self.keys, add)
            fresh = (at >= len(self.keys)) | (self.keys[np.minimum(at, len(self.keys) - 1)] != add) \
                if len(self.keys) else np.ones(len(add), bool)
            self.keys = np.insert(self.keys, at[fresh], add[fresh])      # a merge, not a sort of the tree
            self.new = []
            self._rows = None
        if self._rows is None:
            k = self.keys
            plane = self.ny * self.nx
            self._rows = np.stack([k // plane, (k // self.nx) % self.ny, k % self.nx], axis=1).astype(np.int64)
        return self._rows


#: How many of a net's unjoined terminals, nearest its tree, one search aims at.
NEAREST = 4


def _is_via(stub) -> bool:
    return getattr(stub, "via", None) is not None


def _via_only(t: Terminal) -> bool:
    return bool(t.cells) and all(_is_via(s) for s in t.cells.values())


def _price_exits(grid: RoutingGrid, space: SearchSpace, terms: list, first: int, via: int = 0,
                 bend: int = 0) -> dict:
    """Exits off the grid (stubs, necks) priced by the grid points beside them: the search
    pays a cell's extra cost (congestion, history, reserved exits) only on entering it, so an
    exit would cross other nets' claims for free. Each exit's access cell is charged the
    extra cost of the grid points within half a pitch of the exit (a target pays it on
    entering); the first terminal, where searches start at no cost, keeps only the exits
    priced within one grid step of its cheapest. Returns the first terminal's cells.

    An escape via (:class:`router.escape.EscapeVia`) is priced like any via the search lays:
    `via`, the hole's cost at its place, the cell it takes on the pad's layer, and, when a link
    leaves it on the pad's layer, a `bend` (the contract's bend at a via: a path that arrives on
    the other layer at a right angle to the link turns there; one that arrives in line with the
    link does not, and pays it all the same, as the search cannot tell them apart at a target)."""
    from .search import STEP
    keep = dict(terms[first].cells)
    hit = getattr(space, "exit_hit", None)
    for k, t in enumerate(terms):
        price = {}
        for c, stub in t.cells.items():
            if stub:
                price[c] = _exit_price(grid, space, c, stub, via, bend)
            extra = hit(c) if hit is not None else 0
            if extra:                              # too close to another net's planned exit (router.fanout)
                price[c] = price.get(c, 0) + extra
        if k == first and (hit is not None or any(price.values())):
            # (with a fan-out plan, every cell's own cost too: a source pays nothing, so an exit
            # that another net's planned exit makes dear (router.fanout) is left out, not priced)
            base = {c: space.cell_cost(*c) + price.get(c, 0) for c in t.cells}
            low = min(base.values(), default=0)
            keep = {c: s for c, s in t.cells.items() if base[c] <= low + STEP}
            continue
        if k == first or not price or not any(price.values()):
            continue
        for c, v in price.items():
            space.raise_cell(c, v)
    return keep


def _exit_price(grid: RoutingGrid, space: SearchSpace, c, stub, via: int, bend: int) -> int:
    """The price of an exit off the grid at access cell `c` (see :func:`_price_exits`)."""
    from .search import STEP
    esc = _is_via(stub)
    layer = stub.layer if esc else c[0]
    pts = set()
    for a, b in zip(stub, stub[1:]):
        pts.update(grid.near_points(a, b, layer))
    pts.discard(c)
    if esc:
        pts.add((stub.layer, stub.via[0], stub.via[1]))
    free = getattr(space, "exit_free", None)       # the fan-out plan's zones, judged exactly instead
    price = int(sum(space.cell_cost(*q) - (free(q) if free is not None else 0) for q in pts))
    if esc:
        run = sum(abs(a[0] - b[0]) + abs(a[1] - b[1]) for a, b in zip(stub, stub[1:]))
        # the via, its hole, the link as grid steps, a bend where a link leaves it, and one unit
        # more, so that a way of equal cost on the pad's own layer wins the tie
        price += (via + space.hole_cost(*stub.via) + int(round(STEP * run / grid.pitch))
                  + (bend if len(stub) > 1 else 0) + 1)
    return price


def _find(grid, space, sources, targets, bend, via, jump, order=(0, 1, 2, 3), escapes=None, bound=None):
    """find_path, with a hole of the path too near an earlier one of the same path closed and the
    search run again (up to 32 times); `bound` is find_path's (its OVER_BOUND is returned). `escapes` = (tree, owner, terms, route): an escape via at
    the path's start or end keeps the hole spacing from the path's vias (theirs are closed) and
    from the route's vias (that target is dropped)."""
    path = None
    for _ in range(32):
        path = find_path(space, sources, targets, bend=bend, via=via, jump=jump, order=order, bound=bound)
        if path is None or path is OVER_BOUND:
            return path
        clash = _hole_clash(grid, path.cells)
        if clash is None and escapes is not None:
            clash, drop = _escape_clash(grid, path.cells, *escapes)
            if drop is not None:
                targets = targets[~np.all(targets == np.array(drop, dtype=np.int64), axis=1)]
                if not len(targets):
                    return None
                path = None
                continue
        if clash is None:
            return path
        path = None
        j, i = clash                     # a hole of this path too near an earlier one: not there
        if grid.one_layer:
            space.jump_ok[j, i] = 0
        else:
            space.via_ok[j, i] = 0
    return path


def _escape_clash(grid, cells, tree, owner, terms, route):
    """For an escape via at a path's start or end: (grid point of a via of the path closer
    than min_hole_spacing to it, or None; the end cell to drop when its escape via is that
    close to a via the route has already laid, or None)."""
    start = tuple(int(v) for v in cells[0])
    end = tuple(int(v) for v in cells[-1])
    s_stub = tree.get(start)
    k = owner.get(end)
    e_stub = terms[k].cells.get(end) if k is not None else None
    esc = [st for st in (s_stub, e_stub) if _is_via(st)]
    if not esc:
        return None, None
    need = grid.via_drill + grid.rules.min_hole_spacing - TOL
    pts = {st.via: grid.point(*st.via) for st in esc}
    if _is_via(e_stub):
        p = pts[e_stub.via]
        laid = [grid.point(j, i) for j, i in route.vias]
        if _is_via(s_stub) and s_stub.via != e_stub.via:
            laid.append(pts[s_stub.via])
        if any(math.dist(p, q) < need for q in laid):
            return None, end
    for (j, i), at in _path_holes(grid, cells):
        if any(math.dist(at, p) < need for p in pts.values()):
            return (j, i), None
    return None, None


class _Nearest:
    """Grid (Manhattan) distance from each terminal's access cells to the tree, kept as it grows."""

    def __init__(self, terms, left, tree_cells):
        self.ks = list(left)
        cells = [(c[1], c[2], k) for k in left for c in list(terms[k].cells)[:1]]     # one cell stands for its terminal
        self.ji = np.array([(j, i) for j, i, _ in cells], dtype=np.int64).reshape(-1, 2)
        self.of = np.array([k for _, _, k in cells], dtype=np.int64)
        self.best = np.full(len(cells), np.iinfo(np.int64).max // 4, dtype=np.int64)
        self.grow(tree_cells)

    def grow(self, cells) -> None:
        if not len(cells) or not len(self.ji):
            return
        arr = np.array([(c[1], c[2]) for c in cells], dtype=np.int64).reshape(-1, 2)   # repeats leave the minimum as it is
        for a in range(0, len(arr), 512):
            chunk = arr[a:a + 512]
            d = (np.abs(self.ji[:, None, 0] - chunk[None, :, 0]) + np.abs(self.ji[:, None, 1] - chunk[None, :, 1]))
            self.best = np.minimum(self.best, d.min(axis=1))

    def closest(self, left, n: int) -> list:
        per = {}
        for k, d in zip(self.of.tolist(), self.best.tolist()):
            if d < per.get(k, np.inf):
                per[k] = d
        return sorted(left, key=lambda k: (per.get(k, np.inf), k))[:n]
