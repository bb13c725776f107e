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
from typing import Optional, Sequence

import numpy as np
import shapely
from numba import njit

from router.geometry import part_footprint, placed_pads, transform
from router.model import Board, Part

from .legalize import Site, rect_offsets
from .wirelength import CongestionGrid, _pitch

__all__ = ["Problem", "quadratic_start", "anneal", "CONGESTION_WEIGHT"]

#: Weight of the congestion overflow against wirelength (both in mm).
CONGESTION_WEIGHT = 1.0
#: The overlap weight at the end, per mm of a typical part's side (mm of wirelength per mm^2
#: of overlap times that side), and how many times smaller it starts.
OVERLAP_END = 300.0
OVERLAP_RAMP = 1000.0
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
                    offs.append(transform(probe, pad.offset))
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


# ----------------------------------------------------------------------------- the kernel
# The annealing loop runs compiled (numba); its random numbers are drawn beforehand from the
# caller's numpy Generator, so a seed gives the same placement compiled or not.

@njit(cache=True)
def _cell(v, origin, size, count):
    k = int(math.floor((v - origin) / size))
    return min(max(k, 0), count - 1)


@njit(cache=True)
def _box_add(demand, b, sign, gx0, gy0, c):
    nx, ny = demand.shape
    ix0, ix1 = _cell(b[0], gx0, c, nx), _cell(b[2], gx0, c, nx)
    iy0, iy1 = _cell(b[1], gy0, c, ny), _cell(b[3], gy0, c, ny)
    v = sign * ((b[2] - b[0]) + (b[3] - b[1])) / ((ix1 - ix0 + 1) * (iy1 - iy0 + 1))
    for a in range(ix0, ix1 + 1):
        for e in range(iy0, iy1 + 1):
            demand[a, e] += v


@njit(cache=True)
def _put(i, x, y, r, X, Y, R, off, rect, half, pt_ptr, pt_idx, t_off, tx, ty, tw, demand, gx0, gy0, c):
    """Move part i to (x, y) at rotation index r, its pads' demand with it."""
    nx, ny = demand.shape
    for k in range(pt_ptr[i], pt_ptr[i + 1]):
        t = pt_idx[k]
        demand[_cell(tx[t], gx0, c, nx), _cell(ty[t], gy0, c, ny)] -= tw[t]
    X[i] = x
    Y[i] = y
    R[i] = r
    for k in range(pt_ptr[i], pt_ptr[i + 1]):
        t = pt_idx[k]
        tx[t] = x + t_off[t, r, 0]
        ty[t] = y + t_off[t, r, 1]
        demand[_cell(tx[t], gx0, c, nx), _cell(ty[t], gy0, c, ny)] += tw[t]
    rect[i, 0] = x + off[i, r, 0] - half
    rect[i, 1] = y + off[i, r, 1] - half
    rect[i, 2] = x + off[i, r, 2] + half
    rect[i, 3] = y + off[i, r, 3] + half


@njit(cache=True)
def _refresh(nets, m, rows, tx, ty, net_box, demand, gx0, gy0, c):
    """New boxes of the first m nets of `nets`; returns their HPWL before and after."""
    before = 0.0
    after = 0.0
    for q in range(m):
        k = nets[q]
        b = net_box[k]
        before += (b[2] - b[0]) + (b[3] - b[1])
        _box_add(demand, b, -1.0, gx0, gy0, c)
        t = rows[k, 0]
        x0 = x1 = tx[t]
        y0 = y1 = ty[t]
        for s in range(1, rows.shape[1]):
            t = rows[k, s]
            x0 = min(x0, tx[t])
            x1 = max(x1, tx[t])
            y0 = min(y0, ty[t])
            y1 = max(y1, ty[t])
        b[0], b[1], b[2], b[3] = x0, y0, x1, y1
        after += (x1 - x0) + (y1 - y0)
        _box_add(demand, b, 1.0, gx0, gy0, c)
    return before, after


@njit(cache=True)
def _overflow(demand, cap):
    s = 0.0
    for a in range(demand.shape[0]):
        for e in range(demand.shape[1]):
            if demand[a, e] > cap:
                s += demand[a, e] - cap
    return s


