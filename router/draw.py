"""PNG and SVG pictures of a board, and the comparison bar chart, through matplotlib.

A picture shows the outline, keepouts, part bodies with their refs, pads,
traces by layer, vias, jumpers as wires, the unrouted connections as thin
straight lines (:func:`ratsnest`) and, when given, the check's violations as
markers. Figures are built with matplotlib's object interface on the Agg
canvas (no pyplot, so no global state and no window), saved to memory and
written with :func:`router.safefile.write_atomic`.

The colours are our own choice from the Okabe-Ito palette, a published
colour-blind-safe set of eight colours [1]_ [2]_: copper on top is orange,
copper on the bottom reddish purple, the board an off-white, plated holes dark
grey, vias black, jumper wires bluish green, unrouted connections blue and
violations vermillion. :mod:`router.page` uses the same :data:`STYLE`.

References
----------
.. [1] M. Okabe, K. Ito, "Color Universal Design (CUD): how to make figures and
   presentations that are friendly to colorblind people", J*Fly, 2002/2008,
   https://jfly.uni-koeln.de/color/
.. [2] B. Wong, "Points of view: Color blindness", Nature Methods 8, 441 (2011).
"""
from __future__ import annotations

import io
import math
from collections import defaultdict
from pathlib import Path
from typing import Optional, Sequence

from .errors import BoardError
from .model import Board
from .safefile import write_atomic

__all__ = ["OKABE_ITO", "STYLE", "LAYER_COLOURS", "ratsnest", "board_figure", "render",
           "compare_rows", "compare_figure", "plot_compare"]

#: The Okabe-Ito palette [1]_, by the names its authors give the colours.
OKABE_ITO = {
    "black": "#000000",
    "orange": "#E69F00",
    "sky blue": "#56B4E9",
    "bluish green": "#009E73",
    "yellow": "#F0E442",
    "blue": "#0072B2",
    "vermillion": "#D55E00",
    "reddish purple": "#CC79A7",
}

#: Copper colour per layer: orange on top, reddish purple on the bottom.
LAYER_COLOURS = {"top": OKABE_ITO["orange"], "bottom": OKABE_ITO["reddish purple"]}

#: Every colour of the pictures and the page, in one place.
STYLE = {
    "paper": "#FFFFFF",              # around the board
    "board": "#F6F3EC",              # the board itself: an off-white, not a board colour
    "outline": OKABE_ITO["black"],
    "keepout": OKABE_ITO["sky blue"],
    "body": "#3A3A3A",               # part body outline and refs
    "through_pad": "#5A5A5A",        # pads with a drill (on every layer)
    "drill": "#FFFFFF",
    "via": OKABE_ITO["black"],
    "jumper": OKABE_ITO["bluish green"],
    "ratsnest": OKABE_ITO["blue"],
    "violation": OKABE_ITO["vermillion"],
    "top": LAYER_COLOURS["top"],
    "bottom": LAYER_COLOURS["bottom"],
}

#: Longest side of the board's drawing area, inches.
_BOARD_INCHES = 8.0
_MARGIN_IN = 0.35
_TITLE_IN = 0.45
_LEGEND_IN = 0.75


# ----------------------------------------------------------------------------- ratsnest

def ratsnest(board: Board, groups: Optional[dict] = None) -> list[tuple[str, tuple, tuple]]:
    """The unrouted connections: straight lines joining each net's pin groups.

    For every net of the file whose pins its copper does not yet join, the pin
    groups of :func:`router.connectivity.net_groups` are joined by a minimum
    spanning tree (Prim's algorithm) in which two groups are as far apart as
    their two nearest pad centres (Euclidean). Each tree edge is one line
    between those two pad centres.

    Parameters
    ----------
    board : Board
    groups : dict, optional
        ``net_groups(board)`` when already computed.

    Returns
    -------
    list of (net, (x0, y0), (x1, y1))
        In file order of the nets; a routed net has none, a net of k groups with
        placed pads has k - 1. Groups without a placed pad (unplaced parts) are left out.

    Examples
    --------
    >>> from router.boardfile import loads_board
    >>> b = loads_board('''format = 1
    ... [board]
    ... name = "t"
    ... size = [20.0, 10.0]
    ... [[parts]]
    ... ref = "R1"
    ... footprint = "axial-10.16"
    ... at = [10.0, 5.0]
    ... [[nets]]
    ... name = "A"
    ... pins = ["R1.1", "R1.2"]
    ... ''')
    >>> ratsnest(b)
    [('A', (4.92, 5.0), (15.08, 5.0))]
    """
    from .layout import resolve

    lay = resolve(board)                     # the board resolved once (router.layout)
    if groups is None:
        groups = lay.groups(board)
    pads_of = defaultdict(list)
    for p in lay.pads:
        pads_of[(p.net, p.name)].append(p)
    lines = []
    for net in board.nets:
        gs = groups.get(net.name, [])
        if len(gs) <= 1:
            continue
        pts = []
        for g in gs:
            pads = [(p.x, p.y, (p.ref, p.index)) for pin in g for p in pads_of.get((net.name, pin), [])]
            if pads:
                pts.append(pads)
        if len(pts) <= 1:
            continue
        lines.extend((net.name, a, b) for a, b in _group_tree(pts))
    return lines


