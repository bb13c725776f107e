"""bench_newsize: does the board size that `elbowroom new` estimates leave room to place and route?

Boards come from router.boardgen (through-hole and chip parts, two layers and one) and
router.realgen (0.5/0.65 mm pitch parts with passives and fine connectors, two layers). Every
part loses its place; the outline becomes the rectangle router.csvboard.estimate_size gives
for each routing factor tried; then `place` (seed 0), `route` (seed 0) and the exact `check`
run on it. Printed per source and factor: boards that place, boards routed completely with no
violation, the mean board area, and the mean area over the parts' own rectangles.

    python scripts/bench_newsize.py                         # factors 1.5 2 2.5, 3 seeds a source
    python scripts/bench_newsize.py --factors 1.25 1.5 2 3 --seeds 5 -v
"""
from __future__ import annotations

import argparse
import sys
import time
from dataclasses import replace
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from placement import place                            # noqa: E402
from router import check, route                        # noqa: E402
from router.boardgen import generate_board             # noqa: E402
from router.csvboard import ROUTING_FACTOR, estimate_size   # noqa: E402
from router.errors import BoardError                   # noqa: E402
from router.geometry import part_rect                  # noqa: E402
from router.realgen import real_board                  # noqa: E402


def unplaced(board):
    """The board with every part unplaced and no copper."""
    b = board.copy()
    b.parts = [replace(p, at=None, fixed=False, rotation=0) for p in b.parts]
    b.traces, b.vias, b.jumpers, b.keepouts, b.pours = [], [], [], [], []
    return b


def sources(seeds: int):
    for s in range(1, seeds + 1):
        yield "boardgen 2 layers, 20 nets", generate_board(s, nets=20)
        yield "boardgen 2 layers, 40 nets", generate_board(s, nets=40, size=(80.0, 60.0))
        yield "boardgen 1 layer, 15 nets", generate_board(s, nets=15, layers=1)
        yield "realgen 2 layers, about 25 nets", real_board(s, nets=25)


def trial(board, factor):
    """(placed, complete and clean, area, parts' own area, seconds)."""
    b = unplaced(board)
    w, h = estimate_size(b, factor)
    b.size, b.outline = (w, h), [(0.0, 0.0), (w, 0.0), (w, h), (0.0, h)]
    own = 0.0
    for p in b.parts:
        x0, y0, x1, y1 = part_rect(b, p, at=(0.0, 0.0), rotation=0)
        own += (x1 - x0) * (y1 - y0)
    t = time.perf_counter()
    try:
        placed = place(b, seed=0, random_baseline=False).board
    except BoardError:
        return False, False, w * h, own, time.perf_counter() - t
    result = route(placed, seed=0)
    clean = not result.failed and not check(result.board)
    return True, clean, w * h, own, time.perf_counter() - t


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--factors", type=float, nargs="+", default=[1.5, 2.0, 2.5])
    ap.add_argument("--seeds", type=int, default=3)
    ap.add_argument("-v", "--verbose", action="store_true", help="a line per trial as it ends")
    args = ap.parse_args(argv)
    print(f"routing factor in use: {ROUTING_FACTOR}")
    rows: dict[tuple[str, float], list] = {}
    for label, board in sources(args.seeds):
        for f in args.factors:
            r = trial(board, f)
            rows.setdefault((label, f), []).append(r)
            if args.verbose:
                print(f"  {label}, factor {f:g}: placed {r[0]}, clean {r[1]}, {r[2]:.0f} mm^2, {r[4]:.1f} s",
                      flush=True)
    print(f"{'source':<34} {'factor':>6} {'placed':>7} {'clean':>6} {'mm^2':>7} {'board/parts':>12} {'s':>6}")
    for (label, f), rs in rows.items():
        n = len(rs)
        area = sum(r[2] for r in rs) / n
        ratio = sum(r[2] / r[3] for r in rs) / n
        print(f"{label:<34} {f:>6g} {sum(r[0] for r in rs):>3}/{n:<3} {sum(r[1] for r in rs):>2}/{n:<3} "
              f"{area:>7.0f} {ratio:>12.2f} {sum(r[4] for r in rs) / n:>6.1f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
