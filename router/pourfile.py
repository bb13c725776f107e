"""The ``[[pours]]`` entries of the board file: reading with validation, and writing back.

Kept beside :mod:`router.boardfile` (which calls :func:`read_pours` and :func:`pours_to_list`)
so that the pour's words live in one place. Every problem is a BoardError naming the entry.
"""
from __future__ import annotations

from shapely.geometry import Polygon

from .model import Pour, Thermal, Rules
from .units import TOL, snap

__all__ = ["POUR_KEYS", "read_pours", "pours_to_list"]

POUR_KEYS = {"net", "layer", "polygon", "clearance", "thermal", "min_island_area", "priority",
             "filled", "filled_for"}
THERMAL_KEYS = {"spokes", "width", "gap"}


def read_pours(r, values, layers, net_names, rules: Rules, outline) -> list[Pour]:
    """Validate and read the ``[[pours]]`` array (`r` is boardfile's reader)."""
    out = []
    board_poly = Polygon(outline).buffer(TOL, join_style="mitre")
    for i, pv in enumerate(r.array(values, "[[pours]]")):
        entry = f"pour {i + 1}"
        pv = r.table(pv, entry)
        r.keys(pv, entry, POUR_KEYS, ("net", "layer"))
        net = r.string(pv["net"], f"{entry} net")
        if net not in net_names:
            r.fail(f"{entry} net", f"unknown net '{net}'; pour a net listed in [[nets]]")
        entry = f'pour {i + 1} (net "{net}")'
        layer = r.layer(pv["layer"], f"{entry} layer", layers)
        polygon = None
        if "polygon" in pv:
            polygon = r.polygon(pv["polygon"], f"{entry} polygon")
            poly = Polygon(polygon)
            if not board_poly.covers(poly):
                p = poly.difference(board_poly).representative_point()
                r.fail(f"{entry} polygon", f"reaches outside the board outline near ({p.x:.2f}, {p.y:.2f}); "
                                           "keep its corners on the board or leave it out for the whole board")
        clearance = None
        if "clearance" in pv:
            clearance = r.number(pv["clearance"], f"{entry} clearance", positive=True)
            if clearance < rules.min_clearance - TOL:
                r.fail(f"{entry} clearance", f"{clearance} is below the board house's min_clearance "
                                             f"{rules.min_clearance}; raise it")
        th = Thermal()
        if "thermal" in pv:
            tv = r.table(pv["thermal"], f"{entry} thermal")
            r.keys(tv, f"{entry} thermal", THERMAL_KEYS)
            spokes = r.integer(tv.get("spokes", 4), f"{entry} thermal spokes")
            if spokes not in (2, 4):
                r.fail(f"{entry} thermal spokes", f"must be 2 or 4, not {spokes}")
            width = gap = None
            if "width" in tv:
                width = r.number(tv["width"], f"{entry} thermal width", positive=True)
                if width < rules.min_trace_width - TOL:
                    r.fail(f"{entry} thermal width", f"{width} is below the board house's min_trace_width "
                                                     f"{rules.min_trace_width}; widen the spokes")
            if "gap" in tv:
                gap = r.number(tv["gap"], f"{entry} thermal gap", positive=True)
                if gap < rules.min_clearance - TOL:
                    r.fail(f"{entry} thermal gap", f"{gap} is below the board house's min_clearance "
                                                   f"{rules.min_clearance}; widen the gap")
            th = Thermal(spokes, width, gap)
        area = r.number(pv.get("min_island_area", 0.0), f"{entry} min_island_area", nonnegative=True)
        priority = r.integer(pv.get("priority", 0), f"{entry} priority")
        filled = []
        for k, piece in enumerate(r.array(pv.get("filled", []), f"{entry} filled")):
            rings = []
            for m, ring in enumerate(r.array(piece, f"{entry} filled piece {k + 1}")):
                pts = [r.point(p, f"{entry} filled piece {k + 1} ring {m + 1}") for p in r.array(ring, f"{entry} filled piece {k + 1} ring {m + 1}")]
                if len(pts) < 3:
                    r.fail(f"{entry} filled piece {k + 1} ring {m + 1}", "a ring needs at least three corners; "
                                                        "run `elbowroom pour` to recompute the fill")
                rings.append(pts)
            if not rings:
                r.fail(f"{entry} filled piece {k + 1}", "a piece needs its outer ring; run `elbowroom pour` to recompute")
            filled.append(rings)
        filled_for = None
        if "filled_for" in pv:
            filled_for = r.string(pv["filled_for"], f"{entry} filled_for")
        out.append(Pour(net, layer, polygon, clearance, th, area, priority, filled, filled_for))
    return out


def _pt(p):
    return [snap(p[0]), snap(p[1])]


def pours_to_list(pours) -> list[dict]:
    """The pours as TOML-ready tables, in the order and words :func:`read_pours` reads."""
    out = []
    for p in pours:
        d: dict = {"net": p.net, "layer": p.layer}
        if p.polygon is not None:
            d["polygon"] = [_pt(q) for q in p.polygon]
        if p.clearance is not None:
            d["clearance"] = snap(float(p.clearance))
        th: dict = {"spokes": int(p.thermal.spokes)}
        if p.thermal.width is not None:
            th["width"] = snap(float(p.thermal.width))
        if p.thermal.gap is not None:
            th["gap"] = snap(float(p.thermal.gap))
        d["thermal"] = th
        d["min_island_area"] = snap(float(p.min_island_area))
        d["priority"] = int(p.priority)
        if p.filled_for is not None:
            d["filled_for"] = p.filled_for
        if p.filled:
            d["filled"] = [[[_pt(q) for q in ring] for ring in piece] for piece in p.filled]
        out.append(d)
    return out
