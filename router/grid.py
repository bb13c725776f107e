"""The routing grid: integer cells, and for each net class where a trace may run.

A cell ``(l, j, i)`` is the grid point ``x = (i0 + i) * pitch``, ``y = (j0 + j) * pitch``
on copper layer ``l`` (the grid's origin is the board's (0, 0)). A trace's centreline
runs from grid point to grid point; a cell, a step between two cells, a via and a
jumper end are *open* to a net only where copper of that net's width (or the via's, or
the jumper end's, diameter) keeps every required distance:

- to copper of every other net: the pair's required clearance
  (:func:`router.rules.required_clearance`: the larger class clearance, raised to the
  IPC-2221 spacing for a declared voltage);
- to the board edge and to non-plated holes: ``edge_clearance``;
- keepouts and (for ``keepout_body`` parts) other parts' bodies: not entered (the edge may be touched);
- vias and jumper ends, hole to hole: ``min_hole_spacing`` from every hole, whatever its net.

Every obstacle's copper is an axis-parallel box (a point or a segment being a thin
box) with a radius, as in :mod:`router.copper`, so the distance from a grid point or a
grid step to it is exact (``hypot`` of the two axis gaps), with no polygon error, and
is compared with :data:`router.units.TOL` as everywhere else. A pad turned by an angle
(and the body of a turned part) keeps its exact core (a turned polygon or segment,
:attr:`Obstacle.core`): its box is only the window, and each grid point and step in the
window is measured against the core by shapely (exact distances, no polygon of circles).
The board edge, arcs included, is measured exactly by :mod:`router.outline`.

Obstacles are *counted*: for each net class the grid holds, per cell and step, how
many obstacles block it. A net's own copper is subtracted again when its search space
is made (:meth:`RoutingGrid.space_for`), so a net is free to run over its own pads.
Copper laid by the router during negotiation is counted in separate *soft* maps
(:meth:`RoutingGrid.add_soft` / ``remove_soft``), which the negotiation turns into costs.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Optional

import numpy as np
import shapely
from numba import njit
from shapely.geometry import Polygon

from .geometry import PlacedPad
from .layout import resolve
from .outline import edge_distance, edge_distance_xy, has_arcs
from .model import Board
from .rules import required_clearance
from .search import SearchSpace
from .units import TOL

__all__ = ["Box", "Obstacle", "ClassProfile", "RoutingGrid", "box_of_core", "JUMP_PITCH"]

#: Jumper links come in multiples of 2.54 mm (common practice for bent-wire links on a 0.1 in raster).
JUMP_PITCH = 2.54
#: Longest jumper offered, in multiples of JUMP_PITCH (common practice: short links stay flat on the board).
JUMP_MAX = 8

Box = tuple[float, float, float, float]


def box_of_core(core) -> Box:
    """The axis-parallel box of a copper core (a point, an axis-parallel segment or a box)."""
    x0, y0, x1, y1 = core.bounds
    return (float(x0), float(y0), float(x1), float(y1))


@dataclass(frozen=True)
class Obstacle:
    """Something copper must keep away from.

    kind is "copper" (needs the pair's clearance), "npth" (edge_clearance), "keepout"
    or "body" (not to be entered: need 0 beyond the copper's own radius).
    """
    kind: str
    box: Box
    radius: float
    layers: tuple[int, ...]
    net: Optional[str] = None            # owning net of copper
    cls: Optional[str] = None            # owning net's class
    owners: frozenset = frozenset()      # nets free to enter a body
    core: object = None                  # a turned core (shapely): measured exactly; None: the box is the core


@dataclass(frozen=True)
class ClassProfile:
    """How the nets of one class route: trace half width, and clearance to each class."""
    name: str
    index: int
    width: float
    clearance_to: dict

    @property
    def half(self) -> float:
        return self.width / 2


def _gap(lo_a, hi_a, lo, hi):
    """Per-element axis gap between intervals [lo_a, hi_a] (arrays) and [lo, hi]."""
    return np.maximum(np.maximum(lo - hi_a, 0.0), lo_a - hi)


@njit(cache=True)
def _stamp_boxes(arr, boxes, needs, lmask, g, i0, j0, xs, ys, sign, tol):
    """Add `sign` on the layers in `lmask` at every grid point nearer than ``needs - tol`` to each
    box: the window and the test of :meth:`RoutingGrid._stamp_maps` (cells) in one compiled loop."""
    L, ny, nx = arr.shape
    for n in range(boxes.shape[0]):
        need = needs[n]
        lim = need - tol
        if lim <= 0:
            continue
        x0, y0, x1, y1 = boxes[n, 0], boxes[n, 1], boxes[n, 2], boxes[n, 3]
        ia = max(0, int(math.floor((x0 - need) / g)) - i0 - 1)
        ib = min(nx, int(math.ceil((x1 + need) / g)) - i0 + 2)
        ja = max(0, int(math.floor((y0 - need) / g)) - j0 - 1)
        jb = min(ny, int(math.ceil((y1 + need) / g)) - j0 + 2)
        lim2 = lim * lim
        for j in range(ja, jb):
            y = ys[j]
            dy = max(max(y0 - y, 0.0), y - y1)
            dy2 = dy * dy
            for i in range(ia, ib):
                x = xs[i]
                dx = max(max(x0 - x, 0.0), x - x1)
                if dy2 + dx * dx < lim2:
                    for l in range(L):
                        if (lmask[n] >> l) & 1:
                            arr[l, j, i] += sign


class RoutingGrid:
    """The board as integer cells, with hard and soft obstacle counts per net class.

    Parameters
    ----------
    board : Board
        A board whose parts are all placed. Its existing copper (traces, vias,
        jumpers) is taken as obstacles for the other nets.
    """

    def __init__(self, board: Board, layout=None):
        self.board = board
        # the board resolved once (router.layout): pads, holes, bodies and outline as placed shapes
        self.layout = lay = resolve(board) if layout is None else layout
        r = board.rules
        self.rules = r
        self.pitch = g = float(r.grid)
        self.layers = tuple(board.layers)
        self.L = len(self.layers)
        self.outline = lay.outline
        x0, y0, x1, y1 = self.outline.bounds
        self.i0 = int(math.ceil(x0 / g - 1e-9))
        self.j0 = int(math.ceil(y0 / g - 1e-9))
        self.nx = int(math.floor(x1 / g + 1e-9)) - self.i0 + 1
        self.ny = int(math.floor(y1 / g + 1e-9)) - self.j0 + 1
        self.xs = (self.i0 + np.arange(self.nx)) * g
        self.ys = (self.j0 + np.arange(self.ny)) * g
        self.one_layer = self.L == 1
        self.via_d = r.via_diameter
        self.via_drill = r.via_drill
        self.jump_d = r.jumper_diameter
        self.jump_drill = r.jumper_drill
        # jumper lengths: whole cells nearest to each multiple of 2.54 mm, and the slack between
        self.jump_cells = np.zeros(0, dtype=np.int64)
        self.jump_slack = 0.0
        if self.one_layer:
            ks, slack = [], 0.0
            for m in range(1, JUMP_MAX + 1):
                k = int(round(m * JUMP_PITCH / g))
                if k >= 2 and k not in ks:
                    ks.append(k)
                    slack = max(slack, abs(m * JUMP_PITCH - k * g))
            self.jump_cells = np.array(ks, dtype=np.int64)
            self.jump_slack = slack
        self.pads: list[PlacedPad] = list(lay.pads)
        net_class = {n.name: n.net_class for n in board.nets}
        self.net_class = net_class
        self.profiles: dict[str, ClassProfile] = {}
        for k, (name, nc) in enumerate(board.classes.items()):
            width = max(nc.trace_width, r.min_trace_width)
            clear = {o: required_clearance(board, nc, oc) for o, oc in board.classes.items()}
            self.profiles[name] = ClassProfile(name, k, width, clear)
        self.obstacles: list[Obstacle] = []
        self._collect()
        shape3 = (len(self.profiles), self.L, self.ny, self.nx)
        self.hard_cell = np.zeros(shape3, np.int32)
        self.hard_h = np.zeros(shape3, np.int32)
        self.hard_v = np.zeros(shape3, np.int32)
        self.hard_via = np.zeros((len(self.profiles), self.ny, self.nx), np.int32)
        self.soft_cell = np.zeros(shape3, np.int32)
        self.soft_via = np.zeros((len(self.profiles), self.ny, self.nx), np.int32)
        self.wire = np.zeros((self.ny, self.nx), np.int32)
        self._base()
        for ob in self.obstacles:
            self.stamp(ob, +1)

    # ----------------------------------------------------------------- coordinates
    def x(self, i) -> float:
        return (self.i0 + i) * self.pitch

    def y(self, j) -> float:
        return (self.j0 + j) * self.pitch

    def point(self, j: int, i: int) -> tuple[float, float]:
        g = self.pitch
        return (round((self.i0 + i) * g, 6), round((self.j0 + j) * g, 6))

    def layer_index(self, name: str) -> int:
        return self.layers.index(name)

    def profile_of(self, net: str) -> ClassProfile:
        return self.profiles[self.net_class.get(net, "default")]

    def index_box(self, box: Box, grow: float, cells: int = 1):
        """(ia, ib, ja, jb), end exclusive and clipped to the grid: the index ranges of the grid
        points within `grow` mm of `box`, widened by `cells` more steps on every side (one by
        default, for steps). The one place a box in mm becomes a box of grid indices."""
        g = self.pitch
        bx0, by0, bx1, by1 = box
        ia = max(0, int(math.floor((bx0 - grow) / g)) - self.i0 - cells)
        ib = max(0, min(self.nx, int(math.ceil((bx1 + grow) / g)) - self.i0 + cells + 1))
        ja = max(0, int(math.floor((by0 - grow) / g)) - self.j0 - cells)
        jb = max(0, min(self.ny, int(math.ceil((by1 + grow) / g)) - self.j0 + cells + 1))
        return ia, ib, ja, jb

    def near_points(self, a, b, layer: int) -> list:
        """Grid points (layer, j, i) within half a pitch of the axis segment a-b: the cells an
        off-grid stub or pad exit occupies for the negotiation. Kept per segment on the grid (the
        same exits are priced again for every route of their net); the caller does not change it."""
        memo = self.__dict__.setdefault("_near_memo", {})
        key = (a[0], a[1], b[0], b[1], layer)
        got = memo.get(key)
        if got is None:
            got = memo[key] = self._near_points(a, b, layer)
        return got

    def _near_points(self, a, b, layer: int) -> list:
        g = self.pitch
        x0, x1 = sorted((a[0], b[0]))
        y0, y1 = sorted((a[1], b[1]))
        ia, ib, ja, jb = self.index_box((x0, y0, x1, y1), g / 2)
        out = []
        for j in range(ja, jb):
            for i in range(ia, ib):
                x, y = self.x(i), self.y(j)
                gx = max(x0 - x, 0.0, x - x1)
                gy = max(y0 - y, 0.0, y - y1)
                if gx * gx + gy * gy <= (g / 2) ** 2 + TOL:
                    out.append((layer, j, i))
        return out

    # ----------------------------------------------------------------- obstacles
    def _collect(self) -> None:
        board = self.board
        allL = tuple(range(self.L))
        for k, pad in enumerate(self.pads):
            core, rad = self.layout.pad_core(k)
            layers = tuple(self.layers.index(l) for l in pad.layers if l in self.layers)
            self.obstacles.append(Obstacle("copper", box_of_core(core), rad, layers, pad.net,
                                           self.net_class.get(pad.net, "default"),
                                           core=core if pad.angle else None))
        for t in board.traces:
            if t.layer not in self.layers:
                continue
            li = (self.layers.index(t.layer),)
            pts = [tuple(map(float, p)) for p in t.points]
            segs = [(a, b) for a, b in zip(pts, pts[1:]) if a != b] or [(pts[0], pts[0])]
            for a, b in segs:
                bx = (min(a[0], b[0]), min(a[1], b[1]), max(a[0], b[0]), max(a[1], b[1]))
                self.obstacles.append(Obstacle("copper", bx, t.width / 2, li, t.net,
                                               self.net_class.get(t.net, "default")))
        for v in board.vias:
            self.obstacles.append(Obstacle("copper", (v.at[0], v.at[1], v.at[0], v.at[1]), v.diameter / 2,
                                           allL, v.net, self.net_class.get(v.net, "default")))
        for jm in board.jumpers:
            for at in (jm.start, jm.end):
                self.obstacles.append(Obstacle("copper", (at[0], at[1], at[0], at[1]), jm.diameter / 2,
                                               allL, jm.net, self.net_class.get(jm.net, "default")))
        for h in self.layout.npth:
            self.obstacles.append(Obstacle("npth", (h.x, h.y, h.x, h.y), h.drill / 2, allL))
        for ko in board.keepouts:
            if not ko.is_rect:
                continue                        # polygons go into the base maps
            xs = [p[0] for p in ko.polygon]
            ys = [p[1] for p in ko.polygon]
            layers = tuple(self.layers.index(l) for l in ko.layers_on(self.layers) if l in self.layers)
            self.obstacles.append(Obstacle("keepout", (min(xs), min(ys), max(xs), max(ys)), 0.0, layers))
        for body in self.layout.bodies:
            if not body.keepout:
                continue
            self.obstacles.append(Obstacle("body", body.rect, 0.0, allL, owners=body.owners,
                                           core=body.polygon if body.turned else None))

    def _need(self, ob: Obstacle, prof: ClassProfile, half: float) -> float:
        """Centre distance copper of half-size `half` of class `prof` must keep from `ob`'s core."""
        if ob.kind == "copper":
            return ob.radius + half + prof.clearance_to.get(ob.cls, prof.clearance_to["default"])
        if ob.kind == "npth":
            return ob.radius + half + self.rules.edge_clearance
        return ob.radius + half

    def stamp(self, ob: Obstacle, sign: int, *, soft: bool = False, only: Optional[ClassProfile] = None,
              cell=None, hmap=None, vmap=None, viamap=None) -> None:
        """Add `sign` to every cell, step and via place that `ob` blocks, for every class (or `only`)."""
        profs = [only] if only is not None else list(self.profiles.values())
        for prof in profs:
            k = prof.index
            c = cell if cell is not None else (self.soft_cell[k] if soft else self.hard_cell[k])
            self._stamp_maps(ob, self._need(ob, prof, prof.half), sign, c,
                             None if soft else (hmap if hmap is not None else self.hard_h[k]),
                             None if soft else (vmap if vmap is not None else self.hard_v[k]))
            vm = viamap if viamap is not None else (self.soft_via[k] if soft else self.hard_via[k])
            half = (self.jump_d / 2 + self.jump_slack) if self.one_layer else self.via_d / 2
            need = self._need(ob, prof, half)
            if soft and ob.kind == "copper" and ob.radius > 0 and ob.box[0] == ob.box[2] and ob.box[1] == ob.box[3]:
                # a via or jumper end of another net: its hole keeps min_hole_spacing too
                drill = self.jump_drill if self.one_layer else self.via_drill
                need = max(need, drill + self.rules.min_hole_spacing + 2 * self.jump_slack)
            self._stamp_points(ob.box, need, sign, vm, core=ob.core)

    def _stamp_points(self, box: Box, need: float, sign: int, arr2d: np.ndarray, core=None, at=None) -> None:
        """Add `sign` at the grid points within `need` of `box`; `at` = (i, j) of arr2d's first
        element when it holds only a window of the grid."""
        ia, ib, ja, jb = self.index_box(box, need)
        if ia >= ib or ja >= jb:
            return
        X, Y = self.xs[ia:ib], self.ys[ja:jb]
        lim = need - TOL
        if lim <= 0:
            return
        if core is not None:           # a turned core: exact distances from shapely
            m = self._core_distance(core, X, Y) < lim
        else:
            dx = _gap(X, X, box[0], box[2])
            dy = _gap(Y, Y, box[1], box[3])
            m = (dy[:, None] ** 2 + dx[None, :] ** 2) < lim * lim
        if at is not None:
            ia, ib, ja, jb = ia - at[0], ib - at[0], ja - at[1], jb - at[1]
        arr2d[ja:jb, ia:ib] += sign * m

    @staticmethod
    def _core_distance(core, X, Y, di: float = 0.0, dj: float = 0.0) -> np.ndarray:
        """Exact distance (ny, nx) from `core` to the grid points X x Y, or to the steps from
        each point by (di, dj) when one is given."""
        GX, GY = np.meshgrid(X, Y)
        if di or dj:
            a = np.stack([GX.ravel(), GY.ravel()], 1)
            geoms = shapely.linestrings(np.stack([a, a + np.array([di, dj])], 1))
        else:
            geoms = shapely.points(GX.ravel(), GY.ravel())
        return shapely.distance(core, geoms).reshape(GX.shape)

    def _stamp_maps(self, ob: Obstacle, need: float, sign: int, cell, hmap, vmap) -> None:
        lim = need - TOL
        if lim <= 0:
            return
        ia, ib, ja, jb = self.index_box(ob.box, need)
        if ia >= ib or ja >= jb:
            return
        g = self.pitch
        x0, y0, x1, y1 = ob.box
        X, Y = self.xs[ia:ib], self.ys[ja:jb]
        if ob.core is not None:          # a turned core: exact distances from shapely
            mc = self._core_distance(ob.core, X, Y) < lim
            mh = mv = None
            if hmap is not None:
                mh = self._core_distance(ob.core, X, Y, g, 0.0) < lim
                mv = self._core_distance(ob.core, X, Y, 0.0, g) < lim
            for l in ob.layers:
                cell[l, ja:jb, ia:ib] += sign * mc
                if mh is not None:
                    hmap[l, ja:jb, ia:ib] += sign * mh
                    vmap[l, ja:jb, ia:ib] += sign * mv
            return
        dx = _gap(X, X, x0, x1)
        dy = _gap(Y, Y, y0, y1)
        lim2 = lim * lim
        mc = (dy[:, None] ** 2 + dx[None, :] ** 2) < lim2
        mh = mv = None
        if hmap is not None:
            dxh = _gap(X, X + g, x0, x1)        # step (i, j) -> (i + 1, j)
            dyv = _gap(Y, Y + g, y0, y1)        # step (i, j) -> (i, j + 1)
            mh = (dy[:, None] ** 2 + dxh[None, :] ** 2) < lim2
            mv = (dyv[:, None] ** 2 + dx[None, :] ** 2) < lim2
        for l in ob.layers:
            cell[l, ja:jb, ia:ib] += sign * mc
            if mh is not None:
                hmap[l, ja:jb, ia:ib] += sign * mh
                vmap[l, ja:jb, ia:ib] += sign * mv

    # ----------------------------------------------------------------- net-independent maps
    def _base(self) -> None:
        """Edge, polygon keepouts and hole spacing: the same for every net of a class."""
        P, L, ny, nx = self.hard_cell.shape
        g = self.pitch
        outline = self.outline
        shapely.prepare(outline)
        ec = self.rules.edge_clearance
        half_most = max([p.half for p in self.profiles.values()] + [self.via_d / 2, self.jump_d / 2 + self.jump_slack])
        inside, dist = self._edge_band(outline, ec + half_most + 2 * g)
        self.base_cell = np.zeros((P, L, ny, nx), bool)
        self.base_h = np.zeros((P, L, ny, nx), bool)
        self.base_v = np.zeros((P, L, ny, nx), bool)
        for prof in self.profiles.values():
            k = prof.index
            need = ec + prof.half
            ok = (inside & (dist >= need - TOL)).reshape(ny, nx)
            h = np.zeros((ny, nx), bool)
            v = np.zeros((ny, nx), bool)
            h[:, :-1] = ok[:, :-1] & ok[:, 1:]
            v[:-1, :] = ok[:-1, :] & ok[1:, :]
            # a step between two good points can still pass a concave corner: measure the steps near the edge
            near = (dist < need + g).reshape(ny, nx)
            self._refine_steps(h, v, near, outline.exterior, need, inside_poly=outline)
            self.base_cell[k, :] = ok
            self.base_h[k, :] = h
            self.base_v[k, :] = v
        # the edge alone, kept only where polygon keepouts change it (router.blockage names the cause)
        self.edge_base = None
        if any(not ko.is_rect for ko in self.board.keepouts):
            self.edge_base = (self.base_cell.copy(), self.base_h.copy(), self.base_v.copy())
        # polygon keepouts: copper may touch, not enter
        for ko in self.board.keepouts:
            if ko.is_rect:
                continue
            poly = Polygon(ko.polygon)
            layers = [self.layers.index(l) for l in ko.layers_on(self.layers) if l in self.layers]
            for prof in self.profiles.values():
                k = prof.index
                bad_c, bad_h, bad_v = self._poly_block(poly, prof.half)
                for l in layers:
                    self.base_cell[k, l] &= ~bad_c
                    self.base_h[k, l] &= ~bad_h
                    self.base_v[k, l] &= ~bad_v
        # vias (two layers) or jumper ends (one layer): edge, every keepout, hole spacing, no pad overlap
        if self.one_layer:
            half, drill = self.jump_d / 2 + self.jump_slack, self.jump_drill
        else:
            half, drill = self.via_d / 2, self.via_drill
        okv = (inside & (dist >= ec + half - TOL)).reshape(ny, nx)
        for ko in self.board.keepouts:
            bad, _, _ = self._poly_block(Polygon(ko.polygon), half)
            okv &= ~bad
        blockv = np.zeros((ny, nx), np.int32)
        spacing = self.rules.min_hole_spacing + self.jump_slack     # a jumper's far end sits up to the slack off its grid point
        for k, pad in enumerate(self.pads):
            core, rad = self.layout.pad_core(k)
            self._stamp_points(box_of_core(core), rad + half, 1, blockv, core=core if pad.angle else None)
            if pad.drill is not None:
                self._stamp_points((pad.x, pad.y, pad.x, pad.y), pad.drill / 2 + drill / 2 + spacing, 1, blockv)
        for h in self.layout.npth:
            self._stamp_points((h.x, h.y, h.x, h.y), h.drill / 2 + drill / 2 + spacing, 1, blockv)
        for v in self.board.vias:
            self._stamp_points((v.at[0], v.at[1]) * 2, v.drill / 2 + drill / 2 + spacing, 1, blockv)
        for jm in self.board.jumpers:
            for at in (jm.start, jm.end):
                self._stamp_points((at[0], at[1]) * 2, jm.drill / 2 + drill / 2 + spacing, 1, blockv)
        if self.one_layer:
            # a jumper's wire lies on the part side: not across a part body, nor another wire
            for body in self.layout.bodies:
                poly = body.polygon if body.turned else None
                self._stamp_points(body.rect, half, 1, blockv, core=poly)
                self._stamp_points(body.rect, TOL * 2, 1, self.wire, core=poly)
            for jm in self.board.jumpers:
                self.add_wire(jm.start, jm.end, +1)
        self.base_via = okv & (blockv == 0)

    def _edge_band(self, outline, limit: float, block: int = 8):
        """Inside-or-on the outline, and the exact edge distance, of every grid point (raveled);
        a distance of `limit` or more may be given as a lower bound that is itself at least
        `limit`. The grid is taken in blocks of `block` x `block` points: a block whose centre
        lies farther from the edge than the block's half diagonal is wholly on one side, and
        its points lie no nearer than the centre's distance less the half diagonal (a distance
        changes by at most the move), so only blocks near the edge are measured point by point."""
        ny, nx, g = self.ny, self.nx, self.pitch
        nbj, nbi = -(-ny // block), -(-nx // block)
        cx = self.xs[0] + (np.arange(nbi) * block + (block - 1) / 2) * g
        cy = self.ys[0] + (np.arange(nbj) * block + (block - 1) / 2) * g
        CX, CY = np.meshgrid(cx, cy)
        dc = edge_distance_xy(self.board, CX.ravel(), CY.ravel()).reshape(nbj, nbi)
        ic = (shapely.contains_xy(outline, CX.ravel(), CY.ravel())).reshape(nbj, nbi)
        r = (block - 1) / 2 * g * math.sqrt(2) + 1e-6
        clear = dc - r > 0                         # no edge within the block
        far = clear & (dc - r >= limit)
        rep = lambda a: np.repeat(np.repeat(a, block, axis=0), block, axis=1)[:ny, :nx]
        dist = rep(np.where(far, dc - r, 0.0))
        inside = rep(ic & clear)
        near = ~rep(far)
        close = ~rep(clear)
        jj, ii = np.nonzero(near)
        X, Y = self.xs[ii], self.ys[jj]
        dist[jj, ii] = edge_distance_xy(self.board, X, Y)     # exact, arcs included
        jj, ii = np.nonzero(close)
        X, Y = self.xs[ii], self.ys[jj]
        inside[jj, ii] = shapely.contains_xy(outline, X, Y) | shapely.intersects_xy(outline, X, Y)
        return inside.ravel(), dist.ravel()

    def _refine_steps(self, h, v, near, boundary, need, inside_poly) -> None:
        g = self.pitch
        for arr, di, dj in ((h, 1, 0), (v, 0, 1)):
            jj, ii = np.nonzero(arr & near)
            if len(jj) == 0:
                continue
            xa, ya = self.xs[ii], self.ys[jj]
            lines = shapely.linestrings(np.stack([np.stack([xa, ya], 1), np.stack([xa + di * g, ya + dj * g], 1)], 1))
            d = edge_distance(self.board, lines)
            good = (d >= need - TOL) & shapely.covers(inside_poly, lines)
            arr[jj[~good], ii[~good]] = False

    def _poly_block(self, poly: Polygon, half: float):
        """Cells and steps whose copper of half-size `half` would enter polygon `poly`'s inside."""
        ny, nx = self.ny, self.nx
        g = self.pitch
        bad_c = np.zeros((ny, nx), bool)
        bad_h = np.zeros((ny, nx), bool)
        bad_v = np.zeros((ny, nx), bool)
        ia, ib, ja, jb = self.index_box(tuple(poly.bounds), half + g)
        if ia >= ib or ja >= jb:
            return bad_c, bad_h, bad_v
        shapely.prepare(poly)
        X, Y = np.meshgrid(self.xs[ia:ib], self.ys[ja:jb])
        pts = shapely.points(X.ravel(), Y.ravel())
        inner = poly.buffer(-TOL, join_style="mitre")
        d = shapely.distance(poly, pts)
        strictly_in = shapely.intersects(inner, pts) if not inner.is_empty else np.zeros(len(pts), bool)
        c = strictly_in | ((d < half - TOL) if half > 0 else False)
        bad_c[ja:jb, ia:ib] = np.asarray(c).reshape(X.shape)
        for arr, di, dj in ((bad_h, 1, 0), (bad_v, 0, 1)):
            xa, ya = X.ravel(), Y.ravel()
            lines = shapely.linestrings(np.stack([np.stack([xa, ya], 1), np.stack([xa + di * g, ya + dj * g], 1)], 1))
            dl = shapely.distance(poly, lines)
            hit = (shapely.intersects(inner, lines) if not inner.is_empty else np.zeros(len(xa), bool))
            hit = hit | ((dl < half - TOL) if half > 0 else False)
            arr[ja:jb, ia:ib] = np.asarray(hit).reshape(X.shape)
        return bad_c, bad_h, bad_v

    # ----------------------------------------------------------------- wires (one layer)
    def wire_cells(self, a, b):
        """Index slices of the cells a jumper wire from `a` to `b` passes (both ends included)."""
        g = self.pitch
        ia = int(math.floor(min(a[0], b[0]) / g + 1e-9)) - self.i0
        ib = int(math.ceil(max(a[0], b[0]) / g - 1e-9)) - self.i0
        ja = int(math.floor(min(a[1], b[1]) / g + 1e-9)) - self.j0
        jb = int(math.ceil(max(a[1], b[1]) / g - 1e-9)) - self.j0
        return slice(max(ja, 0), min(jb + 1, self.ny)), slice(max(ia, 0), min(ib + 1, self.nx))

    def add_wire(self, a, b, sign: int) -> None:
        sj, si = self.wire_cells(a, b)
        self.wire[sj, si] += sign

    # ----------------------------------------------------------------- soft copper (negotiation)
    def soft_items(self, net: str, segments, vias, jumpers) -> list[Obstacle]:
        """Obstacles for a routed net's copper: segments ((x0, y0), (x1, y1), layer index, width), via and jumper ends."""
        cls = self.net_class.get(net, "default")
        out = []
        for a, b, l, w in segments:
            bx = (min(a[0], b[0]), min(a[1], b[1]), max(a[0], b[0]), max(a[1], b[1]))
            out.append(Obstacle("copper", bx, w / 2, (l,), net, cls))
        allL = tuple(range(self.L))
        for at in vias:
            out.append(Obstacle("copper", (at[0], at[1], at[0], at[1]), self.via_d / 2, allL, net, cls))
        for a, b in jumpers:
            for at in (a, b):
                out.append(Obstacle("copper", (at[0], at[1], at[0], at[1]), self.jump_d / 2, allL, net, cls))
        return out

    def add_soft(self, items, sign: int = +1) -> None:
        """Count routed copper in (`sign` +1) or out (-1) of the soft maps of every class: what
        :meth:`stamp` with ``soft=True`` does item by item, done for all items at once by a
        compiled loop with the same arithmetic (:func:`_stamp_boxes`)."""
        if not items:
            return
        if any(ob.core is not None for ob in items):
            for ob in items:
                self.stamp(ob, sign, soft=True)
            return
        boxes = np.array([ob.box for ob in items], dtype=np.float64).reshape(-1, 4)
        lmask = np.array([sum(1 << l for l in ob.layers) for ob in items], dtype=np.int64)
        every = np.ones(len(items), dtype=np.int64)
        half = (self.jump_d / 2 + self.jump_slack) if self.one_layer else self.via_d / 2
        drill = self.jump_drill if self.one_layer else self.via_drill
        hole_need = drill + self.rules.min_hole_spacing + 2 * self.jump_slack
        holes = [ob.kind == "copper" and ob.radius > 0 and ob.box[0] == ob.box[2] and ob.box[1] == ob.box[3]
                 for ob in items]
        for prof in self.profiles.values():
            k = prof.index
            need_c = np.array([self._need(ob, prof, prof.half) for ob in items], dtype=np.float64)
            need_v = np.array([max(self._need(ob, prof, half), hole_need) if hole else self._need(ob, prof, half)
                               for ob, hole in zip(items, holes)], dtype=np.float64)
            _stamp_boxes(self.soft_cell[k], boxes, need_c, lmask, self.pitch, self.i0, self.j0, self.xs, self.ys,
                         int(sign), TOL)
            _stamp_boxes(self.soft_via[k][None], boxes, need_v, every, self.pitch, self.i0, self.j0, self.xs,
                         self.ys, int(sign), TOL)

    # ----------------------------------------------------------------- one net's search space
    def own_obstacles(self, net: str) -> list[Obstacle]:
        return [ob for ob in self.obstacles if (ob.kind == "copper" and ob.net == net)
                or (ob.kind == "body" and net in ob.owners)]

    def space_for(self, net: str, extra: Optional[np.ndarray] = None, *, soft_block: bool = True,
                  own: Optional[list[Obstacle]] = None) -> SearchSpace:
        """The search space of `net`: hard obstacles of every other net, its own subtracted.

        Parameters
        ----------
        extra : int32 array [L, ny, nx], optional
            Cost of entering each cell (negotiation terms).
        soft_block : bool
            Vias (jumper ends) may not stand where other nets' routed copper would be too close.
        """
        prof = self.profile_of(net)
        k = prof.index
        cell = self.hard_cell[k].copy()
        hm = self.hard_h[k].copy()
        vm = self.hard_v[k].copy()
        via = self.hard_via[k].copy()
        for ob in (own if own is not None else self.own_obstacles(net)):
            self.stamp(ob, -1, only=prof, cell=cell, hmap=hm, vmap=vm, viamap=via)
        open_cell = (cell == 0) & self.base_cell[k]
        open_h = (hm == 0) & self.base_h[k]
        open_v = (vm == 0) & self.base_v[k]
        via_ok = (via == 0) & self.base_via
        if soft_block:
            via_ok &= self.soft_via[k] == 0
        L = self.L
        if extra is None:
            extra = np.zeros((L, self.ny, self.nx), np.int32)
        if self.one_layer:
            return SearchSpace(open_cell.astype(np.uint8), open_h.astype(np.uint8), open_v.astype(np.uint8),
                               np.zeros((self.ny, self.nx), np.uint8), extra,
                               jump_ok=via_ok.astype(np.uint8), wire_block=(self.wire > 0).astype(np.uint8),
                               jump_cells=self.jump_cells)
        return SearchSpace(open_cell.astype(np.uint8), open_h.astype(np.uint8), open_v.astype(np.uint8),
                           via_ok.astype(np.uint8), extra)

    # ----------------------------------------------------------------- exact tests for off-grid pieces
    def _obstacle_arrays(self):
        """The hard obstacles as arrays (boxes, radii, layer bits, nets, kinds), built once."""
        if getattr(self, "_ob_arrays", None) is None:
            obs = self.obstacles
            boxes = np.array([ob.box for ob in obs], dtype=np.float64).reshape(-1, 4)
            rads = np.array([ob.radius for ob in obs], dtype=np.float64)
            lmask = np.array([sum(1 << l for l in ob.layers) for ob in obs], dtype=np.int64)
            self._ob_arrays = (boxes, rads, lmask, [ob.net for ob in obs], [ob.kind for ob in obs],
                               [ob.owners for ob in obs])
            self._ob_need = {}
        return self._ob_arrays

    def _base_need(self, prof: ClassProfile) -> np.ndarray:
        """Per obstacle: the centre distance a zero-width trace of class `prof` must keep."""
        need = self._ob_need.get(prof.name)
        if need is None:
            need = np.array([self._need(ob, prof, 0.0) for ob in self.obstacles], dtype=np.float64)
            self._ob_need[prof.name] = need
        return need

    def obstacle_arrays(self, items: list, prof: ClassProfile):
        """Other copper as arrays for :meth:`segment_clear`: boxes, layer bits, and the centre
        distance a zero-width trace of class `prof` must keep from each."""
        if not items:
            return None
        boxes = np.array([ob.box for ob in items], dtype=np.float64).reshape(-1, 4)
        lmask = np.array([sum(1 << l for l in ob.layers) for ob in items], dtype=np.int64)
        need = np.array([self._need(ob, prof, 0.0) for ob in items], dtype=np.float64)
        return boxes, lmask, need

    def segment_clear(self, net: str, a, b, layer: int, width: float, others=None, base=None) -> bool:
        """True when a trace segment a-b of `net` keeps every required distance (hard and edge,
        and from `others`, :meth:`obstacle_arrays` of copper laid for other nets). `base`, when
        given, replaces the per-obstacle centre distances (a pad escape's relaxed rule, router.escape)."""
        half = width / 2
        bx = (min(a[0], b[0]), min(a[1], b[1]), max(a[0], b[0]), max(a[1], b[1]))
        # the fixed copper, edge and keepouts do not change on one grid: their answer is kept per
        # segment (the same segments are measured again for every strict route of a net)
        memo = self.__dict__.setdefault("_fixed_clear", {})
        key = (net, a if type(a) is tuple else tuple(a), b if type(b) is tuple else tuple(b), layer, width,
               None if base is None else id(base))      # the array itself is kept with the answer
        got = memo.get(key)
        if got is None or got[0] is not base:
            got = memo[key] = (base, self._fixed_clear_of(net, a, b, layer, half, bx, base))
        if not got[1]:
            return False
        return others is None or self.clear_of(others, a, b, layer, width)

    @staticmethod
    def clear_of(others, a, b, layer: int, width: float) -> bool:
        """True when a trace segment a-b (axis-parallel, or a point) keeps every required distance
        from `others` (:meth:`obstacle_arrays` of copper laid for other nets) alone."""
        half = width / 2
        bx = (min(a[0], b[0]), min(a[1], b[1]), max(a[0], b[0]), max(a[1], b[1]))
        oboxes, omask, oneed = others
        ox = np.maximum(np.maximum(oboxes[:, 0] - bx[2], 0.0), bx[0] - oboxes[:, 2])
        oy = np.maximum(np.maximum(oboxes[:, 1] - bx[3], 0.0), bx[1] - oboxes[:, 3])
        return not np.any((np.hypot(ox, oy) < oneed + half - TOL) & ((omask >> layer) & 1).astype(bool))

    def _fixed_clear_of(self, net: str, a, b, layer: int, half: float, bx, base) -> bool:
        """:meth:`segment_clear` against the grid's fixed obstacles, the outline and the keepouts only."""
        boxes, rads, lmask, nets, kinds, owners = self._obstacle_arrays()
        if base is None:
            base = self._base_need(self.profile_of(net))
        gx = np.maximum(np.maximum(boxes[:, 0] - bx[2], 0.0), bx[0] - boxes[:, 2])
        gy = np.maximum(np.maximum(boxes[:, 1] - bx[3], 0.0), bx[1] - boxes[:, 3])
        hit = (np.hypot(gx, gy) < base + half - TOL) & ((lmask >> layer) & 1).astype(bool)
        line = shapely.linestrings([a, b]) if a != b else shapely.points(a)
        for k in np.nonzero(hit)[0]:
            ob = self.obstacles[k]
            if ob.kind == "copper" and ob.net == net:
                continue
            if ob.kind == "body" and net in ob.owners:
                continue
            if ob.core is not None and not shapely.distance(ob.core, line) < base[k] + half - TOL:
                continue                 # a turned core: its box was near, the core itself is not
            return False
        if not shapely.covers(self.outline, line):
            return False
        need = self.rules.edge_clearance + half - TOL
        if edge_distance(self.board, [line], upto=need)[0] < need:
            return False
        for layers, poly, inner in self._keepout_shapes():
            if layer not in layers:
                continue
            if (not inner.is_empty and inner.intersects(line)) or (half > 0 and poly.distance(line) < half - TOL):
                return False
        return True

    def _keepout_shapes(self) -> list:
        """Per keepout of the board: its layer indices, its polygon and the polygon shrunk by TOL
        (what copper may not enter), made once per grid (the board's keepouts do not change while it
        routes; :meth:`segment_clear` made them again for every segment)."""
        shapes = self.__dict__.get("_ko_shapes")
        if shapes is None:
            shapes = []
            for ko in self.board.keepouts:
                poly = Polygon(ko.polygon)
                shapes.append(({self.layers.index(l) for l in ko.layers_on(self.layers) if l in self.layers},
                               poly, poly.buffer(-TOL, join_style="mitre")))
            self._ko_shapes = shapes
        return shapes
