"""Why a net found no way: the kind of obstacle that closes it.

When the search finds no path from a net's tree to the pins still to join, the failure
names the obstacle, not "the other copper" in general. The obstacles of the net's search
space fall into kinds: keepouts (and polygon keepouts), the board edge (``edge_clearance``),
non-plated holes, bodies of ``keepout_body`` parts, the copper already in the file of each
other net (pads, traces, vias, jumpers), and, when the other nets are walls, the copper the
router laid for them. A kind *closes the way* when the same search, with that kind's
obstacles taken away and nothing else changed, finds a path. Kinds are tried one at a time,
then two together; the nets and keepouts named are those whose removal alone (with the rest
of the closing kinds) opens the way.

This runs only when a net fails against walls (the final attempt), so its extra searches
(:func:`router.search.find_path` with no penalties, a few per kind) cost nothing on boards
that route.
"""
from __future__ import annotations

import itertools
import math
from collections import defaultdict

import numpy as np
from shapely.geometry import Polygon

from .search import SearchSpace, find_path

__all__ = ["closed_by", "ROUTED", "ANY_ONE"]

_ORDER = ("keepout", "edge", "hole", "body", "copper", "routed")
_MOST_NAMED = 10          # nets or keepouts tried one by one when naming
#: The words for the router's own copper when it closes a way (the nets are named after routing:
#: router.negotiate._name_routed).
ROUTED = "copper routed for other nets"
#: The words after several kinds of obstacle of which each alone, taken away, opens the way.
ANY_ONE = "taking away any one of them opens a way"


