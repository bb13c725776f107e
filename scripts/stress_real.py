"""Route real-looking generated boards (router.realgen) and compare with a reference router.

Usage::

    python scripts/stress_real.py (--seeds A B [--nets N ...] | --boards SEED:NETS ...) [--baseline DIR | --no-baseline]
                                  [--commit REV] [--save DIR] [--angled] [--generated] [--grid MM] [--mil] [--via-penalty V]
                                  [--same-task]

Each seed in ``A .. B-1`` makes one board with ``real_board(seed, nets)`` (the nets cycle through
``--nets``, default 30 60 100 150 200; ``--boards 6:120 17:100`` routes just those boards; ``--grid``
routes it on another pitch; ``--mil`` gives it the inch-based grid and classes of many real designs). The board is routed in this process with today's code,
and, unless ``--no-baseline``, by the router of another checkout (``--baseline DIR``, default
``/tmp/elbowroom-baseline`` for REV 9bd7d45, the router before pad escape, else
``/tmp/elbowroom-REV``; made with ``git worktree add DIR REV`` when missing, and refused when it holds
another commit; ``--commit 913f18d`` is the router before the via pass that moves other nets) in a
subprocess whose PYTHONPATH points at it. Both routed
boards are checked by today's ``check`` (one judge for both). One line per board:

    seed  nets  pads  | routed  violations  vias  bound  v1  necks  esc  seconds | baseline routed  violations  vias  seconds | both  vias  base

(bound: the vias the nets' pad layers force, ``bounds.vias_lower_bound``; v1: today's vias on nets
whose pads all lie on one layer, which could route with none; esc: escape vias beside surface pads,
``figures`` ``escape_vias``; both: the nets both routers routed,
with today's and the baseline's vias on just those nets, as a router that leaves hard nets unrouted
also leaves their vias out)

each followed by today's unrouted nets with their reasons, and a totals line.

``--same-task`` gives both routers one task they both complete: each board cut down to the nets the
baseline routed (the others' pads stay on their parts as copper of no net; cut again, at most three
times, while the baseline leaves a net of the cut board), routed by both, with a line

    same task: nets | today routed, vias | baseline routed, vias

under the board and the vias of both on it in the totals. On the whole board the nets only today's
router reaches (fine-pitch pads) take room the others crossed in before, so the nets both routed
there are not the same task. The exit status is 0
when every board routes completely with no violation.
"""
from __future__ import annotations

import argparse
import copy
import json
import os
import re
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from router.boardfile import dumps_board, loads_board   # noqa: E402
from router.check import check                          # noqa: E402
from router.geometry import placed_pads                 # noqa: E402
from router.negotiate import route_board                # noqa: E402
from router.boardgen import generate_board              # noqa: E402
from router.realgen import real_board                   # noqa: E402

WORKER = r"""
import json, sys, time
from router import load_board, save_board
from router.negotiate import route_board
b = load_board(sys.argv[1])
t = time.perf_counter()
r = route_board(b)
dt = time.perf_counter() - t
save_board(r.board, sys.argv[2])
print(json.dumps({"seconds": dt}))
"""


def ensure_baseline(path: Path, rev: str) -> None:
    if not (path / "router" / "negotiate.py").exists():
        subprocess.run(["git", "-C", str(ROOT), "worktree", "add", "--detach", str(path), rev], check=True,
                       stdout=subprocess.DEVNULL)
    head = subprocess.run(["git", "-C", str(path), "rev-parse", "HEAD"], capture_output=True, text=True).stdout.strip()
    want = subprocess.run(["git", "-C", str(ROOT), "rev-parse", rev + "^{commit}"], capture_output=True,
                          text=True).stdout.strip()
    if not head:
        print(f"note: {path} is not a git checkout; taken as {rev} unchecked", file=sys.stderr)
    elif head != want:
        sys.exit(f"stress_real.py: {path} holds {head[:7]}, not {rev}: "
                 f"give --baseline another folder or remove that worktree")


