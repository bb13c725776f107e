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
