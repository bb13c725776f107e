"""The clearance, connectivity and manufacturing checks behind ``elbowroom check``.

Geometry comes from the board file only (never from a routing grid): every copper
item is an exact core and radius (:mod:`router.copper`), so distances carry no
polygon error. An rtree index keeps the measured pairs to near ones. Required
clearances come from :func:`router.rules.required_clearance`, IPC-2221 figures
from :mod:`router.rules`, and every comparison goes through
:func:`router.units.meets` / :func:`router.units.short_of`.

Rules (named as in the contract): clearance, short, open, edge, keepout, width,
drill, annular_ring, hole_spacing, current, voltage, placement. Dangling trace
ends are warnings (:func:`warnings`), not violations.
"""
from __future__ import annotations

import math
from collections import defaultdict
from dataclasses import dataclass
from typing import Optional, Sequence

import numpy as np
import shapely
from shapely.geometry import LineString, Point as SPoint, Polygon, box
from shapely.ops import nearest_points

from .connectivity import components, item_index
from .copper import CopperItem, copper_items, holes
from .geometry import body_polygon, body_rect, outline_polygon, part_footprint, placed_pads
from .layout import resolve
from .outline import edge_distance
from .model import Board
from .cautions import peak_note
from .rules import (ipc2221_spacing, ipc2221_width_for_current, jumper_ampacity, required_clearance,
                    via_current, via_drill_for_current)
from .units import TOL, short_of

__all__ = ["RULES", "Violation", "check", "warnings", "violations_json", "format_violations",
           "candidate_pairs"]

#: The rule names of the contract, in the order the human report lists them.
RULES = ("short", "open", "clearance", "edge", "keepout", "width", "drill", "annular_ring",
         "hole_spacing", "current", "voltage", "placement")


@dataclass
class Violation:
    """One finding of the check.

    Attributes
    ----------
    rule : str
        One of :data:`RULES` (or "dangling_end" for a warning).
    nets : list of str
        The nets involved (may be empty, e.g. for a non-plated hole or a part body).
    layer : str or None
        The copper layer, or None where no one layer applies.
    at : (x, y) or None
        Where: the closest point for a distance rule; a point on the offending copper for
        width, short, edge and keepout; a pad of the cut-off part for open.
    actual, required : float or None
        The measured and the required figure in mm, or None where no distance applies.
    message : str
        One line a person understands.
    """
    rule: str
    nets: list
    layer: Optional[str]
    at: Optional[tuple]
    actual: Optional[float]
    required: Optional[float]
    message: str


# ----------------------------------------------------------------------------- helpers

def _net_label(net: str) -> str:
    return f"{net[1:]} (no net)" if net.startswith("~") else net


def _xy(p) -> tuple[float, float]:
    return (_r(p[0]), _r(p[1]))


def _r(v: float) -> float:
    r = round(float(v), 6)
    return 0.0 if r == 0 else r


def _fmt_at(p) -> str:
    return f"({p[0]:.2f}, {p[1]:.2f})"


def _on(layer: Optional[str]) -> str:
    return f"on {layer}" if layer else "on all layers"


def _shared_layer(board: Board, a: CopperItem, b: CopperItem):
    shared = [l for l in board.layers if l in a.layers and l in b.layers]
    return shared, (shared[0] if len(shared) == 1 else None)


def _one_layer(item: CopperItem) -> Optional[str]:
    return item.layers[0] if len(item.layers) == 1 else None


def _between(a: CopperItem, b: CopperItem) -> tuple[float, float]:
    """The middle of the gap between two items' copper (inside both when they overlap)."""
    pa, pb = nearest_points(a.core, b.core)
    c = pa.distance(pb)
    if c <= 0:
        return (pa.x, pa.y)
    t = min(max((a.radius + c - b.radius) / 2, 0.0), c) / c
    return (pa.x + (pb.x - pa.x) * t, pa.y + (pb.y - pa.y) * t)


def _mask(board: Board, layers) -> int:
    return sum(1 << board.layers.index(l) for l in layers if l in board.layers)


