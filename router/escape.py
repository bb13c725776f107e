"""Pad escape: leaving a fine-pitch pad for the grid, necks, and a footprint's own pad spacing.

A pad whose grid points are all too close to its neighbours (rows of 0.5 mm pitch pads,
or a class whose width plus clearance is wider than the gap beside its own pads) is left
the way a designer leaves it: straight out along one axis, out of the end that faces away
from the part's body first, then sideways to the first open grid point. The exit is laid
off the grid and checked exactly against every other copper (:meth:`RoutingGrid.segment_clear`).
Where the class width does not fit, the exit is a *neck*: a trace of the class's
``neck_width`` no longer than ``neck_length`` from the pad's edge, written as a trace of
its own.

The footprint's own pad spacing (the contract's "Conventions"): two pads of one part
closer together than the class clearance are the footprint's business. Within
``neck_length`` of such a pad, a trace escaping from it keeps at least the larger of
``min_clearance`` and the footprint's own pad gap from the part's other pads
(:func:`router.rules.own_pad_clearance`). :class:`OwnPadRule` applies that rule to the
copper of a board for ``check``; :func:`escape_access` applies the same rule to the
router's exits; the final exact check of the router is ``check`` itself.
"""
from __future__ import annotations

import math
from collections import defaultdict
from typing import Optional

import numpy as np
import shapely
from shapely.geometry import Point as SPoint

from .geometry import PlacedPad, ray_through
from .model import Board, NetClass
from .rules import own_pad_clearance
from .units import TOL

__all__ = ["NECK_LENGTH", "Neck", "EscapeVia", "neck_of", "own_gaps", "OwnPadRule", "escape_access",
           "escape_vias", "neck_traces", "escape_via_pads"]

#: Default ``neck_length``: how far from the pad's edge a neck may run, in mm. Common practice:
#: a neck ends as soon as the trace is clear of the fine-pitch row, within about a millimetre.
NECK_LENGTH = 1.0
#: How many of the shortest exits each way out of a pad offers the search (each to its own grid
#: point; a neck adds its straightest long one). Our choice: four, so that two neighbours in a
#: fine-pitch row each keep an exit when the other takes one.
EXITS = 4


class Neck(tuple):
    """The points of a pad exit (a tuple of (x, y)) with its width: the class width, or
    narrower (a neck). Either is written as a trace of its own, so that every segment of
    it lies within ``neck_length`` of its pad, where the footprint's own spacing applies."""
    width: float


class EscapeVia(tuple):
    """A pad's exit by a via beside it (:func:`escape_vias`): the points of the link on the
    pad's layer, from inside the pad's copper to the via's centre (one point, the centre, when
    the via's disc touches the pad), with ``layer`` (the pad's layer index), ``via`` ((j, i)
    of the via's grid point) and ``width`` (the link's width: the class's, or a neck's)."""
    layer: int
    via: tuple
    width: float


def neck_of(board: Board, nc: NetClass) -> tuple[float, float]:
    """(neck_width, neck_length) of a class: by default the board house's ``min_trace_width``
    (never wider than the class's own width) and :data:`NECK_LENGTH`."""
    w = nc.neck_width if nc.neck_width is not None else board.rules.min_trace_width
    w = min(w, max(nc.trace_width, board.rules.min_trace_width))
    return w, (nc.neck_length if nc.neck_length is not None else NECK_LENGTH)


def own_gaps(board: Board, pads: Optional[list] = None) -> dict[str, tuple[float, str]]:
    """Per placed part: the smallest copper gap between two of its pads of different pins on a
    shared layer, and the footprint's name. Parts with fewer than two such pads are left out."""
    from .layout import resolve
    lay = resolve(board)                 # the board resolved once: its pads and their exact cores
    pads = lay.pads if pads is None else pads
    by_ref: dict[str, list] = defaultdict(list)
    for p in pads:
        by_ref[p.ref].append(p)
    fp = {p.ref: p.footprint for p in board.parts}
    out = {}
    for ref, ps in by_ref.items():
        if len(ps) < 2:
            continue
        cores = [lay.core_of(p) for p in ps]
        geoms = np.array([c for c, _ in cores], dtype=object)
        rads = np.array([r for _, r in cores])
        best = math.inf
        for k in range(len(ps) - 1):
            others = [q for q in range(k + 1, len(ps)) if ps[q].pin != ps[k].pin
                      and set(ps[q].layers) & set(ps[k].layers)]
            if not others:
                continue
            d = shapely.distance(geoms[k], geoms[others]) - rads[k] - rads[others]
            best = min(best, float(d.min()))
        if best < math.inf:
            out[ref] = (max(best, 0.0), fp.get(ref, "?"))
    return out


