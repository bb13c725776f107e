"""Fabrication files: Gerber layers, drill files and a short list of what is in the folder.

``export(board, out_dir)`` writes, for the board as it is:

- one Gerber file per copper layer: pads flashed in their shapes (a quarter turn is in the
  placed pad's width and height; a pad turned by any other angle, and every rounded
  rectangle, is flashed with an aperture macro of its own: :data:`MACROS`), traces drawn with
  round apertures of their width, vias and jumper ends flashed;
- a solder-mask file per copper side: pads and jumper ends opened by ``rules.mask_expansion``
  beyond their copper, vias covered unless ``open_vias``;
- a silkscreen file per side (:mod:`router.silkscreen`): part outlines, refs in the project's
  own stroke font, pin-1 and polarity marks, wire links of one-layer boards with their
  length, clipped by the mask openings and kept inside the board;
- a solder-paste file per copper side (:mod:`router.paste`);
- ``bom.csv`` and ``placement.csv`` (:mod:`router.assembly`);
- a 1:1 PDF print per copper layer for home etching (:mod:`router.printout`), the top mirrored;
- the board outline (the profile), arcs as circular arcs (G75, G02/G03);
- two drill files, plated holes (pad drills, vias, jumper ends) and unplated holes apart,
  tools sorted by size, via holes and component holes on tools of their own;
- a plain-text list of the files with the board's figures and :data:`router.rules.CAUTION`.

Gerber files follow the open Gerber layer format (RS-274X with X2 attributes: file function
and polarity, aperture function before each aperture definition, net and pad object
attributes on copper), in millimetres with format 4.6 (1 nm resolution, equal to
:data:`router.units.TOL`). Drill files are the trade's plain-text drill format: an M48
header, ``METRIC``, absolute coordinates (G90), tools ``T<n>C<diameter>``, ``%``, drill mode (G05), coordinates
with a decimal point, ``M30``.

Everything is made in a temporary folder beside the target and moved in only when all files
are complete (:func:`router.safefile.atomic_dir`).

References
----------
.. [1] Ucamco, "The Gerber Layer Format Specification", revision 2021.02 and later
   (sections on the FS, MO, AD, D01/D02/D03 commands and the standard attributes).
"""
from __future__ import annotations

import math
import re
from collections import defaultdict
from dataclasses import dataclass, field
from pathlib import Path
from typing import Optional, Sequence

from shapely.geometry.base import BaseGeometry

from .errors import BoardError
from .geometry import PlacedPad, outline_polygon, pad_shape, placed_holes, placed_pads
from .layout import resolve
from .model import Board, Point
from .cautions import cautions
from .rules import CAUTION, class_clearance_table
from .safefile import atomic_dir

__all__ = ["export", "file_names", "text_strokes", "text_width", "GLYPHS", "SILK_WIDTH",
           "TEXT_HEIGHT", "SILK_GAP"]

#: Silkscreen line width in mm (common practice: board houses print legend lines from about
#: 0.15 mm up).
SILK_WIDTH = 0.15
#: Height of the refs' capitals in mm.
TEXT_HEIGHT = 1.0
#: Silkscreen keeps this far (beyond its half width) from every mask opening and hole.
SILK_GAP = 0.1
#: Width of the profile (board outline) lines in mm; the centre line is the edge.
PROFILE_WIDTH = 0.1

#: Aperture macros for pads the standard apertures cannot draw (Gerber specification, section
#: 4.5: primitive 21 is a centred rectangle turned about the origin, primitive 1 a circle).
#: TurnedRect: width, height, angle. TurnedOblong: straight length, diameter, angle of the long
#: axis, both end centres (x, y). RoundedBox: the rectangle less its corners along x and along
#: y (w, h - 2r, w - 2r, h), angle, corner diameter, the four corner centres (x, y).
MACROS = {
    "TurnedRect": "21,1,$1,$2,0,0,$3*",
    "TurnedOblong": "21,1,$1,$2,0,0,$3*1,1,$2,$4,$5*1,1,$2,$6,$7*",
    "RoundedBox": "21,1,$1,$2,0,0,$5*21,1,$3,$4,0,0,$5*1,1,$6,$7,$8*1,1,$6,$9,$10*1,1,$6,$11,$12*1,1,$6,$13,$14*",
}

_SIDES = ("top", "bottom")
_SIDE_WORD = {"top": "Top", "bottom": "Bot"}

