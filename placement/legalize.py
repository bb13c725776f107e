"""From rough positions to a legal placement on the grid.

A legal place for a part: its rectangle (body, pads and holes, see
:func:`router.geometry.part_rect`) lies inside the outline shrunk by
``rules.edge_clearance``, keeps the gap to every other part's rectangle, to
every keepout and to the copper already on the board (traces, vias, jumpers), its centre is on ``rules.grid`` and its rotation is 0, 90, 180
or 270. Parts are taken largest first; each goes to the free grid point nearest
its target, trying its own rotation first at every search radius.

Two rectangles keep a gap g when they are g apart along x or along y (a
conservative reading: diagonal neighbours keep g along one axis at least).
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Optional, Sequence

import numpy as np
import shapely
from shapely.geometry import Polygon, box

from router.errors import PlacementError
from router.geometry import outline_polygon, part_rect
from router.model import Board, Part
from router.units import TOL, snap

__all__ = ["ROTATIONS", "Site", "refine", "copper_rects", "effective_gap", "routing_gap", "site_for", "rect_offsets",
           "free_area", "area_needed", "check_fits", "legalize", "ROOMY"]

#: The wider routing gap is kept only while the parts grown by it need at most this share
#: of the free area (common practice: leave room for detours where the board allows).
ROOMY = 0.7

ROTATIONS = (0, 90, 180, 270)
# Search radii, in mm, before the whole board is searched.
_RADII = (1.0, 3.0, 8.0, 20.0)


def effective_gap(board: Board, gap: Optional[float]) -> float:
    """The gap kept between part rectangles: `gap` (default ``rules.part_gap``).

    It is raised to the largest clearance any two classes require, so that pads of
    neighbouring parts never break a clearance rule however small the gap asked for.
    """
    from router.rules import class_clearance_table
    g = board.rules.part_gap if gap is None else float(gap)
    if g < 0 or not math.isfinite(g):
        raise PlacementError(board.source, "--gap", f"the gap must be a number of mm, 0 or more, not {g}")
    need = max(class_clearance_table(board).values(), default=0.0)
    return max(g, need)


def routing_gap(board: Board, least: float, tracks: int = 2) -> float:
    """A gap with room for `tracks` traces between neighbouring parts, never below `least`.

    Room for one trace of the widest class used by a net (width plus clearance on both
    sides) and `tracks` - 1 default-class tracks (width plus clearance each).
    """
    used = {n.net_class for n in board.nets} or {"default"}
    widest = max((board.classes[c].trace_width + 2 * board.classes[c].clearance
                  for c in used if c in board.classes), default=0.0)
    d = board.classes.get("default") or next(iter(board.classes.values()))
    return max(least, widest + (tracks - 1) * (d.trace_width + d.clearance))


def rect_offsets(board: Board, part: Part) -> np.ndarray:
    """(4, 4) array: the part rectangle (x0, y0, x1, y1) about its centre for each rotation."""
    return np.array([part_rect(board, part, at=(0.0, 0.0), rotation=r) for r in ROTATIONS])


@dataclass
class Site:
    """Where parts may go: the shrunk outline, keepouts and the rectangles already taken."""
    board: Board
    gap: float
    region: Polygon                     # outline shrunk by the edge clearance
    rect_region: bool                   # the region is its own bounding box
    keepouts: list[Polygon]             # keepouts that are not rectangles
    taken: list[tuple[float, float, float, float]] = field(default_factory=list)
    taken_refs: list[str] = field(default_factory=list)

    def __post_init__(self):
        self._grown = self.region.buffer(TOL, join_style="mitre")
        shapely.prepare(self._grown)
        for k in self.keepouts:
            shapely.prepare(k)
        self._arr = np.array(self.taken, dtype=float).reshape(-1, 4)

    def take(self, rect, ref: str) -> None:
        self.taken.append(tuple(rect))
        self.taken_refs.append(ref)
        self._arr = np.vstack([self._arr, np.array(rect, dtype=float)[None, :]])

    def release(self, ref: str) -> None:
        """Take a part's rectangle out for a while (it clashes with nothing until put back)."""
        self._arr[self.taken_refs.index(ref)] = np.nan

    def put_back(self, ref: str, rect) -> None:
        k = self.taken_refs.index(ref)
        self.taken[k] = tuple(rect)
        self._arr[k] = np.array(rect, dtype=float)

    def free(self, cx: np.ndarray, cy: np.ndarray, off: np.ndarray) -> np.ndarray:
        """Mask of the candidate centres where a rectangle of offsets `off` fits (fast tests only)."""
        x0, y0, x1, y1 = cx + off[0], cy + off[1], cx + off[2], cy + off[3]
        bx0, by0, bx1, by1 = self.region.bounds
        ok = (x0 >= bx0 - TOL) & (y0 >= by0 - TOL) & (x1 <= bx1 + TOL) & (y1 <= by1 + TOL)
        g = self.gap - TOL
        a = self._arr
        idx = np.nonzero(ok)[0]
        if len(a) and len(idx):
            # only the rectangles near the candidates can clash (NaN rows, released, never do)
            near = ((a[:, 0] - g < x1[idx].max()) & (a[:, 2] + g > x0[idx].min()) &
                    (a[:, 1] - g < y1[idx].max()) & (a[:, 3] + g > y0[idx].min()))
            a = a[near]
        if len(a) and len(idx):
            # chunks keep the (candidates x rectangles) matrix small
            for s in range(0, len(idx), 4096):
                sel = idx[s:s + 4096]
                clash = ((x0[sel, None] < a[None, :, 2] + g) & (x1[sel, None] > a[None, :, 0] - g) &
                         (y0[sel, None] < a[None, :, 3] + g) & (y1[sel, None] > a[None, :, 1] - g)).any(axis=1)
                ok[sel[clash]] = False
        if not self.rect_region:
            idx = np.nonzero(ok)[0]
            if len(idx):
                inside = np.ones(len(idx), dtype=bool)
                for xs, ys in ((x0, y0), (x1, y0), (x1, y1), (x0, y1)):
                    inside &= shapely.contains_xy(self._grown, xs[idx], ys[idx])
                ok[idx[~inside]] = False
        return ok

    def exact(self, rect) -> bool:
        """The slow, exact tests: inside a non-rectangular region, clear of polygon keepouts."""
        b = box(*rect)
        if not self.rect_region and not self._grown.covers(b):
            return False
        for k in self.keepouts:
            if k.distance(b) < self.gap - TOL:
                return False
        return True