def _nearest(ga, gb):
    best = (math.inf, None, None)
    for ax, ay, ka in ga:
        for bx, by, kb in gb:
            if ka == kb:      # one pad listed in two groups (a pin on several pads)
                continue
            d = math.hypot(ax - bx, ay - by)
            if d < best[0]:
                best = (d, (ax, ay), (bx, by))
    return best


def _group_tree(pts):
    """Prim's minimum spanning tree over groups of points; the edges as point pairs."""
    n = len(pts)
    inside = [False] * n
    inside[0] = True
    best = [_nearest(pts[0], pts[j]) if j else None for j in range(n)]
    edges = []
    for _ in range(n - 1):
        j = min((k for k in range(n) if not inside[k]), key=lambda k: (best[k][0], k))
        if best[j][1] is None:      # nothing to join it to
            inside[j] = True
            continue
        inside[j] = True
        edges.append((best[j][1], best[j][2]))
        for k in range(n):
            if not inside[k]:
                cand = _nearest(pts[j], pts[k])
                if cand[0] < best[k][0]:
                    best[k] = cand
    return edges


# ----------------------------------------------------------------------------- the picture

def _path(geom):
    """A shapely polygon (or multipolygon) as one matplotlib Path, holes included."""
    from matplotlib.path import Path as MPath
    from shapely.geometry.polygon import orient

    polys = list(geom.geoms) if hasattr(geom, "geoms") else [geom]
    paths = []
    for poly in polys:
        if poly.is_empty or poly.geom_type != "Polygon":
            continue
        poly = orient(poly, 1.0)
        paths.append(MPath(list(poly.exterior.coords), closed=True))
        paths.extend(MPath(list(r.coords), closed=True) for r in poly.interiors)
    return MPath.make_compound_path(*paths) if paths else None


def _patches(geoms):
    from matplotlib.patches import PathPatch
    out = []
    for g in geoms:
        p = _path(g)
        if p is not None:
            out.append(PathPatch(p))
    return out


def _figure_layout(board: Board, extra_in: float = 0.0):
    """Figure size (w, h) in inches, the axes rectangle in figure fractions, and the data limits.

    `extra_in` inches are added at the bottom (the numbered list of violations)."""
    xs = [p[0] for p in board.outline]
    ys = [p[1] for p in board.outline]
    x0, x1, y0, y1 = min(xs), max(xs), min(ys), max(ys)
    m = 0.03 * max(x1 - x0, y1 - y0, 1e-9)
    lim = (x0 - m, x1 + m, y0 - m, y1 + m)
    dw, dh = lim[1] - lim[0], lim[3] - lim[2]
    scale = _BOARD_INCHES / max(dw, dh)
    aw, ah = dw * scale, dh * scale
    fw = max(aw + 2 * _MARGIN_IN, 6.0)
    fh = ah + _TITLE_IN + _LEGEND_IN + _MARGIN_IN + extra_in
    rect = ((fw - aw) / 2 / fw, (_LEGEND_IN + _MARGIN_IN / 2 + extra_in) / fh, aw / fw, ah / fh)
    return (fw, fh), rect, lim, scale


#: Size of the refs, violation numbers and net names in points (readable at the PNG's 150 dpi).
REF_PT = 6.5
#: Most violations listed under the picture; the rest are counted.
_LIST_MAX = 30
_LIST_LINE_IN = 0.13


