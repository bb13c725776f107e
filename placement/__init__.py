"""Placement of the parts that have no place.

:func:`place` places every part without ``at`` (with ``all_parts``, every part that
is not ``fixed``): a quadratic start, simulated annealing on wirelength,
congestion and overlap (:mod:`placement.anneal`), then legalisation onto the
grid and a greedy refinement there (:mod:`placement.legalize`). Parts that are
fixed, or placed and not to be moved, stay exactly where they are.

The gap kept between parts is the one asked for (``rules.part_gap`` by default)
at least, and wider where the board has the room, so that traces pass between
neighbours (:data:`ROUTING_TRACKS`).
"""
from __future__ import annotations

import time
from dataclasses import dataclass, replace
from typing import Optional

import numpy as np

from router.errors import PlacementError
from router.model import Board

from .anneal import Problem, anneal as anneal_parts, quadratic_start
from .legalize import (ROOMY, ROTATIONS, area_needed, check_fits, effective_gap, free_area,
                       legalize as legal_places, refine, routing_gap, site_for)
from .wirelength import UTILISATION, congestion, hpwl_rows, total_hpwl

__all__ = ["place", "PlaceResult", "ROUTING_TRACKS"]

#: Traces that the gap between neighbouring parts should have room for, most first, by
#: copper layer count; the widest gap whose parts fit in a share of the free area is tried
#: first. Chosen with generated boards (router.boardgen) placed and routed: on two layers room
#: for 3 or 4 traces cost wirelength and routed no more boards; on one layer, where traces
#: cannot cross, room for 6 routed more boards completely than room for 2.
ROUTING_TRACKS = {1: (6, 4, 2, 1), 2: (2, 1)}


@dataclass
class PlaceResult:
    """What :func:`place` made.

    Attributes
    ----------
    board : the placed board (a new one; the input is not changed)
    placed : refs of the parts that were placed
    before : wirelength in mm of the input, when all its parts had a place, else None
    after : wirelength in mm of the placed board
    random : wirelength in mm of a random legal placement of the same parts made in the same
        run (None when none was found)
    congestion : congestion overflow of the placed board, mm of track (0 when roomy)
    gap : the gap kept between part rectangles, mm (wider than asked where there is room)
    least_gap : the gap asked for (or the rule's), raised to the largest class clearance, mm
    seconds : time taken (the random placement not included)
    """
    board: Board
    placed: list
    before: Optional[float]
    after: float
    random: Optional[float]
    congestion: float
    gap: float
    seconds: float
    least_gap: float = 0.0

    def summary(self) -> str:
        """A few lines for the command line."""
        lines = [f"placed {len(self.placed)} parts in {self.seconds:.1f} s, {self.gap:g} mm apart "
                 f"({self.least_gap:g} mm required)"]
        lines.append(f"  wirelength before: {self.before:.1f} mm" if self.before is not None
                     else "  wirelength before: - (not every part had a place)")
        lines.append(f"  wirelength after:  {self.after:.1f} mm")
        if self.random is not None:
            ratio = f"{self.after / self.random:.2f}" if self.random > 0 else "-"
            lines.append(f"  a random legal placement: {self.random:.1f} mm (after/random {ratio})")
        elif self.placed:
            lines.append("  a random legal placement: - (none found)")
        else:
            lines.append("  a random legal placement: - (nothing to place)")
        lines.append(f"  congestion estimate: {self.congestion:.1f} mm of track over "
                     f"{UTILISATION:.0%} of the routing room")
        return "\n".join(lines)


def _to_move(board: Board, all_parts: bool):
    return [p for p in board.parts if p.at is None or (all_parts and not p.fixed)]


def place(board: Board, seed: int = 0, all_parts: bool = False, gap: Optional[float] = None,
          effort: float = 1.0, random_baseline: bool = True) -> PlaceResult:
    """Place the parts of `board` that have no place.

    Parameters
    ----------
    board : Board
        Not changed.
    seed : int
        Seed of ``numpy.random.default_rng``; the same seed gives the same placement.
    all_parts : bool
        Place every part that is not ``fixed``, also those with an ``at``.
    gap : float, optional
        Gap between part rectangles (body, pads, holes) in mm; default ``rules.part_gap``.
        Raised to the largest clearance the net classes require.
    effort : float
        Scales the number of annealing moves (1 is the default schedule).
    random_baseline : bool
        Also make a random legal placement and measure its wirelength.

    Returns
    -------
    PlaceResult

    Raises
    ------
    PlacementError
        When the parts need more area than the board has free, or a part finds no legal place.
    """
    t_start = time.perf_counter()
    out = board.copy()
    g = least = effective_gap(out, gap)
    movable = _to_move(out, all_parts)
    ids = {id(p) for p in movable}
    stay = [p for p in out.parts if id(p) not in ids]
    before = total_hpwl(board) if all(p.at is not None for p in board.parts) else None
    check_fits(out, g, movable, stay)
    # a wider gap leaves channels for traces between parts, where the board has the room
    # (the widest that leaves room, then narrower ones when legalisation finds no place)
    wide = [round(routing_gap(out, g, t), 3) for t in ROUTING_TRACKS[out.copper_layers]]
    gaps = [w for w in dict.fromkeys(wide) if movable and w > g + 1e-9 and
            area_needed(out, w, movable) <= ROOMY * free_area(out, w, stay)[1]] + [g]
    for k, gk in enumerate(gaps):
        rng = np.random.default_rng(seed)
        placed = out.copy()
        try:
            _place_into(placed, movable, stay, gk, rng, effort)
        except PlacementError:
            if k == len(gaps) - 1:
                raise
            continue
        out, g = placed, gk
        break
    seconds = time.perf_counter() - t_start
    after = total_hpwl(out)
    rand = None
    if random_baseline and movable:
        rand_board = random_placement(out, movable_refs=[p.ref for p in movable], gap=g,
                                      rng=np.random.default_rng([seed, 7]))
        rand = total_hpwl(rand_board) if rand_board is not None else None
    return PlaceResult(out, [p.ref for p in movable], before, after, rand, congestion(out), g, seconds, least)


