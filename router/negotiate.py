"""Route every net of a board: negotiated congestion over the grid (PathFinder).

Each net is routed on its own search space (:meth:`RoutingGrid.space_for`), where
the hard obstacles (pads, holes, keepouts, the edge, copper already in the file)
are walls and the copper the router has laid for the other nets is *soft*: a
cell that other nets' copper would be too close to costs

    extra = present x (how many other nets claim it) + history

Every pass rips up and reroutes each net that shares a cell with another net; the
present factor grows each pass and the history of a shared cell grows each time it
is shared, so nets negotiate: the ones with other choices move away, the ones
without keep the cell. When no cell is shared the routing is legal. If sharing
remains after the pass limit, the nets that share most are taken out and routed
once more with every other net's copper as a wall; what still fails stays
unrouted with its reason.

Finally the written board is checked with the exact geometry of
:mod:`router.check` (independently of the grid); a net whose new copper breaks a
rule there is taken out again and reported, so the router never writes a
violation of its own.

References
----------
.. [1] L. McMurchie, C. Ebeling, "PathFinder: a negotiation-based performance-driven
   router for FPGAs", Proc. FPGA, 1995.
"""
from __future__ import annotations

import math
import time
from collections import defaultdict
from dataclasses import dataclass, field
from typing import Callable, Optional

import numpy as np
from shapely.geometry import Point as SPoint

from .connectivity import components
from .copper import copper_items, pad_core
from .grid import RoutingGrid, box_of_core
from .model import Board, Jumper, Trace, Via
from .blockage import ANY_ONE, ROUTED
from .mend import cut, merged
from .nets import TAKEN, UNNAMED, NetRoute, _block_hole, route_net, terminals
from .search import STEP
from .spaces import NetSpaces
from .tidy import polylines, trim_dangling
from .units import TOL
from .escape import EscapeVia, ExitReserve, exit_conflicts
from .viapass import MOVE_NEAR, VIA_TRADE, ViaCrowd, fewer_vias as _fewer_vias, move_blockers as _move_blockers

__all__ = ["RouteResult", "route_board", "DEFAULT_BEND", "DEFAULT_VIA", "DEFAULT_JUMP", "DEFAULT_PASSES"]

#: Default penalties, in mm of trace: a bend costs 1 mm, a via 2 mm, a jumper 5 mm (our choice).
DEFAULT_BEND = 1.0
DEFAULT_VIA = 2.0
DEFAULT_JUMP = 5.0
DEFAULT_PASSES = 16
#: Negotiation stops early when the shared cells have not fallen below their best for this many
#: passes (after at least twice as many passes): our choice, see _attempt.
STALL = 4
#: On a big board (BIG_WORK) a pass counts as progress only when the sharing falls by at least
#: this share below its best (our choice: on a board of 150 nets the last passes took the shared cells down by 1 to 3 %
#: each, at 15 to 25 s a pass).
STALL_FALL = 0.1
#: On a big board the negotiation stops after this many passes without such a fall (our choice: on
#: the board of 150 nets passes 10 to 13 took the shared cells from 160 to 151, 2 s each, and the
#: board routed the same nets with the same vias when it stopped after pass 11; see docs/measurements.md).
STALL_BIG = 2
#: The present factor's growth per negotiation pass (:meth:`_Negotiation.raise_prices`).
PRESENT_GROW = 1.8
#: The negotiation of a board below :data:`BIG_WORK`: every net is routed again in every pass (the
#: neighbours of a net that shares cells move too, though they share nothing themselves), for up to
#: :data:`CLASSIC_PASSES` passes, the present factor growing by :data:`CLASSIC_GROW` a pass (the
#: history has time to tell the nets apart before the present price walls them in; our choice, a
#: slow growth as the original negotiation has, from memory; measured in docs/measurements.md).
CLASSIC_PASSES = 40
CLASSIC_GROW = 1.3
#: In repair, an unrouted net's way through the other nets pays this much (mm of trace) for each
#: grid cell of theirs it takes (our choice: several mm, so it crosses rather than runs along).
REPAIR_PRICE = 5.0
#: The local re-order rips up the routed nets with a cell this near (mm) a pad of a net left
#: unrouted, routes that net first and them after it (our choice: a fine-pitch pad's exit and
#: the copper beside it, see _reorder_local).
REORDER_WINDOW = 1.5
#: Passes of the short negotiation among the nets the planned re-order rips up (our choice).
LOCAL_PASSES = 12
#: The planned re-order rips up the nets with a cell this near (mm) a lost pad (our choice: a fine-pitch
#: part's fan-out and the first turns beyond it, about a 0.5 mm row's width of eight pads).
PLAN_WINDOW = 5.0
#: The fan-out with the supplies' local negotiation stops its searches once they have expanded this many
#: times the board's search states (layers x cells x headings; search.work_limit) (our choice: the nets it
#: brought back on the real-looking boards 10 and 12, angled board 2 and the 1,300-pad board took 0.4 to 5.2
#: times, the tries that failed on board 12 and angled board 1 3 to 24 times; see docs/measurements.md).
FAN_SWEEPS = 10
#: Nets of more pads are ripped up by the planned re-order only where they hold a planned exit (our choice).
LOCAL_MOST_PADS = 4
#: The swap after repair tries, for each lost net, at most this many nets in its way one at a time (our
#: choice: the nets its way through the others at REPAIR_PRICE crosses, then those with copper within
#: REORDER_WINDOW of its pads; on the real-looking boards 3 and 4 the one that worked was among the first
#: three of ten or fewer).
SWAP_MOST = 12
#: The swap's second way tries, for each lost net, at most this many of the nets its priced way
#: shares cells with (our choice: the neighbours on either side of a row pad).
STAKE_MOST = 4
#: The row stake-out rips up the nets with a planned exit on a lost pad's part whose pads lie within
#: this many mm of it (our choice: three pads each way at 0.5 mm pitch, two at 0.65).
STAKE_REACH = 1.5
#: The mend of a lost supply (_mend_many) rips up and routes again the nets of at most this many pads
#: near the copper it cut out, and cuts and mends those of more (our choice: angled real-looking board
#: 3's VCC mends only with its SCL and SDA buses, six pads each, moved too; docs/measurements.md).
MEND_RIP_MOST = 10
#: The mend's local negotiation stops at this many times the board's search states (our choice: angled
#: board 3's VCC mended within 3.3; on the 1,300-pad board of scripts/bench_route.py a mend of SDA that
#: failed ran to FAN_SWEEPS, 10, and cost 8 of the board's 50 s; docs/measurements.md).
MEND_SWEEPS = 4
#: ... and routes them and the lost net in at most this many orders: the lost net, then the nearest
#: first; then each time the one left without a way first (our choice).
STAKE_ORDERS = 3
#: In repair at REPAIR_PRICE (big boards), a lost net whose way through the others expanded more than
#: this many times the board's search states (layers x cells x headings) gets no other such way when
#: lost again (our choice: on a board of 150 nets only a 17-pad bus across the board did, 1 to 3 s a
#: way, and was lost again each time; see docs/measurements.md).
REPAIR_DEAR = 0.5
#: A board whose nets x grid cells exceed this is big: it is routed in one net order (no
#: ``retries``: each order costs minutes there, 7 to 9 on our shared 2-core machine for 150 nets
#: on 570,000 cells), its negotiation stops at a stall of less than STALL_FALL, its repair and
#: local re-order route at REPAIR_PRICE, and its via pass tries a net again only near a change
#: (router.viapass.MOVE_NEAR). Smaller boards keep the fuller search (our choice, see
#: docs/measurements.md for what each costs and gives).
BIG_WORK = 20_000_000
#: How many tries route_board holds unfinished at once (each holds its grid and search arrays): the
#: one in line to be kept and one more, finished only when the exact check of the first takes a net
#: out (_kept_try). Our choice: memory of at most two grids beside the try being routed.
KEEP_TRIES = 2
#: On a big board a net's searches at congestion cost keep to the grid within this many mm of the
#: box around its pads, and search the whole board only when no way is found there (our choice:
#: late in negotiation a shared cell costs hundreds of grid steps, and a search whose targets lie
#: behind shared cells swept the whole board for a way round; see docs/measurements.md).
WINDOW = 10.0


@dataclass
class RouteResult:
    """What :func:`route_board` returns; unpacks as ``(board, figures)``."""
    board: Board
    figures: dict
    failed: dict = field(default_factory=dict)     # net -> one-line reason
    seconds: float = 0.0
    passes: int = 0
    shared_left: int = 0
    poured: list = field(default_factory=list)     # per pour: (net, layer, pads joined, {pad: why not})
    removed: object = None        # router.deadends.Removed: dead-end copper taken out first

    def __iter__(self):
        yield self.board
        yield self.figures


def _figures(board: Board) -> dict:
    from .figures import board_figures
    return board_figures(board)


def _cost(mm: float, pitch: float) -> int:
    return max(0, int(round(STEP * mm / pitch)))


