"""A quadratic start, then simulated annealing with moves, swaps and rotations.

The start solves the quadratic placement: every net is a clique of springs of
weight 1/(k - 1) between its k pins, the parts that stay are anchors, and the
centres of the parts to place minimise the springs' energy (one linear system per
axis). Annealing then works on centres and rotations with the cost

    HPWL + w_c * congestion overflow + lam * (overlap area + blocked area)

where the overlap is between part rectangles grown by half the gap, the blocked
area is the part of a rectangle over the edge margin, a keepout or a part that
stays (a raster with a summed-area table), and lam grows from small to large
as the temperature falls, so parts first find their neighbours, then their room.
Only the nets of the moved parts are measured again after a move.

Everything random comes from ``numpy.random.default_rng(seed)``: one seed, one
placement.

References
----------
.. [1] K. M. Hall, "An r-dimensional quadratic placement algorithm", Management
   Science 17(3), 1970.
.. [2] S. Kirkpatrick, C. D. Gelatt, M. P. Vecchi, "Optimization by simulated
   annealing", Science 220(4598), 1983.
.. [3] C. Sechen, A. Sangiovanni-Vincentelli, "The TimberWolf placement and routing
   package", IEEE J. Solid-State Circuits 20(2), 1985 (range-limited moves, swaps).
"""
from __future__ import annotations

import math
from typing import Sequence

import numpy as np
import shapely

from router.geometry import part_footprint, placed_pads, transform
from router.model import Board, Part

from .legalize import Site, rect_offsets
from .wirelength import CongestionGrid, _pitch

__all__ = ["Problem", "quadratic_start", "anneal", "CONGESTION_WEIGHT"]

#: Weight of the congestion overflow against wirelength (both in mm).
CONGESTION_WEIGHT = 1.0
_ROTS = (0, 90, 180, 270)


