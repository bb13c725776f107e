"""Fewer vias: a pass after routing, and the price of a via among other vias.

After the negotiation has a legal routing, each net that has vias is routed once more
alone, with every other net's copper as a wall, and with each via priced
:data:`VIA_TRADE` mm of trace above the ordinary via penalty. The new route is kept when
it has fewer vias and its cost without congestion (steps, bends and vias at the ordinary
penalty, :func:`router.negotiate._pure_cost`) rises by no more than ``VIA_TRADE`` for each
via it removes: the stated cost of a via taken out. A net that can run on one layer at
that price does; one that cannot keeps its vias. Nets with a pour keep theirs: a via into
the net's own plane is the designer's way to reach it.

While nets negotiate, a via also costs more where vias already stand: each via of
another net within :data:`CROWD_RADIUS` of the place adds :data:`CROWD_SHARE` of the via
penalty (:class:`ViaCrowd`). A designer spreads vias out (a field of them cuts the planes
and the other layer's room); a router that prices every via alike clusters them at
crossings. Both are our choices (common practice, no published figure).
"""
from __future__ import annotations

import math
from typing import Optional

import numpy as np

__all__ = ["VIA_TRADE", "CROWD_RADIUS", "CROWD_SHARE", "CROSS_PRICE", "MAX_MOVED", "MOVE_NEAR", "MOVE_SWEEPS", "MOVE_DEAR", "ViaCrowd", "fewer_vias",
           "move_blockers"]

#: The most a removed via may cost in extra trace, bends included, in mm (our choice: a via
#: is worth about this much length to a designer, above the ordinary via penalty; measured in
#: docs/measurements.md: 6 mm takes out 16 % of the vias on generated boards for 1.5 % more length,
#: where 3 mm kept them and 10 mm paid 4 % more length and 9 % more bends for 30 %).
VIA_TRADE = 6.0
#: While a net looks for a way with fewer vias through the nets in its way, each grid cell of
#: theirs it takes costs this much (mm of trace): crossing a trace costs a few mm, less than two
#: vias at the stated price, running along one costs several times its length (our choice).
CROSS_PRICE = 1.0
#: At most this many nets in the way are moved for one net's vias (more is left as it is).
MAX_MOVED = 6
#: With ``near`` (router.negotiate passes this on big boards), a net whose try to move the nets in
#: its way changed nothing is tried again in a later sweep only when a change kept since came
#: within this many mm of its cells (our choice: the same try with nothing near it moved mostly
#: finds the same way).
MOVE_NEAR = 3.0
#: One net's try to move the nets in its way (:func:`move_blockers`) gives up when its searches have
#: expanded more than this many times the board's search states (layers x cells x 5 headings):
#: a try that sweeps the board more than once routes nets of many pads again as victims, and
#: those tries cost seconds each and were not kept (our choice, measured in docs/measurements.md).
MOVE_SWEEPS = 1.0
#: With ``near``, a try that changed nothing after expanding more than this many times the board's
#: search states is not made again in a later sweep, near change or not (our choice: on a board of
#: 150 nets such tries moved a supply or had one in the way, cost about a second each, and none
#: was kept in a later sweep; see docs/measurements.md).
MOVE_DEAR = 0.1
#: Vias of other nets closer than this (mm, centre to centre) make a via dearer.
CROWD_RADIUS = 1.5
#: Each via near adds this share of the via penalty.
CROWD_SHARE = 0.25


class ViaCrowd:
    """How many vias stand within :data:`CROWD_RADIUS` of each grid point (all nets)."""

    def __init__(self, grid):
        self.grid = grid
        self.count = np.zeros((grid.ny, grid.nx), np.int32)
        g = grid.pitch
        r = int(math.floor(CROWD_RADIUS / g + 1e-9))
        dj, di = np.mgrid[-r:r + 1, -r:r + 1]
        self.disc = (np.hypot(dj * g, di * g) <= CROWD_RADIUS + 1e-9).astype(np.int32)
        self.r = r

    def add(self, vias, sign: int) -> None:
        """Count the vias ((j, i) grid points) in (`sign` = +1) or out (-1)."""
        r, ny, nx = self.r, self.grid.ny, self.grid.nx
        for j, i in vias:
            j0, j1 = max(0, j - r), min(ny, j + r + 1)
            i0, i1 = max(0, i - r), min(nx, i + r + 1)
            self.count[j0:j1, i0:i1] += sign * self.disc[j0 - (j - r):j1 - (j - r), i0 - (i - r):i1 - (i - r)]

    def price(self, via: int) -> np.ndarray:
        """Extra cost of a via at each grid point (int32), for the search's ``hole_extra``."""
        return (self.count.astype(np.int64) * int(round(CROWD_SHARE * via))).astype(np.int32)