class _Negotiation:
    def __init__(self, board: Board, grid: RoutingGrid, nets: list[str], groups: dict, bend: int, via: int,
                 jump: int, crowd: bool = True, lanes: bool = False):
        self.board, self.grid, self.nets, self.groups = board, grid, nets, groups
        self.bend, self.via, self.jump = bend, via, jump
        self.routes: dict[str, NetRoute] = {}
        self.soft: dict[str, list] = {}
        self.off_grid: dict[str, list] = {}       # the soft items of each net that lie off the grid
        self.own = {n: grid.own_obstacles(n) for n in nets}
        self.hist = np.zeros((grid.L, grid.ny, grid.nx), np.int64)
        self.present = 0.5
        self.blind: dict[str, str] = {}            # nets the fixed copper alone leaves unroutable: found once
        self.ties: dict[str, tuple] = {}           # net -> the order its searches try headings in (the seed's ties)
        self.own_at: dict[str, tuple] = {}         # net -> its own soft counts at its cells and holes (conflicts)
        self.crowd = ViaCrowd(grid) if grid.L == 2 and crowd else None
        self.reserve = ExitReserve(grid, lanes)   # scarce pads' exits cost other nets more (router.escape)
        self.spaces = NetSpaces(grid)              # search spaces from parts made once (router.spaces)
        self.fanout = None                         # fine-pitch parts' planned exits (router.fanout), plan_fanout()
        self.hist_top = None                       # the larger history of the layers, made once per pass
        self.window = None                         # big boards: mm around a net's pads its searches keep to (WINDOW)
        self.grow = PRESENT_GROW                   # the present factor's growth per pass (raise_prices)
        self._windows: dict = {}
        self.mend: dict = {}                       # net -> router.mend.Mend: routed as the missing links only
        self.mend_victims = False                  # repair mends the nets of many pads in its way (_repair)

    def zero_hist(self) -> np.ndarray:
        """A history of zeros shaped as ``hist`` (made once; never written)."""
        if getattr(self, "_zero", None) is None:
            self._zero = np.zeros_like(self.hist)
        return self._zero

    def hist_top_now(self) -> np.ndarray:
        """hist.max over the layers, made again when ``hist`` is another array; set ``hist_top`` to
        None whenever ``hist`` changes in place."""
        if self.hist_top is None or self.hist_top[0] is not self.hist:
            top = self.hist.max(axis=0)
            self.hist_top = (self.hist, top, int(top.max(initial=0)))
        return self.hist_top[1]

    def hist_max_now(self) -> int:
        """hist's largest entry, kept with ``hist_top`` (the same largest entry)."""
        self.hist_top_now()
        return self.hist_top[2]

    def raise_prices(self, cells: list) -> None:
        """The end of a negotiation pass: one grid step of history at each shared cell (`cells`, as
        :meth:`conflicts` gives them), and the present factor grows."""
        for c in cells:
            if len(c):
                self.hist[c[:, 0], c[:, 1], c[:, 2]] += STEP
        self.hist_top = None
        self.present *= self.grow

    def width(self, net: str) -> float:
        return self.grid.profile_of(net).width

    def merged_segments(self, r: NetRoute):
        grid = self.grid
        per_layer = defaultdict(list)
        for (l, j, i), (_, j2, i2) in r.edges:        # in whole cells (i, j): ordered as (x, y) are
            per_layer[l].append(((i, j), (i2, j2)))
        out = []
        for l in sorted(per_layer):
            for line in polylines(per_layer[l], whole=True):
                pts = [grid.point(int(j), int(i)) for i, j in line]
                out.extend((a, b, l, self.width(r.net)) for a, b in zip(pts, pts[1:]))
        for a, b, l in r.stubs:
            out.append((a, b, l, self.width(r.net)))
        for pts, l, w in r.necks:            # pad exits narrower than the class (router.escape)
            out.extend((a, b, l, w) for a, b in zip(pts, pts[1:]))
        return out

    def lay(self, net: str, r: NetRoute) -> None:
        grid = self.grid
        got = r.laid
        if got is None or got[0] is not grid or got[1] != net:
            # what a route lays is made once per route: a route laid again (put back after a try
            # that was not kept, the polish's old route) reuses it
            items = grid.soft_items(net, self.merged_segments(r), r.via_points(grid), r.jumpers)
            g = grid.pitch
            off = [ob for ob in items if not all(abs(v / g - round(v / g)) < 1e-6 for v in ob.box)]
            got = r.laid = (grid, net, items, _own_counts(grid, net, r, items), off)
        items = got[2]
        grid.add_soft(items, +1)
        for a, b in r.jumpers:
            grid.add_wire(a, b, +1)
        self.routes[net] = r
        self.soft[net] = items
        self.own_at[net] = got[3]
        if self.crowd is not None:
            self.crowd.add(r.vias, +1)
        self.off_grid[net] = list(got[4])
        self.spaces.lay(net, items, self.off_grid[net], +1)

    def rip(self, net: str) -> None:
        r = self.routes.pop(net, None)
        if r is None:
            return
        items = self.soft.pop(net)
        self.grid.add_soft(items, -1)
        self.spaces.lay(net, items, self.off_grid.pop(net, None) or [], -1)
        self.own_at.pop(net, None)
        if self.crowd is not None:
            self.crowd.add(r.vias, -1)
        for a, b in r.jumpers:
            self.grid.add_wire(a, b, -1)

    def restore(self, snap: dict) -> None:
        """The routes as they were in `snap` (a copy of ``routes``): every net whose route is not
        the one in `snap` ripped up, and laid again as in `snap` where it had one there."""
        moved = [n for n in self.nets if self.routes.get(n) is not snap.get(n)]
        for n in moved:
            self.rip(n)
        for n in moved:
            if n in snap:
                self.lay(n, snap[n])

    def route(self, net: str, strict: bool = False, via: Optional[int] = None, explain: bool = True,
              budget: Optional[int] = None, partial: bool = False) -> NetRoute:
        """`net` routed in the negotiation's present state; with `strict`, other nets' copper as
        walls. `budget`: see :func:`router.nets.route_net` (a route that fails for it says
        nothing about the fixed copper: not marked blind). `partial` (a net that cannot be
        completed, with `strict`): joined as far as it goes, its pads with no way to the grid left
        out (:func:`router.nets.route_net`), so a user completes it by hand or in a later ``route``."""
        grid = self.grid
        if net in self.blind and not partial:    # a pad with no way to the grid is found once, not every pass
            return NetRoute(net, failed=self.blind[net], blind=True)
        extra = self.reserve.extra_for(net)
        if self.fanout is not None:
            extra = self.fanout.add_to(net, extra)
        box = self.window_of(net) if (not strict and budget is None and via is None) else None
        for box in ([box, None] if box is not None else [None]):
            space, others = self.spaces.space(self, net, strict, extra)
            if box is not None:          # the window first (WINDOW); the whole board when no way is found in it
                j0, i0, j1, i1 = box
                keep = space.open_cell[:, j0:j1, i0:i1].copy()
                space.open_cell[:] = 0
                space.open_cell[:, j0:j1, i0:i1] = keep
            if self.fanout is not None and self.fanout.own:
                space.exit_free = lambda c, net=net: self.fanout.zone_cost(net, c)
                space.exit_hit = lambda c, net=net: self.fanout.hit_cost(net, c)
            m = self.mend.get(net)
            if m is not None:            # the kept copper's pieces joined (router.mend), its holes kept apart
                for v in m.kept.vias:
                    _block_hole(grid, space, grid.point(*v), grid.via_drill)
            r = route_net(grid, net, space, self.groups[net] if m is None else m.loose,
                          bend=self.bend, via=self.via if via is None else via,
                          jump=self.jump, others=others, cache=not strict, order=self.ties.get(net, (0, 1, 2, 3)),
                          explain=explain and (strict or not grid.one_layer) and box is None,     # two layers: found once
                          budget=budget, pieces=None if m is None else m.pieces, partial=partial)
            if m is not None:
                r = merged(m.kept, r)
            if not r.failed:
                break
        if not strict:
            self.reserve.add(net, [p for g in self.groups[net] for p in g])
        if net not in self.mend and (r.blind or (r.failed and not strict and not grid.one_layer and budget is None)):
            # no way even with every other net's routed copper passable (two layers: their copper
            # is only a cost here): the fixed copper, the edge or keepouts close it; found once
            self.blind[net] = r.failed
        return r

    def window_of(self, net: str) -> Optional[tuple]:
        """(j0, i0, j1, i1), end exclusive: the grid cells within ``self.window`` mm of the box
        around `net`'s pads, or None (no window, or the window holds the whole grid)."""
        if self.window is None:
            return None
        got = self._windows.get(net)
        if got is None:
            grid = self.grid
            pads = [p for g in self.groups[net] for p in g]
            m = int(math.ceil(self.window / grid.pitch))
            box = (min(p.x for p in pads), min(p.y for p in pads),
                   max(p.x for p in pads), max(p.y for p in pads))
            i0, i1, j0, j1 = grid.index_box(box, 0.0, cells=m)
            got = (j0, i0, j1, i1)
            if got == (0, 0, grid.ny, grid.nx):
                got = ()
            self._windows[net] = got
        return got or None

    def plan_fanout(self, refs=None) -> None:
        """The fan-out plan of the board's fine-pitch parts (:class:`router.fanout.FanoutPlan`),
        made once before the first pass from the exits of the pads of parts whose own pad gap is
        narrower than the widest class's trace plus two clearances (a trace cannot pass between
        two of their pads): those pads' access, on the board without routed copper, is the grid's
        access cache that the first pass would fill. `refs`: plan only these parts (the local
        re-order, :func:`_reorder_local`)."""
        from .escape import escape_access, own_gaps, pad_vias
        from .fanout import MORE_EXITS, PLAN_DEEPER, PLAN_EXITS, STAIR_EXITS, STAIR_JOG, FanoutPlan, scarce
        grid = self.grid
        profs = list(grid.profiles.values())
        wide = max(2 * p.half for p in profs) + 2 * max(v for p in profs for v in p.clearance_to.values())
        some = grid.pads if refs is None else [p for p in grid.pads if p.ref in set(refs)]
        fine = {ref for ref, (gap, _) in own_gaps(self.board, some).items() if gap < wide - TOL}
        if not fine:
            return
        access, pads = {}, {}
        store = grid.__dict__.setdefault("_access_cache", {})
        for net in self.nets:
            mine = [p for g in self.groups[net] for p in g if p.ref in fine]
            if not mine or net in self.blind:
                continue
            space, _ = self.spaces.space(self, net, False, None)
            if not grid.one_layer:
                pad_vias(grid, space, net, [p for g in self.groups[net] for p in g])
            terminals(grid, space, net, [[p] for p in mine], None, cache=True)
            for p in mine:
                key = (net, p.ref, p.index)
                if key not in store or not scarce(store[key]):
                    continue
                # the plan also weighs exits to further grid rows than the search is offered (a staircase)
                more = escape_access(grid, space, net, p, None, most=PLAN_EXITS, ways=PLAN_EXITS, deeper=PLAN_DEEPER)
                access[key], pads[key] = {**more, **store[key]}, p

        def deeper(key, stair):          # a side with no compatible set: exits to further grid rows
            space, _ = self.spaces.space(self, key[0], False, None)
            if stair is None:
                return escape_access(grid, space, key[0], pads[key], None, most=MORE_EXITS, ways=MORE_EXITS,
                                     deeper=PLAN_DEEPER)
            # the shortest short steps of the first way out that has any, down to the staircase's depth
            return escape_access(grid, space, key[0], pads[key], None, most=1, ways=STAIR_EXITS,
                                 deeper=math.ceil(stair / grid.pitch - 1e-9), jog=STAIR_JOG * grid.pitch)
        self.fanout = FanoutPlan(grid, access, pads, more=deeper)
        planned = grid.__dict__.setdefault("planned_exits", {})
        for key, c in self.fanout.chosen.items():      # a planned exit is one of the pad's own
            store[key].setdefault(c.cell, c.path)
            if c.path is not None and not isinstance(c.path, EscapeVia):    # offered with walls too (nets._planned_access)
                planned.setdefault(key, {})[c.cell] = c.path

    def conflicts(self, only=None) -> tuple[dict, list]:
        """Nets sharing cells with other nets: net -> number of shared cells (and of exits too
        close to other nets' copper, :func:`router.escape.exit_conflicts`), and the cells.

        Other nets' copper at a net's cells is the soft count there less the net's own
        (counted once when the net was laid, :func:`_own_counts`). `only`: the nets to look at
        (None: every routed net); a net that shared nothing before shares nothing after routes
        were only ripped up, so then the nets that shared are enough."""
        grid = self.grid
        shared: dict[str, int] = {}
        cells_all = []
        routes = self.routes if only is None else {n: self.routes[n] for n in only if n in self.routes}
        for net in sorted(routes):
            r = routes[net]
            if not r.cells and not r.vias and not r.jumpers:
                continue
            k = grid.profile_of(net).index
            c, own_c, holes, own_h = self.own_at[net]
            n = 0
            if len(c):
                hit = grid.soft_cell[k][c[:, 0], c[:, 1], c[:, 2]] - own_c > 0
                n += int(hit.sum())
                cells_all.append(c[hit])
            if len(holes):
                hh = grid.soft_via[k][holes[:, 0], holes[:, 1]] - own_h > 0
                for (j, i), is_via in zip(holes[hh], holes_kind(r, hh)):
                    n += 1
                    if is_via:
                        cells_all.append(np.array([[l, j, i] for l in range(grid.L)], dtype=np.int64))
                    else:
                        cells_all.append(np.array([[0, j, i]], dtype=np.int64))
            if n:
                shared[net] = n
        # exits off the grid, measured exactly against the other nets' copper (router.escape)
        ex, ex_cells = exit_conflicts(grid, routes, self.soft)
        for net, n in ex.items():
            shared[net] = shared.get(net, 0) + n
        cells_all.extend(ex_cells)
        return shared, cells_all


def holes_kind(r: NetRoute, hit) -> list:
    """For the hole places of `r` (its vias, then its jumpers' ends) marked in `hit`: True for a via."""
    kinds = [True] * len(r.vias) + [False] * (2 * len(r.jumpers))
    return [k for k, h in zip(kinds, hit) if h]


def _hole_cells(grid: RoutingGrid, r: NetRoute) -> np.ndarray:
    """(j, i) of a route's vias, then of its jumpers' ends (inside the grid)."""
    out = [(j, i) for j, i in r.vias]
    for a, b in r.jumpers:
        for at in (a, b):
            j = int(round(at[1] / grid.pitch)) - grid.j0
            i = int(round(at[0] / grid.pitch)) - grid.i0
            out.append((min(max(j, 0), grid.ny - 1), min(max(i, 0), grid.nx - 1)))
    return np.array(out, dtype=np.int64).reshape(-1, 2)


#: Cells measured together in :func:`_own_counts` (neighbours in x; our choice).
_OWN_RUN = 256


