"""A* search over (cell, layer, direction) on the routing grid.

The router's one search: from many source cells (a net's tree so far) to the
cells of one pin, minimising

    cost = STEP * steps + bend * bends + via * vias + jump * jumpers + sum(extra)

where a *via* is a change of layer at a cell, a *jumper* (one-layer boards) is a
straight wire over ``k`` cells, ``extra`` is a per-cell cost of entering a cell (the
negotiated-congestion terms), and a *bend* is a change of heading: between two grid
steps at a cell, across a via (the heading is kept through the layer change, so a
path that arrives going east and leaves the other layer going north pays the via and
a bend), and at either end of a jumper (the wire is one more heading). This is the
contract's bend, which counts a turn at a via or a jumper end, so vias are spent on
crossings, not on hiding corners. A path may not reverse its heading (after a via or
a jumper neither), and a jumper may not leave straight from another's landing.

The public wrapper is :func:`find_path`; the engine ``_astar`` is a
numba-compiled A* with a bucket queue (Dial), integer costs, reusable work arrays stamped with a search
number (so a search costs what it explores, not the grid size), and an
admissible heuristic: the Manhattan gap to the targets' box, the turns still needed (each a
bend), and a via when the current layer holds no target. Targets in clusters far apart
(:func:`target_boxes`) are searched twice: first with the least of that heuristic over the
clusters' boxes, which finds the least cost quickly, then keyed by the one box as before with
every state that cannot reach a target within that cost left out, so the path chosen among
equal ones is the plain search's, without its sweep of the whole box.

States are (cell, layer, heading): headings 0..3 (east, north, west, south), 4 for
none (a source), and on boards with jumpers 5..8 for "landed from a jumper heading
0..3" (from there no second jumper may leave).

References
----------
.. [1] C. Y. Lee, "An algorithm for path connections and its applications",
   IRE Trans. Electronic Computers, 1961.
.. [2] P. E. Hart, N. J. Nilsson, B. Raphael, "A formal basis for the heuristic
   determination of minimum cost paths", IEEE Trans. SSC, 1968.
"""
from __future__ import annotations

from contextlib import contextmanager
from dataclasses import dataclass, field
from typing import Optional

import numpy as np
from numba import njit

__all__ = ["STEP", "OVER_BOUND", "LazyCosts", "SearchSpace", "Path", "find_path", "target_boxes", "reference_graph", "path_cost",
           "states_expanded", "work_limit"]

#: Cost of one grid step; penalties are in the same unit (a bend of B mm is round(STEP * B / pitch)).
STEP = 100

# headings: 0 east (+i), 1 north (+j), 2 west (-i), 3 south (-j); 4 = none (a source);
# 5..8 = landed from a jumper heading 0..3 (only on boards with jumpers)
_DI = np.array([1, 0, -1, 0], dtype=np.int64)
_DJ = np.array([0, 1, 0, -1], dtype=np.int64)
NONE = 4
NDIR = 5            # states per cell and layer without jumpers
NDIR_JUMP = 9       # with jumpers


def _heading(d: int) -> int:
    """The heading of a state's direction code (a landing from a jumper keeps the wire's)."""
    return d - 5 if d >= 5 else d


@dataclass
class LazyCosts:
    """Congestion costs computed by the search where it looks, instead of a full-grid ``extra``
    and ``hole_extra`` made for every net (on a big grid those arrays cost more than the search).

    With ``strict`` False, entering cell (l, j, i) costs ``min(int(pf * soft[l, j, i] + hist[l, j, i]), cap)``
    and a hole at (j, i) costs ``min(int(pf * soft_via[j, i] + hist_top[j, i]), cap)``; with
    ``strict``, cells cost nothing and holes start from 0. Where ``crowd`` is given, a hole
    costs ``crowd[j, i] * crowd_price`` more (capped at ``cap``). The arithmetic is that of
    numpy on the full arrays (float64, truncation to integer), so the costs are the same.
    """
    soft: np.ndarray                     # int32 [L, ny, nx]
    hist: np.ndarray                     # int64 [L, ny, nx]
    soft_via: np.ndarray                 # int32 [ny, nx]
    hist_top: np.ndarray                 # int64 [ny, nx]: the larger history of the layers
    pf: float
    strict: bool = False
    crowd: Optional[np.ndarray] = None   # int32 [ny, nx]
    crowd_price: int = 0
    cap: int = 2**24
    bounds: Optional[tuple] = None       # (largest cell cost, largest hole cost) or None: measured
    add_cell: Optional[np.ndarray] = None    # int64 [L, ny, nx]: added last to a cell's cost (capped)
    add_hole: Optional[np.ndarray] = None    # int64 [ny, nx]: added last to a hole's cost (capped)
    _own_add: bool = False                   # add_cell and add_hole are this object's own copies
    hist_max: Optional[int] = None           # hist's largest entry when the caller knows it (hist_top is hist's
                                             # largest over the layers: the same largest entry)
    _base_max: Optional[tuple] = None        # maxima() without add_cell and add_hole (they do not change)
    _add_max: Optional[list] = None          # [add_cell.max(), add_hole.max()], kept by raise_cell

    def cell_cost(self, l: int, j: int, i: int) -> int:
        e = 0
        if not self.strict:
            e = int(min(self.pf * float(self.soft[l, j, i]) + float(self.hist[l, j, i]), float(self.cap)))
        if self.add_cell is not None:
            e = min(e + int(self.add_cell[l, j, i]), self.cap)
        return e

    def hole_cost(self, j: int, i: int) -> int:
        h = 0
        if not self.strict:
            h = int(min(self.pf * float(self.soft_via[j, i]) + float(self.hist_top[j, i]), float(self.cap)))
        if self.crowd is not None:
            h = min(h + int(self.crowd[j, i]) * int(self.crowd_price), self.cap)
        if self.add_hole is not None:
            h = min(h + int(self.add_hole[j, i]), self.cap)
        return h

    def maxima(self) -> tuple[int, int]:
        """Upper bounds of the cell and hole costs (for the bucket queue's span)."""
        if self.bounds is None:
            # (the parts are kept: a raised cell changes only add_cell's largest entry, which
            # SearchSpace.raise_cell keeps; measuring whole grids again after each raise cost more
            # than many searches)
            if self._base_max is None:
                if self.strict:
                    e = h = 0
                else:
                    hm = self.hist_max
                    e = int(min(self.pf * float(self.soft.max(initial=0))
                                + float(self.hist.max(initial=0) if hm is None else hm), self.cap))
                    h = int(min(self.pf * float(self.soft_via.max(initial=0))
                                + float(self.hist_top.max(initial=0) if hm is None else hm), self.cap))
                if self.crowd is not None:
                    h = min(h + int(self.crowd.max(initial=0)) * int(self.crowd_price), self.cap)
                self._base_max = (e, h)
            e, h = self._base_max
            if self._add_max is None:
                self._add_max = [None if self.add_cell is None else int(self.add_cell.max(initial=0)),
                                 None if self.add_hole is None else int(self.add_hole.max(initial=0))]
            if self.add_cell is not None:
                e = min(e + self._add_max[0], self.cap)
            if self.add_hole is not None:
                h = min(h + self._add_max[1], self.cap)
            self.bounds = (e, h)
        return self.bounds