def board_figure(board: Board, violations: Optional[Sequence] = None, dpi: float = 150,
                 labels: Optional[str] = None, layout=None):
    """The board drawn on a new matplotlib Figure (Agg canvas); draws nothing to disk.

    Parameters
    ----------
    board : Board
    violations : list of router.check.Violation, optional
        Drawn as markers at their ``at``, each numbered; the numbers are listed with the rule and
        message under the picture (those without a place are counted in the title); when given,
        the title counts the check's warnings (:func:`router.check.warnings`) too.
    dpi : float
    labels : None or "nets"
        "nets": net names along long trace segments too.
    layout : Layout, optional
        `board` resolved (:func:`router.layout.resolve`); default: resolved here.

    Notes
    -----
    Refs, violation numbers and net names are placed by :mod:`router.labels`: never over a pad,
    trace, via or another label where a free spot exists around the part. Millimetre ticks run
    along the bottom and left edges (marks on all four).

    Returns
    -------
    (Figure, Axes)
        The axes use board millimetres, y up, equal scale.
    """
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.collections import LineCollection, PatchCollection
    from matplotlib.figure import Figure
    from matplotlib.lines import Line2D
    from matplotlib.patches import Circle, Patch, Polygon as MPolygon, Rectangle

    from .geometry import pad_shape, ring_shape, trace_shape
    from .layout import resolve

    lay = resolve(board) if layout is None else layout      # the board resolved once (router.layout)

    placed_v = [v for v in (violations or []) if getattr(v, "at", None) is not None]
    listed = min(len(placed_v), _LIST_MAX) + (1 if len(placed_v) > _LIST_MAX else 0)
    extra_in = listed * _LIST_LINE_IN + (0.1 if listed else 0.0)
    size, rect, lim, scale = _figure_layout(board, extra_in)
    fig = Figure(figsize=size, dpi=dpi, facecolor=STYLE["paper"])
    FigureCanvasAgg(fig)
    ax = fig.add_axes(rect)
    ax.set_xlim(lim[0], lim[1])
    ax.set_ylim(lim[2], lim[3])
    ax.set_aspect("equal", adjustable="box")
    _mm_ticks(ax, lim)
    pt_per_mm = scale * 72.0

    # the board and its outline
    outline = lay.outline
    ax.add_patch(MPolygon(list(outline.exterior.coords), closed=True, facecolor=STYLE["board"],
                          edgecolor=STYLE["outline"], linewidth=1.2, zorder=0, gid="outline"))

    # keepouts, hatched
    for k, ko in enumerate(board.keepouts):
        ax.add_patch(MPolygon(ko.polygon, closed=True, facecolor="none", edgecolor=STYLE["keepout"],
                              hatch="////", linewidth=0.8, zorder=1, gid=f"keepout-{k + 1}"))

    # part bodies and refs
    for body in lay.bodies:
        ax.add_patch(MPolygon(list(body.polygon.exterior.coords), closed=True, facecolor="none",
                              edgecolor=STYLE["body"], linewidth=0.6,
                              linestyle=(0, (3, 2)) if body.side == "bottom" else "solid", zorder=2))

    # pours: filled and semi-transparent, under the traces, thermal gaps showing (router.pour)
    if board.pours:
        from .pour import pour_geometry
        for layer in reversed(board.layers):
            geoms = [pour_geometry(p) for p in board.pours if p.layer == layer and p.filled]
            if geoms:
                pc = PatchCollection(_patches(geoms), facecolor=STYLE[layer], edgecolor="none",
                                     alpha=0.35, zorder=2.5 if layer == "bottom" else 2.7)
                pc.set_gid(f"pour-{layer}")
                ax.add_collection(pc)

    # copper by layer: bottom first, then top over it
    pads = list(lay.pads)
    for layer in reversed(board.layers):
        shapes = [trace_shape(t) for t in board.traces if t.layer == layer and t.points]
        shapes += [pad_shape(p) for p in pads if p.drill is None and p.layers == (layer,)]
        if shapes:
            pc = PatchCollection(_patches(shapes), facecolor=STYLE[layer], edgecolor="none",
                                 alpha=0.9 if layer == "top" and len(board.layers) == 2 else 1.0,
                                 zorder=3 if layer == "bottom" else 4)
            pc.set_gid(f"copper-{layer}")
            ax.add_collection(pc)

    through = [pad_shape(p) for p in pads if p.drill is not None]
    if through:
        pc = PatchCollection(_patches(through), facecolor=STYLE["through_pad"], edgecolor="none", zorder=5)
        pc.set_gid("plated-pads")
        ax.add_collection(pc)
    if board.vias:
        pc = PatchCollection(_patches([ring_shape(v.at, v.diameter) for v in board.vias]),
                             facecolor=STYLE["via"], edgecolor="none", zorder=6)
        pc.set_gid("vias")
        ax.add_collection(pc)

    # jumpers: a wire between two plated ends
    if board.jumpers:
        ends = [ring_shape(p, j.diameter) for j in board.jumpers for p in (j.start, j.end)]
        pc = PatchCollection(_patches(ends), facecolor=STYLE["through_pad"], edgecolor="none", zorder=5)
        ax.add_collection(pc)
        lc = LineCollection([[j.start, j.end] for j in board.jumpers], colors=STYLE["jumper"],
                            linewidths=2.2, capstyle="round", zorder=6.5)
        lc.set_gid("jumpers")
        ax.add_collection(lc)

    # drills on top of the copper
    drills = [(p.at, p.drill) for p in pads if p.drill is not None]
    drills += [(v.at, v.drill) for v in board.vias]
    drills += [(e, j.drill) for j in board.jumpers for e in (j.start, j.end)]
    if drills:
        pc = PatchCollection([Circle(c, d / 2) for c, d in drills], facecolor=STYLE["drill"],
                             edgecolor="none", zorder=7)
        ax.add_collection(pc)
    holes = list(lay.npth)
    if holes:
        pc = PatchCollection([Circle((h.x, h.y), h.drill / 2) for h in holes], facecolor=STYLE["drill"],
                             edgecolor=STYLE["outline"], linewidths=0.6, zorder=7)
        pc.set_gid("holes")
        ax.add_collection(pc)

    # unrouted connections
    groups = lay.groups(board)
    lines = ratsnest(board, groups)
    if lines:
        lc = LineCollection([[a, b] for _, a, b in lines], colors=STYLE["ratsnest"], linewidths=0.6,
                            zorder=9)
        lc.set_gid("unrouted")
        ax.add_collection(lc)

    # violations: markers, numbered
    if placed_v:
        ax.scatter([v.at[0] for v in placed_v], [v.at[1] for v in placed_v], marker="X", s=70,
                   c=STYLE["violation"], edgecolors=STYLE["outline"], linewidths=0.6, zorder=11,
                   gid="violations")

    # words: refs beside their parts, violation numbers, net names (router.labels)
    _draw_labels(ax, board, placed_v, lim, REF_PT / pt_per_mm, labels)
    if placed_v:
        rows = [f"{k}  {v.rule}: {v.message}" for k, v in enumerate(placed_v[:_LIST_MAX], start=1)]
        if len(placed_v) > _LIST_MAX:
            rows.append(f"... and {len(placed_v) - _LIST_MAX} more (elbowroom check lists them all)")
        for k, row in enumerate(rows):
            fig.text(_MARGIN_IN / size[0], (extra_in - 0.05 - (k + 0.5) * _LIST_LINE_IN) / size[1],
                     row if len(row) <= 150 else row[:147] + "...", ha="left", va="center", fontsize=6.5,
                     color=STYLE["violation"] if k < _LIST_MAX else STYLE["body"], gid=f"violation-row-{k + 1}")

    # title and legend
    n_routed = sum(1 for n in board.nets if len(groups.get(n.name, [])) <= 1)
    title = f"{board.name}: {n_routed} of {len(board.nets)} nets routed"
    n_unplaced = sum(1 for p in board.parts if p.at is None)
    if n_unplaced:
        title += f", {n_unplaced} part{'s' if n_unplaced != 1 else ''} not placed"
    if violations is not None:
        unplaced = len(violations) - len(placed_v)
        title += f", {len(violations)} violation{'s' if len(violations) != 1 else ''}"
        if unplaced:
            title += f" ({unplaced} without a place)"
        from .check import warnings          # dangling ends, own pad spacing, stale pours
        n_warn = len(warnings(board))
        if n_warn:
            title += f", {n_warn} warning{'s' if n_warn != 1 else ''}"
    fig.text(0.5, 1 - (_TITLE_IN * 0.55) / size[1], title, ha="center", va="center", fontsize=10)

    handles = [Patch(facecolor=STYLE[l], label=f"copper {l}") for l in board.layers]
    handles.append(Patch(facecolor=STYLE["through_pad"], label="plated pad"))
    if board.vias:
        handles.append(Line2D([], [], linestyle="none", marker="o", markersize=6, markerfacecolor=STYLE["via"],
                              markeredgecolor=STYLE["via"], label="via"))
    if board.jumpers:
        handles.append(Line2D([], [], color=STYLE["jumper"], linewidth=2.2, label="jumper wire"))
    if lines:
        handles.append(Line2D([], [], color=STYLE["ratsnest"], linewidth=0.8, label="unrouted"))
    if board.keepouts:
        handles.append(Patch(facecolor="none", edgecolor=STYLE["keepout"], hatch="////", label="keepout"))
    if placed_v:
        handles.append(Line2D([], [], linestyle="none", marker="X", markersize=7,
                              markerfacecolor=STYLE["violation"], markeredgecolor=STYLE["outline"],
                              label="violation"))
    fig.legend(handles=handles, loc="lower center", ncol=min(len(handles), 4), frameon=False, fontsize=8,
               bbox_to_anchor=(0.5, (_MARGIN_IN / 4 + extra_in) / size[1]))
    return fig, ax