class Problem:
    """The parts to place as arrays: rectangles, pad offsets per rotation and the nets.

    Terminals are the pads of net pins; the pads of parts that stay have fixed places.
    """

    def __init__(self, board: Board, movable: Sequence[Part], stay: Sequence[Part], site: Site):
        self.board = board
        self.parts = list(movable)
        self.site = site
        self.gap = site.gap
        n = self.n = len(self.parts)
        index = {p.ref: i for i, p in enumerate(self.parts)}
        self.offsets = [rect_offsets(board, p) for p in self.parts]
        self.off = np.array(self.offsets).reshape(n, 4, 4) if n else np.zeros((0, 4, 4))
        stay_pads: dict[str, list] = {}
        for pad in placed_pads(board, list(stay)):
            stay_pads.setdefault(pad.name, []).append(pad)
        t_part, t_off, t_fix, t_w = [], [], [], []
        pins: dict[str, list[int]] = {}
        for i, p in enumerate(self.parts):
            fp = part_footprint(board, p)
            for pad in fp.pads:
                offs = []
                for r in _ROTS:
                    probe = Part(p.ref, p.footprint, at=(0.0, 0.0), rotation=r, side=p.side)
                    offs.append(transform(probe, pad.at))
                pins.setdefault(f"{p.ref}.{pad.pin}", []).append(len(t_part))
                t_part.append(i)
                t_off.append(offs)
                t_fix.append((0.0, 0.0))
                t_w.append(pad.size[0] * pad.size[1])
        for name, pads in stay_pads.items():
            for pad in pads:
                pins.setdefault(name, []).append(len(t_part))
                t_part.append(-1)
                t_off.append([(0.0, 0.0)] * 4)
                t_fix.append((pad.x, pad.y))
                t_w.append(pad.w * pad.h)
        self.t_part = np.array(t_part, dtype=np.intp)
        self.t_off = np.array(t_off, dtype=float).reshape(-1, 4, 2)
        self.t_fix = np.array(t_fix, dtype=float).reshape(-1, 2)
        nets = []
        for net in board.nets:
            ts = [t for pin in net.pins for t in pins.get(pin, ())]
            parts_in = {int(self.t_part[t]) for t in ts}
            if len(ts) >= 2 and any(q >= 0 for q in parts_in):
                nets.append(ts)
        self.nets = nets
        width = max((len(ts) for ts in nets), default=1)
        self.rows = np.array([ts + [ts[0]] * (width - len(ts)) for ts in nets], dtype=np.intp).reshape(-1, width)
        part_nets: list[set] = [set() for _ in range(n)]
        for k, ts in enumerate(nets):
            for t in ts:
                if self.t_part[t] >= 0:
                    part_nets[self.t_part[t]].add(k)
        self.part_nets = [np.array(sorted(s), dtype=np.intp) for s in part_nets]
        self.part_terms = [np.nonzero(self.t_part == i)[0] for i in range(n)]
        # terminals in no net still take routing room; only net terminals are tracked here
        in_net = np.zeros(len(self.t_part), dtype=bool)
        for ts in nets:
            in_net[ts] = True
        self.in_net = in_net
        pitch = _pitch(board)
        self.t_weight = np.array(t_w, dtype=float) / pitch
        self.region_bounds = site.region.bounds
        self._raster()

    # ---- the blocked raster and its summed-area table
    def _raster(self):
        x0, y0, x1, y1 = self.region_bounds
        span = max(x1 - x0, y1 - y0)
        h = max(self.board.rules.grid, span / 300.0)
        nx, ny = max(1, int(math.ceil((x1 - x0) / h))), max(1, int(math.ceil((y1 - y0) / h)))
        cx = x0 + (np.arange(nx) + 0.5) * h
        cy = y0 + (np.arange(ny) + 0.5) * h
        X, Y = np.meshgrid(cx, cy, indexing="ij")
        blocked = ~shapely.contains_xy(self.site.region, X, Y)
        g = self.gap
        for r in self.site.taken:
            blocked |= (X > r[0] - g) & (X < r[2] + g) & (Y > r[1] - g) & (Y < r[3] + g)
        for k in self.site.keepouts:
            blocked |= shapely.contains_xy(k.buffer(g), X, Y)
        s = np.zeros((nx + 1, ny + 1))
        s[1:, 1:] = blocked.cumsum(0).cumsum(1)
        self.sat, self.h, self.rx0, self.ry0, self.rnx, self.rny = s, h, x0, y0, nx, ny

    def blocked_area(self, x0, y0, x1, y1) -> float:
        h = self.h
        i0 = min(max(int(math.ceil((x0 - self.rx0) / h - 0.5)), 0), self.rnx)
        i1 = min(max(int(math.floor((x1 - self.rx0) / h - 0.5)) + 1, 0), self.rnx)
        j0 = min(max(int(math.ceil((y0 - self.ry0) / h - 0.5)), 0), self.rny)
        j1 = min(max(int(math.floor((y1 - self.ry0) / h - 0.5)) + 1, 0), self.rny)
        if i1 <= i0 or j1 <= j0:
            return 0.0
        s = self.sat
        return float(s[i1, j1] - s[i0, j1] - s[i1, j0] + s[i0, j0]) * h * h

    def clamp(self, i: int, x: float, y: float, r: int):
        """Keep part i's rectangle inside the region's box (centred when it is too big)."""
        o = self.off[i, r]
        bx0, by0, bx1, by1 = self.region_bounds
        lo, hi = bx0 - o[0], bx1 - o[2]
        x = (lo + hi) / 2 if lo > hi else min(max(x, lo), hi)
        lo, hi = by0 - o[1], by1 - o[3]
        y = (lo + hi) / 2 if lo > hi else min(max(y, lo), hi)
        return x, y


