"""Built-in footprint families whose surface lands are computed (IPC-7351B), with their outlines.

Every family here takes its package dimensions from the outline it follows (JEDEC, EIA or
the trade's common outline, named beside the numbers; "from memory" where recalled, so check
a part's own datasheet before a board goes to fabrication) and turns them into lands with
:func:`router.landpattern.land` at the nominal density level. Through-hole families take
hole and pad sizes of common practice.

Orientation, as for every built-in footprint: at rotation 0 the rows run along x; pin 1 is
at the left end of the lower row and numbering runs counter-clockwise seen from the top.
Quad packages continue up the right side, right to left along the top and down the left
side (the package drawn in a datasheet with pin 1 at the upper left, turned a quarter turn
counter-clockwise, as the dual rows are).
"""
from __future__ import annotations

import re

from .landpattern import Dim, goals_for, land, round_step
from .model import Footprint, Pad

__all__ = ["builtin_package", "TSSOP_BODY", "SSOP_BODY", "QFP_BODY", "QFN_BODY", "CAP_SMD",
           "DO214", "EP_GAP"]


def _r(v: float) -> float:
    r = round(v, 6)
    return 0.0 if r == 0 else r


# ----------------------------------------------------------------- outlines (mm)

# JEDEC MO-153 (thin shrink small outline, 4.4 mm body, 0.65 mm pitch; from memory):
# lead span E 6.20-6.60, foot L 0.45-0.75, lead width b 0.19-0.30, body E1 4.30-4.50;
# body length D per pin count (variants AA, AB-1, AB, AC, AD, AE).
TSSOP = dict(L=Dim(6.2, 6.6), T=Dim(0.45, 0.75), W=Dim(0.19, 0.30), body_y=4.4, pitch=0.65)
TSSOP_BODY = {8: 3.0, 14: 5.0, 16: 5.0, 20: 6.5, 24: 7.8, 28: 9.7}

# JEDEC MO-150 (shrink small outline, 5.3 mm body, 0.65 mm pitch; from memory):
# lead span E 7.40-8.20, foot L 0.55-0.95, lead width b 0.22-0.38, body E1 5.00-5.60.
SSOP = dict(L=Dim(7.4, 8.2), T=Dim(0.55, 0.95), W=Dim(0.22, 0.38), body_y=5.3, pitch=0.65)
SSOP_BODY = {14: 6.2, 16: 6.2, 20: 7.2, 24: 8.2, 28: 10.2, 30: 10.2}

# JEDEC MS-026 (low-profile quad flat, from memory): lead tips 2.0 mm beyond the square
# body (+/- 0.2), foot L 0.45-0.75, lead width b 0.30-0.45 at 0.8 mm, 0.17-0.27 at 0.5 mm.
QFP_BODY = {"0.8": {32: 7.0, 44: 10.0, 64: 14.0},
            "0.5": {32: 5.0, 48: 7.0, 64: 10.0, 100: 14.0, 144: 20.0}}
QFP_LEAD = {"0.8": Dim(0.30, 0.45), "0.5": Dim(0.17, 0.27)}
QFP_FOOT = Dim(0.45, 0.75)

# JEDEC MO-220 (quad flat no-lead, 0.5 mm pitch, from memory): body +/- 0.10, terminal
# length L 0.30-0.50, width b 0.18-0.30; the exposed pad's nominal side per variant
# (it varies between makers: check the part's datasheet).
QFN_BODY = {16: (3.0, 1.7), 20: (4.0, 2.6), 24: (4.0, 2.6), 28: (5.0, 3.2), 32: (5.0, 3.45),
            40: (6.0, 4.5), 48: (7.0, 5.5), 56: (8.0, 6.2), 64: (9.0, 7.2)}
QFN_TERM = dict(T=Dim(0.30, 0.50), W=Dim(0.18, 0.30))
#: common practice: the exposed-pad land keeps this much from the terminal lands' inner ends
EP_GAP = 0.2

# JEDEC MO-178 AA / AB (SOT-23-5, SOT-23-6; from memory): pitch 0.95, lead span 2.60-3.00,
# foot 0.30-0.60, lead width 0.30-0.50, body 2.90 x 1.60.
SOT23N = dict(L=Dim(2.6, 3.0), T=Dim(0.30, 0.60), W=Dim(0.30, 0.50), body=(2.9, 1.6), pitch=0.95)

# JEDEC TO-261AA (SOT-223; from memory): pitch 2.30, lead span 6.70-7.30, foot 0.75-1.10,
# leads 0.66-0.84 wide, tab 2.95-3.15 wide, body 6.50 x 3.50.
SOT223 = dict(L=Dim(6.7, 7.3), T=Dim(0.75, 1.10), W=Dim(0.66, 0.84), tab=Dim(2.95, 3.15),
              body=(6.5, 3.5), pitch=2.3)