def _own_counts(grid: RoutingGrid, net: str, r: NetRoute, items) -> tuple:
    """A route's own contribution to its class's soft maps at its cells (and near cells) and at
    its hole places, computed with the same arithmetic as :meth:`RoutingGrid.stamp`, so that the
    soft count there less this is exactly what the other nets' copper adds."""
    prof = grid.profile_of(net)
    cells = np.array(sorted(r.cells), dtype=np.int64).reshape(-1, 3)     # exits: escape.exit_conflicts
    holes = _hole_cells(grid, r)
    own_c = np.zeros(len(cells), np.int64)
    own_h = np.zeros(len(holes), np.int64)
    if not items:
        return cells, own_c, holes, own_h
    boxes = np.array([ob.box for ob in items], dtype=np.float64)
    lmask = np.array([sum(1 << l for l in ob.layers) for ob in items], dtype=np.int64)
    if len(cells):
        need = np.array([grid._need(ob, prof, prof.half) for ob in items]) - TOL
        reach = max(float(need.max()), 0.0)
        xs, ys = grid.xs[cells[:, 2]], grid.ys[cells[:, 1]]
        # the cells in runs of nearby x, each measured only against the items whose box comes within
        # the largest need of the run's box (exact: no other item reaches a cell of the run); the
        # whole cells x items at once cost most of laying a route of many pads
        by_x = np.argsort(xs, kind="stable")
        for s0 in range(0, len(cells), _OWN_RUN):
            run = by_x[s0:s0 + _OWN_RUN]
            X, Y = xs[run], ys[run]
            it = np.nonzero((boxes[:, 0] <= X.max() + reach) & (boxes[:, 2] >= X.min() - reach)
                            & (boxes[:, 1] <= Y.max() + reach) & (boxes[:, 3] >= Y.min() - reach))[0]
            if not len(it):
                continue
            bx, nd = boxes[it], need[it]
            dx = np.maximum(np.maximum(bx[None, :, 0] - X[:, None], 0.0), X[:, None] - bx[None, :, 2])
            dy = np.maximum(np.maximum(bx[None, :, 1] - Y[:, None], 0.0), Y[:, None] - bx[None, :, 3])
            on = ((lmask[it][None, :] >> cells[run, 0:1]) & 1).astype(bool)
            own_c[run] = ((dy ** 2 + dx ** 2 < nd[None, :] ** 2) & on & (nd[None, :] > 0)).sum(axis=1)
    if len(holes):
        half = (grid.jump_d / 2 + grid.jump_slack) if grid.one_layer else grid.via_d / 2
        drill = grid.jump_drill if grid.one_layer else grid.via_drill
        need = []
        for ob in items:
            n_ = grid._need(ob, prof, half)
            if ob.kind == "copper" and ob.radius > 0 and ob.box[0] == ob.box[2] and ob.box[1] == ob.box[3]:
                n_ = max(n_, drill + grid.rules.min_hole_spacing + 2 * grid.jump_slack)
            need.append(n_ - TOL)
        need = np.array(need)
        X = grid.xs[holes[:, 1]][:, None]
        Y = grid.ys[holes[:, 0]][:, None]
        dx = np.maximum(np.maximum(boxes[None, :, 0] - X, 0.0), X - boxes[None, :, 2])
        dy = np.maximum(np.maximum(boxes[None, :, 1] - Y, 0.0), Y - boxes[None, :, 3])
        own_h = ((dy ** 2 + dx ** 2 < need[None, :] ** 2) & (need[None, :] > 0)).sum(axis=1)
    return cells, own_c, holes, own_h


def _pad_groups(board: Board, grid: RoutingGrid):
    items = list(grid.layout.items)          # the board resolved once (router.layout)
    if board.pours:                  # pads a first pour joins count as joined (router.pour)
        from .pour import first_pour_items
        items = items + first_pour_items(board)
    labels = components(board, items)
    by_net: dict[str, dict[int, list]] = defaultdict(dict)
    for k, pad in enumerate(grid.pads):          # pads in file order, so groups come in a fixed order
        by_net[pad.net].setdefault(labels[k], []).append(pad)
    return {net: list(d.values()) for net, d in by_net.items()}


def _hpwl(pads) -> float:
    xs = [p.x for p in pads]
    ys = [p.y for p in pads]
    return (max(xs) - min(xs)) + (max(ys) - min(ys))


def route_board(board: Board, bend_penalty: Optional[float] = None, via_penalty: Optional[float] = None,
                seed: int = 0, reroute: bool = False, progress: bool = False, passes: Optional[int] = None,
                jumper_penalty: Optional[float] = None, polish: bool = True,
                retries: int = 2, every_net: bool = False, fewer_vias: bool = True,
                fanout_first: bool = False, classic: Optional[bool] = None) -> RouteResult:
    """Route every net of `board` not yet routed; the input board is not changed.

    Parameters
    ----------
    board : Board
    bend_penalty, via_penalty, jumper_penalty : float, optional
        Costs in mm of trace (defaults :data:`DEFAULT_BEND`, :data:`DEFAULT_VIA`,
        :data:`DEFAULT_JUMP`; on a one-layer board ``via_penalty`` prices jumpers when
        ``jumper_penalty`` is not given).
    seed : int
        Chooses among routings: with 0, nets go shortest first, are ripped up in that order, and
        the search tries steps east, north, west, south; any other seed draws the first pass's net
        order (each net's half-perimeter scaled by a random factor), the rip-up order of every
        later pass and of the repair, and each net's order of trying steps (which of the paths of
        equal cost is taken). The same seed gives the same board, byte for byte.
    reroute : bool
        Remove every trace that is not ``fixed``, and every via and jumper, first. Without it,
        the copper that is not ``fixed`` and ends touching nothing of its net is removed first
        (:mod:`router.deadends`; ``result.removed`` says how much).
    progress : bool
        Show a progress bar (passes and nets) on stderr.
    passes : int, optional
        Most negotiation passes (default :data:`CLASSIC_PASSES` with `classic`, else
        :data:`DEFAULT_PASSES`).
    every_net : bool
        Rip up and reroute every net in each pass, as the original negotiation does; without
        it (and without `classic`) only the nets that share a cell (or failed) are rerouted.
    classic : bool, optional
        Negotiate as the original negotiation does: every net rerouted in every pass, the
        present price growing by :data:`CLASSIC_GROW` a pass (not :data:`PRESENT_GROW`), up to
        :data:`CLASSIC_PASSES` passes. None (default): on boards below :data:`BIG_WORK` only,
        where it routes more nets of crowded fine-pitch sides (a net's neighbours step aside
        though they share nothing themselves; docs/measurements.md); a big board keeps the
        quicker negotiation.
    retries : int
        When nets stay unrouted, route the board again from scratch up to this many times in
        other net orders (drawn from the seed), before them once in the same order with the
        fine-pitch parts fanned out (`fanout_first`) and after them once in the same order with
        the lanes out of fine-pitch row pads' outer ends priced for other nets' vias
        (:class:`router.escape.ExitReserve` with ``lanes``), then once with both, and keep the routing that leaves
        fewest unrouted (of those, the one with fewest vias; a try that loses nets is compared by its
        vias before polish and the via passes, which are made for the kept try only, :func:`_kept_try`);
        only on boards of at most :data:`BIG_WORK` nets x grid cells (a bigger board relies on
        the local re-order of the nets near an unrouted net's pads instead).
    polish : bool
        When the routing is legal, route each net once more with the others as walls and
        no congestion costs, and keep the new route where it is cheaper: this takes out
        the detours and jogs that congestion forced on a net and that are no longer needed.

    fewer_vias : bool
        Two-layer boards: price a via higher among other vias while nets negotiate, and after
        routing take out each via a net can do without at no more than
        :data:`router.viapass.VIA_TRADE` mm of extra trace per via (:mod:`router.viapass`).

    fanout_first : bool
        Fan the fine-pitch parts out before the first try as well (:mod:`router.fanout`); by
        default the plan is made for the first other try only, in the first try's net order,
        when the first try leaves nets unrouted.

    Returns
    -------
    RouteResult
        The routed board, its figures (:func:`router.figures.board_figures`), the nets
        that failed with a one-line reason each, and the seconds taken.
    """
    t0 = time.perf_counter()
    b = board.copy()
    from .deadends import Removed, remove_dead_ends
    removed = Removed()
    if reroute:
        b.traces = [t for t in b.traces if t.fixed]
        b.vias = []
        b.jumpers = []
    else:                            # copper left behind when a part moved (router.deadends)
        b, removed = remove_dead_ends(b)
    for p in b.pours:                # copper changes: the pour is filled again at the end (router.pour)
        p.filled, p.filled_for = [], None
    grid_pitch = b.rules.grid
    bend = _cost(DEFAULT_BEND if bend_penalty is None else bend_penalty, grid_pitch)
    via = _cost(DEFAULT_VIA if via_penalty is None else via_penalty, grid_pitch)
    if jumper_penalty is not None:
        jump = _cost(jumper_penalty, grid_pitch)
    elif via_penalty is not None:
        jump = via
    else:
        jump = _cost(DEFAULT_JUMP, grid_pitch)
    passes = None if passes is None else max(1, int(passes))
    failed: dict[str, str] = {}
    unplaced = {p.ref for p in b.parts if p.at is None}
    todo_names = []
    for n in b.nets:
        missing = sorted({pin.split(".", 1)[0] for pin in n.pins if pin.split(".", 1)[0] in unplaced})
        if missing:
            failed[n.name] = f"part {missing[0]} has no place yet (run `elbowroom place` first)"
        else:
            todo_names.append(n.name)
    start = b.copy()
    best = None
    fan_failed: set = set()          # (lost net, its closed pads) the fan-out with the supplies did not bring back
    tries = [(k, False, False, None) for k in range(1 + max(0, int(retries)))]
    if fanout_first:
        tries[0] = (0, True, False, None)
    elif len(tries) > 1:
        # the first other try: the same net order with the fine-pitch parts fanned out first
        # (router.fanout); made only where the plain first order leaves nets unrouted; the last: the
        # same order with the lanes out of row pads' outer ends kept free of other nets' vias
        # (ExitReserve lanes), made only where every other try leaves nets unrouted; and after it, both
        # at once (a pad whose planned exit a neighbour's via closes just beyond the row); last, the
        # first order with repair mending the supplies in its way (router.mend), as a big board's one
        # try does: a change of course that completed big boards but lost a net on two small ones
        # that every earlier try completes (docs/measurements.md)
        tries.insert(1, (0, True, False, None))
        tries.append((0, False, True, None))
        tries.append((0, True, True, None))
        tries.append((0, False, False, True))
    kept: list = []                  # the tries that may be kept: (lost, vias, k, board or _Unfinished, lost, npass, shared)
    for k, (attempt, plan, lanes, mend) in enumerate(tries):
        got = _attempt(start, todo_names, seed, attempt, bend, via, jump, passes, progress, polish, every_net,
                       fewer_vias, plan=plan, lanes=lanes, beat=None if best is None else best[0],
                       fan_failed=fan_failed, classic=classic, mend=mend, finish=False)
        if got is None:
            continue                 # nothing to plan: that try would route as the first did
        out, lost, npass, shared_left, blind, work = got
        if out is not None:          # None: more nets lost than the best try, not finished (it cannot be kept)
            vias = out.vias + len(start.vias) if isinstance(out, _Unfinished) else len(out.vias)
            kept.append((len(lost), vias, k, out, lost, npass, shared_left))
            # fewest unrouted, then fewest vias, then the earlier; an unfinished try holds its grid, so
            # only the first KEEP_TRIES in line are kept (the next is finished only when the exact
            # check takes a net out of the first, _kept_try)
            kept = sorted(kept, key=lambda c: c[:3])[:KEEP_TRIES]
            best = kept[0]
        got = out = None             # a try left out of `kept` is let go before the next is routed
        if not best[4] or set(best[4]) <= set(blind):
            break                    # complete, or only pads no exit reaches are left: another order cannot help
        if work > BIG_WORK:
            break                    # a big board: the local re-order in _attempt, not the whole board again
    b, lost, npass, shared_left = _kept_try(kept)
    failed.update(lost)
    result = RouteResult(b, _figures(b), {n: failed[n] for n in [m.name for m in b.nets] if n in failed},
                         time.perf_counter() - t0, npass, shared_left)
    if b.pours:                      # pour last; route again what the final pour cuts off (router.pour)
        from .pour import after_route
        result = after_route(result, bend_penalty=bend_penalty, via_penalty=via_penalty, seed=seed,
                             progress=progress, passes=passes, jumper_penalty=jumper_penalty,
                             polish=polish, retries=retries, every_net=every_net, fewer_vias=fewer_vias,
                             classic=classic)
    result.removed = removed.add(result.removed) if result.removed else removed
    return result