class OwnPadRule:
    """The footprint's own pad spacing applied to a board's copper items (for ``check``).

    Parameters
    ----------
    board : Board
    items : list of CopperItem
        The board's copper (:func:`router.copper.copper_items`).
    strict : bool
        ``check --strict``: pads of one part keep the class clearance like any other copper.
    """

    def __init__(self, board: Board, items, strict: bool = False):
        self.board = board
        self.strict = strict
        pads = [it.pad for it in items if it.kind == "pad"]
        self.gaps = own_gaps(board, pads)
        self.pads_of: dict[tuple[str, str], list] = defaultdict(list)     # (net, ref) -> pad items
        for it in items:
            if it.kind == "pad":
                self.pads_of[(it.net, it.pad.ref)].append(it)

    def required(self, a, b, required: float) -> float:
        """The clearance copper items `a` and `b` must keep, given the pair's ordinary `required`."""
        if a.kind == "pad" and b.kind == "pad" and a.pad.ref == b.pad.ref:
            return required if self.strict else min(required, self.board.rules.min_clearance)
        if a.kind == "pad" and b.kind == "trace":
            pad, tr = a, b
        elif b.kind == "pad" and a.kind == "trace":
            pad, tr = b, a
        else:
            return required
        ref = pad.pad.ref
        gap = self.gaps.get(ref)
        if gap is None:
            return required
        _, length = neck_of(self.board, self.board.net_class(tr.net))
        ends = [SPoint(c) for c in tr.core.coords]
        for own in self.pads_of.get((tr.net, ref), ()):
            if all(own.core.distance(e) - own.radius <= length + TOL for e in ends):
                return own_pad_clearance(self.board, required, gap[0])
        return required

    def warnings(self):
        """One (ref, footprint, gap, required) per part whose own pads of different nets sit
        closer together than those nets' required clearance."""
        from .rules import required_clearance
        out = []
        by_ref: dict[str, list] = defaultdict(list)
        for (net, ref), its in self.pads_of.items():
            by_ref[ref].extend(its)
        for ref in sorted(by_ref):
            its = by_ref[ref]
            worst = None
            for k in range(len(its)):
                for q in range(k + 1, len(its)):
                    a, b = its[k], its[q]
                    if a.net == b.net or not set(a.layers) & set(b.layers):
                        continue
                    bx = a.bounds()
                    ob = b.bounds()
                    req = required_clearance(self.board, self.board.net_class(a.net), self.board.net_class(b.net))
                    if ob[0] > bx[2] + req or bx[0] > ob[2] + req or ob[1] > bx[3] + req or bx[1] > ob[3] + req:
                        continue
                    d = a.core.distance(b.core) - a.radius - b.radius
                    if d < req - TOL and (worst is None or d < worst[0]):
                        worst = (d, req)
            if worst is not None:
                fp = self.gaps.get(ref, (0.0, "?"))[1]
                out.append((ref, fp, max(worst[0], 0.0), worst[1]))
        return out


def _body_centre(board: Board, ref: str):
    for p in board.parts:
        if p.ref == ref and p.at is not None:
            return p.at
    return None


def _relaxed_base(grid, net: str, pad: PlacedPad) -> np.ndarray:
    """Per obstacle of `grid`: the centre distance a zero-width trace of `net` escaping from
    `pad` keeps, with the footprint's own pad spacing for the other pads of `pad`'s part."""
    cache = grid.__dict__.setdefault("_escape_base", {})
    prof = grid.profile_of(net)
    key = (prof.name, pad.ref)
    base = cache.get(key)
    if base is not None:
        return base
    grid._obstacle_arrays()
    base = grid._base_need(prof).copy()
    gaps = grid.__dict__.get("_own_gaps")
    if gaps is None:
        gaps = grid._own_gaps = own_gaps(grid.board, grid.pads)
    gap = gaps.get(pad.ref)
    if gap is not None:
        for k, p in enumerate(grid.pads):          # the grid's first obstacles are its pads, in order
            if p.ref != pad.ref:
                continue
            ob = grid.obstacles[k]
            req = prof.clearance_to.get(ob.cls, prof.clearance_to["default"])
            base[k] = ob.radius + own_pad_clearance(grid.board, req, gap[0])
    cache[key] = base
    return base


