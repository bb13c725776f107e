"""The board resolved once: every placed shape with its net, layer and class, and one index.

Grid, router, check, figures, pictures and fabrication files all need the same world
geometry: each pad placed and turned from its footprint with its exact copper (core and
radius, :func:`router.geometry.pad_core`), the holes, the part bodies, the keepouts, the
copper of traces, vias, jumpers and pour fills, and the outline. :func:`resolve` builds that
once per *board state* into a frozen :class:`Layout` with one rtree over all of it.

How a layout knows its board has not changed
--------------------------------------------
A :class:`~router.model.Board` is a mutable dataclass; the router fills its traces, placement
moves its parts. :func:`resolve` therefore keys each layout by the board's state: what the
shapes are made from (layers, outline, parts with footprint, place, rotation and side, the
footprints' pads, holes and bodies, nets with pins and class, keepouts, traces, vias, jumpers
and pour fills), compared by value. Making the key costs a walk over those plain values
(no geometry); the same state asked again, from the same board object or an equal copy,
returns the same layout, and any change builds a new one, so nothing stale is handed out.
The placed parts (pads, holes, bodies) are kept apart from the copper: a board that only
gained copper reuses its placed pads. A consumer that is handed a layout (``layout=``) uses
it as given.
"""
from __future__ import annotations

import threading
from collections import OrderedDict
from dataclasses import dataclass, field
from typing import Iterable, Optional, Sequence

import numpy as np
import shapely
from rtree import index as rtree_index
from shapely.geometry import Polygon
from shapely.geometry.base import BaseGeometry

from .copper import CopperItem, HoleItem
from .footprints import resolve_footprint
from .geometry import PlacedHole, PlacedPad
from .model import Board

__all__ = ["Body", "CopperView", "KeepoutArea", "Layout", "resolve", "state_key", "KINDS"]

#: What the index holds, in id order: copper items first (ids are their positions in
#: :attr:`Layout.items`), then holes, bodies and keepouts.
KINDS = ("copper", "hole", "body", "keepout")


@dataclass(frozen=True)
class Body:
    """A placed part's body: its polygon (turned with the part), its bounding box, whether only
    its own nets may run under it (``keepout``), and the nets of its pads (``owners``)."""
    ref: str
    side: str
    polygon: Polygon
    rect: tuple[float, float, float, float]
    keepout: bool
    owners: frozenset
    turned: bool                  # not a quarter turn: the polygon is not its box


@dataclass(frozen=True)
class KeepoutArea:
    """A keepout of the board file: its polygon and the copper layers it closes."""
    number: int                   # 1-based, as the check names it
    polygon: Polygon
    layers: tuple[str, ...]
    is_rect: bool


@dataclass(frozen=True)
class _Placed:
    """The placed parts of one parts state (shared by every copper state of those parts)."""
    pads: tuple
    pad_items: tuple
    npth: tuple
    bodies: tuple


