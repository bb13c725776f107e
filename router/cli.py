"""The command line: parse, call, map errors to exit status 2.

Every command reads a board file, calls one function of the package and prints
its result. Bad input of any kind is a :class:`~router.errors.BoardError`,
printed as one line with exit status 2; nothing here writes a file except
through :mod:`router.safefile`.
"""
from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path

from .errors import BoardError, ElbowroomError

__all__ = ["main", "build_parser"]

EXIT_OK, EXIT_FINDINGS, EXIT_BAD_INPUT = 0, 1, 2


class _Parser(argparse.ArgumentParser):
    """argparse with the usage error as one line and exit status 2 (the bad-input status)."""

    def error(self, message):
        self.print_usage(sys.stderr)
        sys.stderr.write(f"elbowroom: error: {message}\n")
        raise SystemExit(EXIT_BAD_INPUT)


def _not_ready(what: str):
    raise BoardError(None, what, "this command is not built yet in this version")


# ------------------------------------------------------------------ commands

def cmd_demo(args) -> int:
    from .demo import run_demo
    return run_demo(Path(args.output), quiet=args.quiet)


def cmd_place(args) -> int:
    from . import load_board, save_board
    try:
        from placement import place
    except ImportError:
        _not_ready("place")
    board = load_board(args.board)
    result = place(board, seed=args.seed, all_parts=args.all, gap=args.gap)
    save_board(result.board, args.output)
    if not args.quiet:
        print(result.summary())
        print(f"wrote {args.output}")
    return EXIT_OK


def _pins_joined(board, nets) -> dict:
    """net -> (pins its largest piece of copper joins, its pins): what a net that stays unrouted
    keeps (router.negotiate keeps the copper of a lost net of three pads or more)."""
    from .connectivity import net_groups
    groups = net_groups(board)
    out = {}
    for net in nets:
        gs = groups.get(net) or []
        out[net] = (max((len(g) for g in gs), default=0), len(set().union(*gs)) if gs else 0)
    return out


def cmd_route(args) -> int:
    from . import load_board, save_board, route
    from .cautions import cautions
    from .preflight import check_summary, fit_notes, overlap_notes
    from .rules import CAUTION, needs_caution
    try:
        from . import negotiate  # noqa: F401
    except ImportError:
        _not_ready("route")
    board = load_board(args.board)
    before = [f"before routing: {line}" for line in overlap_notes(board) + fit_notes(board)]
    if not args.quiet and not args.json:
        for line in before:
            print(line)
    progress = (not args.quiet) and (not args.json) and sys.stderr.isatty()
    result = route(board, bend_penalty=args.bend_penalty, via_penalty=args.via_penalty,
                   seed=args.seed, reroute=args.reroute, progress=progress, passes=args.passes)
    save_board(result.board, args.output)
    summary, violations = check_summary(result.board)       # the written board, as `check` sees it
    removed = result.removed
    if args.json:
        figs = dict(result.figures)
        figs["totals"] = dict(figs["totals"], seconds=round(result.seconds, 3))
        if result.failed:
            kept_pins = _pins_joined(result.board, result.failed)
            figs["failed"] = [{"net": n, "reason": r, "pins_joined": kept_pins[n][0], "pins": kept_pins[n][1]}
                              for n, r in result.failed.items()]
        if result.poured:
            figs["poured"] = [{"net": n, "layer": la, "pads_joined": j, "not_joined": m}
                              for n, la, j, m in result.poured]
        figs["removed"] = removed.as_json() if removed is not None else None
        figs["before"] = before
        counts: dict = {}
        for v in violations:
            counts[v.rule] = counts.get(v.rule, 0) + 1
        figs["check"] = {"violations": len(violations), "counts": counts}
        figs["cautions"] = cautions(result.board)
        print(json.dumps(figs, indent=2))
    elif not args.quiet:
        t = result.figures["totals"]
        if removed:
            print(removed.sentence())
        print(f"routed {t['routed']} of {t['nets']} nets in {result.seconds:.1f} s: "
              f"{t['bends']} bends, {t['length']:.1f} mm, {t['vias']} vias, {t['jumpers']} jumpers")
        kept_pins = _pins_joined(result.board, result.failed)
        for net, reason in result.failed.items():
            most, pins = kept_pins[net]
            kept = f"; its copper joins {most} of its {pins} pins (kept in the file)" if most > 1 else ""
            print(f"  not routed: {net}: {reason}{kept}")
        for net, layer, joined, missed in result.poured:      # router.pour: which pads need traces, and why
            print(f"  pour of {net} on {layer} joins {joined} of {joined + len(missed)} pads"
                  + (":" if missed else ""))
            for pad, why in missed.items():
                print(f"    {pad} is joined by traces or vias instead: {why}")
        print(f"wrote {args.output}")
        print(summary + (f" (elbowroom check {args.output} lists them)" if violations else ""))
        if needs_caution(result.board):
            print(CAUTION)
        for line in cautions(result.board):
            print(line)
    return EXIT_OK if not result.failed and not violations else EXIT_FINDINGS


