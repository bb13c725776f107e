"""The interactive page: one self-contained HTML file with the board as SVG.

Nothing is fetched from the network: the SVG, the script and the style sheet
are all inline. The SVG is written element by element in board millimetres
inside a y-flip (``scale(1,-1)``), so the numbers in the page are the file's.
Every net's copper on each layer is one ``<g class="net" data-net="NAME">``;
through-hole pads and vias, jumpers and unrouted connections have groups of
their own per net, in their own layers.

On the page: a checkbox per layer shows or hides it; hovering a net highlights
it and shows its figures, clicking pins it (and writes ``#net=NAME`` into the
address, so the link opens with that net highlighted); the wheel zooms about
the pointer and dragging pans (both through the SVG ``viewBox``); the key
``0`` or the reset button restores the view.

The figures come from :func:`router.figures.board_figures` when that module is
present, else lengths, vias, jumpers and routed are counted here. Colours are
:data:`router.draw.STYLE`.
"""
from __future__ import annotations

import html
import json
import math
from collections import defaultdict
from pathlib import Path
from typing import Optional, Sequence

from .draw import STYLE, ratsnest
from .model import Board
from .safefile import write_atomic

__all__ = ["page_html", "write_page", "page_figures"]


def _n(v: float) -> str:
    """A coordinate for SVG: at most 4 decimals, no trailing zeros, no negative zero."""
    s = f"{float(v):.4f}".rstrip("0").rstrip(".")
    return "0" if s in ("-0", "") else s


def _a(s) -> str:
    """Text for an attribute value or element content."""
    return html.escape(str(s), quote=True)


def _json_for_script(obj) -> str:
    """JSON safe inside a <script> element (no '</script>', no '<!--')."""
    return (json.dumps(obj, ensure_ascii=False, sort_keys=False)
            .replace("<", "\\u003c").replace(">", "\\u003e").replace("&", "\\u0026")
            .replace("\u2028", "\\u2028").replace("\u2029", "\\u2029"))


def page_figures(board: Board) -> dict:
    """The figures shown on the page: :func:`router.figures.board_figures`, or a local count.

    Returns
    -------
    dict
        ``{"nets": [{"name", "routed", "length", "vias", "jumpers", ...}], "totals": {...}}``;
        the local count leaves bends and the lower bounds out (None).
    """
    try:
        from .figures import board_figures
    except ImportError:
        board_figures = None
    if board_figures is not None:
        return board_figures(board)
    from .connectivity import routed as routed_of
    done = routed_of(board)
    nets = []
    for net in board.nets:
        length = sum(math.hypot(b[0] - a[0], b[1] - a[1])
                     for t in board.traces if t.net == net.name for a, b in zip(t.points, t.points[1:]))
        nets.append({"name": net.name, "routed": done.get(net.name, False), "bends": None,
                     "length": round(length, 6), "vias": sum(1 for v in board.vias if v.net == net.name),
                     "jumpers": sum(1 for j in board.jumpers if j.net == net.name),
                     "bends_lower_bound": None, "length_lower_bound": None})
    totals = {"nets": len(nets), "routed": sum(1 for n in nets if n["routed"]), "bends": None,
              "length": round(sum(n["length"] for n in nets), 6), "vias": sum(n["vias"] for n in nets),
              "jumpers": sum(n["jumpers"] for n in nets), "bends_lower_bound": None, "length_lower_bound": None}
    return {"nets": nets, "totals": totals}


# ----------------------------------------------------------------------------- SVG

def _pad_svg(p, fill: str) -> str:
    if p.shape == "round" or (p.shape == "obround" and abs(p.w - p.h) < 1e-12):
        el = f'<circle cx="{_n(p.x)}" cy="{_n(p.y)}" r="{_n(min(p.w, p.h) / 2)}" fill="{fill}"'
    else:
        r = min(p.w, p.h) / 2 if p.shape == "obround" else (p.corner if p.shape == "rounded-rectangle" else 0.0)
        turn = f' transform="rotate({_n(p.angle)} {_n(p.x)} {_n(p.y)})"' if p.angle else ""
        el = (f'<rect x="{_n(p.x - p.w / 2)}" y="{_n(p.y - p.h / 2)}" width="{_n(p.w)}" height="{_n(p.h)}"'
              + (f' rx="{_n(r)}" ry="{_n(r)}"' if r else "") + turn + f' fill="{fill}"')
    el += f' data-part="{_a(p.ref)}" data-pin="{_a(p.pin)}" data-pad-net="{_a(p.net)}"'
    return el + f'><title>{_a(p.name)} ({_a(p.net)})</title></{"circle" if el.startswith("<circle") else "rect"}>'