def escape_access(grid, space, net: str, pad: PlacedPad, others=None, most: int = 6, ways: int = EXITS,
                  deeper: int = 0, jog: Optional[float] = None) -> dict:
    """Exits from `pad` to open grid points: cell (l, j, i) -> the exit's points from the pad's edge.

    Each exit leaves the pad straight along x or y from the middle of its copper (out of the end
    facing away from the part's body first), runs to a grid row (or column) beyond, then
    sideways to a grid point that is open to the net. Every segment is checked exactly
    (:meth:`RoutingGrid.segment_clear`) with the footprint's own pad spacing for the other pads
    of the part. The class width is tried first; where it does not fit, a :class:`Neck` of the
    class's ``neck_width`` no longer than ``neck_length``. At most `most` exits in all, and
    `ways` of the shortest each way out (:data:`EXITS`; a fan-out plan asks for more), and
    exits of the class width up to `deeper` grid pitches longer than ``neck_length``. `jog`:
    only exits whose sideways run is at most this many mm (a fan-out plan's staircase).
    """
    core, rad = grid.layout.core_of(pad)
    x0, y0, x1, y1 = (float(v) for v in core.bounds)
    g = grid.pitch
    prof = grid.profile_of(net)
    nc = grid.board.net_class(net)
    nw, nl = neck_of(grid.board, nc)
    cw = prof.width
    widths = [(cw, max(nl, 2 * g) + deeper * g)] + ([(nw, nl)] if nw < cw - TOL else [])
    layers = [grid.layer_index(l) for l in pad.layers if l in grid.layers]
    centre = _body_centre(grid.board, pad.ref) or (pad.x, pad.y)
    cx, cy = (x0 + x1) / 2, (y0 + y1) / 2
    dirs = []
    for dx, dy in ((1, 0), (-1, 0), (0, 1), (0, -1)):
        out = dx * (pad.x - centre[0]) + dy * (pad.y - centre[1])
        along = (x1 - x0 + 2 * rad) if dx else (y1 - y0 + 2 * rad)      # leave along the long axis first
        dirs.append((-round(out, 6), -round(along, 6), dx, dy))
    dirs.sort()
    relaxed = _relaxed_base(grid, net, pad)
    grid._obstacle_arrays()
    full = grid._base_need(prof)
    found: dict = {}
    for _, _, dx, dy in dirs:
        if pad.angle:                 # a turned pad: where the axis from its centre leaves its copper
            far = (x1 - x0) + (y1 - y0) + 2 * rad + 1.0
            t = ray_through(core, rad, (pad.x, pad.y), (dx, dy), far, entering=False)
            t = max(t - 2 * TOL, 0.0)    # just inside, so the exit touches the pad after rounding
            start = (pad.x + dx * t, pad.y + dy * t)
        elif dx:
            start = (x1 + rad if dx > 0 else x0 - rad, cy)
        else:
            start = (cx, y1 + rad if dy > 0 else y0 - rad)
        start = (round(start[0], 6), round(start[1], 6))
        n_dir = 0
        for width, limit in widths:
            cands = []
            # grid lines beyond the start along the direction, and grid lines across it near the start
            s_along = start[0] if dx else start[1]
            s_across = start[1] if dx else start[0]
            sign = dx or dy
            k0 = math.ceil((s_along / g) - 1e-9) if sign > 0 else math.floor((s_along / g) + 1e-9)
            for m in range(0, int(limit / g) + 2):
                v = (k0 + sign * m) * g
                run = abs(v - s_along)
                if run > limit + TOL:
                    break
                side = limit - run
                c0 = math.floor((s_across - side) / g + 1e-9)
                c1 = math.ceil((s_across + side) / g - 1e-9)
                for c in range(c0, c1 + 1):
                    w_ = c * g
                    if run + abs(w_ - s_across) > limit + TOL:
                        continue
                    if jog is not None and abs(w_ - s_across) > jog + TOL:
                        continue
                    pts = [start, (v, s_across), (v, w_)] if dx else [start, (s_across, v), (w_, v)]
                    pts = [(round(px, 6), round(py, 6)) for px, py in pts]
                    cands.append((run + abs(w_ - s_across), abs(w_ - s_across), pts))
            cands.sort(key=lambda c: (c[0], c[1]))
            # the EXITS shortest exits; for a neck also the straightest long one, which carries the
            # net past its neighbours' exits before the class width begins
            orders = [cands]
            if width < cw - TOL:
                orders.append(sorted(cands, key=lambda c: (c[1] > 0, -c[0], c[1])))
            for order in orders:
                got = 0
                for length, _, pts in order:
                    # the own-pad rule holds within neck_length of the pad only (as check applies it)
                    base = relaxed if length <= nl + TOL else full
                    end = pts[-1]
                    i = int(round(end[0] / g)) - grid.i0
                    j = int(round(end[1] / g)) - grid.j0
                    if not (0 <= i < grid.nx and 0 <= j < grid.ny):
                        continue
                    for l in layers:
                        if (l, j, i) in found or not space.open_cell[l, j, i]:
                            continue
                        segs = [(a, b) for a, b in zip(pts, pts[1:]) if a != b]
                        if not segs:
                            segs = [(pts[0], pts[0])]
                        if all(grid.segment_clear(net, a, b, l, width, others, base=base) for a, b in segs):
                            path = Neck(p for k, p in enumerate(pts) if k == 0 or p != pts[k - 1])
                            path.width = width
                            found[(l, j, i)] = path
                            n_dir += 1
                            got += 1
                    if got >= (ways if order is cands else 1):
                        break
            if n_dir:
                break                       # the class width fits this way: no neck needed
        if len(found) >= most:
            break
    return found


#: How many via places beside one pad :func:`escape_vias` offers the search (each its own grid
#: point; our choice: enough that a neighbour's via or exit taking one leaves others).
ESCAPE_VIAS = 4
#: How many candidate places per pad are measured exactly at most (nearest the pad first).
_VIA_TRIES = 48


def escape_vias(grid, space, net: str, pad: PlacedPad, others=None, most: int = ESCAPE_VIAS) -> dict:
    """Via places beside a surface pad: cell (other layer, j, i) -> :class:`EscapeVia`.

    On a two-layer board, a surface pad whose own layer offers no way out (under a part's
    body, an inner row, boxed in by its neighbours' copper) may leave by a via beside it, as
    a designer does. Each place is a grid point within the class's ``neck_length`` of the
    pad's copper, whose via (the board's ``via_diameter`` and ``via_drill``) stays outside the
    pad's copper (touching it at most) and keeps, exactly, the class clearance from every
    other copper on both layers, ``edge_clearance`` from the edge and non-plated holes, out of
    keepouts and other parts' keepout bodies (:meth:`RoutingGrid.segment_clear` with the
    via's diameter as the width), and ``min_hole_spacing`` from every hole (the grid's via
    places, exact at grid points). A via whose disc does not touch the pad is joined to it by
    a link on the pad's layer (the class width, or where that does not fit a neck of
    ``neck_width``): straight along x or y, or out along the pad's middle line and at most a
    grid pitch sideways, as a pad exit leaves; checked exactly with the footprint's own pad spacing as for
    any escaping trace within ``neck_length``. The via's grid point must be open to the net on
    the other layer: the search reaches the place there and pays for the via and the link
    (:func:`router.nets._price_exits`).

    The places measured against the fixed copper are kept on the grid per net and pad; each
    call keeps those open in `space` on the other layer and, with `others`, those clear of
    the other nets' routed copper.

    Parameters
    ----------
    others : tuple of arrays, optional
        Copper laid for other nets (walls, :meth:`RoutingGrid.obstacle_arrays`); with them,
        via places that other nets' routed copper blocks on the grid are left out as well.

    Returns
    -------
    dict
        Empty on a one-layer board, for a pad with a hole, or a pad on both layers.
    """
    if grid.L < 2 or pad.drill is not None:
        return {}
    layers = [grid.layer_index(l) for l in pad.layers if l in grid.layers]
    if len(layers) != 1:
        return {}
    store = grid.__dict__.setdefault("_escape_via_cache", {})
    key = (net, pad.ref, pad.index)
    places = store.get(key)
    if places is None:
        places = store[key] = _escape_via_places(grid, net, pad, layers[0], 2 * most)
    lb = 1 - layers[0]
    k = grid.profile_of(net).index
    found: dict = {}
    for j, i, ev in places:
        if not space.open_cell[lb, j, i]:
            continue
        if others is not None:
            if grid.soft_via[k][j, i] > 0:
                continue
            at = ev[-1]
            if not all(grid.segment_clear(net, at, at, l, grid.via_d, others) for l in range(grid.L)):
                continue
            if len(ev) > 1 and not all(grid.segment_clear(net, a, b, ev.layer, ev.width, others,
                                                          base=_relaxed_base(grid, net, pad))
                                       for a, b in zip(ev, ev[1:]) if a != b):
                continue
        found[(lb, j, i)] = ev
        if len(found) >= most:
            break
    return found