def cmd_check(args) -> int:
    from . import load_board
    try:
        from .check import check, format_violations, violations_json
    except ImportError:
        _not_ready("check")
    from .cautions import cautions, not_declared, undeclared_note
    board = load_board(args.board)
    violations = check(board, strict=getattr(args, "strict", False))
    if args.json:
        out = violations_json(violations)
        out["not_declared"] = not_declared(board)     # rules nothing was declared for, so not checked
        out["cautions"] = cautions(board)
        print(json.dumps(out, indent=2))
    else:
        print(format_violations(violations, board))
        note = undeclared_note(board)
        for line in ([note] if note else []) + cautions(board):
            print(line)
    return EXIT_FINDINGS if violations else EXIT_OK


def cmd_report(args) -> int:
    from . import load_board
    try:
        from .figures import board_figures, format_report
    except ImportError:
        _not_ready("report")
    board = load_board(args.board)
    figs = board_figures(board)
    print(json.dumps(figs, indent=2) if args.json else format_report(figs))
    return EXIT_OK


def cmd_compare(args) -> int:
    from . import load_board
    try:
        from .figures import board_figures, compare_figures, format_compare
    except ImportError:
        _not_ready("compare")
    boards = [(str(p), load_board(p)) for p in args.boards]
    comp = compare_figures([(label, board_figures(b)) for label, b in boards])
    if args.plot:
        from .draw import plot_compare
        plot_compare(comp, args.plot)
    print(json.dumps(comp, indent=2) if args.json else format_compare(comp))
    return EXIT_OK


def cmd_render(args) -> int:
    from . import load_board
    board = load_board(args.board)
    out = Path(args.output)
    suffix = out.suffix.lower()
    if suffix not in (".png", ".svg", ".html"):
        raise BoardError(str(out), "-o", f"unknown picture type '{suffix}'; use .png, .svg or .html")
    violations = None
    try:
        if args.check:
            from .check import check
            violations = check(board)
        if suffix == ".html":
            from .page import write_page
            write_page(board, out, violations=violations, labels=args.labels)
        else:
            from .draw import render
            render(board, out, violations=violations, labels=args.labels)
    except ImportError:
        _not_ready("render")
    if not args.quiet:
        print(f"wrote {out}")
        from .cautions import cautions
        for line in cautions(board):
            print(line)
    return EXIT_OK


def cmd_export(args) -> int:
    from . import load_board
    try:
        from .fabfiles import export
    except ImportError:
        _not_ready("export")
    board = load_board(args.board)
    files = export(board, Path(args.output))
    if not args.quiet:
        for f in files:
            print(f"wrote {f}")
        from .cautions import cautions
        from .rules import CAUTION
        for line in [CAUTION] + cautions(board):
            print(line)
    return EXIT_OK


def cmd_print(args) -> int:
    from . import load_board
    from .printout import print_layer
    board = load_board(args.board)
    info = print_layer(board, Path(args.output), layer=args.layer, mirror=args.mirror)
    if not args.quiet:
        print(f"wrote {info.path}: copper {info.layer}{', mirrored' if info.mirror else ''}, 1:1 on "
              f"{info.page} ({info.page_size[0]:g} x {info.page_size[1]:g} mm); check the 50 mm bar after printing")
        from .cautions import cautions        # a board made at home carries the same cautions
        for line in cautions(board):
            print(line)
    return EXIT_OK


def cmd_pour(args) -> int:
    from . import load_board, save_board
    from .pour import format_pour, pour_board
    board = load_board(args.board)
    result = pour_board(board)
    save_board(result.board, args.output)
    if not args.quiet:
        print(format_pour(result) if board.pours else
              'the board has no [[pours]] (add one: net = "GND", layer = "bottom"); written unchanged')
        print(f"wrote {args.output}")
    return EXIT_OK


