"""Seeded boards that look like real two-layer hobby boards (for the stress script and tests).

Unlike :mod:`router.boardgen` (spread-out through-hole and chip parts), these boards are
built from *modules* the way small designs are: a fine-pitch part in the middle (a
quad no-lead package at 0.5 mm pitch with its exposed pad, or a thin shrink dual row at
0.65 mm), decoupling capacitors (EIA 0402) on its supply pins, a row of 0402/0603
resistors beside it, and a 0.5 mm pitch flat-cable connector at the module's edge. Supply
and ground are many-pad nets over every module, a two-wire bus joins the fine-pitch parts,
the outline is a rounded rectangle (its arcs as polygon points), and some parts sit off the
grid. With ``angled=True`` the outline's corners are true arcs (:mod:`router.outline`) and
about a third of the decoupling capacitors sit at 45 degrees, as designers turn them to
reach a supply pin (boards the routers before turned pads cannot read). Fine-pitch parts stay
square: a 0.5 mm pitch row at 45 degrees leaves no room for traces along x and y under the
footprint's own pad spacing rule (the gap beside each pad's exit is below the pad gap). The footprints are the file's own (``[footprints]``), so the boards need no built-in
fine-pitch family.

Sources of the dimensions (pads are the project's choice, as in :mod:`router.footprints`):
JEDEC MO-220 (quad no-lead, 0.5 mm pitch, 0.18-0.30 mm leads), JEDEC MO-153 (thin shrink
dual row, 0.65 mm pitch, 6.4 mm over the leads), EIA 0402/0603 chip sizes; pad lengths
and the flat-cable connector's 0.3 mm pads at 0.5 mm pitch are common practice.
"""
from __future__ import annotations

import math
from typing import Optional

import numpy as np

from .model import Board, Footprint, Keepout, NetClass, Net, Pad, Part, Rules

__all__ = ["real_board", "QUAD_PITCH", "DUAL_PITCH", "CONN_PITCH"]

QUAD_PITCH = 0.5      # JEDEC MO-220 0.5 mm pitch family
DUAL_PITCH = 0.65     # JEDEC MO-153 (thin shrink dual row)
CONN_PITCH = 0.5      # common practice: 0.5 mm flat-cable connectors

#: Module size in mm: a fine-pitch part with its passives and connector.
MODULE = (32.0, 26.0)


def _quad(n: int) -> Footprint:
    """A quad no-lead part: n/4 pads a side at 0.5 mm, 0.25 x 0.8 mm pads, an exposed pad."""
    side = n // 4
    body = {16: 3.0, 20: 4.0, 24: 4.0, 32: 5.0, 48: 7.0, 64: 9.0}[n]
    h = body / 2
    pads = []
    span = (side - 1) * QUAD_PITCH
    k = 0
    # pin 1 at the lower left, counter-clockwise seen from the top (the trade's numbering)
    for s, (ox, oy, along) in enumerate(((0, -1, (1, 0)), (1, 0, (0, 1)), (0, 1, (-1, 0)), (-1, 0, (0, -1)))):
        for m in range(side):
            t = -span / 2 + m * QUAD_PITCH
            cx = ox * h + along[0] * t
            cy = oy * h + along[1] * t
            size = (0.25, 0.8) if oy else (0.8, 0.25)
            k += 1
            pads.append(Pad(str(k), (round(cx, 4), round(cy, 4)), "rectangle", size))
    ep = round(body - 1.6, 4)
    pads.append(Pad(str(n + 1), (0.0, 0.0), "rectangle", (ep, ep)))
    return Footprint(f"quad-{n}", (body, body), pads)


def _dual(n: int) -> Footprint:
    """A thin shrink dual row: n/2 pads a row at 0.65 mm, 0.35 x 1.5 mm pads, rows 5.8 mm apart."""
    half = n // 2
    span = (half - 1) * DUAL_PITCH
    pads = []
    for m in range(half):
        pads.append(Pad(str(m + 1), (round(-span / 2 + m * DUAL_PITCH, 4), -2.9), "rectangle", (0.35, 1.5)))
    for m in range(half):
        pads.append(Pad(str(half + m + 1), (round(span / 2 - m * DUAL_PITCH, 4), 2.9), "rectangle", (0.35, 1.5)))
    return Footprint(f"dual-{n}", (round(span + 1.0, 4), 4.4), pads)