def _points(pts) -> str:
    return " ".join(f"{_n(x)},{_n(y)}" for x, y in pts)


def _svg(board: Board, violations: Optional[Sequence], groups: dict,
         labels: Optional[str] = None) -> tuple[str, list[str]]:
    """The board's SVG element and the list of toggleable layers (key, label) in order."""
    from .layout import resolve
    lay = resolve(board)                     # the board resolved once (router.layout)

    xs = [p[0] for p in board.outline]
    ys = [p[1] for p in board.outline]
    x0, x1, y0, y1 = min(xs), max(xs), min(ys), max(ys)
    m = 0.03 * max(x1 - x0, y1 - y0, 1e-9)
    vb = (x0 - m, -(y1 + m), (x1 - x0) + 2 * m, (y1 - y0) + 2 * m)
    out = [f'<svg id="board" xmlns="http://www.w3.org/2000/svg" viewBox="{" ".join(_n(v) for v in vb)}" '
           f'preserveAspectRatio="xMidYMid meet" data-viewbox="{" ".join(_n(v) for v in vb)}">',
           '<defs><pattern id="hatch" patternUnits="userSpaceOnUse" width="1" height="1" '
           'patternTransform="rotate(45)"><line x1="0" y1="0" x2="0" y2="1" '
           f'stroke="{STYLE["keepout"]}" stroke-width="0.25"/></pattern></defs>',
           '<g id="flip" transform="scale(1,-1)">',
           f'<polygon class="outline" points="{_points(board.outline)}" fill="{STYLE["board"]}" '
           f'stroke="{STYLE["outline"]}" stroke-width="1.5" vector-effect="non-scaling-stroke"/>']
    layers = []

    if board.keepouts:
        layers.append(("keepouts", "keepouts"))
        out.append('<g data-layer="keepouts">')
        for k, ko in enumerate(board.keepouts):
            where = ", ".join(ko.layers_on(board.layers))
            out.append(f'<polygon points="{_points(ko.polygon)}" fill="url(#hatch)" stroke="{STYLE["keepout"]}" '
                       f'stroke-width="1" vector-effect="non-scaling-stroke"><title>keepout {k + 1} '
                       f'({_a(where)})</title></polygon>')
        out.append("</g>")

    placed = [p for p in board.parts if p.at is not None]
    if placed:
        layers.append(("parts", "part bodies"))
        out.append('<g data-layer="parts">')
        for part, body in zip(placed, lay.bodies):        # one body per placed part, in file order
            dash = ' stroke-dasharray="4 3"' if part.side == "bottom" else ""
            corners = list(body.polygon.exterior.coords)[:-1]
            out.append(f'<polygon class="body" points="{_points(corners)}" fill="none" stroke="{STYLE["body"]}" '
                       f'stroke-width="1" vector-effect="non-scaling-stroke"{dash}><title>{_a(part.ref)} '
                       f'{_a(part.footprint)}{" " + _a(part.value) if part.value else ""} ({part.side})</title>'
                       f'</polygon>')
        out.append("</g>")

    pads = list(lay.pads)
    nets_order = [n.name for n in board.nets]
    extra = sorted({p.net for p in pads} - set(nets_order))
    all_nets = nets_order + extra

    def net_groups_svg(layer_key, items_by_net, cls="net"):
        body = [f'<g data-layer="{layer_key}">']
        for name in all_nets:
            items = items_by_net.get(name)
            if items:
                body.append(f'<g class="{cls}" data-net="{_a(name)}">' + "".join(items) + "</g>")
        body.append("</g>")
        return body

    if any(p.filled for p in board.pours):       # pours under the traces, semi-transparent (router.pour)
        by_net = defaultdict(list)
        for layer in reversed(board.layers):
            for k, pour in enumerate(board.pours):
                if pour.layer != layer or not pour.filled:
                    continue
                d = "".join("M" + "L".join(f"{_n(x)},{_n(y)}" for x, y in ring) + "Z"
                            for piece in pour.filled for ring in piece)
                by_net[pour.net].append(f'<path d="{d}" fill="{STYLE[layer]}" fill-opacity="0.35" '
                                        f'fill-rule="evenodd"><title>pour {k + 1} of {_a(pour.net)} on {layer}'
                                        f'</title></path>')
        layers.append(("pours", "copper pours"))
        out += net_groups_svg("pours", by_net)

    # copper by layer, bottom first
    for layer in reversed(board.layers):
        by_net = defaultdict(list)
        colour = STYLE[layer]
        for t in board.traces:
            if t.layer != layer or not t.points:
                continue
            pts = t.points if len(t.points) > 1 else [t.points[0], t.points[0]]
            by_net[t.net].append(f'<polyline points="{_points(pts)}" fill="none" stroke="{colour}" '
                                 f'stroke-width="{_n(t.width)}" stroke-linecap="round" stroke-linejoin="round">'
                                 f'<title>{_a(t.net)} on {layer}, {_n(t.width)} mm</title></polyline>')
        for p in pads:
            if p.drill is None and p.layers == (layer,):
                by_net[p.net].append(_pad_svg(p, colour))
        layers.append((layer, f"copper {layer}"))
        out += net_groups_svg(layer, by_net)

    # plated pads and vias: on every layer
    by_net = defaultdict(list)
    for p in pads:
        if p.drill is not None:
            by_net[p.net].append(_pad_svg(p, STYLE["through_pad"]) +
                                 f'<circle class="drill" cx="{_n(p.x)}" cy="{_n(p.y)}" r="{_n(p.drill / 2)}" '
                                 f'fill="{STYLE["drill"]}"/>')
    for k, v in enumerate(board.vias):
        by_net[v.net].append(f'<circle cx="{_n(v.at[0])}" cy="{_n(v.at[1])}" r="{_n(v.diameter / 2)}" '
                             f'fill="{STYLE["via"]}"><title>via {k + 1} ({_a(v.net)})</title></circle>'
                             f'<circle class="drill" cx="{_n(v.at[0])}" cy="{_n(v.at[1])}" r="{_n(v.drill / 2)}" '
                             f'fill="{STYLE["drill"]}"/>')
    if by_net:
        layers.append(("plated", "plated pads and vias"))
        out += net_groups_svg("plated", by_net)

    holes = list(lay.npth)
    if holes:
        layers.append(("holes", "mounting holes"))
        out.append('<g data-layer="holes">')
        for h in holes:
            out.append(f'<circle cx="{_n(h.x)}" cy="{_n(h.y)}" r="{_n(h.drill / 2)}" fill="{STYLE["drill"]}" '
                       f'stroke="{STYLE["outline"]}" stroke-width="1" vector-effect="non-scaling-stroke">'
                       f'<title>hole {_n(h.drill)} mm ({_a(h.ref)})</title></circle>')
        out.append("</g>")

    if board.jumpers:
        by_net = defaultdict(list)
        for k, j in enumerate(board.jumpers):
            s = (f'<line x1="{_n(j.start[0])}" y1="{_n(j.start[1])}" x2="{_n(j.end[0])}" y2="{_n(j.end[1])}" '
                 f'stroke="{STYLE["jumper"]}" stroke-width="3" stroke-linecap="round" '
                 f'vector-effect="non-scaling-stroke"><title>jumper {k + 1} ({_a(j.net)})</title></line>')
            for e in (j.start, j.end):
                s += (f'<circle cx="{_n(e[0])}" cy="{_n(e[1])}" r="{_n(j.diameter / 2)}" fill="{STYLE["through_pad"]}"/>'
                      f'<circle class="drill" cx="{_n(e[0])}" cy="{_n(e[1])}" r="{_n(j.drill / 2)}" '
                      f'fill="{STYLE["drill"]}"/>')
            by_net[j.net].append(s)
        layers.append(("jumpers", "jumper wires"))
        out += net_groups_svg("jumpers", by_net)

    # unrouted connections, and an empty group for any net with nothing drawn yet
    by_net = defaultdict(list)
    for name, a, b in ratsnest(board, groups):
        by_net[name].append(f'<line x1="{_n(a[0])}" y1="{_n(a[1])}" x2="{_n(b[0])}" y2="{_n(b[1])}" '
                            f'stroke="{STYLE["ratsnest"]}" stroke-width="1" vector-effect="non-scaling-stroke"/>')
    drawn = {p.net for p in pads} | {t.net for t in board.traces} | {v.net for v in board.vias} | \
        {j.net for j in board.jumpers} | set(by_net)
    for name in nets_order:
        if name not in drawn:
            by_net[name] = [""]
    layers.append(("unrouted", "unrouted connections"))
    body = ['<g data-layer="unrouted">']
    for name in all_nets:
        if name in by_net:
            body.append(f'<g class="net" data-net="{_a(name)}">' + "".join(by_net[name]) + "</g>")
    body.append("</g>")
    out += body

    located = [v for v in (violations or []) if getattr(v, "at", None) is not None]
    if located:
        layers.append(("violations", "violations"))
        r = 0.012 * max(x1 - x0, y1 - y0)
        out.append('<g data-layer="violations">')
        for v in located:
            x, y = v.at
            out.append(f'<g class="violation" data-rule="{_a(v.rule)}"><title>{_a(v.rule)}: {_a(v.message)}</title>'
                       f'<circle cx="{_n(x)}" cy="{_n(y)}" r="{_n(r)}" fill="none" stroke="{STYLE["violation"]}" '
                       f'stroke-width="2" vector-effect="non-scaling-stroke"/>'
                       f'<path d="M{_n(x - r)},{_n(y - r)}L{_n(x + r)},{_n(y + r)}M{_n(x - r)},{_n(y + r)}'
                       f'L{_n(x + r)},{_n(y - r)}" stroke="{STYLE["violation"]}" stroke-width="2" '
                       f'vector-effect="non-scaling-stroke"/></g>')
        out.append("</g>")
    out.append("</g>")   # flip

    # words outside the flip so the text reads upright (y negated by hand): refs, violation
    # numbers, net names (router.labels), and millimetre ticks along the bottom and left edges
    out += _words(board, located, (vb[0], -(vb[1] + vb[3]), vb[0] + vb[2], -vb[1]), labels, layers)
    out += _ticks(x0, y0, x1, y1, m)
    out.append("</svg>")
    return "\n".join(out), layers