# JEDEC TO-243AA (SOT-89; from memory): pitch 1.50, lead tips 3.94-4.25 from the body's far
# edge, body 4.50 x 2.45 (E 2.29-2.60), foot 0.89-1.20, leads 0.36-0.48 (pin 2: 0.41-0.53),
# the pin 2 tab under the body 1.40-1.75 wide.
SOT89 = dict(HE=Dim(3.94, 4.25), body=(4.5, 2.45), T=Dim(0.89, 1.20), W=Dim(0.36, 0.48),
             W2=Dim(0.41, 0.53), tab=Dim(1.40, 1.75), pitch=1.5)

# SOD-123 and SOD-323 (EIAJ SC-76): the trade's common outlines, no JEDEC registration (from
# memory): lead span, foot, lead width, body.
SOD = {"sod-123": dict(L=Dim(3.55, 3.85), T=Dim(0.25, 0.45), W=Dim(0.45, 0.65), body=(2.7, 1.6)),
       "sod-323": dict(L=Dim(2.30, 2.70), T=Dim(0.20, 0.40), W=Dim(0.25, 0.40), body=(1.7, 1.25))}

# JEDEC DO-214AC (SMA), DO-214AA (SMB), DO-214AB (SMC), from memory: overall length over the
# leads, lead (foot) length 0.76-1.52, lead width, body.
DO214 = {"ac": dict(L=Dim(4.80, 5.28), W=Dim(1.25, 1.65), body=(4.3, 2.6)),
         "aa": dict(L=Dim(5.21, 5.59), W=Dim(1.96, 2.21), body=(4.3, 3.6)),
         "ab": dict(L=Dim(7.75, 8.13), W=Dim(2.75, 3.18), body=(6.9, 5.9))}
DO214_FOOT = Dim(0.76, 1.52)

# 3.2 x 2.5 mm ceramic crystal, four terminals (the trade's common outline, from memory):
# length 3.10-3.30, terminals 0.90-1.10 long and 0.70-0.90 wide, terminal rows 1.6 apart.
XTAL3225 = dict(L=Dim(3.1, 3.3), T=Dim(0.9, 1.1), W=Dim(0.7, 0.9), rows=1.6, body=(3.2, 2.5))

# Aluminium electrolytic vertical-chip capacitors (the makers' common sizes, from memory):
# can diameter D -> (base plate side A, gap between the terminals P, terminal width b).
# The terminals reach 0.3 mm beyond the base plate (+/- 0.2); terminal width +/- 0.15.
CAP_SMD = {"4": (4.3, 1.0, 0.65), "5": (5.3, 1.5, 0.65), "6.3": (6.6, 1.8, 0.65),
           "8": (8.3, 3.1, 0.9), "10": (10.3, 4.6, 0.9)}

# Through-hole, hole and pad sizes common practice (hole = largest lead + about 0.2 to 0.3):
TO92 = dict(pitch=1.27, pad=(1.05, 1.6), drill=0.7, body=(4.8, 3.8))   # JEDEC TO-226AA, leads 0.36-0.56
HC49 = dict(pitch=4.88, pad=1.5, drill=0.8, body=(11.35, 4.65))       # HC-49/U and /S, 0.43 mm leads
SWITCH6 = dict(dx=6.5, dy=4.5, pad=1.8, drill=1.0, body=(6.0, 6.0))    # 6 x 6 mm tactile switch


# ----------------------------------------------------------------- builders

def _dual_rows(n: int, pitch: float, row: float, size: tuple[float, float], shape="rectangle",
               first_shape=None, drill=None) -> list[Pad]:
    """Pins 1..n/2 left to right on the lower row, then right to left on the upper row.

    `size` is (width along x, height along y) of every pad.
    """
    half = n // 2
    x0 = -(half - 1) * pitch / 2
    pads = [Pad(str(i + 1), (_r(x0 + i * pitch), _r(-row / 2)),
                (first_shape or shape) if i == 0 else shape, size, drill) for i in range(half)]
    pads += [Pad(str(half + i + 1), (_r(x0 + (half - 1 - i) * pitch), _r(row / 2)), shape, size, drill)
             for i in range(half)]
    return pads


