"""Board outlines with arcs: the path as given, its chords, and exact distances to its edge.

An outline in the board file is a closed path of corners ``[x, y]`` and arcs
``{ to = [x, y], centre = [cx, cy], clockwise = false }``: an arc runs from the point before it
(the previous corner or arc end, the last one for the first entry) to ``to`` around ``centre``,
counter-clockwise unless ``clockwise = true``. Straight edges join consecutive points.

Two views of one outline:

- :func:`chords`: a simple polygon whose corners include many points on each arc (no point of
  an arc is farther than :data:`CHORD_SAGITTA` from its chord). It is ``Board.outline``, used
  for inside tests, pours, placement and pictures, where a micrometre does not matter.
- :func:`edge_distance`: the exact distance from any shapely geometry (points, segments,
  polygons) to the edge made of the straight edges and the true arcs, used by ``check`` and the
  routing grid for ``edge_clearance``. For an arc of centre c and radius R, the distance from a
  point p whose direction from c lies within the arc's sweep is ``| |p - c| - R |``, else the
  distance to the nearer arc end; for a geometry, the part of it inside the arc's wedge (cut
  into pieces of at most 90 degrees) is measured by its nearest and farthest distance from c
  (the farthest is at a corner, as distance from c is convex), and a piece whose range of
  distances contains R touches the arc. Gerber files carry the arcs as arcs (G02/G03).
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache
from typing import Optional, Sequence

import numpy as np
import shapely
from shapely.geometry import LineString, MultiLineString, MultiPoint, Point as SPoint, Polygon

__all__ = ["OutlineArc", "Arc", "CHORD_SAGITTA", "chords", "arcs_of", "edge_distance",
           "edge_distance_xy", "straight_edges", "has_arcs"]

#: Largest distance from an arc to its chords in ``Board.outline``, in mm (1 micrometre, far
#: below any clearance; exact measures use the arcs themselves).
CHORD_SAGITTA = 1e-3
#: An arc's end may sit this far off the circle through its start (mm), for rounded figures.
RADIUS_SLACK = 1e-5


@dataclass(frozen=True)
class OutlineArc:
    """An arc entry of the outline as given: to ``to`` around ``centre``."""
    to: tuple
    centre: tuple
    clockwise: bool = False


@dataclass(frozen=True)
class Arc:
    """A resolved arc: start and end points, centre, radius, start angle and signed sweep (radians)."""
    start: tuple
    end: tuple
    centre: tuple
    radius: float
    a0: float
    sweep: float          # > 0 counter-clockwise, < 0 clockwise

    def point(self, t: float) -> tuple:
        a = self.a0 + self.sweep * t
        return (self.centre[0] + self.radius * math.cos(a), self.centre[1] + self.radius * math.sin(a))


def _ends(path: Sequence) -> list:
    """The point each entry ends at."""
    return [tuple(e.to) if isinstance(e, OutlineArc) else tuple(e) for e in path]


def arcs_of(path: Sequence) -> list[Arc]:
    """The arcs of an outline path, resolved."""
    ends = _ends(path)
    out = []
    for k, e in enumerate(path):
        if not isinstance(e, OutlineArc):
            continue
        s = ends[k - 1]
        c = tuple(e.centre)
        r = math.hypot(s[0] - c[0], s[1] - c[1])
        a0 = math.atan2(s[1] - c[1], s[0] - c[0])
        a1 = math.atan2(e.to[1] - c[1], e.to[0] - c[0])
        if e.clockwise:
            sweep = -((a0 - a1) % (2 * math.pi))
        else:
            sweep = (a1 - a0) % (2 * math.pi)
        out.append(Arc(s, tuple(e.to), c, r, a0, sweep))
    return out


def arc_problem(start, arc: OutlineArc) -> Optional[str]:
    """Why an arc entry cannot be drawn from `start`, or None."""
    c = arc.centre
    r0 = math.hypot(start[0] - c[0], start[1] - c[1])
    r1 = math.hypot(arc.to[0] - c[0], arc.to[1] - c[1])
    if r0 <= 1e-9:
        return "its centre is its start point; give a centre away from the arc"
    if abs(r0 - r1) > RADIUS_SLACK:
        return (f"its start is {r0:.6g} mm and its end {r1:.6g} mm from the centre; "
                "give a centre equally far from both")
    if math.hypot(start[0] - arc.to[0], start[1] - arc.to[1]) <= 1e-9:
        return "it ends where it starts; a whole circle is two arcs"
    return None


def _steps(arc: Arc) -> int:
    if arc.radius <= CHORD_SAGITTA:
        return max(1, int(math.ceil(abs(arc.sweep) / (math.pi / 2))))
    half = math.acos(1 - CHORD_SAGITTA / arc.radius)
    return max(1, int(math.ceil(abs(arc.sweep) / (2 * half))))


def chords(path: Sequence) -> list[tuple]:
    """The outline as a polygon's corners: the given corners and points along each arc."""
    arcs = iter(arcs_of(path))
    pts: list = []
    for e in path:
        if isinstance(e, OutlineArc):
            a = next(arcs)
            n = _steps(a)
            pts.extend(a.point(k / n) for k in range(1, n))
            pts.append(tuple(e.to))
        else:
            pts.append(tuple(e))
    if len(pts) > 1 and pts[0] == pts[-1]:
        pts.pop()
    return [(float(x), float(y)) for x, y in pts]