# ----------------------------------------------------------------------------- stroke font
# Our own capitals on a cell 4 units wide and 6 high (baseline at 0); each glyph is a list of
# polylines "x,y x,y ...". A character advances 6 units (4 of glyph, 2 of space).
_GLYPH_SRC = {
    "0": ["1,0 3,0 4,1 4,5 3,6 1,6 0,5 0,1 1,0", "0,1 4,5"],
    "1": ["1,5 2,6 2,0", "1,0 3,0"],
    "2": ["0,5 1,6 3,6 4,5 4,4 0,0 4,0"],
    "3": ["0,6 4,6 2,3.5 3,3.5 4,2.5 4,1 3,0 1,0 0,1"],
    "4": ["3,0 3,6 0,2 4,2"],
    "5": ["4,6 0,6 0,3.5 3,3.5 4,2.5 4,1 3,0 0,0"],
    "6": ["3,6 1,6 0,5 0,1 1,0 3,0 4,1 4,2.5 3,3.5 0,3.5"],
    "7": ["0,6 4,6 1,0"],
    "8": ["1,3 0,4 0,5 1,6 3,6 4,5 4,4 3,3 1,3 0,2 0,1 1,0 3,0 4,1 4,2 3,3"],
    "9": ["1,0 3,0 4,1 4,5 3,6 1,6 0,5 0,3.5 1,2.5 4,2.5"],
    "A": ["0,0 0,4 2,6 4,4 4,0", "0,3 4,3"],
    "B": ["0,0 0,6 3,6 4,5 4,4 3,3 0,3", "3,3 4,2 4,1 3,0 0,0"],
    "C": ["4,1 3,0 1,0 0,1 0,5 1,6 3,6 4,5"],
    "D": ["0,0 0,6 2,6 4,4 4,2 2,0 0,0"],
    "E": ["4,0 0,0 0,6 4,6", "0,3 3,3"],
    "F": ["0,0 0,6 4,6", "0,3 3,3"],
    "G": ["4,5 3,6 1,6 0,5 0,1 1,0 3,0 4,1 4,3 2,3"],
    "H": ["0,0 0,6", "4,0 4,6", "0,3 4,3"],
    "I": ["1,0 3,0", "1,6 3,6", "2,0 2,6"],
    "J": ["0,1 1,0 2,0 3,1 3,6", "2,6 4,6"],
    "K": ["0,0 0,6", "4,6 0,2", "1.5,3.5 4,0"],
    "L": ["0,6 0,0 4,0"],
    "M": ["0,0 0,6 2,3 4,6 4,0"],
    "N": ["0,0 0,6 4,0 4,6"],
    "O": ["1,0 3,0 4,1 4,5 3,6 1,6 0,5 0,1 1,0"],
    "P": ["0,0 0,6 3,6 4,5 4,4 3,3 0,3"],
    "Q": ["1,0 3,0 4,1 4,5 3,6 1,6 0,5 0,1 1,0", "2,2 4,0"],
    "R": ["0,0 0,6 3,6 4,5 4,4 3,3 0,3", "2,3 4,0"],
    "S": ["4,5 3,6 1,6 0,5 0,4 1,3 3,3 4,2 4,1 3,0 1,0 0,1"],
    "T": ["0,6 4,6", "2,6 2,0"],
    "U": ["0,6 0,1 1,0 3,0 4,1 4,6"],
    "V": ["0,6 2,0 4,6"],
    "W": ["0,6 1,0 2,3 3,0 4,6"],
    "X": ["0,0 4,6", "0,6 4,0"],
    "Y": ["0,6 2,3 4,6", "2,3 2,0"],
    "Z": ["0,6 4,6 0,0 4,0"],
    "-": ["1,3 3,3"],
    "+": ["1,3 3,3", "2,2 2,4"],
    "=": ["1,2 3,2", "1,4 3,4"],
    ".": ["2,0 2,0.5"],
    ",": ["2,0.5 1.5,-0.5"],
    ":": ["2,1 2,1.5", "2,4 2,4.5"],
    "_": ["0,0 4,0"],
    "/": ["0,0 4,6"],
    "(": ["3,6 1.5,4.5 1.5,1.5 3,0"],
    ")": ["1,6 2.5,4.5 2.5,1.5 1,0"],
    "?": ["0,5 1,6 3,6 4,5 4,4 2,3 2,2", "2,0 2,0.5"],
    " ": [],
}


def _parse_glyph(strokes: list[str]) -> tuple[tuple[Point, ...], ...]:
    return tuple(tuple(tuple(float(v) for v in pt.split(",")) for pt in s.split()) for s in strokes)


