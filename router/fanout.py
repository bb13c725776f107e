"""Fan-out plan of a fine-pitch part: one exit per scarce pad, chosen for the whole row at once.

In a row of 0.5 or 0.65 mm pitch pads, each pad's exits (:func:`router.escape.escape_access`)
are found alone, and the exits of neighbouring pads fit only together: one pad's exit takes
the grid point its neighbour needs. A designer fans such a part out before routing anything
else. :class:`FanoutPlan` does the same, once, before negotiation: for every part whose pads
have scarce exits (necks, or few access cells: :func:`scarce`), every such pad's candidate
exits on the board without routed copper are measured against each other exactly
(:func:`compatible`), and one exit per pad is chosen so that all chosen exits keep their
classes' clearance, with the least total length and bends (:func:`plan_row`: a dynamic
programme along each side of the part; a side with no compatible set among the shortest exits
is planned again with exits to further grid rows, :data:`MORE_EXITS`, then with exits deep
enough for a staircase of half its pads, :func:`stair_depth`). The chosen exits are then
reserved: another net's copper or via near a planned exit costs :data:`PLAN_STEPS` grid steps
per grid point, and another net's candidate exit that comes too close to one costs as much again; the pad's own
net keeps all its exits.

References
----------
.. [1] R. Bellman, "Dynamic Programming", 1957 (a chain's optimum from its prefixes' optima).
"""
from __future__ import annotations

import itertools
import math
from collections import defaultdict
from dataclasses import dataclass, field
from typing import Callable, Optional, Sequence

import numpy as np
import shapely
from shapely.geometry import LineString, Point

from .escape import SCARCE, EscapeVia, Neck, _body_centre
from .units import TOL

__all__ = ["PLAN_STEPS", "PLAN_EXITS", "MORE_EXITS", "PLAN_DEEPER", "STAIR_JOG", "STAIR_EXITS", "stair_depth", "Candidate", "scarce", "candidates", "compatible", "plan_row", "FanoutPlan"]

#: The price, in grid steps per grid point, another net pays for its copper or via within reach
#: of a planned exit (and once more for a candidate exit of its own that comes too close to
#: one). Our choice: far dearer than a detour round a fine-pitch part, but not a wall, so a
#: plan that proves wrong in negotiation can still be overruled.
PLAN_STEPS = 25
#: How many exits of each planned pad the plan weighs at most, each way out (our choice: enough
#: for a staircase of several grid rows on a 0.25 mm grid within ``neck_length``).
PLAN_EXITS = 12
#: How many exits each way a side with no compatible set among :data:`PLAN_EXITS` weighs (our
#: choice: a quad side of five signals stepping one way needs five grid rows; the shortest twelve
#: reach three, see docs/measurements.md).
MORE_EXITS = 24
#: How many grid pitches beyond ``neck_length`` a planned exit of the class width may reach
#: (our choice: two, so that a row of pads stepping aside one after another finds its rows).
PLAN_DEEPER = 2
#: The largest sideways run, in grid pitches, of the exits a side is planned with last
#: (:func:`stair_depth`; our choice: a staircase's steps need one or two, and the rows of a deep
#: staircase would otherwise be crowded out by wide runs near the pads).
STAIR_JOG = 2
#: At most this many exits of each pad are weighed at that last planning, the shortest first (our
#: choice: the programme's time grows with the cube of it; 64 reach 12 grid rows of a 0.25 mm grid,
#: see docs/measurements.md).
STAIR_EXITS = 64
#: A bend of an exit counts as this many grid pitches of length in the plan's cost (our choice).
BEND_PITCHES = 1.0


@dataclass
class Candidate:
    """One exit of one pad: its access cell, its copper pieces and its cost in the plan."""
    net: str
    pad: object                      # PlacedPad
    cell: tuple                      # (l, j, i)
    path: object                     # the access cache's value: None, a stub, a Neck or an EscapeVia
    items: list = field(default_factory=list)     # (shapely geometry, radius, layer mask)
    cost: float = 0.0