@dataclass
class SearchSpace:
    """Where one net may go: the arrays of one search problem (see the module docstring).

    Parameters
    ----------
    open_cell, open_h, open_v : uint8 arrays [L, ny, nx]
        Cells a centreline may use; steps (i, j) -> (i+1, j) and (i, j) -> (i, j+1) that are allowed.
    via_ok : uint8 array [ny, nx]
        Where a via may stand (all layers checked by the caller).
    extra : int32 array [L, ny, nx]
        Non-negative cost added on entering a cell.
    jump_ok, wire_block : uint8 arrays [ny, nx] or None
        One-layer boards: where a jumper end may stand, and where a jumper wire may not pass.
    jump_cells : int64 array [K] or None
        Allowed jumper lengths in whole cells.
    hole_extra : int32 array [ny, nx] or None
        Non-negative cost of drilling a hole at a cell: added for a via there, and for
        each end of a jumper (the negotiated-congestion price of a via or jumper end).
    lazy : LazyCosts, optional
        When given, ``extra`` and ``hole_extra`` are ignored (pass None) and the costs are
        computed from it where the search looks.
    """
    open_cell: np.ndarray
    open_h: np.ndarray
    open_v: np.ndarray
    via_ok: np.ndarray
    extra: np.ndarray
    jump_ok: Optional[np.ndarray] = None
    wire_block: Optional[np.ndarray] = None
    jump_cells: Optional[np.ndarray] = None
    hole_extra: Optional[np.ndarray] = None
    _wire_rows: Optional[np.ndarray] = field(default=None, repr=False, compare=False)
    _wire_cols: Optional[np.ndarray] = field(default=None, repr=False, compare=False)
    lazy: Optional[LazyCosts] = None
    #: Among equally cheap paths, the one the first search finds: where :func:`find_path` searches
    #: twice (far-apart targets, a dear entry), the second search, which only picks the plain
    #: search's path among the equally cheap ones, is left out.
    any_tie: bool = False
    _maxes: dict = field(default_factory=dict, repr=False, compare=False)
    _own_extra: bool = field(default=False, repr=False, compare=False)

    def __post_init__(self):
        L, ny, nx = self.open_cell.shape
        if self.lazy is not None:        # costs come from `lazy`: small stand-ins for the arrays
            self.extra = np.zeros((L, 1, 1), np.int32) if self.extra is None else self.extra
            self.hole_extra = np.zeros((1, 1), np.int32) if self.hole_extra is None else self.hole_extra
            for name in ("open_h", "open_v"):
                if getattr(self, name).shape != (L, ny, nx):
                    raise ValueError(f"{name} has shape {getattr(self, name).shape}, expected {(L, ny, nx)}")
            if self.via_ok.shape != (ny, nx):
                raise ValueError(f"via_ok has shape {self.via_ok.shape}, expected {(ny, nx)}")
            self.open_cell = np.ascontiguousarray(self.open_cell, dtype=np.uint8)
            self.open_h = np.ascontiguousarray(self.open_h, dtype=np.uint8)
            self.open_v = np.ascontiguousarray(self.open_v, dtype=np.uint8)
            self.via_ok = np.ascontiguousarray(self.via_ok, dtype=np.uint8)
            self.extra = np.ascontiguousarray(self.extra, dtype=np.int32)
            self.hole_extra = np.ascontiguousarray(self.hole_extra, dtype=np.int32)
            return
        for name in ("open_h", "open_v", "extra"):
            if getattr(self, name).shape != (L, ny, nx):
                raise ValueError(f"{name} has shape {getattr(self, name).shape}, expected {(L, ny, nx)}")
        if self.via_ok.shape != (ny, nx):
            raise ValueError(f"via_ok has shape {self.via_ok.shape}, expected {(ny, nx)}")
        if self.extra.min(initial=0) < 0:
            raise ValueError("extra costs must be non-negative (A* needs them so)")
        self.open_cell = np.ascontiguousarray(self.open_cell, dtype=np.uint8)
        self.open_h = np.ascontiguousarray(self.open_h, dtype=np.uint8)
        self.open_v = np.ascontiguousarray(self.open_v, dtype=np.uint8)
        self.via_ok = np.ascontiguousarray(self.via_ok, dtype=np.uint8)
        self.extra = np.ascontiguousarray(self.extra, dtype=np.int32)
        if self.hole_extra is None:
            self.hole_extra = np.zeros((ny, nx), dtype=np.int32)
        if self.hole_extra.shape != (ny, nx):
            raise ValueError(f"hole_extra has shape {self.hole_extra.shape}, expected {(ny, nx)}")
        if self.hole_extra.min(initial=0) < 0:
            raise ValueError("hole costs must be non-negative (A* needs them so)")
        self.hole_extra = np.ascontiguousarray(self.hole_extra, dtype=np.int32)

    @property
    def shape(self) -> tuple[int, int, int]:
        return self.open_cell.shape

    def extra_max(self) -> int:
        """The largest entry of ``extra`` (a bound of the lazy costs), kept while the same array
        stays (costs are replaced, never changed in place, by their users)."""
        if self.lazy is not None:
            return self.lazy.maxima()[0]
        return self._max_of("extra")

    def hole_extra_max(self) -> int:
        if self.lazy is not None:
            return self.lazy.maxima()[1]
        return self._max_of("hole_extra")

    def raise_cell(self, c, v: int) -> None:
        """Entering cell `c` = (l, j, i) costs `v` more (capped at 2**24 as the costs are); the
        arrays are copied before the first change, so other spaces sharing them keep theirs."""
        if self.lazy is not None:
            lz = self.lazy
            if not lz._own_add:
                L, ny, nx = self.shape
                known = lz._add_max or [None, None]
                most = [0 if lz.add_cell is None else known[0], 0 if lz.add_hole is None else known[1]]
                lz._add_max = None if None in most else most      # zeros' largest entry is 0; a copy's, the same
                lz.add_cell = (np.zeros((L, ny, nx), np.int64) if lz.add_cell is None
                               else np.array(lz.add_cell, dtype=np.int64))
                lz.add_hole = (np.zeros((ny, nx), np.int64) if lz.add_hole is None
                               else np.array(lz.add_hole, dtype=np.int64))
                lz._own_add = True
            lz.add_cell[c] += int(v)          # min(min(e + a, cap) + v, cap) = min(e + a + v, cap)
            if lz._add_max is not None:       # entries only grow: the largest is the old or this one
                lz._add_max[0] = max(lz._add_max[0], int(lz.add_cell[c]))
            lz.bounds = None
            return
        if not self._own_extra:
            self.extra = self.extra.copy()
            self._own_extra = True
        self.extra[c] = min(int(self.extra[c]) + int(v), 2**24)
        self._maxes.pop("extra", None)

    def cell_cost(self, l: int, j: int, i: int) -> int:
        """The extra cost of entering cell (l, j, i)."""
        return self.lazy.cell_cost(l, j, i) if self.lazy is not None else int(self.extra[l, j, i])

    def hole_cost(self, j: int, i: int) -> int:
        """The extra cost of a hole (via, jumper end) at (j, i)."""
        return self.lazy.hole_cost(j, i) if self.lazy is not None else int(self.hole_extra[j, i])

    def _max_of(self, name: str) -> int:
        arr = getattr(self, name)
        got = self._maxes.get(name)
        if got is None or got[0] is not arr:
            got = (arr, int(arr.max(initial=0)))
            self._maxes[name] = got
        return got[1]

    @property
    def has_jumpers(self) -> bool:
        return self.jump_ok is not None and self.jump_cells is not None and len(self.jump_cells) > 0

    def jumper_arrays(self):
        """jump_ok, wire prefix sums along rows and columns, and the lengths (empty when no jumpers)."""
        L, ny, nx = self.shape
        if not self.has_jumpers:
            z = np.zeros((1, 1), dtype=np.uint8)
            zi = np.zeros((1, 1), dtype=np.int32)
            return z, zi, zi, np.zeros(0, dtype=np.int64)
        if self._wire_rows is None:
            wb = np.zeros((ny, nx), dtype=np.int32) if self.wire_block is None else self.wire_block.astype(np.int32)
            rows = np.zeros((ny, nx + 1), dtype=np.int32)
            rows[:, 1:] = np.cumsum(wb, axis=1)
            cols = np.zeros((ny + 1, nx), dtype=np.int32)
            cols[1:, :] = np.cumsum(wb, axis=0)
            self._wire_rows, self._wire_cols = rows, cols
        return (np.ascontiguousarray(self.jump_ok, dtype=np.uint8), self._wire_rows, self._wire_cols,
                np.ascontiguousarray(self.jump_cells, dtype=np.int64))