def _mm_ticks(ax, lim) -> None:
    """Millimetre ticks along the board's edges: labelled at the bottom and left, marked all round."""
    from matplotlib.ticker import MultipleLocator
    span = max(lim[1] - lim[0], lim[3] - lim[2])
    step = next(s for s in (1, 2, 5, 10, 20, 50, 100, 200, 500, 1e9) if span / s <= 12)
    ax.set_facecolor(STYLE["paper"])
    for spine in ax.spines.values():
        spine.set_visible(False)
    for axis in (ax.xaxis, ax.yaxis):
        axis.set_major_locator(MultipleLocator(step))
        axis.set_minor_locator(MultipleLocator(step / 5 if step >= 5 else step / 2))
    ax.tick_params(which="both", direction="out", top=True, right=True, labelsize=6, colors=STYLE["body"],
                   length=3)
    ax.tick_params(which="minor", length=1.5)
    ax.set_xlabel("mm", fontsize=6, labelpad=1, color=STYLE["body"])


def _draw_labels(ax, board: Board, placed_v, lim, height: float, labels: Optional[str]) -> list:
    """Refs, violation numbers and (with labels="nets") net names, placed by router.labels."""
    from .labels import Placer, copper_obstacles, net_labels, ref_labels, violation_labels
    limits = (lim[0], lim[2], lim[1], lim[3])
    placer = Placer(copper_obstacles(board), limits)
    out = ref_labels(board, height, limits, placer)
    for lab in out:
        ax.text(lab.x, lab.y, lab.text, fontsize=REF_PT, ha="center", va="center", color=STYLE["body"],
                zorder=10, gid=f"ref-{lab.owner}")
        if lab.leader:
            ax.plot(*zip(*lab.leader), color=STYLE["body"], linewidth=0.4, zorder=9.5)
    vl = violation_labels(placed_v, height, limits, placer)
    for lab in vl:
        ax.text(lab.x, lab.y, lab.text, fontsize=REF_PT, ha="center", va="center", color=STYLE["violation"],
                fontweight="bold", zorder=12, gid=f"violation-{lab.owner}")
        if lab.leader:
            ax.plot(*zip(*lab.leader), color=STYLE["violation"], linewidth=0.5, zorder=11.5)
    out += vl
    if labels == "nets":
        nl = net_labels(board, height, limits, placer)
        for lab in nl:
            ax.text(lab.x, lab.y, lab.text, fontsize=REF_PT * 0.9, ha="center", va="center",
                    rotation=lab.rotation, color=OKABE_ITO["black"], zorder=10.5, gid=f"net-{lab.owner}",
                    bbox=dict(boxstyle="square,pad=0.1", facecolor=STYLE["board"], edgecolor="none", alpha=0.8))
        out += nl
    return out


