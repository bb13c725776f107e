"""A 1:1 print of one copper layer, for home etching (toner transfer or photo exposure).

The PDF page shows one copper layer in black on white at true size: pads, traces, vias, jumper
ends and pours of that layer, every drill centre as a small white hole (:data:`DRILL_MARK` mm
across, or the drill itself if smaller) to centre the drill bit, the board outline as a thin
line, and a 50 mm scale bar with end ticks below the board to check the printer's scale
(printers often shrink a page "to fit": turn that off).

The page is the first of A4 portrait, A4 landscape, A3 portrait, A3 landscape that holds the
board with :data:`MARGIN` mm around it and the bar below it; a larger board gets a page of its
own size. The board sits in the upper left corner, :data:`MARGIN` mm from both edges. The drawing is made with matplotlib's PDF backend on axes that fill the page and
use millimetres, so one unit is exactly one millimetre on paper.

Seen from the top by default (x to the right). ``mirror`` flips it left to right. For toner
transfer the page is laid face down on the copper, which mirrors it once: print the top layer
mirrored and the bottom layer as seen from the top (common practice).
"""
from __future__ import annotations

import io
from dataclasses import dataclass, replace
from pathlib import Path

from .errors import BoardError
from .model import Board
from .safefile import write_atomic

__all__ = ["print_layer", "print_pdf", "PrintInfo", "PAGES", "MARGIN", "SCALE_BAR", "DRILL_MARK"]

#: Page sizes tried in order, (width, height) in mm (ISO 216 A4 and A3).
PAGES = (("A4", 210.0, 297.0), ("A4 landscape", 297.0, 210.0), ("A3", 297.0, 420.0),
         ("A3 landscape", 420.0, 297.0))
#: Free paper around the board, mm.
MARGIN = 15.0
#: Length of the scale bar, mm.
SCALE_BAR = 50.0
#: Diameter of the white drill-centre mark, mm (smaller drills are marked at their size).
DRILL_MARK = 0.6
_BAR_ROOM = 18.0            # below the board: the bar, its ticks and the caption
_PT = 72.0 / 25.4           # points per mm


@dataclass(frozen=True)
class PrintInfo:
    """What was printed: the page, where the board and the bar are on it (page mm, origin lower left)."""
    path: Path | None
    page: str
    page_size: tuple[float, float]
    board_origin: tuple[float, float]      # page position of the board's lower-left bound
    bar: tuple[tuple[float, float], tuple[float, float]]
    layer: str
    mirror: bool


def _page_for(w: float, h: float) -> tuple[str, float, float]:
    for name, pw, ph in PAGES:
        if w + 2 * MARGIN <= pw and h + 2 * MARGIN + _BAR_ROOM <= ph:
            return name, pw, ph
    return "board size", round(w + 2 * MARGIN, 3), round(h + 2 * MARGIN + _BAR_ROOM, 3)


def _layer_shapes(board: Board, layer: str):
    """Copper of `layer` as shapely shapes, and the drill centres (x, y, drill) through it."""
    from .geometry import pad_shape, ring_shape, trace_shape
    from .layout import resolve
    shapes, drills = [], []
    for p in resolve(board).pads:                 # the board resolved once (router.layout)
        if layer in p.layers:
            shapes.append(pad_shape(p))
            if p.drill is not None:
                drills.append((p.x, p.y, p.drill))
    shapes += [trace_shape(t) for t in board.traces if t.layer == layer and t.points]
    for v in board.vias:
        shapes.append(ring_shape(v.at, v.diameter))
        drills.append((v.at[0], v.at[1], v.drill))
    if layer in board.layers:
        for j in board.jumpers:
            for e in (j.start, j.end):
                shapes.append(ring_shape(e, j.diameter))
                drills.append((e[0], e[1], j.drill))
    if board.pours:
        from .pour import pour_geometry
        shapes += [pour_geometry(p) for p in board.pours if p.layer == layer and p.filled]
    return shapes, drills


def print_layer(board: Board, path, layer: str | None = None, mirror: bool = False) -> PrintInfo:
    """Write the 1:1 PDF print of one copper layer of `board` to `path`, atomically.

    See :func:`print_pdf` for what is drawn.

    Parameters
    ----------
    board : Board
    path : str or Path
        Must end in ``.pdf``.
    layer : "top", "bottom" or None
        None: the part side's copper, "top", on two-layer boards; "bottom" on one-layer boards.
    mirror : bool
        Flip the print left to right.

    Returns
    -------
    PrintInfo

    Raises
    ------
    BoardError
        For a path not ending in .pdf, a layer the board does not have, or an unplaced part.
    """
    path = Path(path)
    if path.suffix.lower() != ".pdf":
        raise BoardError(str(path), "-o", f"a print is a .pdf file, not '{path.suffix or path.name}'; name it FILE.pdf")
    data, info = print_pdf(board, layer, mirror)
    write_atomic(path, data)
    return replace(info, path=path)


