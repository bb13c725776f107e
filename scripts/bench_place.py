"""bench_place: wirelength and time of `place` from 10 to 150 parts, and how often routing completes.

Boards come from router.boardgen.generate_board (parts in spaced rows, local nets); every part
but the connectors and mounting holes is unplaced, then placed. Printed per size, as means over
the seeds: parts placed, wirelength (HPWL) of a random legal placement made in the same run,
of the generator's own rows and of ours, the ratio random / ours, seconds, and, when the router
is built, on how many boards routing the placed board completes.

    python scripts/bench_place.py                 # 10, 25, 50, 100, 150 parts, 2 seeds (about a minute)
    python scripts/bench_place.py --seeds 4 --route-up-to 60
"""
from __future__ import annotations

import argparse
import importlib.util
import math
import sys
import time
from dataclasses import replace
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from placement import place                      # noqa: E402
from placement.wirelength import total_hpwl      # noqa: E402
from router.boardgen import generate_board       # noqa: E402


def board_for(parts: int, seed: int):
    """A generated board of about `parts` parts (about 1.6 nets per part, 170 mm^2 per part)."""
    area = 170.0 * parts
    w = math.sqrt(area * 4 / 3)
    h = area / w
    return generate_board(seed, nets=max(4, int(1.6 * parts)), size=(round(w), round(h)))


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sizes", type=int, nargs="+", default=[10, 25, 50, 100, 150])
    ap.add_argument("--seeds", type=int, default=2)
    ap.add_argument("--route-up-to", type=int, default=None, metavar="N",
                    help="route only the boards of up to N parts (default all; routing is the slow part)")
    args = ap.parse_args(argv)
    can_route = importlib.util.find_spec("router.negotiate") is not None
    if can_route:
        from router import route

    # compile the annealing kernel outside the timings
    place(board_for(10, 99), seed=0, random_baseline=False)

    head = f"{'parts':>6} {'placed':>7} {'random mm':>10} {'rows mm':>9} {'ours mm':>9} {'random/ours':>12} {'seconds':>8}"
    if can_route:
        head += f" {'route completes':>16}"
    print(head)
    for size in args.sizes:
        rows = []
        for seed in range(1, args.seeds + 1):
            gen = board_for(size, seed)
            rows_hpwl = total_hpwl(gen)
            board = gen.copy()
            board.parts = [p if p.fixed else replace(p, at=None) for p in board.parts]
            t = time.perf_counter()
            res = place(board, seed=seed)
            secs = time.perf_counter() - t
            done = None
            if can_route and (args.route_up_to is None or len(board.parts) <= args.route_up_to):
                done = not route(res.board, seed=0).failed
            rows.append((len(board.parts), len(res.placed), res.random, rows_hpwl, res.after, secs, done))
        mean = lambda k: sum(r[k] for r in rows if r[k] is not None) / max(1, sum(r[k] is not None for r in rows))
        ratio = sum(r[2] / r[4] for r in rows if r[2]) / max(1, sum(1 for r in rows if r[2]))
        line = (f"{mean(0):6.0f} {mean(1):7.0f} {mean(2):10.1f} {mean(3):9.1f} {mean(4):9.1f} "
                f"{ratio:11.2f}x {mean(5):8.2f}")
        if can_route:
            tried = [r[6] for r in rows if r[6] is not None]
            line += f" {f'{sum(tried)} of {len(tried)}' if tried else 'not tried':>16}"
        print(line, flush=True)
    if not can_route:
        print("(router.negotiate is not built in this version: no routing column)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
