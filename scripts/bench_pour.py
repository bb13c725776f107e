"""Pour time against the number of copper items, with a plain reference pour in the same run.

Usage: python scripts/bench_pour.py [--quick] [--seed 0]

Generated two-layer boards (router.boardgen) are routed, then every board gets a ground pour
on both layers and is poured with :func:`router.pour.pour_board`. For each board the script
prints the copper items, the pour's seconds, seconds / (n log2 n) as a ratio to the smallest
board (near 1: the pour grows about n log n), and the seconds of a reference pour measured on
the same board in the same run: the obvious way, subtracting every other net's grown copper
from the area one item at a time (shapely difference in a loop), ours / reference as a ratio.
The routing itself is not timed here (scripts/bench_route.py does that). Both wall-clock and
process CPU seconds are printed: on a machine busy with other work the CPU seconds are the
pour's own cost; the ratios use the CPU seconds.
"""
from __future__ import annotations

import argparse
import math
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

import shapely  # noqa: E402

from router.boardgen import generate_board  # noqa: E402
from router.check import check  # noqa: E402
from router.copper import copper_items  # noqa: E402
from router.geometry import outline_polygon  # noqa: E402
from router.model import Pour  # noqa: E402
from router.negotiate import route_board  # noqa: E402
from router.pour import pour_board, pour_clearance  # noqa: E402

SIZES = [  # nets, board size in mm
    (25, (45.0, 35.0)),
    (50, (60.0, 45.0)),
    (100, (100.0, 80.0)),
    (200, (100.0, 80.0)),
]


def reference_pour(board, pour) -> float:
    """The area of a pour computed the plain way: one difference per other item (seconds)."""
    t0 = time.process_time()
    area = outline_polygon(board).buffer(-board.rules.edge_clearance)
    for it in copper_items(board):
        if it.kind == "pour" or it.net == pour.net or pour.layer not in it.layers:
            continue
        area = area.difference(it.core.buffer(it.radius + pour_clearance(board, pour, it.net)))
    _ = area.area
    return time.process_time() - t0


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="only the two smallest sizes")
    ap.add_argument("--seed", type=int, default=0)
    args = ap.parse_args(argv)
    sizes = SIZES[:2] if args.quick else SIZES
    print(f"{'nets':>5} {'size':>9} {'routed':>7} {'items':>6} {'wall s':>7} {'cpu s':>6} {'s/nlogn':>8} "
          f"{'ref cpu':>7} {'ours/ref':>8} {'viol':>5}")
    base = None
    for nets, size in sizes:
        b = generate_board(args.seed, nets=nets, size=size, layers=2)
        r = route_board(b)
        routed_board = r.board
        gnd = max(routed_board.nets, key=lambda n: len(n.pins)).name
        routed_board.pours = [Pour(gnd, "bottom", min_island_area=1.0), Pour(gnd, "top", min_island_area=1.0)]
        n = len(copper_items(routed_board))
        t0, c0 = time.perf_counter(), time.process_time()
        poured = pour_board(routed_board).board
        wall, t = time.perf_counter() - t0, time.process_time() - c0
        ref = sum(reference_pour(routed_board, p) for p in routed_board.pours)
        per = t / (n * math.log2(n))
        base = base or per
        viol = len(check(poured))
        print(f"{nets:>5} {size[0]:>4.0f}x{size[1]:<4.0f} {len(b.nets) - len(r.failed):>3}/{len(b.nets):<3} "
              f"{n:>6} {wall:>7.2f} {t:>6.2f} {per / base:>8.2f} {ref:>7.2f} {t / ref:>8.2f} {viol:>5}", flush=True)
    return 0


if __name__ == "__main__":
    sys.exit(main())