#: The stroke font: character -> polylines in font units (cell 4 x 6, baseline y = 0).
GLYPHS: dict[str, tuple[tuple[Point, ...], ...]] = {c: _parse_glyph(s) for c, s in _GLYPH_SRC.items()}
_CELL_W, _CELL_H, _ADVANCE = 4.0, 6.0, 6.0


def text_width(text: str, height: float = TEXT_HEIGHT) -> float:
    """The width in mm of `text` set in the stroke font at capital `height` (stroke centres).

    >>> text_width("R12", 1.2)
    3.2
    """
    if not text:
        return 0.0
    u = height / _CELL_H
    return round((len(text) * _ADVANCE - (_ADVANCE - _CELL_W)) * u, 9)


def text_strokes(text: str, centre: Point, height: float = TEXT_HEIGHT,
                 mirror: bool = False) -> list[list[Point]]:
    """`text` in the stroke font as polylines in board mm, centred on `centre`.

    Lower case is set in capitals; a character the font lacks is set as "?".
    `mirror` flips the text in x about its centre (for the bottom side, read from below).

    Examples
    --------
    >>> text_strokes("L", (0.0, 0.0), height=6.0)
    [[(-2.0, 3.0), (-2.0, -3.0), (2.0, -3.0)]]
    """
    u = height / _CELL_H
    w = text_width(text, height)
    x0, y0 = centre[0] - w / 2, centre[1] - height / 2
    out = []
    for i, ch in enumerate(text.upper()):
        glyph = GLYPHS.get(ch, GLYPHS["?"])
        for stroke in glyph:
            pts = []
            for gx, gy in stroke:
                x = x0 + (i * _ADVANCE + gx) * u
                if mirror:
                    x = 2 * centre[0] - x
                pts.append((round(x, 9), round(y0 + gy * u, 9)))
            out.append(pts)
    return out


# ----------------------------------------------------------------------------- Gerber writer

def _num(v: float) -> str:
    """A coordinate in format 4.6 (mm), leading zeros omitted: integer nanometres."""
    n = int(round(v * 1_000_000))
    return str(n)


def _dec(v: float) -> str:
    """An aperture size in mm with six decimals."""
    return f"{v:.6f}"


def _field(s: str) -> str:
    """A string made safe for one field of a Gerber attribute (no % * , or backslash)."""
    out = []
    for ch in s:
        if ch in "%*,\\" or not ch.isprintable() or ord(ch) > 126:
            out.append(f"\\u{ord(ch):04X}" if ord(ch) <= 0xFFFF else "_")
        else:
            out.append(ch)
    return "".join(out)


def _comment(s: str) -> str:
    return re.sub(r"[%*]", "_", s)


