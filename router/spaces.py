"""Search spaces for negotiation without full-grid work per net.

:meth:`router.grid.RoutingGrid.space_for` makes a net's search space from scratch: copies of
the class's hard counts, the net's own copper subtracted, comparisons, conversions. The
negotiation asks for a space for every net in every pass, and on a big grid (millions of
cells) that work and the full-grid congestion arrays cost more than the searches. Here the
same spaces come from parts made once:

- per net class, the cells, steps and via places the fixed copper leaves open (made once);
- per net, the places its own copper opens again (found once, kept as index lists);
- congestion costs computed by the search where it looks (:class:`router.search.LazyCosts`);
- for the strict routes (other nets' copper as walls), the off-grid pieces of every laid net
  (stubs, necks, jumpers' far ends) counted per class as they are laid and taken up, instead of
  stamped again for every net; and their obstacle arrays kept per net.

The open cells, steps and via places, and every cost, are those of ``space_for`` and of the
arrays the negotiation made before (tests/test_spaces.py compares them).
"""
from __future__ import annotations

from typing import Optional

import numpy as np

from .search import STEP, LazyCosts, SearchSpace

__all__ = ["NetSpaces"]


class NetSpaces:
    """Makes the negotiation's search spaces of one grid (see the module docstring)."""

    def __init__(self, grid):
        self.grid = grid
        self._cls: dict[int, tuple] = {}            # class index -> open cell, h, v, via (uint8)
        self._own: dict[str, tuple] = {}            # net -> flat indices its own copper opens
        self._off: dict[int, list] = {}             # class index -> [cell, h, v] counts of off-grid pieces
        self._arrays: dict[str, tuple] = {}         # net -> boxes, layer bits of its laid copper
        self._need: dict[tuple, np.ndarray] = {}    # (net, class) -> centre distances of its laid copper
        self._pending: dict[int, dict] = {}         # class index -> id -> [off-grid piece, count] not yet stamped

    # ------------------------------------------------------------------ fixed copper
    def _class_open(self, k: int) -> tuple:
        got = self._cls.get(k)
        if got is None:
            g = self.grid
            got = (((g.hard_cell[k] == 0) & g.base_cell[k]).astype(np.uint8),
                   ((g.hard_h[k] == 0) & g.base_h[k]).astype(np.uint8),
                   ((g.hard_v[k] == 0) & g.base_v[k]).astype(np.uint8),
                   ((g.hard_via[k] == 0) & g.base_via).astype(np.uint8))
            self._cls[k] = got
        return got

    def _own_open(self, net: str, own: list) -> tuple:
        """Flat indices of the cells, steps and via places that `net`'s own copper opens: the
        class's hard counts less the net's own obstacles (as ``space_for`` stamps them) against the
        class's open places, compared only near each own obstacle (a stamp changes nothing
        farther than its reach; the whole grid compared once per net cost more than its routes)."""
        got = self._own.get(net)
        if got is None:
            g = self.grid
            prof = g.profile_of(net)
            k = prof.index
            # the net's own obstacles taken out of the class's hard counts in place and put back
            # below (whole counts: exactly as they were), instead of copying four whole grids
            cell, hm, vm, via = g.hard_cell[k], g.hard_h[k], g.hard_v[k], g.hard_via[k]
            base = self._class_open(k)
            for ob in own:
                g.stamp(ob, -1, only=prof, cell=cell, hmap=hm, vmap=vm, viamap=via)
            try:
                got = self._own_found(g, prof, own, cell, hm, vm, via, base)
            finally:
                for ob in own:
                    g.stamp(ob, +1, only=prof, cell=cell, hmap=hm, vmap=vm, viamap=via)
            self._own[net] = got
        return got

    def _own_found(self, g, prof, own, cell, hm, vm, via, base) -> tuple:
        """:meth:`_own_open`'s comparison near each own obstacle, with `cell`, `hm`, `vm` and `via`
        the hard counts less the net's own obstacles."""
        k = prof.index
        L, ny, nx = cell.shape
        # farther than any need of RoutingGrid.stamp (class half width or a hole's, clearance, hole spacing)
        reach = (max(prof.half, g.via_d / 2, g.jump_d / 2 + g.jump_slack) + max(prof.clearance_to.values())
                 + max(g.via_drill, g.jump_drill) + g.rules.min_hole_spacing + 2 * g.jump_slack
                 + g.rules.edge_clearance + g.pitch)
        found: list = [[], [], [], []]
        for ob in own:
            ia, ib, ja, jb = g.index_box(ob.box, ob.radius + reach, cells=2)
            if ia >= ib or ja >= jb:
                continue
            for q, (arr, open_, old) in enumerate(((cell, g.base_cell[k], base[0]), (hm, g.base_h[k], base[1]),
                                                   (vm, g.base_v[k], base[2]))):
                new = ((arr[:, ja:jb, ia:ib] == 0) & open_[:, ja:jb, ia:ib]).astype(np.uint8)
                ls, js, is_ = np.nonzero(new != old[:, ja:jb, ia:ib])
                found[q].append((ls * ny + js + ja) * nx + is_ + ia)
            new = ((via[ja:jb, ia:ib] == 0) & g.base_via[ja:jb, ia:ib]).astype(np.uint8)
            js, is_ = np.nonzero(new != base[3][ja:jb, ia:ib])
            found[3].append((js + ja) * nx + is_ + ia)
        return tuple(np.unique(np.concatenate(f)).astype(np.intp) if f else np.zeros(0, np.intp) for f in found)

    # ------------------------------------------------------------------ laid copper
    def _off_maps(self, k: int) -> list:
        maps = self._off.get(k)
        if maps is None:
            g = self.grid
            shape = (g.L, g.ny, g.nx)
            maps = self._off[k] = [np.zeros(shape, np.int32), np.zeros(shape, np.int32), np.zeros(shape, np.int32)]
        return maps

    def lay(self, net: str, items: list, off_grid: list, sign: int) -> None:
        """Count a net's laid copper in (`sign` +1) or out (-1). Only strict spaces read these
        counts: the off-grid pieces wait in `_pending` (a piece laid and taken up again cancels)
        and are stamped when a strict space of the class is made; a net's items become arrays
        when :meth:`_others` first needs them."""
        if sign > 0 and items:
            self._arrays[net] = (items, None)
        else:
            self._arrays.pop(net, None)
        for key in [key for key in self._need if key[0] == net]:
            del self._need[key]
        if not off_grid:
            return
        for prof in self.grid.profiles.values():
            wait = self._pending.setdefault(prof.index, {})
            for ob in off_grid:
                got = wait.get(id(ob))           # the piece itself is kept with its count: its id stays its own
                if got is None:
                    wait[id(ob)] = [ob, sign]
                else:
                    got[1] += sign
                    if not got[1]:
                        del wait[id(ob)]

    def _off_counts(self, k: int):
        """The off-grid pieces' counts of class `k` (cell, h, v) with every waiting piece stamped,
        or None when none was ever stamped (the same sums as stamping each at once)."""
        wait = self._pending.get(k)
        if wait:
            g = self.grid
            prof = next(p for p in g.profiles.values() if p.index == k)
            c, h, v = self._off_maps(k)
            for ob, n in wait.values():
                g._stamp_maps(ob, g._need(ob, prof, prof.half), n, c, h, v)
            wait.clear()
        return self._off.get(k)

    def _others(self, net: str, prof, soft: dict):
        """:meth:`RoutingGrid.obstacle_arrays` of every other net's laid copper."""
        g = self.grid
        boxes, masks, needs = [], [], []
        for n in sorted(soft):
            if n == net or not soft[n]:
                continue
            arr = self._arrays.get(n)
            if arr is None:
                continue
            if arr[1] is None:
                items = arr[0]
                arr = self._arrays[n] = (np.array([ob.box for ob in items], dtype=np.float64).reshape(-1, 4),
                                         np.array([sum(1 << l for l in ob.layers) for ob in items], dtype=np.int64))
            need = self._need.get((n, prof.index))
            if need is None:
                need = self._need[(n, prof.index)] = np.array([g._need(ob, prof, 0.0) for ob in soft[n]],
                                                              dtype=np.float64)
            boxes.append(arr[0])
            masks.append(arr[1])
            needs.append(need)
        if not boxes:
            return None
        return np.concatenate(boxes), np.concatenate(masks), np.concatenate(needs)

    # ------------------------------------------------------------------ one net's space
    def space(self, neg, net: str, strict: bool, reserve=None) -> tuple[SearchSpace, Optional[tuple]]:
        """The search space of `net` in negotiation `neg` (its soft maps, history, present
        factor, via crowd), and with `strict` the other nets' copper as arrays for stubs.
        `reserve`: (per cell, per via place) costs added on top (other nets' scarce pad exits,
        :class:`router.escape.ExitReserve`), or None."""
        g = self.grid
        prof = g.profile_of(net)
        k = prof.index
        cell, hm, vm, via = (a.copy() for a in self._class_open(k))
        for arr, idx in zip((cell, hm, vm, via), self._own_open(net, neg.own[net])):
            arr.ravel()[idx] = 1
        others = None
        if strict:
            cell &= (g.soft_cell[k] == 0)
            via &= (g.soft_via[k] == 0)
            maps = self._off_counts(k)
            if maps is not None:
                c, h, v = maps
                mine = neg.off_grid.get(net)
                if mine:                 # the net's own pieces are laid: not walls to itself
                    c, h, v = c.copy(), h.copy(), v.copy()
                    for ob in mine:
                        g._stamp_maps(ob, g._need(ob, prof, prof.half), -1, c, h, v)
                cell &= (c == 0)
                hm &= (h == 0)
                vm &= (v == 0)
            others = self._others(net, prof, neg.soft)
        crowd = neg.crowd.price(neg.via) if neg.crowd is not None else None
        lazy = LazyCosts(g.soft_cell[k], neg.hist, g.soft_via[k], neg.hist_top_now(), neg.present * STEP,
                         strict=strict, crowd=crowd, crowd_price=1, hist_max=neg.hist_max_now(),
                         add_cell=None if reserve is None else reserve[0],
                         add_hole=None if reserve is None else reserve[1])
        if g.one_layer:
            sp = SearchSpace(cell, hm, vm, np.zeros((g.ny, g.nx), np.uint8), None, jump_ok=via,
                             wire_block=(g.wire > 0).astype(np.uint8), jump_cells=g.jump_cells, lazy=lazy)
        else:
            sp = SearchSpace(cell, hm, vm, via, None, lazy=lazy)
        sp.any_tie = bool(getattr(neg, "any_tie", False))     # big boards (router.negotiate)
        return sp, others
