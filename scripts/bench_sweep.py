"""Sweep speed: 24 routing tasks on 1 and on 2 local worker processes, against a bare route.

    python scripts/bench_sweep.py [--board boards/starter-blinker.toml] [--tasks 24] [--workers 1 2]

Everything is measured in the same run:

- the reference: each task's routing done here in this process with ``router.route`` alone
  (warm: one route first, not counted), the sum of their times;
- each worker count: the same tasks through :class:`explore.runners.LocalRunner` (TOML text
  out and back, a process per worker, ``check`` of every result), wall time from the first
  task sent to the last result back; starting the workers is timed apart;
- speed-up = wall(1 worker) / wall(N workers); overhead per task = (wall(1 worker) - bare
  total) / tasks, also as a share of the bare route.

The results of every worker count must be the same bytes; the script says so. The machine's
cores and load average are printed beside the figures, since other work on the machine
takes cores from the workers.
"""
from __future__ import annotations

import argparse
import os
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from explore.runners import LocalRunner, default_jobs  # noqa: E402
from explore.sweep import combinations  # noqa: E402
from explore.tasks import Task, parse_result  # noqa: E402
from router import route  # noqa: E402
from router.boardfile import dumps_board, load_board  # noqa: E402


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--board", default=str(Path(__file__).resolve().parents[1] / "boards" / "starter-blinker.toml"))
    ap.add_argument("--tasks", type=int, default=24)
    ap.add_argument("--workers", type=int, nargs="+", default=[1, 2])
    args = ap.parse_args(argv)
    text = Path(args.board).read_text(encoding="utf-8")
    board = load_board(args.board)
    seeds = list(range((args.tasks + 2) // 3))
    combos = combinations(seeds, [0.5, 1.0, 2.0], [2.0])[:args.tasks]
    tasks = [(tid, Task(tid, text, seed=s, bend_penalty=b, via_penalty=v).text()) for tid, s, b, v in combos]
    print(f"board {args.board}: {len(board.parts)} parts, {len(board.nets)} nets; {len(tasks)} tasks "
          f"(seeds x bend penalties); {default_jobs()} cores, load average {os.getloadavg()[0]:.1f} at start")

    route(board, seed=0)                                # warm: the compiled kernels loaded
    bare, bare_boards = 0.0, {}
    for tid, s, b, v in combos:
        t = time.perf_counter()
        res = route(board, seed=s, bend_penalty=b, via_penalty=v)
        bare += time.perf_counter() - t
        bare_boards[tid] = dumps_board(res.board)
    print(f"bare route in this process: {bare:.2f} s in all, {bare / len(tasks):.3f} s per task")

    walls, outs = {}, {}
    for n in args.workers:
        t = time.perf_counter()
        with LocalRunner(n) as runner:
            started = time.perf_counter() - t
            t = time.perf_counter()
            out = runner.run(tasks)
            walls[n] = time.perf_counter() - t
        outs[n] = {k: parse_result(v).board for k, v in out.results.items()}
        busy = sum(parse_result(v).seconds for v in out.results.values())
        print(f"{n} worker{'s' if n != 1 else ' '}: {walls[n]:.2f} s wall ({walls[n] / len(tasks):.3f} s per task), "
              f"tasks busy {busy:.2f} s, {len(out.failed)} failed; workers started in {started:.2f} s "
              f"(not counted); load average {os.getloadavg()[0]:.1f}")
    first = args.workers[0]
    same = all(outs[n] == outs[first] for n in args.workers) and outs[first] == bare_boards
    print(f"results the same bytes for every worker count and the bare route: {'yes' if same else 'NO'}")
    if 1 in walls:
        over = (walls[1] - bare) / len(tasks)
        print(f"overhead per task, 1 worker against the bare route: {over:+.3f} s ({100 * over / (bare / len(tasks)):+.1f} %)"
              " (text out and back, the check of each result, the process hop)")
        for n in args.workers:
            if n != 1:
                print(f"speed-up on {n} workers: {walls[1] / walls[n]:.2f}x (ideal {min(n, default_jobs())}x)")
    return 0 if same else 1


if __name__ == "__main__":
    sys.exit(main())