@dataclass
class _Gerber:
    """One Gerber file being built: apertures keyed by (function, template, sizes)."""
    title: str
    file_attrs: list[tuple[str, str]]
    apertures: dict = field(default_factory=dict)     # key -> D code
    body: list[str] = field(default_factory=list)
    _current: Optional[int] = None
    _obj_attrs: tuple = ()

    def aperture(self, function: str, template: str, *sizes: float) -> int:
        key = (function, template, tuple(round(s, 6) for s in sizes))
        if key not in self.apertures:
            self.apertures[key] = 10 + len(self.apertures)
        return self.apertures[key]

    def pad_aperture(self, function: str, shape: str, w: float, h: float, angle: float = 0.0,
                     corner: float = 0.0) -> int:
        if shape == "rounded-rectangle":
            if corner <= 1e-12:
                shape = "rectangle"
            elif corner >= min(w, h) / 2 - 1e-12:
                shape = "obround"          # corners of half the short side: the stadium
            else:
                return self._rounded(function, w, h, angle, corner)
        if shape == "round":
            return self.aperture(function, "C", min(w, h))
        if shape == "obround" and abs(w - h) <= 1e-12:
            return self.aperture(function, "C", w)
        if angle:
            c, s = math.cos(math.radians(angle)), math.sin(math.radians(angle))
            if shape == "rectangle":
                return self.aperture(function, "TurnedRect", w, h, angle)
            length, d = abs(w - h), min(w, h)
            ux, uy = (c, s) if w > h else (-s, c)
            along = angle if w > h else angle + 90.0
            ex, ey = ux * length / 2, uy * length / 2
            return self.aperture(function, "TurnedOblong", length, d, along, ex, ey, -ex, -ey)
        return self.aperture(function, "R" if shape == "rectangle" else "O", w, h)

    def _rounded(self, function: str, w: float, h: float, angle: float, r: float) -> int:
        c, s = math.cos(math.radians(angle)), math.sin(math.radians(angle))
        corners = []
        for u, v in ((w / 2 - r, h / 2 - r), (-(w / 2 - r), h / 2 - r), (-(w / 2 - r), -(h / 2 - r)),
                     (w / 2 - r, -(h / 2 - r))):
            corners += [c * u - s * v, s * u + c * v]
        return self.aperture(function, "RoundedBox", w, h - 2 * r, w - 2 * r, h, angle, 2 * r, *corners)

    def _use(self, code: int) -> None:
        if code != self._current:
            self.body.append(f"D{code}*")
            self._current = code

    def attrs(self, **attrs) -> None:
        """Set the object attributes (.N net, .P pad, .C component) for what follows."""
        items = tuple((k, v) for k, v in attrs.items() if v is not None)
        if items == self._obj_attrs:
            return
        if self._obj_attrs:
            self.body.append("%TD*%")
        for k, v in items:
            self.body.append(f"%TO.{k},{v}*%")
        self._obj_attrs = items

    def flash(self, code: int, at: Point) -> None:
        self._use(code)
        self.body.append(f"X{_num(at[0])}Y{_num(at[1])}D03*")

    def polyline(self, code: int, pts: Sequence[Point]) -> None:
        pts = [p for i, p in enumerate(pts) if i == 0 or p != pts[i - 1]]
        if len(pts) < 2:
            return
        self._use(code)
        self.body.append(f"X{_num(pts[0][0])}Y{_num(pts[0][1])}D02*")
        for p in pts[1:]:
            self.body.append(f"X{_num(p[0])}Y{_num(p[1])}D01*")

    def text(self) -> str:
        lines = [f"G04 {_comment(self.title)}*", "%FSLAX46Y46*%", "%MOMM*%"]
        lines += [f"%TF.{k},{v}*%" for k, v in self.file_attrs]
        lines += ["%LPD*%", "G01*"]
        last_function = None
        for name in sorted({t for (_, t, _) in self.apertures if t in MACROS}):
            lines.append(f"%AM{name}*{MACROS[name]}%")
        for (function, template, sizes), code in self.apertures.items():
            if function != last_function:
                lines.append(f"%TA.AperFunction,{function}*%")
                last_function = function
            lines.append(f"%ADD{code}{template},{'X'.join(_dec(s) for s in sizes)}*%")
        if self.apertures:
            lines.append("%TD*%")
        lines += self.body
        if self._obj_attrs:
            lines.append("%TD*%")
        lines.append("M02*")
        return "\n".join(lines) + "\n"


def _software() -> tuple[str, str]:
    from . import __version__
    return ("GenerationSoftware", f"elbowroom,elbowroom,{__version__}")


# ----------------------------------------------------------------------------- file names

def _stem(board: Board) -> str:
    s = re.sub(r"[^A-Za-z0-9._-]+", "-", board.name).strip("-.")
    return s or "board"


def file_names(board: Board) -> dict[str, str]:
    """The file names `export` writes, by role: ``copper-top``, ``mask-bottom``, ``outline``, ...

    Copper and mask files exist for the copper layers; silkscreen for both sides.
    """
    stem = _stem(board)
    names = {}
    for layer in board.layers:
        names[f"copper-{layer}"] = f"{stem}-copper-{layer}.gbr"
    for layer in board.layers:
        names[f"mask-{layer}"] = f"{stem}-mask-{layer}.gbr"
    for side in _SIDES:
        names[f"silk-{side}"] = f"{stem}-silk-{side}.gbr"
    for layer in board.layers:
        names[f"paste-{layer}"] = f"{stem}-paste-{layer}.gbr"
    names["outline"] = f"{stem}-outline.gbr"
    names["drill-plated"] = f"{stem}-holes-plated.drl"
    names["drill-nonplated"] = f"{stem}-holes-unplated.drl"
    for layer in board.layers:
        names[f"print-{layer}"] = f"{stem}-print-{layer}.pdf"
    names["bom"] = "bom.csv"
    names["placement"] = "placement.csv"
    names["list"] = f"{stem}-files.txt"
    return names


# ----------------------------------------------------------------------------- checks of the input