def _kept_try(kept: list) -> tuple:
    """The try route_board keeps, of `kept` ((lost, vias, k, board or :class:`_Unfinished`, lost
    nets, passes, nets sharing) each): the fewest lost nets, then the fewest vias, then the earlier.
    Only that one is finished; the exact check at its end may lose a net more, and then the next in
    line is finished too, until no try left could lose fewer. Returns (board, lost nets, passes,
    nets sharing)."""
    done = []
    for c in sorted(kept, key=lambda c: c[:3]):
        if done and min(d[0] for d in done) <= c[0]:
            break                    # finishing never routes a lost net: this one cannot lose fewer
        out, lost = c[3], c[4]
        board = out.finish() if isinstance(out, _Unfinished) else out
        done.append((len(lost), len(board.vias), c[2], board, lost, c[5], c[6]))
    best = min(done, key=lambda d: d[:3])
    return best[3], best[4], best[5], best[6]


def _attempt(start: Board, todo_names: list[str], seed: int, attempt: int, bend: int, via: int, jump: int,
             passes: Optional[int], progress: bool, polish: bool, every_net: bool = False, fewer: bool = True,
             plan: bool = False, lanes: bool = False, beat: Optional[int] = None,
             fan_failed: Optional[set] = None, classic: Optional[bool] = None, mend: Optional[bool] = None,
             finish: bool = True):
    """One complete routing of `start`; attempt 0 takes nets shortest first, later attempts a
    shuffled order (each net's half-perimeter scaled by a random factor from the seed). Returns
    the board, the nets lost with their reasons, passes, nets sharing at the end of negotiation,
    the blind nets and the board's work (nets x grid cells, :data:`BIG_WORK`). With `plan`, the
    fine-pitch parts are fanned out first (:meth:`_Negotiation.plan_fanout`); None when there
    is nothing to plan (the try would route as one without). With `lanes`, the lanes out of
    fine-pitch row pads' outer ends cost other nets' vias more (:class:`router.escape.ExitReserve`).
    `beat`: the fewest nets an earlier try lost; a try that loses more after repair and the swap
    cannot be kept (the steps after them never route a lost net, the exact check only loses more),
    so it stops there and returns None for the board; the swap and the fan-out with the supplies
    are not made when they cannot bring back enough lost nets for that (:func:`_hopeless`).
    `fan_failed`: the (lost net, closed pads) that the fan-out with the supplies did not bring back
    in an earlier try of the same board (:func:`_fan_with_supplies`), shared by the tries.
    `classic`: the classic negotiation (see :func:`route_board`; None: on a board below
    :data:`BIG_WORK`); `passes` None: :data:`CLASSIC_PASSES` with it, else :data:`DEFAULT_PASSES`.
    `mend`: repair mends the nets of many pads in its way (:func:`_repair`; None: on a big board,
    which gets one try only). Without `finish`, a try that loses nets returns an :class:`_Unfinished`
    in place of the board: polish, the via passes and the exact check are made only for the try
    route_board keeps (they never route a lost net)."""
    b = start.copy()
    grid = RoutingGrid(b)
    groups = _pad_groups(b, grid)
    nets = [n for n in todo_names if len(groups.get(n, [])) > 1]
    work = len(nets) * grid.L * grid.ny * grid.nx
    big = work > BIG_WORK
    fall = STALL_FALL if big else 0.0
    stall = STALL_BIG if big else STALL
    rng = np.random.default_rng([seed, attempt])
    ties = rng.random(len(nets))
    sizes = [_hpwl([p for g in groups[n] for p in g]) for n in nets]
    if attempt:
        sizes = [s * math.exp(rng.normal(0.0, 0.7)) for s in sizes]
    elif seed:
        sizes = [s * math.exp(rng.normal(0.0, 0.35)) for s in sizes]
    order = [n for _, _, n in sorted(zip(sizes, ties, nets))]
    neg = _Negotiation(b, grid, order, groups, bend, via, jump, crowd=fewer, lanes=lanes)
    neg.mend_victims = big if mend is None else mend
    if classic is None:
        classic = not big
    if classic:                          # every net in every pass, a slower present price, more passes
        every_net, neg.grow = True, CLASSIC_GROW
    if passes is None:
        passes = CLASSIC_PASSES if classic else DEFAULT_PASSES
    if big:
        neg.window = WINDOW
        neg.any_tie = True               # one search where two would pick the plain search's tie (search.SearchSpace)
    if plan:                             # fine-pitch rows fanned out as one, before any net (router.fanout)
        neg.plan_fanout()
        if neg.fanout is None or not neg.fanout.chosen:
            return None
    if seed:
        headings = [tuple(int(h) for h in rng.permutation(4)) for _ in nets]
        neg.ties = {n: headings[k] for k, n in enumerate(nets)}
    shuffle = (lambda names: [names[k] for k in rng.permutation(len(names))]) if seed else (lambda names: names)
    bar = None
    if progress:
        from tqdm import tqdm
        bar = tqdm(total=len(order), unit="net", desc="pass 1", leave=False)
    todo = list(order)
    shared: dict = {}
    npass = 0
    best_left, best_at = math.inf, 0
    for npass in range(1, passes + 1):
        if bar is not None:
            bar.reset(total=len(todo))
            bar.set_description(f"pass {npass}" + (f" (order {attempt + 1})" if attempt else ""))
        for net in todo:
            neg.rip(net)
            r = neg.route(net)
            neg.lay(net, r)
            if bar is not None:
                bar.update(1)
        shared, cells = neg.conflicts()
        still_failed = [n for n in order if neg.routes[n].failed and n not in neg.blind]
        if not shared and not still_failed:
            break
        if npass == passes:
            break
        # stalled: the sharing has not fallen below its best (big boards: by STALL_FALL) for STALL passes (big boards:
        # STALL_BIG; the rest is left to
        # the walls and rip-up below, which settle what negotiation cannot)
        left_now = sum(shared.values()) + len(still_failed)
        if left_now < best_left and left_now <= best_left * (1.0 - fall):
            best_left, best_at = left_now, npass
        elif npass - best_at >= stall and npass >= 2 * stall:
            break
        neg.raise_prices(cells)
        todo = [n for n in order if n not in neg.blind and (every_net or n in shared or neg.routes[n].failed)]
        todo = shuffle(todo)             # the rip-up order of this pass (the seed's; 0: the first pass's)
    if bar is not None:
        bar.close()
    shared_left = len(shared)
    # take out the nets that share most until nothing is shared, then route them with walls
    out = []
    while shared:
        worst = max(sorted(shared), key=lambda n: shared[n])
        neg.rip(worst)
        out.append(worst)
        shared, _ = neg.conflicts(only=set(shared) - {worst})     # a rip-up shares nothing anew
    for net in order:
        if net in neg.routes and neg.routes[net].failed:
            out.append(net)
            neg.rip(net)
    lost: dict[str, str] = {}
    for net in [n for n in order if n in set(out)]:
        r = neg.route(net, strict=True)
        if r.failed:
            lost[net] = r.failed
        else:
            neg.lay(net, r)
    if lost and big:
        _reorder_local(neg, lost, order)
    if lost:
        _repair(neg, lost, rounds=4 * len(lost) + 8, order=shuffle(list(lost)), priced=big)
    if lost and big:
        _reorder_local(neg, lost, order, plan=True)
    if lost and not _hopeless(neg, lost, beat):
        _swap(neg, lost)
    if lost and not _hopeless(neg, lost, beat):
        _stake_row(neg, lost)
    if lost and not _hopeless(neg, lost, beat):
        _fan_with_supplies(neg, lost, beat=beat, in_vain=fan_failed)
    if lost:
        _mend_many(neg, lost, in_vain=fan_failed)
    if beat is not None and len(lost) > beat:
        return None, lost, npass, shared_left, set(neg.blind), work

    def finished() -> Board:
        if polish:
            _polish(neg, order)
        if fewer and grid.L == 2:            # a pass that takes out vias a net can do without (router.viapass)
            _fewer_vias(neg, order, _cost(VIA_TRADE, grid.pitch))
            _move_blockers(neg, order, _cost(VIA_TRADE, grid.pitch), near=MOVE_NEAR if big else None)
        for net in [n for n in order if n in lost and n not in neg.blind]:    # which nets' copper, by name
            if TAKEN in lost[net]:
                lost[net] = _name_takers(neg, net, lost[net])
            elif ROUTED in lost[net]:
                lost[net] = _name_routed(neg, net, lost[net])
        kept = _partial_copper(neg, [n for n in order if n in lost])
        _write(b, grid, neg, order, partial=frozenset(kept))
        _settle(b, start, lost, order)
        return b

    if lost and not finish:              # finished only if it is the try kept (route_board)
        return _Unfinished(finished, sum(len(r.vias) for r in neg.routes.values())), lost, npass, shared_left, \
            set(neg.blind), work
    return finished(), lost, npass, shared_left, set(neg.blind), work


@dataclass
class _Unfinished:
    """A try that lost nets, stopped before polish, the via passes, the naming of what closes its
    lost nets and the exact check (:func:`_attempt` with ``finish=False``): `finish()` makes them and
    returns the written board (the exact check may add lost nets, to the try's own dict); `vias`:
    its routed vias so far."""
    finish: Callable[[], Board]
    vias: int


def _route_bends(grid: RoutingGrid, r: NetRoute) -> int:
    """Bends of a route's grid copper as the search prices them and the contract counts them: a
    grid point where exactly two arms meet at a right angle, the arms of both layers counted
    together at a via and a jumper wire counted as an arm at its ends (stubs left out). Kept on
    the route (a route is not changed once made; its costs are asked for again in every via try)."""
    got = r.__dict__.get("_bends")
    if got is not None and got[0] is grid and got[1] == (len(r.edges), len(r.vias), len(r.jumpers)):
        return got[2]
    n = _count_bends(grid, r)
    r.__dict__["_bends"] = (grid, (len(r.edges), len(r.vias), len(r.jumpers)), n)
    return n


def _count_bends(grid: RoutingGrid, r: NetRoute) -> int:
    """:func:`_route_bends` counted."""
    arms: dict = defaultdict(list)
    vias = set(r.vias)
    for a, c in r.edges:
        d = (c[1] - a[1], c[2] - a[2])            # (dj, di) of a unit step from a to c
        for p, arm in ((a, d), (c, (-d[0], -d[1]))):
            key = (p[1], p[2]) if (p[1], p[2]) in vias else p
            arms[key].append(arm)
    g = grid.pitch
    for a, b in r.jumpers:
        ja, ia = int(round(a[1] / g)) - grid.j0, int(round(a[0] / g)) - grid.i0
        jb, ib = int(round(b[1] / g)) - grid.j0, int(round(b[0] / g)) - grid.i0
        sj, si = int(np.sign(jb - ja)), int(np.sign(ib - ia))
        arms[(0, ja, ia)].append((sj, si))
        arms[(0, jb, ib)].append((-sj, -si))
    return sum(1 for ds in arms.values()
               if len(ds) == 2 and (ds[0][0] == 0) != (ds[1][0] == 0))


def _pure_cost(neg: _Negotiation, r: NetRoute) -> int:
    """A route's cost without congestion: steps, bends (:func:`_route_bends`), vias, jumpers."""
    jump_len = sum(abs(a[0] - b[0]) + abs(a[1] - b[1]) for a, b in r.jumpers) / neg.grid.pitch
    return (STEP * len(r.edges) + neg.bend * _route_bends(neg.grid, r) + neg.via * len(r.vias)
            + neg.jump * len(r.jumpers) + int(STEP * jump_len))


