"""Every copper item and every hole of a board, in board coordinates, exactly.

A copper item is a *core* and a *radius*: the copper is every point within the
radius of the core. A rectangular pad is its box (a polygon when turned) with radius 0;
a circular pad, a via and a jumper end are their centre point with radius d/2; an oval
pad is its long axis (a one-segment line, at the pad's angle) with radius min(w, h)/2;
a rounded rectangle is its inner rectangle with the corner radius; each trace
segment is its line with radius width/2 (the round ends of the stroke come
free). The distance between two items is then exact, with no polygon error:

    distance(a, b) = a.core.distance(b.core) - a.radius - b.radius

(negative when they overlap). :meth:`CopperItem.shape` buffers the core into a
polygon for drawing only.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Optional

from shapely.geometry import LineString, Point as SPoint, Polygon, box
from shapely.geometry.base import BaseGeometry

from .geometry import ARC_SEGMENTS, PlacedPad, pad_core, placed_holes, placed_pads
from .model import Board, Point

__all__ = ["CopperItem", "HoleItem", "copper_items", "pour_items", "holes", "distance", "pad_core"]


@dataclass(frozen=True, eq=False)
class CopperItem:
    """One piece of copper: everything within `radius` of `core`.

    Attributes
    ----------
    kind : str
        "pad", "trace", "via", "jumper_end" or "pour" (a piece of a pour's filled copper:
        its polygon is the core, radius 0).
    net : str
        Its net's name (a pad in no net carries :func:`router.geometry.lone_pad_net`).
    layers : tuple of str
        The copper layers it is on.
    source : str
        A label a person can find in the file ("pad U1.3", "trace 4 segment 2", "via 1", ...).
    core : shapely geometry
        A Point, a one-segment LineString or a box.
    radius : float
        Copper extends this far around the core, in mm.
    pad : PlacedPad or None
        The pad, for pads.
    index : tuple
        Where it came from: (trace index, segment index), (via index,), (jumper index, end), (pad index,).
    width : float or None
        The trace width, for trace segments.
    """
    kind: str
    net: str
    layers: tuple[str, ...]
    source: str
    core: BaseGeometry
    radius: float
    pad: Optional[PlacedPad] = None
    index: tuple = ()
    width: Optional[float] = None

    @property
    def r(self) -> float:
        return self.radius

    def bounds(self, grow: float = 0.0) -> tuple[float, float, float, float]:
        """The bounding box of the copper, grown by `grow` on every side."""
        x0, y0, x1, y1 = self.core.bounds
        g = self.radius + grow
        return (x0 - g, y0 - g, x1 + g, y1 + g)

    def shape(self) -> BaseGeometry:
        """The copper as a polygon (for drawing; measuring uses the core and radius)."""
        if self.radius <= 0:
            return self.core
        return self.core.buffer(self.radius, quad_segs=ARC_SEGMENTS)


@dataclass(frozen=True)
class HoleItem:
    """A drilled hole: plated (pad, via, jumper end) or not (a footprint's hole)."""
    x: float
    y: float
    drill: float
    plated: bool
    source: str
    net: Optional[str] = None          # None for a non-plated hole
    kind: str = "hole"                 # "pad", "via", "jumper_end" or "hole"
    diameter: Optional[float] = None   # the copper ring's outer size (pads: the smaller side)

    @property
    def at(self) -> Point:
        return (self.x, self.y)


def copper_items(board: Board, pads: Optional[list[PlacedPad]] = None) -> list[CopperItem]:
    """Every copper item of `board`, in a stable order: pads, trace segments, vias, jumper ends.

    Parameters
    ----------
    board : Board
    pads : list of PlacedPad, optional
        The board's placed pads when they are at hand (:mod:`router.layout`); default
        :func:`router.geometry.placed_pads` of `board`.

    Returns
    -------
    list of CopperItem
        Pads of placed parts (with their layers: all copper layers for a pad with a drill,
        the part's side for a surface pad), each trace segment (a trace of one point, or of
        repeated points only, is one point item), each via, both ends of each jumper, and
        each piece of each pour's `filled` copper (last, so pads keep their positions).
    """
    items: list[CopperItem] = []
    for i, pad in enumerate(placed_pads(board) if pads is None else pads):
        core, r = pad_core(pad)
        items.append(CopperItem("pad", pad.net, tuple(pad.layers), f"pad {pad.name}", core, r,
                                pad=pad, index=(i,)))
    for ti, t in enumerate(board.traces):
        r = t.width / 2
        pts = [tuple(map(float, p)) for p in t.points]
        segs = [(a, b) for a, b in zip(pts, pts[1:]) if a != b]
        if not segs:
            if pts:
                items.append(CopperItem("trace", t.net, (t.layer,), f"trace {ti + 1} of {t.net}",
                                        SPoint(pts[0]), r, index=(ti, 0), width=t.width))
            continue
        for si, (a, b) in enumerate(segs):
            items.append(CopperItem("trace", t.net, (t.layer,),
                                    f"trace {ti + 1} of {t.net}, segment {si + 1}",
                                    LineString([a, b]), r, index=(ti, si), width=t.width))
    for vi, v in enumerate(board.vias):
        items.append(CopperItem("via", v.net, tuple(board.layers), f"via {vi + 1} of {v.net}",
                                SPoint(v.at), v.diameter / 2, index=(vi,)))
    for ji, j in enumerate(board.jumpers):
        for end, at in enumerate((j.start, j.end)):
            items.append(CopperItem("jumper_end", j.net, tuple(board.layers),
                                    f"jumper {ji + 1} of {j.net}, {'from' if end == 0 else 'to'} end",
                                    SPoint(at), j.diameter / 2, index=(ji, end)))
    return items + pour_items(board)


def pour_items(board: Board) -> list[CopperItem]:
    """The poured copper of `board`: each filled piece of each pour, exactly as stored."""
    return [CopperItem("pour", p.net, (p.layer,), f"pour {pi + 1} of {p.net}, piece {m + 1}",
                       Polygon(piece[0], piece[1:]), 0.0, index=(pi, m))
            for pi, p in enumerate(board.pours) for m, piece in enumerate(p.filled)]


def holes(board: Board, pads: Optional[list[PlacedPad]] = None, npth: Optional[list] = None) -> list[HoleItem]:
    """Every hole of `board`: plated pads, vias, jumper ends, and non-plated footprint holes
    (`pads` and `npth`: the placed pads and non-plated holes when they are at hand)."""
    out: list[HoleItem] = []
    for pad in (placed_pads(board) if pads is None else pads):
        if pad.drill is not None:
            out.append(HoleItem(pad.x, pad.y, pad.drill, True, f"pad {pad.name}", pad.net, "pad",
                                min(pad.w, pad.h)))
    for vi, v in enumerate(board.vias):
        out.append(HoleItem(v.at[0], v.at[1], v.drill, True, f"via {vi + 1} of {v.net}", v.net, "via",
                            v.diameter))
    for ji, j in enumerate(board.jumpers):
        for end, at in enumerate((j.start, j.end)):
            out.append(HoleItem(at[0], at[1], j.drill, True,
                                f"jumper {ji + 1} of {j.net}, {'from' if end == 0 else 'to'} end",
                                j.net, "jumper_end", j.diameter))
    for h in (placed_holes(board) if npth is None else npth):
        out.append(HoleItem(h.x, h.y, h.drill, False, f"hole of {h.ref}", None, "hole", None))
    return out


def distance(a: CopperItem, b: CopperItem) -> float:
    """The exact copper-to-copper distance of two items in mm (negative when they overlap).

    Examples
    --------
    >>> from shapely.geometry import Point as P
    >>> a = CopperItem("via", "A", ("top",), "a", P(0, 0), 0.4)
    >>> b = CopperItem("via", "B", ("top",), "b", P(3, 4), 0.6)
    >>> round(distance(a, b), 9)
    4.0
    """
    return a.core.distance(b.core) - a.radius - b.radius
