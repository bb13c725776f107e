"""Copper pours: the filled area of one net on one layer, with thermal reliefs.

A pour's copper is computed from the board's other copper with shapely's
boolean operations only (buffer, difference, union); there is no polygon
clipping of our own:

    area   = pour polygon (default: the outline shrunk by edge_clearance)
             - every other net's copper on the layer, grown by the clearance the two nets need
             - non-plated holes grown by edge_clearance
             - keepouts on the layer, and bodies with ``keepout_body`` of parts the net is not on
             - pours of other nets already filled (higher priority), grown by the clearance
    fill   = (area - the net's own pads grown by the thermal gap) opened by half the
             board house's minimum width (no neck or sliver narrower than it survives)
    copper = fill + thermal spokes from each own pad (each spoke kept only where it lies
             wholly inside `area` and reaches the fill), less pieces smaller than
             `min_island_area` and pieces touching no copper of the net

Distances are made safe against polygon error: every circle is approximated by a
polygon that *circumscribes* it (the buffer distance is divided by cos(pi / 4q) for
q segments a quarter), so the exact distance check (:mod:`router.check`, cores and
radii) always finds the clearance met. The net's own traces and vias are not cut out:
the pour runs over them and joins them, which is how a via reaches a poured layer.

Pours fill in order of `priority` (highest first, then file order); a lower pour keeps
its clearance from the copper of higher pours of other nets.
"""
from __future__ import annotations

import contextvars
import hashlib
import json
import math
from dataclasses import dataclass, field, replace
from typing import Optional

import numpy as np
import shapely
from shapely.geometry import MultiPolygon, Polygon, box

from .copper import CopperItem, pour_items
from .errors import BoardError
from .geometry import outline_polygon
from .layout import resolve
from .model import Board, Pour
from .rules import required_clearance
from .units import TOL

__all__ = ["PourResult", "pour_board", "pour_summary", "fill_pour", "pour_clearance", "thermal_of", "copper_digest",
           "stale_pours", "pour_geometry", "poured_area", "neck_findings", "QUAD_SEGS"]

#: Segments per quarter circle in the buffers of the pour (the check measures exactly).
QUAD_SEGS = 8
#: Grow factor that makes a buffered polygon circumscribe its true circle.
_CIRCUMSCRIBE = 1.0 / math.cos(math.pi / (4 * QUAD_SEGS))
#: GEOS simplifies a polygon's rings by 1 % of the buffer distance before it offsets them
#: (its default simplify factor, which shapely does not expose), so a buffer may fall short
#: by that much where a ring has many close corners (another pour's arcs): grown by 1.1 % more.
_SIMPLIFY = 0.011
#: Safety margin on every grown distance, in mm: covers the 1 nm rounding of the written
#: coordinates (:func:`router.units.snap`) with room to spare.
_MARGIN = 1e-5
#: Written coordinates are on this grid (mm), as everywhere in the board file.
_PRECISION = 1e-6


@dataclass
class PourResult:
    """What :func:`pour_board` returns."""
    board: Board
    unreached: dict = field(default_factory=dict)      # pour index -> {pad name: reason}
    area: dict = field(default_factory=dict)           # pour index -> mm^2 filled


def pour_clearance(board: Board, pour: Pour, other_net: str) -> float:
    """The clearance the pour keeps from copper of `other_net`: the pour's own `clearance`
    (default the net's class clearance), raised by :func:`router.rules.required_clearance`."""
    mine = board.net_class(pour.net)
    req = required_clearance(board, mine, board.net_class(other_net))
    return max(req, pour.clearance if pour.clearance is not None else 0.0)


def thermal_of(board: Board, pour: Pour) -> tuple[int, float, float]:
    """(spokes, width, gap) of the pour's thermal reliefs, with the defaults filled in."""
    nc = board.net_class(pour.net)
    width = pour.thermal.width if pour.thermal.width is not None else nc.trace_width
    base = pour.clearance if pour.clearance is not None else nc.clearance
    gap = pour.thermal.gap if pour.thermal.gap is not None else base
    return int(pour.thermal.spokes), float(width), float(gap)