def has_arcs(board) -> bool:
    return bool(getattr(board, "outline_path", None)) and any(
        isinstance(e, OutlineArc) for e in board.outline_path)


def straight_edges(path: Sequence) -> Optional[MultiLineString]:
    """The straight edges of an outline path (corner to corner), or None when there are none."""
    ends = _ends(path)
    segs = []
    for k, e in enumerate(path):
        if isinstance(e, OutlineArc):
            continue
        a, b = ends[k - 1], ends[k]
        if a != b:
            segs.append((a, b))
    return MultiLineString(segs) if segs else None


@lru_cache(maxsize=64)
def _resolved(path: tuple):
    """Arcs, straight edges, the outline's box, and each arc's wedges reaching well past the box."""
    arcs = arcs_of(path)
    lines = straight_edges(path)
    x0, y0, x1, y1 = Polygon(chords(path)).bounds
    diag = math.hypot(x1 - x0, y1 - y0)
    wedges = [_wedges(a, 2 * diag + a.radius + 1.0) for a in arcs]
    return arcs, lines, (x0, y0, x1, y1), diag, wedges


def _key(board) -> tuple:
    return tuple(board.outline_path)


def _wedges(arc: Arc, far: float) -> list[Polygon]:
    """The arc's sweep as wedges from its centre of at most 90 degrees, reaching `far`."""
    n = max(1, int(math.ceil(abs(arc.sweep) / (math.pi / 2) - 1e-12)))
    cx, cy = arc.centre
    reach = far / math.cos(math.pi / 4) + 1.0
    out = []
    for k in range(n):
        t0 = arc.a0 + arc.sweep * k / n
        t1 = arc.a0 + arc.sweep * (k + 1) / n
        out.append(Polygon([(cx, cy), (cx + reach * math.cos(t0), cy + reach * math.sin(t0)),
                            (cx + reach * math.cos(t1), cy + reach * math.sin(t1))]))
    return out


def _arc_distance(arc: Arc, geoms: np.ndarray, wedges) -> np.ndarray:
    """Exact distance from each geometry to one arc."""
    ends = MultiPoint([arc.start, arc.end])
    best = shapely.distance(geoms, ends)
    c = SPoint(arc.centre)
    R = arc.radius
    for wedge in wedges:
        inter = shapely.intersection(geoms, wedge)
        parts, owner = shapely.get_parts(inter, return_index=True)
        if len(parts) == 0:
            continue
        keep = ~shapely.is_empty(parts)
        parts, owner = parts[keep], owner[keep]
        if len(parts) == 0:
            continue
        dmin = shapely.distance(parts, c)
        coords, which = shapely.get_coordinates(parts, return_index=True)
        r = np.hypot(coords[:, 0] - arc.centre[0], coords[:, 1] - arc.centre[1])
        dmax = np.full(len(parts), -np.inf)
        np.maximum.at(dmax, which, r)
        d = np.where(dmax < R, R - dmax, np.where(dmin > R, dmin - R, 0.0))
        np.minimum.at(best, owner, d)
    return best