def _label_height(board: Board) -> float:
    xs = [p[0] for p in board.outline]
    ys = [p[1] for p in board.outline]
    return max(0.6, min(1.6, 0.018 * max(max(xs) - min(xs), max(ys) - min(ys))))


def _words(board: Board, located, limits, labels: Optional[str], layers: list) -> list[str]:
    """Refs (with leader lines), violation numbers and net names as SVG, placed by router.labels."""
    from .labels import Placer, copper_obstacles, net_labels, ref_labels, violation_labels
    h = _label_height(board)
    placer = Placer(copper_obstacles(board), limits)
    out = []

    def text(lab, cls, fill, extra=""):
        rot = f' transform="rotate(-90 {_n(lab.x)} {_n(-lab.y)})"' if lab.rotation == 90 else ""
        return (f'<text class="{cls}" x="{_n(lab.x)}" y="{_n(-lab.y)}" font-size="{_n(lab.h)}" '
                f'text-anchor="middle" dominant-baseline="central" fill="{fill}"{rot}{extra}>{_a(lab.text)}</text>')

    def leader(lab, colour):
        (ax, ay), (bx, by) = lab.leader
        return (f'<line x1="{_n(ax)}" y1="{_n(-ay)}" x2="{_n(bx)}" y2="{_n(-by)}" stroke="{colour}" '
                f'stroke-width="0.6" vector-effect="non-scaling-stroke"/>')

    refs = ref_labels(board, h, limits, placer)
    if refs:
        out.append('<g data-layer="parts" class="refs">')
        for lab in refs:
            out.append(text(lab, "ref", STYLE["body"]))
            if lab.leader:
                out.append(leader(lab, STYLE["body"]))
        out.append("</g>")
    nums = violation_labels(located, h, limits, placer)
    if nums:
        out.append('<g data-layer="violations" class="violation-numbers">')
        for lab in nums:
            out.append(text(lab, "violation-number", STYLE["violation"], ' font-weight="bold"'))
            if lab.leader:
                out.append(leader(lab, STYLE["violation"]))
        out.append("</g>")
    if labels == "nets":
        names = net_labels(board, h * 0.9, limits, placer)
        if names:
            layers.append(("netnames", "net names"))
            out.append('<g data-layer="netnames">')
            for lab in names:
                out.append(text(lab, "net-name", "#000000", f' data-net="{_a(lab.text)}"'))
            out.append("</g>")
    return out