def _polish(neg: _Negotiation, order: list[str]) -> None:
    """Each routed net once more, alone against walls: keep the cheaper of the two routes."""
    for net in order:
        old = neg.routes.get(net)
        if old is None or old.failed:
            continue
        neg.rip(net)
        new = neg.route(net, strict=True)
        keep = new if (not new.failed and _pure_cost(neg, new) < _pure_cost(neg, old)) else old
        neg.lay(net, keep)


def _window_nets(neg: _Negotiation, net: str, margin: float, pads=None) -> list[str]:
    """The routed nets (in negotiation order) with a cell within `margin` mm of a pad of `net`
    (of `pads`, when given)."""
    grid = neg.grid
    m = int(math.ceil(margin / grid.pitch - 1e-9))
    mask = np.zeros((grid.ny, grid.nx), bool)
    for group in (neg.groups[net] if pads is None else [pads]):
        for p in group:
            c, rad = grid.layout.core_of(p)
            i0, i1, j0, j1 = grid.index_box(box_of_core(c), rad, cells=m)
            mask[j0:j1, i0:i1] = True
    return _masked_nets(neg, net, mask)


def _priced_route(neg: _Negotiation, net: str) -> NetRoute:
    """`net` routed through the other nets' copper at :data:`REPAIR_PRICE` per cell of theirs, with
    no history (see :func:`_repair`)."""
    saved = neg.present, neg.hist
    neg.present = max(1.0, REPAIR_PRICE / neg.grid.pitch)
    neg.hist = neg.zero_hist()
    try:
        return neg.route(net)
    finally:
        neg.present, neg.hist = saved


def _reorder_local(neg: _Negotiation, lost: dict, order: list[str], plan: bool = False) -> None:
    """A local re-order for the nets left unrouted after the walls, instead of routing the whole
    board again in another order: the routed nets with copper within :data:`REORDER_WINDOW` of an
    unrouted net's pads (the ones that took its exits) are ripped up, the unrouted net is routed
    first (through the others at :data:`REPAIR_PRICE`, :func:`_priced_route`), the nets it then
    shares cells with are ripped up too, and all of them are routed again with walls in the
    negotiation order. Kept only when every one of them routes and no net shares more than
    before; otherwise every route goes back as it was. Nets no route reaches (``neg.blind``) are
    left out. With `plan` (after repair), the re-order with the fan-out plan of each fine-pitch
    part where a lost net's pad has no exit left instead (:func:`_reorder_planned`)."""
    if plan:
        _reorder_planned(neg, lost)
        return
    before = None
    for net in [n for n in order if n in lost and n not in neg.blind]:
        near = _window_nets(neg, net, REORDER_WINDOW)
        if not near:
            continue
        if before is None:
            before, _ = neg.conflicts()
        old = {n: neg.routes[n] for n in near}
        for n in near:
            neg.rip(n)
        r = _priced_route(neg, net)
        ok = not r.failed
        if ok:
            neg.lay(net, r)
            shared, _ = neg.conflicts()
            for v in [v for v in sorted(shared) if v != net and v not in old and shared[v] > before.get(v, 0)]:
                old[v] = neg.routes[v]
                neg.rip(v)
            for n in sorted(old, key=neg.nets.index):
                rn = neg.route(n, strict=True, explain=False)
                if rn.failed:
                    ok = False
                    break
                neg.lay(n, rn)
        if ok:
            shared, _ = neg.conflicts()
            ok = not any(k > before.get(n, 0) for n, k in shared.items())
        if ok:
            del lost[net]
            before = None
            continue
        for n in [net] + list(old):
            neg.rip(n)
        for n in sorted(old, key=neg.nets.index):
            neg.lay(n, old[n])


def _plan_hits(neg: _Negotiation, plan) -> list[str]:
    """The routed nets (in negotiation order) with a grid point or via within reach of another
    net's planned exit (:class:`router.fanout.FanoutPlan`'s zones)."""
    out = []
    for n in neg.nets:
        r = neg.routes.get(n)
        if r is None or r.failed:
            continue
        cells, _, holes, _ = neg.own_at[n]
        mine = plan.own.get(n)
        hit = False
        if len(cells):
            c = plan.cost[cells[:, 0], cells[:, 1], cells[:, 2]]
            if mine is not None:
                own = {tuple(x) for x in mine[0].tolist()}
                c = c - plan.unit * np.array([tuple(x) in own for x in cells.tolist()], np.int64)
            hit = bool((c > 0).any())
        if not hit and len(r.vias):
            v = np.array(r.vias, np.int64)
            c = plan.via_cost[v[:, 0], v[:, 1]]
            if mine is not None:
                own = {tuple(x) for x in mine[1].tolist()}
                c = c - plan.unit * np.array([tuple(x) in own for x in v.tolist()], np.int64)
            hit = bool((c > 0).any())
        if hit:
            out.append(n)
    return out


def _negotiate_local(neg: _Negotiation, names: list[str], passes: int) -> None:
    """A short negotiation among `names` only (the other nets' routes stay as they are, soft):
    each pass routes the nets that share or failed, the present factor grows, and the shared
    cells' history grows in a history of its own (the board's is left as it was)."""
    saved = neg.present, neg.hist, neg.hist_top
    neg.present, neg.hist, neg.hist_top = 0.5, np.zeros_like(neg.hist), None
    try:
        todo = list(names)
        for _ in range(passes):
            for n in todo:
                neg.rip(n)
                neg.lay(n, neg.route(n))
            shared, cells = neg.conflicts()
            todo = [n for n in names if shared.get(n, 0) > 0 or neg.routes[n].failed]
            if not todo:
                break
            neg.raise_prices(cells)
    finally:
        neg.present, neg.hist, neg.hist_top = saved


def _walls_after(neg: _Negotiation, names: list, must: Optional[str] = None) -> dict:
    """After a local negotiation among `names`: those still sharing cells or failed are ripped up
    and routed again with walls, in the order of `names`; returns the nets that found no way, with
    their reasons. Stops at `must` when it finds none (the rest would be moved for nothing)."""
    shared, _ = neg.conflicts()
    for n in [n for n in names if n in neg.routes and (shared.get(n, 0) > 0 or neg.routes[n].failed)]:
        neg.rip(n)
    failed: dict = {}
    for n in [n for n in names if n not in neg.routes]:
        rn = neg.route(n, strict=True, explain=False)
        if rn.failed:
            failed[n] = rn.failed
            if n == must:
                break
            continue
        neg.lay(n, rn)
    return failed


def _few_pads(neg: _Negotiation, net: str) -> bool:
    """Whether `net` has at most :data:`LOCAL_MOST_PADS` pads: a net the local steps (the planned
    re-order, the swap) may rip up and route again; a supply or ground is too dear to."""
    return _pad_count(neg, net) <= LOCAL_MOST_PADS


def _pad_count(neg: _Negotiation, net: str) -> int:
    return sum(len(g) for g in neg.groups[net])


def _closed_pads(neg: _Negotiation, net: str) -> list:
    """The pads of `net` left without an exit to the grid by the other nets' routed copper (walls)."""
    space, others = neg.spaces.space(neg, net, True, None)
    pads = [p for g in neg.groups[net] for p in g]
    return [t.pads[0] for t in terminals(neg.grid, space, net, [[p] for p in pads], others) if not t.cells]


def _reorder_planned(neg: _Negotiation, lost: dict) -> None:
    """The local re-order with the fan-out plan (:mod:`router.fanout`), for the nets of at most
    :data:`LOCAL_MOST_PADS` pads still lost because other nets' routed copper took every exit of
    a pad of a fine-pitch part: per such part, that part's fan-out alone is planned, and the
    routed nets with copper within reach of another net's planned exit or within
    :data:`PLAN_WINDOW` of the lost pads (then, if that gains nothing, of all the lost nets'
    pads) are ripped up; the part's lost nets and the ripped-up ones negotiate among themselves
    for :data:`LOCAL_PASSES` passes paying the plan's price near other nets' planned exits
    (:func:`_negotiate_local`), and what still shares is routed with walls. Kept only when more
    nets route than before (a ripped-up net that then finds no way counts against), no net
    shares more and no many-pad net is lost; otherwise every route goes back as it was."""
    by_part: dict = defaultdict(list)       # part -> (lost net, its pad there that has no exit)
    for net in [n for n in neg.nets if n in lost and n not in neg.blind
                and _few_pads(neg, n)]:      # a lost supply: too dear
        for p in _closed_pads(neg, net):
            by_part[p.ref].append((net, p))
    saved = neg.fanout
    try:
        for ref in sorted(by_part, key=lambda r: (-len(by_part[r]), r)):      # the parts with most lost nets first
            nets = sorted({n for n, _ in by_part[ref] if n in lost}, key=neg.nets.index)
            if not nets:
                continue
            neg.fanout = None
            neg.plan_fanout(refs=[ref])
            plan = neg.fanout
            if plan is None or not any(k[0] in nets for k in plan.chosen):
                continue
            for whole in (False, True):
                pads = {n: (None if whole else [p for m, p in by_part[ref] if m == n]) for n in nets}
                if _planned_try(neg, lost, nets, plan, pads):
                    break
    finally:
        neg.fanout = saved


def _planned_try(neg: _Negotiation, lost: dict, nets: list, plan, pads: dict) -> bool:
    """One try of :func:`_reorder_planned` at one part (``neg.fanout`` is its plan): `nets` the
    part's lost nets, `pads` the pads each is windowed by (None: all of its pads)."""
    before, _ = neg.conflicts()
    snap = dict(neg.routes)
    near = set(_plan_hits(neg, plan))
    for net in nets:
        # many-pad nets (supplies) only where they hold a planned exit: routing them again is dear
        near.update(n for n in _window_nets(neg, net, PLAN_WINDOW, pads[net])
                    if _few_pads(neg, n))
    near -= set(nets)
    old = {n: neg.routes[n] for n in sorted(near, key=neg.nets.index)}
    for n in old:
        neg.rip(n)
    # the lost nets first, then the nets with planned exits on the part (its fan-out), then the rest
    fan = {k[0] for k in plan.chosen}
    again = list(nets) + sorted(old, key=lambda n: (n not in fan, neg.nets.index(n)))
    _negotiate_local(neg, again, LOCAL_PASSES)
    failed = _walls_after(neg, again)
    got = [n for n in nets if n not in failed]
    dropped = {n: w for n, w in failed.items() if n not in nets}
    if got and dropped and len(got) <= len(dropped):
        # the ripped-up nets left without a way: rip-up and reroute for them (they, not the lost nets, move)
        _repair(neg, dropped, rounds=4 * len(dropped) + 4, priced=True)
        got = [n for n in nets if n in neg.routes and not neg.routes[n].failed]
        dropped = {n: w for n, w in dropped.items() if n not in nets}
    shared, _ = neg.conflicts()
    ok = (len(got) > len(dropped) and not any(k > before.get(n, 0) for n, k in shared.items())
          and all(_few_pads(neg, n) for n in dropped))
    if ok:
        for n in got:
            del lost[n]
        lost.update(dropped)
        return True
    neg.restore(snap)
    return False