def figures(board, seconds: float) -> dict:
    from router.figures import board_figures
    t = board_figures(board)["totals"]
    viol = [v for v in check(board) if v.rule != "open"]
    from router.connectivity import routed
    per_net: dict = {}
    for v in board.vias:
        per_net[v.net] = per_net.get(v.net, 0) + 1
    return {"routed": t["routed"], "nets": t["nets"], "violations": len(viol), "vias": t["vias"],
            "seconds": seconds, "joined": {n for n, ok in routed(board).items() if ok}, "net_vias": per_net,
            "bends": t["bends"], "length": t["length"], "necks": t.get("necks", 0), "escape_vias": t.get("escape_vias", 0), "vias_bound": t.get("vias_lower_bound", 0),
            "vias_one_layer": t.get("vias_on_one_layer_nets", 0)}


def run_baseline(path: Path, text: str, tmp: Path, seed: int):
    src, out = tmp / f"real-{seed}.toml", tmp / f"real-{seed}-base.toml"
    env = dict(os.environ, PYTHONPATH=str(path))
    for _ in range(8):
        src.write_text(text)
        p = subprocess.run([sys.executable, "-c", WORKER, str(src), str(out)], env=env, capture_output=True,
                           text=True, cwd=str(tmp))
        last = (p.stderr.strip().splitlines() or ["failed"])[-1]
        # a field added to the file format since the reference: written at its default, so dropped
        m = re.search(r"unknown field '(\w+)'", last)
        if p.returncode == 0 or not m:
            break
        text = re.sub(rf"(?m)^{m.group(1)} = .*\n", "", text)
    if p.returncode != 0 or not out.exists():
        return {"error": last}
    seconds = json.loads(p.stdout.strip().splitlines()[-1])["seconds"]
    return figures(loads_board(out.read_text()), seconds)


def cut_board(made, keep):
    """A copy of `made` with only the nets named in `keep`; the pads of the others stay on their parts
    as copper of no net, so a router of the cut board goes round the same obstacles."""
    cut = copy.deepcopy(made)
    cut.nets = [n for n in cut.nets if n.name in keep]
    return cut


def same_task(made, base: dict, baseline: Path, tmp: Path, seed: int, via_penalty=None, rounds: int = 3):
    """Both routers on `made` cut down to the nets the baseline (the checkout at `baseline`) completed,
    `base` being its figures on the whole board: (nets, today's routed, today's vias, the baseline's
    routed, its vias). Cut again while the baseline leaves a net of the cut board, at most `rounds`
    times; None when no net is left or the baseline fails."""
    joined = base["joined"]
    for _ in range(rounds):
        cut = cut_board(made, joined)
        if not cut.nets:
            return None
        text = dumps_board(cut)
        b = run_baseline(baseline, text, tmp, seed)
        if "error" in b:
            return None
        if b["routed"] == b["nets"]:
            break
        joined = b["joined"]
    r = route_board(loads_board(text), seed=0, via_penalty=via_penalty)
    o = figures(r.board, 0.0)
    return (len(cut.nets), o["routed"], o["vias"], b["routed"], b["vias"])


def _generated_size(nets: int) -> tuple:
    """bench_route's board size for a generated board of `nets` nets."""
    for most, size in ((10, (30.0, 25.0)), (25, (45.0, 35.0)), (50, (60.0, 45.0)), (80, (80.0, 60.0))):
        if nets <= most:
            return size
    return (100.0, 80.0)


def _to_mil(board) -> None:
    """`board`'s grid and classes in inch-based sizes (--mil), in place."""
    board.rules.grid = 0.254
    for cls in board.classes.values():
        cls.trace_width = 0.508 if cls.trace_width > 0.3 else 0.254
        cls.clearance = 0.2032