def candidate_pairs(bounds_a: np.ndarray, idx, exclude_self: bool = True):
    """Pairs (i, j), i < j, whose boxes (``bounds_a[i]`` against the index) overlap.

    Parameters
    ----------
    bounds_a : array of shape (n, 4)
        Query boxes (x0, y0, x1, y1), one per indexed item, already grown as needed.
    idx : rtree index
        Index whose ids are the same positions.

    Returns
    -------
    (I, J) : two int arrays of equal length
    """
    n = len(bounds_a)
    if n == 0:
        return np.zeros(0, dtype=np.int64), np.zeros(0, dtype=np.int64)
    ids, counts = idx.intersection_v(np.ascontiguousarray(bounds_a[:, :2]),
                                     np.ascontiguousarray(bounds_a[:, 2:]))
    I = np.repeat(np.arange(n, dtype=np.int64), counts.astype(np.int64))
    J = np.asarray(ids, dtype=np.int64)
    keep = I < J if exclude_self else I != J
    return I[keep], J[keep]


class _Ctx:
    """What several rules share: the copper, its index and its joined components."""

    def __init__(self, board: Board, layout=None):
        self.board = board
        self.layout = lay = resolve(board) if layout is None else layout    # the board resolved once
        self.items = list(lay.items)
        self.idx = lay.copper_index
        self.labels = lay.labels()                  # joined copper, once per board state
        self.cores = np.array([it.core for it in self.items], dtype=object)
        self.radii = np.array([it.radius for it in self.items], dtype=float)
        self.bounds = lay.copper_bounds                               # each item's box
        self.masks = np.array([_mask(board, it.layers) for it in self.items], dtype=np.int64)
        self.nets = [it.net for it in self.items]


def _grow(bounds: np.ndarray, g: float) -> np.ndarray:
    return bounds + np.array([-g, -g, g, g])


# ----------------------------------------------------------------------------- rules

def _clearance_and_short(ctx: _Ctx) -> list[Violation]:
    board, items = ctx.board, ctx.items
    if not items:
        return []
    net_names = sorted(set(ctx.nets))
    net_id = {n: k for k, n in enumerate(net_names)}
    classes = [board.net_class(n) for n in net_names]
    cls_names = sorted({c.name for c in classes})
    cls_id = {c: k for k, c in enumerate(cls_names)}
    req_table = np.array([[required_clearance(board, board.classes[a], board.classes[b])
                           for b in cls_names] for a in cls_names], dtype=float)
    max_req = float(req_table.max())
    item_cls = np.array([cls_id[classes[net_id[n]].name] for n in ctx.nets], dtype=np.int64)
    item_net = np.array([net_id[n] for n in ctx.nets], dtype=np.int64)

    I, J = ctx.layout.copper_pairs(_grow(ctx.bounds, max_req + TOL))
    I, J = I[I < J], J[I < J]
    keep = (item_net[I] != item_net[J]) & ((ctx.masks[I] & ctx.masks[J]) != 0)
    I, J = I[keep], J[keep]
    if len(I) == 0:
        return []
    d = shapely.distance(ctx.cores[I], ctx.cores[J]) - ctx.radii[I] - ctx.radii[J]
    req = req_table[item_cls[I], item_cls[J]]
    bad = d < req - TOL          # short_of, vectorised (short: d <= TOL, which is below any req)
    worst: dict[tuple, tuple[float, int, int]] = {}
    own = None
    for i, j, dist, rq in zip(I[bad], J[bad], d[bad], req[bad]):
        i, j = int(i), int(j)
        a, b = items[i], items[j]
        if dist > TOL and "pad" in (a.kind, b.kind):
            # a footprint's own pad spacing, and the traces escaping from such pads (router.escape)
            if own is None:
                from .escape import OwnPadRule
                own = OwnPadRule(board, items, strict=getattr(ctx, "strict", False))
            rq = own.required(a, b, float(rq))
            if dist >= rq - TOL:
                continue
        _, layer = _shared_layer(board, a, b)
        rule = "short" if dist <= TOL else "clearance"
        la, lb = ctx.labels[i], ctx.labels[j]
        key = (layer, min(la, lb), max(la, lb))
        prev = worst.get(key)
        if prev is None or dist < prev[0]:
            worst[key] = (float(dist), i, j, float(rq), rule)
    out = []
    shorted = {(k[1], k[2]) for k, v in worst.items() if v[4] == "short"}
    for (layer, la, lb), (dist, i, j, rq, rule) in worst.items():
        a, b = items[i], items[j]
        if rule == "clearance" and (la, lb) in shorted:
            continue         # the two pieces of copper touch elsewhere: the short says it
        na, nb = sorted((a.net, b.net))
        at = _xy(_between(a, b))
        if rule == "short":
            msg = (f"{_net_label(na)} and {_net_label(nb)} {_on(layer)}: shorted at {_fmt_at(at)} "
                   f"({a.source} touches {b.source})")
            out.append(Violation("short", [na, nb], layer, at, 0.0, _r(rq), msg))
        else:
            msg = (f"{_net_label(na)} and {_net_label(nb)} {_on(layer)}: {dist:.2f} mm apart at "
                   f"{_fmt_at(at)}, {rq:.2f} mm required ({a.source}, {b.source})"
                   f"{_voltage_reason(board, a.net, b.net, rq)}")
            out.append(Violation("clearance", [na, nb], layer, at, _r(dist), _r(rq), msg))
    return out


