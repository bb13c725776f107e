"""Write a random routable board (router.boardgen.generate_board) to a board file.

Usage::

    python scripts/genboard.py SEED -o FILE [--nets N] [--size W H] [--layers L] [--grid G]
                               [--offgrid] [--max-pins K] [--unplaced]

The file is written atomically. Bad arguments give one line and exit status 2.
"""
from __future__ import annotations

import argparse
import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from router.boardfile import save_board, validate_board  # noqa: E402
from router.boardgen import generate_board  # noqa: E402
from router.errors import BoardError  # noqa: E402


class _Parser(argparse.ArgumentParser):
    def error(self, message):
        self.print_usage(sys.stderr)
        sys.stderr.write(f"genboard: error: {message}\n")
        raise SystemExit(2)


def main(argv=None) -> int:
    ap = _Parser(prog="genboard", description="Write a random routable board file.")
    ap.add_argument("seed", type=int, help="random seed; the same seed gives the same board")
    ap.add_argument("-o", "--output", required=True, help="board file to write")
    ap.add_argument("--nets", type=int, default=20, help="number of nets (default 20)")
    ap.add_argument("--size", type=float, nargs=2, metavar=("W", "H"), default=(60.0, 40.0),
                    help="board width and height in mm (default 60 40)")
    ap.add_argument("--layers", type=int, default=2, choices=(1, 2), help="copper layers (default 2)")
    ap.add_argument("--grid", type=float, default=0.25, help="routing grid pitch in mm (default 0.25)")
    ap.add_argument("--offgrid", action="store_true", help="shift parts off the routing grid")
    ap.add_argument("--max-pins", type=int, default=4, help="most pins in one net (default 4)")
    ap.add_argument("--unplaced", action="store_true",
                    help="leave parts other than connectors and holes unplaced")
    args = ap.parse_args(argv)
    try:
        board = generate_board(args.seed, nets=args.nets, size=tuple(args.size), layers=args.layers,
                               grid=args.grid, offgrid=args.offgrid, max_pins=args.max_pins,
                               unplaced=args.unplaced)
        validate_board(board)
        save_board(board, args.output)
    except BoardError as exc:
        print(f"genboard: {exc}", file=sys.stderr)
        return 2
    except OSError as exc:
        print(f"genboard: {args.output}: cannot write ({exc.strerror})", file=sys.stderr)
        return 2
    print(f"wrote {args.output}: {board.name}, {len(board.parts)} parts, {len(board.nets)} nets, "
          f"{board.copper_layers} layer(s)")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