def _check_input(board: Board) -> None:
    src = board.source
    for i, part in enumerate(board.parts):
        if part.at is None:
            raise BoardError(src, f"part {i + 1} ({part.ref})",
                             "the part has no place, so it has no copper to export; "
                             "place it first (elbowroom place)")
    for i, t in enumerate(board.traces):
        if t.layer not in board.layers:
            raise BoardError(src, f"trace {i + 1}",
                             f"layer {t.layer!r} is not a copper layer of this board "
                             f"({', '.join(board.layers)})")
    if board.vias and board.copper_layers == 1:
        raise BoardError(src, "via 1", "a one-layer board has no vias; use a jumper")
    if len(board.outline) < 3 or not outline_polygon(board).is_valid:
        raise BoardError(src, "board.outline", "the outline is not a simple polygon; fix its corners")


# ----------------------------------------------------------------------------- copper, mask, silk

def _pad_function(pad: PlacedPad) -> str:
    return "ComponentPad" if pad.plated else "SMDPad,CuDef"


def _net_attr(net: str) -> str:
    return "" if net.startswith("~") else _field(net)   # a pad in no net: not connected


def _copper(board: Board, layer: str, pads: list[PlacedPad], index: int) -> str:
    word = _SIDE_WORD[layer]
    g = _Gerber(f"{board.name}: copper, {layer} layer",
                [_software(), ("Part", "Single"),
                 ("FileFunction", f"Copper,L{index},{word}"), ("FilePolarity", "Positive")])
    if board.pours:                  # pours first, as regions under the pads and traces (router.pour)
        from .pour import gerber_regions
        for net, lines in gerber_regions(board, layer, _num):
            g.attrs(N=_field(net))
            g.body.extend(lines)
    for pad in pads:
        if layer not in pad.layers:
            continue
        code = g.pad_aperture(_pad_function(pad), pad.shape, pad.w, pad.h, pad.angle, pad.corner)
        g.attrs(N=_net_attr(pad.net), P=f"{_field(pad.ref)},{_field(pad.pin)}", C=_field(pad.ref))
        g.flash(code, pad.at)
    for t in board.traces:
        if t.layer != layer:
            continue
        code = g.aperture("Conductor", "C", t.width)
        g.attrs(N=_field(t.net))
        pts = [tuple(map(float, p)) for p in t.points]
        if len(set(pts)) == 1:
            g.flash(code, pts[0])            # a trace of one point is a round dot of its width
        else:
            g.polyline(code, pts)
    for v in board.vias:
        code = g.aperture("ViaPad", "C", v.diameter)
        g.attrs(N=_field(v.net))
        g.flash(code, v.at)
    for j in board.jumpers:
        code = g.aperture("ComponentPad", "C", j.diameter)
        g.attrs(N=_field(j.net))
        g.flash(code, j.start)
        g.flash(code, j.end)
    g.attrs()
    return g.text()


@dataclass(frozen=True)
class _Opening:
    function: str
    shape: str
    at: Point
    w: float
    h: float
    angle: float = 0.0
    corner: float = 0.0


def _openings(board: Board, side: str, pads: list[PlacedPad], open_vias: bool) -> list[_Opening]:
    """What the solder mask leaves bare on `side`, at copper size plus the mask expansion."""
    e = board.rules.mask_expansion
    out = []
    for pad in pads:
        if side in pad.layers or pad.plated:
            out.append(_Opening(_pad_function(pad), pad.shape, pad.at, pad.w + 2 * e, pad.h + 2 * e,
                                pad.angle, pad.corner + e if pad.shape == "rounded-rectangle" else 0.0))
    for j in board.jumpers:
        for at in (j.start, j.end):
            out.append(_Opening("ComponentPad", "round", at, j.diameter + 2 * e, j.diameter + 2 * e))
    if open_vias:
        for v in board.vias:
            out.append(_Opening("ViaPad", "round", v.at, v.diameter + 2 * e, v.diameter + 2 * e))
    for h in resolve(board).npth:
        out.append(_Opening("Other,NonPlatedHole", "round", (h.x, h.y),
                            h.drill + 2 * e, h.drill + 2 * e))
    return out


def _mask(board: Board, side: str, openings: list[_Opening]) -> str:
    g = _Gerber(f"{board.name}: solder mask, {side} side (dark = opening)",
                [_software(), ("Part", "Single"),
                 ("FileFunction", f"Soldermask,{_SIDE_WORD[side]}"), ("FilePolarity", "Negative")])
    for o in openings:
        g.flash(g.pad_aperture(o.function, o.shape, o.w, o.h, o.angle, o.corner), o.at)
    return g.text()