def copper_digest(board: Board) -> str:
    """A short digest of everything a fill depends on (the board less the fills themselves)."""
    from .boardfile import _to_dict
    b = replace(board, pours=[replace(p, filled=[], filled_for=None) for p in board.pours])
    text = json.dumps(_to_dict(b), sort_keys=True, separators=(",", ":"))
    return hashlib.sha1(text.encode()).hexdigest()[:16]


def stale_pours(board: Board) -> list[int]:
    """Indices of pours whose `filled` was computed for other copper (or never computed)."""
    if not board.pours:
        return []
    digest = copper_digest(board)
    return [k for k, p in enumerate(board.pours) if p.filled_for != digest]


def pour_geometry(pour: Pour) -> MultiPolygon:
    """The stored `filled` of a pour as one shapely MultiPolygon."""
    polys = [Polygon(piece[0], piece[1:]) for piece in pour.filled if piece]
    return MultiPolygon(polys) if polys else MultiPolygon()


def poured_area(board: Board) -> dict:
    """Per copper layer: poured area in mm^2 and its share of the board area (figures for report)."""
    board_area = outline_polygon(board).area
    out = {}
    for layer in board.layers:
        geoms = [pour_geometry(p) for p in board.pours if p.layer == layer and p.filled]
        area = shapely.union_all(geoms).area if geoms else 0.0
        out[layer] = {"area": round(area, 3), "share": round(area / board_area, 4) if board_area else 0.0}
    return out


# ----------------------------------------------------------------------------- computing

def _grown(cores, amounts) -> list:
    """Buffers of `cores` by `amounts` (arrays), circumscribing the true offset."""
    if len(cores) == 0:
        return []
    dist = np.asarray(amounts, dtype=float) * (_CIRCUMSCRIBE + _SIMPLIFY) + _MARGIN
    return list(shapely.buffer(np.asarray(cores, dtype=object), dist, quad_segs=QUAD_SEGS))


def _pad_polygon(item: CopperItem):
    return item.core.buffer(item.radius, quad_segs=QUAD_SEGS) if item.radius > 0 else item.core


def _spokes(item: CopperItem, n: int, width: float, reach: float) -> list:
    """Spoke rectangles from the pad centre outwards: +-x (and +-y with four)."""
    pad = item.pad
    bx0, by0, bx1, by1 = pad.bounds()          # a turned pad: spokes reach past its bounding box
    x, y, hw, hh = pad.x, pad.y, (bx1 - bx0) / 2, (by1 - by0) / 2
    w2 = width / 2
    out = []
    along_x = n == 4 or pad.w >= pad.h
    along_y = n == 4 or pad.h > pad.w
    if along_x:
        out.append(("+x", box(x, y - w2, x + hw + reach, y + w2)))
        out.append(("-x", box(x - hw - reach, y - w2, x, y + w2)))
    if along_y:
        out.append(("+y", box(x - w2, y, x + w2, y + hh + reach)))
        out.append(("-y", box(x - w2, y - hh - reach, x + w2, y)))
    return out


def _snap(geom):
    """Coordinates on the file's 1 nm grid. Rounding each point is enough where the result
    stays valid (features of a fill are far wider than 1 nm); otherwise GEOS snaps with its
    topology kept (slower, and rarely needed)."""
    fast = shapely.set_precision(geom, _PRECISION, mode="pointwise")
    return fast if shapely.is_valid(fast) else shapely.set_precision(geom, _PRECISION)


def _pieces(geom) -> list[Polygon]:
    if geom.is_empty:
        return []
    if geom.geom_type == "Polygon":
        return [geom]
    return [g for g in getattr(geom, "geoms", []) if g.geom_type == "Polygon" and not g.is_empty]


def _as_filled(pieces) -> list:
    out = []
    for poly in pieces:
        poly = shapely.normalize(poly)
        rings = [poly.exterior] + list(poly.interiors)
        out.append([[(float(x), float(y)) for x, y in list(r.coords)[:-1]] for r in rings])
    return out


