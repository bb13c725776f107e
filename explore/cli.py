"""The ``sweep`` and ``shrink`` commands, registered on the ``elbowroom`` command line.

:func:`add_commands` is called by :func:`router.cli.build_parser`; bad input raises
:class:`~router.errors.BoardError` (one line, exit status 2, as for every command), and
Ctrl-C writes what has finished and exits with status 130.
"""
from __future__ import annotations

import sys
from pathlib import Path

__all__ = ["add_commands"]

EXIT_OK, EXIT_NONE, EXIT_INTERRUPTED = 0, 1, 130


def _where(sp):
    g = sp.add_argument_group("where the work runs")
    g.add_argument("--jobs", type=int, default=None, metavar="N",
                   help="local worker processes (default: this machine's cores)")
    g.add_argument("--cluster", metavar="ADDRESS", default=None,
                   help="send the tasks to a Dask scheduler instead, e.g. tcp://10.0.0.5:8786 "
                        "(pip install 'elbowroom[cluster]')")


def _progress(args) -> bool:
    return (not args.quiet) and (not getattr(args, "json", False)) and sys.stderr.isatty()


def cmd_sweep(args) -> int:
    from .runners import Interrupted, make_runner
    from .sweep import format_sweep, parse_numbers, parse_rank, parse_seeds, run_sweep
    seeds = parse_seeds(args.seeds)
    bends = parse_numbers(args.bend_penalty, "--bend-penalty")
    vias = parse_numbers(args.via_penalty, "--via-penalty")
    rank = parse_rank(args.rank)
    out = Path(args.output)
    if out.exists() and not out.is_dir():
        from router.errors import BoardError
        raise BoardError(str(out), "-o", "is a file; give a folder for the sweep's results")
    with make_runner(args.jobs, args.cluster) as runner:
        try:
            sweep = run_sweep(args.board, out, runner, seeds=seeds, bends=bends, vias=vias, place=args.place,
                              reroute=args.reroute, rank=rank, progress=_progress(args))
        except Interrupted as exc:
            if not args.quiet:
                print(format_sweep(exc.sweep, rank, out))
            print("elbowroom: interrupted; the finished routings are kept", file=sys.stderr)
            return EXIT_INTERRUPTED
    if not args.quiet:
        print(format_sweep(sweep, rank, out))
    return EXIT_OK


def cmd_shrink(args) -> int:
    import json
    from router.safefile import write_atomic
    from .runners import Interrupted, make_runner
    from .shrink import format_shrink, shrink
    with make_runner(args.jobs, args.cluster) as runner:
        try:
            result = shrink(args.board, runner, step=args.step, tries=args.tries, keep_aspect=args.keep_aspect,
                            progress=_progress(args))
            interrupted = False
        except Interrupted as exc:
            result, interrupted = exc.shrink, True
    if result.best is not None:
        write_atomic(args.output, result.board_text)
    if args.json:
        print(json.dumps(dict(result.as_json(), output=args.output if result.best else None), indent=2))
    elif not args.quiet:
        print(format_shrink(result))
        if result.best is not None:
            print(f"wrote {args.output}")
    if interrupted:
        print("elbowroom: interrupted; " + ("the best size so far is written" if result.best else
                                            "nothing was written"), file=sys.stderr)
        return EXIT_INTERRUPTED
    return EXIT_OK if result.best is not None else EXIT_NONE


def add_commands(sub, add) -> None:
    """Add ``sweep`` and ``shrink`` to the subparsers `sub` (`add` makes one, as in router.cli)."""
    sp = add("sweep", "route one board with every combination of seeds and penalties, and rank them", cmd_sweep)
    sp.add_argument("board", help="board file")
    sp.add_argument("-o", "--output", required=True, metavar="DIR",
                    help="folder for the routed boards, sweep.csv, sweep.json and bends-vias.png")
    sp.add_argument("--seeds", default="0-4", metavar="LIST",
                    help="route seeds (and placement seeds with --place), e.g. 1-20 or 0,3,7 (default 0-4)")
    sp.add_argument("--bend-penalty", default="0.5,1,2", metavar="LIST",
                    help="bend penalties in mm of trace (default 0.5,1,2)")
    sp.add_argument("--via-penalty", default="1,2,4", metavar="LIST",
                    help="via penalties in mm of trace (default 1,2,4; jumpers on one-layer boards)")
    sp.add_argument("--place", action="store_true",
                    help="place every part that is not fixed first, with the seed (as place --all --seed S)")
    sp.add_argument("--reroute", action="store_true", help="remove the copper that is not fixed first")
    sp.add_argument("--rank", default=None, metavar="ORDER",
                    help="the order naming the best (default routed,violations,vias,bends,length: most "
                         "nets routed, then fewest of each)")
    _where(sp)

    sp = add("shrink", "the smallest rectangular outline in which the board places and routes clean", cmd_shrink)
    sp.add_argument("board", help="board file")
    sp.add_argument("-o", "--output", required=True, metavar="OUT",
                    help="the placed and routed board of the smallest size to write")
    sp.add_argument("--step", type=float, default=0.5, metavar="MM",
                    help="how much a side shrinks at a time, a whole number of grid pitches (default 0.5)")
    sp.add_argument("--tries", type=int, default=3, metavar="N",
                    help="placement seeds tried per size, 0 to N-1 (default 3)")
    sp.add_argument("--keep-aspect", action="store_true", help="only sizes of the board's own aspect ratio")
    sp.add_argument("--json", action="store_true", help="print the sizes tried and the best as JSON")
    _where(sp)