def _swap(neg: _Negotiation, lost: dict) -> None:
    """One net out of a lost net's way, after repair: for each lost net of at most
    :data:`LOCAL_MOST_PADS` pads, the routed nets in its way (those its way through the others
    at :data:`REPAIR_PRICE` shares cells with, then those with copper within
    :data:`REORDER_WINDOW` of its closed pads, :func:`_closed_pads`, or of all its pads), at most
    :data:`SWAP_MOST` and none of more than :data:`LOCAL_MOST_PADS` pads, are tried one at a
    time: that net is ripped up, the lost net is routed with walls, and the net ripped up is
    routed again with walls. The first pair that both route is kept (no other net moves, so no
    net can share more); else the ripped-up net goes back as it was. Repair and the re-orders
    move several nets at once and route the lost net through the others first, and lose a
    neighbour where moving one net alone would have done (see docs/measurements.md). Lost nets
    are tried again while one of them comes back."""
    again = True
    while again:
        again = False
        for net in [n for n in neg.nets if n in lost and n not in neg.blind and _few_pads(neg, n)]:
            if net in neg.routes:
                continue
            way = _priced_route(neg, net)
            ways = []
            if not way.failed:
                neg.lay(net, way)
                shared, _ = neg.conflicts()
                neg.rip(net)
                ways = [n for n in neg.nets if n != net and shared.get(n)]
            closed = _closed_pads(neg, net)
            near = _window_nets(neg, net, REORDER_WINDOW, closed or None)
            tried = [n for n in dict.fromkeys(ways + near) if n not in lost and _few_pads(neg, n)][:SWAP_MOST]
            for n in tried:
                old = neg.routes[n]
                neg.rip(n)
                if _then_back(neg, net, neg.route(net, strict=True, explain=False), n):
                    del lost[net]
                    again = True
                    break
                neg.lay(n, old)
            if net in lost and closed:
                sharing = [n for n in ways if n not in lost and _few_pads(neg, n)][:STAKE_MOST]
                if _stake_swap(neg, net, sharing, closed):
                    del lost[net]
                    again = True


def _stakes(neg: _Negotiation, net: str, exits: list) -> NetRoute:
    """A route of `net` that holds only some exits ((cell, path) each: a stub or a neck, as the
    access cache keeps it) of its pads and their grid points: laid, it is a wall to strict routes
    of the other nets."""
    r = NetRoute(net)
    for cell, path in exits:
        pts = list(path)
        if pts[-1] != neg.grid.point(cell[1], cell[2]):
            pts.append(neg.grid.point(cell[1], cell[2]))
        w = getattr(path, "width", neg.width(net))
        r.cells.add(tuple(cell))
        if w < neg.width(net) - TOL:
            r.necks.append((pts, cell[0], w))
        else:
            r.stubs.extend((a, b, cell[0]) for a, b in zip(pts, pts[1:]) if a != b)
    return r


def _stake_swap(neg: _Negotiation, net: str, names: list, closed: list) -> bool:
    """The swap's second way, for a lost net whose pads `closed` have no exit: each net of
    `names` in turn is ripped up and one of its exits from the same parts is staked out
    (:func:`_stakes`: its planned exit first, then the shorter ones); the lost net is routed with
    walls round it, then the ripped-up net with walls, through the staked exit or any other. The
    plain swap routes the lost net first through the cheapest exit, and on a fine-pitch row that
    exit is often the one its neighbour needed (a neighbour steps onto the grid towards it). The
    first pair that both route, sharing nothing, is kept; else the ripped-up net goes back."""
    store = neg.grid.__dict__.get("_access_cache", {})
    refs = {p.ref for p in closed}
    planned = {} if neg.fanout is None else neg.fanout.chosen
    for n in names:
        keys = [(n, p.ref, p.index) for g in neg.groups[n] for p in g if p.ref in refs]
        exits = []
        for key in keys:
            first = planned.get(key)
            for cell, path in store.get(key, {}).items():
                if path is None or isinstance(path, EscapeVia):
                    continue
                run = sum(abs(a[0] - b[0]) + abs(a[1] - b[1]) for a, b in zip(path, path[1:]))
                exits.append((first is None or first.cell != cell, round(run, 6), cell, path))
        if not exits:
            continue
        old = neg.routes[n]
        neg.rip(n)
        for _, _, cell, path in sorted(exits, key=lambda e: e[:3]):
            neg.lay(n, _stakes(neg, n, [(cell, path)]))
            r = neg.route(net, strict=True, explain=False)
            neg.rip(n)
            if _then_back(neg, net, r, n):
                return True
        neg.lay(n, old)
    return False


def _then_back(neg: _Negotiation, net: str, r: NetRoute, n: str) -> bool:
    """The swap's pair: the lost `net`'s route `r` (with walls, `n` ripped up) laid, then `n`
    routed with walls. True, both kept, when both route and share nothing; else neither is laid."""
    if r.failed:
        return False
    neg.lay(net, r)
    rn = neg.route(n, strict=True, explain=False)
    if not rn.failed:
        neg.lay(n, rn)
        if not any(neg.conflicts(only=[net, n])[0].values()):
            return True
        neg.rip(n)
    neg.rip(net)
    return False


def _stake_row(neg: _Negotiation, lost: dict) -> None:
    """For each lost net whose pads on fine-pitch parts have no exit: each such part's fan-out is
    planned alone (:meth:`_Negotiation.plan_fanout`, on the board without routed copper: one
    compatible exit per scarce pad), and the nets of few pads with a planned exit on a pad within
    :data:`STAKE_REACH` of a closed pad, routed or lost, are staked out at their planned exits
    (:func:`_stakes`; the routed ones ripped up first). The lost net is routed with walls, then
    the others, nearest first, each with its own stake taken up just before (and again, up to
    :data:`STAKE_ORDERS` orders, with the one left without a way first, the lost net too; a pad
    the lost net's route finds closed once the stakes are laid joins the closed ones, as often).
    A staircase that no net finds alone (each neighbour steps onto the grid at its own depth) is
    laid as the plan found it. Kept only when the lost net and every net that was
    routed before route and nothing is shared (the other lost nets that route come back too);
    else every route goes back as it was."""
    saved = neg.fanout
    again = True
    plans: dict = {}                     # ref -> its part's plan, on the board without routed copper: made once
    try:
        while again:                     # lost nets tried again while one of them comes back
            again = False
            for net in [n for n in neg.nets if n in lost and n not in neg.blind]:
                if net in neg.routes or net not in lost:
                    continue
                closed = _closed_pads(neg, net)
                for _ in range(STAKE_ORDERS):
                    for ref in sorted({p.ref for p in closed} - set(plans)):
                        neg.fanout = None
                        neg.plan_fanout(refs=[ref])
                        plans[ref] = neg.fanout
                    got = _stake_part(neg, lost, net, [p for p in closed if plans[p.ref] is not None], plans)
                    if got is True:
                        again = True
                    if got is True or got is None or got in closed:
                        break
                    closed.append(got)       # the net found another pad closed once the stakes were laid
    finally:
        neg.fanout = saved


def _stake_part(neg: _Negotiation, lost: dict, net: str, closed: list, plans: dict):
    """One try of :func:`_stake_row`: `net`'s `closed` pads, `plans` their parts' fan-outs.
    True when kept; else the pad of `net` that its route found closed (None: none)."""
    found = []
    for pad in closed:
        found.extend((math.dist((c.pad.x, c.pad.y), (pad.x, pad.y)), key[0], key, c)
                     for key, c in plans[pad.ref].chosen.items()
                     if key[1] == pad.ref and key[0] != net and key[0] not in neg.blind
                     and _few_pads(neg, key[0]) and c.path is not None and not isinstance(c.path, EscapeVia)
                     and math.dist((c.pad.x, c.pad.y), (pad.x, pad.y)) <= STAKE_REACH + TOL)
    near = sorted({e[2]: e for e in sorted(found)}.values())       # each planned exit once, at its nearest
    names = [n for n in dict.fromkeys(n for _, n, _, _ in near) if n in neg.routes or n in lost]
    must = [net] + [n for n in names if n not in lost]
    if len(must) == 1:
        return None
    stakes: dict = {}
    for _, n, _, c in near:
        stakes.setdefault(n, []).append((c.cell, c.path))
    snap = dict(neg.routes)
    order = [net] + names
    shut = None
    tried: set = set()
    for _ in range(STAKE_ORDERS):
        for n in names:
            neg.rip(n)
            neg.lay(n, _stakes(neg, n, stakes[n]))
        failed = None
        for n in order:
            neg.rip(n)
            rn = neg.route(n, strict=True, explain=False)
            if not rn.failed:
                neg.lay(n, rn)
            elif n in must:
                failed = n
                if n == net and rn.closed is not None:
                    shut = rn.closed
                break
        if failed is None:
            if not any(neg.conflicts(only=[n for n in order if n in neg.routes])[0].values()):
                for n in order:
                    if n in lost and n in neg.routes:
                        del lost[n]
                return True
            break
        neg.restore(snap)
        tried.add(tuple(order))
        order = [failed] + [n for n in order if n != failed]    # the one left without a way first
        if tuple(order) in tried:        # (an order tried before fails as it did)
            break
    neg.restore(snap)
    return shut


def _hopeless(neg: _Negotiation, lost: dict, beat: Optional[int], skip=()) -> bool:
    """Whether the local steps after repair (the swap, the fan-out with the supplies) cannot bring
    this try down to `beat` lost nets (the fewest an earlier try lost; None: no earlier try): they
    bring back only lost nets of at most :data:`LOCAL_MOST_PADS` pads that some route reaches
    (not ``neg.blind``), one each at most, and never lose a net; `skip`: lost nets they will not
    try. A try left with more lost nets than `beat` is not kept (:func:`_attempt`), so what they
    would do there is work thrown away."""
    if beat is None:
        return False
    can = sum(1 for n in lost if n not in neg.blind and n not in skip and _few_pads(neg, n))
    return can < len(lost) - beat


def _fan_with_supplies(neg: _Negotiation, lost: dict, beat: Optional[int] = None,
                       in_vain: Optional[set] = None) -> None:
    """The fan-out of a lost net's part planned again with the supplies in it, after the swap: for
    each lost net of at most :data:`LOCAL_MOST_PADS` pads, the routed nets with copper within
    :data:`REORDER_WINDOW` of its closed pads (:func:`_closed_pads`; of all its pads when none is
    closed) or with a pad in the row of one of those pads (:func:`_row_nets`), supplies and ground
    among them, are ripped up; the parts of those pads are planned
    alone (:meth:`_Negotiation.plan_fanout`), and the lost net and the ripped-up nets negotiate among
    themselves for :data:`LOCAL_PASSES` passes at the plan's prices (:func:`_negotiate_local`).
    What still shares is routed with walls: the lost net first, then the nets of at most
    :data:`LOCAL_MOST_PADS` pads (those with a planned exit first), the supplies last; a ripped-up
    net left without a way gets a repair of its own (:func:`_repair`, priced). Kept only when every
    one of them routes and no net shares more than before; else every route goes back as it was.

    Why the supplies: the planned re-order and the swap leave many-pad nets where they are, and a
    supply's wide trace on the other layer along a fine-pitch side, just beyond the pad ends, stands
    where that side's escape vias would; moved with the row, it runs beyond them (see
    docs/measurements.md).

    Not made again in vain (the whole-board tries of one board share `in_vain`): a lost net whose
    step failed in an earlier try with the same closed pads (the same pads windowed: none closed
    is its own key) is not tried again. The step's outcome depends on the fixed copper and the
    parts round those pads (the same in every try of the board) and on where the other nets run
    near them (which changes from try to try): the key keeps the first and assumes the second
    hems the net in again; on the real-looking boards 10 and 12 and angled board 2 each net the
    step brought back was one it had not failed at those pads before (docs/measurements.md). With
    `beat` (the fewest lost nets of an earlier try), the step stops once the lost nets it may
    still try cannot bring the try down to it (:func:`_hopeless`)."""
    in_vain = set() if in_vain is None else in_vain
    saved = neg.fanout
    try:
        for net in [n for n in neg.nets if n in lost and n not in neg.blind and _few_pads(neg, n)]:
            if net not in lost or net in neg.routes:
                continue
            closed = _closed_pads(neg, net)
            key = _fan_key(net, closed)
            if key in in_vain:
                continue
            if beat is not None and _hopeless(neg, lost, beat, skip=_fan_skip(neg, lost, in_vain)):
                break
            pads = closed or [p for g in neg.groups[net] for p in g]
            near = [n for n in _window_nets(neg, net, REORDER_WINDOW, pads) if n not in lost]
            near += [n for n in _row_nets(neg, net, pads) if n not in lost and n not in near]
            if not near:
                continue
            before, _ = neg.conflicts()
            snap = dict(neg.routes)
            neg.fanout = None
            neg.plan_fanout(refs=sorted({p.ref for p in pads}))
            fan = {k[0] for k in neg.fanout.chosen} if neg.fanout is not None else set()
            near.sort(key=lambda n: (not _few_pads(neg, n), n not in fan, neg.nets.index(n)))
            for n in near:
                neg.rip(n)
            names = [net] + near
            _fan_negotiation(neg, names)
            failed = _walls_after(neg, names, must=net)
            if failed and net not in failed:
                _repair(neg, failed, rounds=4 * len(failed) + 4, priced=True)
            neg.fanout = saved
            if not failed:
                shared, _ = neg.conflicts()
                if not any(k > before.get(n, 0) for n, k in shared.items()):
                    del lost[net]
                    continue
            in_vain.add(key)
            neg.restore(snap)
    finally:
        neg.fanout = saved