def site_for(board: Board, gap: float, fixed: Sequence[Part]) -> Site:
    """The site of `board` with the rectangles of the parts in `fixed` already taken."""
    outline = outline_polygon(board)
    ec = board.rules.edge_clearance
    region = outline.buffer(-ec, join_style="mitre") if ec > 0 else outline
    if region.is_empty:
        raise PlacementError(board.source, "rules.edge_clearance",
                             f"an edge clearance of {ec} mm leaves no room on the board")
    if region.geom_type != "Polygon":     # a waist narrower than the margin: keep the largest piece
        region = max(region.geoms, key=lambda g: g.area)
    rect_region = abs(region.area - box(*region.bounds).area) <= 1e-9 * max(region.area, 1.0)
    taken, refs, polys = [], [], []
    for ko in board.keepouts:
        poly = Polygon(ko.polygon)
        if abs(poly.area - box(*poly.bounds).area) <= 1e-9 * max(poly.area, 1.0):
            taken.append(poly.bounds)
            refs.append("keepout")
        else:
            polys.append(poly)
    for p in fixed:
        taken.append(part_rect(board, p))
        refs.append(p.ref)
    for rect in copper_rects(board):
        taken.append(rect)
        refs.append("copper")
    return Site(board, gap, region, rect_region, polys, taken, refs)


def copper_rects(board: Board) -> list[tuple[float, float, float, float]]:
    """Boxes around the copper already on the board: each trace step, via and jumper (its ends
    and its wire, which must not cross a part's body)."""
    out = []
    for t in board.traces:
        h = t.width / 2
        pts = t.points if len(t.points) > 1 else t.points * 2
        for (ax, ay), (bx, by) in zip(pts, pts[1:]):
            out.append((min(ax, bx) - h, min(ay, by) - h, max(ax, bx) + h, max(ay, by) + h))
    for v in board.vias:
        h = v.diameter / 2
        out.append((v.at[0] - h, v.at[1] - h, v.at[0] + h, v.at[1] + h))
    for j in board.jumpers:
        h = j.diameter / 2
        (ax, ay), (bx, by) = j.start, j.end
        out.append((min(ax, bx) - h, min(ay, by) - h, max(ax, bx) + h, max(ay, by) + h))
    return out