def _voltage_reason(board: Board, na: str, nb: str, required: float) -> str:
    """Where a declared voltage raised the required clearance: say so, and what the voltage means."""
    ca, cb = board.net_class(na), board.net_class(nb)
    volts = [v for v in (ca.voltage, cb.voltage) if v is not None]
    if not volts or not short_of(max(ca.clearance, cb.clearance), required):
        return ""
    return (f"; IPC-2221 Table 6-1 ({board.rules.voltage_table}) spacing for {max(volts):g} V peak, "
            f"{peak_note()}")


def _open(ctx: _Ctx) -> list[Violation]:
    board, items = ctx.board, ctx.items
    comp_size: dict[int, int] = defaultdict(int)
    for lab in ctx.labels:
        comp_size[lab] += 1
    pads_by_net: dict[str, dict[int, list[int]]] = defaultdict(dict)
    for i, it in enumerate(items):
        if it.kind == "pad":
            pads_by_net[it.net].setdefault(ctx.labels[i], []).append(i)
    placed = {p.ref for p in board.parts if p.at is not None}
    out = []
    for net in board.nets:
        comps = pads_by_net.get(net.name, {})
        unplaced = [p for p in net.pins if p.split(".", 1)[0] not in placed]
        n_groups = len(comps) + len(unplaced)
        if n_groups <= 1:
            continue
        order = sorted(comps, key=lambda lab: (-comp_size[lab], -len(comps[lab]), comps[lab][0]))
        main = order[0] if order else None
        main_pins = sorted({items[i].pad.name for i in comps[main]}) if main is not None else []
        joined = ", ".join(main_pins[:6]) + (" ..." if len(main_pins) > 6 else "")
        for lab in order[1:]:
            pads = comps[lab]
            pad = items[pads[0]].pad
            pins = sorted({items[i].pad.name for i in pads})
            layer = pad.layers[0] if len(pad.layers) == 1 else None
            msg = (f"{net.name} is open: {', '.join(pins)} (pad at {_fmt_at(pad.at)}) is not joined "
                   f"to {joined}")
            out.append(Violation("open", [net.name], layer, _xy(pad.at), None, None, msg))
        for pin in (unplaced if order else unplaced[1:]):
            msg = f"{net.name} is open: {pin} is on a part that is not placed"
            out.append(Violation("open", [net.name], None, None, None, None, msg))
    return out