def quadratic_start(prob: Problem) -> np.ndarray:
    """Centres (n, 2) minimising the clique-spring energy, parts that stay as anchors.

    Notes
    -----
    Pins are taken at part centres. A weak spring of each part to the middle of the
    region keeps the system regular where a group of parts has no anchor.
    """
    n = prob.n
    bx0, by0, bx1, by1 = prob.region_bounds
    mid = np.array([(bx0 + bx1) / 2, (by0 + by1) / 2])
    if n == 0:
        return np.zeros((0, 2))
    L = np.zeros((n, n))
    b = np.zeros((n, 2))
    for ts in prob.nets:
        ts = np.asarray(ts)
        k = len(ts)
        w = 1.0 / (k - 1)
        owners = prob.t_part[ts]
        c = np.bincount(owners[owners >= 0], minlength=n).astype(float)
        fixed = prob.t_fix[ts[owners < 0]]
        sf = fixed.sum(axis=0) if len(fixed) else np.zeros(2)
        nz = np.nonzero(c)[0]
        L[nz, nz] += w * k * c[nz]
        L[np.ix_(nz, nz)] -= w * np.outer(c[nz], c[nz])
        b[nz] += w * c[nz, None] * sf[None, :]
    eps = 1e-3 * max(float(np.mean(np.diag(L))), 1.0)
    L[np.diag_indices(n)] += eps
    b += eps * mid[None, :]
    return np.linalg.solve(L, b)