def _opening_shape(o: _Opening) -> BaseGeometry:
    pad = PlacedPad("", "", "", o.at[0], o.at[1], o.shape, o.w, o.h, None, (), 0, o.angle, o.corner)
    return pad_shape(pad)


def _silk(board: Board, side: str, openings: list[_Opening]):
    """The silkscreen file of `side` and its :class:`router.silkscreen.Silk` (what was drawn, clipped)."""
    from .silkscreen import FUNCTIONS, silk_layer
    g = _Gerber(f"{board.name}: silkscreen, {side} side",
                [_software(), ("Part", "Single"),
                 ("FileFunction", f"Legend,{_SIDE_WORD[side]}"), ("FilePolarity", "Positive")])
    silk = silk_layer(board, side, [_opening_shape(o) for o in openings])
    for kind, pts in silk.lines:
        g.polyline(g.aperture(FUNCTIONS[kind], "C", SILK_WIDTH), pts)
    for kind, at, d in silk.dots:
        g.flash(g.aperture(FUNCTIONS[kind], "C", d), at)
    return g.text(), silk


def _paste(board: Board, side: str, pads: list[PlacedPad]) -> str:
    from .paste import paste_openings
    g = _Gerber(f"{board.name}: solder paste, {side} side",
                [_software(), ("Part", "Single"),
                 ("FileFunction", f"Paste,{_SIDE_WORD[side]}"), ("FilePolarity", "Positive")])
    for o in paste_openings(board, side, pads):
        g.flash(g.pad_aperture("SMDPad,CuDef", o.shape, o.w, o.h, o.angle, o.corner), o.at)
    return g.text()


def _outline(board: Board) -> str:
    g = _Gerber(f"{board.name}: board outline (profile)",
                [_software(), ("Part", "Single"), ("FileFunction", "Profile,NP"),
                 ("FilePolarity", "Positive")])
    code = g.aperture("Profile", "C", PROFILE_WIDTH)
    from .outline import OutlineArc, has_arcs
    if has_arcs(board):              # arcs as arcs: G75 (multi quadrant), G02/G03 with I, J from the start
        path = board.outline_path
        ends = [tuple(map(float, e.to)) if isinstance(e, OutlineArc) else tuple(map(float, e)) for e in path]
        g._use(code)
        g.body.append("G75*")
        x, y = ends[-1]
        g.body.append(f"X{_num(x)}Y{_num(y)}D02*")
        for e, (ex, ey) in zip(path, ends):
            if isinstance(e, OutlineArc):
                i, j = e.centre[0] - x, e.centre[1] - y
                g.body.append(f"{'G02' if e.clockwise else 'G03'}X{_num(ex)}Y{_num(ey)}I{_num(i)}J{_num(j)}D01*")
                g.body.append("G01*")
            elif (ex, ey) != (x, y):
                g.body.append(f"X{_num(ex)}Y{_num(ey)}D01*")
            x, y = ex, ey
        return g.text()
    pts = [tuple(map(float, p)) for p in board.outline]
    g.polyline(code, pts + [pts[0]])
    return g.text()


# ----------------------------------------------------------------------------- drill files

@dataclass(frozen=True)
class _Drill:
    x: float
    y: float
    drill: float
    kind: str      # "pad", "via", "jumper_end", "hole"


def _drills(board: Board, pads: list[PlacedPad]) -> tuple[list[_Drill], list[_Drill]]:
    plated = [_Drill(p.x, p.y, p.drill, "pad") for p in pads if p.drill is not None]
    plated += [_Drill(v.at[0], v.at[1], v.drill, "via") for v in board.vias]
    plated += [_Drill(at[0], at[1], j.drill, "jumper_end") for j in board.jumpers for at in (j.start, j.end)]
    nonplated = [_Drill(h.x, h.y, h.drill, "hole") for h in resolve(board).npth]
    return plated, nonplated


def _mm(v: float, digits: int = 4) -> str:
    s = f"{v:.{digits}f}"
    return "0.0000"[: digits + 2] if s.startswith("-") and float(s) == 0 else s


def _tool_size(d: float) -> str:
    s = f"{d:.4f}".rstrip("0")
    whole, _, frac = s.partition(".")
    return f"{whole}.{frac.ljust(3, '0')}"