def free_area(board: Board, gap: float, fixed: Sequence[Part]) -> tuple[float, float]:
    """(room, free): the area inside the outline less the edge margin, and what keepouts,
    copper already there and the rectangles of `fixed` (each grown by half the gap) leave of
    it, in mm^2."""
    site = site_for(board, gap, fixed)
    room = site.region.area
    blocked = [box(*r).buffer(gap / 2, join_style="mitre") for r in site.taken]
    blocked += [k.buffer(gap / 2, join_style="mitre") for k in site.keepouts]
    if blocked:
        free = site.region.difference(shapely.union_all(blocked)).area
    else:
        free = room
    return room, free


def area_needed(board: Board, gap: float, movable: Sequence[Part]) -> float:
    """The area the parts need: each rectangle grown by half the gap on every side, mm^2."""
    need = 0.0
    for p in movable:
        x0, y0, x1, y1 = part_rect(board, p, at=(0.0, 0.0), rotation=0)
        need += (x1 - x0 + gap) * (y1 - y0 + gap)
    return need


def check_fits(board: Board, gap: float, movable: Sequence[Part], fixed: Sequence[Part]) -> None:
    """Raise :class:`PlacementError` when the parts to place need more area than is free.

    Each part needs its rectangle grown by half the gap on every side.
    """
    need = area_needed(board, gap, movable)
    room, free = free_area(board, gap, fixed)
    if need > free + TOL:
        raise PlacementError(
            board.source, "parts",
            f"{len(movable)} parts need {need:.1f} mm^2 with a {gap:g} mm gap, but only {free:.1f} mm^2 "
            f"of the board is free ({room:.1f} mm^2 inside the {board.rules.edge_clearance:g} mm edge "
            f"clearance, less keepouts, copper and {len(fixed)} parts that stay); use a larger board, fewer "
            f"parts or a smaller gap")


def _offsets(radius_cells: int) -> np.ndarray:
    r = radius_cells
    i, j = np.meshgrid(np.arange(-r, r + 1), np.arange(-r, r + 1), indexing="ij")
    i, j = i.ravel(), j.ravel()
    d = i * i + j * j
    keep = d <= r * r
    i, j, d = i[keep], j[keep], d[keep]
    order = np.lexsort((j, i, d))
    return np.stack([i[order], j[order]], axis=1)


def _place_one(site: Site, off4: np.ndarray, target, rots: Sequence[int], grid: float,
               radii=_RADII + (None,)):
    """The nearest free grid centre for one part: (x, y, rotation index) or None.

    `radii` in mm are searched in turn; None is the whole board.
    """
    tx, ty = target
    bi, bj = round(tx / grid), round(ty / grid)
    bx0, by0, bx1, by1 = site.region.bounds
    for radius in radii:
        for r in rots:
            off = off4[r]
            if radius is None:
                # every grid centre that keeps the rectangle inside the region's box
                i0 = math.ceil((bx0 - off[0]) / grid - 1e-9)
                i1 = math.floor((bx1 - off[2]) / grid + 1e-9)
                j0 = math.ceil((by0 - off[1]) / grid - 1e-9)
                j1 = math.floor((by1 - off[3]) / grid + 1e-9)
                if i1 < i0 or j1 < j0:
                    continue
                ii, jj = np.meshgrid(np.arange(i0, i1 + 1), np.arange(j0, j1 + 1), indexing="ij")
                ii, jj = ii.ravel(), jj.ravel()
                order = np.lexsort((jj, ii, (ii - bi) ** 2 + (jj - bj) ** 2))
                ii, jj = ii[order], jj[order]
            else:
                o = _offsets(max(1, int(math.ceil(radius / grid))))
                ii, jj = bi + o[:, 0], bj + o[:, 1]
            cx, cy = ii * grid, jj * grid
            ok = np.nonzero(site.free(cx, cy, off))[0]
            for k in ok:
                rect = (cx[k] + off[0], cy[k] + off[1], cx[k] + off[2], cy[k] + off[3])
                if site.exact(rect):
                    return float(cx[k]), float(cy[k]), r
    return None


