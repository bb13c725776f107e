"""Pads, holes, bodies and copper in board coordinates, and as shapely shapes.

Placing a footprint: local (x, y) -> on the bottom side x becomes -x -> rotate
counter-clockwise by the part's rotation -> translate by the part's ``at``.
A part turns by any angle and a pad by its own ``rotation`` inside the footprint.
A placed pad whose total turn is a multiple of 90 degrees is axis-aligned: its
centre, its width and height along x and y (``angle`` 0). Any other pad keeps its
own width and height and an ``angle`` in (0, 180) degrees; its exact copper is
:func:`pad_core` (a turned rectangle is a polygon, a turned obround a segment and a
radius, a rounded rectangle its inner rectangle and its corner radius).

Each part is also one large rectangle, its body, whose pins are its ports
(:func:`part_rect`); placement and drawing work with that rectangle.
"""
from __future__ import annotations

import math
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
    "ring_shape", "lone_pad_net", "pad_nets", "ARC_SEGMENTS", "pad_core", "body_polygon",
    "turned_box",
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
    shape: str                    # "round", "rectangle", "obround" or "rounded-rectangle"
    w: float                      # along x, after rotation (with an angle: the pad's own width)
    h: float                      # along y, after rotation (with an angle: the pad's own height)
    drill: Optional[float]        # None: a surface pad
    layers: tuple[str, ...]       # copper layers it is on
    index: int                    # pad index in its footprint
    angle: float = 0.0            # degrees in [0, 180): 0 is axis-aligned (w along x)
    corner: float = 0.0           # rounded-rectangle: the corner radius

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
        if not self.angle:
            return (self.x - self.w / 2, self.y - self.h / 2, self.x + self.w / 2, self.y + self.h / 2)
        core, r = pad_core(self)
        x0, y0, x1, y1 = core.bounds
        return (x0 - r, y0 - r, x1 + r, y1 + r)


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
    elif r != 0:
        c, s = math.cos(math.radians(r)), math.sin(math.radians(r))
        x, y = c * x - s * y, s * x + c * y
    ax, ay = part.at
    return (_clean(ax + x), _clean(ay + y))


def _square(angle: float) -> Optional[int]:
    """0 or 90 when `angle` (degrees, mod 180) is a quarter turn within 1e-9, else None."""
    a = angle % 180.0
    for q in (0, 90, 180):
        if abs(a - q) <= 1e-9:
            return q % 180
    return None


def pad_turn(part: Part, pad) -> tuple[float, float, float]:
    """(w, h, angle) of a footprint pad once placed: a quarter turn swaps w and h (angle 0)."""
    own = float(getattr(pad, "rotation", 0.0) or 0.0)
    total = (-own if part.side == "bottom" else own) + float(part.rotation)
    q = _square(total)
    w, h = pad.size
    if q == 0:
        return (w, h, 0.0)
    if q == 90:
        return (h, w, 0.0)
    return (w, h, total % 180.0)


def turned_box(x: float, y: float, w: float, h: float, angle: float) -> Polygon:
    """A w x h rectangle centred at (x, y), turned by `angle` degrees counter-clockwise."""
    if not angle:
        return box(x - w / 2, y - h / 2, x + w / 2, y + h / 2)
    c, s = math.cos(math.radians(angle)), math.sin(math.radians(angle))
    pts = [(x + c * u - s * v, y + s * u + c * v)
           for u, v in ((-w / 2, -h / 2), (w / 2, -h / 2), (w / 2, h / 2), (-w / 2, h / 2))]
    return Polygon(pts)


def _axis_segment(x, y, length, angle, horizontal):
    """A segment of `length` centred at (x, y) along x (or y) of a frame turned by `angle`."""
    if not angle:
        if horizontal:
            return LineString([(x - length / 2, y), (x + length / 2, y)])
        return LineString([(x, y - length / 2), (x, y + length / 2)])
    c, s = math.cos(math.radians(angle)), math.sin(math.radians(angle))
    ux, uy = (c, s) if horizontal else (-s, c)
    return LineString([(x - ux * length / 2, y - uy * length / 2), (x + ux * length / 2, y + uy * length / 2)])


@lru_cache(maxsize=65536)
def _core_cached(shape: str, x: float, y: float, w: float, h: float, angle: float, corner: float):
    if shape == "rectangle":
        return turned_box(x, y, w, h, angle), 0.0
    if shape == "rounded-rectangle":
        r = min(corner, min(w, h) / 2)
        iw, ih = max(w - 2 * r, 0.0), max(h - 2 * r, 0.0)
        if iw <= 1e-12 and ih <= 1e-12:
            return SPoint(x, y), r
        if iw <= 1e-12 or ih <= 1e-12:
            return _axis_segment(x, y, max(iw, ih), angle, iw > ih), r
        return turned_box(x, y, iw, ih, angle), r
    r = min(w, h) / 2
    if shape == "round" or abs(w - h) <= 1e-12:
        return SPoint(x, y), r
    return _axis_segment(x, y, abs(w - h), angle, w > h), r