#: Drill aperture functions of the open Gerber specification (Ucamco, "The Gerber Layer Format
#: Specification", revision 2023.08, section 5.6.10, drill and rout layers), the bare values we
#: write: one per tool, so via holes and component holes never share a tool.
DRILL_FUNCTIONS = {"via": "ViaDrill", "pad": "ComponentDrill", "jumper_end": "ComponentDrill",
                   "hole": "MechanicalDrill"}


def _drill_tools(drills: list[_Drill]) -> list[tuple[float, str, list[_Drill]]]:
    """Tools as (diameter, aperture function, holes), sorted by size, then function.

    Holes of one size but different functions (a 0.8 mm via and a 0.8 mm lead) get a tool each.
    """
    by_tool: dict[tuple[float, str], list[_Drill]] = defaultdict(list)
    for d in drills:
        by_tool[(round(d.drill, 4), DRILL_FUNCTIONS[d.kind])].append(d)
    return [(size, fn, by_tool[(size, fn)]) for size, fn in sorted(by_tool)]


def _drill_file(board: Board, drills: list[_Drill], plated: bool) -> str:
    """The drill file text: tools sorted by size, holes of each tool in file order."""
    n = board.copper_layers
    what = ("plated holes: pad drills, vias and jumper ends" if plated
            else "unplated holes: mounting and other holes with no copper")
    lines = ["M48",
             f"; {_comment(board.name)}: {what}; millimetres, absolute coordinates",
             f"; #@! TF.{_software()[0]},{_software()[1]}",
             f"; #@! TF.FileFunction,{'Plated' if plated else 'NonPlated'},1,{n},{'PTH' if plated else 'NPTH'}",
             "FMAT,2",
             "METRIC,LZ",
             "G90"]
    tools = _drill_tools(drills)
    for t, (size, fn, _) in enumerate(tools, start=1):
        lines.append(f"; #@! TA.AperFunction,{fn}")
        lines.append(f"T{t}C{_tool_size(size)}")
    lines += ["%", "G05"]
    for t, (_, _, holes) in enumerate(tools, start=1):
        lines.append(f"T{t}")
        for d in holes:
            lines.append(f"X{_mm(d.x)}Y{_mm(d.y)}")
    lines.append("M30")
    return "\n".join(lines) + "\n"


# ----------------------------------------------------------------------------- the list of files

def _fmt(v: float) -> str:
    return f"{v:.4f}".rstrip("0").rstrip(".")


def _reduction_words(red) -> str:
    return f"{red} of each side" if isinstance(red, str) else f"{_fmt(red)} mm per side"


def _summary(board: Board, names: dict[str, str], plated: list[_Drill], nonplated: list[_Drill],
             open_vias: bool, silks=()) -> str:
    outline = resolve(board).outline
    x0, y0, x1, y1 = outline.bounds
    widths = [nc.trace_width for nc in board.classes.values()] + [t.width for t in board.traces]
    spaces = list(class_clearance_table(board).values())
    drills = [d.drill for d in plated + nonplated]
    roles = {
        "copper-top": "copper, top layer (parts side)",
        "copper-bottom": "copper, bottom layer",
        "mask-top": "solder mask, top (dark = opening)",
        "mask-bottom": "solder mask, bottom (dark = opening)",
        "silk-top": "silkscreen, top",
        "silk-bottom": "silkscreen, bottom",
        "paste-top": "solder paste, top: stencil openings over surface pads",
        "paste-bottom": "solder paste, bottom: stencil openings over surface pads",
        "print-top": "1:1 print of the top copper, mirrored, for toner transfer (check the 50 mm bar)",
        "print-bottom": "1:1 print of the bottom copper, seen from the top, for toner transfer (check the 50 mm bar)",
        "bom": "parts list: value, footprint, count, refs (for buying and kitting)",
        "placement": "placement: ref, value, footprint, x, y, rotation, side (for assembly; "
                     "bottom parts seen from the bottom)",
        "outline": "board outline (profile)",
        "drill-plated": f"drill, plated holes ({len(plated)})",
        "drill-nonplated": f"drill, unplated holes ({len(nonplated)})",
        "list": "this list",
    }
    if board.copper_layers == 1:
        roles["copper-bottom"] = "copper, bottom layer (the only copper; parts on top)"
    shape = ("rectangle" if len(board.outline) == 4 and outline.area
             == (x1 - x0) * (y1 - y0) else f"polygon of {len(board.outline)} corners")
    lines = [f"Fabrication files for board '{board.name}'", ""]
    width = max(len(n) for n in names.values())
    for role, name in names.items():
        lines.append(f"  {name.ljust(width)}  {roles[role]}")
    lines += [
        "",
        f"Board size:            {_fmt(x1 - x0)} x {_fmt(y1 - y0)} mm ({shape})",
        f"Copper layers:         {board.copper_layers}",
        f"Copper weight:         {_fmt(board.rules.copper_oz)} oz",
        f"Smallest trace width:  {_fmt(min(widths))} mm",
        f"Smallest clearance:    {_fmt(min(spaces))} mm (required between nets by the net classes)",
        f"Smallest drill:        {_fmt(min(drills)) + ' mm' if drills else 'no holes'}",
        f"Solder mask expansion: {_fmt(board.rules.mask_expansion)} mm per side; vias "
        f"{'opened' if open_vias else 'covered'}",
        f"Solder paste:          surface pads less {_reduction_words(board.rules.paste_reduction)}; "
        "exposed pads in windows covering 64 %",
    ] + [s.summary()[0].upper() + s.summary()[1:] for s in silks] + [
        "Units: millimetres. Gerber: RS-274X with X2 attributes, format 4.6. "
        "Drill: plain-text drill format, metric, tools sorted by size.",
        "",
        CAUTION,
        *cautions(board),        # mains and current cautions (router.cautions)
    ]
    return "\n".join(lines) + "\n"


