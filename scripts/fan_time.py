"""The seconds of the fan-out with the supplies in one routing of a real-looking board, in this
checkout or another (its router first on sys.path).

Usage: python scripts/fan_time.py BOARD NETS [--angled] [--checkout DIR]

Routes ``router.realgen.real_board(BOARD, NETS, angled=...)`` (through ``dumps_board`` and
``loads_board``, as scripts/stress_real.py does) with ``route_board(seed=0)`` and prints one JSON
line: wall and CPU seconds, the seconds spent in ``negotiate._fan_with_supplies`` (summed over
the whole-board tries) and its calls, the nets lost, the vias and the first 16 hex of the sha256
of the written board (the same digest: the same board). Run it for DIR and for this checkout one
after the other to compare (CPU seconds: the load moves wall seconds by several per cent).
"""
from __future__ import annotations

import argparse
import hashlib
import json
import sys
import time
from pathlib import Path


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("board", type=int)
    ap.add_argument("nets", type=int)
    ap.add_argument("--angled", action="store_true")
    ap.add_argument("--checkout", type=Path, default=Path(__file__).resolve().parent.parent)
    args = ap.parse_args()
    sys.path.insert(0, str(args.checkout.resolve()))
    import router.negotiate as negotiate
    from router.boardfile import dumps_board, loads_board
    from router.realgen import real_board
    spent = [0.0, 0]
    step = negotiate._fan_with_supplies

    def timed(*a, **kw):
        t = time.perf_counter()
        try:
            return step(*a, **kw)
        finally:
            spent[0] += time.perf_counter() - t
            spent[1] += 1

    negotiate._fan_with_supplies = timed
    board = loads_board(dumps_board(real_board(args.board, args.nets, angled=args.angled)))
    c0, t0 = time.process_time(), time.perf_counter()
    r = negotiate.route_board(board, seed=0)
    print(json.dumps({"checkout": str(args.checkout), "board": args.board, "nets": args.nets,
                      "angled": args.angled, "wall": round(time.perf_counter() - t0, 1),
                      "cpu": round(time.process_time() - c0, 1), "step_s": round(spent[0], 2),
                      "step_calls": spent[1], "lost": sorted(r.failed), "vias": len(r.board.vias),
                      "digest": hashlib.sha256(dumps_board(r.board).encode()).hexdigest()[:16]}), flush=True)
    return 0


if __name__ == "__main__":
    sys.exit(main())