def fill_pour(board: Board, k: int, items: list[CopperItem], done: dict) -> tuple[list, dict]:
    """The copper of pour `k` of `board`.

    Parameters
    ----------
    board : Board
    k : int
        Index into ``board.pours``.
    items : list of CopperItem
        The board's copper without pours (:func:`router.copper.copper_items`).
    done : dict
        Pour index -> list of filled shapely polygons, for the pours already filled.

    Returns
    -------
    (pieces, unreached)
        The filled polygons, and {pad name: reason} for pads of the net on the layer the
        pour does not join.
    """
    pour = board.pours[k]
    layer, net = pour.layer, pour.net
    rules = board.rules
    lay = resolve(board)                 # the board resolved once (router.layout)
    outline = lay.outline
    area0 = outline.buffer(-(rules.edge_clearance * (_CIRCUMSCRIBE + _SIMPLIFY) + _MARGIN), quad_segs=QUAD_SEGS)
    if pour.polygon is not None:
        area0 = area0.intersection(Polygon(pour.polygon))
    spokes_n, tw, gap = thermal_of(board, pour)
    min_w = rules.min_trace_width

    on_layer = [it for it in items if layer in it.layers]
    others = [it for it in on_layer if it.net != net]
    own = [it for it in on_layer if it.net == net]
    cut = []
    if others:
        clear = {}
        amounts = []
        for it in others:
            c = clear.get(it.net)
            if c is None:
                c = clear[it.net] = pour_clearance(board, pour, it.net)
            amounts.append(it.radius + c)
        cut += _grown([it.core for it in others], amounts)
    npth = lay.npth
    if npth:
        cut += _grown([shapely.points(h.x, h.y) for h in npth],
                      [h.drill / 2 + rules.edge_clearance for h in npth])
    for ko in board.keepouts:
        if layer in ko.layers_on(board.layers):
            cut.append(Polygon(ko.polygon))
    for body in lay.bodies:              # a keepout body closes the pour unless one of its pads is the net's
        if body.keepout and net not in body.owners:
            cut.append(box(*body.rect))
    for j, polys in done.items():
        other = board.pours[j]
        if other.layer != layer or other.net == net or not polys:
            continue
        c = pour_clearance(board, pour, other.net)
        cut += list(shapely.buffer(np.asarray(polys, dtype=object), c * (_CIRCUMSCRIBE + _SIMPLIFY) + _MARGIN,
                                   quad_segs=QUAD_SEGS))
    base = area0.difference(shapely.union_all(cut)) if cut else area0

    own_pads = [it for it in own if it.kind == "pad"]
    gaps = _grown([it.core for it in own_pads], [it.radius + gap for it in own_pads])
    area = base.difference(shapely.union_all(gaps)) if gaps else base
    # opening by half the minimum width: no neck or sliver narrower than the board house makes
    # The erosion goes a little deeper than the growth comes back (circumscribed circles and
    # GEOS's 1 % input simplification on the way in, inscribed circles on the way out), so
    # the opened fill lies inside `area` without intersecting the two (which cost more than
    # all the rest on a crowded layer).
    r_open = min_w / 2 + 1e-3
    r_in = r_open * (1.0 + _SIMPLIFY) * (_CIRCUMSCRIBE + _SIMPLIFY) + _MARGIN
    fill = area.buffer(-r_in, quad_segs=QUAD_SEGS).buffer(r_open, quad_segs=QUAD_SEGS)

    unreached: dict[str, str] = {}
    kept = []
    reach = gap + 1.5 * max(tw, min_w)
    for it in own_pads:
        pad_poly = _pad_polygon(it)
        got = 0
        blocked = []
        for name, sp in _spokes(it, spokes_n, tw, reach):
            outer = sp.difference(pad_poly)
            # base and fill cut to the spoke's box first: a small overlay instead of a board-sized one
            bx = sp.bounds
            if outer.difference(shapely.clip_by_rect(base, *bx)).area > 1e-9:
                blocked.append(name)
                continue
            if outer.intersection(shapely.clip_by_rect(fill, *bx)).area < 0.5 * tw * tw:
                blocked.append(name)
                continue
            kept.append(sp)             # from the pad centre: copper over its own pad is harmless, and a spoke cut at the pad leaves slivers
            got += 1
        if not got and not fill.intersects(pad_poly):
            why = "other copper or the edge leaves no room for a spoke" if blocked else "no fill near it"
            unreached[it.pad.name] = why
    copper = shapely.union_all([fill] + kept) if kept else fill
    copper = _snap(copper)

    # islands: too small, or touching no copper of the net
    tree = shapely.STRtree([it.core for it in own]) if own else None
    maxr = max((it.radius for it in own), default=0.0)
    pieces = []
    for poly in _pieces(copper):
        if poly.area < pour.min_island_area - TOL:
            continue
        if tree is None:
            continue
        hit = False
        for i in tree.query(poly, predicate="dwithin", distance=maxr + TOL):
            it = own[int(i)]
            if it.core.distance(poly) - it.radius <= TOL:
                hit = True
                break
        if hit:
            pieces.append(poly)
    # pads whose spokes went to a piece that was then dropped
    if pieces:
        joined = shapely.union_all(pieces)
        shapely.prepare(joined)
        for it in own_pads:
            name = it.pad.name
            if name in unreached:
                continue
            if it.core.distance(joined) - it.radius > TOL:
                unreached[name] = "its only fill is an island cut off from the rest of the pour"
    else:
        for it in own_pads:
            unreached.setdefault(it.pad.name, "the pour has no copper left near it")
    for pad in lay.pads:
        if pad.net == net and layer not in pad.layers:
            unreached.setdefault(pad.name, f"a surface pad on {pad.layers[0]}, not on the poured {layer} "
                                           "(a trace, or a via into the pour, joins it)")
    return pieces, unreached