@dataclass(frozen=True, eq=False)
class Layout:
    """Every placed shape of one board state, with net, layers and class, and one rtree.

    Attributes
    ----------
    layers : tuple of str
        The board's copper layers.
    outline : Polygon
        The outline (arcs as chords, :func:`router.geometry.outline_polygon`).
    pads : tuple of PlacedPad
        Every pad of every placed part, in file order (:func:`router.geometry.placed_pads`).
    items : tuple of CopperItem
        All copper, exactly (:func:`router.copper.copper_items`): the pads first (item ``i`` is
        ``pads[i]``), then trace segments, vias, jumper ends and pour pieces.
    holes : tuple of HoleItem
        Every drilled hole (:func:`router.copper.holes`).
    npth : tuple of PlacedHole
        The non-plated footprint holes (:func:`router.geometry.placed_holes`).
    bodies : tuple of Body
        One per placed part, in file order.
    keepouts : tuple of KeepoutArea
    net_class : dict
        Net name -> class name (a net not in the file, such as a lone pad's, is "default").
    copper_bounds : array of shape (len(items), 4)
        Each copper item's box (x0, y0, x1, y1), as :meth:`CopperItem.bounds` gives it.
    index : rtree index
        One rtree over copper items, holes, bodies and keepouts; id ``k`` is ``entries[k]``.
    entries : tuple of (kind, position)
        What each index id is: kind in :data:`KINDS`, position in its tuple.
    """
    key: tuple = field(repr=False)
    layers: tuple
    outline: Polygon
    pads: tuple
    items: tuple
    holes: tuple
    npth: tuple
    bodies: tuple
    keepouts: tuple
    net_class: dict
    index: rtree_index.Index = field(repr=False)
    entries: tuple = field(repr=False)
    _layer_mask: np.ndarray = field(repr=False)    # per index id: bit k set when on layer k
    _pad_pos: dict = field(repr=False)             # placed pad -> its position in pads
    copper_bounds: np.ndarray = field(repr=False)  # (len(items), 4): each item's box (CopperItem.bounds)
    _memo: dict = field(default_factory=dict, repr=False)

    # ---------------------------------------------------------------- shapes
    def shape(self, kind: str, pos: int):
        """The object behind (kind, position): a CopperItem, HoleItem, Body or KeepoutArea."""
        return {"copper": self.items, "hole": self.holes, "body": self.bodies,
                "keepout": self.keepouts}[kind][pos]

    def pad_core(self, i: int) -> tuple[BaseGeometry, float]:
        """The exact core and radius of ``pads[i]`` (as :func:`router.geometry.pad_core`)."""
        it = self.items[i]
        return it.core, it.radius

    def core_of(self, pad: PlacedPad) -> tuple[BaseGeometry, float]:
        """The exact core and radius of a placed pad of this layout (any other pad: made anew)."""
        k = self._pad_pos.get(pad)
        if k is None:
            from .geometry import pad_core
            return pad_core(pad)
        it = self.items[k]
        return it.core, it.radius

    def labels(self) -> list[int]:
        """The joined-copper label of every item (:func:`router.connectivity.components`), once."""
        if "labels" not in self._memo:
            from .connectivity import components
            self._memo["labels"] = components(None, list(self.items), self.copper_index)
        return self._memo["labels"]

    def groups(self, board: Board) -> dict:
        """Each net's pad groups (:func:`router.connectivity.net_groups`) from :meth:`labels`."""
        from .connectivity import net_groups
        return net_groups(board, list(self.items), self.labels())

    # ---------------------------------------------------------------- queries
    def query(self, box: Sequence[float], layer: Optional[str] = None,
              kinds: Optional[Iterable[str]] = None) -> list[tuple[str, int]]:
        """Every shape whose bounding box meets `box` (x0, y0, x1, y1), in index-id order.

        Parameters
        ----------
        box : (x0, y0, x1, y1)
        layer : str, optional
            Only shapes on this copper layer (bodies and non-plated holes are on every layer).
        kinds : iterable of str, optional
            Only these kinds (:data:`KINDS`).

        Returns
        -------
        list of (kind, position)
        """
        ids = np.fromiter(self.index.intersection(tuple(map(float, box))), dtype=np.int64)
        ids.sort()
        if layer is not None:
            bit = 1 << self.layers.index(layer) if layer in self.layers else 0
            ids = ids[(self._layer_mask[ids] & bit) != 0]
        want = None if kinds is None else set(kinds)
        out = [self.entries[k] for k in ids]
        return out if want is None else [e for e in out if e[0] in want]

    def copper_near(self, box: Sequence[float], layer: Optional[str] = None) -> list[int]:
        """Positions in :attr:`items` of the copper whose box meets `box` (on `layer`), ascending."""
        n = len(self.items)                 # copper ids come first: no entry lookups needed
        ids = sorted(k for k in self.index.intersection(tuple(map(float, box))) if k < n)
        if layer is None:
            return ids
        bit = 1 << self.layers.index(layer) if layer in self.layers else 0
        mask = self._layer_mask
        return [k for k in ids if int(mask[k]) & bit]

    @property
    def copper_index(self) -> "CopperView":
        """The index seen as an rtree of the copper alone (ids: positions in :attr:`items`, in
        the index's order), for functions that take an item index
        (:func:`router.connectivity.components`)."""
        return CopperView(self)

    def copper_within(self, geom: BaseGeometry, dist: float, layer: Optional[str] = None) -> list[int]:
        """Positions in :attr:`items` of the copper within `dist` mm of `geom` (exact: core
        distance less the radius, compared through :func:`router.units.meets`), ascending."""
        from .units import TOL, meets
        x0, y0, x1, y1 = geom.bounds
        g = dist + TOL
        near = self.copper_near((x0 - g, y0 - g, x1 + g, y1 + g), layer)
        return [k for k in near if meets(dist, self.items[k].core.distance(geom) - self.items[k].radius)]

    def copper_pairs(self, bounds: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """(I, J): for each row i of `bounds` (x0, y0, x1, y1), every copper item j whose box
        meets it, ordered by i then j (one vectorised rtree query)."""
        n = len(bounds)
        if n == 0:
            return np.zeros(0, dtype=np.int64), np.zeros(0, dtype=np.int64)
        ids, counts = self.index.intersection_v(np.ascontiguousarray(bounds[:, :2], dtype=float),
                                                np.ascontiguousarray(bounds[:, 2:], dtype=float))
        I = np.repeat(np.arange(n, dtype=np.int64), counts.astype(np.int64))
        J = np.asarray(ids, dtype=np.int64)
        keep = J < len(self.items)            # copper ids come first
        I, J = I[keep], J[keep]
        order = np.lexsort((J, I))
        return I[order], J[order]


class CopperView:
    """A layout's index answering ``intersection(box)`` with copper positions only."""

    def __init__(self, layout: Layout):
        self.layout = layout
        self._index, self._n = layout.index, len(layout.items)
        self._only_copper = self._n == len(layout.entries)

    def intersection(self, box):
        """Copper positions whose box meets `box`, in the index's own order (sort where it matters)."""
        if self._only_copper:
            return self._index.intersection(box)
        n = self._n
        return [k for k in self._index.intersection(box) if k < n]


# ----------------------------------------------------------------------------- state keys

def _fp_key(fp) -> tuple:
    return (fp.name, tuple(fp.body), fp.keepout_body,
            tuple((p.pin, tuple(p.offset), p.shape, tuple(p.size), p.drill, p.rotation, p.corner_radius)
                  for p in fp.pads),
            tuple((tuple(h.offset), h.drill) for h in fp.holes))


def _parts_key(board: Board) -> tuple:
    fps = {}
    for p in board.parts:
        if p.at is not None and p.footprint not in fps:
            fp = resolve_footprint(p.footprint, board.footprints)
            fps[p.footprint] = _fp_key(fp) if fp is not None else None
    parts = tuple((p.ref, p.footprint, None if p.at is None else tuple(p.at), p.rotation, p.side)
                  for p in board.parts)
    nets = tuple((n.name, tuple(n.pins), n.net_class) for n in board.nets)
    return (tuple(board.layers), parts, tuple(sorted(fps.items())), nets)


def _copper_key(board: Board) -> tuple:
    traces = tuple((t.net, t.layer, t.width, tuple(tuple(p) for p in t.points)) for t in board.traces)
    vias = tuple((v.net, tuple(v.at), v.drill, v.diameter) for v in board.vias)
    jumpers = tuple((j.net, tuple(j.start), tuple(j.end), j.drill, j.diameter) for j in board.jumpers)
    pours = tuple((p.net, p.layer, tuple(tuple(tuple(tuple(q) for q in ring) for ring in piece)
                                         for piece in p.filled)) for p in board.pours)
    keepouts = tuple((tuple(tuple(q) for q in k.polygon), None if k.layers is None else tuple(k.layers),
                      k.is_rect) for k in board.keepouts)
    return (tuple(tuple(q) for q in board.outline), keepouts, traces, vias, jumpers, pours)


def state_key(board: Board) -> tuple:
    """The board's state as plain values: equal keys, equal shapes (see the module notes)."""
    return (_parts_key(board), _copper_key(board))


# ----------------------------------------------------------------------------- building

_PLACED: "OrderedDict[tuple, _Placed]" = OrderedDict()
_LAYOUTS: "OrderedDict[tuple, Layout]" = OrderedDict()
_KEEP = 4                            # board states kept (a route holds its input and its result)
_LOCK = threading.Lock()             # the caches only; a layout is built outside it
#: How many times parts were placed and layouts built (for tests that count them).
builds = {"placed": 0, "layout": 0}


def _place(board: Board) -> _Placed:
    from .geometry import body_polygon, body_rect, pad_core, part_footprint, placed_holes, placed_pads
    builds["placed"] += 1
    pads = placed_pads(board)
    pad_items = tuple(CopperItem("pad", p.net, tuple(p.layers), f"pad {p.name}", *pad_core(p), pad=p, index=(i,))
                      for i, p in enumerate(pads))
    owners: dict[str, set] = {}
    for p in pads:
        owners.setdefault(p.ref, set()).add(p.net)
    bodies = []
    for part in board.parts:
        if part.at is None:
            continue
        fp = part_footprint(board, part)
        bodies.append(Body(part.ref, part.side, body_polygon(board, part), tuple(body_rect(board, part)),
                           bool(fp.keepout_body), frozenset(owners.get(part.ref, ())),
                           float(part.rotation) % 90 != 0))
    return _Placed(tuple(pads), pad_items, tuple(placed_holes(board)), tuple(bodies))


def _build(board: Board, key: tuple, placed: _Placed) -> Layout:
    from .copper import copper_items, holes
    from .geometry import outline_polygon
    builds["layout"] += 1
    layers = tuple(board.layers)
    items = list(placed.pad_items) + copper_items(board, pads=[])    # the pads placed once, then wires
    hs = holes(board, pads=list(placed.pads), npth=list(placed.npth))
    kos = tuple(KeepoutArea(k + 1, Polygon(ko.polygon), tuple(ko.layers_on(board.layers)), ko.is_rect)
                for k, ko in enumerate(board.keepouts))
    every = (1 << len(layers)) - 1

    def mask(ls) -> int:
        return sum(1 << layers.index(l) for l in ls if l in layers)

    # the copper's boxes at once (the same floats as CopperItem.bounds: core bounds -/+ radius)
    if items:
        cb = shapely.bounds(np.array([it.core for it in items], dtype=object))
        r = np.array([it.radius for it in items], dtype=float)
        cb = cb + np.stack([-r, -r, r, r], axis=1)
    else:
        cb = np.zeros((0, 4))
    seen_masks: dict = {}
    entries = [("copper", k) for k in range(len(items))]
    boxes = [tuple(row) for row in cb.tolist()]
    masks = [seen_masks[it.layers] if it.layers in seen_masks else seen_masks.setdefault(it.layers, mask(it.layers))
             for it in items]
    for k, h in enumerate(hs):
        r = h.drill / 2 if h.diameter is None else max(h.drill, h.diameter) / 2
        entries.append(("hole", k)); boxes.append((h.x - r, h.y - r, h.x + r, h.y + r)); masks.append(every)
    for k, b in enumerate(placed.bodies):
        entries.append(("body", k)); boxes.append(b.rect); masks.append(every)
    for k, ko in enumerate(kos):
        entries.append(("keepout", k)); boxes.append(tuple(ko.polygon.bounds)); masks.append(mask(ko.layers))
    idx = (rtree_index.Index(((k, tuple(map(float, bx)), None) for k, bx in enumerate(boxes)))
           if boxes else rtree_index.Index())
    net_class = {n.name: n.net_class for n in board.nets}
    return Layout(key, layers, outline_polygon(board), placed.pads, tuple(items), tuple(hs), placed.npth,
                  placed.bodies, kos, net_class, idx, tuple(entries), np.array(masks, dtype=np.int64),
                  {p: k for k, p in enumerate(placed.pads)}, cb)


def _remember(cache: OrderedDict, key, value):
    cache[key] = value
    cache.move_to_end(key)
    while len(cache) > _KEEP:
        cache.popitem(last=False)
    return value


def resolve(board: Board) -> Layout:
    """The resolved layout of `board` as it is now (built once per board state).

    Parameters
    ----------
    board : Board
        Any board; unplaced parts have no shapes.

    Returns
    -------
    Layout
        The same object for every call on an unchanged board (or an equal one).

    Examples
    --------
    >>> from router.boardgen import generate_board
    >>> b = generate_board(1, nets=4)
    >>> resolve(b) is resolve(b)
    True
    >>> len(resolve(b).pads) == sum(1 for it in resolve(b).items if it.kind == "pad")
    True
    """
    pk, ck = _parts_key(board), _copper_key(board)
    key = (pk, ck)
    with _LOCK:
        got = _LAYOUTS.get(key)
        if got is not None:
            _LAYOUTS.move_to_end(key)
            return got
        placed = _PLACED.get(pk)
    if placed is None:
        placed = _place(board)
        with _LOCK:
            _remember(_PLACED, pk, placed)
    lay = _build(board, key, placed)
    with _LOCK:
        return _remember(_LAYOUTS, key, lay)