def _edge(ctx: _Ctx) -> list[Violation]:
    board, items = ctx.board, ctx.items
    if not items:
        return []
    ec = board.rules.edge_clearance
    outline = ctx.layout.outline
    boundary = outline.exterior
    shapely.prepare(outline)
    inside = shapely.covers(outline, ctx.cores)
    d = edge_distance(board, ctx.cores) - ctx.radii       # exact, arcs of the outline included
    worst: dict[tuple, tuple] = {}

    def note(key, dist, i, at, what, required):
        prev = worst.get(key)
        if prev is None or dist < prev[0]:
            worst[key] = (dist, i, at, what, required)

    for i in np.nonzero(~inside | (d < ec - TOL))[0]:
        i = int(i)
        it = items[i]
        if not inside[i]:
            off = it.core.difference(outline)
            if off.is_empty:
                p = it.core.representative_point()
            elif off.geom_type in ("LineString", "MultiLineString"):
                p = off.interpolate(0.5, normalized=True) if off.geom_type == "LineString" else \
                    off.geoms[0].interpolate(0.5, normalized=True)
            else:
                p = off.representative_point()
            note((ctx.labels[i], _one_layer(it), "outline"), -math.inf, i, (p.x, p.y), "off the board",
                 ec)
        else:
            p = nearest_points(it.core, boundary)[0]        # where (arcs: the chords' nearest point)
            note((ctx.labels[i], _one_layer(it), "outline"), float(d[i]), i, (p.x, p.y),
                 "the board edge", ec)
    npth = [h for h in ctx.layout.holes if not h.plated]
    for hk, h in enumerate(npth):
        hp = SPoint(h.x, h.y)
        g = ec + h.drill / 2 + TOL
        for i in sorted(ctx.idx.intersection((h.x - g, h.y - g, h.x + g, h.y + g))):
            it = items[i]
            dist = it.core.distance(hp) - it.radius - h.drill / 2
            if short_of(dist, ec):
                p = nearest_points(it.core, hp)[0]
                note((ctx.labels[i], _one_layer(it), ("hole", hk)), dist, i, (p.x, p.y), h.source, ec)
    out = []
    for (_, layer, _), (dist, i, at, what, ec_) in worst.items():
        it = items[i]
        at = _xy(at)
        if dist == -math.inf:
            msg = f"{_net_label(it.net)} {_on(layer)}: {it.source} is off the board at {_fmt_at(at)}"
            out.append(Violation("edge", [it.net], layer, at, None, ec_, msg))
        else:
            actual = max(dist, 0.0)
            how = "crosses" if dist < -TOL else f"{actual:.2f} mm from"
            msg = (f"{_net_label(it.net)} {_on(layer)}: {it.source} {how} {what} at {_fmt_at(at)}, "
                   f"{ec_:.2f} mm required")
            out.append(Violation("edge", [it.net], layer, at, _r(actual), _r(ec_), msg))
    return out


def _inside(poly: Polygon, shrunk, it: CopperItem):
    """A point of item `it`'s copper strictly inside `poly` (edges may be touched), or None."""
    if not shrunk.is_empty and it.core.intersects(shrunk):
        p = it.core.intersection(shrunk).representative_point()
        return (p.x, p.y)
    dist = it.core.distance(poly)
    if it.radius > 0 and short_of(dist, it.radius):
        pa, pb = nearest_points(it.core, poly)
        if dist <= 0:
            return (pa.x, pa.y)
        return (pb.x, pb.y)
    return None


def _shrink(poly: Polygon):
    return poly.buffer(-TOL, join_style="mitre")


def _keepout(ctx: _Ctx) -> list[Violation]:
    board, items = ctx.board, ctx.items
    out = []
    for k, ko in enumerate(board.keepouts):
        poly = Polygon(ko.polygon)
        shrunk = _shrink(poly)
        layers = set(ko.layers_on(board.layers))
        seen = set()
        for i in sorted(ctx.idx.intersection(poly.bounds)):
            it = items[i]
            hit_layers = [l for l in board.layers if l in it.layers and l in layers]
            if not hit_layers:
                continue
            key = (ctx.labels[i], tuple(hit_layers))
            if key in seen:
                continue
            at = _inside(poly, shrunk, it)
            if at is None:
                continue
            seen.add(key)
            layer = hit_layers[0] if len(hit_layers) == 1 else None
            at = _xy(at)
            msg = f"{_net_label(it.net)} {_on(layer)}: {it.source} inside keepout {k + 1} at {_fmt_at(at)}"
            out.append(Violation("keepout", [it.net], layer, at, None, None, msg))
    for body in ctx.layout.bodies:
        if not body.keepout:
            continue
        own = body.owners
        poly = body.polygon
        shrunk = _shrink(poly)
        seen = set()
        for i in sorted(ctx.idx.intersection(poly.bounds)):
            it = items[i]
            if it.net in own or ctx.labels[i] in seen:
                continue
            at = _inside(poly, shrunk, it)
            if at is None:
                continue
            seen.add(ctx.labels[i])
            layer = _one_layer(it)
            at = _xy(at)
            msg = (f"{_net_label(it.net)} {_on(layer)}: {it.source} inside the body of {body.ref} at "
                   f"{_fmt_at(at)}, where only its own nets may run")
            out.append(Violation("keepout", [it.net], layer, at, None, None, msg))
    return out


