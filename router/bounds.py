"""Lower bounds on a net's copper from its pads alone: length, bends and vias.

Every bound here is computed from the rectangles (and layers) of one net's pads, without the
other nets, so it holds for any routing: :func:`router.figures.board_figures` prints each one
beside its figure, and a bound is never above the figure it bounds (tests/test_bounds_property.py).

Rectangles are ``(x0, y0, x1, y1)`` in mm: a pad conducts, so a trace may end anywhere on it.
"""
from __future__ import annotations

import math
from typing import Optional, Sequence

from .units import TOL

__all__ = ["rect_distance", "hpwl", "rmst_length", "one_layer_net", "vias_lower_bound",
           "length_lower_bound", "bends_lower_bound", "path_bends_lower_bound"]

Rect = tuple[float, float, float, float]


def rect_distance(a: Rect, b: Rect) -> float:
    """The rectilinear (L1) distance between two axis-aligned rectangles (0 when they touch).

    >>> rect_distance((0, 0, 1, 1), (3, 2, 4, 5))
    3.0
    >>> rect_distance((0, 0, 2, 2), (1, 1, 3, 3))
    0.0
    """
    dx = max(0.0, b[0] - a[2], a[0] - b[2])
    dy = max(0.0, b[1] - a[3], a[1] - b[3])
    return float(dx + dy)


def _uncovered(spans: list[tuple[float, float]]) -> float:
    """Length of the hull of closed intervals that none of them covers (the gaps between them)."""
    spans = sorted(spans)
    gap, reach = 0.0, spans[0][1]
    for a, b in spans[1:]:
        if a > reach:
            gap += a - reach
        reach = max(reach, b)
    return gap


def hpwl(rects: Sequence[Rect]) -> float:
    """The half-perimeter bound of a set of pad rectangles: the span the copper must cover.

    Pads conduct, so copper may run into a pad and leave it elsewhere: what the traces must
    cover in x is the part of the rectangles' x-hull that no rectangle's x-range covers (the
    gaps between them), and the same in y. The union of the copper and the pads is connected,
    so its projection on each axis is the whole hull; each trace segment is at least as long
    as its projections, and the pads cover only their own ranges. For points (and for
    rectangles with disjoint ranges and nothing between) this is the half perimeter of the
    bounding box.

    Examples
    --------
    >>> hpwl([(0, 0, 1, 1), (3, 2, 4, 5)])                       # gaps 2 and 1
    3.0
    >>> hpwl([(0, 0, 0, 0), (3, 0, 3, 0), (1, 2, 1, 2)])         # the box of points: 3 + 2
    5.0
    >>> hpwl([(0, 0, 1, 1), (2, 0, 8, 1), (9, 0, 10, 1)])        # the wide middle pad conducts
    2.0
    """
    if len(rects) < 2:
        return 0.0
    return float(_uncovered([(r[0], r[2]) for r in rects]) + _uncovered([(r[1], r[3]) for r in rects]))


def rmst_length(rects: Sequence[Rect]) -> float:
    """The weight of a minimum spanning tree of the rectangles under :func:`rect_distance`.

    Prim's algorithm on the complete graph, O(n^2).

    >>> rmst_length([(0, 0, 0, 0), (2, 0, 2, 0), (2, 3, 2, 3)])
    5.0
    """
    n = len(rects)
    if n < 2:
        return 0.0
    best = [math.inf] * n
    done = [False] * n
    best[0] = 0.0
    total = 0.0
    for _ in range(n):
        i = min((k for k in range(n) if not done[k]), key=best.__getitem__)
        done[i] = True
        total += best[i]
        for k in range(n):
            if not done[k]:
                d = rect_distance(rects[i], rects[k])
                if d < best[k]:
                    best[k] = d
    return float(total)


def one_layer_net(pad_layers: Sequence[Sequence[str]], layers: Sequence[str]) -> bool:
    """True when one copper layer holds every pad of the net (it may route on it with no via)."""
    if not pad_layers:
        return False
    common = set(layers)
    for ls in pad_layers:
        common &= set(ls)
    return bool(common)


def vias_lower_bound(pad_layers: Sequence[Sequence[str]], layers: Sequence[str]) -> int:
    """Fewest vias a net's copper can have, from its pads' layers alone.

    0 when one layer holds every pad (the net can route on it), or when a pad lies on
    every layer (a plated hole changes layers for free); otherwise 1: some pad is only
    on one layer and another only on another, and copper joining them changes layer
    somewhere, through a via.

    >>> vias_lower_bound([("top",), ("top", "bottom")], ["top", "bottom"])
    0
    >>> vias_lower_bound([("top",), ("bottom",)], ["top", "bottom"])
    1
    """
    if len(pad_layers) < 2 or one_layer_net(pad_layers, layers):
        return 0
    if any(set(layers) <= set(ls) for ls in pad_layers):
        return 0
    return 1