def _escape_via_places(grid, net: str, pad: PlacedPad, la: int, most: int) -> list:
    """The via places beside `pad` that keep every rule against the fixed copper, nearest the
    pad first: (j, i, :class:`EscapeVia`) (see :func:`escape_vias`)."""
    core, rad = grid.layout.core_of(pad)
    x0, y0, x1, y1 = (float(v) for v in core.bounds)
    g = grid.pitch
    nw, nl = neck_of(grid.board, grid.board.net_class(net))
    prof = grid.profile_of(net)
    vr = grid.via_d / 2
    reach = rad + max(nl, vr)
    ia, ib, ja, jb = grid.index_box((x0, y0, x1, y1), reach)
    if ia >= ib or ja >= jb:
        return []
    X, Y = grid.xs[ia:ib], grid.ys[ja:jb]
    gx_, gy_ = np.meshgrid(X, Y)
    # exact distance from the pad's copper to each grid point (shapely: any shape, any angle)
    dist = shapely.distance(core, shapely.points(gx_.ravel(), gy_.ravel())).reshape(gx_.shape) - rad
    # the grid's via places: edge, keepouts, hole spacing to every fixed hole, clear of every pad
    ok = (dist >= vr - TOL) & (dist <= nl + TOL) & grid.base_via[ja:jb, ia:ib]
    cx, cy = (x0 + x1) / 2, (y0 + y1) / 2
    cands = []
    for j, i in zip(*np.nonzero(ok)):
        x, y = float(X[i]), float(Y[j])
        links = []
        if float(dist[j, i]) <= vr + TOL:
            links.append(((x, y),))                  # the via's disc touches the pad
        elif pad.angle:
            from .nets import _turned_stub
            st = _turned_stub(core, rad, (x, y), reach + g)
            if st is not None:
                links.append((st[0], (x, y)))
        else:
            # straight along y (x) from the pad's core; or, as a pad exit leaves, out along the
            # pad's middle line and a short step (at most a pitch) sideways to the via's point
            if x0 - TOL <= x <= x1 + TOL:
                links.append(((x, min(max(y, y0), y1)), (x, y)))
                if abs(x - cx) <= g + TOL and x != cx:
                    links.append(((cx, min(max(y, y0), y1)), (cx, y), (x, y)))
            if y0 - TOL <= y <= y1 + TOL:
                links.append(((min(max(x, x0), x1), y), (x, y)))
                if abs(y - cy) <= g + TOL and y != cy:
                    links.append(((min(max(x, x0), x1), cy), (x, cy), (x, y)))
        for link in links:
            link = tuple((round(px, 6), round(py, 6)) for px, py in link)
            cands.append((float(dist[j, i]), math.hypot(x - pad.x, y - pad.y), int(j + ja), int(i + ia), link))
    cands.sort(key=lambda c: (c[0], c[1], c[2], c[3], len(c[4])))
    relaxed = _relaxed_base(grid, net, pad)
    widths = [prof.width] + ([nw] if nw < prof.width - TOL else [])
    out = []
    for _, _, j, i, link in cands[:_VIA_TRIES]:
        if out and out[-1][:2] == (j, i):
            continue                             # this place has its link already
        at = link[-1]
        if not all(grid.segment_clear(net, at, at, l, 2 * vr) for l in range(grid.L)):
            continue
        width = prof.width if len(link) == 1 else next(
            (w for w in widths if all(grid.segment_clear(net, a, b, la, w, base=relaxed)
                                      for a, b in zip(link, link[1:]) if a != b)), None)
        if width is None:
            continue
        ev = EscapeVia(link)
        ev.layer, ev.via, ev.width = la, (j, i), width
        out.append((j, i, ev))
        if len(out) >= most:
            break
    return out


def _pads_by_net(board: Board, surface: bool = False) -> dict[str, list]:
    """Net -> [(placed pad, (exact core, radius))], from the board resolved once
    (:func:`router.layout.resolve`); with `surface`, pads without a hole only."""
    from .layout import resolve
    lay = resolve(board)
    by_net: dict[str, list] = defaultdict(list)
    for k, p in enumerate(lay.pads):
        if not (surface and p.drill is not None):
            by_net[p.net].append((p, lay.pad_core(k)))
    return by_net