def _trace_point(t) -> tuple[float, float]:
    pts = t.points
    if len(pts) >= 2:
        (x0, y0), (x1, y1) = pts[0], pts[1]
        return ((x0 + x1) / 2, (y0 + y1) / 2)
    return tuple(pts[0])


def _width_and_current(board: Board) -> list[Violation]:
    out = []
    rules = board.rules
    net_cls = {n.name: board.classes[n.net_class] for n in board.nets}
    class_nets: dict[str, list[str]] = defaultdict(list)
    for n in board.nets:
        class_nets[n.net_class].append(n.name)
    need: dict[str, float] = {}
    failed = set()
    for name, nc in board.classes.items():
        if nc.current is None:
            continue
        w = ipc2221_width_for_current(nc.current, rules.copper_oz, rules.temperature_rise)
        need[name] = w
        if class_nets.get(name) and short_of(nc.trace_width, w):
            failed.add(name)
            msg = (f"class {name}: trace_width {nc.trace_width:.2f} mm is below the {w:.2f} mm IPC-2221 "
                   f"asks for {nc.current:g} A at {rules.temperature_rise:g} C rise, {rules.copper_oz:g} oz")
            out.append(Violation("current", sorted(class_nets.get(name, [])), None, None,
                                 _r(nc.trace_width), _r(w), msg))
    necks = None
    for ti, t in enumerate(board.traces):
        nc = net_cls.get(t.net, board.classes["default"])
        req = max(nc.trace_width, rules.min_trace_width)
        at = _xy(_trace_point(t))
        if short_of(t.width, req) and necks is None:
            from .escape import neck_traces         # a neck at a pad of its net is no width violation
            necks = neck_traces(board)
        if short_of(t.width, req) and ti not in necks:
            msg = (f"{t.net} on {t.layer}: trace {ti + 1} is {t.width:.2f} mm wide at {_fmt_at(at)}, "
                   f"{req:.2f} mm required")
            out.append(Violation("width", [t.net], t.layer, at, _r(t.width), _r(req), msg))
        w = need.get(nc.name)
        if w is not None and nc.name not in failed and short_of(t.width, w):
            msg = (f"{t.net} on {t.layer}: trace {ti + 1} is {t.width:.2f} mm wide at {_fmt_at(at)}, "
                   f"{w:.2f} mm needed for {nc.current:g} A (IPC-2221)")
            out.append(Violation("current", [t.net], t.layer, at, _r(t.width), _r(w), msg))
    out += _via_and_jumper_current(board, class_nets)
    return out


def _via_and_jumper_current(board: Board, class_nets: dict) -> list[Violation]:
    """Vias (the plated barrel as a conductor, IPC-2221) and jumper wires (their gauge's ampacity)
    of a class that declares a current: each must carry the whole current, since one via or one
    jumper may be all that joins two parts of the net. One violation per net and kind."""
    rules = board.rules
    out = []
    for name, nc in board.classes.items():
        if nc.current is None or not class_nets.get(name):
            continue
        nets = set(class_nets[name])
        for net in sorted(nets):
            weak = [(k, v) for k, v in enumerate(board.vias) if v.net == net and short_of(
                via_current(v.drill, rules.plating_thickness, rules.temperature_rise), nc.current)]
            if weak:
                k, v = min(weak, key=lambda kv: (kv[1].drill, kv[0]))
                amps = via_current(v.drill, rules.plating_thickness, rules.temperature_rise)
                need = via_drill_for_current(nc.current, rules.plating_thickness, rules.temperature_rise)
                at = _xy(v.at)
                many = f"{len(weak)} vias, the smallest via {k + 1}" if len(weak) > 1 else f"via {k + 1}"
                msg = (f"{net}: {many} at {_fmt_at(at)}, {v.drill:.2f} mm drill with "
                       f"{rules.plating_thickness * 1000:g} um plating, carries {amps:.2f} A by IPC-2221 "
                       f"(barrel as a conductor), {nc.current:g} A declared; a {need:.2f} mm drill or "
                       f"vias side by side carry it")
                out.append(Violation("current", [net], None, at, _r(v.drill), _r(need), msg))
            jumps = [(k, j) for k, j in enumerate(board.jumpers) if j.net == net]
            cap = jumper_ampacity(rules.jumper_wire_gauge)
            if jumps and short_of(cap, nc.current):
                k, j = jumps[0]
                at = _xy(j.start)
                many = f"{len(jumps)} jumpers, the first jumper {k + 1}" if len(jumps) > 1 else f"jumper {k + 1}"
                msg = (f"{net}: {many} at {_fmt_at(at)}: a {rules.jumper_wire_gauge} AWG wire carries "
                       f"{cap:g} A (wire table, chassis wiring), {nc.current:g} A declared; set "
                       f"rules.jumper_wire_gauge to a thicker wire")
                out.append(Violation("current", [net], None, at, None, None, msg))
    return out


