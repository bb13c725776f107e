"""Benchmark: our A* kernel against networkx's astar_path on the identical state graph.

For grids from 100 x 100 to 800 x 800 cells (two layers, random obstacles, random
congestion costs) the same search problem is solved by router.search.find_path
and by networkx.astar_path (with the same Manhattan heuristic) on the graph of
router.search.reference_graph. Prints both costs (they must be equal), both
times and the ratio, measured in this run.

    python scripts/bench_search.py            # 100, 200, 400, 800
    python scripts/bench_search.py --sizes 100 200
"""
from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

import networkx as nx
import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))
from router.search import STEP, SearchSpace, find_path, reference_graph  # noqa: E402


def problem(n: int, seed: int = 0):
    rng = np.random.default_rng(seed)
    L = 2
    cell = (rng.random((L, n, n)) > 0.22).astype(np.uint8)
    ones = np.ones_like(cell)
    via_ok = (rng.random((n, n)) > 0.5).astype(np.uint8)
    extra = np.where(rng.random((L, n, n)) > 0.9, rng.integers(0, 300, (L, n, n)), 0).astype(np.int32)
    src = np.array([[0, j, i] for j in range(2) for i in range(2)], np.int64)
    tgt = np.array([[1, n - 1 - j, n - 1 - i] for j in range(2) for i in range(2)], np.int64)
    cell[src[:, 0], src[:, 1], src[:, 2]] = 1
    cell[tgt[:, 0], tgt[:, 1], tgt[:, 2]] = 1
    return SearchSpace(cell, ones, ones, via_ok, extra), src, tgt


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sizes", type=int, nargs="+", default=[100, 200, 400, 800])
    ap.add_argument("--bend", type=int, default=4 * STEP)
    ap.add_argument("--via", type=int, default=8 * STEP)
    args = ap.parse_args(argv)
    warm, s, t = problem(20)
    find_path(warm, s, t, bend=args.bend, via=args.via)     # compile (or load the cache) before timing
    print("ours first: the first search on a grid of this size, with its work arrays allocated;")
    print("ours warm: the same search again (a routing run reuses the work arrays for every search)")
    print(f"{'cells':>10} {'states':>10} {'first s':>8} {'warm s':>8} {'networkx s':>11} {'ratio':>7} "
          f"{'cost':>8}  equal")
    for n in args.sizes:
        sp, src, tgt = problem(n, seed=n)
        t0 = time.perf_counter()
        find_path(sp, src, tgt, bend=args.bend, via=args.via)
        first = time.perf_counter() - t0
        t0 = time.perf_counter()
        p = find_path(sp, src, tgt, bend=args.bend, via=args.via)
        ours = time.perf_counter() - t0
        G = reference_graph(sp, src, tgt, bend=args.bend, via=args.via)
        tx, ty = n - 2, n - 2

        def h(u, v):
            if u in ("S", "T"):
                return 0
            _, j, i, _ = u
            return STEP * (max(tx - i, 0) + max(ty - j, 0))

        t0 = time.perf_counter()
        try:
            path = nx.astar_path(G, "S", "T", heuristic=h, weight="weight")
            ref = nx.path_weight(G, path, "weight")
        except nx.NetworkXNoPath:
            ref = None
        theirs = time.perf_counter() - t0
        cost = None if p is None else p.cost
        print(f"{n}x{n:<6} {G.number_of_nodes():>10} {first:8.3f} {ours:8.3f} {theirs:11.2f} "
              f"{theirs / ours:7.1f} {str(cost):>8}  {cost == ref}", flush=True)
        del G


if __name__ == "__main__":
    main()