@njit(cache=True)
def _overlap(i, skip, rect):
    a0, a1, a2, a3 = rect[i, 0], rect[i, 1], rect[i, 2], rect[i, 3]
    s = 0.0
    for j in range(rect.shape[0]):
        if j == i or j == skip:
            continue
        w = min(rect[j, 2], a2) - max(rect[j, 0], a0)
        if w <= 0:
            continue
        h = min(rect[j, 3], a3) - max(rect[j, 1], a1)
        if h > 0:
            s += w * h
    return s


@njit(cache=True)
def _pair(i, j, rect):
    w = min(rect[i, 2], rect[j, 2]) - max(rect[i, 0], rect[j, 0])
    h = min(rect[i, 3], rect[j, 3]) - max(rect[i, 1], rect[j, 1])
    return max(w, 0.0) * max(h, 0.0)


@njit(cache=True)
def _blocked(i, rect, half, sat, h, rx0, ry0):
    """Area of part i's rectangle over blocked raster cells (cells whose centres it covers)."""
    nx, ny = sat.shape[0] - 1, sat.shape[1] - 1
    i0 = min(max(int(math.ceil((rect[i, 0] + half - rx0) / h - 0.5)), 0), nx)
    i1 = min(max(int(math.floor((rect[i, 2] - half - rx0) / h - 0.5)) + 1, 0), nx)
    j0 = min(max(int(math.ceil((rect[i, 1] + half - ry0) / h - 0.5)), 0), ny)
    j1 = min(max(int(math.floor((rect[i, 3] - half - ry0) / h - 0.5)) + 1, 0), ny)
    if i1 <= i0 or j1 <= j0:
        return 0.0
    return (sat[i1, j1] - sat[i0, j1] - sat[i1, j0] + sat[i0, j0]) * h * h


@njit(cache=True)
def _clamp(i, x, y, r, off, bounds):
    lo, hi = bounds[0] - off[i, r, 0], bounds[2] - off[i, r, 2]
    x = (lo + hi) / 2 if lo > hi else min(max(x, lo), hi)
    lo, hi = bounds[1] - off[i, r, 1], bounds[3] - off[i, r, 3]
    y = (lo + hi) / 2 if lo > hi else min(max(y, lo), hi)
    return x, y