def _conn(n: int) -> Footprint:
    """A flat-cable connector: n pads at 0.5 mm, 0.3 x 1.3 mm, and two mounting pads."""
    span = (n - 1) * CONN_PITCH
    pads = [Pad(str(m + 1), (round(-span / 2 + m * CONN_PITCH, 4), 1.0), "rectangle", (0.3, 1.3)) for m in range(n)]
    pads.append(Pad("MP", (round(-span / 2 - 1.6, 4), -1.2), "rectangle", (1.2, 1.8)))
    pads.append(Pad("MP", (round(span / 2 + 1.6, 4), -1.2), "rectangle", (1.2, 1.8)))
    return Footprint(f"flat-{n}", (round(span + 4.6, 4), 3.0), pads)


def _chip(code: str) -> Footprint:
    """EIA chip sizes with pad sizes of common practice (0402: 0.6 x 0.6 at 1.0 mm; 0603: 0.9 x 0.95 at 1.6 mm)."""
    if code == "0402":
        return Footprint("chip2-0402", (1.0, 0.5), [Pad("1", (-0.5, 0.0), "rectangle", (0.6, 0.6)),
                                                   Pad("2", (0.5, 0.0), "rectangle", (0.6, 0.6))])
    return Footprint("chip2-0603", (1.6, 0.8), [Pad("1", (-0.8, 0.0), "rectangle", (0.9, 0.95)),
                                               Pad("2", (0.8, 0.0), "rectangle", (0.9, 0.95))])


def _rounded_rect(w: float, h: float, r: float, step_deg: float = 15.0) -> list:
    pts = []
    for cx, cy, a0 in ((w - r, r, -90), (w - r, h - r, 0), (r, h - r, 90), (r, r, 180)):
        for k in range(int(90 / step_deg) + 1):
            a = math.radians(a0 + k * step_deg)
            pts.append((round(cx + r * math.cos(a), 4), round(cy + r * math.sin(a), 4)))
    return pts


def _arc_outline(w: float, h: float, r: float) -> list:
    """A rounded rectangle as a path of corners and true arcs (counter-clockwise)."""
    from .outline import OutlineArc
    return [(r, 0.0), (w - r, 0.0), OutlineArc((w, r), (w - r, r)), (w, h - r), OutlineArc((w - r, h), (w - r, h - r)),
            (r, h), OutlineArc((0.0, h - r), (r, h - r)), (0.0, r), OutlineArc((r, 0.0), (r, r))]