def pour_board(board: Board) -> PourResult:
    """Fill every pour of `board` (a copy is returned; the input is not changed).

    Pours fill by `priority`, highest first, file order among equals. Each pour's `filled`
    is replaced, and `filled_for` records the digest of the copper it was filled against.

    Raises
    ------
    BoardError
        A pour of an unknown net or layer (for boards built in code; the file reader
        refuses those first).
    """
    b = board.copy()
    names = {n.name for n in b.nets}
    for k, p in enumerate(b.pours):
        if p.net not in names:
            raise BoardError(b.source, f"pour {k + 1} net", f"unknown net '{p.net}'")
        if p.layer not in b.layers:
            raise BoardError(b.source, f"pour {k + 1} layer",
                             f"unknown layer '{p.layer}' (this board has {', '.join(b.layers)})")
        p.filled, p.filled_for = [], None
    if not b.pours:
        return PourResult(b)
    items = [it for it in resolve(b).items if it.kind != "pour"]
    order = sorted(range(len(b.pours)), key=lambda k: (-b.pours[k].priority, k))
    done: dict[int, list] = {}
    result = PourResult(b)
    for k in order:
        pieces, unreached = fill_pour(b, k, items, done)
        done[k] = pieces
        result.unreached[k] = unreached
        result.area[k] = sum(p.area for p in pieces)
    for k in order:
        b.pours[k].filled = _as_filled(done[k])
    digest = copper_digest(b)
    for p in b.pours:
        p.filled_for = digest
    return result


# ----------------------------------------------------------------------------- necks