def _ticks(x0: float, y0: float, x1: float, y1: float, m: float) -> list[str]:
    """Millimetre ticks and numbers along the board's bottom and left edges (upright SVG units)."""
    span = max(x1 - x0, y1 - y0)
    step = next(s for s in (1, 2, 5, 10, 20, 50, 100, 200, 500, 1e9) if span / s <= 12)
    t = 0.25 * m
    fs = _n(0.45 * m)
    out = ['<g class="ticks" fill="#3A3A3A" stroke="#3A3A3A">']
    k = math.ceil(x0 / step - 1e-9)
    while k * step <= x1 + 1e-9:
        x = k * step
        out.append(f'<line x1="{_n(x)}" y1="{_n(-y0)}" x2="{_n(x)}" y2="{_n(-y0 + t)}" stroke-width="1" '
                   f'vector-effect="non-scaling-stroke"/><text x="{_n(x)}" y="{_n(-y0 + t)}" font-size="{fs}" '
                   f'text-anchor="middle" dominant-baseline="hanging" stroke="none">{_n(x)}</text>')
        k += 1
    k = math.ceil(y0 / step - 1e-9)
    while k * step <= y1 + 1e-9:
        y = k * step
        out.append(f'<line x1="{_n(x0)}" y1="{_n(-y)}" x2="{_n(x0 - t)}" y2="{_n(-y)}" stroke-width="1" '
                   f'vector-effect="non-scaling-stroke"/><text x="{_n(x0 - t)}" y="{_n(-y)}" font-size="{fs}" '
                   f'text-anchor="end" dominant-baseline="central" stroke="none">{_n(y)}</text>')
        k += 1
    out.append("</g>")
    return out