def edge_distance(board, geoms, upto: float = math.inf) -> np.ndarray:
    """Exact distance of each geometry in `geoms` to the board's edge (straight edges and arcs).

    Parameters
    ----------
    board : Board
    geoms : array-like of shapely geometries
    upto : float, optional
        Only distances below `upto` are needed: a geometry whose distance to the outline's
        chords is at least `upto` + :data:`CHORD_SAGITTA` gets that distance less the sagitta
        (a lower bound, at least `upto`), and an arc whose whole disc is farther is not measured.

    Returns
    -------
    ndarray of float
        Zero for a geometry that touches or crosses the edge.
    """
    geoms = np.asarray(geoms, dtype=object)
    if not has_arcs(board):
        return shapely.distance(_exterior(tuple(map(tuple, board.outline))), geoms)
    if math.isfinite(upto) and len(geoms):
        # the chords lie within CHORD_SAGITTA of the arcs: far from the edge, they answer alone
        rough = shapely.distance(_exterior(tuple(map(tuple, board.outline))), geoms)
        far_off = rough >= upto + CHORD_SAGITTA
        if far_off.all():
            return rough - CHORD_SAGITTA
        if far_off.any():
            out = rough - CHORD_SAGITTA
            out[~far_off] = edge_distance(board, geoms[~far_off])
            return out
    arcs, lines, (x0, y0, x1, y1), diag, wedges = _resolved(_key(board))
    out = np.full(len(geoms), np.inf) if lines is None else shapely.distance(lines, geoms)
    if len(geoms) == 0:
        return out
    b = shapely.total_bounds(geoms)
    inside_reach = b[0] >= x0 - diag and b[1] >= y0 - diag and b[2] <= x1 + diag and b[3] <= y1 + diag
    for arc, w in zip(arcs, wedges):
        near = shapely.distance(geoms, SPoint(arc.centre)) - arc.radius < np.minimum(out, upto)
        if not near.any():
            continue                  # the arc's whole disc is farther than what is asked
        if not inside_reach:
            far = math.hypot(max(x1, b[2]) - min(x0, b[0]), max(y1, b[3]) - min(y0, b[1]))
            w = _wedges(arc, far + arc.radius + 1.0)
        out[near] = np.minimum(out[near], _arc_distance(arc, geoms[near], w))
    return out


@lru_cache(maxsize=64)
def _exterior(pts: tuple):
    return Polygon(pts).exterior


def edge_distance_xy(board, x: np.ndarray, y: np.ndarray) -> np.ndarray:
    """Exact distance of points (x, y) to the board's edge; arrays of any equal shape."""
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    if not has_arcs(board):
        return shapely.distance(Polygon(board.outline).exterior, shapely.points(x, y))
    arcs, lines = _resolved(_key(board))[:2]
    out = np.full(x.shape, np.inf) if lines is None else shapely.distance(lines, shapely.points(x, y))
    for arc in arcs:
        cx, cy = arc.centre
        phi = np.arctan2(y - cy, x - cx)
        if arc.sweep >= 0:
            inside = np.mod(phi - arc.a0, 2 * math.pi) <= arc.sweep
        else:
            inside = np.mod(arc.a0 - phi, 2 * math.pi) <= -arc.sweep
        radial = np.abs(np.hypot(x - cx, y - cy) - arc.radius)
        ends = np.minimum(np.hypot(x - arc.start[0], y - arc.start[1]), np.hypot(x - arc.end[0], y - arc.end[1]))
        out = np.minimum(out, np.where(inside, radial, ends))
    return out