def _voltage(board: Board) -> list[Violation]:
    out = []
    for name, nc in board.classes.items():
        if nc.voltage is None:
            continue
        need = ipc2221_spacing(nc.voltage, board.rules.voltage_table)
        nets = sorted(n.name for n in board.nets if n.net_class == name)
        if nets and short_of(nc.clearance, need):     # a class no net uses carries no voltage
            msg = (f"class {name}: clearance {nc.clearance:.2f} mm is below the {need:.2f} mm IPC-2221 "
                   f"Table 6-1 ({board.rules.voltage_table}) asks for {nc.voltage:g} V peak; {peak_note()}")
            out.append(Violation("voltage", nets, None, None, _r(nc.clearance), _r(need), msg))
    return out


def _holes(board: Board, layout=None) -> list[Violation]:
    rules = board.rules
    layout = resolve(board) if layout is None else layout
    hs = list(layout.holes)
    out = []
    for h in hs:
        nets = [h.net] if h.net else []
        if short_of(h.drill, rules.min_drill):
            msg = f"{h.source}: drill {h.drill:.2f} mm at {_fmt_at(h.at)}, {rules.min_drill:.2f} mm required"
            out.append(Violation("drill", nets, None, _xy(h.at), _r(h.drill), _r(rules.min_drill), msg))
        if h.plated and h.diameter is not None:
            ring = (h.diameter - h.drill) / 2
            if ring > TOL and short_of(ring, rules.min_annular_ring):
                msg = (f"{h.source}: annular ring {ring:.2f} mm at {_fmt_at(h.at)}, "
                       f"{rules.min_annular_ring:.2f} mm required")
                out.append(Violation("annular_ring", nets, None, _xy(h.at), _r(ring),
                                     _r(rules.min_annular_ring), msg))
    if len(hs) < 2:
        return out
    sp = rules.min_hole_spacing
    for a_i, a in enumerate(hs):
        g = a.drill / 2 + sp + TOL
        for _, b_i in layout.query((a.x - g, a.y - g, a.x + g, a.y + g), kinds=("hole",)):
            if b_i <= a_i:
                continue
            b = hs[b_i]
            c = math.hypot(b.x - a.x, b.y - a.y)
            if c <= TOL and a.net is not None and a.net == b.net:
                continue     # one hole drilled twice for one net (a via on its pad): no wall between
            wall = c - a.drill / 2 - b.drill / 2
            if short_of(wall, sp):
                if c > 0:
                    t = min(max((a.drill / 2 + c - b.drill / 2) / 2, 0.0), c) / c
                    at = (a.x + (b.x - a.x) * t, a.y + (b.y - a.y) * t)
                else:
                    at = a.at
                at = _xy(at)
                nets = sorted({n for n in (a.net, b.net) if n})
                msg = (f"{a.source} and {b.source}: hole walls {wall:.2f} mm apart at {_fmt_at(at)}, "
                       f"{sp:.2f} mm required")
                out.append(Violation("hole_spacing", nets, None, at, _r(wall), _r(sp), msg))
    return out