def _quad(n: int, pitch: float, lp) -> list[Pad]:
    """n/4 lands a side, counter-clockwise from the left end of the lower row."""
    side = n // 4
    h = lp.row / 2
    t0 = -(side - 1) * pitch / 2
    pads = []
    # (centre of the side, direction along the side) for lower, right, upper, left
    for (cx, cy), (ax, ay) in (((0, -h), (1, 0)), ((h, 0), (0, 1)), ((0, h), (-1, 0)), ((-h, 0), (0, -1))):
        size = (lp.X, lp.length) if ax else (lp.length, lp.X)
        for m in range(side):
            t = t0 + m * pitch
            pads.append(Pad(str(len(pads) + 1), (_r(cx + ax * t), _r(cy + ay * t)), "rectangle", size))
    return pads


def _gullwing_dual(name: str, n: int, o: dict, body_x: float) -> Footprint:
    lp = land(o["L"], o["T"], o["W"], goals_for("gullwing", pitch=o["pitch"]))
    pads = _dual_rows(n, o["pitch"], lp.row, (lp.X, lp.length))
    return Footprint(name, (body_x, o["body_y"]), pads)


def _qfp(n: int, pitch: str) -> Footprint:
    body = QFP_BODY[pitch][n]
    L = Dim(body + 2.0 - 0.2, body + 2.0 + 0.2)
    lp = land(L, QFP_FOOT, QFP_LEAD[pitch], goals_for("gullwing", pitch=float(pitch)))
    return Footprint(f"qfp-{n}-{pitch}", (body, body), _quad(n, float(pitch), lp))


def _qfn(n: int, ep: bool) -> Footprint:
    body, ep_nom = QFN_BODY[n]
    lp = land(Dim(body - 0.1, body + 0.1), QFN_TERM["T"], QFN_TERM["W"], goals_for("nolead"))
    pads = _quad(n, 0.5, lp)
    name = f"qfn-{n}-0.5"
    if ep:
        side = _r(min(ep_nom, lp.G - 2 * EP_GAP))
        pads.append(Pad(str(n + 1), (0.0, 0.0), "rectangle", (side, side)))
        name += "-ep"
    return Footprint(name, (body, body), pads)


def _sot23n(n: int) -> Footprint:
    o = SOT23N
    lp = land(o["L"], o["T"], o["W"], goals_for("gullwing", pitch=o["pitch"]))
    p, h, size = o["pitch"], lp.row / 2, (lp.X, lp.length)
    pads = [Pad(str(i + 1), (_r((i - 1) * p), _r(-h)), "rectangle", size) for i in range(3)]
    # SOT-23-5: pin 4 across from pin 3, pin 5 across from pin 1; SOT-23-6: 4, 5, 6 right to left
    tops = [p, -p] if n == 5 else [p, 0.0, -p]
    pads += [Pad(str(4 + i), (_r(x), _r(h)), "rectangle", size) for i, x in enumerate(tops)]
    return Footprint(f"sot-23-{n}", o["body"], pads)


def _sot223() -> Footprint:
    o = SOT223
    g = goals_for("gullwing", pitch=o["pitch"])
    lp = land(o["L"], o["T"], o["W"], g)
    tab = land(o["L"], o["T"], o["tab"], g)
    h = lp.row / 2
    pads = [Pad(str(i + 1), (_r((i - 1) * o["pitch"]), _r(-h)), "rectangle", (lp.X, lp.length)) for i in range(3)]
    pads.append(Pad("4", (0.0, _r(h)), "rectangle", (tab.X, tab.length)))
    return Footprint("sot-223", o["body"], pads)


def _sot89() -> Footprint:
    o = SOT89
    e_half = o["body"][1] / 2
    # the leads leave one side only: the land is computed for the lead span a mirrored
    # package would have, 2 x (lead tip to body centre), with the body's height at nominal
    L = Dim(_r(2 * (o["HE"].lo - e_half)), _r(2 * (o["HE"].hi - e_half)))
    g = goals_for("gullwing", pitch=o["pitch"])
    lp, lp2 = land(L, o["T"], o["W"], g), land(L, o["T"], o["W2"], g)
    y = -lp.row / 2
    p = o["pitch"]
    pads = [Pad("1", (-p, _r(y)), "rectangle", (lp.X, lp.length)),
            Pad("2", (0.0, _r(y)), "rectangle", (lp2.X, lp2.length)),
            Pad("3", (p, _r(y)), "rectangle", (lp.X, lp.length))]
    # pin 2's tab under the body: from the middle of pin 2's lead land (so the two overlap
    # and are one piece of copper) to the body's far edge, as wide as the tab at its largest
    # plus the side goal (common practice)
    y0, y1 = y, e_half
    pads.append(Pad("2", (0.0, _r((y0 + y1) / 2)), "rectangle",
                    (round_step(o["tab"].hi + 2 * max(g.side, 0.0)), _r(y1 - y0))))
    return Footprint("sot-89", o["body"], pads)


