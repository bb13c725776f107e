"""Where one routing of a real-looking board spends its time: each negotiation pass, then each step after.

Usage: python scripts/route_phases.py [--pads 1300] [--nets 150] [--seed 0] [--enclosed 0] [--retries 0]

Routes ``router.realgen.real_board(seed, nets, pads=pads, enclosed=enclosed)`` with ``route_board``
(``retries`` other net orders at most; 0: one order) and prints, as they end, each negotiation
pass (nets and cells still shared, wall seconds), the nets lost after the walls, after the local
re-order (big boards) and after repair, and the wall seconds of repair, polish, the two via passes,
writing and the exact check; then the totals. Wall seconds on a shared machine: compare runs made
one after the other, in this checkout and (``cd`` there, the same Python) another.
"""
from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path.cwd()))


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--pads", type=int, default=1300, help="0: the generator's own count (as stress_real)")
    ap.add_argument("--nets", type=int, default=150)
    ap.add_argument("--seed", type=int, default=0)
    ap.add_argument("--enclosed", type=int, default=0)
    ap.add_argument("--retries", type=int, default=0)
    ap.add_argument("--route-seed", type=int, default=None,
                    help="route_board's seed (default: --seed; stress_real routes every board with 0)")
    ap.add_argument("--angled", action="store_true", help="arc corners and 45-degree capacitors (as stress_real --angled)")
    ap.add_argument("--grid", type=float, default=None, help="route on this grid pitch in mm (as stress_real --grid)")
    args = ap.parse_args(argv)
    from router import negotiate
    from router.boardgen import generate_board
    from router.realgen import real_board
    negotiate.route_board(generate_board(99, nets=5, size=(20.0, 15.0)))      # load the kernel first
    t0 = time.perf_counter()
    state = {"pass": 0, "t": t0, "in_pass": True}

    def timed(name):
        f = getattr(negotiate, name)

        def g(*a, **kw):
            state["in_pass"] = False
            t = time.perf_counter()
            out = f(*a, **kw)
            print(f"  [{time.perf_counter() - t0:7.1f} s] {name.strip('_')}: {time.perf_counter() - t:.1f} s", flush=True)
            return out
        setattr(negotiate, name, g)

    for name in ("_polish", "_fewer_vias", "_move_blockers", "_write", "_settle"):
        timed(name)
    for name in ("_reorder_local", "_repair"):
        if hasattr(negotiate, name):
            f = getattr(negotiate, name)

            def g(neg, lost, *a, _f=f, _n=name.strip("_"), **kw):
                state["in_pass"] = False
                t = time.perf_counter()
                n0 = len(lost)
                _f(neg, lost, *a, **kw)
                print(f"  [{time.perf_counter() - t0:7.1f} s] {_n}: {time.perf_counter() - t:.1f} s, "
                      f"nets lost {n0} -> {len(lost)}", flush=True)
            setattr(negotiate, name, g)
    attempt = negotiate._attempt

    def each_order(*a, **kw):
        state.update({"pass": 0, "t": time.perf_counter(), "in_pass": True})
        out = attempt(*a, **kw)
        print(f"  [{time.perf_counter() - t0:7.1f} s] order {a[3] + 1}: {len(out[1])} nets lost", flush=True)
        return out
    negotiate._attempt = each_order
    conflicts = negotiate._Negotiation.conflicts

    def counted(self, *a, **kw):
        out = conflicts(self, *a, **kw)
        if state["in_pass"] and state.pop("routed", False):     # the negotiation's call, once per pass
            now = time.perf_counter()
            state["pass"] += 1
            print(f"  [{now - t0:7.1f} s] pass {state['pass']}: {len(out[0])} nets share "
                  f"{sum(out[0].values())} cells, {now - state['t']:.1f} s", flush=True)
            state["t"] = now
        return out
    negotiate._Negotiation.conflicts = counted
    route = negotiate._Negotiation.route

    def routing(self, *a, **kw):
        state["routed"] = True
        return route(self, *a, **kw)
    negotiate._Negotiation.route = routing
    board = real_board(args.seed, args.nets, pads=args.pads or None, enclosed=args.enclosed,
                       angled=args.angled)
    if args.grid is not None:
        board.rules.grid = args.grid
    t0 = time.perf_counter()
    r = negotiate.route_board(board, seed=args.seed if args.route_seed is None else args.route_seed,
                              retries=args.retries)
    t = r.figures["totals"]
    print(f"router at {Path.cwd()}: {time.perf_counter() - t0:.1f} s wall, {t['routed']}/{len(board.nets)} "
          f"routed, {t['vias']} vias, {r.passes} passes")
    for net, why in r.failed.items():
        print(f"  not routed: {net}: {why}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