# ----------------------------------------------------------------------------- page

_CSS = """
* { box-sizing: border-box; }
html, body { margin: 0; height: 100%; font: 14px/1.35 system-ui, sans-serif; color: #222; background: #fff; }
#wrap { display: flex; height: 100vh; }
#side { width: 19rem; padding: .8rem; overflow-y: auto; border-right: 1px solid #ccc; flex: none; }
#view { flex: 1; position: relative; min-width: 0; }
#board { width: 100%; height: 100%; display: block; cursor: grab; user-select: none; }
#board.dragging { cursor: grabbing; }
h1 { font-size: 1.1rem; margin: 0 0 .4rem; word-break: break-all; }
h2 { font-size: .95rem; margin: .9rem 0 .3rem; }
label { display: block; }
.swatch { display: inline-block; width: .9em; height: .9em; vertical-align: -.1em; margin-right: .3em;
          border: 1px solid #444; }
#info table { border-collapse: collapse; }
#info td { padding: 0 .6em 0 0; }
#info td.v { text-align: right; font-variant-numeric: tabular-nums; }
#nets { list-style: none; padding: 0; margin: 0; columns: 2; }
#nets li { cursor: pointer; padding: 0 .2em; word-break: break-all; }
#nets li.hl { background: #222; color: #fff; }
#nets li.open::after { content: " \\2022"; color: __RATS__; }
#board.focus g.net:not(.hl) { opacity: .18; }
#board g.net { cursor: pointer; }
#board g.net.hl circle, #board g.net.hl rect { stroke: #000; stroke-width: 1.5px; vector-effect: non-scaling-stroke; }
#board g.net.hl circle.drill { stroke: none; }
#board g.net.hl line { stroke-width: 3px; }
#violations li { font-size: .85rem; }
button { font: inherit; }
.muted { color: #666; }
"""