def _two_terminal(name: str, L: Dim, T: Dim, W: Dim, kind: str, body, polarity: str) -> Footprint:
    """Two lands on x; pin 1 (the cathode of a diode, the + of a capacitor) on the left."""
    lp = land(L, T, W, goals_for(kind))
    c = lp.row / 2
    pads = [Pad("1", (_r(-c), 0.0), "rectangle", (lp.length, lp.X)),
            Pad("2", (_r(c), 0.0), "rectangle", (lp.length, lp.X))]
    return Footprint(name, body, pads, polarised=True, polarity=polarity)


def _xtal3225() -> Footprint:
    o = XTAL3225
    lp = land(o["L"], o["T"], o["W"], goals_for("nolead"))
    c, h, size = lp.row / 2, o["rows"] / 2, (lp.length, lp.X)
    pads = [Pad("1", (_r(-c), -h), "rectangle", size), Pad("2", (_r(c), -h), "rectangle", size),
            Pad("3", (_r(c), h), "rectangle", size), Pad("4", (_r(-c), h), "rectangle", size)]
    return Footprint("crystal-3225", o["body"], pads)


def _cap_smd(code: str) -> Footprint:
    a, gap, b = CAP_SMD[code]
    L = Dim.nom(a + 0.3, 0.2)
    T = Dim.nom((a + 0.3 - gap) / 2, 0.2)
    return _two_terminal(f"cap-smd-{code}", L, T, Dim.nom(b, 0.15), "electrolytic", (a, a), "plus")


def _to92() -> Footprint:
    o = TO92
    pads = [Pad(str(i + 1), (_r((i - 1) * o["pitch"]), 0.0), "rectangle" if i == 0 else "obround",
                o["pad"], o["drill"]) for i in range(3)]
    return Footprint("to-92", o["body"], pads)


def _hc49() -> Footprint:
    o = HC49
    c = o["pitch"] / 2
    pads = [Pad("1", (_r(-c), 0.0), "round", (o["pad"], o["pad"]), o["drill"]),
            Pad("2", (_r(c), 0.0), "round", (o["pad"], o["pad"]), o["drill"])]
    return Footprint("crystal-hc49", o["body"], pads)


def _switch6() -> Footprint:
    o = SWITCH6
    d = (o["pad"], o["pad"])
    pads = _dual_rows(4, o["dx"], o["dy"], d, shape="round", first_shape="rectangle", drill=o["drill"])
    return Footprint("switch-6x6", o["body"], pads)


def builtin_package(name: str) -> Footprint | None:
    """The footprint `name` of one of this module's families, or None.

    Examples
    --------
    >>> fp = builtin_package("qfn-32-0.5-ep")
    >>> len(fp.pads), fp.pads[-1].pin, fp.body
    (33, '33', (5.0, 5.0))
    >>> builtin_package("tssop-9") is None
    True
    """
    m = re.fullmatch(r"tssop-(\d+)", name)
    if m:
        n = int(m.group(1))
        return _gullwing_dual(name, n, TSSOP, TSSOP_BODY[n]) if n in TSSOP_BODY else None
    m = re.fullmatch(r"ssop-(\d+)", name)
    if m:
        n = int(m.group(1))
        return _gullwing_dual(name, n, SSOP, SSOP_BODY[n]) if n in SSOP_BODY else None
    m = re.fullmatch(r"qfp-(\d+)-(0\.8|0\.5)", name)
    if m:
        n = int(m.group(1))
        return _qfp(n, m.group(2)) if n in QFP_BODY[m.group(2)] else None
    m = re.fullmatch(r"qfn-(\d+)-0\.5(-ep)?", name)
    if m:
        n = int(m.group(1))
        return _qfn(n, bool(m.group(2))) if n in QFN_BODY else None
    m = re.fullmatch(r"sot-23-([56])", name)
    if m:
        return _sot23n(int(m.group(1)))
    if name == "sot-223":
        return _sot223()
    if name == "sot-89":
        return _sot89()
    if name in SOD:
        o = SOD[name]
        return _two_terminal(name, o["L"], o["T"], o["W"], "gullwing", o["body"], "cathode")
    m = re.fullmatch(r"do-214(ac|aa|ab)", name)
    if m:
        o = DO214[m.group(1)]
        return _two_terminal(name, o["L"], DO214_FOOT, o["W"], "molded", o["body"], "cathode")
    if name == "crystal-3225":
        return _xtal3225()
    if name == "crystal-hc49":
        return _hc49()
    if name == "switch-6x6":
        return _switch6()
    if name == "to-92":
        return _to92()
    m = re.fullmatch(r"cap-smd-(4|5|6\.3|8|10)", name)
    if m:
        return _cap_smd(m.group(1))
    return None