def scarce(acc: dict) -> Optional[dict]:
    """The exits of a pad of a fine-pitch part whose ways out are scarce, or None: its access
    (cell -> path) without escape vias when no grid point lies in its copper (every way out
    leaves the grid: stubs, exits, necks), or when it has at most
    :data:`router.escape.SCARCE` cells; its escape vias when it has nothing else."""
    plain = {c: v for c, v in acc.items() if not isinstance(v, EscapeVia)}
    if plain:
        if len(plain) <= SCARCE or all(v is not None for v in plain.values()):
            return plain
        return None
    return dict(acc) or None


def _bends(pts) -> int:
    n = 0
    for a, b, c in zip(pts, pts[1:], pts[2:]):
        u = (b[0] - a[0], b[1] - a[1])
        v = (c[0] - b[0], c[1] - b[1])
        if abs(u[0] * v[1] - u[1] * v[0]) > TOL:
            n += 1
    return n


def candidates(grid, net: str, pad, acc: dict) -> list[Candidate]:
    """The pad's exits as :class:`Candidate`: the exit's segments at its width (a neck's, or
    the class's), and its end grid point as a disc of the class width, where the net goes on
    at the class width; an escape via as its link and its disc on every layer."""
    prof = grid.profile_of(net)
    cw = prof.width
    every = (1 << grid.L) - 1
    out = []
    for c in sorted(acc):
        path = acc[c]
        end = grid.point(c[1], c[2])
        items = []
        if isinstance(path, EscapeVia):
            pts = list(path)
            w = getattr(path, "width", cw)
            for a, b in zip(pts, pts[1:]):
                if a != b:
                    items.append((LineString([a, b]), w / 2, 1 << path.layer))
            items.append((Point(end), grid.via_d / 2, every))
            length = sum(math.dist(a, b) for a, b in zip(pts, pts[1:])) + grid.via_d
        else:
            pts = list(path) if path else []
            if pts and pts[-1] != end:
                pts.append(end)
            w = getattr(path, "width", cw) if path else cw
            for a, b in zip(pts, pts[1:]):
                if a != b:
                    items.append((LineString([a, b]), w / 2, 1 << c[0]))
            items.append((Point(end), cw / 2, 1 << c[0]))
            length = sum(abs(a[0] - b[0]) + abs(a[1] - b[1]) for a, b in zip(pts, pts[1:]))
        cost = length + BEND_PITCHES * grid.pitch * _bends(pts)
        out.append(Candidate(net, pad, c, path, items, round(cost, 6)))
    return out


def compatible(grid, a: Candidate, b: Candidate) -> bool:
    """Whether two exits of different nets keep their classes' clearance everywhere on a shared
    layer, measured exactly (shapely: segment to segment and to the end discs, radii taken off).
    Exits of one net are always compatible."""
    if a.net == b.net:
        return True
    pa, pb = grid.profile_of(a.net), grid.profile_of(b.net)
    need = pa.clearance_to.get(grid.net_class.get(b.net, "default"), pa.clearance_to["default"])
    for ga, ra, la in a.items:
        for gb, rb, lb in b.items:
            if la & lb and shapely.distance(ga, gb) - ra - rb < need - TOL:
                return False
    return True


def plan_row(costs: Sequence[Sequence[float]], ok: Callable[[int, int, int, int], bool]) -> Optional[list[int]]:
    """One choice per pad of a row, every pair of pads at most two apart compatible, least total cost.

    Parameters
    ----------
    costs : sequence of sequences of float
        ``costs[k][a]``: the cost of the `a`-th exit of the `k`-th pad along the row.
    ok : callable (k, a, q, b) -> bool
        Whether exit `a` of pad `k` and exit `b` of pad `q` (q < k) can be laid together.

    Returns
    -------
    list of int or None
        The chosen exit of each pad, or None when no choice satisfies every pair.

    Notes
    -----
    A dynamic programme over the row [1]_: the state after pad k is the choice of pads k-1 and
    k; pads three or more apart are taken as compatible (in a row they are: the neighbours
    between them are in the way). Ties go to the earlier exits. Time O(n m^3) for n pads of at
    most m exits each.

    Examples
    --------
    >>> plan_row([[1, 2], [1, 2]], lambda k, a, q, b: a != b)
    [0, 1]
    >>> plan_row([[1], [1]], lambda k, a, q, b: False) is None
    True
    """
    n = len(costs)
    if n == 0:
        return []
    if any(len(c) == 0 for c in costs):
        return None
    # best[(b, a)] = (cost, back): b the choice of pad k-1 (-1 before the row), a that of pad k
    best = {(-1, a): (float(costs[0][a]), None) for a in range(len(costs[0]))}
    trail = [best]
    for k in range(1, n):
        nxt: dict = {}
        for (c, b), (v, _) in sorted(best.items()):
            for a in range(len(costs[k])):
                if not ok(k, a, k - 1, b) or (c >= 0 and not ok(k, a, k - 2, c)):
                    continue
                w = v + float(costs[k][a])
                if (b, a) not in nxt or w < nxt[(b, a)][0] - 1e-12:
                    nxt[(b, a)] = (w, (c, b))
        if not nxt:
            return None
        best = nxt
        trail.append(best)
    state = min(best, key=lambda s: (best[s][0], s))
    out = []
    for k in range(n - 1, -1, -1):
        out.append(state[1])
        state = trail[k][state][1]
    return out[::-1]