@njit(cache=True)
def _sweep(U, mode, temp, lam, window, cw, X, Y, R, off, rect, half, bounds,
           pt_ptr, pt_idx, pn_ptr, pn_idx, t_off, tx, ty, tw, rows, net_box,
           demand, gx0, gy0, c, cap, ovf, sat, h, rx0, ry0, nets, mark):
    """len(U) changes. mode 0: anneal at `temp`; 1: downhill only; 2: measure and undo all.

    Returns (accepted, sum of uphill deltas, uphill count, overflow after).
    """
    n = X.shape[0]
    accepted = 0
    up_sum = 0.0
    up_n = 0
    for s in range(U.shape[0]):
        u = U[s, 0]
        i = min(int(U[s, 1] * n), n - 1)
        swap = n > 1 and 0.2 <= u < 0.45
        j = -1
        m = 0
        stamp = s + 1 + mark[-1]
        for k in range(pn_ptr[i], pn_ptr[i + 1]):
            nets[m] = pn_idx[k]
            mark[pn_idx[k]] = stamp
            m += 1
        if swap:
            j = min(int(U[s, 2] * (n - 1)), n - 2)
            if j >= i:
                j += 1
            for k in range(pn_ptr[j], pn_ptr[j + 1]):
                q = pn_idx[k]
                if mark[q] != stamp:
                    nets[m] = q
                    m += 1
        xi, yi, ri = X[i], Y[i], R[i]
        ovf0 = ovf
        if swap:
            xj, yj, rj = X[j], Y[j], R[j]
            ov0 = _overlap(i, j, rect) + _overlap(j, i, rect) + _pair(i, j, rect)
            bl0 = _blocked(i, rect, half, sat, h, rx0, ry0) + _blocked(j, rect, half, sat, h, rx0, ry0)
            ax, ay = _clamp(i, xj, yj, ri, off, bounds)
            bx, by = _clamp(j, xi, yi, rj, off, bounds)
            _put(i, ax, ay, ri, X, Y, R, off, rect, half, pt_ptr, pt_idx, t_off, tx, ty, tw, demand, gx0, gy0, c)
            _put(j, bx, by, rj, X, Y, R, off, rect, half, pt_ptr, pt_idx, t_off, tx, ty, tw, demand, gx0, gy0, c)
            ov1 = _overlap(i, j, rect) + _overlap(j, i, rect) + _pair(i, j, rect)
            bl1 = _blocked(i, rect, half, sat, h, rx0, ry0) + _blocked(j, rect, half, sat, h, rx0, ry0)
        else:
            ov0 = _overlap(i, -1, rect)
            bl0 = _blocked(i, rect, half, sat, h, rx0, ry0)
            if u < 0.2:
                r = (ri + 1 + min(int(U[s, 2] * 3), 2)) % 4
                ax, ay = _clamp(i, xi, yi, r, off, bounds)
            else:
                r = ri
                ax, ay = _clamp(i, xi + (2 * U[s, 2] - 1) * window, yi + (2 * U[s, 3] - 1) * window,
                                r, off, bounds)
            _put(i, ax, ay, r, X, Y, R, off, rect, half, pt_ptr, pt_idx, t_off, tx, ty, tw, demand, gx0, gy0, c)
            ov1 = _overlap(i, -1, rect)
            bl1 = _blocked(i, rect, half, sat, h, rx0, ry0)
        hp0, hp1 = _refresh(nets, m, rows, tx, ty, net_box, demand, gx0, gy0, c)
        ovf1 = _overflow(demand, cap)
        d = (hp1 - hp0) + cw * (ovf1 - ovf0) + lam * ((ov1 - ov0) + (bl1 - bl0))
        if d > 0:
            up_sum += d
            up_n += 1
        if mode != 2 and (d <= 0 or (mode == 0 and U[s, 4] < math.exp(-d / temp))):
            accepted += 1
            ovf = ovf1
        else:
            _put(i, xi, yi, ri, X, Y, R, off, rect, half, pt_ptr, pt_idx, t_off, tx, ty, tw, demand, gx0, gy0, c)
            if swap:
                _put(j, xj, yj, rj, X, Y, R, off, rect, half, pt_ptr, pt_idx, t_off, tx, ty, tw,
                     demand, gx0, gy0, c)
            _refresh(nets, m, rows, tx, ty, net_box, demand, gx0, gy0, c)
    mark[-1] += U.shape[0]
    return accepted, up_sum, up_n, ovf


def _csr(lists):
    ptr = np.zeros(len(lists) + 1, dtype=np.int64)
    ptr[1:] = np.cumsum([len(x) for x in lists])
    idx = np.concatenate([np.asarray(x, dtype=np.int64) for x in lists]) if lists else np.zeros(0, np.int64)
    return ptr, idx.astype(np.int64)