_JS = r"""
(function () {
  "use strict";
  var data = JSON.parse(document.getElementById("data").textContent);
  var svg = document.getElementById("board");
  var info = document.getElementById("info");
  var figs = {};
  (data.figures.nets || []).forEach(function (n) { figs[n.name] = n; });
  var byNet = {};
  Array.prototype.forEach.call(document.querySelectorAll("[data-net]"), function (el) {
    var name = el.getAttribute("data-net");
    (byNet[name] = byNet[name] || []).push(el);
  });
  var pinned = null, shown = null;

  function fmt(v, digits) {
    if (v === null || v === undefined) return "\u2013";
    if (typeof v === "boolean") return v ? "yes" : "no";
    if (typeof v === "number") return digits ? v.toFixed(digits) : String(v);
    return String(v);
  }
  function row(t, label, value) {
    var tr = document.createElement("tr");
    var a = document.createElement("td"); a.textContent = label;
    var b = document.createElement("td"); b.className = "v"; b.textContent = value;
    tr.appendChild(a); tr.appendChild(b); t.appendChild(tr);
  }
  function showInfo(name) {
    info.textContent = "";
    if (name === null) {
      var p = document.createElement("p"); p.className = "muted";
      p.textContent = "Hover or click a net.";
      info.appendChild(p);
      var tt = data.figures.totals || {};
      var t0 = document.createElement("table"); info.appendChild(t0);
      row(t0, "nets routed", fmt(tt.routed) + " of " + fmt(tt.nets));
      row(t0, "bends", fmt(tt.bends)); row(t0, "length (mm)", fmt(tt.length, 2));
      row(t0, "vias", fmt(tt.vias)); row(t0, "jumpers", fmt(tt.jumpers));
      return;
    }
    var h = document.createElement("h2"); h.id = "info-name"; h.textContent = name; info.appendChild(h);
    var f = figs[name], meta = data.nets[name] || {};
    var t = document.createElement("table"); info.appendChild(t);
    if (meta["class"]) row(t, "class", meta["class"]);
    if (f) {
      row(t, "routed", fmt(f.routed)); row(t, "bends", fmt(f.bends));
      row(t, "bends, lower bound", fmt(f.bends_lower_bound));
      row(t, "length (mm)", fmt(f.length, 2)); row(t, "length, lower bound (mm)", fmt(f.length_lower_bound, 2));
      row(t, "vias", fmt(f.vias)); row(t, "jumpers", fmt(f.jumpers));
    } else {
      row(t, "net", "a pad in no net");
    }
    if (meta.pins) {
      var p2 = document.createElement("p"); p2.textContent = "pins: " + meta.pins.join(", "); info.appendChild(p2);
    }
  }
  function highlight(name) {
    if (shown !== null && byNet[shown]) byNet[shown].forEach(function (el) { el.classList.remove("hl"); });
    shown = (name !== null && byNet[name]) ? name : null;
    if (shown !== null) byNet[shown].forEach(function (el) { el.classList.add("hl"); });
    svg.classList.toggle("focus", shown !== null);
    document.body.setAttribute("data-highlighted", shown === null ? "" : shown);
    showInfo(shown);
  }
  function pin(name) {
    pinned = (name !== null && byNet[name]) ? name : null;
    highlight(pinned);
    var hash = pinned === null ? "" : "#net=" + encodeURIComponent(pinned);
    if (location.hash !== hash && history.replaceState) {
      try { history.replaceState(null, "", hash || location.pathname + location.search); } catch (e) {}
    }
  }
  function netOf(target) {
    var g = target && target.closest ? target.closest("[data-net]") : null;
    return g ? g.getAttribute("data-net") : null;
  }
  function fromHash() {
    var m = /^#net=(.*)$/.exec(location.hash);
    if (!m) return;
    var name;
    try { name = decodeURIComponent(m[1]); } catch (e) { return; }
    pinned = byNet[name] ? name : null;
    highlight(pinned);
  }

  // hover and click
  var dragged = false;
  var pinBox = document.getElementById("pin");
  document.addEventListener("mouseover", function (ev) {
    var name = netOf(ev.target);
    if (name !== null) highlight(name);
    var pad = ev.target && ev.target.closest ? ev.target.closest("[data-pin]") : null;
    if (pad) {
      var net = pad.getAttribute("data-pad-net");
      pinBox.textContent = "part " + pad.getAttribute("data-part") + ", pin " + pad.getAttribute("data-pin") +
        ", net " + (net.charAt(0) === "~" ? "none (a pad in no net)" : net);
      pinBox.className = "";
    }
  });
  document.addEventListener("mouseout", function (ev) {
    if (netOf(ev.target) !== null && netOf(ev.relatedTarget) === null) highlight(pinned);
  });
  document.addEventListener("click", function (ev) {
    if (dragged) { dragged = false; return; }
    var name = netOf(ev.target);
    if (name !== null) { pin(pinned === name ? null : name); }
    else if (svg.contains(ev.target)) { pin(null); }
  });
  window.addEventListener("hashchange", fromHash);

  // layer toggles
  Array.prototype.forEach.call(document.querySelectorAll("input[data-toggle]"), function (box) {
    box.addEventListener("change", function () {
      var key = box.getAttribute("data-toggle");
      Array.prototype.forEach.call(svg.querySelectorAll('g[data-layer]'), function (g) {
        if (g.getAttribute("data-layer") === key) g.style.display = box.checked ? "" : "none";
      });
    });
  });

  // zoom and pan through the viewBox
  var home = svg.getAttribute("data-viewbox").split(" ").map(Number);
  var vb = home.slice();
  function setVB() { svg.setAttribute("viewBox", vb.map(function (v) { return +v.toFixed(5); }).join(" ")); }
  function toSvg(m, x, y) { return { x: m.a * x + m.c * y + m.e, y: m.b * x + m.d * y + m.f }; }
  svg.addEventListener("wheel", function (ev) {
    ev.preventDefault();
    var ctm = svg.getScreenCTM(); if (!ctm) return;
    var p = toSvg(ctm.inverse(), ev.clientX, ev.clientY);
    var k = Math.pow(1.0015, ev.deltaY);
    var w = vb[2] * k, h = vb[3] * k;
    if (w < home[2] / 500 || w > home[2] * 20) return;
    vb = [p.x - (p.x - vb[0]) * k, p.y - (p.y - vb[1]) * k, w, h];
    setVB();
  }, { passive: false });
  var start = null;
  svg.addEventListener("pointerdown", function (ev) {
    if (ev.button !== 0) return;
    var ctm = svg.getScreenCTM(); if (!ctm) return;
    start = { m: ctm.inverse(), x: ev.clientX, y: ev.clientY, vb: vb.slice() };
    dragged = false;
  });
  window.addEventListener("pointermove", function (ev) {
    if (!start) return;
    if (!dragged && Math.abs(ev.clientX - start.x) + Math.abs(ev.clientY - start.y) < 4) return;
    dragged = true; svg.classList.add("dragging");
    var a = toSvg(start.m, start.x, start.y), b = toSvg(start.m, ev.clientX, ev.clientY);
    vb = [start.vb[0] - (b.x - a.x), start.vb[1] - (b.y - a.y), start.vb[2], start.vb[3]];
    setVB();
  });
  window.addEventListener("pointerup", function () {
    start = null; svg.classList.remove("dragging");
    setTimeout(function () { dragged = false; }, 0);
  });
  function reset() { vb = home.slice(); setVB(); }
  document.getElementById("reset").addEventListener("click", reset);
  document.addEventListener("keydown", function (ev) {
    if (ev.key === "0") reset();
    if (ev.key === "Escape") pin(null);
  });

  showInfo(null);
  fromHash();
}());
"""


