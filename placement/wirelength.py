"""Wirelength and routing-demand estimates of a placement.

The wirelength of a net is the half-perimeter of the box around the centres of
its pins' pads (HPWL); a board's wirelength is the sum over its nets. The
congestion estimate spreads each net's half-perimeter evenly over the cells of
a coarse grid that its box covers, adds the routing room the pads take, and
sums what exceeds a share of each cell's track capacity.

References
----------
.. [1] C. Sechen, A. Sangiovanni-Vincentelli, "The TimberWolf placement and routing
   package", IEEE J. Solid-State Circuits 20(2), 1985 (half-perimeter wirelength).
.. [2] P. Spindler, F. M. Johannes, "Fast and accurate routing demand estimation for
   efficient routability-driven placement", DATE 2007 (demand spread over the net box).
"""
from __future__ import annotations

import math
from typing import Optional

import numpy as np

from router.geometry import outline_polygon, placed_pads
from router.model import Board

__all__ = ["pin_points", "net_hpwl", "total_hpwl", "hpwl_rows", "CongestionGrid", "congestion",
           "UTILISATION"]

#: Share of a cell's track capacity that routing may use before the estimate counts an
#: overflow. Low, because pads, vias, both directions on each layer and detours take most of
#: the room; chosen with generated boards placed and routed (scripts/bench_place.py): 0.2
#: routed two-layer boards completely and faster than 0.6; 0.1 as well, and more one-layer
#: boards than 0.2.
UTILISATION = 0.1


def pin_points(board: Board) -> dict[str, list[tuple[float, float]]]:
    """Pad centres of every pin of a placed part, by "REF.PIN" (a pin may have several pads)."""
    out: dict[str, list[tuple[float, float]]] = {}
    for pad in placed_pads(board):
        out.setdefault(pad.name, []).append((pad.x, pad.y))
    return out


def net_hpwl(board: Board) -> dict[str, float]:
    """Half-perimeter wirelength of every net, in mm, over the pins that are placed.

    A net with fewer than two placed pad centres has length 0.

    Examples
    --------
    >>> from router.model import Board, Part, Net
    >>> b = Board("t", [(0, 0), (20, 0), (20, 20), (0, 20)],
    ...           parts=[Part("R1", "chip-0805", at=(5.0, 5.0)), Part("R2", "chip-0805", at=(12.0, 9.0))],
    ...           nets=[Net("A", ["R1.2", "R2.1"])])
    >>> round(net_hpwl(b)["A"], 6)     # chip-0805 pads at x = -/+0.95: |11.05 - 5.95| + |9 - 5|
    9.1
    """
    pts = pin_points(board)
    out = {}
    for net in board.nets:
        xy = [p for pin in net.pins for p in pts.get(pin, ())]
        if len(xy) < 2:
            out[net.name] = 0.0
            continue
        xs = [p[0] for p in xy]
        ys = [p[1] for p in xy]
        out[net.name] = (max(xs) - min(xs)) + (max(ys) - min(ys))
    return out


def total_hpwl(board: Board) -> float:
    """The board's wirelength: the sum of :func:`net_hpwl` over its nets, in mm."""
    return float(sum(net_hpwl(board).values()))


def hpwl_rows(tx: np.ndarray, ty: np.ndarray, rows: np.ndarray) -> np.ndarray:
    """HPWL of several nets at once: `rows` is (nets, k) of terminal indices into tx, ty.

    Short nets are padded by repeating one of their own terminals, which changes no box.
    """
    x = tx[rows]
    y = ty[rows]
    return (x.max(axis=1) - x.min(axis=1)) + (y.max(axis=1) - y.min(axis=1))


class CongestionGrid:
    """Routing demand on a coarse grid over a box, in mm of track per cell.

    Parameters
    ----------
    bounds : (x0, y0, x1, y1)
        The area the grid covers (the board's outline box).
    layers : int
        Copper layers that carry traces.
    pitch : float
        Track pitch in mm (trace width plus clearance of the default class).
    cells : int
        Cells along the longer side.

    Notes
    -----
    A net of box w x h adds w + h mm of track, spread evenly over the cells the
    box touches; a pad adds the track length its copper blocks (its area over the
    pitch). The overflow of a cell is its demand above :data:`UTILISATION` of its
    capacity, layers * cell area / pitch.
    """

    def __init__(self, bounds, layers: int, pitch: float, cells: int = 24):
        x0, y0, x1, y1 = bounds
        span = max(x1 - x0, y1 - y0, 1e-9)
        self.cell = max(span / cells, 1.0)
        self.x0, self.y0 = x0, y0
        self.nx = max(1, int(math.ceil((x1 - x0) / self.cell - 1e-9)))
        self.ny = max(1, int(math.ceil((y1 - y0) / self.cell - 1e-9)))
        self.capacity = UTILISATION * layers * self.cell * self.cell / pitch
        self.pitch = pitch
        self.demand = np.zeros((self.nx, self.ny))

    def index(self, x, y):
        """Cell indices of points (clipped onto the grid)."""
        ix = np.clip(np.floor((np.asarray(x) - self.x0) / self.cell), 0, self.nx - 1).astype(np.intp)
        iy = np.clip(np.floor((np.asarray(y) - self.y0) / self.cell), 0, self.ny - 1).astype(np.intp)
        return ix, iy

    def add_box(self, x0: float, y0: float, x1: float, y1: float, sign: float = 1.0) -> None:
        """Add (sign +1) or remove (-1) one net's box."""
        c, nx, ny = self.cell, self.nx - 1, self.ny - 1
        ix0 = min(max(int(math.floor((x0 - self.x0) / c)), 0), nx)
        ix1 = min(max(int(math.floor((x1 - self.x0) / c)), 0), nx)
        iy0 = min(max(int(math.floor((y0 - self.y0) / c)), 0), ny)
        iy1 = min(max(int(math.floor((y1 - self.y0) / c)), 0), ny)
        n = (ix1 - ix0 + 1) * (iy1 - iy0 + 1)
        self.demand[ix0:ix1 + 1, iy0:iy1 + 1] += sign * ((x1 - x0) + (y1 - y0)) / n

    def add_pads(self, x, y, weight, sign: float = 1.0) -> None:
        """Add or remove pads at points x, y; `weight` is each pad's blocked track length."""
        ix, iy = self.index(x, y)
        np.add.at(self.demand, (ix, iy), sign * np.asarray(weight, dtype=float))

    def overflow(self) -> float:
        """Demand above the usable capacity, summed over the cells, in mm of track."""
        return float(np.maximum(self.demand - self.capacity, 0.0).sum())


def _pitch(board: Board) -> float:
    nc = board.classes.get("default")
    if nc is None:
        nc = next(iter(board.classes.values()))
    return nc.trace_width + nc.clearance


def congestion(board: Board, cells: int = 24, grid: Optional[CongestionGrid] = None) -> float:
    """The congestion estimate of a placed board: overflow in mm of track (0 when roomy).

    Parts without a place are left out.
    """
    if grid is None:
        grid = CongestionGrid(outline_polygon(board).bounds, board.copper_layers, _pitch(board), cells)
    pads = placed_pads(board)
    if pads:
        grid.add_pads([p.x for p in pads], [p.y for p in pads],
                      [p.w * p.h / grid.pitch for p in pads])
    pts = pin_points(board)
    for net in board.nets:
        xy = [p for pin in net.pins for p in pts.get(pin, ())]
        if len(xy) < 2:
            continue
        xs = [p[0] for p in xy]
        ys = [p[1] for p in xy]
        grid.add_box(min(xs), min(ys), max(xs), max(ys))
    return grid.overflow()