def neck_findings(board: Board, min_width: Optional[float] = None) -> list[tuple[int, tuple, str]]:
    """Places where a pour's copper is narrower than the board house's minimum width.

    The morphological opening test: copper that a disk of the minimum width cannot reach while
    staying inside the copper is what an opening (erode by just under half the width, grow
    back) removes. The round-off at a right-angled corner reaches 0.41 of the radius from the
    opened copper and is not a neck; copper further than half the radius from it is a neck,
    spike or sliver. Growing the eroded copper by 1.5 radii at once (the opening grown by half
    a radius) and subtracting it from the piece leaves exactly that copper, in one overlay of
    boundaries that lie apart (subtracting the opening itself would overlay boundaries that
    nearly coincide along every curve, and cost a thousand times more). A piece that vanishes
    altogether is a sliver.

    Returns
    -------
    list of (pour index, (x, y), what)
    """
    w = board.rules.min_trace_width if min_width is None else min_width
    r = w / 2 - 2e-3          # a little under half the width: copper exactly w wide passes
    out = []
    if r <= 0:
        return out
    for k, pour in enumerate(board.pours):
        for piece in pour.filled:
            poly = Polygon(piece[0], piece[1:])
            if poly.is_empty:
                continue
            eroded = poly.buffer(-r, quad_segs=QUAD_SEGS)
            if eroded.is_empty:
                p = poly.representative_point()
                out.append((k, (p.x, p.y), "a sliver narrower than the minimum width"))
                continue
            beyond = poly.difference(eroded.buffer(1.5 * r, quad_segs=QUAD_SEGS))
            for s in _pieces(beyond):
                if s.area <= 1e-9:       # the polygon error of the growth, not copper
                    continue
                p = s.representative_point()
                out.append((k, (p.x, p.y), "narrower than the minimum width"))
    return out


# ----------------------------------------------------------------------------- routing

def first_pour_items(board: Board) -> list[CopperItem]:
    """Copper items of a first pour of `board` against the copper it has now.

    The router adds these to the pads' copper when it groups each net's pads: pads a pour
    joins are one terminal, so a poured net gets traces only for the pads the pour cannot
    reach. The other nets' traces laid later cut the final pour, which
    :func:`after_route` verifies.
    """
    if not board.pours:
        return []
    poured = pour_board(board).board
    return pour_items(poured)            # only the pours: a layout of this passing board is not needed


#: how many more times route_board may route again what a final pour left cut off; a context
#: variable, so that nested calls (route_board -> after_route -> route_board) count down within
#: one routing and routings in other threads keep their own count
_ROUNDS_LEFT: contextvars.ContextVar[int] = contextvars.ContextVar("pour_rounds_left", default=2)


def after_route(result, **settings):
    """Pour a routed board last, and route again what the final pour does not join.

    The first pour (before routing) knew only the copper then in the file; the traces the
    router laid for the other nets cut the final pour, and may cut a pad off that the router
    counted as joined. Such a net is routed again (``route_board`` completes it against the
    final copper, whose first pour is now the final one), up to twice; a net still cut off
    is reported with its reason.

    Parameters
    ----------
    result : router.negotiate.RouteResult
    settings : the keyword arguments of the ``route_board`` call (penalties, seed, passes, ...)
    """
    from .connectivity import routed
    from .negotiate import _figures, route_board
    import time
    t0 = time.perf_counter()
    poured = pour_board(result.board)
    b = poured.board
    joined = routed(b)
    cut = [n.name for n in b.nets if not joined.get(n.name, True) and n.name not in result.failed]
    if cut and _ROUNDS_LEFT.get() > 0:
        token = _ROUNDS_LEFT.set(_ROUNDS_LEFT.get() - 1)
        try:
            again = route_board(b, **settings)
        finally:
            _ROUNDS_LEFT.reset(token)
        again.seconds += result.seconds
        return again
    failed = {n: why for n, why in result.failed.items() if not joined.get(n, False)}
    for net in cut:
        pads = [name for k, p in enumerate(b.pours) if p.net == net
                for name in poured.unreached.get(k, {})]
        why = f" (the pour does not reach {', '.join(sorted(pads)[:4])})" if pads else ""
        failed[net] = f"the final pour leaves it open{why}; left as routed so far"
    result.board = b
    result.poured = pour_summary(poured)
    result.figures = _figures(b)
    result.seconds += time.perf_counter() - t0
    result.failed = {n.name: failed[n.name] for n in b.nets if n.name in failed}
    return result


