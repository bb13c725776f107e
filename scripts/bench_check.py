"""Time `router.check.check` on boards of 1k to 50k copper shapes against an all-pairs check.

Each board is generated (seeded): short trace segments of many nets on both layers, one per
2 mm cell, a few of them pushed close to a neighbour so that the check has something to find.
The indexed time is the whole ``check(board)`` (every rule). The reference is the all-pairs
clearance pass alone (every pair of items of two nets sharing a layer, measured with the same
exact core-and-radius distance, vectorised with shapely), so the ratio is a lower bound on the
speed-up of the whole check. At the larger sizes the all-pairs pass is timed on a random sample
of pairs and extrapolated to all n(n-1)/2 pairs; the output says so.

Usage::

    python scripts/bench_check.py [--sizes 1000 5000 20000 50000] [--sample 2000000]
"""
from __future__ import annotations

import argparse
import math
import random
import sys
import time
from pathlib import Path

import numpy as np
import shapely

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from router.check import check  # noqa: E402
from router.copper import copper_items  # noqa: E402
from router.model import Board, Net, Trace  # noqa: E402
from router.units import TOL  # noqa: E402


def make_board(n: int, seed: int = 1) -> Board:
    """A board of about `n` one-segment traces on a 2 mm cell grid."""
    rng = random.Random(seed)
    side = int(math.ceil(math.sqrt(n)))
    size = side * 2.0 + 4.0
    b = Board(f"bench-{n}", [(0, 0), (size, 0), (size, size), (0, size)])
    n_nets = max(2, n // 10)
    b.nets = [Net(f"N{k}", []) for k in range(n_nets)]
    for k in range(n):
        cx, cy = 2.0 + (k % side) * 2.0, 2.0 + (k // side) * 2.0
        if rng.random() < 0.01:
            cx += 0.9                    # close to the next cell's copper
        if rng.random() < 0.5:
            pts = [(cx, cy), (cx + 1.0, cy)]
        else:
            pts = [(cx, cy), (cx, cy + 1.0)]
        b.traces.append(Trace(f"N{rng.randrange(n_nets)}", rng.choice(("top", "bottom")), 0.25, pts))
    return b


def all_pairs_seconds(board: Board, sample: int, seed: int = 2) -> tuple[float, bool]:
    """Seconds for the all-pairs clearance pass (measured, or extrapolated from a sample)."""
    items = copper_items(board)
    n = len(items)
    cores = np.array([it.core for it in items], dtype=object)
    radii = np.array([it.radius for it in items])
    nets = np.array([hash(it.net) for it in items])
    layers = np.array([1 if it.layers == ("top",) else 2 for it in items])
    total = n * (n - 1) // 2
    req = board.classes["default"].clearance
    t0 = time.perf_counter()
    if total <= sample:
        I, J = np.triu_indices(n, 1)
        sampled = False
    else:
        rng = np.random.default_rng(seed)
        I = rng.integers(0, n, sample)
        J = rng.integers(0, n, sample)
        sampled = True
    chunk = 1_000_000
    found = 0
    for s in range(0, len(I), chunk):
        i, j = I[s:s + chunk], J[s:s + chunk]
        keep = (nets[i] != nets[j]) & ((layers[i] & layers[j]) != 0) & (i != j)
        i, j = i[keep], j[keep]
        d = shapely.distance(cores[i], cores[j]) - radii[i] - radii[j]
        found += int(np.count_nonzero(d < req - TOL))
    secs = time.perf_counter() - t0
    if sampled:
        secs *= total / len(I)
    return secs, sampled


def main(argv=None) -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sizes", type=int, nargs="+", default=[1000, 5000, 20000, 50000])
    ap.add_argument("--sample", type=int, default=2_000_000,
                    help="pairs timed when all pairs are more than this (then extrapolated)")
    args = ap.parse_args(argv)
    print(f"{'shapes':>8} {'indexed s':>10} {'all-pairs s':>12} {'ratio':>8}  note")
    prev = None
    for n in args.sizes:
        b = make_board(n)
        t0 = time.perf_counter()
        vs = check(b)
        ti = time.perf_counter() - t0
        ta, sampled = all_pairs_seconds(b, args.sample)
        note = "all pairs sampled and extrapolated" if sampled else "all pairs measured"
        if prev is not None:
            pn, pt = prev
            growth = (ti / pt) / ((n * math.log(n)) / (pn * math.log(pn)))
            note += f"; indexed time / (n log n) vs previous: {growth:.2f}"
        print(f"{n:>8} {ti:>10.3f} {ta:>12.2f} {ta / ti:>8.1f}  {note} ({len(vs)} violations)")
        prev = (n, ti)


if __name__ == "__main__":
    main()
