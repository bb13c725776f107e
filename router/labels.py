"""Where the words of a picture go: refs beside their parts, numbered violations, net names.

One placement for the PNG/SVG pictures (:mod:`router.draw`) and the page (:mod:`router.page`).
Sizes are board millimetres; a label is a box of its text's width and height.

A ref goes to the first free spot around its part: inside the body when nothing of the
copper is there, else just above, below, right, left of the part's rectangle (pads included),
then its corners, then rings further out; a free spot overlaps no pad, trace, via, jumper
or label already placed and stays inside the drawing. A ref placed away from its part gets a
leader line from the label to the body. Violation numbers are placed the same way around the
violation's place, clear of each other and of the refs. Net names go along the middle of long
trace segments (or a little to either side of it), turned with them, where they overlap no
other label.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Optional, Sequence

from shapely.geometry import LineString, box
from shapely.geometry.base import BaseGeometry
from shapely.strtree import STRtree

from .model import Board, Point

__all__ = ["Label", "Placer", "ref_labels", "violation_labels", "net_labels", "copper_obstacles",
           "CHAR_WIDTH"]

#: Width of one character as a fraction of the text height (DejaVu Sans capitals and digits
#: are at most about 0.7 em wide, measured on matplotlib's renderer: common practice to
#: over-estimate).
CHAR_WIDTH = 0.72


@dataclass(frozen=True)
class Label:
    """A text centred at (x, y), w x h mm, turned `rotation` degrees (0 or 90)."""
    text: str
    x: float
    y: float
    w: float
    h: float
    rotation: int = 0
    leader: Optional[tuple[Point, Point]] = None     # from the label to what it names
    owner: str = ""                                   # the ref, violation number or net

    def box(self) -> BaseGeometry:
        w, h = (self.h, self.w) if self.rotation == 90 else (self.w, self.h)
        return box(self.x - w / 2, self.y - h / 2, self.x + w / 2, self.y + h / 2)


def text_size(text: str, height: float) -> tuple[float, float]:
    """Estimated (w, h) in mm of `text` set `height` mm high."""
    return (max(1, len(text)) * CHAR_WIDTH * height, height)


def copper_obstacles(board: Board) -> list[BaseGeometry]:
    """Pads, traces, vias, jumper ends and wires as shapes: what a label may not cover."""
    from .geometry import pad_shape, ring_shape, trace_shape
    from .layout import resolve
    out = [pad_shape(p) for p in resolve(board).pads]      # the board resolved once (router.layout)
    out += [trace_shape(t) for t in board.traces if t.points]
    out += [ring_shape(v.at, v.diameter) for v in board.vias]
    for j in board.jumpers:
        out += [ring_shape(j.start, j.diameter), ring_shape(j.end, j.diameter),
                LineString([j.start, j.end]).buffer(0.3)]
    return out


class Placer:
    """Finds free spots for label boxes among fixed obstacles and the labels placed so far."""

    def __init__(self, obstacles: Sequence[BaseGeometry], limits: tuple[float, float, float, float]):
        self.obstacles = list(obstacles)
        self.tree = STRtree(self.obstacles) if self.obstacles else None
        self.limits = box(*limits)
        self.placed: list[BaseGeometry] = []

    def free(self, area: BaseGeometry, avoid_copper: bool = True) -> bool:
        if not self.limits.contains(area):
            return False
        if avoid_copper and self.tree is not None:
            for i in self.tree.query(area):
                if self.obstacles[i].intersects(area):
                    return False
        return not any(p.intersects(area) for p in self.placed)

    def around(self, rect, w: float, h: float, gap: float, inside_first: bool = True,
               avoid_copper: bool = True, rings: int = 8) -> tuple[Point, bool]:
        """The first free centre for a w x h box around `rect` (x0, y0, x1, y1); (centre, near).

        `near` is False when the box had to go to an outer ring (draw a leader line then).
        """
        x0, y0, x1, y1 = rect
        cx, cy = (x0 + x1) / 2, (y0 + y1) / 2
        cands = [((cx, cy), True)] if inside_first else []
        for k in range(rings):
            d = gap + k * (h + gap)
            near = k == 0
            ring = [(cx, y1 + d + h / 2), (cx, y0 - d - h / 2), (x1 + d + w / 2, cy), (x0 - d - w / 2, cy),
                    (x1 + d + w / 2, y1 + d + h / 2), (x0 - d - w / 2, y1 + d + h / 2),
                    (x1 + d + w / 2, y0 - d - h / 2), (x0 - d - w / 2, y0 - d - h / 2)]
            if k:       # slide along the sides too
                ring += [(x0 + w / 2, y1 + d + h / 2), (x1 - w / 2, y1 + d + h / 2),
                         (x0 + w / 2, y0 - d - h / 2), (x1 - w / 2, y0 - d - h / 2)]
            cands += [(c, near) for c in ring]
        for c, near in cands:
            area = box(c[0] - w / 2, c[1] - h / 2, c[0] + w / 2, c[1] + h / 2)
            if self.free(area, avoid_copper):
                return c, near
        return None, False

    def take(self, label: Label) -> Label:
        self.placed.append(label.box())
        return label


def _leader(rect, c: Point) -> tuple[Point, Point]:
    x0, y0, x1, y1 = rect
    return (c, (min(max(c[0], x0), x1), min(max(c[1], y0), y1)))


def ref_labels(board: Board, height: float, limits, placer: Optional[Placer] = None) -> list[Label]:
    """A label for every placed part's ref (see the module docstring)."""
    from .geometry import body_rect, part_rect
    placer = placer or Placer(copper_obstacles(board), limits)
    out = []
    for part in board.parts:
        if part.at is None:
            continue
        w, h = text_size(part.ref, height)
        body = body_rect(board, part)
        outer = part_rect(board, part)
        c, near = placer.around(body, w, h, 0.0, inside_first=True, rings=1)
        if c is None or not _inside(c, body):
            c, near = placer.around(outer, w, h, 0.25 * height, inside_first=False)
        if c is None:       # crowded: over copper, but not over another label
            c, near = placer.around(outer, w, h, 0.25 * height, inside_first=True, avoid_copper=False)
        if c is None:
            c, near = ((body[0] + body[2]) / 2, (body[1] + body[3]) / 2), True
        leader = None if near or _inside(c, body) else _leader(body, c)
        out.append(placer.take(Label(part.ref, c[0], c[1], w, h, 0, leader, part.ref)))
    return out