def real_board(seed: int, nets: int = 60, angled: bool = False, pads: Optional[int] = None,
               enclosed: int = 0) -> Board:
    """A board that looks like a real two-layer design, about `nets` nets (30 to 200).

    Parameters
    ----------
    seed : int
        The same seed and `nets` give the same board.
    nets : int
        Wanted number of nets; the board gets one module per about 22 nets.
    angled : bool
        Arcs in the outline, and some capacitors at 45 degrees.
    pads : int, optional
        Wanted number of pads, when more than the nets bring: more modules, larger quad parts
        (48 and 64 pins), and fewer pins of each part on a net (the rest unconnected, as on
        real boards with large parts).
    enclosed : int
        This many two-pin signal nets get one pad walled in by keepouts (four strips round
        its part, clear of the copper): pads no route can reach, for measuring how the
        router deals with them.

    Returns
    -------
    Board
        Placed, unrouted, two copper layers, classes ``default`` and ``power`` (supply and
        ground), footprints of its own.
    """
    rng = np.random.default_rng(seed)
    nmod = max(1, int(round(nets / 22)))
    big = pads is not None and pads > 75 * nmod
    if big:
        nmod = max(nmod, int(round(pads / 75)))
    budget = nets / nmod               # nets per module
    cols = int(math.ceil(math.sqrt(nmod * 1.3)))
    rows = int(math.ceil(nmod / cols))
    W, H = cols * MODULE[0] + 4.0, rows * MODULE[1] + 4.0
    clear = float(rng.choice([0.15, 0.2, 0.25]))
    width = float(rng.choice([0.2, 0.25]))
    classes = {"default": NetClass("default", width, clear),
               "power": NetClass("power", float(rng.choice([0.4, 0.5])), max(clear, 0.2))}
    rules = Rules(grid=0.25, edge_clearance=0.4, min_trace_width=0.15, min_clearance=0.15,
                  via_drill=0.3, via_diameter=0.6, min_hole_spacing=0.3)
    fps: dict[str, Footprint] = {}

    def fp(f: Footprint) -> str:
        fps.setdefault(f.name, f)
        return f.name

    c0402, c0603 = fp(_chip("0402")), fp(_chip("0603"))
    parts: list[Part] = []
    net_pins: dict[str, list[str]] = {"VCC": [], "GND": []}
    cls_of = {"VCC": "power", "GND": "power"}
    counters: dict[str, int] = {}

    def ref(letter: str) -> str:
        counters[letter] = counters.get(letter, 0) + 1
        return f"{letter}{counters[letter]}"

    def jitter() -> float:            # some parts sit off the grid, as parts placed by eye do
        return float(rng.choice([0.0, 0.0, 0.05, 0.1, 0.125]))

    def add(fpname, x, y, rot=0) -> str:
        r = ref({"quad": "U", "dual": "U", "flat": "J"}.get(fpname.split("-")[0], "C" if "0402" in fpname else "R"))
        parts.append(Part(r, fpname, at=(round(x + jitter(), 4), round(y + jitter(), 4)), rotation=rot))
        return r

    ics = []

    def parts_rot(r: str) -> int:
        return next(p.rotation for p in parts if p.ref == r)
    sig = 0
    for m in range(nmod):
        mx = 2.0 + (m % cols) * MODULE[0] + MODULE[0] / 2
        my = 2.0 + (m // cols) * MODULE[1] + MODULE[1] / 2
        if big or rng.random() < 0.6:
            n = int(rng.choice([48, 64] if big else [16, 20, 24, 32]))
            f = _quad(n)
            ic = add(fp(f), mx, my + 1.0)
            sides = n // 4
            supply = [sides - 1, 2 * sides - 1, 3 * sides]          # pins on three sides
            ground = [sides, 2 * sides + 1, n + 1]                 # and the exposed pad
        else:
            n = int(rng.choice([14, 16, 20]))
            f = _dual(n)
            ic = add(fp(f), mx, my + 1.0, rot=int(rng.choice([0, 180])))
            supply = [n // 2 + 1]
            ground = [n // 2]
        ics.append(ic)
        pins = [p.pin for p in f.pads]
        for k, s in enumerate(supply):
            net_pins["VCC"].append(f"{ic}.{s}")
            # a 0402 decoupling capacitor beside the pin, outside the body
            pad = next(p for p in f.pads if p.pin == str(s))
            ox, oy = pad.offset
            d = math.hypot(ox, oy) or 1.0
            cx = mx + ox / d * (f.body[0] / 2 + 3.0) + (1.2 if abs(oy) > abs(ox) else 0.0)
            cy = my + 1.0 + oy / d * (f.body[1] / 2 + 3.0) + (0.0 if abs(oy) > abs(ox) else 1.2)
            c = add(c0402, cx, cy, rot=(90 if abs(ox) > abs(oy) else 0) + (45 if angled and rng.random() < 0.35 else 0))
            net_pins["VCC"].append(f"{c}.1")
            net_pins["GND"].append(f"{c}.2")
        for g_ in ground:
            net_pins["GND"].append(f"{ic}.{g_}")
        free = [p for p in pins if int(p) not in supply and int(p) not in ground]
        # pins in order around the part, as a designer assigns them to keep the fan-out uncrossed,
        # starting on the side that faces the connector; a few neighbours swapped
        start = int(rng.integers(0, 3))
        free = free[start:] + free[:start]
        for _ in range(2):
            k = int(rng.integers(0, max(1, len(free) - 1)))
            free[k:k + 2] = free[k:k + 2][::-1]
        # the bus to the previous fine-pitch part
        if len(ics) > 1 and len(free) > 2:
            for name in ("SDA", "SCL"):
                net_pins.setdefault(name, [f"{ics[-2]}.{free_prev.pop()}"] if free_prev else [])
                net_pins[name].append(f"{ic}.{free.pop()}")
        # a connector along the module's lower edge, and rows of resistors left and right
        nsig = min(len(free), int(rng.integers(8, 15)))
        if big:                       # signals + resistor-to-connector nets + the bus within the budget
            nsig = min(nsig, max(1, int(budget / 2 + rng.random())))
        ncon = min(nsig, 12)
        con_f = _conn(ncon + 2)
        con = add(fp(con_f), mx, my - MODULE[1] / 2 + 2.6)
        net_pins["VCC"].append(f"{con}.1")
        net_pins["GND"].append(f"{con}.{ncon + 2}")
        net_pins["GND"].append(f"{con}.MP")
        rcode = c0603 if rng.random() < 0.5 else c0402
        nres = min(nsig, 8)
        rows_used = {True: 0, False: 0}
        for k in range(nsig):
            pin = free[k]
            sig += 1
            name = f"S{sig}"
            if k < nres:
                # resistor rows left and right of the part: each pin to the row on its own side
                ox = next(p.offset[0] for p in f.pads if p.pin == pin) * (-1 if parts_rot(ic) == 180 else 1)
                left = ox < 0 or (ox == 0 and k % 2 == 0)
                row = rows_used[left]
                rows_used[left] += 1
                x = mx + (-1 if left else 1) * (MODULE[0] / 2 - 6.0)
                y = my + 6.0 - row * 2.2
                r = add(rcode, x, y, rot=0)
                net_pins[name] = [f"{ic}.{pin}", f"{r}.{'2' if left else '1'}"]
                if k < ncon:
                    net_pins[f"S{sig}B"] = [f"{r}.{'1' if left else '2'}", f"{con}.{k + 2}"]
            elif k < ncon:
                net_pins[name] = [f"{ic}.{pin}", f"{con}.{k + 2}"]
        free_prev = free[nsig:]
    net_list = [Net(n, p, cls_of.get(n, "default")) for n, p in net_pins.items() if len(p) >= 2]
    keepouts = []
    two_pin = [n for n in net_list if len(n.pins) == 2 and n.net_class == "default" and n.pins[-1][0] == "R"]
    for n in two_pin[:max(0, int(enclosed))]:
        part = next(p for p in parts if p.ref == n.pins[-1].split(".")[0])
        f = fps[part.footprint]
        ex = max(abs(q.offset[0]) + q.size[0] / 2 for q in f.pads) + 0.35      # a frame of strips round the pads
        ey = max(abs(q.offset[1]) + q.size[1] / 2 for q in f.pads) + 0.35
        x, y = part.at
        for x0, y0, x1, y1 in ((x - ex - 0.2, y - ey - 0.2, x + ex + 0.2, y - ey),
                               (x - ex - 0.2, y + ey, x + ex + 0.2, y + ey + 0.2),
                               (x - ex - 0.2, y - ey, x - ex, y + ey), (x + ex, y - ey, x + ex + 0.2, y + ey)):
            keepouts.append(Keepout([(round(x0, 4), round(y0, 4)), (round(x1, 4), round(y0, 4)),
                                     (round(x1, 4), round(y1, 4)), (round(x0, 4), round(y1, 4))], None, True))
    corner = float(rng.choice([2.0, 3.0, 4.0]))
    path = _arc_outline(W, H, corner) if angled else None
    if path is not None:
        from .outline import chords
        outline = chords(path)
    else:
        outline = _rounded_rect(W, H, corner)
    b = Board(name=f"real-{seed}", outline=outline, copper_layers=2, rules=rules, classes=classes,
              footprints=fps, parts=parts, nets=net_list, outline_path=path, keepouts=keepouts)
    return b