def escape_via_pads(board: Board) -> dict[int, str]:
    """The vias of `board` that are pad escapes: via index -> the pad's name (REF.PIN).

    An escape via is a via of a two-layer board that lies within its class's ``neck_length``
    (centre to copper) of a surface pad of its net, outside that pad's copper, and joins it on
    the pad's layer: its disc touches the pad, or a straight segment of a trace of its net on
    that layer, or a whole such trace, runs from the via's centre to the pad's copper. The
    nearest such pad names it.
    """
    if len(board.layers) < 2 or not board.vias:
        return {}
    by_net = _pads_by_net(board, surface=True)
    ends: dict = defaultdict(list)            # (net, layer, point) -> far ends of segments and traces there
    for t in board.traces:
        pts = [(float(x), float(y)) for x, y in t.points]
        for a, b in zip(pts, pts[1:]):
            if a != b:
                ends[(t.net, t.layer, a)].append((b, t.width))
                ends[(t.net, t.layer, b)].append((a, t.width))
        if len(pts) > 2:
            ends[(t.net, t.layer, pts[0])].append((pts[-1], t.width))
            ends[(t.net, t.layer, pts[-1])].append((pts[0], t.width))
    out = {}
    for vi, v in enumerate(board.vias):
        nc = board.net_class(v.net)
        _, nl = neck_of(board, nc)
        at = SPoint(v.at)
        best = None
        for p, (core, r) in by_net.get(v.net, ()):
            d = core.distance(at) - r
            if d < v.diameter / 2 - TOL or d > nl + TOL:
                continue
            joined = d <= v.diameter / 2 + TOL
            if not joined:
                for layer in p.layers:
                    for far, w in ends.get((v.net, layer, (float(v.at[0]), float(v.at[1]))), ()):
                        if core.distance(SPoint(far)) - r - w / 2 <= TOL:
                            joined = True
                            break
            if joined and (best is None or d < best[0]):
                best = (d, p.name)
        if best is not None:
            out[vi] = best[1]
    return out


def neck_traces(board: Board) -> dict[int, tuple[float, float]]:
    """The traces of `board` that are necks: trace index -> the point where it leaves its pad.

    A neck is a trace narrower than its class's width but at least its class's
    ``neck_width``, one of whose ends touches a pad of its net on its layer, and no longer
    than the class's ``neck_length``.
    """
    from .figures import trace_length
    by_net = _pads_by_net(board)
    rules = board.rules
    out = {}
    for ti, t in enumerate(board.traces):
        nc = board.net_class(t.net)
        req = max(nc.trace_width, rules.min_trace_width)
        if not t.points or t.width >= req - TOL:
            continue
        nw, nl = neck_of(board, nc)
        if t.width < nw - TOL or trace_length(t.points) > nl + TOL:
            continue
        for end in (t.points[0], t.points[-1]):
            e = SPoint(end)
            if any(t.layer in p.layers and core.distance(e) - r <= TOL for p, (core, r) in by_net.get(t.net, ())):
                out[ti] = (float(end[0]), float(end[1]))
                break
    return out


def pad_vias(grid, space, net: str, pads, strict: bool = False, most: int = 9) -> int:
    """Open via places inside the net's large surface pads (an exposed pad under a part's body
    has no way out on its own layer): grid points where a via lies wholly inside the pad and
    keeps, exactly, every clearance on every layer, the edge, keepouts and the hole spacing.
    The search prices these vias like any other. Returns how many places were opened."""
    if grid.L < 2:
        return 0
    cache = grid.__dict__.setdefault("_pad_via_cache", {})
    vd, drill = grid.via_d, grid.via_drill
    opened = 0
    k = grid.profile_of(net).index
    for pad in pads:
        if pad.drill is not None or min(pad.w, pad.h) < vd - TOL:
            continue
        key = (net, pad.ref, pad.index)
        pts = cache.get(key)
        if pts is None:
            pts = _pad_via_points(grid, net, pad, vd, drill, most)
            cache[key] = pts
        for j, i in pts:
            if strict and grid.soft_via[k][j, i] > 0:
                continue
            if not space.via_ok[j, i]:
                space.via_ok[j, i] = 1
                opened += 1
    return opened


def _pad_via_points(grid, net, pad, vd, drill, most):
    from .copper import holes
    core, rad = grid.layout.core_of(pad)
    x0, y0, x1, y1 = (float(v) for v in core.bounds)
    g = grid.pitch
    inner = (x0 - rad + vd / 2, y0 - rad + vd / 2, x1 + rad - vd / 2, y1 + rad - vd / 2)
    if inner[0] > inner[2] + TOL or inner[1] > inner[3] + TOL:
        return []
    hs = grid.__dict__.get("_escape_holes")
    if hs is None:                        # the board's holes, once per grid
        hs = grid._escape_holes = [(h.x, h.y, h.drill) for h in holes(grid.board)]
    spacing = grid.rules.min_hole_spacing
    cands = []
    for i in range(int(math.ceil(inner[0] / g - 1e-9)), int(math.floor(inner[2] / g + 1e-9)) + 1):
        for j in range(int(math.ceil(inner[1] / g - 1e-9)), int(math.floor(inner[3] / g + 1e-9)) + 1):
            x, y = i * g, j * g
            if not _via_inside(pad, core, rad, SPoint(x, y), vd):
                continue
            cands.append((math.hypot(x - pad.x, y - pad.y), i - grid.i0, j - grid.j0, x, y))
    cands.sort()
    out = []
    for _, i, j, x, y in cands:
        if not (0 <= i < grid.nx and 0 <= j < grid.ny):
            continue
        p = (round(x, 6), round(y, 6))
        if not all(grid.segment_clear(net, p, p, l, vd) for l in range(grid.L)):
            continue
        if any(math.hypot(hx - x, hy - y) - hd / 2 - drill / 2 < spacing - TOL for hx, hy, hd in hs):
            continue
        if any(math.hypot((oi - i) * g, (oj - j) * g) < drill + spacing - TOL for oj, oi in out):
            continue
        out.append((j, i))
        if len(out) >= most:
            break
    return out