def _mend_many(neg: _Negotiation, lost: dict, in_vain: Optional[set] = None) -> None:
    """A lost net of more than :data:`LOCAL_MOST_PADS` pads (a supply, ground, a bus along the parts:
    the nets the swap and the fan-out with the supplies leave out) mended, after the other local steps, rather than
    routed again from nothing: its way through the others at :data:`REPAIR_PRICE` (:func:`_priced_route`)
    is laid for a moment to find the cells it shares (:func:`_shared_cells`), and is
    cut there and within :data:`REORDER_WINDOW` of its closed pads (:func:`router.mend.cut`). The
    pieces kept are joined with walls (:func:`router.nets.route_net`'s ``pieces``). Where no way
    joins them, the nets of at most :data:`MEND_RIP_MOST` pads with copper within
    :data:`REORDER_WINDOW` of the cells cut out or of its closed pads, or with a pad in a closed
    pad's row (:func:`_row_nets`), are ripped up; the nets of more pads there are cut as well, within
    :data:`REORDER_WINDOW` of those cells and pads, and mended alongside. The closed pads' parts are
    planned alone (:meth:`_Negotiation.plan_fanout`), and these nets negotiate for
    :data:`LOCAL_PASSES` passes at the plan's prices, within :data:`MEND_SWEEPS` times the board's
    search states (:func:`_fan_negotiation`); what still shares is
    routed with walls, the lost net first (:func:`_walls_after`), and a ripped-up net left without a
    way gets a repair of its own (priced). Kept only when every one of them routes and no net shares
    more than before; else every route goes back as it was. Not made again for a net at the same
    closed pads where it failed in an earlier whole-board try (`in_vain`, shared with
    :func:`_fan_with_supplies`, its own keys).

    Why: routed again from nothing with walls, a supply's tree of dozens of pads finds no way on a
    full board, even with its closed pads left out, where most of its way through the others is
    still clear of every other net. Angled real-looking board 3 completes so; with the whole supply
    routed again in this step instead it does not (docs/measurements.md). A bus of nine pads across
    a 170-net board (real-looking board 109's SDA and SCL) came back only when mended too: before,
    nets of five to ten pads fell between the swap's few pads and the mend's supplies, and only
    repair tried them."""
    if neg.grid.one_layer:               # (jumper wires are not cut into pieces: not done on one layer)
        return
    in_vain = set() if in_vain is None else in_vain
    g = neg.grid
    m = int(math.ceil(REORDER_WINDOW / g.pitch - 1e-9))
    for net in [n for n in neg.nets if n in lost and n not in neg.blind and _pad_count(neg, n) > LOCAL_MOST_PADS]:
        if net in neg.routes:
            continue
        closed = _closed_pads(neg, net)
        key = ("mend",) + _fan_key(net, closed)
        if key in in_vain:
            continue
        old = _priced_route(neg, net)
        if old.failed:                   # no way even through the others: the fixed copper closes it (blind)
            continue
        before, _ = neg.conflicts()
        snap = dict(neg.routes)
        neg.lay(net, old)
        drop = _shared_cells(neg, net)
        neg.rip(net)
        mask = np.zeros((g.ny, g.nx), bool)          # round the cells cut out and the closed pads
        for _, j, i in drop:
            mask[max(j - m, 0):j + m + 1, max(i - m, 0):i + m + 1] = True
        for p in closed:
            c, rad = g.layout.core_of(p)
            i0, i1, j0, j1 = g.index_box(box_of_core(c), rad, cells=m)
            mask[j0:j1, i0:i1] = True
            drop.update(q for q in old.cells if j0 <= q[1] < j1 and i0 <= q[2] < i1)
        neg.mend[net] = cut(g, old, drop, neg.groups[net])
        failed: dict = {}
        try:
            r = neg.route(net, strict=True, explain=False)
            if not r.failed:
                neg.lay(net, r)
            else:
                failed = _mend_with_moves(neg, net, lost, mask, closed)
        finally:
            neg.mend.clear()
        shared, _ = neg.conflicts()
        if not failed and net in neg.routes and not any(k > before.get(n, 0) for n, k in shared.items()):
            del lost[net]
            continue
        in_vain.add(key)
        neg.restore(snap)


def _mend_with_moves(neg: _Negotiation, net: str, lost: dict, mask: np.ndarray, closed: list) -> dict:
    """:func:`_mend_many`'s second way, `net`'s pieces set (``neg.mend``) and no way joining them with
    walls: the routed nets with a cell where `mask` is set or a pad in a closed pad's row are
    ripped up (those of more than :data:`MEND_RIP_MOST` pads cut within `mask` and mended), the
    `closed` pads' parts planned, and they and `net` negotiate, then routed with walls, then
    repaired. Returns the nets left without a way (empty: every one routed)."""
    g = neg.grid
    moved = set()
    for n in _masked_nets(neg, net, mask) + _row_nets(neg, net, closed):
        if n in lost or n in moved:
            continue
        if _pad_count(neg, n) > MEND_RIP_MOST:
            rn = neg.routes[n]
            neg.mend[n] = cut(g, rn, {c for c in rn.cells if mask[c[1], c[2]]}, neg.groups[n])
        moved.add(n)
    names = [net] + [n for n in neg.nets if n in moved]
    for n in names[1:]:
        neg.rip(n)
    saved = neg.fanout
    try:
        if closed:
            neg.fanout = None
            neg.plan_fanout(refs=sorted({p.ref for p in closed}))
        _fan_negotiation(neg, names, MEND_SWEEPS)
        failed = _walls_after(neg, names, must=net)
    finally:
        neg.fanout = saved
    if failed and net not in failed:
        _repair(neg, failed, rounds=4 * len(failed) + 4, priced=True)
    return failed


def _masked_nets(neg: _Negotiation, net: str, mask: np.ndarray) -> list[str]:
    """The routed nets other than `net` (in negotiation order) with a cell where `mask` (ny, nx) is set."""
    out = []
    for n in neg.nets:
        r = neg.routes.get(n)
        if n == net or r is None or r.failed:
            continue
        own = neg.own_at[n][0]
        if len(own) and mask[own[:, 1], own[:, 2]].any():
            out.append(n)
    return out


def _row_nets(neg: _Negotiation, net: str, pads: list) -> list[str]:
    """The routed nets (in negotiation order) other than `net` with a pad in the row of one of
    `pads`: a pad of the same part, on the same layers, of the same size, its centre on the line
    through the pad's centre across its long side (a quad's or connector's side), within
    :data:`PLAN_WINDOW` of it along the row. Square pads and pads turned off the axes have no row
    here. A side's exits fit only together (docs/measurements.md): :func:`_fan_with_supplies`
    moves the nets of the lost pad's side, not only those whose copper comes near that pad."""
    out: set = set()
    for p in pads:
        if abs(p.w - p.h) <= TOL or p.angle:         # square, or turned off the axes (geometry.PlacedPad)
            continue
        across = (lambda q: q.x) if p.w > p.h else (lambda q: q.y)
        along = (lambda q: q.y) if p.w > p.h else (lambda q: q.x)
        for q in neg.grid.pads:
            if (q.ref == p.ref and q.net != net and q.net in neg.routes and not neg.routes[q.net].failed
                    and q.layers == p.layers and not q.angle and abs(q.w - p.w) <= TOL and abs(q.h - p.h) <= TOL
                    and abs(across(q) - across(p)) <= TOL
                    and abs(along(q) - along(p)) <= PLAN_WINDOW + TOL):
                out.add(q.net)
    return [n for n in neg.nets if n in out]


def _fan_negotiation(neg: _Negotiation, names: list, sweeps: Optional[float] = None) -> None:
    """:func:`_fan_with_supplies`' local negotiation among `names` within `sweeps` (None:
    :data:`FAN_SWEEPS`) times the
    board's search states (:func:`router.search.work_limit`: a search stops there and fails); a net
    that a search cut short failed for is not taken as blind (``neg.blind`` as it was)."""
    from .search import NDIR, states_expanded, work_limit
    g = neg.grid
    most = states_expanded() + int((FAN_SWEEPS if sweeps is None else sweeps) * g.L * g.ny * g.nx * NDIR)
    blind = dict(neg.blind)
    with work_limit(most):
        _negotiate_local(neg, names, LOCAL_PASSES)
    if states_expanded() >= most:        # searches were cut: their failures say nothing about the fixed copper
        for n in [n for n in neg.blind if n not in blind]:
            del neg.blind[n]


def _fan_key(net: str, closed: list) -> tuple:
    """The key of :func:`_fan_with_supplies`' tries: the lost net and its closed pads (ref, index)."""
    return net, tuple(sorted((p.ref, p.index) for p in closed))


def _fan_skip(neg: _Negotiation, lost: dict, in_vain: set) -> set:
    """The lost nets :func:`_fan_with_supplies` will not try: those whose try at the pads closed now
    failed before (`in_vain`)."""
    if not in_vain:
        return set()
    named = {k[0] for k in in_vain}
    return {n for n in lost if n in named and n not in neg.blind and _few_pads(neg, n)
            and _fan_key(n, _closed_pads(neg, n)) in in_vain}


def _repair(neg: _Negotiation, lost: dict, rounds: int, order: Optional[list] = None,
            priced: bool = False) -> None:
    """Rip-up and reroute for the nets still unrouted: each takes its way through the others
    (at congestion cost; with `priced`, at :data:`REPAIR_PRICE` per cell of theirs and no history,
    :func:`_priced_route`), the nets it then shares cells with are ripped up and rerouted with
    walls (with ``neg.mend_victims``, on big boards and in route_board's last try, one of more than
    :data:`LOCAL_MOST_PADS` pads is mended: cut where it shares cells and its pieces joined,
    :mod:`router.mend`; routed again whole only when that finds no way: a supply's whole tree finds
    none on a full board where the links round the new route do), and whatever
    fails queues up again (with `priced`, not a net whose way through the others
    cost more than :data:`REPAIR_DEAR` times the board's search states). The best state seen (fewest
    unrouted) is kept."""
    def snapshot():
        return dict(neg.routes), dict(lost)

    from .search import NDIR, states_expanded
    best = (len(lost), snapshot())
    queue = list(lost) if order is None else list(order)
    hopeless = set()
    g = neg.grid
    dear_states, dear = int(REPAIR_DEAR * g.L * g.ny * g.nx * NDIR), set()
    unexplained: set = set()             # nets lost here whose reason names no obstacle yet
    for _ in range(rounds):
        if not queue:
            break
        net = queue.pop(0)
        if net not in lost or net in dear:
            continue
        e0 = states_expanded()
        r = _priced_route(neg, net) if priced else neg.route(net)
        if priced and states_expanded() - e0 > dear_states:
            dear.add(net)                # one dear way through the others is enough (REPAIR_DEAR)
        if r.failed:
            hopeless.add(net)
            continue
        neg.lay(net, r)
        del lost[net]
        shared, _ = neg.conflicts()
        victims = [n for n in sorted(shared) if n != net]
        mends = {v: _cut_where_shared(neg, v) for v in victims
                 if neg.mend_victims and not _few_pads(neg, v) and not g.one_layer}
        for v in victims:
            neg.rip(v)
        for v in victims:
            rv = _mended(neg, v, mends[v]) if v in mends else None
            if rv is None or rv.failed:
                rv = neg.route(v, strict=True, explain=False)      # its reason is named at the end
            if rv.failed:
                lost[v] = rv.failed
                unexplained.add(v)
                queue.append(v)
            else:
                neg.lay(v, rv)
        shared, _ = neg.conflicts()
        if shared:                       # the net itself still shares: take it out again
            neg.rip(net)
            lost[net] = r.failed or "no way past the other nets after rip-up and reroute"
            queue.append(net)
        if len(lost) < best[0]:
            best = (len(lost), snapshot())
    if len(lost) > best[0]:
        routes, was_lost = best[1]
        for n in list(neg.routes):
            neg.rip(n)
        for n in sorted(routes, key=lambda n: neg.nets.index(n)):
            neg.lay(n, routes[n])
        lost.clear()
        lost.update(was_lost)
    _name_or_lay(neg, lost, [n for n in neg.nets if n in unexplained and lost.get(n, "").endswith(UNNAMED)
                             and n not in neg.routes])


