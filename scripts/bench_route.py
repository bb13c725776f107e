"""Route generated boards of growing size; completion, exact-check violations, bends and seconds.

Usage: python scripts/bench_route.py [--quick] [--layers 2] [--seeds 1] [--big | --big-only]
                                    [--pads 1300 [--real-nets 150] [--enclosed 3] [--commit REV [--limit S]]]

For each board: nets, grid cells (layers x nx x ny), nets routed, violations found by
the independent exact check (router.check, shapely geometry, not the router's grid),
bends (turns at vias and jumper ends included) against the per-net path bound (a two-pad
net whose pads share no x or y range must bend at least once), vias and jumpers, length
against the length lower bound, seconds (wall clock and the routing process's CPU time, which a busy shared machine disturbs
less), CPU seconds per million (nets x cells) as a ratio to the smallest board of the same run:
near 1 everywhere means time grows linearly in nets x cells. Each board is routed in a
process of its own, so the memory columns are that board's: the resident memory after the
board was made and the peak while routing it (resource.getrusage, MB), and the peak above
the base per million grid cells; with ``--trace-memory``, also the peak of Python and numpy allocations while
routing (tracemalloc, MB).
``--big`` routes one 160 x 100 mm two-layer board at a 0.1 mm grid (3.2 million cells) too;
``--big-only`` only that one after the smallest board (the reference).
``--pads N`` routes real-looking boards (:mod:`router.realgen`) of about N pads and ``--real-nets``
nets instead, once as generated and once with ``--enclosed`` pads walled in by keepouts (no
route can reach them: found once and reported), after a real-looking board of 30 nets as the
reference of the seconds per (nets x cells) ratio (its seconds printed first, as the reference line).
With ``--commit REV``, each of those boards (written to a file and read back) is routed by the
router of REV too, in a checkout ``/tmp/elbowroom-REV`` (``git worktree add``, as
``scripts/stress_real.py`` does) and a process of its own, stopped after ``--limit`` seconds: its
wall and CPU seconds, routed nets and vias beside today's, and today's CPU seconds over REV's.
"""
from __future__ import annotations

import argparse
import resource
import sys
import tracemalloc
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from router.boardgen import generate_board  # noqa: E402
from router.check import check  # noqa: E402
from router.negotiate import route_board  # noqa: E402