class _State:
    """Positions, rotations and the running figures the annealer updates per change.

    A change is made in place and undone from a snapshot of what it touched.
    """

    def __init__(self, prob: Problem, xy: np.ndarray, rot: np.ndarray):
        self.p = prob
        n = prob.n
        self.x = xy[:, 0].astype(float).copy()
        self.y = xy[:, 1].astype(float).copy()
        self.r = rot.astype(np.intp).copy()
        self.tx = prob.t_fix[:, 0].copy()
        self.ty = prob.t_fix[:, 1].copy()
        for i in range(n):
            self._terminals(i)
        self.rect = np.zeros((n, 4))
        for i in range(n):
            self._set_rect(i)
        self.cong = CongestionGrid(prob.region_bounds, prob.board.copper_layers, _pitch(prob.board))
        cg = self.cong
        self._c = (cg.x0, cg.y0, cg.cell, cg.nx, cg.ny)
        if len(self.tx):
            cg.add_pads(self.tx, self.ty, prob.t_weight)
        self.net_box = self._boxes(np.arange(len(prob.nets)))
        for b in self.net_box:
            cg.add_box(*b)
        self.overflow = cg.overflow()

    # ---- pieces
    def _terminals(self, i):
        p = self.p
        ts = p.part_terms[i]
        r = self.r[i]
        self.tx[ts] = self.x[i] + p.t_off[ts, r, 0]
        self.ty[ts] = self.y[i] + p.t_off[ts, r, 1]

    def _set_rect(self, i):
        o = self.p.off[i, self.r[i]]
        g = self.p.gap / 2
        x, y = self.x[i], self.y[i]
        self.rect[i] = (x + o[0] - g, y + o[1] - g, x + o[2] + g, y + o[3] + g)

    def _boxes(self, nets):
        rows = self.p.rows[nets]
        xs, ys = self.tx[rows], self.ty[rows]
        return np.stack([xs.min(1), ys.min(1), xs.max(1), ys.max(1)], axis=1).reshape(-1, 4)

    def _cells(self, x, y):
        x0, y0, c, nx, ny = self._c
        ix = np.minimum(np.maximum(((x - x0) / c).astype(np.intp), 0), nx - 1)
        iy = np.minimum(np.maximum(((y - y0) / c).astype(np.intp), 0), ny - 1)
        return ix, iy

    def _boxes_to_grid(self, old, new):
        """Take the boxes `old` out of the demand and put `new` in, in one pass."""
        boxes = np.concatenate([old, new])
        if not len(boxes):
            return
        sign = np.concatenate([-np.ones(len(old)), np.ones(len(new))])
        ix0, iy0 = self._cells(boxes[:, 0], boxes[:, 1])
        ix1, iy1 = self._cells(boxes[:, 2], boxes[:, 3])
        ix1, iy1 = ix1 + 1, iy1 + 1
        val = sign * ((boxes[:, 2] - boxes[:, 0]) + (boxes[:, 3] - boxes[:, 1])) / ((ix1 - ix0) * (iy1 - iy0))
        _, _, _, nx, ny = self._c
        d = np.zeros((nx + 1, ny + 1))
        np.add.at(d, (ix0, iy0), val)
        np.add.at(d, (ix1, iy0), -val)
        np.add.at(d, (ix0, iy1), -val)
        np.add.at(d, (ix1, iy1), val)
        self.cong.demand += d.cumsum(0).cumsum(1)[:nx, :ny]

    def _pads_to_grid(self, ts, sign):
        if len(ts):
            ix, iy = self._cells(self.tx[ts], self.ty[ts])
            np.add.at(self.cong.demand, (ix, iy), sign * self.p.t_weight[ts])

    # ---- figures
    def overlap(self, i: int, skip: int = -1) -> float:
        """Overlap area of part i's grown rectangle with every other part's."""
        R = self.rect
        a = R[i]
        w = np.minimum(R[:, 2], a[2]) - np.maximum(R[:, 0], a[0])
        h = np.minimum(R[:, 3], a[3]) - np.maximum(R[:, 1], a[1])
        ov = np.maximum(w, 0.0) * np.maximum(h, 0.0)
        ov[i] = 0.0
        if skip >= 0:
            ov[skip] = 0.0
        return float(ov.sum())

    def pair_overlap(self, i: int, j: int) -> float:
        a, b = self.rect[i], self.rect[j]
        w = min(a[2], b[2]) - max(a[0], b[0])
        h = min(a[3], b[3]) - max(a[1], b[1])
        return max(w, 0.0) * max(h, 0.0)

    def blocked(self, i: int) -> float:
        g = self.p.gap / 2
        a = self.rect[i]
        return self.p.blocked_area(a[0] + g, a[1] + g, a[2] - g, a[3] - g)

    def total_hpwl(self) -> float:
        b = self.net_box
        return float(((b[:, 2] - b[:, 0]) + (b[:, 3] - b[:, 1])).sum())

    # ---- one change and its undo
    def change(self, moves, nets):
        """Apply moves [(i, x, y, r), ...] touching `nets`; returns (d_hpwl, undo snapshot)."""
        p = self.p
        snap = (self.cong.demand.copy(), self.overflow, nets, self.net_box[nets].copy(),
                [(i, self.x[i], self.y[i], self.r[i], self.rect[i].copy()) for i, *_ in moves])
        ts_all = []
        for i, x, y, r in moves:
            ts = p.part_terms[i]
            self._pads_to_grid(ts, -1.0)
            self.x[i], self.y[i], self.r[i] = x, y, r
            self._terminals(i)
            self._set_rect(i)
            ts_all.append(ts)
        for ts in ts_all:
            self._pads_to_grid(ts, 1.0)
        old = snap[3]
        new = self._boxes(nets)
        self.net_box[nets] = new
        self._boxes_to_grid(old, new)
        self.overflow = self.cong.overflow()
        d_h = float(((new[:, 2] - new[:, 0]) + (new[:, 3] - new[:, 1])).sum() -
                    ((old[:, 2] - old[:, 0]) + (old[:, 3] - old[:, 1])).sum())
        return d_h, snap

    def undo(self, snap):
        demand, overflow, nets, boxes, parts = snap
        self.cong.demand = demand
        self.overflow = overflow
        self.net_box[nets] = boxes
        for i, x, y, r, rect in parts:
            self.x[i], self.y[i], self.r[i] = x, y, r
            self.rect[i] = rect
            self._terminals(i)


