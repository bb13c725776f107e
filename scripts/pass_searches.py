"""The searches of one negotiation pass on a real-looking board: how many, their seconds, states.

Usage: python scripts/pass_searches.py [--pads 1300] [--nets 150] [--seed 0]

Routes ``router.realgen.real_board(seed, nets, pads=pads)`` with ``route_board`` until the end of
its first negotiation pass, timing every ``router.search.find_path`` call the nets make (wall
seconds around each call), and prints the number of searches, their total seconds, the states
they expanded (mean and largest) and the five slowest. Run it in another checkout (``cd`` there,
the same Python) to measure that router's searches on the same board: the ratio is the figure.
"""
from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path.cwd()))


class _PassDone(Exception):
    pass


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--pads", type=int, default=1300)
    ap.add_argument("--nets", type=int, default=150)
    ap.add_argument("--seed", type=int, default=0)
    args = ap.parse_args(argv)
    import numpy as np
    from router import negotiate, nets as netsmod
    from router.boardgen import generate_board
    from router.realgen import real_board
    negotiate.route_board(generate_board(99, nets=5, size=(20.0, 15.0)))      # load the kernel first
    log = []
    find = netsmod.find_path

    def timed(space, sources, targets, **kw):
        t = time.perf_counter()
        p = find(space, sources, targets, **kw)
        log.append((time.perf_counter() - t, -1 if p is None else p.expanded, -1 if p is None else len(p.cells)))
        return p

    def stop(self):
        raise _PassDone

    netsmod.find_path = timed
    negotiate._Negotiation.conflicts = stop          # called once, at the end of the first pass
    board = real_board(args.seed, args.nets, pads=args.pads)
    try:
        negotiate.route_board(board, seed=0)
    except _PassDone:
        pass
    a = np.array(log, dtype=float).reshape(-1, 3)
    found = a[a[:, 1] >= 0]
    print(f"router at {Path.cwd()}: {len(a)} searches in pass 1, {a[:, 0].sum():.2f} s, "
          f"{len(a) - len(found)} found no path; states per search mean {found[:, 1].mean():.0f}, "
          f"largest {found[:, 1].max():.0f}")
    for sec, states, cells in a[np.argsort(-a[:, 0])[:5]]:
        print(f"  {sec:7.3f} s  {states:9.0f} states  path of {cells:.0f} cells")
    return 0


if __name__ == "__main__":
    sys.exit(main())