def _board_spec(text: str) -> tuple:
    """SEED:NETS (--boards) as (seed, nets)."""
    try:
        seed, nets = (int(v) for v in text.split(":"))
    except ValueError:
        raise argparse.ArgumentTypeError(f"{text!r}: give a board as SEED:NETS, e.g. 6:120") from None
    if nets < 1:
        raise argparse.ArgumentTypeError(f"{text!r}: a board needs at least one net")
    return seed, nets


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--seeds", nargs=2, type=int, default=[0, 5], metavar=("A", "B"))
    ap.add_argument("--nets", nargs="+", type=int, default=[30, 60, 100, 150, 200])
    ap.add_argument("--boards", nargs="+", type=_board_spec, default=None, metavar="SEED:NETS",
                    help="just these boards, each real_board(SEED, NETS), instead of --seeds and --nets "
                         "(the boards a set lost nets on, measured again against the baseline)")
    ap.add_argument("--baseline", type=Path, default=None,
                    help="the reference checkout (default /tmp/elbowroom-baseline for 9bd7d45, else /tmp/elbowroom-REV)")
    ap.add_argument("--commit", default="9bd7d45")
    ap.add_argument("--no-baseline", action="store_true")
    ap.add_argument("--save", type=Path)
    ap.add_argument("--angled", action="store_true",
                    help="boards with arc outlines and parts at 45 degrees (real_board(angled=True)); "
                         "a baseline from before turned pads cannot read them")
    ap.add_argument("--grid", type=float, default=None,
                    help="route on this grid pitch in mm instead of the generator's 0.25 (real boards "
                         "come with other grids: 0.2, 0.127, 0.1)")
    ap.add_argument("--mil", action="store_true",
                    help="inch-based rules as many real designs use: a 0.254 mm (10 mil) grid unless --grid, signal "
                         "traces 0.254 mm with 0.2032 mm (8 mil) clearance, supplies 0.508 mm (common practice, "
                         "from memory); the parts stay at their metric places, so rows drift across the grid")
    ap.add_argument("--generated", action="store_true",
                    help="router.boardgen's generated boards instead (sizes as bench_route's: 10 nets 30 x 25 mm, "
                         "25 nets 45 x 35, 50 nets 60 x 45, 80 nets 80 x 60, else 100 x 80): boards both routers "
                         "route completely, so vias compare net for net")
    ap.add_argument("--same-task", action="store_true",
                    help="also route, by both routers, each board cut down to the nets the baseline completes "
                         "(its unrouted nets' pads left as netless copper, cut again until it completes them "
                         "all), and compare vias on that one task")
    ap.add_argument("--via-penalty", type=float, default=None, metavar="V",
                    help="today's router with this via penalty in mm (route --via-penalty); the baseline "
                         "keeps its default")
    args = ap.parse_args(argv)
    if args.grid is not None and not 0.05 <= args.grid <= 1.0:
        ap.error(f"--grid {args.grid}: give a pitch between 0.05 and 1.0 mm")
    if args.baseline is None:
        args.baseline = Path("/tmp/elbowroom-baseline" if args.commit == "9bd7d45" else f"/tmp/elbowroom-{args.commit}")
    if not args.no_baseline:
        ensure_baseline(args.baseline, args.commit)
    head = (f"{'seed':>4} {'nets':>4} {'pads':>5} | {'routed':>7} {'viol':>4} {'vias':>4} {'bound':>5} "
            f"{'v1':>4} {'necks':>5} {'esc':>4} {'sec':>6}"
            + ("" if args.no_baseline else f" | {'base routed':>11} {'viol':>4} {'vias':>4} {'sec':>6} "
                                            f"| {'both':>4} {'vias':>4} {'base':>4}"))
    print(head)
    print("-" * len(head))
    tot = {"ours": [0, 0, 0, 0, 0.0, 0, 0.0], "base": [0, 0, 0, 0, 0.0, 0, 0.0]}
    both = [0, 0, 0]                     # nets both routed, today's vias on them, the baseline's
    same = [0, 0, 0, 0, 0]               # same task: nets, today's routed, vias, the baseline's routed, vias
    clean = True
    with tempfile.TemporaryDirectory() as td:
        tmp = Path(td)
        todo = args.boards or [(seed, args.nets[k % len(args.nets)]) for k, seed in enumerate(range(*args.seeds))]
        for seed, n in todo:
            made = (generate_board(seed, nets=n, size=_generated_size(n)) if args.generated
                    else real_board(seed, n, angled=args.angled))
            if args.mil:
                _to_mil(made)
            if args.grid is not None:
                made.rules.grid = args.grid
            text = dumps_board(made)
            board = loads_board(text)
            t0 = time.perf_counter()
            r = route_board(board, seed=0, via_penalty=args.via_penalty)
            ours = figures(r.board, time.perf_counter() - t0)
            if args.save:
                args.save.mkdir(parents=True, exist_ok=True)
                (args.save / f"real-{seed}.toml").write_text(dumps_board(r.board))
            clean &= ours["routed"] == ours["nets"] and ours["violations"] == 0
            line = (f"{seed:>4} {ours['nets']:>4} {len(placed_pads(board)):>5} | "
                    f"{ours['routed']:>3}/{ours['nets']:<3} {ours['violations']:>4} {ours['vias']:>4} "
                    f"{ours['vias_bound']:>5} {ours['vias_one_layer']:>4} {ours['necks']:>5} {ours['escape_vias']:>4} {ours['seconds']:>6.1f}")
            for i, key in enumerate(("routed", "nets", "violations", "vias", "seconds", "bends", "length")):
                tot["ours"][i] += ours[key]
            if not args.no_baseline:
                base = run_baseline(args.baseline, text, tmp, seed)
                if "error" in base:
                    line += f" | error: {base['error'][:60]}"
                else:
                    common = ours["joined"] & base["joined"]
                    vo = sum(ours["net_vias"].get(n, 0) for n in common)
                    vb = sum(base["net_vias"].get(n, 0) for n in common)
                    line += (f" | {base['routed']:>5}/{base['nets']:<5} {base['violations']:>4} {base['vias']:>4} "
                             f"{base['seconds']:>6.1f} | {len(common):>4} {vo:>4} {vb:>4}")
                    for i, key in enumerate(("routed", "nets", "violations", "vias", "seconds", "bends", "length")):
                        tot["base"][i] += base[key]
                    for i, x in enumerate((len(common), vo, vb)):
                        both[i] += x
            print(line, flush=True)
            for n, why in r.failed.items():      # today's unrouted nets and why (route's `failed`)
                print(f"      unrouted {n}: {why}", flush=True)
            if args.same_task and not args.no_baseline and "error" not in base:
                task = same_task(made, base, args.baseline, tmp, seed, args.via_penalty)
                if task is not None:
                    print(f"      same task: {task[0]} nets | today {task[1]}/{task[0]}, {task[2]} vias"
                          f" | baseline {task[3]}/{task[0]}, {task[4]} vias", flush=True)
                    for i, x in enumerate(task):
                        same[i] += x
    o, b = tot["ours"], tot["base"]
    print("-" * len(head))
    print(f"today:    {o[0]}/{o[1]} nets routed, {o[2]} violations, {o[3]} vias, {o[5]} bends, "
          f"{o[6]:.1f} mm, {o[4]:.1f} s")
    if not args.no_baseline:
        print(f"baseline: {b[0]}/{b[1]} nets routed, {b[2]} violations, {b[3]} vias, {b[5]} bends, "
              f"{b[6]:.1f} mm, {b[4]:.1f} s (checkout {args.commit} at {args.baseline})")
        if b[3]:
            print(f"vias today / baseline: {o[3] / b[3]:.2f}")
        if both[2]:
            print(f"on the {both[0]} nets both routed: vias today {both[1]}, baseline {both[2]}, "
                  f"ratio {both[1] / both[2]:.2f}")
        if same[0]:
            print(f"same task ({same[0]} nets, the boards cut down to the nets the baseline completes): "
                  f"today {same[1]}/{same[0]} routed, {same[2]} vias; baseline {same[3]}/{same[0]} routed, "
                  f"{same[4]} vias" + (f"; ratio {same[2] / same[4]:.2f}" if same[4] else ""))
    print("every board complete and clean" if clean else "NOT every board complete and clean")
    return 0 if clean else 1


if __name__ == "__main__":
    sys.exit(main())
