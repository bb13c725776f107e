"""What the assembler needs: the parts list (``bom.csv``) and the placement file (``placement.csv``).

The parts list groups parts of the same value and footprint on one row: value, footprint,
count and the refs (in natural order: R2 before R10). The placement file has one row per part:
ref, value, footprint, x, y, rotation and side, in millimetres from the board's origin.

Bottom parts are listed as seen from the bottom, as assembly machines see the board turned
over: the board is turned about its y axis, so a bottom part's x is the negative of its x
seen from the top (y stays), and its rotation is counter-clockwise seen from the bottom,
``(360 - rotation) % 360`` of the board file's rotation. With that, the footprint as drawn in
its own coordinates (not mirrored), turned by the listed rotation and moved to the listed
x, y, lies exactly where the part is when the board is seen from the bottom. Each file says
its convention in its first lines (``#`` comments).

Parts with no pads (mounting holes) are not assembled and are left out of both files.
Both are plain CSV (Python's :mod:`csv`, RFC 4180 quoting).
"""
from __future__ import annotations

import csv
import io
import re
from collections import defaultdict

from .geometry import part_footprint
from .model import Board

__all__ = ["bom_csv", "placement_csv", "natural_key", "BOM_COLUMNS", "PLACEMENT_COLUMNS",
           "seen_from_side"]

#: Columns of ``bom.csv``, our own words.
BOM_COLUMNS = ("value", "footprint", "count", "refs")
#: Columns of ``placement.csv``, our own words.
PLACEMENT_COLUMNS = ("ref", "value", "footprint", "x_mm", "y_mm", "rotation_deg", "side")


def natural_key(ref: str):
    """Sort key that puts R2 before R10.

    >>> sorted(["R10", "C1", "R2"], key=natural_key)
    ['C1', 'R2', 'R10']
    """
    return [int(t) if t.isdigit() else t for t in re.split(r"(\d+)", ref)]


def _assembled(board: Board):
    return [p for p in board.parts if part_footprint(board, p).pads]


def _num(v: float) -> str:
    s = f"{v:.4f}".rstrip("0").rstrip(".")
    return "0" if s in ("-0", "") else s


def _csv(header: list[str], columns, rows) -> str:
    buf = io.StringIO()
    for line in header:
        buf.write(f"# {line}\n")
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(columns)
    w.writerows(rows)
    return buf.getvalue()


def bom_csv(board: Board) -> str:
    """The parts list as CSV text: one row per (value, footprint), refs grouped.

    Examples
    --------
    >>> from router.model import Board, Part
    >>> b = Board("t", [(0, 0), (10, 0), (10, 10)], parts=[
    ...     Part("R10", "chip-0603", "10k", (1, 1)), Part("R2", "chip-0603", "10k", (3, 1)),
    ...     Part("C1", "chip-0603", "100n", (5, 1))])
    >>> print(bom_csv(b).split("\\n", 2)[2])
    value,footprint,count,refs
    100n,chip-0603,1,C1
    10k,chip-0603,2,R2 R10
    <BLANKLINE>
    """
    groups: dict[tuple[str, str], list[str]] = defaultdict(list)
    for p in _assembled(board):
        groups[(p.value, p.footprint)].append(p.ref)
    rows = []
    for (value, fp), refs in groups.items():
        refs.sort(key=natural_key)
        rows.append((value, fp, len(refs), " ".join(refs)))
    rows.sort(key=lambda r: natural_key(r[3].split()[0]))
    header = [f"Parts list of board '{board.name}': {sum(r[2] for r in rows)} parts in {len(rows)} lines",
              "One line per value and footprint; refs separated by spaces. Mounting holes are left out."]
    return _csv(header, BOM_COLUMNS, rows)


def seen_from_side(part) -> tuple[float, float, int]:
    """A placed part's (x, y, rotation) as listed in ``placement.csv`` (see the module docstring).

    >>> from router.model import Part
    >>> seen_from_side(Part("U1", "soic-8", at=(12.5, 4.0), rotation=90, side="bottom"))
    (-12.5, 4.0, 270)
    >>> seen_from_side(Part("U2", "soic-8", at=(12.5, 4.0), rotation=90))
    (12.5, 4.0, 90)
    """
    x, y = part.at
    if part.side == "bottom":
        return (-x if x else 0.0, y, (360 - part.rotation) % 360)
    return (x, y, part.rotation % 360)


def placement_csv(board: Board) -> str:
    """The placement file as CSV text: one row per placed part with pads, in natural ref order."""
    rows = []
    for p in sorted(_assembled(board), key=lambda p: natural_key(p.ref)):
        if p.at is None:
            continue
        x, y, rot = seen_from_side(p)
        rows.append((p.ref, p.value, p.footprint, _num(x), _num(y), rot, p.side))
    header = [f"Placement of board '{board.name}': millimetres from the board's origin (0, 0), x to the right, y up;",
              "x, y is the part's body centre; rotation in degrees counter-clockwise.",
              "Top parts: seen from the top, as in the board file.",
              "Bottom parts: seen from the bottom (the board turned over about its y axis): x is the negative",
              "of x seen from the top, y is unchanged, rotation is counter-clockwise seen from the bottom",
              "(360 - the board file's rotation); the footprint is then drawn unmirrored."]
    return _csv(header, PLACEMENT_COLUMNS, rows)