def page_html(board: Board, violations: Optional[Sequence] = None, labels: Optional[str] = None) -> str:
    """The whole page as a string (see the module docstring).

    Parameters
    ----------
    board : Board
    violations : list of router.check.Violation, optional
        Marked on the board and listed beside it.

    Returns
    -------
    str
        One HTML document; nothing in it is fetched from the network.
    """
    from .layout import resolve
    groups = resolve(board).groups(board)
    svg, layers = _svg(board, violations, groups, labels)
    figures = page_figures(board)
    routed = {n["name"]: n.get("routed") for n in figures.get("nets", [])}
    data = {"figures": figures,
            "nets": {n.name: {"class": n.net_class, "pins": list(n.pins)} for n in board.nets}}

    swatch = {"top": STYLE["top"], "bottom": STYLE["bottom"], "plated": STYLE["through_pad"],
              "jumpers": STYLE["jumper"], "unrouted": STYLE["ratsnest"], "violations": STYLE["violation"],
              "keepouts": STYLE["keepout"], "parts": STYLE["body"], "holes": STYLE["drill"]}
    toggles = "\n".join(
        f'<label><input type="checkbox" checked data-toggle="{_a(key)}"> '
        f'<span class="swatch" style="background:{swatch.get(key, "#fff")}"></span>{_a(label)}</label>'
        for key, label in layers)
    def open_cls(name):
        return ' class="open"' if routed.get(name) is False else ""

    net_items = "\n".join(
        f'<li data-net="{_a(n.name)}"{open_cls(n.name)}>{_a(n.name)}</li>'
        for n in board.nets)
    vlist = ""
    if violations is not None:
        number, k = {}, 0
        for i, v in enumerate(violations):
            if getattr(v, "at", None) is not None:
                k += 1
                number[i] = k
        items = "\n".join(f'<li data-number="{number.get(i, "")}"><b>{number.get(i, "-")}</b> '
                          f"<b>{_a(v.rule)}</b> {_a(v.message)}</li>" for i, v in enumerate(violations))
        vlist = (f'<h2>Violations ({len(violations)})</h2><ul id="violations">{items}</ul>'
                 if violations else '<h2>Violations</h2><p id="violations">none</p>')
        from .check import warnings          # counted beside the violations, as in the PNG/SVG title
        warns = warnings(board)
        if warns:
            witems = "\n".join(f"<li><b>{_a(w.rule)}</b> {_a(w.message)}</li>" for w in warns)
            vlist += f'<h2>Warnings ({len(warns)})</h2><ul id="warnings">{witems}</ul>'
    t = figures.get("totals", {})
    summary = f"{t.get('routed', 0)} of {t.get('nets', len(board.nets))} nets routed, {board.copper_layers} copper layer{'s' if board.copper_layers != 1 else ''}"
    return f"""<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>{_a(board.name)}</title>
<style>{_CSS.replace("__RATS__", STYLE["ratsnest"])}</style>
</head>
<body>
<div id="wrap">
<div id="side">
<h1>{_a(board.name)}</h1>
<p class="muted">{_a(summary)}</p>
<h2>Layers</h2>
<div id="layers">
{toggles}
</div>
<p><button id="reset" type="button">reset view</button> <span class="muted">wheel: zoom, drag: pan</span></p>
<h2>Pin under the pointer</h2>
<p id="pin" class="muted">none</p>
<h2>Net</h2>
<div id="info"></div>
<h2>Nets</h2>
<ul id="nets">
{net_items}
</ul>
{vlist}
</div>
<div id="view">
{svg}
</div>
</div>
<script type="application/json" id="data">{_json_for_script(data)}</script>
<script>{_JS}</script>
</body>
</html>
"""


def write_page(board: Board, path, violations: Optional[Sequence] = None, labels: Optional[str] = None) -> Path:
    """Write the interactive page of `board` to `path` (one .html file), atomically.

    Returns
    -------
    Path
        The path written.
    """
    path = Path(path)
    write_atomic(path, page_html(board, violations, labels))
    return path