@dataclass
class Path:
    """A found path: cells (l, j, i) from a source to a target, and its figures."""
    cells: np.ndarray
    cost: int
    bends: int
    vias: int
    jumpers: int
    expanded: int = 0


class _OverBound:
    """What :func:`find_path` returns when no path costs at most its ``bound`` (and one that
    costs more may exist)."""

    def __repr__(self) -> str:
        return "OVER_BOUND"

    def __bool__(self) -> bool:
        return False


#: find_path's answer when the search stopped at its ``bound`` without a path (see there).
OVER_BOUND = _OverBound()


class _Workspace:
    """Work arrays reused across searches on grids of one size."""

    def __init__(self, n_states: int):
        self.stamp_of = np.zeros(n_states, dtype=np.int32)
        self.g = np.zeros(n_states, dtype=np.int64)
        self.parent = np.zeros(n_states, dtype=np.int32)
        self.stamp = 0
        self.tmask = None
        self.seen = None                 # the cut-off floods' work arrays (_cut_off_sides), made on first use
        self.heads: dict[int, np.ndarray] = {}     # bucket arrays by size (buckets)
        # the queue's entries: a search that fills them is run again with twice as many (the same
        # result), so they start small and grow to what the board's searches need, not to the grid
        self.grow_pool(max(1 << 16, min(n_states, 1 << 20)))

    def grow_pool(self, size: int):
        self.ent_state = np.empty(size, dtype=np.int32)
        self.ent_g = np.empty(size, dtype=np.int64)
        self.ent_next = np.empty(size, dtype=np.int32)

    def buckets(self, span: int) -> np.ndarray:
        """A bucket array of the least power-of-two size (at least 4,096) above `span` (the largest
        key step of one move). The search clears all of it first, so a search of a small span does
        not take the array a dearer one needed (late negotiation passes: 2 million buckets, 8 MB
        cleared per search); any size above the span pops the states in the same order."""
        nb = 1 << 12
        while nb <= span:
            nb *= 2
        head = self.heads.get(nb)
        if head is None:
            head = self.heads[nb] = np.zeros(nb, dtype=np.int32)
        return head

    def target_mask(self, shape) -> np.ndarray:
        """A zeroed uint8 array of `shape` for the targets of one search; the caller clears
        what it set (a fresh full-grid array per search cost more than the search on big grids)."""
        if self.tmask is None or self.tmask.shape != shape:
            self.tmask = np.zeros(shape, dtype=np.uint8)
        return self.tmask

    def next_stamp(self) -> int:
        self.stamp += 1
        if self.stamp >= 2**31 - 2:
            self.stamp_of[:] = 0
            self.stamp = 1
        return self.stamp


_WORKSPACES: dict[int, _Workspace] = {}


def _workspace(n_states: int) -> _Workspace:
    ws = _WORKSPACES.get(n_states)
    if ws is None:
        if len(_WORKSPACES) > 4:
            _WORKSPACES.clear()
        ws = _WORKSPACES[n_states] = _Workspace(n_states)
    return ws


@njit(cache=True, inline="always")
def _heuristic(l, j, i, d, tx0, ty0, tx1, ty1, tlayer, step, turn, via_need_cost):
    gx = 0
    need_e = False
    need_w = False
    if i < tx0:
        gx = tx0 - i
        need_e = True
    elif i > tx1:
        gx = i - tx1
        need_w = True
    gy = 0
    need_n = False
    need_s = False
    if j < ty0:
        gy = ty0 - j
        need_n = True
    elif j > ty1:
        gy = j - ty1
        need_s = True
    nneed = (1 if (need_e or need_w) else 0) + (1 if (need_n or need_s) else 0)
    if d == 4:
        turns = nneed - 1 if nneed > 0 else 0
    else:
        ahead = (d == 0 and need_e) or (d == 1 and need_n) or (d == 2 and need_w) or (d == 3 and need_s)
        behind = (d == 0 and need_w) or (d == 1 and need_s) or (d == 2 and need_e) or (d == 3 and need_n)
        if ahead:
            turns = nneed - 1
        elif behind:
            turns = 2 if nneed == 1 else nneed
        else:
            turns = nneed
    h = step * (gx + gy)
    if tlayer[l] == 0:
        h += via_need_cost          # a via is needed anyway (it keeps the heading: no turn absorbed)
    return h + turn * turns


@njit(cache=True, inline="always")
def _heuristic_boxes(l, j, i, d, boxes, tlayer, step, turn, via_need_cost):
    """The least of :func:`_heuristic` over the targets' boxes: each is a lower bound for the
    targets in its box, so the least is one for them all (admissible), and it stays sharp when
    the targets lie in clusters far apart (one box around all of them would make the search a
    plain Dijkstra everywhere inside it)."""
    best = _heuristic(l, j, i, d, boxes[0, 0], boxes[0, 1], boxes[0, 2], boxes[0, 3], tlayer, step, turn,
                      via_need_cost)
    for b in range(1, boxes.shape[0]):
        h = _heuristic(l, j, i, d, boxes[b, 0], boxes[b, 1], boxes[b, 2], boxes[b, 3], tlayer, step, turn,
                       via_need_cost)
        if h < best:
            best = h
    return best