# ----------------------------------------------------------------------------- export

def _write(path: Path, text) -> None:
    if isinstance(text, bytes):
        path.write_bytes(text)
        return
    with open(path, "w", encoding="utf-8", newline="\n") as fh:
        fh.write(text)


def export(board: Board, out_dir, open_vias: bool = False) -> list[Path]:
    """Write the fabrication files of `board` into `out_dir`.

    Parameters
    ----------
    board : Board
        Every part must be placed.
    out_dir : path
        The folder; made if missing. Files already there with other names are left alone;
        files of the same names are replaced.
    open_vias : bool
        Open the solder mask over vias too (by default vias are covered).

    Returns
    -------
    list of Path
        The files written, in the order of :func:`file_names`.

    Raises
    ------
    BoardError
        A part is unplaced (place it first), a trace is on a layer the board does not have,
        the outline is not a simple polygon, `out_dir` is a file, or the files cannot be
        written there. Nothing in `out_dir` is changed then.

    Notes
    -----
    All files are made in a temporary folder beside `out_dir` and moved in only when every
    one is complete, so a failure leaves `out_dir` as it was.
    """
    _check_input(board)
    names = file_names(board)
    pads = list(resolve(board).pads)          # the board resolved once (router.layout)
    texts: dict[str, str | bytes] = {}
    for i, layer in enumerate(board.layers, start=1):
        texts[f"copper-{layer}"] = _copper(board, layer, pads, i)
    openings = {side: _openings(board, side, pads, open_vias) for side in _SIDES}
    for layer in board.layers:
        texts[f"mask-{layer}"] = _mask(board, layer, openings[layer])
    silks = {}
    for side in _SIDES:
        texts[f"silk-{side}"], silks[side] = _silk(board, side, openings[side])
    for layer in board.layers:
        texts[f"paste-{layer}"] = _paste(board, layer, pads)
    texts["outline"] = _outline(board)
    from .printout import print_pdf
    for layer in board.layers:        # toner transfer mirrors once: the top is printed mirrored
        texts[f"print-{layer}"] = print_pdf(board, layer, mirror=(layer == "top"))[0]
    from .assembly import bom_csv, placement_csv
    texts["bom"] = bom_csv(board)
    texts["placement"] = placement_csv(board)
    plated, nonplated = _drills(board, pads)
    texts["drill-plated"] = _drill_file(board, plated, True)
    texts["drill-nonplated"] = _drill_file(board, nonplated, False)
    texts["list"] = _summary(board, names, plated, nonplated, open_vias, list(silks.values()))
    out_dir = Path(out_dir)
    if out_dir.exists() and not out_dir.is_dir():
        raise BoardError(str(out_dir), "-o", "is a file, not a folder; name a folder for the files")
    try:
        with atomic_dir(out_dir) as tmp:
            for role, name in names.items():
                _write(tmp / name, texts[role])
    except OSError as exc:
        raise BoardError(str(out_dir), "-o", f"the files cannot be written there "
                                             f"({exc.strerror or exc}); nothing was changed") from None
    return [out_dir / name for name in names.values()]