def _shared_cells(neg: _Negotiation, net: str) -> set:
    """The cells (l, j, i) where `net`'s laid route shares with other nets' copper (:meth:`conflicts`)."""
    _, cells = neg.conflicts(only=[net])
    return {tuple(int(x) for x in c) for arr in cells for c in np.asarray(arr).reshape(-1, 3)}


def _cut_where_shared(neg: _Negotiation, net: str):
    """`net`'s route (laid) cut at the cells it shares with other nets (:func:`router.mend.cut`)."""
    return cut(neg.grid, neg.routes[net], _shared_cells(neg, net), neg.groups[net])


def _mended(neg: _Negotiation, net: str, m) -> NetRoute:
    """`net` (ripped up) routed with walls from the pieces of `m` (:class:`router.mend.Mend`)."""
    neg.mend[net] = m
    try:
        return neg.route(net, strict=True, explain=False)
    finally:
        del neg.mend[net]


def _name_or_lay(neg: _Negotiation, lost: dict, nets: list) -> None:
    """The obstacles that close each lost net's way (router.blockage), named once for the nets
    still lost at the end of repair (naming them at every failed reroute of a net in the way cost
    more than the reroutes). The naming route is a strict one (other nets' copper as walls): when
    it finds a way after all, because a later rip-up opened one, the net is laid and is no longer
    lost."""
    for net in nets:
        r = neg.route(net, strict=True)
        if r.failed:
            lost[net] = r.failed
            continue
        neg.lay(net, r)
        if neg.conflicts(only=[net])[0].get(net):      # walls keep a strict route apart; checked all the same
            neg.rip(net)
            lost[net] = "no way past the other nets after rip-up and reroute"
        else:
            del lost[net]


def _name_takers(neg: _Negotiation, net: str, reason: str) -> str:
    """`reason` (:data:`router.nets.TAKEN`) with the nets whose routed copper takes the exits of
    `net`'s closed pad named after it, as :mod:`router.blockage` names what closes a way: of the
    nets with routed copper within :data:`REORDER_WINDOW` of the pad (by its items' boxes), those
    whose copper alone taken away opens an exit of it (:func:`_openers`); when no one net does,
    those whose copper taken away together does. The reason is kept as it was when the pad is no
    longer closed or nothing near it opens it. The pad is the one `reason` names
    (``pad REF.PIN: ...``)."""
    said = reason.split(":", 1)[0].removeprefix("pad ")
    closed = [p for p in _closed_pads(neg, net) if p.name == said]
    if not closed:
        return reason
    pad = closed[0]

    def opens() -> bool:
        space, others = neg.spaces.space(neg, net, True, None)
        return bool(terminals(neg.grid, space, net, [[pad]], others)[0].cells)

    c, rad = neg.grid.layout.core_of(pad)
    x0, y0, x1, y1 = box_of_core(c)
    m = rad + REORDER_WINDOW
    near = [n for n in neg.nets if n != net and n in neg.routes and any(
        ob.box[0] <= x1 + m and ob.box[2] >= x0 - m and ob.box[1] <= y1 + m and ob.box[3] >= y0 - m
        for ob in neg.soft.get(n, ()))]
    alone = _openers(neg, near, opens)
    if alone:
        return f"{reason}: {_listed(alone, ' or ')} (taking {_it(alone)} away opens an exit)"
    snap = dict(neg.routes)
    for n in near:
        neg.rip(n)
    together = bool(near) and opens()
    neg.restore(snap)
    return f"{reason}: {_listed(near, ' and ')} together" if together else reason


def _name_routed(neg: _Negotiation, net: str, reason: str) -> str:
    """`reason` (naming :data:`router.blockage.ROUTED` among what closes the way) with the routed
    nets that close it named: the lost net's way through the other nets at :data:`REPAIR_PRICE`
    (:func:`_priced_route`) gives the nets it would share cells with (at most :data:`SWAP_MOST`,
    in negotiation order); those whose copper alone taken away lets the net route with walls are
    named (:func:`_openers`); when no one net does, the nets that way crosses. Kept as it was when
    no such way is found."""
    before, _ = neg.conflicts()
    way = _priced_route(neg, net)
    if way.failed:
        return reason
    neg.lay(net, way)
    after, _ = neg.conflicts()
    neg.rip(net)
    crossed = [n for n in neg.nets if n != net and after.get(n, 0) > before.get(n, 0)][:SWAP_MOST]
    if not crossed:
        return reason
    alone = _openers(neg, crossed, lambda: not neg.route(net, strict=True, explain=False).failed)
    if alone:
        said = f"{ROUTED} ({_listed(alone, ' or ')}: taking {_it(alone)} away opens a way)"
    else:
        said = f"{ROUTED} (its way through them would cross {_listed(crossed, ' and ')})"
    if f"{ROUTED} ({ANY_ONE})" in reason:     # several kinds, each alone (router.blockage): one pair of brackets
        return reason.replace(f"{ROUTED} ({ANY_ONE})", f"{said}; {ANY_ONE}", 1)
    return reason.replace(ROUTED, said, 1)


def _openers(neg: _Negotiation, names: list, opens) -> list:
    """The nets of `names` whose routed copper alone, ripped up, makes `opens()` true; each is
    laid again as it was, so the routing is unchanged."""
    out = []
    for n in names:
        r = neg.routes[n]
        neg.rip(n)
        try:
            if opens():
                out.append(n)
        finally:
            neg.lay(n, r)
    return out


def _it(names: list) -> str:
    return "it" if len(names) == 1 else "any one of them"


def _listed(names: list, join: str) -> str:
    """Net names sorted, the last joined by `join`: 'A', 'A or B', 'A, B and C'."""
    names = sorted(names)
    return names[0] if len(names) == 1 else ", ".join(names[:-1]) + join + names[-1]


def _anchor_test(grid: RoutingGrid, net: str, r: NetRoute):
    pads = [p for p in grid.pads if p.net == net]
    cores = [(box_of_core(c), rad, c if p.angle else None) for p, (c, rad) in ((p, grid.layout.core_of(p)) for p in pads)]
    points = {(round(x, 6), round(y, 6)) for x, y in r.via_points(grid)}
    for a, b in r.jumpers:
        points.add((round(a[0], 6), round(a[1], 6)))
        points.add((round(b[0], 6), round(b[1], 6)))

    def anchored(p) -> bool:
        if p in points:
            return True
        for (x0, y0, x1, y1), rad, core in cores:
            if core is not None:             # a turned pad: its exact core
                if core.distance(SPoint(*p)) <= rad + TOL:
                    return True
                continue
            gx = max(x0 - p[0], 0.0, p[0] - x1)
            gy = max(y0 - p[1], 0.0, p[1] - y1)
            if math.hypot(gx, gy) <= rad + TOL:
                return True
        return False
    return anchored


def _partial_copper(neg: _Negotiation, lost: list[str]) -> set:
    """The lost nets of three pad groups or more that keep the copper joining the pads they reach
    (:meth:`_Negotiation.route` with ``partial``, laid one after the other, each a wall to the next): a supply that
    misses one pad of thirty is written with the twenty-nine joined, not left out whole. Their
    reasons stay; the exact check takes the copper out again where it breaks a rule (:func:`_settle`)."""
    kept = set()
    for net in lost:
        if len(neg.groups[net]) < 3:
            continue
        if net in neg.routes:
            neg.rip(net)
        r = neg.route(net, strict=True, explain=False, partial=True)
        if r.edges or r.stubs or r.necks or r.jumpers:
            neg.lay(net, r)
            kept.add(net)
    return kept


def _write(b: Board, grid: RoutingGrid, neg: _Negotiation, order: list[str],
           partial: frozenset = frozenset()) -> None:
    """Write each routed net's copper into the board: polylines, vias, jumpers; and the copper of the
    lost nets in `partial` (:func:`_partial_copper`)."""
    for net in order:
        r = neg.routes.get(net)
        if r is None or (r.failed and net not in partial):
            continue
        width = neg.width(net)
        per_layer = defaultdict(list)          # unit steps, so that a T junction is a shared point
        for a, b2, l, w in r.segments(grid, width, necks=False):
            per_layer[l].append((a, b2))
        anchored = _anchor_test(grid, net, r)
        if r.necks:                            # a neck is a trace of its own; its grid end anchors the rest
            neck_ends = {(l, pts[-1]) for pts, l, _ in r.necks}
            for pts, l, w in r.necks:
                if len(pts) > 1:
                    b.traces.append(Trace(net, grid.layers[l], w, [tuple(p) for p in pts]))
            base_anchor = anchored
            anchored = lambda p, _a=base_anchor, _e={e for _, e in neck_ends}: _a(p) or p in _e
        for l in sorted(per_layer):
            segs = trim_dangling(per_layer[l], anchored)
            for pts in polylines(segs):
                b.traces.append(Trace(net, grid.layers[l], width, [(x, y) for x, y in pts]))
        for at in r.via_points(grid):
            b.vias.append(Via(net, (at[0], at[1]), grid.via_drill, grid.via_d))
        for a, e in r.jumpers:
            b.jumpers.append(Jumper(net, a, e, grid.jump_drill, grid.jump_d))


_GEOMETRY_RULES = {"clearance", "short", "edge", "keepout", "hole_spacing"}


def _settle(b: Board, original: Board, failed: dict, order: list[str]) -> None:
    """Check the written board exactly; take out new copper of any net that breaks a rule."""
    from .check import check
    before_t, before_v, before_j = len(original.traces), len(original.vias), len(original.jumpers)
    new_nets = set(order)
    known = {(v.rule, v.message) for v in check(original) if v.rule in _GEOMETRY_RULES}   # not the router's doing
    for _ in range(len(order) + 1):
        bad: dict[str, tuple] = {}
        for v in check(b):
            if v.rule not in _GEOMETRY_RULES or (v.rule, v.message) in known:
                continue
            # a lost net's partial copper (_partial_copper) is blamed before the routed net it meets
            for n in sorted(v.nets, key=lambda n: n not in failed):
                if n in new_nets and _has_new(b, n, before_t, before_v, before_j):
                    bad.setdefault(n, (v.rule, v.at))
                    break
        if not bad:
            break
        # take out a lost net's partial copper first (_partial_copper), then the last-routed offender;
        # others may be clean without it
        net = max(bad, key=lambda n: (n in failed, order.index(n)))
        rule, at = bad[net]
        where = f" near ({at[0]:.2f}, {at[1]:.2f})" if at else ""
        if net not in failed:
            failed[net] = f"its route broke the {rule} rule{where} on the exact check; left unrouted"
        b.traces = b.traces[:before_t] + [t for t in b.traces[before_t:] if t.net != net]
        b.vias = b.vias[:before_v] + [v for v in b.vias[before_v:] if v.net != net]
        b.jumpers = b.jumpers[:before_j] + [j for j in b.jumpers[before_j:] if j.net != net]
    from .connectivity import routed
    joined = routed(b)
    for net in order:
        if net not in failed and not joined.get(net, True):
            failed[net] = "its copper does not join every pin on the exact check; left as routed so far"


def _has_new(b: Board, net: str, t0: int, v0: int, j0: int) -> bool:
    return (any(t.net == net for t in b.traces[t0:]) or any(v.net == net for v in b.vias[v0:])
            or any(j.net == net for j in b.jumpers[j0:]))