class _Relax:
    """The net's open maps, and the same maps with chosen kinds of obstacle taken away."""

    def __init__(self, grid, net: str, space: SearchSpace, near=None):
        self.grid, self.net, self.space = grid, net, space
        prof = grid.profile_of(net)
        self.prof = prof
        k = prof.index
        scratch = np.zeros((grid.ny, grid.nx), np.int32)
        self.cell = grid.hard_cell[k].copy()
        self.h = grid.hard_h[k].copy()
        self.v = grid.hard_v[k].copy()
        own = grid.own_obstacles(net)
        own_ids = {id(ob) for ob in own}
        for ob in own:
            grid.stamp(ob, -1, only=prof, cell=self.cell, hmap=self.h, vmap=self.v, viamap=scratch)
        self.base = (grid.base_cell[k], grid.base_h[k], grid.base_v[k])
        eb = getattr(grid, "edge_base", None)
        self.edge_only = (eb[0][k], eb[1][k], eb[2][k]) if eb is not None else self.base
        hard = [(c == 0) & b for c, b in zip((self.cell, self.h, self.v), self.base)]
        opened = (space.open_cell.astype(bool), space.open_h.astype(bool), space.open_v.astype(bool))
        self.soft_closed = [hd & ~op for hd, op in zip(hard, opened)]
        # the obstacles of every kind, and of each net and keepout by name
        self.obs = defaultdict(list)
        self.by_net = defaultdict(list)
        self.by_keepout = defaultdict(list)
        rect_k = [k for k, ko in enumerate(grid.board.keepouts) if ko.is_rect]
        n_rect = 0
        for ob in grid.obstacles:
            if id(ob) in own_ids:
                continue
            if near is not None:         # only obstacles whose reach comes into the box `near`
                gx = max(ob.box[0] - near[2], near[0] - ob.box[2], 0.0)
                gy = max(ob.box[1] - near[3], near[1] - ob.box[3], 0.0)
                if math.hypot(gx, gy) >= grid._need(ob, prof, prof.half):
                    continue
            kind = {"copper": "copper", "npth": "hole", "keepout": "keepout", "body": "body"}[ob.kind]
            if kind == "body" and net in ob.owners:
                continue
            self.obs[kind].append(ob)
            if kind == "copper":
                self.by_net[ob.net].append(ob)
            elif kind == "keepout":
                self.by_keepout[rect_k[n_rect]].append(ob)
                n_rect += 1
        self.poly = {}                   # polygon keepout index -> (cells, h, v) it blocks, per layer
        for k, ko in enumerate(grid.board.keepouts):
            if ko.is_rect:
                continue
            bad = grid._poly_block(Polygon(ko.polygon), prof.half)
            layers = [grid.layers.index(l) for l in ko.layers_on(grid.layers) if l in grid.layers]
            maps = tuple(np.zeros((grid.L, grid.ny, grid.nx), bool) for _ in range(3))
            for l in layers:
                for m, b in zip(maps, bad):
                    m[l] |= b
            self.poly[k] = maps
        self._cache = {}
        self.window = None               # (layers, ja, jb, ia, ib): "opens" asks for an open cell there
        self.extra = np.zeros((grid.L, grid.ny, grid.nx), np.int32)

    def _stamped(self, key, obstacles, keep: bool = True):
        """Count maps of `obstacles` alone; kept for a whole kind, made afresh for one net or keepout
        (so that memory stays at a few grids whatever the number of nets)."""
        got = self._cache.get(key)
        if got is None:
            g = self.grid
            got = tuple(np.zeros((g.L, g.ny, g.nx), np.int32) for _ in range(3))
            for ob in obstacles:
                g._stamp_maps(ob, g._need(ob, self.prof, self.prof.half), 1, *got)
            if keep:
                self._cache[key] = got
        return got

    def _on_board(self):
        """Grid points and steps inside the outline (edge touched allowed), on every layer."""
        got = self._cache.get("on_board")
        if got is None:
            import shapely
            g = self.grid
            X, Y = np.meshgrid(g.xs, g.ys)
            inside = shapely.intersects_xy(g.outline, X.ravel(), Y.ravel()).reshape(g.ny, g.nx)
            h = np.zeros_like(inside)
            v = np.zeros_like(inside)
            h[:, :-1] = inside[:, :-1] & inside[:, 1:]
            v[:-1, :] = inside[:-1, :] & inside[1:, :]
            got = tuple(np.broadcast_to(a, (g.L, g.ny, g.nx)) for a in (inside, h, v))
            self._cache["on_board"] = got
        return got

    def present(self) -> list[str]:
        out = [k for k in ("keepout",) if self.obs["keepout"] or self.poly]
        out.append("edge")
        out += [k for k in ("hole", "body", "copper") if self.obs[k]]
        if any(m.any() for m in self.soft_closed):
            out.append("routed")
        return out

    def opens(self, kinds=(), nets=None, keepouts=None) -> bool:
        """True when the search finds a way with `kinds` taken away (for "copper" only the
        copper of `nets` when given, for "keepout" only `keepouts` when given)."""
        if self.window is not None:
            l_s, ja, jb, ia, ib, mask = self.window
            return bool((self.maps(kinds, nets, keepouts)[0][l_s, ja:jb, ia:ib].astype(bool) & mask).any())
        opened = self.maps(kinds, nets, keepouts)
        sp = self.space
        trial = SearchSpace(opened[0], opened[1], opened[2], sp.via_ok, self.extra, jump_ok=sp.jump_ok,
                            wire_block=sp.wire_block, jump_cells=sp.jump_cells)
        return find_path(trial, self.sources, self.targets, bend=0, via=0, jump=0) is not None

    def maps(self, kinds=(), nets=None, keepouts=None):
        """The open cells, h and v steps with `kinds` taken away (uint8 arrays)."""
        counts = [a.copy() for a in (self.cell, self.h, self.v)]
        for kind in ("hole", "body"):
            if kind in kinds:
                for c, s in zip(counts, self._stamped(kind, self.obs[kind])):
                    c -= s
        if "copper" in kinds:
            if nets is None:
                for c, s in zip(counts, self._stamped("copper", self.obs["copper"])):
                    c -= s
            else:
                for n in nets:
                    for c, s in zip(counts, self._stamped(("net", n), self.by_net[n], keep=False)):
                        c -= s
        poly_gone = []
        if "keepout" in kinds:
            if keepouts is None:
                for c, s in zip(counts, self._stamped("keepout", self.obs["keepout"])):
                    c -= s
                poly_gone = list(self.poly)
            else:
                for k in keepouts:
                    if k in self.by_keepout:
                        for c, s in zip(counts, self._stamped(("keepout", k), self.by_keepout[k], keep=False)):
                            c -= s
                    elif k in self.poly:
                        poly_gone.append(k)
        opened = []
        for m, (c, base, edge_only) in enumerate(zip(counts, self.base, self.edge_only)):
            if "edge" in kinds:
                # every grid point on the board (no edge clearance), less what polygon keepouts block
                b = self._on_board()[m].copy()
                for k, maps in self.poly.items():
                    if k not in poly_gone:
                        b &= ~maps[m]
            else:
                b = edge_only.copy()
                for k, maps in self.poly.items():
                    if k not in poly_gone:
                        b &= ~maps[m]
                if not self.poly:
                    b = base
            o = (c == 0) & b
            if "routed" not in kinds:
                o &= ~self.soft_closed[m]
            opened.append(np.ascontiguousarray(o.astype(np.uint8)))
        return opened


def _near_first(relax: _Relax, names, boxes_of) -> list:
    """Names ordered by how near their obstacles come to the sources and targets."""
    g = relax.grid
    cells = np.vstack([relax.sources, relax.targets])
    xs = g.xs[cells[:, 2]]
    ys = g.ys[cells[:, 1]]
    x0, x1, y0, y1 = xs.min(), xs.max(), ys.min(), ys.max()

    def dist(name):
        best = np.inf
        for b in boxes_of(name):
            dx = max(b[0] - x1, x0 - b[2], 0.0)
            dy = max(b[1] - y1, y0 - b[3], 0.0)
            best = min(best, dx + dy)
        return best
    return sorted(names, key=lambda n: (dist(n), str(n)))


