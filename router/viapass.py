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

import numpy as np

__all__ = ["VIA_TRADE", "CROWD_RADIUS", "CROWD_SHARE", "ViaCrowd", "fewer_vias"]

#: The most a removed via may cost in extra trace, bends included, in mm (our choice: a via
#: is worth about this much length to a designer, above the ordinary via penalty).
VIA_TRADE = 3.0
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
