"""Pads, holes, bodies and copper in board coordinates, and as shapely shapes.

Placing a footprint: local (x, y) -> on the bottom side x becomes -x -> rotate
counter-clockwise by the part's rotation -> translate by the part's ``at``.
Rotations are multiples of 90 degrees, so every pad stays axis-aligned: a
placed pad is its centre, its width and height along x and y, and its shape.

Each part is also one large rectangle, its body, whose pins are its ports
(:func:`part_rect`); placement and drawing work with that rectangle.
"""
from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache
from typing import Optional

from shapely.geometry import LineString, Point as SPoint, Polygon, box
from shapely.geometry.base import BaseGeometry

from .footprints import resolve_footprint
from .model import Board, Footprint, Part, Point, Trace

__all__ = [
    "PlacedPad", "PlacedHole", "transform", "part_footprint", "placed_pads", "placed_holes",
    "pad_shape", "body_rect", "part_rect", "outline_polygon", "trace_shape", "segment_shape",
    "ring_shape", "lone_pad_net", "pad_nets", "ARC_SEGMENTS",
]

#: Segments per quarter circle when a round shape becomes a polygon. 16 keeps the polygon
#: within 0.05 % of the true radius (cos(pi/64) = 0.9988), far below any clearance figure.
ARC_SEGMENTS = 16


@dataclass(frozen=True)
class PlacedPad:
    """A pad in board coordinates."""
    ref: str
    pin: str
    net: str                      # its net's name; a pad in no net gets :func:`lone_pad_net`
    x: float
    y: float
    shape: str                    # "round", "rectangle" or "obround"
    w: float                      # along x, after rotation
    h: float                      # along y, after rotation
    drill: Optional[float]        # None: a surface pad
    layers: tuple[str, ...]       # copper layers it is on
    index: int                    # pad index in its footprint

    @property
    def plated(self) -> bool:
        return self.drill is not None

    @property
    def at(self) -> Point:
        return (self.x, self.y)

    @property
    def name(self) -> str:
        return f"{self.ref}.{self.pin}"

    def bounds(self) -> tuple[float, float, float, float]:
        return (self.x - self.w / 2, self.y - self.h / 2, self.x + self.w / 2, self.y + self.h / 2)


@dataclass(frozen=True)
class PlacedHole:
    """A non-plated hole in board coordinates."""
    ref: str
    x: float
    y: float
    drill: float


def transform(part: Part, local: Point) -> Point:
    """Board coordinates of a footprint-local point of a placed part.

    Examples
    --------
    >>> from router.model import Part
    >>> transform(Part("U1", "dip-8", at=(10.0, 5.0), rotation=90), (1.0, 0.0))
    (10.0, 6.0)
    >>> transform(Part("U1", "dip-8", at=(10.0, 5.0), rotation=0, side="bottom"), (1.0, 2.0))
    (9.0, 7.0)
    """
    x, y = local
    if part.side == "bottom":
        x = -x
    r = part.rotation % 360
    if r == 90:
        x, y = -y, x
    elif r == 180:
        x, y = -x, -y
    elif r == 270:
        x, y = y, -x
    ax, ay = part.at
    return (_clean(ax + x), _clean(ay + y))


def _clean(v: float) -> float:
    r = round(v, 9)
    return 0.0 if r == 0 else r


def _turned(part: Part, size: Point) -> Point:
    return (size[1], size[0]) if part.rotation % 180 == 90 else (size[0], size[1])


def part_footprint(board: Board, part: Part) -> Footprint:
    fp = resolve_footprint(part.footprint, board.footprints)
    if fp is None:   # load_board rejects this; a board built in code may not have been checked
        raise KeyError(f"unknown footprint {part.footprint!r} of {part.ref}")
    return fp


def lone_pad_net(ref: str, pin: str) -> str:
    """The name of the net of its own that a pad in no net forms."""
    return f"~{ref}.{pin}"


def pad_nets(board: Board) -> dict[str, str]:
    """Map "REF.PIN" -> net name for every pin listed in a net."""
    return {pin: n.name for n in board.nets for pin in n.pins}


def placed_pads(board: Board, parts: Optional[list[Part]] = None) -> list[PlacedPad]:
    """Every pad of every placed part, in board coordinates, in file order."""
    owner = pad_nets(board)
    out = []
    for part in (board.parts if parts is None else parts):
        if part.at is None:
            continue
        fp = part_footprint(board, part)
        for i, pad in enumerate(fp.pads):
            x, y = transform(part, pad.offset)
            w, h = _turned(part, pad.size)
            name = f"{part.ref}.{pad.pin}"
            layers = board.layers if pad.drill is not None else (part.side,)
            out.append(PlacedPad(part.ref, pad.pin, owner.get(name, lone_pad_net(part.ref, pad.pin)),
                                 x, y, pad.shape, w, h, pad.drill, layers, i))
    return out