SIZES = [  # nets, board size in mm
    (10, (30.0, 25.0)),
    (25, (45.0, 35.0)),
    (50, (60.0, 45.0)),
    (80, (80.0, 60.0)),
    (120, (100.0, 80.0)),
    (200, (100.0, 80.0)),
]


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="only the three smallest sizes")
    ap.add_argument("--layers", type=int, default=2, choices=(1, 2))
    ap.add_argument("--seeds", type=int, default=1, help="boards per size")
    ap.add_argument("--offgrid", action="store_true", help="parts off the routing grid")
    ap.add_argument("--big", action="store_true", help="also a 160 x 100 mm board at a 0.1 mm grid (3.2 M cells)")
    ap.add_argument("--big-only", action="store_true", help="only the smallest board (the reference) and the big one")
    ap.add_argument("--pads", type=int, metavar="N",
                    help="only real-looking boards (router.realgen) of about N pads and --real-nets nets, "
                         "with and without --enclosed pads no route can reach")
    ap.add_argument("--real-nets", type=int, default=150)
    ap.add_argument("--enclosed", type=int, default=3, help="walled-in pads on the second --pads board")
    ap.add_argument("--commit", metavar="REV", help="--pads: route the same boards with the router of REV too")
    ap.add_argument("--limit", type=float, default=600.0, metavar="S",
                    help="--commit: stop REV's routing of one board after S seconds (default 600)")
    ap.add_argument("--trace-memory", action="store_true", help="peak allocations per board (tracemalloc; slower)")
    ap.add_argument("--bend-penalty", type=float, default=None, metavar="B",
                    help="cost of one bend in mm of trace (default: route's default)")
    ap.add_argument("--route-seed", type=int, default=None, metavar="S",
                    help="route every board with this seed (default: the board's seed)")
    args = ap.parse_args(argv)
    if args.pads:
        return real_pads(args)
    sizes = [(n, s, 0.25) for n, s in (SIZES[:1] if args.big_only else SIZES[:3] if args.quick else SIZES)]
    if args.big or args.big_only:
        sizes.append((60, (160.0, 100.0), 0.1))
    print(f"{'nets':>5} {'size mm':>11} {'cells':>9} {'routed':>8} {'viol':>5} {'bends':>6} {'b.bound':>7} "
          f"{'vias':>5} {'jumps':>5} "
          f"{'len/bound':>9} {'passes':>6} {'seconds':>8} {'cpu s':>7} {'s/(n*c) ratio':>13} {'base MB':>7} {'peak MB':>7} "
          f"{'MB/Mcell':>8} {'traced':>6}")
    ref = None
    worst = 0
    for nets, size, grid in sizes:
        for seed in range(args.seeds):
            spec = dict(kind="gen", seed=seed, nets=nets, size=size, layers=args.layers, offgrid=args.offgrid,
                        grid=grid, route_seed=seed if args.route_seed is None else args.route_seed,
                        bend=args.bend_penalty, trace=args.trace_memory)
            m = _in_own_process(spec)
            per = m["cpu"] / (m["nets"] * m["cells"]) * 1e6
            ref = per if ref is None else ref
            worst += m["viol"] + (m["nets"] - m["routed"])
            t = m["totals"]
            lr = t["length"] / t["length_lower_bound"] if t["length_lower_bound"] else float("nan")
            print(f"{m['nets']:>5} {size[0]:>5.0f}x{size[1]:<5.0f} {m['cells']:>9} {m['routed']:>4}/{m['nets']:<3} "
                  f"{m['viol']:>5} {t['bends']:>6} {m['bound']:>7} {t['vias']:>5} {t['jumpers']:>5} {lr:>9.3f} "
                  f"{m['passes']:>6} {m['seconds']:>8.2f} {m['cpu']:>7.2f} {per / ref:>13.2f} {m['base_mb']:>7.0f} {m['peak_mb']:>7.0f} "
                  f"{(m['peak_mb'] - m['base_mb']) / m['cells'] * 1e6:>8.0f} {m['traced']:>6}",
                  flush=True)
            for net, why in m["failed"].items():
                print(f"      not routed: {net}: {why}")
    return 0 if worst == 0 else 1


def _in_own_process(spec: dict) -> dict:
    """Route one board in a fresh process (its peak memory is that board's alone)."""
    import multiprocessing
    with multiprocessing.get_context("spawn").Pool(1) as pool:
        return pool.apply(_route_one, (spec,))


def _route_one(spec: dict) -> dict:
    """Make, route and check one board; seconds, figures, cells and memory (in the calling process)."""
    from router.grid import RoutingGrid
    route_board(generate_board(99, nets=5, size=(20.0, 15.0), layers=spec.get("layers", 2)))   # load the kernel first
    if spec["kind"] == "gen":
        b = generate_board(spec["seed"], nets=spec["nets"], size=spec["size"], layers=spec["layers"],
                           offgrid=spec["offgrid"], max_pins=4, grid=spec["grid"])
    else:
        from router.realgen import real_board
        b = real_board(spec["seed"], spec["nets"], pads=spec.get("pads"), enclosed=spec.get("enclosed", 0))
    base = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024      # kB on Linux
    gr = RoutingGrid(b)
    cells = gr.L * gr.nx * gr.ny
    del gr
    if spec.get("trace"):
        tracemalloc.start()
    t0, c0 = time.perf_counter(), time.process_time()
    r = route_board(b, seed=spec.get("route_seed", spec["seed"]), bend_penalty=spec.get("bend"))
    dt, cpu = time.perf_counter() - t0, time.process_time() - c0
    traced = "-"
    if spec.get("trace"):
        traced = f"{tracemalloc.get_traced_memory()[1] / 2**20:.0f}"
        tracemalloc.stop()
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    from router.geometry import placed_pads
    t = r.figures["totals"]
    return dict(seconds=dt, cpu=cpu, cells=cells, nets=len(b.nets), pads=len(placed_pads(b)), routed=t["routed"],
                viol=len([v for v in check(r.board) if v.rule != "open"]), totals=t, passes=r.passes,
                bound=sum(n.get("bends_lower_bound_path") or 0 for n in r.figures["nets"]),
                base_mb=base, peak_mb=peak, traced=traced, failed=dict(r.failed))