def _placement(board: Board, layout=None) -> list[Violation]:
    out = []
    layout = resolve(board) if layout is None else layout
    outline = layout.outline
    grown = outline.buffer(TOL, join_style="mitre")
    placed = [p for p in board.parts if p.at is not None]
    rects = [bd.rect for bd in layout.bodies]              # one body per placed part, in file order
    polys = [bd.polygon for bd in layout.bodies]
    for p, r, poly in zip(placed, rects, polys):
        if not grown.covers(poly):
            c = _xy(p.at)
            msg = f"{p.ref}: body runs off the board (centre {_fmt_at(c)})"
            out.append(Violation("placement", [], None, c, None, None, msg))
    for a in range(len(placed)):
        ax0, ay0, ax1, ay1 = rects[a]
        for b in range(a + 1, len(placed)):
            if placed[a].side != placed[b].side:
                continue
            bx0, by0, bx1, by1 = rects[b]
            ox, oy = min(ax1, bx1) - max(ax0, bx0), min(ay1, by1) - max(ay0, by0)
            if ox > TOL and oy > TOL and (float(placed[a].rotation) % 90 or float(placed[b].rotation) % 90):
                # a turned body: its boxes overlap, do the bodies? (shrunk by TOL: touching is no overlap)
                inter = _shrink(polys[a]).intersection(_shrink(polys[b]))
                if inter.is_empty or inter.area <= 0:
                    continue
                q = inter.representative_point()
                c = _xy((q.x, q.y))
                msg = f"{placed[a].ref} and {placed[b].ref}: bodies overlap at {_fmt_at(c)}"
                out.append(Violation("placement", [], None, c, None, None, msg))
                continue
            if ox > TOL and oy > TOL:
                c = _xy(((max(ax0, bx0) + min(ax1, bx1)) / 2, (max(ay0, by0) + min(ay1, by1)) / 2))
                msg = f"{placed[a].ref} and {placed[b].ref}: bodies overlap at {_fmt_at(c)}"
                out.append(Violation("placement", [], None, c, None, None, msg))
    if board.jumpers:
        side = "top"
        wires = [LineString([j.start, j.end]) if tuple(j.start) != tuple(j.end) else SPoint(j.start)
                 for j in board.jumpers]
        for ji, (j, w) in enumerate(zip(board.jumpers, wires)):
            for p, r, poly in zip(placed, rects, polys):
                if p.side != side:
                    continue
                body = _shrink(poly)
                if not body.is_empty and w.intersects(body):
                    q = w.intersection(body).representative_point()
                    c = _xy((q.x, q.y))
                    msg = f"jumper {ji + 1} of {j.net}: its wire crosses the body of {p.ref} at {_fmt_at(c)}"
                    out.append(Violation("placement", [j.net], side, c, None, None, msg))
        for a in range(len(wires)):
            for b in range(a + 1, len(wires)):
                inter = wires[a].intersection(wires[b])
                if inter.is_empty:
                    continue
                ends = {tuple(board.jumpers[a].start), tuple(board.jumpers[a].end)} & \
                    {tuple(board.jumpers[b].start), tuple(board.jumpers[b].end)}
                if inter.geom_type == "Point" and (inter.x, inter.y) in ends:
                    continue
                q = inter.representative_point()
                c = _xy((q.x, q.y))
                ja, jb = board.jumpers[a], board.jumpers[b]
                msg = (f"jumper {a + 1} of {ja.net} and jumper {b + 1} of {jb.net}: their wires cross "
                       f"at {_fmt_at(c)}")
                out.append(Violation("placement", sorted({ja.net, jb.net}), side, c, None, None, msg))
    return out


# ----------------------------------------------------------------------------- public

def check(board: Board, strict: bool = False, layout=None) -> list[Violation]:
    """Every violation of `board`'s rules.

    Parameters
    ----------
    board : Board
        Any board, routed by us or drawn by hand.
    strict : bool
        Pads of one part keep the class clearance like any other copper (``check --strict``);
        by default a footprint's own pad spacing is a violation only below ``min_clearance``
        (:mod:`router.escape`).
    layout : Layout, optional
        `board` resolved (:func:`router.layout.resolve`); default: resolved here (once per
        board state).

    Returns
    -------
    list of Violation
        Ordered by rule as in :data:`RULES`, then as found. Touching copper of two nets is
        one ``short`` per pair of touching pieces (joined copper) and layer; too-close copper
        is one ``clearance`` per such pair, at its closest point.

    Notes
    -----
    Distances are exact (cores and radii, :mod:`router.copper`); every comparison uses
    :data:`router.units.TOL`.

    References
    ----------
    .. [1] IPC-2221, "Generic Standard on Printed Board Design", Table 6-1 and section 6.2.
    """
    ctx = _Ctx(board, layout)
    ctx.strict = strict
    found = (_clearance_and_short(ctx) + _open(ctx) + _edge(ctx) + _keepout(ctx) +
             _width_and_current(board) + _holes(board, ctx.layout) + _voltage(board) +
             _placement(board, ctx.layout))
    if board.pours:                  # poured copper narrower than the board house makes (router.pour)
        from .pour import neck_violations
        found += neck_violations(board)
    order = {r: k for k, r in enumerate(RULES)}
    return sorted(found, key=lambda v: order.get(v.rule, len(RULES)))