def stair_depth(grid, nets: Sequence[str]) -> float:
    """How much deeper than the first grid row the exits of a side with the pads of `nets` (in
    row order) may have to reach: half of them (rounded up) stepping aside one after another,
    each one trace width plus one clearance (the widest of the side's classes) beyond the one
    before. On a 0.5 mm pitch row with 0.25 mm traces and clearance, every trace but the first
    of those turning one way needs 0.5 mm more (a turn or a step onto the grid passes the end
    of its neighbour's exit at the class clearance only that much further out: common practice
    in fanning out an orthogonal row; measured in docs/measurements.md).

    >>> class G:
    ...     def profile_of(self, net):
    ...         return type("P", (), {"width": 0.25, "clearance_to": {"default": 0.25}})()
    >>> stair_depth(G(), ["A", "B", "C", "D", "E", "F", "G"])
    2.0
    """
    step = max(grid.profile_of(n).width + max(grid.profile_of(n).clearance_to.values()) for n in nets)
    return math.ceil(len(nets) / 2) * step


def _side(pad, centre, core) -> tuple:
    """Which side of its part a pad sits on: the axis of its long side (or of its offset from
    the part's centre, for a square pad) and the sign of its offset along it."""
    x0, y0, x1, y1 = core.bounds
    dx, dy = pad.x - centre[0], pad.y - centre[1]
    wide, tall = x1 - x0, y1 - y0
    if abs(wide - tall) > TOL:
        axis = 0 if wide > tall else 1
    else:
        axis = 0 if abs(dx) >= abs(dy) else 1
    off = dx if axis == 0 else dy
    return axis, (1 if off >= 0 else -1)