def real_pads(args) -> int:
    """Real-looking boards of many pads: nets, pads, cells, routed, violations, vias, seconds, memory."""
    ref_dir = None
    if args.commit:
        sys.path.insert(0, str(Path(__file__).resolve().parent))
        from stress_real import ensure_baseline
        ref_dir = Path(f"/tmp/elbowroom-{args.commit}")
        ensure_baseline(ref_dir, args.commit)
    print(f"{'pads':>5} {'nets':>5} {'enclosed':>8} {'cells':>8} {'routed':>8} {'viol':>5} {'vias':>5} "
          f"{'passes':>6} {'seconds':>8} {'cpu s':>7} {'s/(n*c) ratio':>13} {'base MB':>7} {'peak MB':>7} {'MB/Mcell':>8} "
          f"{'traced':>6}" + (f" | {'ref routed':>10} {'vias':>5} {'seconds':>8} {'cpu s':>8} {'cpu/ref':>7}"
                               if ref_dir else ""))
    bad = 0
    ref = None
    runs = [(0, 30, None, 0)]                        # the reference: a real-looking board of 30 nets
    runs += [(seed, args.real_nets, args.pads, enclosed) for seed in range(args.seeds) for enclosed in (0, args.enclosed)]
    for seed, nets, pads, enclosed in runs:
        m = _in_own_process(dict(kind="real", seed=seed, nets=nets, pads=pads, enclosed=enclosed,
                                 trace=args.trace_memory))
        per = m["cpu"] / (m["nets"] * m["cells"]) * 1e6
        if ref is None:
            ref = per
            print(f"reference (this run): the {m['nets']}-net board below, {m['cpu']:.2f} CPU s, "
                  f"{m['seconds']:.2f} s wall; ratio = CPU s per (nets x cells) over its")
        bad += m["viol"]
        line = (f"{m['pads']:>5} {m['nets']:>5} {enclosed:>8} {m['cells']:>8} {m['routed']:>4}/{m['nets']:<3} "
                f"{m['viol']:>5} {m['totals']['vias']:>5} {m['passes']:>6} {m['seconds']:>8.2f} {m['cpu']:>7.2f} "
                f"{per / ref:>13.2f} "
                f"{m['base_mb']:>7.0f} {m['peak_mb']:>7.0f} {(m['peak_mb'] - m['base_mb']) / m['cells'] * 1e6:>8.0f} "
                f"{m['traced']:>6}")
        if ref_dir:
            o = _route_at(ref_dir, seed, nets, pads, enclosed, args.limit)
            if "error" in o:
                line += f" | {o['error']}"
            else:
                line += (f" | {o['routed']:>6}/{m['nets']:<3} {o['vias']:>5} {o['seconds']:>8.2f} {o['cpu']:>8.2f} "
                         f"{m['cpu'] / o['cpu']:>7.2f}")
        print(line, flush=True)
        for net, why in m["failed"].items():
            print(f"      not routed: {net}: {why}")
    return 0 if bad == 0 else 1


_REF_WORKER = r"""
import json, sys, time
from router import load_board
from router.negotiate import route_board
b = load_board(sys.argv[1])
t, c = time.perf_counter(), time.process_time()
r = route_board(b)
print(json.dumps(dict(seconds=time.perf_counter() - t, cpu=time.process_time() - c,
                      routed=r.figures["totals"]["routed"], vias=r.figures["totals"]["vias"])))
"""


def _route_at(checkout: Path, seed: int, nets: int, pads, enclosed: int, limit: float) -> dict:
    """One board routed by the router in `checkout` (its own process, at most `limit` seconds)."""
    import json
    import os
    import subprocess
    import tempfile
    from router.boardfile import dumps_board
    from router.realgen import real_board
    with tempfile.TemporaryDirectory() as td:
        src = Path(td) / "board.toml"
        src.write_text(dumps_board(real_board(seed, nets, pads=pads, enclosed=enclosed)))
        env = dict(os.environ, PYTHONPATH=str(checkout))
        try:
            p = subprocess.run([sys.executable, "-c", _REF_WORKER, str(src)], env=env, capture_output=True,
                               text=True, cwd=td, timeout=limit)
        except subprocess.TimeoutExpired:
            return {"error": f"not done in {limit:.0f} s"}
    if p.returncode != 0:
        return {"error": (p.stderr.strip().splitlines() or ["failed"])[-1][:60]}
    return json.loads(p.stdout.strip().splitlines()[-1])


if __name__ == "__main__":
    sys.exit(main())