def fewer_vias(neg, order: list[str], trade: int) -> tuple[int, int]:
    """Route each net that has vias again with each via dearer by `trade` (search units); keep the
    route when it has fewer vias and costs at most `trade` more per via removed. Returns
    (nets changed, vias removed)."""
    from .negotiate import _pure_cost
    changed = removed = 0
    poured = {p.net for p in neg.board.pours}
    for net in order:
        old = neg.routes.get(net)
        if old is None or old.failed or not old.vias or net in poured:
            continue                     # a via into the net's own pour is how a pad reaches the plane
        neg.rip(net)
        new = neg.route(net, strict=True, via=neg.via + trade)
        dv = len(old.vias) - len(new.vias) if not new.failed else 0
        if dv > 0 and _pure_cost(neg, new) <= _pure_cost(neg, old) + trade * dv:
            neg.lay(net, new)
            changed += 1
            removed += dv
        else:
            neg.lay(net, old)
    return changed, removed


def move_blockers(neg, order: list[str], trade: int, rounds: int = 3,
                  near: Optional[float] = None) -> tuple[int, int]:
    """Vias of a net walled in on its layer by other nets' routes: the net looks for a way with
    each via dearer by `trade` through the nets in its way (each grid cell of theirs at
    :data:`CROSS_PRICE` mm), the nets it then shares cells with are ripped up and routed again with
    walls (vias dearer by `trade` too), and the change is kept only when every one of them routes,
    no net shares more cells than before, the vias of these nets fall, and their cost without
    congestion (:func:`router.negotiate._pure_cost`) rises by less than `trade` for each via taken
    out. Otherwise every route is put back as it was. Up to `rounds` sweeps over the nets with
    vias (most vias first), while a sweep still changes something; a net whose try changed nothing
    is not tried again before another change was kept (the same state: the same try); with `near` (mm), a net whose
    try changed nothing is tried again only when a change kept since came within `near` of its
    cells (:data:`MOVE_NEAR`), and a try that changed nothing after more than :data:`MOVE_DEAR` times
    the board's search states is not made again. Returns (nets that gave up vias, vias removed)."""
    from .negotiate import _pure_cost
    from .search import NDIR, states_expanded
    grid = neg.grid
    poured = {p.net for p in neg.board.pours}
    price = max(1.0, CROSS_PRICE / grid.pitch)        # neg.present counts grid steps per shared cell
    changed = removed = 0
    before = None
    reach = None if near is None else int(math.ceil(near / grid.pitch))
    moved: list = []                     # the box (j0, i0, j1, i1) of the cells each kept change touched
    tried: dict = {}                     # net -> len(moved) when its last try changed nothing
    dear: set = set()                    # nets whose try changed nothing at more than MOVE_DEAR (with near)
    dear_states = int(MOVE_DEAR * grid.L * grid.ny * grid.nx * NDIR)
    for _ in range(rounds):
        progress = False
        cands = [n for n in order if n in neg.routes and not neg.routes[n].failed and neg.routes[n].vias
                 and n not in poured]
        cands.sort(key=lambda n: -len(neg.routes[n].vias))        # stable: the net order breaks ties
        for net in cands:
            old = neg.routes.get(net)
            if old is None or old.failed or not old.vias:
                continue
            if net in dear:
                continue
            if tried.get(net) == len(moved):
                continue                 # nothing kept since its try changed nothing: the same try again
            if reach is not None and net in tried:       # again only when a change since came near it
                j0, i0, j1, i1 = _cells_box([old])
                if not any(b[0] <= j1 + reach and j0 - reach <= b[2] and b[1] <= i1 + reach and i0 - reach <= b[3]
                           for b in moved[tried[net]:]):
                    continue
            if before is None:           # sharing the legal routing already has (pads closer than the class asks)
                before, _ = neg.conflicts()
            e0 = states_expanded()
            dv, box = _try_move(neg, net, trade, price, poured, before, _pure_cost)
            if not dv and reach is not None and states_expanded() - e0 > dear_states:
                dear.add(net)
            if dv:
                changed += 1
                removed += dv
                progress = True
                before = None
                moved.append(box)
                tried.pop(net, None)
            else:
                tried[net] = len(moved)
        if not progress:
            break
    return changed, removed