def placed_holes(board: Board) -> list[PlacedHole]:
    """Every non-plated hole of every placed part, in board coordinates."""
    out = []
    for part in board.parts:
        if part.at is None:
            continue
        for hole in part_footprint(board, part).holes:
            x, y = transform(part, hole.offset)
            out.append(PlacedHole(part.ref, x, y, hole.drill))
    return out


@lru_cache(maxsize=65536)
def _pad_shape_cached(shape: str, x: float, y: float, w: float, h: float) -> BaseGeometry:
    if shape == "rectangle":
        return box(x - w / 2, y - h / 2, x + w / 2, y + h / 2)
    if shape == "round" or (shape == "obround" and abs(w - h) < 1e-12):
        return SPoint(x, y).buffer(min(w, h) / 2, quad_segs=ARC_SEGMENTS)
    # obround: a stadium, the stroke of its long axis with round ends
    r = min(w, h) / 2
    if w > h:
        seg = LineString([(x - w / 2 + r, y), (x + w / 2 - r, y)])
    else:
        seg = LineString([(x, y - h / 2 + r), (x, y + h / 2 - r)])
    return seg.buffer(r, quad_segs=ARC_SEGMENTS)


def pad_shape(pad: PlacedPad) -> BaseGeometry:
    """The copper of a placed pad as a shapely polygon."""
    return _pad_shape_cached(pad.shape, pad.x, pad.y, pad.w, pad.h)


def body_rect(board: Board, part: Part) -> tuple[float, float, float, float]:
    """The body rectangle (x0, y0, x1, y1) of a placed part."""
    fp = part_footprint(board, part)
    w, h = _turned(part, fp.body)
    x, y = part.at
    return (x - w / 2, y - h / 2, x + w / 2, y + h / 2)


def part_rect(board: Board, part: Part, at: Optional[Point] = None, rotation: Optional[int] = None):
    """The part as one large rectangle: its body and all its pads, (x0, y0, x1, y1).

    `at` and `rotation` override the part's own (for placement trials).
    """
    fp = part_footprint(board, part)
    rot = part.rotation if rotation is None else rotation
    probe = Part(part.ref, part.footprint, at=at if at is not None else (part.at or (0.0, 0.0)),
                 rotation=rot, side=part.side)
    w, h = _turned(probe, fp.body)
    x, y = probe.at
    x0, y0, x1, y1 = x - w / 2, y - h / 2, x + w / 2, y + h / 2
    for pad in fp.pads:
        px, py = transform(probe, pad.offset)
        pw, ph = _turned(probe, pad.size)
        x0, y0 = min(x0, px - pw / 2), min(y0, py - ph / 2)
        x1, y1 = max(x1, px + pw / 2), max(y1, py + ph / 2)
    for hole in fp.holes:
        px, py = transform(probe, hole.offset)
        x0, y0 = min(x0, px - hole.drill / 2), min(y0, py - hole.drill / 2)
        x1, y1 = max(x1, px + hole.drill / 2), max(y1, py + hole.drill / 2)
    return (x0, y0, x1, y1)


def outline_polygon(board: Board) -> Polygon:
    return Polygon(board.outline)


def segment_shape(a: Point, b: Point, width: float) -> BaseGeometry:
    """A trace segment as copper: the stroke of `width` with round ends."""
    if a == b:
        return SPoint(a).buffer(width / 2, quad_segs=ARC_SEGMENTS)
    return LineString([a, b]).buffer(width / 2, quad_segs=ARC_SEGMENTS)


def trace_shape(trace: Trace) -> BaseGeometry:
    """A whole trace as copper (all its segments, round ends and corners)."""
    pts = trace.points
    if len(set(pts)) == 1:
        return SPoint(pts[0]).buffer(trace.width / 2, quad_segs=ARC_SEGMENTS)
    return LineString(pts).buffer(trace.width / 2, quad_segs=ARC_SEGMENTS)


def ring_shape(at: Point, diameter: float) -> BaseGeometry:
    """A via or jumper end's copper: a disc of `diameter` (the drill is inside it)."""
    return SPoint(at).buffer(diameter / 2, quad_segs=ARC_SEGMENTS)