def pad_core(pad: PlacedPad):
    """The exact core and radius of a placed pad: its copper is every point within the radius.

    A rectangle is its (turned) box with radius 0; round is its centre with radius d/2; an
    obround is its long axis (a segment, turned with the pad) with radius min(w, h)/2; a
    rounded rectangle is its inner rectangle (the pad less the corner radius on each side)
    with the corner radius, which is exactly the rounded shape (a Minkowski sum).

    Examples
    --------
    >>> core, r = pad_core(PlacedPad("U1", "1", "N", 0.0, 0.0, "obround", 3.0, 1.0, None, ("top",), 0))
    >>> list(core.coords), r
    ([(-1.0, 0.0), (1.0, 0.0)], 0.5)
    >>> core, r = pad_core(PlacedPad("U1", "1", "N", 0.0, 0.0, "rounded-rectangle", 2.0, 1.0, None, ("top",), 0,
    ...                              corner=0.25))
    >>> core.bounds, r
    ((-0.75, -0.25, 0.75, 0.25), 0.25)
    """
    return _core_cached(pad.shape, pad.x, pad.y, pad.w, pad.h, pad.angle, pad.corner)


def _clean(v: float) -> float:
    r = round(v, 9)
    return 0.0 if r == 0 else r


def _turned(part: Part, size: Point) -> Point:
    return (size[1], size[0]) if part.rotation % 180 == 90 else (size[0], size[1])


def _place_pad(part: Part, pad, i: int, net: str, layers) -> PlacedPad:
    x, y = transform(part, pad.offset)
    w, h, angle = pad_turn(part, pad)
    corner = float(pad.corner_radius or 0.0) if pad.shape == "rounded-rectangle" else 0.0
    return PlacedPad(part.ref, pad.pin, net, x, y, pad.shape, w, h, pad.drill, layers, i, angle, corner)


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
            name = f"{part.ref}.{pad.pin}"
            layers = board.layers if pad.drill is not None else (part.side,)
            out.append(_place_pad(part, pad, i, owner.get(name, lone_pad_net(part.ref, pad.pin)), layers))
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
def _pad_shape_cached(shape: str, x: float, y: float, w: float, h: float, angle: float,
                      corner: float) -> BaseGeometry:
    core, r = _core_cached(shape, x, y, w, h, angle, corner)
    return core.buffer(r, quad_segs=ARC_SEGMENTS) if r > 0 else core


def pad_shape(pad: PlacedPad) -> BaseGeometry:
    """The copper of a placed pad as a shapely polygon (for drawing and areas; distances use
    :func:`pad_core`)."""
    return _pad_shape_cached(pad.shape, pad.x, pad.y, pad.w, pad.h, pad.angle, pad.corner)


def body_polygon(board: Board, part: Part) -> Polygon:
    """The body rectangle of a placed part, turned with the part (a box at quarter turns)."""
    fp = part_footprint(board, part)
    q = _square(float(part.rotation))
    x, y = part.at
    if q is not None:
        w, h = (fp.body[1], fp.body[0]) if q == 90 else fp.body
        return box(x - w / 2, y - h / 2, x + w / 2, y + h / 2)
    return turned_box(x, y, fp.body[0], fp.body[1], float(part.rotation))


def body_rect(board: Board, part: Part) -> tuple[float, float, float, float]:
    """The body's bounding box (x0, y0, x1, y1) of a placed part (the body itself at quarter turns)."""
    q = _square(float(part.rotation))
    if q is not None:
        fp = part_footprint(board, part)
        w, h = (fp.body[1], fp.body[0]) if q == 90 else fp.body
        x, y = part.at
        return (x - w / 2, y - h / 2, x + w / 2, y + h / 2)
    return tuple(float(v) for v in body_polygon(board, part).bounds)


def part_rect(board: Board, part: Part, at: Optional[Point] = None, rotation: Optional[int] = None):
    """The part as one large rectangle: its body and all its pads, (x0, y0, x1, y1).

    `at` and `rotation` override the part's own (for placement trials).
    """
    fp = part_footprint(board, part)
    rot = part.rotation if rotation is None else rotation
    probe = Part(part.ref, part.footprint, at=at if at is not None else (part.at or (0.0, 0.0)),
                 rotation=rot, side=part.side)
    x0, y0, x1, y1 = body_rect(board, probe)
    for i, pad in enumerate(fp.pads):
        px0, py0, px1, py1 = _place_pad(probe, pad, i, "", ()).bounds()
        x0, y0 = min(x0, px0), min(y0, py0)
        x1, y1 = max(x1, px1), max(y1, py1)
    for hole in fp.holes:
        px, py = transform(probe, hole.offset)
        x0, y0 = min(x0, px - hole.drill / 2), min(y0, py - hole.drill / 2)
        x1, y1 = max(x1, px + hole.drill / 2), max(y1, py + hole.drill / 2)
    return (x0, y0, x1, y1)


def outline_polygon(board: Board) -> Polygon:
    """The outline as a polygon (arcs as chords within router.outline.CHORD_SAGITTA)."""
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


def ray_through(core, radius: float, origin: Point, direction: Point, far: float, entering: bool) -> float:
    """Where the ray origin + t * direction (t in [0, far]) crosses the edge of the copper
    within `radius` of a convex `core`: the last t inside (``entering`` False: the origin is
    inside) or the first t inside (``entering`` True: the far end is inside).

    The distance from a convex core along a line is convex, so the copper on the ray is one
    interval and bisection to 1e-12 mm finds its end; the t returned lies inside the copper.
    """
    ox, oy = origin
    dx, dy = direction

    def inside(t: float) -> bool:
        return core.distance(SPoint(ox + dx * t, oy + dy * t)) <= radius

    lo, hi = 0.0, far            # entering: lo outside, hi inside; leaving: lo inside, hi outside
    for _ in range(200):
        if hi - lo <= 1e-12:
            break
        mid = (lo + hi) / 2
        if inside(mid) == entering:
            hi = mid
        else:
            lo = mid
    return hi if entering else lo
