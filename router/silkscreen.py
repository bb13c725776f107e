"""The silkscreen of one side: part outlines, refs, pin-1 marks, polarity marks and wire links.

What is drawn on a side (every part on that side):

- the body rectangle and the ref (in the stroke font of :mod:`router.fabfiles`), the ref at the
  first of inside the body, above, below, right or left that stays on the board and off the
  openings;
- a pin-1 mark on every part with more than two pins: a dot of :data:`DOT` mm just outside
  pin 1's pad, on the side facing away from the part's other pads where it fits (then the
  other sides, then one step further out);
- a polarity mark on parts whose footprint is ``polarised``, at pin 1's end: a cathode band
  (two strokes across the body at its pin-1 edge) for ``polarity = "cathode"`` (diodes, LEDs),
  a + sign just outside pin 1's pad for ``polarity = "plus"`` (electrolytic and tantalum
  capacitors);
- on one-layer boards, on the part side (top), every jumper wire as a link line between its
  ends with its length beside it ("J 7.62", mm centre to centre).

Silkscreen never lies on bare copper or in a hole: every line is clipped by the mask openings
of that side grown by :data:`SILK_GAP` beyond the line's half width, and by the board outline
less the same margin; a dot or + sign that would touch an opening is moved or left out.
:class:`Silk` says how many mm of line were drawn and how many clipped, and which marks found
no room.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Iterable, Optional, Sequence

from shapely.geometry import LineString, MultiLineString, Point as SPoint, box
from shapely.geometry.base import BaseGeometry
from shapely.ops import unary_union

from .fabfiles import SILK_GAP, SILK_WIDTH, TEXT_HEIGHT, text_strokes, text_width
from .geometry import ARC_SEGMENTS, body_polygon, body_rect, outline_polygon, part_footprint, part_rect, transform
from .model import Board, Part, Point

__all__ = ["Silk", "silk_layer", "to_local", "DOT", "PLUS", "BAND_STEP", "FUNCTIONS"]

#: Diameter of the pin-1 dot in mm (common practice: 0.3 to 0.6 mm, clear of the pad).
DOT = 0.5
#: Arm length of the + sign in mm.
PLUS = 0.8
#: Distance between the two strokes of a cathode band (mm, centre to centre).
BAND_STEP = 0.3

#: The aperture function of each kind of silkscreen line (``Other,<text>`` of the Gerber spec).
FUNCTIONS = {"outline": "Other,PartOutline", "ref": "Other,PartReference", "pin1": "Other,PinOneMark",
             "polarity": "Other,PolarityMark", "link": "Other,WireLink"}


@dataclass
class Silk:
    """The silkscreen of one side, ready to write.

    lines : (kind, polyline) in board mm, already clipped; kind is a key of :data:`FUNCTIONS`
    dots : (kind, centre, diameter), round marks flashed whole
    labels : (text, centre) of every text set (refs and wire links), for reading back
    drawn, clipped : mm of line kept and mm removed by the openings and the edge
    missing : marks that found no room, as "U1 pin-1 mark"
    """
    side: str
    lines: list[tuple[str, list[Point]]] = field(default_factory=list)
    dots: list[tuple[str, Point, float]] = field(default_factory=list)
    labels: list[tuple[str, Point]] = field(default_factory=list)
    drawn: float = 0.0
    clipped: float = 0.0
    missing: list[str] = field(default_factory=list)

    def summary(self) -> str:
        """One line for the list of files."""
        s = (f"silkscreen {self.side}: {self.drawn:.1f} mm of line drawn, {self.clipped:.1f} mm clipped "
             f"off mask openings (grown by {SILK_GAP:g} mm) and the board edge")
        if self.missing:
            s += f"; no room for: {', '.join(self.missing)}"
        return s


def to_local(part: Part, at: Point) -> Point:
    """Footprint-local coordinates of a board point: the inverse of :func:`router.geometry.transform`.

    >>> p = Part("U1", "dip-8", at=(10.0, 5.0), rotation=90, side="bottom")
    >>> to_local(p, transform(p, (1.5, -2.0)))
    (1.5, -2.0)
    """
    x, y = at[0] - part.at[0], at[1] - part.at[1]
    r = part.rotation % 360
    if r == 90:
        x, y = y, -x
    elif r == 180:
        x, y = -x, -y
    elif r == 270:
        x, y = -y, x
    elif r != 0:                       # any other angle: turn back by it
        c, s = math.cos(math.radians(r)), math.sin(math.radians(r))
        x, y = c * x + s * y, -s * x + c * y
    if part.side == "bottom":
        x = -x
    return (round(x, 9) + 0.0, round(y, 9) + 0.0)


def _line_pieces(geom: BaseGeometry) -> list[LineString]:
    if geom.is_empty:
        return []
    if isinstance(geom, LineString):
        return [geom]
    if isinstance(geom, MultiLineString):
        return list(geom.geoms)
    if hasattr(geom, "geoms"):
        return [p for g in geom.geoms for p in _line_pieces(g)]
    return []


class _Pen:
    """Draws clipped polylines into a :class:`Silk`, counting what the clipping removes."""

    def __init__(self, silk: Silk, keep_off: Optional[BaseGeometry], inside: BaseGeometry):
        self.silk, self.keep_off, self.inside = silk, keep_off, inside

    def lines(self, kind: str, polylines: Iterable[Sequence[Point]]) -> float:
        """Draw; returns the length kept."""
        kept = 0.0
        for pts in polylines:
            if len(pts) < 2:
                continue
            geom: BaseGeometry = LineString(pts)
            full = geom.length
            if self.keep_off is not None and geom.intersects(self.keep_off):
                geom = geom.difference(self.keep_off)
            if not self.inside.contains(geom):
                geom = geom.intersection(self.inside)
            here = 0.0
            for piece in _line_pieces(geom):
                coords = [(round(x, 9), round(y, 9)) for x, y in piece.coords]
                if len(coords) >= 2 and piece.length > 1e-9:
                    self.silk.lines.append((kind, coords))
                    here += piece.length
            self.silk.drawn += here
            self.silk.clipped += max(0.0, full - here)
            kept += here
        return kept

    def fits(self, geom: BaseGeometry) -> bool:
        """True when `geom` (already grown by the line's half width) is on the board, off every opening."""
        return self.inside.contains(geom) and (self.keep_off is None or not geom.intersects(self.keep_off))


def _ref_centre(board: Board, part: Part, pen: _Pen) -> Point:
    x0, y0, x1, y1 = body_rect(board, part)
    px0, py0, px1, py1 = part_rect(board, part)
    w, h = text_width(part.ref), TEXT_HEIGHT
    cx, cy = (x0 + x1) / 2, (y0 + y1) / 2
    gap = SILK_WIDTH + SILK_GAP
    candidates = [(cx, cy), (cx, py1 + gap + h / 2), (cx, py0 - gap - h / 2),
                  (px1 + gap + w / 2, cy), (px0 - gap - w / 2, cy)]
    for c in candidates:
        if pen.fits(box(c[0] - w / 2, c[1] - h / 2, c[0] + w / 2, c[1] + h / 2)):
            return c
    return (cx, cy)


def _directions(toward: Point) -> list[Point]:
    """The four axis directions, the one most along `toward` first (x before y on a tie)."""
    dirs = [(-1.0, 0.0), (0.0, -1.0), (1.0, 0.0), (0.0, 1.0)]
    return sorted(dirs, key=lambda d: -(d[0] * toward[0] + d[1] * toward[1]))


def _pin1(fp):
    pads = [p for p in fp.pads if p.pin == "1"]
    return pads[0] if pads else (fp.pads[0] if fp.pads else None)


def _outward(fp, pad) -> Point:
    """From the centre of the footprint's other pads (or the body centre) toward `pad`."""
    others = [p.offset for p in fp.pads if p.pin != pad.pin] or [(0.0, 0.0)]
    cx = sum(o[0] for o in others) / len(others)
    cy = sum(o[1] for o in others) / len(others)
    return (pad.offset[0] - cx, pad.offset[1] - cy)


def _beside_pad(part: Part, pad, reach: float, pen: _Pen, grown) -> Optional[Point]:
    """The first board point just outside `pad` (local) at `reach` beyond its edge where `grown(c)` fits."""
    fp_dir = _directions(pad._outward)
    for step in (1.0, 2.0):
        for d in fp_dir:
            half = pad.size[0] / 2 if d[0] else pad.size[1] / 2
            local = (pad.offset[0] + d[0] * (half + step * reach), pad.offset[1] + d[1] * (half + step * reach))
            c = transform(part, local)
            if pen.fits(grown(c)):
                return c
    return None


class _PadView:
    """A footprint pad with the direction out of its part, for :func:`_beside_pad`."""

    def __init__(self, pad, outward):
        self.pin, self.offset, self.size, self._outward = pad.pin, pad.offset, pad.size, outward


def _pin1_mark(board: Board, part: Part, pen: _Pen) -> None:
    fp = part_footprint(board, part)
    if len(fp.pins()) <= 2 or not fp.pads:
        return
    pad = _pin1(fp)
    view = _PadView(pad, _outward(fp, pad))
    reach = board.rules.mask_expansion + SILK_GAP + DOT / 2 + 0.05
    c = _beside_pad(part, view, reach, pen,
                    lambda c: SPoint(c).buffer(DOT / 2, quad_segs=ARC_SEGMENTS))
    if c is None:
        pen.silk.missing.append(f"{part.ref} pin-1 mark")
        return
    pen.silk.dots.append(("pin1", c, DOT))


def _plus_strokes(c: Point) -> list[list[Point]]:
    h = PLUS / 2
    return [[(c[0] - h, c[1]), (c[0] + h, c[1])], [(c[0], c[1] - h), (c[0], c[1] + h)]]


def _polarity_mark(board: Board, part: Part, pen: _Pen) -> None:
    fp = part_footprint(board, part)
    if not fp.polarised or not fp.pads:
        return
    pad = _pin1(fp)
    out = _outward(fp, pad)
    if fp.polarity == "plus":
        view = _PadView(pad, out)
        reach = board.rules.mask_expansion + SILK_GAP + PLUS / 2 + SILK_WIDTH / 2 + 0.05
        c = _beside_pad(part, view, reach, pen,
                        lambda c: unary_union([LineString(s) for s in _plus_strokes(c)])
                        .buffer(SILK_WIDTH / 2, quad_segs=ARC_SEGMENTS))
        if c is None:
            pen.silk.missing.append(f"{part.ref} polarity mark")
            return
        pen.lines("polarity", _plus_strokes(c))
        return
    # cathode band: two strokes across the body at its edge on pin 1's side
    d = _directions(out)[0]
    bw, bh = fp.body
    strokes = []
    for k in (0, 1):
        if d[0]:
            x = d[0] * (bw / 2 - k * BAND_STEP)
            strokes.append([transform(part, (x, -bh / 2)), transform(part, (x, bh / 2))])
        else:
            y = d[1] * (bh / 2 - k * BAND_STEP)
            strokes.append([transform(part, (-bw / 2, y)), transform(part, (bw / 2, y))])
    if pen.lines("polarity", strokes) <= 1e-9:
        pen.silk.missing.append(f"{part.ref} polarity mark")


def _links(board: Board, pen: _Pen) -> None:
    """Jumper wires of a one-layer board as link lines with their length."""
    for j in board.jumpers:
        pen.lines("link", [[j.start, j.end]])
        length = math.hypot(j.end[0] - j.start[0], j.end[1] - j.start[1])
        text = f"J {length:.2f}"
        w, h = text_width(text), TEXT_HEIGHT
        mx, my = (j.start[0] + j.end[0]) / 2, (j.start[1] + j.end[1]) / 2
        gap = SILK_WIDTH + SILK_GAP + 0.2
        if abs(j.end[0] - j.start[0]) >= abs(j.end[1] - j.start[1]):      # along x: above or below
            candidates = [(mx, my + gap + h / 2), (mx, my - gap - h / 2)]
        else:                                                              # along y: right or left
            candidates = [(mx + gap + w / 2, my), (mx - gap - w / 2, my)]
        centre = next((c for c in candidates
                       if pen.fits(box(c[0] - w / 2, c[1] - h / 2, c[0] + w / 2, c[1] + h / 2)
                                   .buffer(SILK_WIDTH / 2))), candidates[0])
        pen.silk.labels.append((text, centre))
        pen.lines("ref", text_strokes(text, centre, TEXT_HEIGHT))


def silk_layer(board: Board, side: str, openings: Sequence[BaseGeometry]) -> Silk:
    """The silkscreen of `side`, clipped by `openings` (the mask openings of that side, as shapes).

    Parameters
    ----------
    board : Board
        Every part placed.
    side : "top" or "bottom"
    openings : shapely shapes
        Where the solder mask leaves copper or a hole bare on `side`.

    Returns
    -------
    Silk
    """
    silk = Silk(side)
    from .layout import resolve
    lay = resolve(board)                     # the board resolved once (router.layout)
    inside = lay.outline.buffer(-SILK_WIDTH / 2 - SILK_GAP, quad_segs=ARC_SEGMENTS)
    keep_off = (unary_union(list(openings)).buffer(SILK_WIDTH / 2 + SILK_GAP, quad_segs=ARC_SEGMENTS)
                if openings else None)
    pen = _Pen(silk, keep_off, inside)
    for part, bd in zip([p for p in board.parts if p.at is not None], lay.bodies):
        if part.side != side:
            continue
        body = [tuple(map(float, p)) for p in bd.polygon.exterior.coords]   # turned with the part
        pen.lines("outline", [body])
        centre = _ref_centre(board, part, pen)
        silk.labels.append((part.ref, centre))
        pen.lines("ref", text_strokes(part.ref, centre, TEXT_HEIGHT, mirror=(side == "bottom")))
    # marks after the refs, so a ref's first choice does not depend on them
    # (dots are tested against openings; they may cross an outline or a ref, as printed marks do)
    for part in board.parts:
        if part.side != side or part.at is None:
            continue
        _pin1_mark(board, part, pen)
        _polarity_mark(board, part, pen)
    if board.copper_layers == 1 and side == "top":
        _links(board, pen)
    return silk