def warnings(board: Board, layout=None) -> list[Violation]:
    """Dangling trace ends: a trace end that touches no other copper of its net on its layer.

    Returns
    -------
    list of Violation
        Rule ``"dangling_end"``, one per loose end; not counted as violations.
    """
    lay = resolve(board) if layout is None else layout      # the board resolved once (router.layout)
    items, idx = list(lay.items), lay.copper_index
    out = []
    for ti, t in enumerate(board.traces):
        if not t.points:
            continue
        ends = [tuple(t.points[0])]
        if tuple(t.points[-1]) != ends[0]:
            ends.append(tuple(t.points[-1]))
        r = t.width / 2
        for e in ends:
            p = SPoint(e)
            joined = False
            for i in idx.intersection((e[0] - r - TOL, e[1] - r - TOL, e[0] + r + TOL, e[1] + r + TOL)):
                it = items[i]
                if it.net != t.net or t.layer not in it.layers:
                    continue
                if it.kind == "trace" and it.index[0] == ti:
                    continue
                if it.core.distance(p) - it.radius - r <= TOL:
                    joined = True
                    break
            if not joined:
                at = _xy(e)
                msg = f"{t.net} on {t.layer}: trace {ti + 1} ends at {_fmt_at(at)} touching nothing"
                out.append(Violation("dangling_end", [t.net], t.layer, at, None, None, msg))
    from .escape import OwnPadRule           # a footprint's own pad spacing: once per part
    for ref, fp, gap, req in OwnPadRule(board, items).warnings():
        pad = next((it for it in items if it.kind == "pad" and it.pad.ref == ref), None)
        at = _xy(pad.pad.at) if pad is not None else None
        msg = (f"{ref} ({fp}): its own pads are {gap:.2f} mm apart, below the {req:.2f} mm class clearance; "
               f"the footprint's business (a violation below min_clearance or with check --strict)")
        out.append(Violation("own_pad_gap", [], None, at, _r(gap), _r(req), msg))
    if board.pours:                  # a fill computed for other copper (router.pour)
        from .pour import stale_warnings
        out += stale_warnings(board)
    return out


def violations_json(violations: Sequence[Violation]) -> dict:
    """The contract's ``check --json`` object: ``{"violations": [...], "counts": {rule: n}}``."""
    vs = []
    counts: dict[str, int] = {}
    for v in violations:
        vs.append({"rule": v.rule, "nets": list(v.nets), "layer": v.layer,
                   "at": None if v.at is None else [v.at[0], v.at[1]],
                   "actual": v.actual, "required": v.required, "message": v.message})
        counts[v.rule] = counts.get(v.rule, 0) + 1
    return {"violations": vs, "counts": counts}


def format_violations(violations: Sequence[Violation], board: Optional[Board] = None) -> str:
    """The human report: violations grouped by rule, then dangling ends as warnings.

    Returns
    -------
    str
        "no violations" (and any warnings) when `violations` is empty.
    """
    lines = []
    by_rule: dict[str, list[Violation]] = defaultdict(list)
    for v in violations:
        by_rule[v.rule].append(v)
    for rule in list(RULES) + sorted(set(by_rule) - set(RULES)):
        vs = by_rule.get(rule)
        if not vs:
            continue
        lines.append(f"{rule} ({len(vs)}):")
        lines.extend(f"  {v.message}" for v in vs)
    if not violations:
        lines.append("no violations")
    else:
        lines.append(f"{len(violations)} violation{'s' if len(violations) != 1 else ''}")
    if board is not None:
        ws = warnings(board)
        if ws:
            lines.append(f"warnings ({len(ws)}):")
            lines.extend(f"  {w.message}" for w in ws)
    return "\n".join(lines)