def _via_inside(pad, core, rad: float, q, vd: float) -> bool:
    """The via's disc (diameter `vd`, centre `q`) lies wholly inside the pad's copper, exactly.

    A rectangle (turned or not): the centre inside and the disc clear of its sides. A rounded
    rectangle: with a via radius at least the corner radius, the same in the full rectangle
    (such a disc inside the rectangle misses the rounded corners); else within the corner
    radius less the via radius of the inner rectangle. Round and obround: within the radius
    less the via radius of the core.
    """
    from .geometry import turned_box
    if pad.shape == "rectangle" or (pad.shape == "rounded-rectangle" and vd / 2 >= rad - TOL):
        full = turned_box(pad.x, pad.y, pad.w, pad.h, pad.angle)
        return full.contains(q) and full.exterior.distance(q) >= vd / 2 - TOL
    return core.distance(q) <= rad - vd / 2 + TOL


#: How many access cells a pad may have and still count as *scarce*: its exits are reserved in
#: negotiation (:class:`ExitReserve`). Our choice: a pad reached only by escape exits (necks or
#: exits of the class width out of a fine-pitch row) or by at most this many grid points.
SCARCE = 3
#: The extra cost, per grid point, of another net's copper on a scarce pad's exit, in search
#: units (:data:`router.search.STEP` per grid step): our choice, two grid steps, so a neighbour
#: takes another exit when that costs it less than a short detour.
RESERVE_STEPS = 2
#: The extra cost, per via place, of another net's via in the lane straight out of the outer end
#: of a fine-pitch row pad that holds grid points of its own (:meth:`ExitReserve.add` with
#: ``lanes``), in grid steps. Our choice: as the fan-out plan's price (router.fanout.PLAN_STEPS),
#: far dearer than moving a via a millimetre out, not a wall.
LANE_STEPS = 25