def _inside(c: Point, rect) -> bool:
    return rect[0] <= c[0] <= rect[2] and rect[1] <= c[1] <= rect[3]


def violation_labels(violations: Sequence, height: float, limits, placer: Placer) -> list[Label]:
    """Numbers 1, 2, ... for the violations that have a place, clear of each other and of the refs."""
    out = []
    for n, v in enumerate([v for v in violations if getattr(v, "at", None) is not None], start=1):
        text = str(n)
        w, h = text_size(text, height)
        x, y = v.at
        r = 0.6 * height
        c, near = placer.around((x - r, y - r, x + r, y + r), w, h, 0.1 * height, inside_first=False,
                                avoid_copper=False, rings=12)
        if c is None:
            c, near = (x + r + w / 2, y + r + h / 2), True
        leader = None if near else _leader((x, y, x, y), c)
        out.append(placer.take(Label(text, c[0], c[1], w, h, 0, leader, text)))
    return out


def net_labels(board: Board, height: float, limits, placer: Placer, min_length: Optional[float] = None) -> list[Label]:
    """Net names along trace segments at least `min_length` mm long (default: 6 text heights or more
    than the name), at the segment's middle, turned with it, where no label is yet."""
    out = []
    seen_segments = set()
    for t in board.traces:
        for a, b in zip(t.points, t.points[1:]):
            length = math.hypot(b[0] - a[0], b[1] - a[1])
            w, h = text_size(t.net, height)
            need = max(min_length if min_length is not None else 6 * height, w + 2 * height)
            key = (t.net, tuple(a), tuple(b))
            if length < need or key in seen_segments:
                continue
            seen_segments.add(key)
            vertical = abs(b[0] - a[0]) < 1e-9
            for f in (0.5, 0.3, 0.7):      # the middle first, then either side of it
                mx, my = a[0] + f * (b[0] - a[0]), a[1] + f * (b[1] - a[1])
                lab = Label(t.net, mx, my, w, h, 90 if vertical else 0, None, t.net)
                if placer.free(lab.box(), avoid_copper=False):
                    out.append(placer.take(lab))
                    break
    return out