def _place_into(out: Board, movable, stay, g: float, rng, effort: float) -> None:
    """Place the parts of `out` named in `movable` in place, keeping gap `g`."""
    if not movable:
        return
    refs = {p.ref for p in movable}
    movable = [p for p in out.parts if p.ref in refs]
    stay = [p for p in out.parts if p.ref not in refs]
    site = site_for(out, g, stay)
    prob = Problem(out, movable, stay, site)
    rot0 = np.array([ROTATIONS.index(p.rotation % 360) if (p.rotation % 360) in ROTATIONS else 0
                     for p in movable], dtype=np.intp)
    xy0 = quadratic_start(prob)
    xy0 = np.array([prob.clamp(i, x, y, int(rot0[i])) for i, (x, y) in enumerate(xy0)]).reshape(-1, 2)
    xy, rot = anneal_parts(prob, xy0, rot0, rng, effort=effort)
    spots = legal_places(out, movable, xy, rot, site, prob.offsets)
    cost, target, keep = _wirelength_of_one(prob, spots)
    spots = refine(out, movable, spots, site, prob.offsets, cost, target, keep)
    index = {p.ref: k for k, p in enumerate(out.parts)}
    for p, (x, y, r) in zip(movable, spots):
        out.parts[index[p.ref]] = replace(p, at=(x, y), rotation=r)


def _wirelength_of_one(prob: Problem, spots):
    """For :func:`refine`: cost(i, x, y, r), the wirelength of part i's nets with it there;
    target(i), the middle of its optimal region (the median of the edges of its nets' boxes
    without it); keep(i, x, y, r), where it stays."""
    tx = prob.t_fix[:, 0].copy()
    ty = prob.t_fix[:, 1].copy()

    def put(i, x, y, r):
        ts = prob.part_terms[i]
        tx[ts] = x + prob.t_off[ts, r, 0]
        ty[ts] = y + prob.t_off[ts, r, 1]

    for i, (x, y, deg) in enumerate(spots):
        put(i, x, y, ROTATIONS.index(deg))
    state = {"at": [(x, y, ROTATIONS.index(d)) for x, y, d in spots]}

    def cost(i, x, y, r):
        nets = prob.part_nets[i]
        if len(nets) == 0:
            return 0.0
        put(i, x, y, r)
        return float(hpwl_rows(tx, ty, prob.rows[nets]).sum())

    def target(i):
        # called before the trials of part i: remember where it is, measure the others
        nets = prob.part_nets[i]
        if len(nets) == 0:
            x, y, _ = state["at"][i]
            return (x, y)
        own = set(prob.part_terms[i].tolist())
        xs, ys = [], []
        for k in nets:
            others = [t for t in prob.nets[k] if t not in own]
            if not others:
                continue
            xs += [tx[others].min(), tx[others].max()]
            ys += [ty[others].min(), ty[others].max()]
        if not xs:
            x, y, _ = state["at"][i]
            return (x, y)
        return (float(np.median(xs)), float(np.median(ys)))

    def keep(i, x, y, r):
        put(i, x, y, r)
        state["at"][i] = (x, y, r)

    return cost, target, keep


def random_placement(board: Board, movable_refs, gap: float, rng: np.random.Generator,
                     tries: int = 5) -> Optional[Board]:
    """A random legal placement of the parts `movable_refs` of `board` (others stay), or None.

    Targets and rotations are drawn uniformly; legalisation then takes each part to the
    free grid point nearest its target.
    """
    refs = set(movable_refs)
    movable = [p for p in board.parts if p.ref in refs]
    stay = [p for p in board.parts if p.ref not in refs]
    for _ in range(tries):
        site = site_for(board, gap, stay)
        x0, y0, x1, y1 = site.region.bounds
        targets = np.stack([rng.uniform(x0, x1, len(movable)), rng.uniform(y0, y1, len(movable))], axis=1)
        rots = rng.integers(0, 4, len(movable))
        spots = legal_places(board, movable, targets, rots, site, strict=False)
        if spots is None:
            continue
        out = board.copy()
        for p, (x, y, r) in zip(movable, spots):
            i = [q.ref for q in out.parts].index(p.ref)
            out.parts[i] = replace(out.parts[i], at=(x, y), rotation=r)
        return out
    return None