def legalize(board: Board, parts: Sequence[Part], targets, rotations, site: Site,
             offsets: Optional[Sequence[np.ndarray]] = None, strict: bool = True):
    """Legal on-grid places for `parts`, near `targets` with preferred `rotations`.

    Parameters
    ----------
    board : Board
    parts : parts to place (their own ``at`` is ignored)
    targets : (n, 2) array of wanted centres
    rotations : n rotation indices (0..3 for 0, 90, 180, 270 degrees) tried first
    site : Site
        Where parts may go; the placed rectangles are added to it.
    offsets : per part, the (4, 4) arrays of :func:`rect_offsets` (computed when None)
    strict : raise :class:`PlacementError` when a part finds no place; else return None

    Returns
    -------
    list of (x, y, rotation_degrees) per part, in the order of `parts`.
    """
    grid = board.rules.grid
    n = len(parts)
    if offsets is None:
        offsets = [rect_offsets(board, p) for p in parts]
    area = [(o[0, 2] - o[0, 0]) * (o[0, 3] - o[0, 1]) for o in offsets]
    order = sorted(range(n), key=lambda i: (-area[i], parts[i].ref))
    out: list = [None] * n
    for i in order:
        pref = int(rotations[i]) % 4
        rots = [pref] + [r for r in (0, 1, 2, 3) if r != pref]
        spot = _place_one(site, offsets[i], targets[i], rots, grid)
        if spot is None:
            if not strict:
                return None
            o = offsets[i][0]
            raise PlacementError(
                board.source, f"parts ({parts[i].ref})",
                f"no free place is left for {parts[i].ref} ({o[2] - o[0]:.2f} x {o[3] - o[1]:.2f} mm with "
                f"pads) with a {site.gap:g} mm gap after placing {sum(x is not None for x in out)} of "
                f"{n} parts; use a larger board, fewer parts or a smaller gap")
        x, y, r = spot
        off = offsets[i][r]
        site.take((x + off[0], y + off[1], x + off[2], y + off[3]), parts[i].ref)
        out[i] = (snap(x), snap(y), ROTATIONS[r])
    return out


def refine(board: Board, parts: Sequence[Part], spots: list, site: Site, offsets, cost, target, keep,
           passes: int = 2, radii=(1.0, 3.0, 8.0)) -> list:
    """Greedy improvement of a legal placement: each part in turn tries the free grid points
    nearest its best place, in each rotation, and moves when its cost falls.

    Parameters
    ----------
    spots : legal (x, y, rotation_degrees) per part, as :func:`legalize` returns them
    site : the site holding every part's rectangle under its ref
    cost : cost(i, x, y, rotation_index) -> float, the part's nets' wirelength there
    target : target(i) -> (x, y), where part i would best be with the others where they are
    keep : keep(i, x, y, rotation_index), told where part i stays after its trials

    Returns
    -------
    The improved spots (still legal: every trial passes the same tests as legalisation).
    """
    grid = board.rules.grid
    spots = list(spots)
    for _ in range(passes):
        moved = 0
        for i, part in enumerate(parts):
            x, y, deg = spots[i]
            r = ROTATIONS.index(deg)
            best = (cost(i, x, y, r), x, y, r)
            site.release(part.ref)
            goal = target(i)
            for rr in range(4):
                spot = _place_one(site, offsets[i], goal, [rr], grid, radii)
                if spot is None:
                    continue
                c = cost(i, spot[0], spot[1], rr)
                if c < best[0] - 1e-9:
                    best = (c, snap(spot[0]), snap(spot[1]), rr)
            _, x, y, r = best
            keep(i, x, y, r)
            off = offsets[i][r]
            site.put_back(part.ref, (x + off[0], y + off[1], x + off[2], y + off[3]))
            if (x, y, ROTATIONS[r]) != spots[i]:
                moved += 1
            spots[i] = (x, y, ROTATIONS[r])
        if not moved:
            break
    return spots