def print_pdf(board: Board, layer: str | None = None, mirror: bool = False) -> tuple[bytes, PrintInfo]:
    """The 1:1 PDF print of one copper layer as bytes, and what was printed (its path is None)."""
    from matplotlib.backends.backend_pdf import FigureCanvasPdf
    from matplotlib.figure import Figure
    from matplotlib.patches import Circle, PathPatch, Polygon as MPolygon
    from shapely.affinity import scale as shp_scale, translate

    from .draw import _path
    from .layout import resolve
    lay = resolve(board)

    layer = layer or board.layers[0]
    if layer not in board.layers:
        raise BoardError(board.source, "--layer", f"this board has no {layer} copper (layers: "
                                                  f"{', '.join(board.layers)}); choose one of those")
    for i, part in enumerate(board.parts):
        if part.at is None:
            raise BoardError(board.source, f"part {i + 1} ({part.ref})",
                             "the part has no place, so it has no copper to print; place it first (elbowroom place)")

    outline = lay.outline
    bx0, by0, bx1, by1 = outline.bounds
    bw, bh = bx1 - bx0, by1 - by0
    page, pw, ph = _page_for(bw, bh)
    ox = MARGIN                             # page position of the board's left bound
    oy = ph - MARGIN - bh                   # ... and of its lower bound

    def place(g):
        if mirror:
            g = shp_scale(g, xfact=-1.0, yfact=1.0, origin=((bx0 + bx1) / 2, 0.0))
        return translate(g, ox - bx0, oy - by0)

    def place_pt(x, y):
        if mirror:
            x = bx0 + bx1 - x
        return (x - bx0 + ox, y - by0 + oy)

    fig = Figure(figsize=(pw / 25.4, ph / 25.4), facecolor="white")
    FigureCanvasPdf(fig)
    ax = fig.add_axes((0, 0, 1, 1))
    ax.set_xlim(0, pw)
    ax.set_ylim(0, ph)
    ax.set_axis_off()

    shapes, drills = _layer_shapes(board, layer)
    for g in shapes:
        p = _path(place(g))
        if p is not None:
            ax.add_patch(PathPatch(p, facecolor="black", edgecolor="none"))
    for x, y, d in drills:
        ax.add_patch(Circle(place_pt(x, y), min(DRILL_MARK, d) / 2, facecolor="white", edgecolor="none"))
    for h in lay.npth:                       # unplated holes: a ring to drill through
        ax.add_patch(Circle(place_pt(h.x, h.y), h.drill / 2, facecolor="none", edgecolor="black",
                            linewidth=0.15 * _PT))
        ax.add_patch(Circle(place_pt(h.x, h.y), min(DRILL_MARK, h.drill) / 2, facecolor="black"))
    ring = list(place(outline).exterior.coords)
    ax.add_patch(MPolygon(ring, closed=True, facecolor="none", edgecolor="black", linewidth=0.15 * _PT))

    # the scale bar: SCALE_BAR mm long, butt ends, with end ticks
    y = oy - 8.0
    x0 = MARGIN
    bar = ((x0, y), (x0 + SCALE_BAR, y))
    ax.plot([bar[0][0], bar[1][0]], [y, y], color="black", linewidth=0.4 * _PT, solid_capstyle="butt")
    for x in (bar[0][0], bar[1][0]):
        ax.plot([x, x], [y - 1.5, y + 1.5], color="black", linewidth=0.2 * _PT, solid_capstyle="butt")
    ax.text(x0, y + 1.8, f"{SCALE_BAR:g} mm: measure this bar; print at 100 %, no fit to page",
            ha="left", va="bottom", fontsize=7)
    side = "mirrored (left to right)" if mirror else "seen from the top"
    ax.text(x0, y - 3.0, f"{board.name}: copper {layer}, {side}, 1:1", ha="left", va="top", fontsize=8)

    buf = io.BytesIO()
    fig.savefig(buf, format="pdf", metadata={"CreationDate": None, "Creator": "elbowroom"})
    return buf.getvalue(), PrintInfo(None, page, (pw, ph), (ox, oy), bar, layer, mirror)