def pour_summary(result: PourResult) -> list[tuple[str, str, int, dict]]:
    """Per pour: (net, layer, how many of the net's pads it joins, {pad: why it does not})."""
    out = []
    pads = resolve(result.board).pads
    for k, p in enumerate(result.board.pours):
        missed = result.unreached.get(k, {})
        total = sum(1 for pad in pads if pad.net == p.net)
        out.append((p.net, p.layer, total - len(missed), dict(sorted(missed.items()))))
    return out


def format_pour(result: PourResult) -> str:
    """The `pour` command's summary: area and pieces per pour, and the pads it does not join."""
    b = result.board
    lines = []
    for k, p in enumerate(b.pours):
        area = result.area.get(k, 0.0)
        lines.append(f"pour {k + 1}: {p.net} on {p.layer}: {area:.1f} mm^2 in {len(p.filled)} "
                     f"piece{'s' if len(p.filled) != 1 else ''}")
        for name, why in sorted(result.unreached.get(k, {}).items()):
            lines.append(f"  not joined by the pour: {name}: {why}")
    return "\n".join(lines)


# ----------------------------------------------------------------------------- check

def neck_violations(board: Board) -> list:
    """`width` violations of the check: pour copper narrower than ``rules.min_trace_width``."""
    from .check import Violation
    out = []
    w = board.rules.min_trace_width
    for k, (x, y), what in neck_findings(board):
        p = board.pours[k]
        at = (round(x, 6), round(y, 6))
        msg = (f"{p.net} on {p.layer}: pour {k + 1} is {what} ({w:.2f} mm) near ({at[0]:.2f}, {at[1]:.2f}); "
               "run `elbowroom pour` to fill it again")
        out.append(Violation("width", [p.net], p.layer, at, None, round(w, 6), msg))
    return out


def stale_warnings(board: Board) -> list:
    """Warnings (not violations) for pours whose `filled` does not match the board's copper."""
    from .check import Violation
    out = []
    for k in stale_pours(board):
        p = board.pours[k]
        how = "was never filled" if not p.filled and p.filled_for is None else \
            "was filled for other copper (the board changed since)"
        msg = (f"{p.net} on {p.layer}: pour {k + 1} {how}; the check measures the stored fill, "
               "`elbowroom pour` fills it again")
        out.append(Violation("stale_pour", [p.net], p.layer, None, None, None, msg))
    return out


# ----------------------------------------------------------------------------- fabrication

def gerber_regions(board: Board, layer: str, num) -> list[tuple[str, list[str]]]:
    """The pours of `layer` as Gerber region statements (G36/G37), one (net, lines) per piece.

    Each piece is its outer contour in dark polarity followed by its holes in clear polarity
    (the open Gerber standard's way of cutting holes out of a region). Pieces go largest
    outer contour first, so a piece lying in another's hole is drawn after that hole is
    cleared. The region's attribute .AperFunction is Conductor. The lines go before any
    pad or trace of the file, since a clear region clears everything drawn before it.

    Parameters
    ----------
    num : callable
        The file's coordinate formatter (mm -> integer string in the file's format).
    """
    pieces = []
    for pour in board.pours:
        if pour.layer == layer:
            for piece in pour.filled:
                pieces.append((Polygon(piece[0]).area, pour.net, piece))
    pieces.sort(key=lambda t: -t[0])

    def contour(ring) -> list[str]:
        pts = list(ring) + [ring[0]]
        out = ["G36*", f"X{num(pts[0][0])}Y{num(pts[0][1])}D02*"]
        out += [f"X{num(x)}Y{num(y)}D01*" for x, y in pts[1:]]
        out.append("G37*")
        return out

    out = []
    for _, net, piece in pieces:
        lines = ["%TA.AperFunction,Conductor*%", "G01*"] + contour(piece[0])
        if len(piece) > 1:
            lines.append("%LPC*%")
            for hole in piece[1:]:
                lines += contour(hole)
            lines.append("%LPD*%")
        lines.append("%TD.AperFunction*%")
        out.append((net, lines))
    return out