def _format_of(path: Path, entry: str = "-o") -> str:
    suffix = path.suffix.lower()
    if suffix not in (".png", ".svg"):
        raise BoardError(str(path), entry, f"unknown picture type '{suffix}'; use .png or .svg")
    return suffix[1:]


def _save(fig, path: Path, fmt: str) -> None:
    import matplotlib
    buf = io.BytesIO()
    meta = {"Date": None} if fmt == "svg" else {"Software": None}
    with matplotlib.rc_context({"svg.hashsalt": "elbowroom", "svg.fonttype": "none"}):
        fig.savefig(buf, format=fmt, metadata=meta, facecolor=fig.get_facecolor())
    write_atomic(path, buf.getvalue())


def render(board: Board, path, violations: Optional[Sequence] = None, dpi: float = 150,
           labels: Optional[str] = None) -> Path:
    """Draw `board` into a ``.png`` or ``.svg`` file, written atomically.

    Parameters
    ----------
    board : Board
    path : str or Path
        The picture; its suffix chooses the format.
    violations : list of router.check.Violation, optional
        Marked where they are.
    dpi : float
        Pixels per inch of a PNG (the board's longer side is 8 inches).
    labels : None or "nets"
        "nets": write net names along long traces.

    Returns
    -------
    Path
        The path written.

    Raises
    ------
    BoardError
        For a suffix other than .png or .svg.
    """
    path = Path(path)
    fmt = _format_of(path)
    fig, _ = board_figure(board, violations, dpi=dpi, labels=labels)
    _save(fig, path, fmt)
    return path


