"""Solder paste: the stencil openings over surface pads, one layer per copper side.

Every surface pad gets a paste opening of its own shape, reduced by ``rules.paste_reduction``:
a number is an inset in mm on every side (``0.05`` makes a 1.0 x 0.6 pad's opening 0.9 x 0.5),
a string ``"N%"`` shrinks each side of the pad by N percent about its centre. The default is 0:
openings the size of the pads. Plated (through-hole) pads, vias and jumper ends get no paste.

An exposed pad (the large thermal pad under a QFN-style part) is not opened whole: a full
opening floats the part on too much paste. It is split into a grid of square-cornered windows,
cells of at most :data:`WINDOW_CELL` mm, each window :data:`WINDOW_SCALE` of its cell on each
side, so that the windows cover ``WINDOW_SCALE ** 2`` = 64 % of the pad (common practice puts
the paste on 50 to 80 % of an exposed pad). The windows do not take the paste reduction.

A surface pad counts as exposed when its footprint has more than four surface pads, it is
the largest of them, its area is at least :data:`EXPOSED_RATIO` times the footprint's median
surface pad, and both its sides are at least :data:`EXPOSED_MIN_SIDE` mm (common practice).
"""
from __future__ import annotations

import math
import re
from dataclasses import dataclass
from statistics import median

from .errors import BoardError
from .geometry import PlacedPad, part_footprint, placed_pads
from .model import Board, Point

__all__ = ["parse_reduction", "reduced_size", "PasteOpening", "paste_openings", "exposed_pads",
           "WINDOW_CELL", "WINDOW_SCALE", "EXPOSED_RATIO", "EXPOSED_MIN_SIDE"]

#: Largest window cell side in mm for an exposed pad (common practice: windows of 1 to 2 mm).
WINDOW_CELL = 1.6
#: Each window's side as a fraction of its cell's: 0.8 x 0.8 = 64 % coverage.
WINDOW_SCALE = 0.8
#: An exposed pad is at least this many times the footprint's median surface pad area.
EXPOSED_RATIO = 4.0
#: ... and at least this wide on both sides (mm).
EXPOSED_MIN_SIDE = 1.5


def parse_reduction(value, file, entry):
    """``rules.paste_reduction`` from the file: a number of mm (>= 0) or a string "N%" (0 <= N < 100).

    Raises
    ------
    BoardError
        For anything else, naming the file and the entry.

    Examples
    --------
    >>> parse_reduction(0.05, "b.toml", "rules.paste_reduction"), parse_reduction("10%", "b.toml", "x")
    (0.05, '10%')
    """
    if isinstance(value, bool):
        raise BoardError(file, entry, "must be a number of mm or a string like \"10%\", not true/false")
    if isinstance(value, (int, float)):
        if not math.isfinite(value) or value < 0:
            raise BoardError(file, entry, f"{value} is not an inset of 0 mm or more; give 0.05 or \"10%\"")
        return float(value)
    if isinstance(value, str):
        m = re.fullmatch(r"\s*(\d+(?:\.\d+)?)\s*%\s*", value)
        if m and float(m.group(1)) < 100:
            return f"{float(m.group(1)):g}%"
        raise BoardError(file, entry, f"'{value}' is not a percentage below 100 like \"10%\"; "
                                      "or give an inset in mm as a number")
    raise BoardError(file, entry, "must be a number of mm or a string like \"10%\"")


def reduced_size(w: float, h: float, reduction) -> tuple[float, float]:
    """A pad's paste opening size for the rule's `reduction` (see the module docstring).

    >>> reduced_size(1.0, 0.6, 0.05), reduced_size(1.0, 0.6, "10%")
    ((0.9, 0.5), (0.9, 0.54))
    """
    if isinstance(reduction, str):
        k = 1.0 - float(reduction.rstrip("%")) / 100.0
        return (round(w * k, 9), round(h * k, 9))
    return (round(w - 2 * reduction, 9), round(h - 2 * reduction, 9))


@dataclass(frozen=True)
class PasteOpening:
    """One stencil opening: shape ("round", "rectangle", "obround") centred at `at`, w x h."""
    ref: str
    pin: str
    shape: str
    at: Point
    w: float
    h: float
    window: bool = False          # one window of an exposed pad
    angle: float = 0.0            # a turned pad's angle (router.geometry.PlacedPad.angle)
    corner: float = 0.0           # a rounded rectangle's corner radius, reduced with the pad


def exposed_pads(board: Board, pads: list[PlacedPad]) -> set[tuple[str, int]]:
    """(ref, pad index) of every exposed pad (see the module docstring)."""
    out = set()
    by_ref: dict[str, list[PlacedPad]] = {}
    for p in pads:
        if p.drill is None:
            by_ref.setdefault(p.ref, []).append(p)
    for ref, surf in by_ref.items():
        if len(surf) <= 4:
            continue
        areas = [p.w * p.h for p in surf]
        big = max(range(len(surf)), key=lambda i: areas[i])
        p = surf[big]
        if (areas[big] >= EXPOSED_RATIO * median(areas) and min(p.w, p.h) >= EXPOSED_MIN_SIDE
                and sorted(areas)[-2] < areas[big]):
            out.add((ref, p.index))
    return out


def _windows(p: PlacedPad) -> list[PasteOpening]:
    nx, ny = math.ceil(p.w / WINDOW_CELL - 1e-9), math.ceil(p.h / WINDOW_CELL - 1e-9)
    cw, ch = p.w / nx, p.h / ny
    out = []
    c, s = math.cos(math.radians(p.angle)), math.sin(math.radians(p.angle))
    for j in range(ny):
        for i in range(nx):
            u = -p.w / 2 + (i + 0.5) * cw          # in the pad's own frame, turned with it
            v = -p.h / 2 + (j + 0.5) * ch
            cx, cy = p.x + c * u - s * v, p.y + s * u + c * v
            out.append(PasteOpening(p.ref, p.pin, "rectangle", (round(cx, 9), round(cy, 9)),
                                    round(cw * WINDOW_SCALE, 9), round(ch * WINDOW_SCALE, 9), True, p.angle))
    return out


def paste_openings(board: Board, side: str, pads: list[PlacedPad] | None = None) -> list[PasteOpening]:
    """The paste openings on `side` ("top" or "bottom"), in pad order.

    Raises
    ------
    BoardError
        When the reduction leaves a pad no opening (``rules.paste_reduction``).
    """
    if pads is None:                         # the board resolved once (router.layout)
        from .layout import resolve
        pads = list(resolve(board).pads)
    exposed = exposed_pads(board, pads)
    red = board.rules.paste_reduction
    out = []
    for p in pads:
        if p.drill is not None or p.layers != (side,):
            continue
        if (p.ref, p.index) in exposed:
            out.extend(_windows(p))
            continue
        w, h = reduced_size(p.w, p.h, red)
        if w <= 1e-6 or h <= 1e-6:
            fp = part_footprint(board, board.part(p.ref)).name
            raise BoardError(board.source, "rules.paste_reduction",
                             f"{red!r} leaves pad {p.name} ({fp}, {p.w:g} x {p.h:g} mm) no paste; "
                             "make the reduction smaller")
        corner = 0.0
        if p.shape == "rounded-rectangle":       # the corners shrink with the pad
            corner = (p.corner * (1.0 - float(red.rstrip("%")) / 100.0) if isinstance(red, str)
                      else max(p.corner - red, 0.0))
        out.append(PasteOpening(p.ref, p.pin, p.shape, p.at, w, h, False, p.angle, corner))
    return out