class FanoutPlan:
    """The fan-out of a board's fine-pitch parts: the chosen exit of every scarce pad, and what
    reserving them costs each net.

    Parameters
    ----------
    grid : RoutingGrid
    access : dict
        (net, ref, pad index) -> {access cell: path}: every pad's exits on the board without
        routed copper (the grid's access cache, :func:`router.nets.terminals`).
    pads : dict
        (net, ref, pad index) -> PlacedPad.
    more : callable, optional
        ((net, ref, pad index), stair) -> more exits of that pad ({access cell: path}): with
        `stair` None, :data:`MORE_EXITS` each way; else the :data:`STAIR_EXITS` shortest exits up
        to `stair` mm deeper whose sideways run is at most :data:`STAIR_JOG` grid pitches. A side of a part with no
        compatible set among the pads' `access` is planned again with the first, then with the
        second and the pads' `access` (:func:`stair_depth`), before it is planned greedily.

    Attributes
    ----------
    chosen : dict
        (net, ref, pad index) -> the planned :class:`Candidate`.
    notes : list of str
        Sides where no compatible set exists (planned greedily) and pairs left in conflict.
    """

    def __init__(self, grid, access: dict, pads: dict, more: Optional[Callable] = None):
        self.grid = grid
        self._more = more
        self._access = access
        self.chosen: dict = {}
        self.notes: list[str] = []
        self.cands: dict = {}                       # key -> [Candidate]
        by_part: dict = defaultdict(list)
        for key in sorted(access, key=lambda k: (k[1], k[2], k[0])):
            got = scarce(access[key])
            if not got:
                continue
            net, ref, _ = key
            cs = candidates(grid, net, pads[key], got)
            if cs:
                self.cands[key] = cs
                by_part[ref].append(key)
        for ref in sorted(by_part):
            self._plan_part(ref, by_part[ref])
        self._reserve()

    # ------------------------------------------------------------------ planning
    def _plan_part(self, ref: str, keys: list) -> None:
        grid = self.grid
        some = self.cands[keys[0]][0].pad
        centre = _body_centre(grid.board, ref) or (some.x, some.y)
        sides: dict = defaultdict(list)
        for key in keys:
            pad = self.cands[key][0].pad
            core, _ = grid.layout.core_of(pad)
            axis, sign = _side(pad, centre, core)
            sides[(axis, sign, tuple(pad.layers))].append(key)
        for side in sorted(sides):
            row = sorted(sides[side], key=lambda k: ((self.cands[k][0].pad.y if side[0] == 0
                                                      else self.cands[k][0].pad.x), k))
            pick = self._pick(row)
            if pick is None and self._more is not None:
                # further grid rows for every pad of the side (a deeper staircase), then again
                for k in row:
                    got = scarce({**self._more(k, None), **{c.cell: c.path for c in self.cands[k]}})
                    if got:
                        self.cands[k] = candidates(grid, k[0], self.cands[k][0].pad, got)
                pick = self._pick(row)
            if pick is None and self._more is not None:
                # rows deep enough for half the side stepping aside one after another, short steps only
                stair = stair_depth(grid, [k[0] for k in row])
                kept = dict(self.cands)
                for k in row:
                    got = scarce({**self._more(k, stair), **self._access[k]})
                    if got:
                        self.cands[k] = candidates(grid, k[0], self.cands[k][0].pad, got)
                pick = self._pick(row)
                if pick is None:
                    self.cands.update({k: kept[k] for k in row})
            cs = [self.cands[k] for k in row]
            if pick is None:
                self.notes.append(f"{ref}: no compatible exits for pads "
                                  f"{', '.join(cs[k][0].pad.name for k in range(len(cs)))}: planned greedily")
                pick = self._greedy(cs)
            for key, a in zip(row, pick):
                if a is not None:
                    self.chosen[key] = self.cands[key][a]
        # pads of different sides (a quad's corners) or further apart than the programme looks
        left = sorted(k for k in keys if k in self.chosen)
        for x, y in itertools.combinations(left, 2):
            if not compatible(grid, self.chosen[x], self.chosen[y]):
                self._repair(y, [self.chosen[k] for k in left if k != y])

    def _pick(self, row: list) -> Optional[list]:
        """The programme's choice along one side (:func:`plan_row`), or None."""
        cs = [self.cands[k] for k in row]
        memo: dict = {}

        def ok(k, a, q, b):
            m = (k, a, q, b)
            if m not in memo:
                memo[m] = compatible(self.grid, cs[k][a], cs[q][b])
            return memo[m]

        return plan_row([[c.cost for c in cc] for cc in cs], ok)

    def _greedy(self, cs: list) -> list:
        """Along the row, the cheapest exit compatible with every exit chosen before it (None
        where none is)."""
        pick, laid = [], []
        for cc in cs:
            a = next((q for q in sorted(range(len(cc)), key=lambda q: (cc[q].cost, q))
                      if all(compatible(self.grid, cc[q], o) for o in laid)), None)
            pick.append(a)
            if a is not None:
                laid.append(cc[a])
        return pick

    def _repair(self, key, others: list) -> None:
        for c in sorted(self.cands[key], key=lambda c: c.cost):
            if all(compatible(self.grid, c, o) for o in others):
                self.chosen[key] = c
                return
        self.notes.append(f"{self.chosen[key].pad.name}: its planned exit conflicts with another part side's")

    # ------------------------------------------------------------------ reserving
    def _reserve(self) -> None:
        """Per net, the grid points (cells, via places) within reach of its planned exits, and
        per net the access cells of its candidates that conflict with another net's plan."""
        grid = self.grid
        from .search import STEP
        self.unit = int(PLAN_STEPS * STEP)
        self.cost = np.zeros((grid.L, grid.ny, grid.nx), np.int64)
        self.via_cost = np.zeros((grid.ny, grid.nx), np.int64)
        self.own: dict[str, tuple] = {}
        self.own_cells: dict[str, set] = {}
        thin = min(p.half for p in grid.profiles.values())
        zones: dict = defaultdict(lambda: (np.zeros((grid.L, grid.ny, grid.nx), np.int32),
                                           np.zeros((grid.ny, grid.nx), np.int32)))
        for key, c in sorted(self.chosen.items()):
            net = key[0]
            clear = max(grid.profile_of(net).clearance_to.values())
            cells, vias = zones[net]
            for geom, rad, mask in c.items:
                box = tuple(float(v) for v in geom.bounds)
                for l in range(grid.L):
                    if mask >> l & 1:
                        grid._stamp_points(box, rad + clear + thin, 1, cells[l])
                grid._stamp_points(box, rad + clear + grid.via_d / 2, 1, vias)
        for net in sorted(zones):
            cells, vias = zones[net]
            mine = (np.argwhere(cells > 0), np.argwhere(vias > 0))
            self.own[net] = mine
            self.own_cells[net] = set(map(tuple, mine[0].tolist()))
            self.cost[mine[0][:, 0], mine[0][:, 1], mine[0][:, 2]] += self.unit
            self.via_cost[mine[1][:, 0], mine[1][:, 1]] += self.unit
        # candidate exits that come too close to another net's planned exit (exactly)
        self.hits: dict[str, set] = defaultdict(set)
        grow = (2 * max(max(p.half for p in grid.profiles.values()), grid.via_d / 2)
                + max(v for p in grid.profiles.values() for v in p.clearance_to.values()))
        planned = sorted(self.chosen.items())
        for key, cs in sorted(self.cands.items()):
            for c in cs:
                if self.chosen.get(key) is c:
                    continue
                x0, y0, x1, y1 = _reach(c, grow)
                for okey, o in planned:
                    if okey[0] == c.net:
                        continue
                    p0, q0, p1, q1 = _reach(o, 0.0)
                    if p0 > x1 or x0 > p1 or q0 > y1 or y0 > q1:
                        continue
                    if not compatible(grid, c, o):
                        self.hits[c.net].add(c.cell)
                        break

    def zone_cost(self, net: str, c) -> int:
        """What other nets' planned exits add at grid point `c` = (l, j, i) for `net`. An exit
        off the grid is priced by the grid points beside it (:func:`router.nets._exit_price`);
        the plan's zones are left out of that price, as whether an exit clears a planned one is
        measured exactly (the conflicting ones carry the price at their access cell)."""
        v = int(self.cost[c])
        if v and c in self.own_cells.get(net, ()):
            v -= self.unit
        return v

    def add_to(self, net: str, extra):
        """`extra` ((per cell, per via place) costs, or None) with the plan's price for `net`
        added: the grid points and via places near other nets' planned exits."""
        if not self.own and not self.hits:
            return extra
        grid = self.grid
        if extra is None:
            cells = np.zeros((grid.L, grid.ny, grid.nx), np.int64)
            vias = np.zeros((grid.ny, grid.nx), np.int64)
        else:
            cells, vias = extra
        cells += self.cost
        vias += self.via_cost
        mine = self.own.get(net)
        if mine is not None:
            cells[mine[0][:, 0], mine[0][:, 1], mine[0][:, 2]] -= self.unit
            vias[mine[1][:, 0], mine[1][:, 1]] -= self.unit
        return cells, vias

    def hit_cost(self, net: str, c) -> int:
        """The price of `net`'s candidate exit at access cell `c` that comes too close to
        another net's planned exit (measured exactly), else 0: added to that exit's price, not
        to the grid point (which other exits of the net pass beside)."""
        return self.unit if c in self.hits.get(net, ()) else 0


def _reach(c: Candidate, grow: float) -> tuple:
    """The box round a candidate's copper centrelines, grown by `grow` (two of the widest
    radii plus the largest clearance: a filter before the exact test)."""
    b = np.array([g.bounds for g, _, _ in c.items])
    return (b[:, 0].min() - grow, b[:, 1].min() - grow, b[:, 2].max() + grow, b[:, 3].max() + grow)