def anneal(prob: Problem, xy: np.ndarray, rot: np.ndarray, rng: np.random.Generator,
           effort: float = 1.0, congestion_weight: Optional[float] = None):
    """Simulated annealing from centres `xy` (n, 2) and rotation indices `rot` (n,).

    Parameters
    ----------
    prob : Problem
    xy, rot : the start
    rng : numpy Generator; every random number comes from it
    effort : scales the number of changes per temperature
    congestion_weight : weight of the congestion overflow against wirelength
        (default :data:`CONGESTION_WEIGHT`)

    Returns
    -------
    (xy, rot): the annealed centres and rotation indices (not yet on the grid).

    Notes
    -----
    60 temperatures, geometric from the mean uphill change at the start down to 1e-4 of
    it, then one downhill-only pass; the move window follows the acceptance rate
    towards 44 % (J. Lam, J.-M. Delosme, "Performance of a new annealing schedule",
    DAC 1988).
    """
    n = prob.n
    if n == 0:
        return xy, rot
    if congestion_weight is None:
        congestion_weight = CONGESTION_WEIGHT
    X = np.ascontiguousarray(xy[:, 0], dtype=np.float64).copy()
    Y = np.ascontiguousarray(xy[:, 1], dtype=np.float64).copy()
    R = np.asarray(rot, dtype=np.int64).copy()
    off = np.ascontiguousarray(prob.off, dtype=np.float64)
    half = prob.gap / 2
    bounds = np.array(prob.region_bounds, dtype=np.float64)
    pt_ptr, pt_idx = _csr([list(t) for t in prob.part_terms])
    pn_ptr, pn_idx = _csr([list(t) for t in prob.part_nets])
    t_off = np.ascontiguousarray(prob.t_off, dtype=np.float64)
    tx = prob.t_fix[:, 0].astype(np.float64).copy()
    ty = prob.t_fix[:, 1].astype(np.float64).copy()
    tw = prob.t_weight.astype(np.float64)
    rows = np.ascontiguousarray(prob.rows, dtype=np.int64)
    if rows.shape[0] == 0:
        rows = np.zeros((0, 1), dtype=np.int64)
    for i in range(n):
        ts = prob.part_terms[i]
        tx[ts] = X[i] + t_off[ts, R[i], 0]
        ty[ts] = Y[i] + t_off[ts, R[i], 1]
    rect = np.zeros((n, 4))
    for i in range(n):
        o = off[i, R[i]]
        rect[i] = (X[i] + o[0] - half, Y[i] + o[1] - half, X[i] + o[2] + half, Y[i] + o[3] + half)
    grid = CongestionGrid(prob.region_bounds, prob.board.copper_layers, _pitch(prob.board))
    if len(tx):
        grid.add_pads(tx, ty, tw)
    net_box = np.zeros((rows.shape[0], 4))
    for k in range(rows.shape[0]):
        xs, ys = tx[rows[k]], ty[rows[k]]
        net_box[k] = (xs.min(), ys.min(), xs.max(), ys.max())
        grid.add_box(*net_box[k])
    demand = grid.demand
    ovf = grid.overflow()
    nets = np.zeros(max(rows.shape[0], 1), dtype=np.int64)
    mark = np.zeros(rows.shape[0] + 1, dtype=np.int64)

    bx0, by0, bx1, by1 = prob.region_bounds
    span = max(bx1 - bx0, by1 - by0)
    sizes = (off[:, 0, 2] - off[:, 0, 0]) * (off[:, 0, 3] - off[:, 0, 1])
    typical = math.sqrt(float(np.mean(sizes))) + prob.gap
    lam_end = OVERLAP_END / max(typical, 0.5)
    lam_start = lam_end / OVERLAP_RAMP
    window = span / 2
    steps = 60
    per_step = max(20, int(max(300, min(120 * n, 24000)) * effort))
    min_window = prob.board.rules.grid * 2

    def sweep(count, mode, temp, lam, window, ovf):
        U = rng.random((count, 5))
        return _sweep(U, mode, temp, lam, window, congestion_weight, X, Y, R, off, rect, half, bounds,
                      pt_ptr, pt_idx, pn_ptr, pn_idx, t_off, tx, ty, tw, rows, net_box,
                      demand, grid.x0, grid.y0, grid.cell, grid.capacity, ovf, prob.sat, prob.h,
                      prob.rx0, prob.ry0, nets, mark)

    # the starting temperature: the mean uphill change of random changes at the start
    _, up_sum, up_n, ovf = sweep(min(400, 40 * n), 2, 1.0, lam_start, window, ovf)
    t0 = up_sum / up_n if up_n else 1.0
    alpha = 1e-4 ** (1.0 / (steps - 1))
    temp = t0
    for step in range(steps + 1):
        frac = min(step / (steps - 1), 1.0)
        lam = lam_start * (lam_end / lam_start) ** frac
        mode = 1 if step == steps else 0
        accepted, _, _, ovf = sweep(per_step, mode, temp, lam, window, ovf)
        rate = accepted / per_step
        # keep about 44 % of the changes accepted by the size of the move window
        window = min(max(window * (0.6 + rate / 0.44 * 0.4), min_window), span / 2)
        temp *= alpha
    return np.stack([X, Y], axis=1), R.copy()