class ExitReserve:
    """Exits of pads that have few ways out, reserved while nets negotiate.

    A pad in a fine-pitch row reaches the grid through one to a few exits, and the exits of
    its neighbours pass the same grid points. Unreserved, the first net routed takes the
    point it likes best, which may be the only way out of its neighbour's pad. Here every
    grid point where another net's trace (of the board's narrowest class) or via would come
    too close to an exit of a scarce pad costs that other net :data:`RESERVE_STEPS` grid
    steps more, so neighbours' exits are soft obstacles that move aside where they have
    another way, and stay where they have none. The reservation is a price only: the
    routes' legality is judged as before (conflicts, walls, the exact check).

    With `lanes`, a pad inside a fine-pitch row that holds grid points of its own (on a fine
    grid it holds many, and does not count as scarce) has the lane straight out of its outer
    end reserved against other nets' vias too (:data:`LANE_STEPS`, :meth:`_lane`): a via
    there, beside the pad's neighbour, closes the pad's only way out. Used by one try of
    :func:`router.negotiate.route_board` only (priced on every board, such lanes cost the
    0.25 mm real-looking boards nets: the vias a row needs a little way out land in its
    neighbours' lanes).
    """

    def __init__(self, grid, lanes: bool = False):
        self.grid = grid
        self.lanes = lanes                        # also the lanes out of row pads' outer ends (_lane)
        self.cost = np.zeros((grid.L, grid.ny, grid.nx), np.int64)
        self.via_cost = np.zeros((grid.ny, grid.nx), np.int64)
        self.own: dict[str, tuple] = {}          # net -> (cells (l, j, i), via places (j, i), lane via places (j, i))
        self.unit = RESERVE_STEPS * _step()
        self.lane_unit = LANE_STEPS * _step()
        self.thin = min(p.half for p in grid.profiles.values())
        self._hemmed_at: dict = {}
        self._by_ref: dict = defaultdict(list)

    def add(self, net: str, pads) -> None:
        """Reserve the exits of `net`'s scarce pads, once, from the grid's access cache
        (:func:`router.nets.terminals` with ``cache``)."""
        if net in self.own:
            return
        grid = self.grid
        store = grid.__dict__.get("_access_cache", {})
        paths = []
        for p in pads:
            acc = store.get((net, p.ref, p.index))
            if acc is None:
                return                    # not searched yet: reserved after the net's first search
            acc = {c: v for c, v in acc.items() if not isinstance(v, EscapeVia)}   # vias: priced as vias
            if not acc or not (len(acc) <= SCARCE or any(isinstance(v, Neck) for v in acc.values())):
                continue
            for c, path in acc.items():
                pts = list(path) if path else [grid.point(c[1], c[2])]
                pts.append(grid.point(c[1], c[2]))
                paths.append((c[0], pts, getattr(path, "width", grid.profile_of(net).width)))
        cells = np.zeros((grid.L, grid.ny, grid.nx), np.int32)
        vias = np.zeros((grid.ny, grid.nx), np.int32)
        clear = max(grid.profile_of(net).clearance_to.values())
        win = [grid.nx, 0, grid.ny, 0]            # the index box of every grid point stamped

        def stamp(box, need, arr):
            ia, ib, ja, jb = grid.index_box(box, need)
            win[:] = [min(win[0], ia), max(win[1], ib), min(win[2], ja), max(win[3], jb)]
            grid._stamp_points(box, need, 1, arr)

        for layer, pts, width in paths:
            for a, b in zip(pts, pts[1:] or pts):
                box = (min(a[0], b[0]), min(a[1], b[1]), max(a[0], b[0]), max(a[1], b[1]))
                stamp(box, width / 2 + clear + self.thin, cells[layer])
                stamp(box, width / 2 + clear + grid.via_d / 2, vias)
        lane = np.zeros((grid.ny, grid.nx), np.int32)
        if self.lanes:
            for p in pads:
                box = self._lane(net, p, store.get((net, p.ref, p.index)))
                if box is not None:
                    stamp(box, grid.profile_of(net).width / 2 + clear + grid.via_d / 2, lane)

        def where(arr):                           # np.argwhere(arr > 0), looked for in the stamped box only
            ia, ib, ja, jb = win
            if ia >= ib or ja >= jb:
                return np.zeros((0, arr.ndim), np.int64)
            out = np.argwhere(arr[..., ja:jb, ia:ib] > 0).astype(np.int64)
            out[:, -2] += ja
            out[:, -1] += ia
            return out

        mine = (where(cells), where(vias), where(lane))
        self.own[net] = mine
        self.cost[mine[0][:, 0], mine[0][:, 1], mine[0][:, 2]] += self.unit
        self.via_cost[mine[1][:, 0], mine[1][:, 1]] += self.unit
        self.via_cost[mine[2][:, 0], mine[2][:, 1]] += self.lane_unit

    def _lane(self, net: str, pad, acc) -> Optional[tuple]:
        """The box of the lane straight out of `pad`'s outer end (away from its part's body),
        ``neck_length`` long, when the pad sits inside a fine-pitch row (:meth:`_hemmed`: no
        trace passes between it and its neighbours) and holds grid points of its own (its
        access is inside its copper, so its exits are not seen as such: on a fine grid it may
        hold many and not count as scarce): every way out of it leaves along that lane or the
        one out of its inner end, and another net's via there (beside the pad's neighbour)
        closes it. Else None."""
        grid = self.grid
        if not acc or any(v is not None for v in acc.values()) or pad.angle or not self._hemmed(pad):
            return None
        centre = _body_centre(grid.board, pad.ref)
        if centre is None:
            return None
        core, rad = grid.layout.core_of(pad)
        x0, y0, x1, y1 = (float(v) for v in core.bounds)
        _, dx, dy = max(((dx * (pad.x - centre[0]) + dy * (pad.y - centre[1]), dx, dy)
                         for dx, dy in ((1, 0), (-1, 0), (0, 1), (0, -1))), key=lambda t: t[0])
        _, nl = neck_of(grid.board, grid.board.net_class(net))
        if dx:
            s = (x1 + rad if dx > 0 else x0 - rad, (y0 + y1) / 2)
        else:
            s = ((x0 + x1) / 2, y1 + rad if dy > 0 else y0 - rad)
        e = (s[0] + dx * nl, s[1] + dy * nl)
        return (min(s[0], e[0]), min(s[1], e[1]), max(s[0], e[0]), max(s[1], e[1]))

    def _hemmed(self, pad) -> bool:
        """Whether two or more other pads of `pad`'s part lie so close beside it that the
        narrowest class's trace cannot pass between them and it (a pad inside a fine-pitch
        row), measured exactly (shapely core distances, radii taken off); found once per pad."""
        key = (pad.ref, pad.index)
        got = self._hemmed_at.get(key)
        if got is None:
            grid = self.grid
            gap = 2 * self.thin + 2 * max(v for p in grid.profiles.values() for v in p.clearance_to.values())
            core, rad = grid.layout.core_of(pad)
            n = 0
            if not self._by_ref:
                for q in grid.pads:
                    self._by_ref[q.ref].append(q)
            for q in self._by_ref[pad.ref]:
                if q.index == pad.index or not set(q.layers) & set(pad.layers):
                    continue
                qc, qr = grid.layout.core_of(q)
                if shapely.distance(core, qc) - rad - qr < gap - TOL:
                    n += 1
            got = self._hemmed_at[key] = n >= 2
        return got

    def extra_for(self, net: str):
        """(per grid point, per via place) reservation cost `net` pays (other nets' exits
        only), or None when nothing is reserved."""
        if not self.own or not any(len(m[0]) or len(m[2]) for m in self.own.values()):
            return None
        cells, vias = self.cost.copy(), self.via_cost.copy()
        mine = self.own.get(net)
        if mine is not None:
            cells[mine[0][:, 0], mine[0][:, 1], mine[0][:, 2]] -= self.unit
            vias[mine[1][:, 0], mine[1][:, 1]] -= self.unit
            vias[mine[2][:, 0], mine[2][:, 1]] -= self.lane_unit
        return cells, vias


def _step() -> int:
    from .search import STEP
    return STEP