def length_lower_bound(rects: Sequence[Rect]) -> float:
    """A lower bound on the copper needed to join pads: max(HPWL, 2/3 RMST) over their rectangles.

    Parameters
    ----------
    rects : sequence of (x0, y0, x1, y1)
        The bounding rectangles of the net's pads (every pad of every pin).

    Returns
    -------
    float
        ``max(hpwl(rects), 2/3 * rmst_length(rects))`` in mm; 0 for fewer than two pads.

    Notes
    -----
    What it bounds: the length of the trace centre lines and jumper wires (meeting at points
    and at via centres) that, together with the pads themselves, join every pad. A trace may
    end anywhere on a pad and a pad conducts, so each pad counts as its whole bounding
    rectangle, not its centre, and copper may enter a pad at one side and leave at the other
    for free; a pad's true copper lies inside its rectangle, so the bound stays valid.

    Proof of the 2/3 term: split the copper into its connected pieces C_1 .. C_m; piece k
    touches a set S_k of rectangles, at one chosen point p_i each, so it is a rectilinear
    Steiner tree of those points and length(C_k) >= RSMT(p) >= 2/3 RMST(p) [1]_ >= 2/3
    RMST(S_k), because every |p_i - p_j|_1 is at least the rectangles' distance and a minimum
    spanning tree never grows lighter when no edge does. Pieces and pads together are
    connected, so the spanning trees of the S_k together connect all the rectangles and
    RMST(all) <= sum of RMST(S_k). The half-perimeter term: see :func:`hpwl`.

    Copper that joins only through width (two parallel traces overlapping side by side, a
    via disc reaching a pad the trace centre line does not) can beat the bound by at most those
    widths. Jumper wires carry length the contract's ``length`` leaves out, so
    :func:`board_figures` subtracts a net's jumper wire from this bound for its
    ``length_lower_bound`` and gives this one as ``span_lower_bound``.

    References
    ----------
    .. [1] F. K. Hwang, "On Steiner minimal trees with rectilinear distance",
       SIAM J. Appl. Math. 30 (1976) 104-114.
    .. [2] M. Hanan, "On Steiner's problem with rectilinear distance",
       SIAM J. Appl. Math. 14 (1966) 255-265.

    Examples
    --------
    >>> length_lower_bound([(0, 0, 0, 0), (4, 0, 4, 0), (2, 3, 2, 3)])   # HPWL 4 + 3
    7.0
    """
    if len(rects) < 2:
        return 0.0
    return float(max(hpwl(rects), 2.0 * rmst_length(rects) / 3.0))


def bends_lower_bound(rects: Sequence[Rect]) -> int:
    """The greatest lower bound on a net's bends under the contract's definition: 0.

    Returns
    -------
    int
        0, for every net.

    Notes
    -----
    Claim: every net that can be joined at all can be joined with no bend, so no positive
    bound holds and 0 is the best (tight) bound.

    Proof: take any copper joining the net and a bend at point P where a horizontal segment
    h and a vertical segment v meet. Extend h past P by a length e smaller than the distance
    from P to every other segment not through P. Now P lies inside h, so three arms meet
    there (a T junction): no bend. The new end of h has a single arm: no bend. Nothing else
    changed, the copper stays joined, and there is one bend fewer; repeat until none is left.
    A via at the corner (two-layer boards) or a jumper end (one-layer boards) does the same,
    as does a corner inside a pad. The same holds for a net of two pads that share neither
    an x-range nor a y-range: an L with its corner extended is joined and has no bend.

    So the contract's bend count measures how tidily copper was drawn, not a property of the
    pads. For a bound that says something about the pads see :func:`path_bends_lower_bound`,
    which holds for the copper a router draws for a two-pad net (one path, no stub, no via).

    Examples
    --------
    >>> bends_lower_bound([(0, 0, 1, 1), (5, 5, 6, 6)])
    0
    """
    return 0


def path_bends_lower_bound(rects: Sequence[Rect]) -> Optional[int]:
    """Bends of one simple path joining two pads on one layer: 1 when the pads are not aligned.

    Parameters
    ----------
    rects : sequence of (x0, y0, x1, y1)
        The bounding rectangles of the net's pads.

    Returns
    -------
    int or None
        For exactly two pads: 0 when their rectangles share an x-range or a y-range (within
        :data:`~router.units.TOL`), else 1. None for any other number of pads.

    Notes
    -----
    The model: the net's centre lines (traces on every layer, via centres, jumper wires) join
    pad A to pad B, and every point outside A's and B's rectangles where the copper turns
    (a horizontal and a vertical arm meet) is a bend of :func:`net_bends`
    (:func:`board_figures` checks both and gives None where they fail). The bound is exact:
    an L shape with its corner outside both pads has one bend, a straight run none.

    Proof: take a simple path of centre lines from A to B. Let a be its last point in A's
    rectangle and b the first point after a in B's; the path strictly between a and b lies
    outside both rectangles. If it does not turn there, a-b is one axis-parallel line (a
    straight via or jumper end is no turn) from A's rectangle to B's, so they share a
    y-range (horizontal) or an x-range (vertical). Otherwise it turns at a point outside
    both rectangles, which the model makes a bend.

    Examples
    --------
    >>> path_bends_lower_bound([(0, 0, 1, 1), (5, 0.5, 6, 2)])   # y-ranges overlap
    0
    >>> path_bends_lower_bound([(0, 0, 1, 1), (5, 5, 6, 6)])
    1
    >>> path_bends_lower_bound([(0, 0, 1, 1), (5, 5, 6, 6), (9, 9, 10, 10)]) is None
    True
    """
    if len(rects) != 2:
        return None
    a, b = rects
    share_x = max(a[0], b[0]) <= min(a[2], b[2]) + TOL
    share_y = max(a[1], b[1]) <= min(a[3], b[3]) + TOL
    return 0 if (share_x or share_y) else 1