def _cells_box(routes) -> tuple:
    """(j0, i0, j1, i1) around the grid cells of `routes` (an empty box when there are none)."""
    cells = [c for r in routes for c in r.cells]
    if not cells:
        return (1 << 30, 1 << 30, -(1 << 30), -(1 << 30))
    js = [c[1] for c in cells]
    is_ = [c[2] for c in cells]
    return (min(js), min(is_), max(js), max(is_))


def _try_move(neg, net: str, trade: int, price: float, poured: set, before: dict, pure_cost) -> tuple:
    """One net's try (see :func:`move_blockers`); returns the vias removed (0: nothing changed) and the
    box of the cells of the nets changed, before and after (:func:`_cells_box`)."""
    from .search import NDIR, states_expanded, work_limit
    g = neg.grid
    most = states_expanded() + int(MOVE_SWEEPS * g.L * g.ny * g.nx * NDIR)      # the try's work (MOVE_SWEEPS)
    with work_limit(most):               # a search stops inside once the try's work is spent
        return _try_move_within(neg, net, trade, price, poured, before, pure_cost, most)


def _try_move_within(neg, net: str, trade: int, price: float, poured: set, before: dict, pure_cost,
                     most: int) -> tuple:
    """:func:`_try_move` within its work limit `most` (:func:`router.search.work_limit`)."""
    from .search import states_expanded
    old = {net: neg.routes[net]}
    saved = neg.present, neg.hist, neg.blind.get(net)
    neg.rip(net)
    neg.present, neg.hist = price, np.zeros_like(neg.hist)
    try:
        new = neg.route(net, via=neg.via + trade, explain=False)     # a failure here needs no reason
    finally:
        neg.present, neg.hist = saved[0], saved[1]
        if saved[2] is None:             # a failure at this price says nothing about the fixed copper
            neg.blind.pop(net, None)
    if new.failed or len(new.vias) >= len(old[net].vias):
        neg.lay(net, old[net])
        return 0, None
    neg.lay(net, new)
    shared, _ = neg.conflicts()
    victims = [n for n in sorted(shared) if n != net and shared[n] > before.get(n, 0)]
    if len(victims) > MAX_MOVED or any(v in poured for v in victims):
        return _undo(neg, old), None
    # the nets of fewest pads first: a victim that finds no way ends the try, and those are the
    # cheap searches (a supply in the way costs a second; it comes last)
    victims.sort(key=lambda n: (sum(len(g) for g in neg.groups[n]), n))
    for v in victims:
        old[v] = neg.routes[v]
        neg.rip(v)
    # what is kept must cost less, vias at the dearer price, than the routes before: what is left
    # of that bounds each victim's search (router.nets.route_net's budget), so a victim whose way
    # would cost too much stops early instead of sweeping the board
    left = sum(pure_cost(neg, old[n]) + trade * len(old[n].vias) for n in [net] + victims) - 1
    left -= pure_cost(neg, new) + trade * len(new.vias)
    for v in victims:
        if left < 0 or states_expanded() > most:
            return _undo(neg, old), None
        rv = neg.route(v, strict=True, via=neg.via + trade, explain=False, budget=left)
        if rv.failed:
            return _undo(neg, old), None
        neg.lay(v, rv)
        left -= pure_cost(neg, rv) + trade * len(rv.vias)
    shared, _ = neg.conflicts()
    worse = [n for n, k in shared.items() if k > before.get(n, 0)]
    moved = [net] + victims
    v_old = sum(len(old[n].vias) for n in moved)
    v_new = sum(len(neg.routes[n].vias) for n in moved)
    c_old = sum(pure_cost(neg, old[n]) for n in moved)
    c_new = sum(pure_cost(neg, neg.routes[n]) for n in moved)
    if worse or v_new >= v_old or c_new - c_old >= trade * (v_old - v_new):
        return _undo(neg, old), None
    a = _cells_box(old.values())
    b = _cells_box([neg.routes[n] for n in moved])
    return v_old - v_new, (min(a[0], b[0]), min(a[1], b[1]), max(a[2], b[2]), max(a[3], b[3]))


def _undo(neg, old: dict) -> int:
    """Put back the routes in `old` (the net and the nets moved for it); returns 0."""
    for n in old:
        neg.rip(n)
    for n in sorted(old, key=neg.nets.index):
        neg.lay(n, old[n])
    return 0
