"""The sweep's picture: bends against vias, one mark per routing, the non-dominated ones ringed.

A routing is non-dominated when no other routing in the comparison set has as few or
fewer bends *and* vias with one of them strictly fewer (the Pareto front of the two
figures). The comparison set is the complete routings (every net routed, no violation);
when there is none, the routings that routed the most nets. Routings that land on the
same point are drawn once with their count beside.

Colours are the Okabe-Ito palette of :mod:`router.draw`; the PNG is written atomically
without a date or software stamp, so the same sweep gives the same bytes.
"""
from __future__ import annotations

import io
from collections import Counter
from pathlib import Path
from typing import Sequence

from router.draw import OKABE_ITO
from router.safefile import write_atomic

__all__ = ["non_dominated", "comparison_set", "plot_bends_vias"]


def comparison_set(rows: Sequence[dict]) -> list[dict]:
    """The rows the front is taken over: the complete ones, else those routing the most nets."""
    ok = [r for r in rows if r.get("status") == "ok"]
    complete = [r for r in ok if r["routed"] == r["nets"] and r["violations"] == 0]
    if complete:
        return complete
    if not ok:
        return []
    most = max(r["routed"] for r in ok)
    return [r for r in ok if r["routed"] == most]


def non_dominated(rows: Sequence[dict]) -> list[str]:
    """Ids of the rows of :func:`comparison_set` that no other row beats on bends and vias.

    Examples
    --------
    >>> rows = [dict(id=i, status="ok", nets=2, routed=2, violations=0, bends=b, vias=v)
    ...         for i, b, v in [("a", 4, 0), ("b", 2, 2), ("c", 3, 3), ("d", 1, 5), ("e", 2, 2)]]
    >>> non_dominated(rows)
    ['a', 'b', 'd', 'e']
    """
    pool = comparison_set(rows)
    out = []
    for r in pool:
        beaten = any(o["bends"] <= r["bends"] and o["vias"] <= r["vias"] and
                     (o["bends"] < r["bends"] or o["vias"] < r["vias"]) for o in pool)
        if not beaten:
            out.append(r["id"])
    return out


def plot_bends_vias(rows: Sequence[dict], path, title: str, best: str | None = None, dpi: float = 120) -> Path:
    """Draw bends (y) against vias (x) for the routed rows of a sweep into a PNG.

    Parameters
    ----------
    rows : the sweep's rows (``id``, ``status``, ``nets``, ``routed``, ``violations``,
        ``bends``, ``vias``)
    path : the PNG to write
    title : the heading (the board's name)
    best : the id of the best routing, marked with a star and its name
    """
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure
    from matplotlib.lines import Line2D

    path = Path(path)
    ok = [r for r in rows if r.get("status") == "ok"]
    pool_ids = {r["id"] for r in comparison_set(rows)}
    front = set(non_dominated(rows))
    fig = Figure(figsize=(7.0, 5.0), dpi=dpi, facecolor="white")
    FigureCanvasAgg(fig)
    ax = fig.add_subplot(1, 1, 1)
    inside = Counter((r["vias"], r["bends"]) for r in ok if r["id"] in pool_ids)
    outside = Counter((r["vias"], r["bends"]) for r in ok if r["id"] not in pool_ids)
    if outside:
        xs, ys = zip(*sorted(outside))
        ax.scatter(xs, ys, marker="x", s=40, color="#999999", zorder=2)
    if inside:
        xs, ys = zip(*sorted(inside))
        ax.scatter(xs, ys, marker="o", s=46, color=OKABE_ITO["blue"], zorder=3)
    for counter in (inside, outside):
        for (x, y), n in sorted(counter.items()):
            if n > 1:
                ax.annotate(f"x{n}", (x, y), xytext=(6, -3), textcoords="offset points", fontsize=8,
                            color="#444444")
    pts = sorted({(r["vias"], r["bends"]) for r in ok if r["id"] in front})
    if pts:
        xs, ys = zip(*pts)
        ax.step(xs, ys, where="post", color=OKABE_ITO["vermillion"], linewidth=1.2, zorder=1)
        ax.scatter(xs, ys, marker="o", s=170, facecolors="none", edgecolors=OKABE_ITO["vermillion"],
                   linewidths=2.0, zorder=4)
    star = next((r for r in ok if r["id"] == best), None)
    if star is not None:
        ax.scatter([star["vias"]], [star["bends"]], marker="*", s=260, color=OKABE_ITO["orange"],
                   edgecolors="black", linewidths=0.8, zorder=5)
        ax.annotate(f"best: {star['id']}", (star["vias"], star["bends"]), xytext=(12, -16),
                    textcoords="offset points", fontsize=9, fontweight="bold")
    ax.set_xlabel("vias")
    ax.set_ylabel("bends")
    ax.set_title(f"{title}: {len(ok)} routings, bends against vias", fontsize=11)
    ax.grid(True, color="#DDDDDD", linewidth=0.6)
    ax.margins(x=0.12, y=0.12)
    ax.set_axisbelow(True)
    ax.xaxis.get_major_locator().set_params(integer=True)
    ax.yaxis.get_major_locator().set_params(integer=True)
    complete = any(r["routed"] == r["nets"] and r["violations"] == 0 for r in ok)
    handles = [
        Line2D([], [], linestyle="none", marker="o", color=OKABE_ITO["blue"],
               label="complete (all nets, no violation)" if complete else "routed the most nets"),
        Line2D([], [], linestyle="none", marker="x", color="#999999", label="the others"),
        Line2D([], [], linestyle="-", marker="o", markerfacecolor="none", markersize=11, markeredgewidth=2,
               color=OKABE_ITO["vermillion"], label="non-dominated (no other has fewer of both)"),
    ]
    if star is not None:
        handles.append(Line2D([], [], linestyle="none", marker="*", markersize=14, color=OKABE_ITO["orange"],
                              markeredgecolor="black", label="best by the ranking"))
    ax.legend(handles=handles, loc="upper right", fontsize=8, framealpha=0.9)
    if not ok:
        ax.text(0.5, 0.5, "no routing finished", transform=ax.transAxes, ha="center", va="center")
    fig.tight_layout()
    buf = io.BytesIO()
    fig.savefig(buf, format="png", metadata={"Software": None})
    write_atomic(path, buf.getvalue())
    return path
