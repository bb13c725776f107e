"""Clean-up of routed copper: needless jogs out, dangling stubs off, steps merged into polylines.

The search lays copper as unit grid steps. Before it is written:

1. *Dangling ends*: an end of copper that is not anchored (inside one of the
   net's pads, at a via or at a jumper end) is trimmed back step by step.
2. *Polylines*: the remaining segments of each layer are decomposed into as few
   polylines as the junctions allow (each polyline runs through points of degree
   two and pairs up the segments meeting at a junction, straight ones first), and
   collinear steps are merged into single segments.
"""
from __future__ import annotations

from collections import defaultdict

__all__ = ["polylines", "trim_dangling"]


def _key(p):
    return (round(p[0], 6), round(p[1], 6))


def trim_dangling(segments, anchored) -> list:
    """Remove segments that end in an unanchored point, repeatedly.

    Parameters
    ----------
    segments : list of ((x, y), (x, y))
    anchored : callable (x, y) -> bool

    Examples
    --------
    >>> segs = [((0, 0), (1, 0)), ((1, 0), (2, 0)), ((1, 0), (1, 1))]
    >>> sorted(trim_dangling(segs, lambda p: p in {(0, 0), (2, 0)}))
    [((0, 0), (1, 0)), ((1, 0), (2, 0))]
    """
    segs = {(_key(a), _key(b)) for a, b in segments if _key(a) != _key(b)}
    segs = {(min(a, b), max(a, b)) for a, b in segs}
    while True:
        deg = defaultdict(int)
        for a, b in segs:
            deg[a] += 1
            deg[b] += 1
        bad = {s for s in segs if (deg[s[0]] == 1 and not anchored(s[0])) or (deg[s[1]] == 1 and not anchored(s[1]))}
        if not bad:
            return sorted(segs)
        segs -= bad


def polylines(segments, whole: bool = False) -> list[list]:
    """Few polylines covering axis-parallel segments, collinear steps merged. `whole`: the
    points are whole numbers (grid indices), which rounding leaves as they are.

    Examples
    --------
    >>> polylines([((0, 0), (1, 0)), ((1, 0), (2, 0)), ((2, 0), (2, 1))])
    [[(0.0, 0.0), (2.0, 0.0), (2.0, 1.0)]]
    >>> polylines([((0, 0), (1, 0)), ((1, 0), (2, 0)), ((2, 0), (2, 1))], whole=True)
    [[(0.0, 0.0), (2.0, 0.0), (2.0, 1.0)]]
    """
    if whole:
        segs = [(a, b) for a, b in segments if a != b]
    else:
        segs = [(_key(a), _key(b)) for a, b in segments if _key(a) != _key(b)]
    segs = sorted({(min(a, b), max(a, b)) for a, b in segs})
    adj = defaultdict(list)
    for k, (a, b) in enumerate(segs):
        adj[a].append(k)
        adj[b].append(k)
    used = [False] * len(segs)

    def other(k, p):
        a, b = segs[k]
        return b if p == a else a

    def direction(p, q):
        return ((q[0] > p[0]) - (q[0] < p[0]), (q[1] > p[1]) - (q[1] < p[1]))

    def walk(p, k):
        line = [p]
        while True:
            used[k] = True
            q = other(k, p)
            line.append(q)
            d = direction(p, q)
            # go straight if we can, else take the first free segment in order
            first = nxt = None
            for e in adj[q]:
                if used[e]:
                    continue
                if first is None:
                    first = e
                if direction(q, other(e, q)) == d:
                    nxt = e
                    break
            if first is None:
                return line
            p, k = q, (first if nxt is None else nxt)

    out = []
    starts = sorted(adj, key=lambda p: (len(adj[p]) % 2 == 0, p))     # odd-degree points first
    for p in starts:
        for k in adj[p]:
            if not used[k]:
                out.append(walk(p, k))
    for k in range(len(segs)):
        if not used[k]:
            out.append(walk(segs[k][0], k))
    merged = []
    for line in out:
        pts = [line[0]]
        last = None                       # the heading of the last segment of pts
        for q in line[1:]:
            d = direction(pts[-1], q)
            if d == last:                 # collinear: the last segment goes on to q
                pts[-1] = q
            else:
                pts.append(q)
                last = d
        merged.append([(float(x), float(y)) for x, y in pts])
    return merged
