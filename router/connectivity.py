"""Which pins of each net its copper joins: union-find over the copper items.

Two items of one net are joined when they share a copper layer and touch
(their exact distance is at most :data:`router.units.TOL`). Vias, pads with a
drill and jumper ends are on every copper layer, so they join the layers; a
jumper joins its two ends; a surface pad is only on its part's side. An rtree
index over the items' boxes keeps the pairs measured to near ones.
"""
from __future__ import annotations

from collections import defaultdict
from typing import Optional, Sequence

from rtree import index as rtree_index

from .copper import CopperItem, distance
from .model import Board
from .units import TOL

__all__ = ["UnionFind", "item_index", "touching_pairs", "components", "net_groups", "routed"]


class UnionFind:
    """Disjoint sets over 0..n-1 with path halving and union by size.

    Examples
    --------
    >>> uf = UnionFind(4); uf.union(0, 1); uf.union(2, 3)
    >>> uf.find(1) == uf.find(0), uf.find(1) == uf.find(2)
    (True, False)
    """

    def __init__(self, n: int):
        self.parent = list(range(n))
        self.size = [1] * n

    def find(self, a: int) -> int:
        p = self.parent
        while p[a] != a:
            p[a] = p[p[a]]
            a = p[a]
        return a

    def union(self, a: int, b: int) -> None:
        ra, rb = self.find(a), self.find(b)
        if ra == rb:
            return
        if self.size[ra] < self.size[rb]:
            ra, rb = rb, ra
        self.parent[rb] = ra
        self.size[ra] += self.size[rb]


def item_index(items: Sequence[CopperItem], grow: float = 0.0) -> rtree_index.Index:
    """An rtree over the items' copper boxes grown by `grow`; ids are list positions."""
    if not items:
        return rtree_index.Index()
    return rtree_index.Index(((i, it.bounds(grow), None) for i, it in enumerate(items)))


def touching_pairs(items: Sequence[CopperItem], idx: Optional[rtree_index.Index] = None):
    """Pairs (i, j), i < j, of items of one net on a shared layer whose copper touches (within TOL).

    The one test of "joined copper" that connectivity and the dead-end pass both use.
    """
    idx = item_index(items) if idx is None else idx
    for i, a in enumerate(items):
        for j in idx.intersection(a.bounds(TOL)):
            if j <= i:
                continue
            b = items[j]
            if b.net != a.net or not set(a.layers) & set(b.layers):
                continue
            if distance(a, b) <= TOL:
                yield i, j


def components(board: Board, items: Optional[Sequence[CopperItem]] = None,
               idx: Optional[rtree_index.Index] = None) -> list[int]:
    """The component label of every copper item (items of one label are joined copper).

    Parameters
    ----------
    board : Board
    items : list of CopperItem, optional
        Default :func:`router.copper.copper_items` of `board`.
    idx : rtree index, optional
        An index of `items` (as :func:`item_index` builds it, any `grow` >= 0).

    Returns
    -------
    list of int
        ``labels[i]`` is the union-find root of item ``i``.

    Notes
    -----
    Items of different nets are never joined here, even when they touch: that is a short,
    which the check reports.
    """
    if items is None:                    # the board resolved once (router.layout): its items and index
        from .layout import resolve
        lay = resolve(board)
        items, idx = list(lay.items), lay.copper_index
    uf = UnionFind(len(items))
    for i, j in touching_pairs(items, idx):
        uf.union(i, j)
    # a jumper joins its two ends
    ends: dict[int, int] = {}
    for i, a in enumerate(items):
        if a.kind == "jumper_end":
            ji = a.index[0]
            if ji in ends:
                uf.union(ends[ji], i)
            else:
                ends[ji] = i
    return [uf.find(i) for i in range(len(items))]


def _groups(board: Board, items, labels) -> dict[str, list[list[str]]]:
    # pad-level groups: each component holding pads lists its pins; a pin whose pads lie in
    # two components shows up in both, so its net counts joined only when all its pads are.
    pads_of: dict[str, dict[int, list[str]]] = defaultdict(dict)
    for i, it in enumerate(items):
        if it.kind == "pad":
            comp = pads_of[it.net].setdefault(labels[i], [])
            if it.pad.name not in comp:
                comp.append(it.pad.name)
    out: dict[str, list[list[str]]] = {}
    for net in board.nets:
        groups = [list(g) for g in pads_of.get(net.name, {}).values()]
        seen = {pin for g in groups for pin in g}
        for pin in net.pins:
            # a pin of an unplaced part (or one with no pad) is a group of its own
            if pin not in seen:
                groups.append([pin])
                seen.add(pin)
        out[net.name] = groups
    # pads in no net form nets of their own
    for name, comps in pads_of.items():
        if name not in out:
            out[name] = [list(g) for g in comps.values()]
    return out


def net_groups(board: Board, items: Optional[Sequence[CopperItem]] = None,
               labels: Optional[list[int]] = None) -> dict[str, list[list[str]]]:
    """The pins of each net grouped by the copper that joins them.

    Parameters
    ----------
    board : Board
    items, labels : optional
        Copper items and their :func:`components` labels, when already computed.

    Returns
    -------
    dict
        net name -> list of groups, each a list of "REF.PIN" names in file order of the pads.
        Grouping is at pad level: a pin on several pads (a tab and a lead) whose pads are not
        all joined appears in each group one of its pads is in. A pin of an unplaced part is
        a group of its own. Nets of lone pads (pads in no net) are included.

    Examples
    --------
    >>> from router.boardfile import loads_board
    >>> b = loads_board('''format = 1
    ... [board]
    ... name = "t"
    ... size = [20.0, 10.0]
    ... [[parts]]
    ... ref = "R1"
    ... footprint = "axial-10.16"
    ... at = [10.0, 5.0]
    ... [[nets]]
    ... name = "A"
    ... pins = ["R1.1", "R1.2"]
    ... ''')
    >>> net_groups(b)["A"]
    [['R1.1'], ['R1.2']]
    """
    if items is None:                    # the board resolved once (router.layout), labels made once
        from .layout import resolve
        lay = resolve(board)
        items = list(lay.items)
        if labels is None:
            labels = lay.labels()
    if labels is None:
        labels = components(board, items)
    return _groups(board, items, labels)


def routed(board: Board, items: Optional[Sequence[CopperItem]] = None,
           labels: Optional[list[int]] = None) -> dict[str, bool]:
    """True for each net of the file whose pins its own copper joins (a one-pin net is routed).

    Returns
    -------
    dict
        net name -> bool, for the nets of ``board.nets`` in file order.
    """
    groups = net_groups(board, items, labels)
    return {n.name: len(groups.get(n.name, [])) <= 1 for n in board.nets}