def anneal(prob: Problem, xy: np.ndarray, rot: np.ndarray, rng: np.random.Generator,
           effort: float = 1.0, congestion_weight: float = CONGESTION_WEIGHT):
    """Simulated annealing from centres `xy` (n, 2) and rotation indices `rot` (n,).

    Returns
    -------
    (xy, rot): the annealed centres and rotation indices (not yet on the grid).
    """
    n = prob.n
    if n == 0:
        return xy, rot
    st = _State(prob, xy, rot)
    bx0, by0, bx1, by1 = prob.region_bounds
    span = max(bx1 - bx0, by1 - by0)
    sizes = (prob.off[:, 0, 2] - prob.off[:, 0, 0]) * (prob.off[:, 0, 3] - prob.off[:, 0, 1])
    typical = math.sqrt(float(np.mean(sizes))) + prob.gap
    lam_end = 20.0 / max(typical, 0.5)
    lam_start = lam_end / 200.0
    window = span / 2
    steps = 60
    per_step = max(20, int(max(60, min(20 * n, 3000)) * effort))

    def propose(lam):
        """One random change made in place: (cost delta, undo snapshot)."""
        u = rng.random()
        i = int(rng.integers(n))
        if n > 1 and 0.2 <= u < 0.45:            # swap two parts' places, each keeps its rotation
            j = int(rng.integers(n - 1))
            j = j + 1 if j >= i else j
            nets = np.union1d(prob.part_nets[i], prob.part_nets[j])
            ov0 = st.overlap(i, j) + st.overlap(j, i) + st.pair_overlap(i, j)
            bl0 = st.blocked(i) + st.blocked(j)
            ri, rj = int(st.r[i]), int(st.r[j])
            xi, yi = prob.clamp(i, st.x[j], st.y[j], ri)
            xj, yj = prob.clamp(j, st.x[i], st.y[i], rj)
            ovf0 = st.overflow
            d_h, snap = st.change([(i, xi, yi, ri), (j, xj, yj, rj)], nets)
            ov = st.overlap(i, j) + st.overlap(j, i) + st.pair_overlap(i, j)
            bl = st.blocked(i) + st.blocked(j)
        else:
            nets = prob.part_nets[i]
            ov0, bl0 = st.overlap(i), st.blocked(i)
            if u < 0.2:                            # turn by 90, 180 or 270 degrees
                r = (int(st.r[i]) + int(rng.integers(1, 4))) % 4
                x, y = prob.clamp(i, st.x[i], st.y[i], r)
            else:                                  # move within the window
                r = int(st.r[i])
                x, y = prob.clamp(i, st.x[i] + rng.uniform(-window, window),
                                  st.y[i] + rng.uniform(-window, window), r)
            ovf0 = st.overflow
            d_h, snap = st.change([(i, x, y, r)], nets)
            ov, bl = st.overlap(i), st.blocked(i)
        delta = d_h + congestion_weight * (st.overflow - ovf0) + lam * ((ov - ov0) + (bl - bl0))
        return delta, snap

    # the starting temperature: the mean uphill step of a few random changes at the start
    ups = []
    for _ in range(min(200, 20 * n)):
        d, snap = propose(lam_start)
        if d > 0:
            ups.append(d)
        st.undo(snap)
    t0 = float(np.mean(ups)) if ups else 1.0
    t_end = t0 * 1e-4
    alpha = (t_end / t0) ** (1.0 / (steps - 1))
    temp = t0
    for step in range(steps + 1):
        frac = min(step / (steps - 1), 1.0)
        lam = lam_start * (lam_end / lam_start) ** frac
        greedy = step == steps
        accepted = 0
        for _ in range(per_step):
            d, snap = propose(lam)
            if d <= 0 or (not greedy and rng.random() < math.exp(-d / temp)):
                accepted += 1
            else:
                st.undo(snap)
        rate = accepted / per_step
        # keep about 44 % of the changes accepted by the size of the move window (Lam's rule)
        window = min(max(window * (0.6 + rate / 0.44 * 0.4), prob.board.rules.grid * 2), span / 2)
        temp *= alpha
    return np.stack([st.x, st.y], axis=1), st.r.copy()