@njit(cache=True, inline="always")
def _cell_extra(l, j, i, extra, lz, soft, hist, pf, cap, add_cell, has_add):
    """Cost of entering a cell: the array's (lz 0), from soft counts and history (1), none (2);
    then (lz 1, 2) plus add_cell when has_add, capped."""
    if lz == 0:
        return np.int64(extra[l, j, i])
    e = np.int64(0)
    if lz == 1:
        f = pf * np.float64(soft[l, j, i]) + np.float64(hist[l, j, i])
        if f > cap:
            f = np.float64(cap)
        e = np.int64(f)
    if has_add:
        e += add_cell[l, j, i]
        if e > cap:
            e = np.int64(cap)
    return e


@njit(cache=True, inline="always")
def _hole_extra(j, i, hole_extra, lz, soft_via, hist_top, pf, crowd, cprice, cap, add_hole, has_add):
    """Cost of a hole at (j, i): the array's (lz 0), or computed as LazyCosts says."""
    if lz == 0:
        return np.int64(hole_extra[j, i])
    h = np.int64(0)
    if lz == 1:
        e = pf * np.float64(soft_via[j, i]) + np.float64(hist_top[j, i])
        if e > cap:
            e = np.float64(cap)
        h = np.int64(e)
    if cprice > 0:
        h += np.int64(crowd[j, i]) * cprice
        if h > cap:
            h = np.int64(cap)
    if has_add:
        h += add_hole[j, i]
        if h > cap:
            h = np.int64(cap)
    return h