# ----------------------------------------------------------------------------- comparison

_KEYS = ("bends", "length", "vias")
_LABEL_KEYS = ("label", "board", "name", "file", "path")


def _totals_of(figs):
    if isinstance(figs, dict):
        if isinstance(figs.get("totals"), dict):
            return figs["totals"]
        if any(k in figs for k in _KEYS):
            return figs
    return None


def _label_of(d):
    for k in _LABEL_KEYS:
        if isinstance(d.get(k), str):
            return d[k]
    return None


def compare_rows(comp) -> list[tuple[str, dict]]:
    """(label, totals) per board from a comparison, read defensively.

    Accepts a list of ``(label, figures)`` pairs (``figures`` as
    :func:`router.figures.board_figures` returns them), a list of dicts with a label
    and totals, a dict whose ``"boards"`` holds either of these (or labels beside a
    ``"totals"`` list or mapping), or a dict from label to figures.

    Raises
    ------
    ValueError
        When no board's totals can be found.
    """
    rows: list[tuple[str, dict]] = []
    if isinstance(comp, (list, tuple)):
        for k, item in enumerate(comp):
            if isinstance(item, (list, tuple)) and len(item) == 2:
                t = _totals_of(item[1])
                if t is not None:
                    rows.append((str(item[0]), t))
            elif isinstance(item, dict):
                t = _totals_of(item)
                if t is None and isinstance(item.get("figures"), dict):
                    t = _totals_of(item["figures"])
                if t is not None:
                    rows.append((_label_of(item) or f"board {k + 1}", t))
    elif isinstance(comp, dict):
        boards = comp.get("boards")
        if isinstance(boards, (list, tuple)) and boards and all(isinstance(b, str) for b in boards):
            totals = comp.get("totals")
            if isinstance(totals, (list, tuple)):
                rows = [(b, t) for b, t in zip(boards, totals) if isinstance(t, dict)]
            elif isinstance(totals, dict):
                rows = [(b, totals[b]) for b in boards if isinstance(totals.get(b), dict)]
                if not rows:      # column form: {field: [value per board], ...}
                    cols = {k: v for k, v in totals.items()
                            if k not in ("differs", "best") and isinstance(v, (list, tuple))
                            and len(v) == len(boards)}
                    if any(k in cols for k in _KEYS):
                        rows = [(b, {k: v[i] for k, v in cols.items()}) for i, b in enumerate(boards)]
            if not rows and isinstance(comp.get("figures"), (list, tuple)):
                rows = [(b, t) for b, f in zip(boards, comp["figures"]) if (t := _totals_of(f))]
        elif isinstance(boards, (list, tuple, dict)):
            rows = compare_rows(list(boards.items()) if isinstance(boards, dict) else boards)
        if not rows:
            rows = [(str(k), t) for k, v in comp.items() if (t := _totals_of(v)) is not None
                    and k not in ("totals", "nets")]
    if not rows:
        raise ValueError("no board totals found in the comparison (expected (label, figures) pairs "
                         "or a dict from router.figures.compare_figures)")
    return rows


def _short_labels(labels):
    short = [Path(l).stem if ("/" in l or l.endswith(".toml")) else l for l in labels]
    return short if len(set(short)) == len(short) else list(labels)