def _words(relax: _Relax, closing: list[str]) -> str:
    parts = []
    rest = [k for k in closing]
    for kind in closing:
        if kind == "copper":
            others = [k for k in rest if k != "copper"]
            cands = _near_first(relax, list(relax.by_net), lambda n: [ob.box for ob in relax.by_net[n]])
            named = [n for n in cands[:_MOST_NAMED] if relax.opens(others + ["copper"], nets=[n])]
            if named:
                parts.append(f"copper of net{'s' if len(named) > 1 else ''} {', '.join(named)} "
                             f"(pads or copper in the file)")
            else:
                near = cands[:3]
                parts.append(f"copper of several nets together ({', '.join(near)}"
                             f"{' ...' if len(cands) > 3 else ''}: pads or copper in the file)")
        elif kind == "keepout":
            others = [k for k in rest if k != "keepout"]
            ids = sorted(set(relax.by_keepout) | set(relax.poly))
            named = [k for k in ids[:_MOST_NAMED] if relax.opens(others + ["keepout"], keepouts=[k])]
            if named:
                parts.append(f"keepout{'s' if len(named) > 1 else ''} {', '.join(str(k + 1) for k in named)}")
            else:
                parts.append("the keepouts together")
        elif kind == "edge":
            parts.append(f"the board edge ({relax.grid.rules.edge_clearance:g} mm edge clearance)")
        elif kind == "hole":
            parts.append(f"a non-plated hole ({relax.grid.rules.edge_clearance:g} mm clearance)")
        elif kind == "body":
            parts.append("the body of a keepout_body part")
        elif kind == "routed":
            parts.append(ROUTED)
    return " and ".join(parts)


def pad_closed_by(grid, net: str, space: SearchSpace, pad) -> str:
    """The words for what closes every grid point near `pad` (inside its copper or a short
    straight stub away) to `net`: for a pad with no way to the grid."""
    from .grid import box_of_core
    core, rad = grid.layout.core_of(pad)
    bx = box_of_core(core)
    reach = rad + 2 * grid.pitch
    near = (bx[0] - reach, bx[1] - reach, bx[2] + reach, bx[3] + reach)
    relax = _Relax(grid, net, space, near=near)
    ia, ib, ja, jb = grid.index_box(bx, reach)
    layers = [grid.layer_index(l) for l in pad.layers if l in grid.layers]
    X, Y = grid.xs[ia:ib], grid.ys[ja:jb]
    gx = np.maximum(np.maximum(bx[0] - X, 0.0), X - bx[2])
    gy = np.maximum(np.maximum(bx[1] - Y, 0.0), Y - bx[3])
    # grid points inside the pad's copper or a short straight stub away (router.nets._STUB_MAX)
    from .nets import _STUB_MAX
    mask = np.hypot(gy[:, None], gx[None, :]) <= rad + _STUB_MAX * grid.pitch
    relax.window = (layers, ja, jb, ia, ib, mask[None, :, :])
    if relax.opens(()):
        return "grid points near it are open, but no exit from the pad reaches one clear of other copper"
    kinds = relax.present()
    relax.sources = relax.targets = np.array([[layers[0], (ja + jb) // 2, (ia + ib) // 2]], dtype=np.int64)
    singles = [k for k in kinds if relax.opens([k])]
    if singles:
        tail = "" if len(singles) == 1 else " (taking away any one of them opens a grid point)"
        return "closed by " + _words(relax, singles) + tail
    if relax.opens(kinds):
        return "closed by " + _words(relax, kinds) + " together"
    return "no grid point lies within reach of it"


def closed_by(grid, net: str, space: SearchSpace, sources, targets) -> str:
    """The words for what closes the way from `sources` to `targets` in `space`.

    Parameters
    ----------
    grid : RoutingGrid
    net : str
    space : SearchSpace
        The net's search space as the failed search had it (walls included).
    sources, targets : arrays of (l, j, i)

    Returns
    -------
    str
        For example ``"closed by keepout 1"``, ``"closed by the board edge and copper of net GND
        together"``, or, when no kind of obstacle opens the way alone or in pairs, the kinds present.
    """
    relax = _Relax(grid, net, space)
    relax.sources = np.asarray(sources, dtype=np.int64).reshape(-1, 3)
    relax.targets = np.asarray(targets, dtype=np.int64).reshape(-1, 3)
    kinds = relax.present()
    singles = [k for k in kinds if relax.opens([k])]
    if singles:
        tail = "" if len(singles) == 1 else f" ({ANY_ONE})"
        return "closed by " + _words(relax, singles) + tail
    for a, b in itertools.combinations(kinds, 2):
        if relax.opens([a, b]):
            return "closed by " + _words(relax, [a, b]) + " together"
    if relax.opens(kinds):
        return "closed by " + _words(relax, kinds) + " together"
    hole = "jumper ends" if grid.one_layer else "vias"
    return (f"closed even with every obstacle taken away: no place for the {hole} it needs "
            f"(hole spacing, pads)")