@njit(cache=True)
def _astar(open_cell, open_h, open_v, via_ok, extra, hole_extra, jump_ok, wire_rows, wire_cols, jump_cells,
           sources, tmask, boxes, pboxes, bound, kE, pE, tlayer, step, bend, via, jump, order, nds,
           stamp_of, gbest, parent, stamp, head, ent_state, ent_g, ent_next,
           lz, soft, hist, soft_via, hist_top, pf, crowd, cprice, cap, add_cell, add_hole, has_add, most):
    """Dial's bucket queue over integer f = g + h; returns (end state, or -1 when no path, -3 when no
    path within `bound` (a state was left out for it), -2 when the pool is full, -4 when `most`
    states (>= 0; -1: no limit) were expanded without reaching a target; expanded).

    `order` is the order in which the four step headings are tried (ties among equal paths);
    `nds` the states per cell and layer (5, or 9 with jumpers); `lz` how cell and hole costs
    are had (0: the arrays extra and hole_extra; 1: LazyCosts; 2: LazyCosts, strict). `kE` and
    `pE` are added to the heuristic of every state off the targets, in the key and in the bound's
    test: the least cost of entering a target cell, which every path pays (0: none)."""
    L, ny, nx = open_cell.shape
    turn = bend
    via_need = via if L == 2 else 0
    nb = head.shape[0]
    mask = nb - 1
    head[:] = -1
    cap = ent_state.shape[0]
    used = 0
    cur = -1
    pending = 0
    cut = False             # a state was left out for the bound
    for r in range(sources.shape[0]):
        l = sources[r, 0]
        j = sources[r, 1]
        i = sources[r, 2]
        s = ((l * ny + j) * nx + i) * nds + 4
        if stamp_of[s] == stamp:
            continue
        off = tmask[l, j, i] == 0
        if bound >= 0 and _heuristic_boxes(l, j, i, 4, pboxes, tlayer, step, turn, via_need) + (pE if off else 0) > bound:
            cut = True
            continue            # no path from here costs the bound or less
        stamp_of[s] = stamp
        gbest[s] = 0
        parent[s] = -1
        h = _heuristic_boxes(l, j, i, 4, boxes, tlayer, step, turn, via_need) + (kE if off else 0)
        if cur < 0 or h < cur:
            cur = h
        if used == cap:
            return -2, 0
        b = h & mask
        ent_state[used] = s
        ent_g[used] = 0
        ent_next[used] = head[b]
        head[b] = used
        used += 1
        pending += 1
    # all source keys lie within one span of the smallest (their h differ by less than the span)
    expanded = 0
    while pending > 0:
        b = cur & mask
        e = head[b]
        if e < 0:
            cur += 1
            continue
        head[b] = ent_next[e]
        pending -= 1
        s = ent_state[e]
        g = ent_g[e]
        if g != gbest[s]:
            continue            # a stale entry
        d = s % nds
        c = s // nds
        i = c % nx
        j = (c // nx) % ny
        l = c // (nx * ny)
        hd = d - 5 if d >= 5 else d         # the heading (4: none)
        expanded += 1
        if tmask[l, j, i]:
            return s, expanded
        if most >= 0 and expanded >= most:
            return -4, expanded     # the caller's work is spent (work_limit)
        for move in range(6):
            # moves 0..3: a grid step (in the order given); 4: a via; 5: jumpers (handled below)
            if move < 4:
                nd = order[move]
                if hd != 4 and nd == (hd + 2) % 4:
                    continue        # no U-turn
                ni = i + (1 if nd == 0 else (-1 if nd == 2 else 0))
                nj = j + (1 if nd == 1 else (-1 if nd == 3 else 0))
                if ni < 0 or ni >= nx or nj < 0 or nj >= ny:
                    continue
                if open_cell[l, nj, ni] == 0:
                    continue
                if nd == 0 and open_h[l, j, i] == 0:
                    continue
                if nd == 2 and open_h[l, j, ni] == 0:
                    continue
                if nd == 1 and open_v[l, j, i] == 0:
                    continue
                if nd == 3 and open_v[l, nj, i] == 0:
                    continue
                nl = l
                ng = g + step + _cell_extra(l, nj, ni, extra, lz, soft, hist, pf, cap, add_cell, has_add)
                if hd != 4 and nd != hd:
                    ng += bend
                ndir = nd
                nk = 1
            elif move == 4:
                if L != 2 or via_ok[j, i] == 0:
                    continue
                nl = 1 - l
                ni = i
                nj = j
                if open_cell[nl, j, i] == 0:
                    continue
                ng = (g + via + _cell_extra(nl, j, i, extra, lz, soft, hist, pf, cap, add_cell, has_add)
                      + _hole_extra(j, i, hole_extra, lz, soft_via, hist_top, pf, crowd, cprice, cap, add_hole, has_add))
                ndir = d            # the heading goes through the via: a turn after it is a bend
                nk = 1
            else:
                if jump_cells.shape[0] == 0 or jump_ok[j, i] == 0:
                    continue
                if d >= 5:
                    continue        # no jumper straight off another: the two holes would meet
                nk = jump_cells.shape[0] * 4
                nl = l
            for q in range(nk):
                if move == 5:
                    k = jump_cells[q // 4]
                    nd = order[q % 4]
                    if hd != 4 and nd == (hd + 2) % 4:
                        continue    # no wire back over the path
                    ni = i + k * (1 if nd == 0 else (-1 if nd == 2 else 0))
                    nj = j + k * (1 if nd == 1 else (-1 if nd == 3 else 0))
                    if ni < 0 or ni >= nx or nj < 0 or nj >= ny:
                        continue
                    if jump_ok[nj, ni] == 0 or open_cell[l, nj, ni] == 0:
                        continue
                    if nd == 0 or nd == 2:
                        lo = i if i < ni else ni
                        hi = ni if i < ni else i
                        if wire_rows[j, hi + 1] - wire_rows[j, lo] != 0:
                            continue
                    else:
                        lo = j if j < nj else nj
                        hi = nj if j < nj else j
                        if wire_cols[hi + 1, i] - wire_cols[lo, i] != 0:
                            continue
                    ng = (g + jump + step * k + _cell_extra(l, nj, ni, extra, lz, soft, hist, pf, cap, add_cell, has_add)
                          + _hole_extra(j, i, hole_extra, lz, soft_via, hist_top, pf, crowd, cprice, cap, add_hole, has_add)
                          + _hole_extra(nj, ni, hole_extra, lz, soft_via, hist_top, pf, crowd, cprice, cap, add_hole, has_add))
                    if hd != 4 and nd != hd:
                        ng += bend          # the wire leaves across the path: a bend at its first end
                    ndir = 5 + nd
                t = ((nl * ny + nj) * nx + ni) * nds + ndir
                toff = tmask[nl, nj, ni] == 0
                if bound >= 0 and ng + _heuristic_boxes(nl, nj, ni, ndir - 5 if ndir >= 5 else ndir, pboxes, tlayer,
                                                        step, turn, via_need) + (pE if toff else 0) > bound:
                    cut = True
                    continue        # no path through here costs the bound or less
                if stamp_of[t] != stamp or ng < gbest[t]:
                    stamp_of[t] = stamp
                    gbest[t] = ng
                    parent[t] = s
                    nh = ndir - 5 if ndir >= 5 else ndir
                    key = ng + _heuristic_boxes(nl, nj, ni, nh, boxes, tlayer, step, turn, via_need) + (kE if toff else 0)
                    if key < cur:
                        key = cur       # an inconsistent heuristic step: expand it next, as a heap would
                    if used == cap:
                        return -2, expanded
                    bb = key & mask
                    ent_state[used] = t
                    ent_g[used] = ng
                    ent_next[used] = head[bb]
                    head[bb] = used
                    used += 1
                    pending += 1
    return (-3 if cut else -1), expanded


@njit(cache=True)
def _cut_off(open_cell, open_h, open_v, via_ok, starts, other, seen, stamp, queue, forward):
    """Whether the cells reachable from `starts` (forward: the moves a path makes from them;
    else backward: the cells a path could come from into them) are all found within
    ``queue.shape[0]`` cells and none of them is in `other` (then no path joins the two sets).
    Steps and vias as :func:`_astar` makes them: a cell entered must be open; a source need not
    be. Returns 1 when cut off, 0 when a cell of `other` was met or the flood outgrew the queue."""
    L, ny, nx = open_cell.shape
    most = queue.shape[0]
    n = 0
    for r in range(starts.shape[0]):
        l = starts[r, 0]
        j = starts[r, 1]
        i = starts[r, 2]
        c = (l * ny + j) * nx + i
        if seen[c] == stamp:
            continue
        if not forward and open_cell[l, j, i] == 0:
            continue            # a target that is not open is entered by no path
        if n == most:
            return 0
        seen[c] = stamp
        queue[n] = c
        n += 1
    k = 0
    while k < n:
        c = queue[k]
        k += 1
        i = c % nx
        j = (c // nx) % ny
        l = c // (nx * ny)
        for move in range(5):
            nl = l
            ni = i
            nj = j
            if move == 0:
                ni = i + 1
                if ni >= nx or open_h[l, j, i] == 0:
                    continue
            elif move == 1:
                nj = j + 1
                if nj >= ny or open_v[l, j, i] == 0:
                    continue
            elif move == 2:
                ni = i - 1
                if ni < 0 or open_h[l, j, ni] == 0:
                    continue
            elif move == 3:
                nj = j - 1
                if nj < 0 or open_v[l, nj, i] == 0:
                    continue
            else:
                if L != 2 or via_ok[j, i] == 0:
                    continue
                nl = 1 - l
            t = (nl * ny + nj) * nx + ni
            if seen[t] == stamp:
                continue
            if forward:
                if open_cell[nl, nj, ni] == 0:
                    continue            # a path enters only open cells
                if other[nl, nj, ni]:
                    return 0
            else:
                if other[nl, nj, ni]:
                    return 0            # a source: a path may leave it whether open or not
                if open_cell[nl, nj, ni] == 0:
                    continue            # neither open nor a source: on no path
            if n == most:
                return 0
            seen[t] = stamp
            queue[n] = t
            n += 1
    return 1


#: The most cells :func:`find_path` floods from each side before a search to find a side cut off
#: (a pad walled in by other nets' copper: then no search runs; our choice: a walled-in pad's
#: pocket is a few hundred cells, and a flood this size costs a small share of a search).
CUT_FLOOD = 4096


def _cut_off_sides(space: SearchSpace, src: np.ndarray, tgt: np.ndarray, tmask: np.ndarray, ws) -> bool:
    """True when no path joins `src` to `tgt` in `space` (steps and vias, no jumpers), found by a
    flood of at most :data:`CUT_FLOOD` cells from each side; False when not known."""
    L, ny, nx = space.shape
    if ws.seen is None or ws.smask.shape != (L, ny, nx):
        ws.seen = np.zeros(L * ny * nx, dtype=np.int32)
        ws.seen_stamp = 0
        ws.smask = np.zeros((L, ny, nx), dtype=np.uint8)
        ws.flood = np.empty(CUT_FLOOD, dtype=np.int32)
    for side, other, forward in ((tgt, None, False), (src, tmask, True)):
        if len(side) > CUT_FLOOD:
            continue
        ws.seen_stamp += 1
        if ws.seen_stamp >= 2**31 - 2:
            ws.seen[:] = 0
            ws.seen_stamp = 1
        if other is None:
            other = ws.smask
            other[src[:, 0], src[:, 1], src[:, 2]] = 1
            try:
                cut = _cut_off(space.open_cell, space.open_h, space.open_v, space.via_ok, side, other,
                               ws.seen, ws.seen_stamp, ws.flood, False)
            finally:
                other[src[:, 0], src[:, 1], src[:, 2]] = 0
        else:
            cut = _cut_off(space.open_cell, space.open_h, space.open_v, space.via_ok, side, other,
                           ws.seen, ws.seen_stamp, ws.flood, True)
        if cut:
            return True
    return False


_NO_I32_3 = np.zeros((1, 1, 1), np.int32)
_NO_I64_3 = np.zeros((1, 1, 1), np.int64)
_NO_I32_2 = np.zeros((1, 1), np.int32)
_NO_I64_2 = np.zeros((1, 1), np.int64)


def _lazy_args(space: SearchSpace, L: int) -> tuple:
    """The kernel's last arguments: lz, soft, hist, soft_via, hist_top, pf, crowd, crowd price, cap,
    the added cell and hole costs and whether they are given."""
    lz = space.lazy
    if lz is None:
        return (0, _NO_I32_3, _NO_I64_3, _NO_I32_2, _NO_I64_2, 0.0, _NO_I32_2, 0, 2**24, _NO_I64_3, _NO_I64_2, False)
    crowd = _NO_I32_2 if lz.crowd is None else lz.crowd
    cprice = 0 if lz.crowd is None else int(lz.crowd_price)
    has_add = lz.add_cell is not None
    add_cell = np.ascontiguousarray(lz.add_cell, dtype=np.int64) if has_add else _NO_I64_3
    add_hole = np.ascontiguousarray(lz.add_hole, dtype=np.int64) if has_add else _NO_I64_2
    return (2 if lz.strict else 1, lz.soft, lz.hist, lz.soft_via, lz.hist_top, float(lz.pf), crowd, cprice,
            int(lz.cap), add_cell, add_hole, has_add)


def _as_cells(rows, L, ny, nx, what) -> np.ndarray:
    a = np.asarray(rows, dtype=np.int64).reshape(-1, 3)
    if a.size and ((a[:, 0] < 0).any() or (a[:, 0] >= L).any() or (a[:, 1] < 0).any() or (a[:, 1] >= ny).any()
                   or (a[:, 2] < 0).any() or (a[:, 2] >= nx).any()):
        raise ValueError(f"{what} has a cell outside the grid {(L, ny, nx)}")
    return np.ascontiguousarray(a)


#: At most this many boxes hold a search's targets for its heuristic (each costs a few
#: comparisons per state; our choice).
MAX_BOXES = 8
#: Target boxes closer than this many cells are one box (a pad's access cells stay together, so
#: the search over one terminal is the search over its one box; our choice).
MERGE_GAP = 8
#: Targets whose one box spans at most this many cells (width + height) keep that one box: the
#: plain search inside a small box is cheap, cheaper than the two searches of far-apart targets
#: (:func:`find_path`; our choice).
ONE_BOX_SPAN = 64


def target_boxes(targets: np.ndarray, most: int = MAX_BOXES, gap: int = MERGE_GAP) -> np.ndarray:
    """Boxes (x0, y0, x1, y1) in cells, at most `most`, that hold every target cell (l, j, i):
    the bounds of the targets in each square tile of the grid (the tile doubled until there are
    at most 64), then the two nearest boxes joined into their bounds while they are less than
    `gap` cells apart or more than `most`; one box when all the targets lie within
    :data:`ONE_BOX_SPAN`. The search's heuristic is the least over them (:func:`_heuristic_boxes`):
    targets in clusters far apart keep a box each."""
    t = np.asarray(targets, dtype=np.int64).reshape(-1, 3)
    one = np.array([[t[:, 2].min(), t[:, 1].min(), t[:, 2].max(), t[:, 1].max()]], dtype=np.int64)
    if (one[0, 2] - one[0, 0]) + (one[0, 3] - one[0, 1]) <= ONE_BOX_SPAN:
        return one
    tile = max(1, int(gap))
    while True:
        key = (t[:, 1] // tile) * (1 << 31) + t[:, 2] // tile
        groups, inv = np.unique(key, return_inverse=True)
        if len(groups) <= 64:
            break
        tile *= 2
    # each tile's bounds at once: the targets sorted by tile, reduced between the tiles' starts
    by = np.argsort(inv.ravel(), kind="stable")
    starts = np.searchsorted(inv.ravel()[by], np.arange(len(groups)))
    xs, ys = t[by, 2], t[by, 1]
    boxes = np.stack([np.minimum.reduceat(xs, starts), np.minimum.reduceat(ys, starts),
                      np.maximum.reduceat(xs, starts), np.maximum.reduceat(ys, starts)], axis=1).astype(np.int64)
    x0, y0, x1, y1 = (boxes[:, k] for k in range(4))
    d = (np.maximum(0, np.maximum(x0[:, None] - x1[None, :], x0[None, :] - x1[:, None]))
         + np.maximum(0, np.maximum(y0[:, None] - y1[None, :], y0[None, :] - y1[:, None])))
    far = np.iinfo(np.int64).max
    np.fill_diagonal(d, far)
    # a box joined into another is taken out by its row and column set to `far` (in place of
    # deleting it: the boxes left keep their order, so the first nearest pair is the same)
    alive = np.ones(len(boxes), bool)
    left = len(boxes)
    while left > 1:
        a, b = divmod(int(np.argmin(d)), len(boxes))       # the first nearest pair: a fixed choice
        if d[a, b] >= gap and left <= most:
            break
        boxes[a, :2] = np.minimum(boxes[a, :2], boxes[b, :2])
        boxes[a, 2:] = np.maximum(boxes[a, 2:], boxes[b, 2:])
        alive[b] = False
        left -= 1
        row = (np.maximum(0, np.maximum(x0[a] - x1, x0 - x1[a])) + np.maximum(0, np.maximum(y0[a] - y1, y0 - y1[a])))
        row[~alive] = far
        row[a] = far
        d[a, :] = row
        d[:, a] = row
        d[b, :] = far
        d[:, b] = far
    return boxes[alive]


#: The least cost of entering a target (search units) above which :func:`find_path` puts it in
#: the heuristic (two searches; below it one plain search is cheaper: our choice, one grid step).
ENTRY_MIN = STEP


def _entry_cost(space: SearchSpace, tgt: np.ndarray, src: np.ndarray, tmask: Optional[np.ndarray] = None) -> int:
    """The least extra cost of entering any target cell (0 when a source is a target). `tmask`:
    the targets marked on the grid (find_path's), read at the sources instead of sorting them."""
    L, ny, nx = space.shape
    if tmask is not None:
        if tmask[src[:, 0], src[:, 1], src[:, 2]].any():
            return 0
    else:
        key_t = (tgt[:, 0] * ny + tgt[:, 1]) * nx + tgt[:, 2]
        key_s = (src[:, 0] * ny + src[:, 1]) * nx + src[:, 2]
        if np.isin(key_s, key_t).any():
            return 0
    at = (tgt[:, 0], tgt[:, 1], tgt[:, 2])
    lz = space.lazy
    if lz is None:
        return int(space.extra[at].min())
    # LazyCosts.cell_cost over the targets at once (the same float64 arithmetic and truncation)
    e = np.zeros(len(tgt), np.int64)
    if not lz.strict:
        e = np.minimum(lz.pf * lz.soft[at].astype(np.float64) + lz.hist[at].astype(np.float64),
                       float(lz.cap)).astype(np.int64)
    if lz.add_cell is not None:
        e = np.minimum(e + lz.add_cell[at].astype(np.int64), lz.cap)
    return int(e.min())


_EXPANDED = [0]
_LIMIT = [-1]                            # states_expanded() at which searches stop (work_limit); -1: none


def states_expanded() -> int:
    """States the searches of this process have expanded so far (a caller's budget of work:
    the difference across its searches)."""
    return _EXPANDED[0]


@contextmanager
def work_limit(most: Optional[int]):
    """Within it, a search stops once :func:`states_expanded` reaches `most` (None: no limit) and
    :func:`find_path` answers OVER_BOUND, as if no path lay within the caller's bound: a caller
    whose whole try has a budget of work stops inside a search, not only between searches."""
    was = _LIMIT[0]
    _LIMIT[0] = -1 if most is None else max(0, int(most))
    try:
        yield
    finally:
        _LIMIT[0] = was


def find_path(space: SearchSpace, sources, targets, *, bend: int, via: int, jump: int = 0,
              step: int = STEP, order=(0, 1, 2, 3), bound: Optional[int] = None) -> Optional[Path]:
    """The cheapest path from any source cell to any target cell, or None.

    Parameters
    ----------
    space : SearchSpace
    sources, targets : array-like of int rows (l, j, i)
        Source cells are left in any direction at no bend cost; the path ends on
        the first target cell reached. Sources and targets need not be open cells
        themselves (a pad's own cells are usually open for its net anyway).
    bend, via, jump, step : int
        Costs, all non-negative integers in one unit (see :data:`STEP`). A bend is paid for
        every change of heading, at a cell, across a via or at a jumper end.
    order : sequence of the four headings 0..3
        The order in which steps are tried: among paths of equal cost it decides which is
        found (a routing seed varies it); the cost found is the same for every order.
    bound : int, optional
        The most the caller will take: states whose cost so far plus the heuristic exceed it
        are left out, so a search that cannot end within it stops early instead of sweeping
        the board. A path of cost at most `bound` is the one found without it (a left-out
        state lies on no such path, and the states it would have set are all costlier than
        the ones kept).

    Returns
    -------
    Path or None or OVER_BOUND
        OVER_BOUND (false, like None) when no path was found and some state was left out for
        `bound`: a dearer path may exist.

    Notes
    -----
    Costs are integers so that ties and results are exact and repeatable. A jumper
    of ``k`` cells costs ``jump + step * k`` so that the distance part of the heuristic
    stays admissible.

    Examples
    --------
    >>> import numpy as np
    >>> L, ny, nx = 1, 3, 4
    >>> ones = np.ones((L, ny, nx), np.uint8)
    >>> sp = SearchSpace(ones, ones, ones, np.zeros((ny, nx), np.uint8), np.zeros((L, ny, nx), np.int32))
    >>> p = find_path(sp, [(0, 0, 0)], [(0, 2, 3)], bend=50, via=0)
    >>> p.cost, p.bends, len(p.cells)
    (550, 1, 6)
    """
    for name, v in (("bend", bend), ("via", via), ("jump", jump), ("step", step)):
        if int(v) != v or v < 0:
            raise ValueError(f"{name} cost must be a non-negative integer, not {v!r}")
    L, ny, nx = space.shape
    src = _as_cells(sources, L, ny, nx, "sources")
    tgt = _as_cells(targets, L, ny, nx, "targets")
    if len(src) == 0 or len(tgt) == 0:
        return None
    nds = NDIR_JUMP if space.has_jumpers else NDIR
    ws = _workspace(L * ny * nx * nds)
    tmask = ws.target_mask((L, ny, nx))       # kept clear between searches: set here, cleared below
    tmask[tgt[:, 0], tgt[:, 1], tgt[:, 2]] = 1
    tlayer = np.zeros(L, dtype=np.uint8)
    tlayer[np.unique(tgt[:, 0])] = 1
    boxes = target_boxes(tgt)
    one = np.array([[tgt[:, 2].min(), tgt[:, 1].min(), tgt[:, 2].max(), tgt[:, 1].max()]], dtype=np.int64)
    order = np.asarray(order, dtype=np.int64)
    if sorted(order.tolist()) != [0, 1, 2, 3]:
        raise ValueError(f"order must hold each heading 0..3 once, not {order.tolist()}")
    jump_ok, wire_rows, wire_cols, jump_cells = space.jumper_arrays()
    # the largest rise of f = g + h in one move bounds the live keys to one window of buckets
    kmax = int(jump_cells.max()) if len(jump_cells) else 1
    max_extra = space.extra_max() + 2 * space.hole_extra_max()
    span = (max(step + bend, via, jump + step * kmax) + max_extra) + step * kmax + 2 * max(bend, via, jump) + via
    span += step * (nx + ny) + 2 * max(bend, via, jump)     # spread of the sources' keys
    head = ws.buckets(span)
    lazy_args = _lazy_args(space, L)
    def run(key_boxes, prune_boxes, bound, k_e=0, p_e=0):
        most = -1 if _LIMIT[0] < 0 else _LIMIT[0] - _EXPANDED[0]
        if _LIMIT[0] >= 0 and most <= 0:
            return -4, 0
        out = _run(key_boxes, prune_boxes, bound, k_e, p_e, most)
        _EXPANDED[0] += out[1]
        return out

    def _run(key_boxes, prune_boxes, bound, k_e, p_e, most):
        while True:
            stamp = ws.next_stamp()
            end, n = _astar(space.open_cell, space.open_h, space.open_v, space.via_ok, space.extra,
                            space.hole_extra,
                            jump_ok, wire_rows, wire_cols, jump_cells, src, tmask, key_boxes, prune_boxes, bound,
                            int(k_e), int(p_e),
                            tlayer, int(step), int(bend), int(via), int(jump), order, nds,
                            ws.stamp_of, ws.g, ws.parent, stamp, head, ws.ent_state, ws.ent_g, ws.ent_next,
                            *lazy_args, int(most))
            if end != -2:
                return end, n
            ws.grow_pool(2 * ws.ent_state.shape[0])

    limit = -1 if bound is None else max(0, int(bound))
    entry = _entry_cost(space, tgt, src, tmask)
    def pick_tie(end, expanded, prune, p_e=0):
        # the least cost found (`end`), the plain search's choice among the equally cheap paths:
        # the search keyed by the one box around all targets, every state that cannot end within
        # that cost left out by the `prune` boxes (skipped with any_tie)
        if end >= 0 and not space.any_tie:
            best = int(ws.g[end])
            end, n = run(one, prune, best, 0, p_e)
            expanded += n
            if end < 0:                  # not expected (the bound is admissible); the plain search then
                end, n = run(one, one, limit)
                expanded += n
        return end, expanded

    try:
        if (bound is None and not space.has_jumpers and not tmask[src[:, 0], src[:, 1], src[:, 2]].any()
                and _cut_off_sides(space, src, tgt, tmask, ws)):
            # a side walled in (a pad in a pocket of other nets' copper): the search would sweep all
            # the other side reaches to find nothing. (Unbounded searches only: a bounded one that
            # finds nothing says whether its bound left states out, which the caller reads.)
            return None
        if entry >= ENTRY_MIN:
            # every path pays at least `entry` on its last move (into a target cell): first the
            # least cost with that in the heuristic (sharper: the search no longer sweeps every
            # state cheaper than the congestion at the targets), then the search keyed as below
            # without it, every state that cannot end within that cost left out (the same path)
            kb = boxes if len(boxes) > 1 else one
            end, expanded = pick_tie(*run(kb, kb, limit, entry, entry), kb, entry)
        elif len(boxes) == 1:
            end, expanded = run(one, one, limit)
        elif limit >= 0:
            # the least cost within the caller's bound
            end, expanded = pick_tie(*run(boxes, boxes, limit), boxes)
        else:
            # targets in clusters far apart: first the least cost, with the heuristic the least over
            # the clusters' boxes (sharp, so the search stays near the clusters); then the search
            # keyed by the one box around all targets as before, with every state whose bound over
            # the clusters exceeds that cost left out: the same choice among equal paths as the
            # plain search, without its sweep of the whole box
            end, expanded = pick_tie(*run(boxes, boxes, -1), boxes)
    finally:
        tmask[tgt[:, 0], tgt[:, 1], tgt[:, 2]] = 0
    if (end == -3 and limit >= 0) or end == -4:
        return OVER_BOUND
    if end < 0:
        return None
    states = []
    s = end
    while s >= 0:
        states.append(s)
        s = int(ws.parent[s])
    states.reverse()
    st = np.array(states, dtype=np.int64)
    c = st // nds
    cells = np.stack([c // (nx * ny), (c // nx) % ny, c % nx], axis=1)
    bends, vias, jumpers = _count(cells)
    return Path(cells, int(ws.g[end]), bends, vias, jumpers, int(expanded))


def _moves(cells: np.ndarray):
    """Each move of a cell path: (kind, heading, cells moved), kind "step", "via" or "jumper"."""
    for k in range(1, len(cells)):
        (l0, j0, i0), (l1, j1, i1) = (int(v) for v in cells[k - 1]), (int(v) for v in cells[k])
        if l0 != l1:
            yield "via", None, 0
            continue
        dist = abs(j1 - j0) + abs(i1 - i0)
        di, dj = (i1 - i0) // max(dist, 1), (j1 - j0) // max(dist, 1)
        d = {(1, 0): 0, (0, 1): 1, (-1, 0): 2, (0, -1): 3}[(di, dj)]
        yield ("jumper" if dist > 1 else "step"), d, dist


def _count(cells: np.ndarray) -> tuple[int, int, int]:
    """Bends, vias and jumpers of a cell path: a bend is any change of heading, across vias and jumpers."""
    c = np.asarray(cells, dtype=np.int64).reshape(-1, 3)
    d = np.diff(c, axis=0)
    via = d[:, 0] != 0
    dj, di = d[~via, 1], d[~via, 2]
    heading = np.where(di > 0, 0, np.where(dj > 0, 1, np.where(di < 0, 2, 3)))
    jumpers = int(((np.abs(dj) + np.abs(di)) > 1).sum())
    return int((heading[1:] != heading[:-1]).sum()), int(via.sum()), jumpers


def _count_moves(cells: np.ndarray) -> tuple[int, int, int]:
    """:func:`_count` move by move (the reference the tests hold it to)."""
    bends = vias = jumpers = 0
    heading = NONE
    for kind, d, _ in _moves(cells):
        if kind == "via":
            vias += 1
            continue
        jumpers += kind == "jumper"
        if heading != NONE and d != heading:
            bends += 1
        heading = d
    return bends, vias, jumpers


def path_cost(space: SearchSpace, cells, *, bend: int, via: int, jump: int = 0, step: int = STEP) -> int:
    """The cost of a given cell path under the same rules (for tests and tidy-up)."""
    cells = np.asarray(cells, dtype=np.int64)
    cost = 0
    heading = NONE
    for k, (kind, d, dist) in enumerate(_moves(cells), start=1):
        (l0, j0, i0), (l1, j1, i1) = cells[k - 1], cells[k]
        cost += space.cell_cost(int(l1), int(j1), int(i1))
        if kind == "via":
            cost += via + space.hole_cost(int(j1), int(i1))
            continue
        if kind == "jumper":
            cost += jump + step * dist + space.hole_cost(int(j0), int(i0)) + space.hole_cost(int(j1), int(i1))
        else:
            cost += step
        if heading != NONE and d != heading:
            cost += bend
        heading = d
    return cost


def reference_graph(space: SearchSpace, sources, targets, *, bend: int, via: int, jump: int = 0,
                    step: int = STEP):
    """The same expanded state graph as a networkx DiGraph, for tests and benchmarks.

    Nodes are (l, j, i, d) (d a heading 0..3, 4 none, 5..8 landed from a jumper) plus
    "S" (joined to the heading-less state of every source cell at cost 0) and "T"
    (joined from every state of every target cell at cost 0); edge attribute
    ``weight``. A via keeps the heading; a step or jumper in another heading pays a bend. Built with plain Python loops, independently of the compiled
    engine, so that networkx's Dijkstra or A* on it is an outside reference.
    """
    import networkx as nx_

    L, ny, nx = space.shape
    G = nx_.DiGraph()
    jump_cells = [] if not space.has_jumpers else [int(k) for k in space.jump_cells]
    wire = None if space.wire_block is None else space.wire_block
    nds = NDIR_JUMP if jump_cells else NDIR

    def cell_open(l, j, i):
        return 0 <= i < nx and 0 <= j < ny and space.open_cell[l, j, i] != 0

    def add_jumpers(u, l, j, i, hd):
        """Edges for every jumper that may leave cell (l, j, i) from state u with heading hd."""
        if not jump_cells or not space.jump_ok[j, i]:
            return
        for k in jump_cells:
            for nd in range(4):
                if hd != NONE and nd == (hd + 2) % 4:
                    continue
                ni, nj = i + k * int(_DI[nd]), j + k * int(_DJ[nd])
                if not cell_open(l, nj, ni) or not space.jump_ok[nj, ni]:
                    continue
                if wire is not None:
                    span = wire[j, min(i, ni):max(i, ni) + 1] if nd in (0, 2) else wire[min(j, nj):max(j, nj) + 1, i]
                    if span.any():
                        continue
                G.add_edge(u, (l, nj, ni, 5 + nd), weight=jump + step * k + space.cell_cost(l, nj, ni)
                           + space.hole_cost(j, i) + space.hole_cost(nj, ni)
                           + (bend if hd != NONE and nd != hd else 0))

    for l in range(L):
        for j in range(ny):
            for i in range(nx):
                for d in range(nds):
                    u = (l, j, i, d)
                    hd = _heading(d)
                    for nd in range(4):
                        if hd != NONE and nd == (hd + 2) % 4:
                            continue
                        ni, nj = i + int(_DI[nd]), j + int(_DJ[nd])
                        if not cell_open(l, nj, ni):
                            continue
                        if nd == 0 and not space.open_h[l, j, i]:
                            continue
                        if nd == 2 and not space.open_h[l, j, ni]:
                            continue
                        if nd == 1 and not space.open_v[l, j, i]:
                            continue
                        if nd == 3 and not space.open_v[l, nj, i]:
                            continue
                        w = step + space.cell_cost(l, nj, ni) + (bend if hd != NONE and nd != hd else 0)
                        G.add_edge(u, (l, nj, ni, nd), weight=w)
                    if L == 2 and space.via_ok[j, i] and cell_open(1 - l, j, i):
                        G.add_edge(u, (1 - l, j, i, d),
                                   weight=via + space.cell_cost(1 - l, j, i) + space.hole_cost(j, i))
                    if d < 5:
                        add_jumpers(u, l, j, i, hd)
    for (l, j, i) in np.asarray(sources).reshape(-1, 3):
        G.add_edge("S", (int(l), int(j), int(i), NONE), weight=0)
    for (l, j, i) in np.asarray(targets).reshape(-1, 3):
        for d in range(nds):
            G.add_edge((int(l), int(j), int(i), d), "T", weight=0)
    return G