def chart_keys(rows) -> list[str]:
    """The panels of the comparison chart: bends, length, then vias for two-layer boards and
    jumpers for one-layer boards (both when the boards are mixed).

    A board's layer count is its totals' ``copper_layers``; where that is missing, a board
    with jumpers counts as one-layer and any other as two-layer.

    >>> chart_keys([("a", {"copper_layers": 1, "jumpers": 0}), ("b", {"copper_layers": 1})])
    ['bends', 'length', 'jumpers']
    >>> chart_keys([("a", {"copper_layers": 2}), ("b", {"jumpers": 3})])
    ['bends', 'length', 'vias', 'jumpers']
    """
    def layers(t):
        if t.get("copper_layers") in (1, 2):
            return t["copper_layers"]
        return 1 if (t.get("jumpers") or 0) > 0 and not (t.get("vias") or 0) else 2
    have = {layers(t) for _, t in rows}
    return ["bends", "length"] + (["vias"] if 2 in have else []) + (["jumpers"] if 1 in have else [])


def compare_figure(comp, dpi: float = 150):
    """The comparison bar chart on a new Figure: bends, length, and vias or jumpers per board
    (:func:`chart_keys`)."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure
    from matplotlib.ticker import MaxNLocator

    rows = compare_rows(comp)
    labels = _short_labels([r[0] for r in rows])
    n = len(rows)
    keys = chart_keys(rows)
    fig = Figure(figsize=(max(7.5, 1.2 * n * len(keys)), 3.6), dpi=dpi, facecolor=STYLE["paper"])
    FigureCanvasAgg(fig)
    axes = fig.subplots(1, len(keys))
    colours = {"bends": OKABE_ITO["orange"], "length": OKABE_ITO["blue"], "vias": OKABE_ITO["bluish green"],
               "jumpers": OKABE_ITO["reddish purple"]}
    units = {"bends": "bends", "length": "length (mm)", "vias": "vias", "jumpers": "jumpers"}
    xs = list(range(n))
    for ax, key in zip(axes, keys):
        vals = [float(t.get(key) or 0.0) for _, t in rows]
        bars = ax.bar(xs, vals, color=colours[key], edgecolor=OKABE_ITO["black"], linewidth=0.5)
        for i, b in enumerate(bars):
            b.set_gid(f"bar-{key}-{i + 1}")
        bound = f"{key}_lower_bound"
        lbs = [(x, float(t[bound])) for x, (_, t) in zip(xs, rows) if t.get(bound) is not None]
        if lbs:
            ax.hlines([b for _, b in lbs], [x - 0.4 for x, _ in lbs], [x + 0.4 for x, _ in lbs],
                      colors=OKABE_ITO["black"], linestyles="dashed", linewidths=1.0, label="lower bound")
            ax.legend(fontsize=7, frameon=False, loc="upper left")
        for b, v in zip(bars, vals):
            ax.annotate(f"{v:.1f}" if key == "length" else f"{v:.0f}", (b.get_x() + b.get_width() / 2, v),
                        xytext=(0, 2), textcoords="offset points", ha="center", va="bottom", fontsize=7)
        ax.set_title(units[key], fontsize=9)
        ax.set_xticks(xs)
        tilt = n > 2 or max(len(l) for l in labels) > 12
        ax.set_xticklabels(labels, rotation=30 if tilt else 0, ha="right" if tilt else "center", fontsize=7)
        ax.tick_params(axis="y", labelsize=7)
        top = max(vals + [b for _, b in lbs] + [0.0])
        ax.set_ylim(0, top * 1.18 if top > 0 else 1.0)
        if key != "length":
            ax.yaxis.set_major_locator(MaxNLocator(integer=True))
        for side in ("top", "right"):
            ax.spines[side].set_visible(False)
    fig.tight_layout()
    return fig


def plot_compare(comp, path, dpi: float = 150) -> Path:
    """Write the comparison bar chart of bends, length, vias or jumpers per board (.png or .svg), atomically.

    Parameters
    ----------
    comp : dict or list
        What :func:`router.figures.compare_figures` returns, or a list of ``(label, figures)``
        pairs (see :func:`compare_rows`).
    path : str or Path

    Returns
    -------
    Path

    Raises
    ------
    BoardError
        For a suffix other than .png or .svg (entry ``--plot``).
    """
    path = Path(path)
    fmt = _format_of(path, "--plot")
    _save(compare_figure(comp, dpi=dpi), path, fmt)
    return path