def _item_rows(grid, net: str, items: list) -> tuple:
    """One net's soft items (:meth:`RoutingGrid.soft_items`) as arrays for :func:`exit_conflicts`:
    (items, boxes, radii, layer bits, class index per item, its classes), kept on the grid while
    the net's laid items are the same list (a route's items are made once and not changed)."""
    cache = grid.__dict__.setdefault("_exit_rows", {})
    got = cache.get(net)
    if got is None or got[0] is not items:
        classes = sorted({ob.cls for ob in items})
        at = {c: k for k, c in enumerate(classes)}
        got = cache[net] = (items, np.array([ob.box for ob in items], dtype=np.float64).reshape(-1, 4),
                            np.array([ob.radius for ob in items], dtype=np.float64),
                            np.array([sum(1 << l for l in ob.layers) for ob in items], dtype=np.int64),
                            np.array([at[ob.cls] for ob in items], dtype=np.int64), classes)
    return got


#: Exit segments measured together in :func:`exit_conflicts` (neighbours in x; our choice).
_EXIT_RUN = 32


def exit_conflicts(grid, routes: dict, soft: dict) -> tuple[dict, list]:
    """Exits (stubs and necks, off the grid) that come too close to other nets' routed copper,
    measured exactly: net -> how many of its exit segments do, and the grid points near them.

    Negotiation judges grid copper at grid points; an exit leaves the grid, so it is judged
    here by its true distance (axis-parallel segment to box plus radius) to every other net's
    soft item (:meth:`RoutingGrid.soft_items`), with the pair's class clearance. Counting the
    grid points beside an exit as the net's cells instead would see two exits of neighbouring
    pads in a 0.5 mm row as sharing though their copper keeps the clearance.
    """
    segs = []                             # (net, layer, a, b, width)
    for net in sorted(routes):
        r = routes[net]
        w = grid.profile_of(net).width
        for a, b, l in r.stubs:
            segs.append((net, l, a, b, w))
        for pts, l, nw in r.necks:
            for a, b in zip(pts, pts[1:]):
                segs.append((net, l, a, b, nw))
    laid = [(n, _item_rows(grid, n, soft[n])) for n in sorted(soft) if soft[n]]
    if not segs or not laid:
        return {}, []
    nets = sorted(set(routes) | set(soft))
    nid = {n: k for k, n in enumerate(nets)}
    classes = sorted({c for _, rows in laid for c in rows[5]} | {grid.net_class.get(s[0], "default") for s in segs})
    cid = {c: k for k, c in enumerate(classes)}
    boxes = np.concatenate([rows[1] for _, rows in laid])
    rads = np.concatenate([rows[2] for _, rows in laid])
    lmask = np.concatenate([rows[3] for _, rows in laid])
    inet = np.concatenate([np.full(len(rows[1]), nid[n]) for n, rows in laid])
    icls = np.concatenate([np.array([cid[c] for c in rows[5]], dtype=np.int64)[rows[4]] for _, rows in laid])
    # required clearance between each pair of classes
    clear = np.zeros((len(classes), len(classes)))
    for a in classes:
        prof = grid.profiles[a] if a in grid.profiles else grid.profiles["default"]
        for b in classes:
            clear[cid[a], cid[b]] = prof.clearance_to.get(b, prof.clearance_to["default"])
    # a broad phase before the exact measure: the segments in runs of nearby x (sorted by their
    # left end), each run measured only against the items whose box reaches the run's box grown by
    # the largest need (exact: a pair farther apart than that is never too close). Plain numpy: the
    # items change with every route laid, so a spatial index would be built again for every call.
    sb_all = np.array([(min(a[0], b[0]), min(a[1], b[1]), max(a[0], b[0]), max(a[1], b[1]))
                       for _, _, a, b, _ in segs], dtype=np.float64)
    sw_all = np.array([w for *_, w in segs], dtype=np.float64)
    reach = float(sw_all.max() / 2 + rads.max(initial=0.0) + clear.max(initial=0.0)) + TOL
    bad_seg = np.zeros(len(segs), bool)
    by_x = np.argsort(sb_all[:, 0], kind="stable")
    for s0 in range(0, len(segs), _EXIT_RUN):
        run = by_x[s0:s0 + _EXIT_RUN]
        sb = sb_all[run]
        near_it = np.nonzero((boxes[:, 0] <= sb[:, 2].max() + reach) & (boxes[:, 2] >= sb[:, 0].min() - reach)
                             & (boxes[:, 1] <= sb[:, 3].max() + reach) & (boxes[:, 3] >= sb[:, 1].min() - reach))[0]
        if not len(near_it):
            continue
        bx = boxes[near_it]
        sl = np.array([segs[q][1] for q in run], dtype=np.int64)
        sn = np.array([nid[segs[q][0]] for q in run])
        sc = np.array([cid[grid.net_class.get(segs[q][0], "default")] for q in run])
        gx = np.maximum(np.maximum(bx[None, :, 0] - sb[:, None, 2], 0.0), sb[:, None, 0] - bx[None, :, 2])
        gy = np.maximum(np.maximum(bx[None, :, 1] - sb[:, None, 3], 0.0), sb[:, None, 1] - bx[None, :, 3])
        need = sw_all[run][:, None] / 2 + rads[near_it][None, :] + clear[sc[:, None], icls[near_it][None, :]]
        bad = ((np.hypot(gx, gy) < need - TOL) & ((lmask[near_it][None, :] >> sl[:, None]) & 1).astype(bool)
               & (inet[near_it][None, :] != sn[:, None]))
        bad_seg[run] = bad.any(axis=1)
    shared: dict[str, int] = {}
    cells = []
    for q in np.nonzero(bad_seg)[0]:          # in the segments' own order, as before
        net, l, a, b, _ = segs[q]
        shared[net] = shared.get(net, 0) + 1
        near = grid.near_points(a, b, l)
        if near:
            cells.append(np.array(near, dtype=np.int64))
    return shared, cells