def cmd_footprints(args) -> int:
    from .fpshow import run_footprints
    text = run_footprints(args.name, as_json=args.json, output=args.output)
    if not args.quiet or args.json:
        print(text)
    if args.output and not args.quiet and not args.json:
        print(f"wrote {args.output}")
    return EXIT_OK


def cmd_new(args) -> int:
    from .csvboard import write_csv_board
    out = Path(args.output)
    result = write_csv_board(args.parts, args.nets, out, size=args.size, layers=args.layers,
                             name=args.name or out.stem)
    if not args.quiet:
        for note in result.notes:
            print(note)
        print(f"wrote {out}")
    return EXIT_OK


# ------------------------------------------------------------------ parser

_ELECTRICAL = ("A class's voltage is the peak working voltage in V (AC: RMS x 1.414, so 230 V RMS mains "
               "is 325 V): clearances rise to IPC-2221 Table 6-1 spacing for it, which is working "
               "spacing, not safety isolation. A class's current (A) sizes its traces (IPC-2221), its vias "
               "(the plated barrel, rules.plating_thickness, default 0.025 mm) and its jumper wires "
               "(rules.jumper_wire_gauge, AWG, default 22). Over 50 V, or with a current, the "
               "commands print a caution.")

def build_parser() -> argparse.ArgumentParser:
    p = _Parser(prog="elbowroom",
                description="Route, check, report, draw and export small one- and two-layer boards.",
                epilog="A rough route is not a certified design: fabrication follows the board house's "
                       "rules and the local electrical codes; mains or high-voltage work needs licensed practice.")
    sub = p.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)

    def add(name, help_, func, epilog=None):
        sp = sub.add_parser(name, help=help_, description=help_, epilog=epilog)
        sp.set_defaults(func=func)
        sp.add_argument("-q", "--quiet", action="store_true", help="print nothing but errors")
        return sp

    sp = add("demo", "write the bundled demo board, place, route, check and draw it", cmd_demo)
    sp.add_argument("-o", "--output", default="elbowroom-demo", metavar="DIR",
                    help="folder for the demo's files (default ./elbowroom-demo)")

    sp = add("place", "place the parts that have no place", cmd_place)
    sp.add_argument("board", help="board file")
    sp.add_argument("-o", "--output", required=True, metavar="OUT", help="placed board file to write")
    sp.add_argument("--seed", type=int, default=0, help="random seed (default 0)")
    sp.add_argument("--all", action="store_true", help="place every part that is not fixed")
    sp.add_argument("--gap", type=float, default=None, metavar="MM",
                    help="body-to-body gap (default rules.part_gap, 0.5 mm)")

    sp = add("route", "route every net that is not yet routed", cmd_route,
             epilog="Without --reroute, copper that is not fixed and ends touching nothing of its net "
                    "(left behind when a part moved) is removed first, and the output says how much. "
                    "Before routing it names the classes that do not fit between a footprint's pads "
                    "(trace_width + 2 x clearance, or neck_width + 2 x the own-pad clearance, against "
                    "the pad gap) and part bodies that overlap; after routing it prints the check's "
                    "summary of the written board. Exit 1 when a net stays unrouted or the written "
                    "board has violations. " + _ELECTRICAL)
    sp.add_argument("board", help="board file")
    sp.add_argument("-o", "--output", required=True, metavar="OUT", help="routed board file to write")
    sp.add_argument("--bend-penalty", type=float, default=None, metavar="B",
                    help="cost of one bend, in mm of trace (default 1.0); a turn at a via or a "
                         "jumper end is a bend too")
    sp.add_argument("--via-penalty", type=float, default=None, metavar="V",
                    help="cost of one via, in mm of trace (default 2.0; on one-layer boards it prices "
                         "jumpers, whose default is 5.0)")
    sp.add_argument("--seed", type=int, default=0,
                    help="chooses among routings: the net order of the first pass and of rip-up, and "
                         "which of equally cheap paths is taken; the same seed gives the same file "
                         "(default 0: shortest nets first)")
    sp.add_argument("--reroute", action="store_true", help="remove the copper that is not fixed first")
    sp.add_argument("--passes", type=int, default=None, metavar="N",
                    help="most negotiated-congestion passes (default 40; 16 on big boards)")
    sp.add_argument("--json", action="store_true", help="print the figures as JSON")

    sp = add("check", "clearance, connectivity and manufacturing checks", cmd_check, epilog=_ELECTRICAL +
             " When no class declares a voltage or a current, check says so once: neither was checked.")
    sp.add_argument("board", help="board file")
    sp.add_argument("--json", action="store_true", help="print the violations as JSON")
    sp.add_argument("--strict", action="store_true",
                    help="pads of one part keep the class clearance too (by default a footprint's own "
                         "pad spacing is a violation only below rules.min_clearance)")

    sp = add("report", "bends, length, vias and jumpers per net and in total", cmd_report)
    sp.add_argument("board", help="board file")
    sp.add_argument("--json", action="store_true", help="print the figures as JSON")

    sp = add("compare", "the same figures for several boards side by side", cmd_compare)
    sp.add_argument("boards", nargs="+", metavar="BOARD", help="board files")
    sp.add_argument("--json", action="store_true", help="print the comparison as JSON")
    sp.add_argument("--plot", metavar="FILE", help="write a bar chart (.png or .svg)")

    sp = add("render", "draw the board: .png, .svg or an interactive .html page", cmd_render,
             epilog="With --check the title counts the check's violations and warnings.")
    sp.add_argument("board", help="board file")
    sp.add_argument("-o", "--output", required=True, metavar="FILE", help="picture to write")
    sp.add_argument("--check", action="store_true", help="mark the check's violations, numbered and listed")
    sp.add_argument("--labels", choices=("nets",), default=None,
                    help="nets: write net names along long traces too (refs are always written)")

    sp = add("pour", "fill the board's copper pours ([[pours]]) against its copper", cmd_pour)
    sp.add_argument("board", help="board file")
    sp.add_argument("-o", "--output", required=True, metavar="OUT", help="poured board file to write")

    sp = add("footprints", "the built-in footprint families; with a name, its pads (and -o: a picture)",
             cmd_footprints)
    sp.add_argument("name", nargs="?", help="a footprint name, e.g. qfn-32-0.5-ep (default: list the families)")
    sp.add_argument("--json", action="store_true", help="print the list or the pads as JSON")
    sp.add_argument("-o", "--output", metavar="PICTURE", help="draw the footprint to a .png or .svg")

    from .csvboard import NEW_HELP
    sp = add("new", "a board file from a parts list and a netlist in CSV", cmd_new)
    sp.epilog, sp.formatter_class = NEW_HELP, argparse.RawDescriptionHelpFormatter
    sp.add_argument("--parts", required=True, metavar="CSV", help="parts list: ref, footprint, value "
                    "[, x, y, rotation, side, fixed]")
    sp.add_argument("--nets", required=True, metavar="CSV", help="netlist, one connection a row: "
                    "net, pin (REF.PIN) [, class]")
    sp.add_argument("-o", "--output", required=True, metavar="OUT", help="board file to write")
    sp.add_argument("--size", type=float, nargs=2, metavar=("W", "H"),
                    help="board width and height in mm (default: estimated from the parts, below)")
    sp.add_argument("--layers", type=int, choices=(1, 2), default=2, help="copper layers (default 2)")
    sp.add_argument("--name", help="the board's name (default: the output file's name)")

    sp = add("print", "a 1:1 PDF of one copper layer for home etching, with drill centres and a 50 mm "
                      "scale bar", cmd_print)
    sp.add_argument("board", help="board file")
    sp.add_argument("-o", "--output", required=True, metavar="FILE.pdf", help="PDF to write")
    sp.add_argument("--layer", choices=("top", "bottom"), default=None,
                    help="copper layer (default: top; bottom on one-layer boards)")
    sp.add_argument("--mirror", action="store_true",
                    help="flip left to right (toner transfer: mirror the top layer, not the bottom)")

    sp = add("export", "fabrication files: Gerber and drill", cmd_export)
    sp.add_argument("board", help="board file")
    sp.add_argument("-o", "--output", required=True, metavar="DIR", help="folder for the files")

    from explore.cli import add_commands      # sweep and shrink: many runs (explore/)
    add_commands(sub, add)
    return p


def main(argv=None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    if not getattr(args, "command", None):
        parser.print_help()
        return EXIT_BAD_INPUT
    try:
        return args.func(args)
    except BoardError as exc:
        print(f"elbowroom: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except ElbowroomError as exc:
        print(f"elbowroom: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except KeyboardInterrupt:
        print("elbowroom: interrupted; no file was changed", file=sys.stderr)
        return 130
    except BrokenPipeError:
        return EXIT_OK


if __name__ == "__main__":
    sys.exit(main())
