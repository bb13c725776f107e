"""The built-in footprint families.

Names are ``family-parameter``. At rotation 0 pins run along x; pin 1 is at the
lower left and numbering runs counter-clockwise seen from the top, as the trade
numbers packages. Pitches and row spacings are the standard ones (JEDEC and EIA,
named beside each family); pad sizes are the project's choice, each with the
source it follows. Values marked "from memory" are recalled nominal figures of
IPC-7351B land patterns (nominal density), not copied from a table.
"""
from __future__ import annotations

import re
from functools import lru_cache

from .model import Footprint, Hole, Pad
from .packages import builtin_package

__all__ = ["builtin_footprint", "resolve_footprint", "BUILTIN_FAMILIES", "INCH"]

INCH = 25.4
PITCH_100MIL = 2.54          # 0.1 in: DIP (JEDEC MS-001), pin headers, TO-220 (JEDEC TO-220AB)

# EIA-198 / IEC 60115-8 chip sizes: inch code -> (body length, body width, pad x, pad y, pad centre x)
# Body sizes are the EIA nominal ones (0402 = 1.0 x 0.5 mm ...). Pads: IPC-7351B nominal, from memory.
CHIP_SIZES = {
    "0402": (1.0, 0.5, 0.60, 0.65, 0.50),
    "0603": (1.6, 0.8, 0.90, 0.95, 0.80),
    "0805": (2.0, 1.25, 1.10, 1.40, 0.95),
    "1206": (3.2, 1.6, 1.20, 1.80, 1.45),
}

# Through-hole pads, common practice: drill = lead + about 0.3 mm; ring at least 0.3 mm.
DIP_PAD = (1.6, 0.8)          # diameter, drill (0.5 mm leads), from memory
HEADER_PAD = (1.7, 1.0)       # 0.64 mm square posts, from memory
TO220_PAD = (1.9, 1.1)        # 0.9 mm leads, from memory
TERMINAL_PAD = (2.6, 1.3)     # 1.0-1.1 mm screw-terminal pins, from memory
AXIAL_PAD = (1.8, 0.9)        # 0.6 mm resistor leads, from memory
RADIAL_PAD = (1.6, 0.8)       # 0.5 mm capacitor leads, from memory
DIODE_PAD = (2.0, 1.1)        # 0.8 mm leads of a DO-41 rectifier, from memory
LED_PAD = (1.6, 0.9)          # 0.5 mm square LED leads, from memory

# EIA-535BAAC molded tantalum case codes: code -> (body length, body width, pad x, pad y, pad
# centre x). Body sizes are the EIA metric codes (A = 3216, B = 3528, C = 6032, D = 7343);
# pads: IPC-7351B nominal, from memory.
TANTALUM_SIZES = {
    "A": (3.2, 1.6, 1.2, 1.3, 1.35),
    "B": (3.5, 2.8, 1.3, 2.3, 1.5),
    "C": (6.0, 3.2, 1.8, 2.3, 2.55),
    "D": (7.3, 4.3, 1.8, 2.5, 3.2),
}
# LED lamps, 2.54 mm lead spacing: name -> flange diameter (T-1 3 mm: 3.8, T-1 3/4 5 mm: 5.8),
# from memory; the body is the flange's square.
LED_SIZES = {"3": 3.8, "5": 5.8}

BUILTIN_FAMILIES = ("chip", "sot", "soic", "dip", "header", "to", "terminal", "axial", "radial", "hole",
                    "diode", "led", "tantalum",
                    # computed lands and their outlines: router.packages
                    "tssop", "ssop", "qfp", "qfn", "sod", "do", "crystal", "switch", "cap")

# Polarised families mark pin 1 (router.silkscreen): the cathode of a diode or LED (a band),
# the + of an electrolytic (radial) or tantalum capacitor (a + sign).


def _round(v: float) -> float:
    return round(v, 6)


def _chip(code: str) -> Footprint:
    length, width, px, py, cx = CHIP_SIZES[code]
    pads = [
        Pad("1", (-cx, 0.0), "rectangle", (px, py)),
        Pad("2", (cx, 0.0), "rectangle", (px, py)),
    ]
    return Footprint(f"chip-{code}", (length, width), pads)


def _sot23() -> Footprint:
    # JEDEC TO-236 (SOT-23): lead pitch 0.95 mm, body 2.9 x 1.3 mm, lands about 2.2 mm apart
    # across the body (IPC-7351B nominal, from memory); pad 0.6 x 0.7 mm, from memory.
    pad = (0.6, 0.7)
    pads = [
        Pad("1", (-0.95, -1.1), "rectangle", pad),
        Pad("2", (0.95, -1.1), "rectangle", pad),
        Pad("3", (0.0, 1.1), "rectangle", pad),
    ]
    return Footprint("sot-23", (2.9, 1.3), pads)


def _dual_row(n: int, pitch: float, row_spacing: float, pad_size, drill, shape, first_shape):
    """Pins 1..n/2 left to right on the lower row, then right to left on the upper row."""
    half = n // 2
    x0 = -(half - 1) * pitch / 2
    pads = []
    for i in range(half):
        pads.append(Pad(str(i + 1), (_round(x0 + i * pitch), _round(-row_spacing / 2)),
                        first_shape if i == 0 else shape, pad_size, drill))
    for i in range(half):
        pads.append(Pad(str(half + i + 1), (_round(x0 + (half - 1 - i) * pitch), _round(row_spacing / 2)),
                        shape, pad_size, drill))
    return pads


def _soic(n: int) -> Footprint:
    # JEDEC MS-012 (narrow, 3.9 mm body) up to 16 pins, MS-013 (wide, 7.5 mm body) from 18:
    # 1.27 mm pitch. Land rows 5.4 / 9.4 mm apart, pads 0.6 x 1.55 / 0.6 x 2.0 mm:
    # IPC-7351B nominal, from memory.
    if n <= 16:
        width, rows, pad = 3.9, 5.4, (0.6, 1.55)
        length = n / 2 * 1.27 - 0.2
    else:
        width, rows, pad = 7.5, 9.4, (0.6, 2.0)
        length = n / 2 * 1.27 + 0.1
    pads = _dual_row(n, 1.27, rows, pad, None, "rectangle", "rectangle")
    return Footprint(f"soic-{n}", (_round(length), width), pads)


def _dip(n: int, wide: bool) -> Footprint:
    # JEDEC MS-001 (0.300 in rows) and MS-011 (0.600 in rows), 0.100 in pitch.
    rows = 15.24 if wide else 7.62
    width = 13.7 if wide else 6.35
    dia, drill = DIP_PAD
    pads = _dual_row(n, PITCH_100MIL, rows, (dia, dia), drill, "round", "rectangle")
    name = f"dip-{n}-wide" if wide else f"dip-{n}"
    return Footprint(name, (_round(n / 2 * PITCH_100MIL), width), pads)


def _header(rows: int, n: int) -> Footprint:
    dia, drill = HEADER_PAD
    pads = []
    x0 = -(n - 1) * PITCH_100MIL / 2
    if rows == 1:
        for i in range(n):
            pads.append(Pad(str(i + 1), (_round(x0 + i * PITCH_100MIL), 0.0),
                            "rectangle" if i == 0 else "round", (dia, dia), drill))
        body = (n * PITCH_100MIL, PITCH_100MIL)
    else:
        # two rows: pins 1 and 2 side by side across the rows, odd pins on the lower row
        for i in range(n):
            x = _round(x0 + i * PITCH_100MIL)
            pads.append(Pad(str(2 * i + 1), (x, -PITCH_100MIL / 2), "rectangle" if i == 0 else "round", (dia, dia), drill))
            pads.append(Pad(str(2 * i + 2), (x, PITCH_100MIL / 2), "round", (dia, dia), drill))
        body = (n * PITCH_100MIL, 2 * PITCH_100MIL)
    return Footprint(f"header-{rows}x{n}", (_round(body[0]), _round(body[1])), pads)


def _to220() -> Footprint:
    # JEDEC TO-220AB: three leads in line, 2.54 mm pitch; body 10.2 x 4.6 mm seen from above.
    dia, drill = TO220_PAD
    pads = [Pad(str(i + 1), ((i - 1) * PITCH_100MIL, 0.0), "rectangle" if i == 0 else "round", (dia, dia), drill)
            for i in range(3)]
    return Footprint("to-220", (10.2, 4.6), pads)


def _terminal(n: int) -> Footprint:
    # 5.08 mm (0.200 in) pitch screw terminals, common practice.
    dia, drill = TERMINAL_PAD
    p = 5.08
    x0 = -(n - 1) * p / 2
    pads = [Pad(str(i + 1), (_round(x0 + i * p), 0.0), "rectangle" if i == 0 else "round", (dia, dia), drill)
            for i in range(n)]
    return Footprint(f"terminal-{n}", (_round(n * p), 8.0), pads)


def _axial(spacing: float, name: str) -> Footprint:
    dia, drill = AXIAL_PAD
    body_len = max(spacing - 2 * dia, 1.0)
    pads = [Pad("1", (_round(-spacing / 2), 0.0), "round", (dia, dia), drill),
            Pad("2", (_round(spacing / 2), 0.0), "round", (dia, dia), drill)]
    return Footprint(name, (_round(body_len), 2.5), pads)


def _radial(spacing: float, name: str) -> Footprint:
    dia, drill = RADIAL_PAD
    body = _round(2 * spacing)   # an electrolytic of about twice its lead spacing, common practice
    pads = [Pad("1", (_round(-spacing / 2), 0.0), "rectangle", (dia, dia), drill),
            Pad("2", (_round(spacing / 2), 0.0), "round", (dia, dia), drill)]
    return Footprint(name, (body, body), pads, polarised=True, polarity="plus")


def _diode(spacing: float, name: str) -> Footprint:
    # an axial rectifier (DO-41 body 5.2 x 2.7 mm, from memory); pin 1 is the cathode
    dia, drill = DIODE_PAD
    body_len = min(5.2, max(spacing - 2 * dia, 1.0))
    pads = [Pad("1", (_round(-spacing / 2), 0.0), "rectangle", (dia, dia), drill),
            Pad("2", (_round(spacing / 2), 0.0), "round", (dia, dia), drill)]
    return Footprint(name, (_round(body_len), 2.7), pads, polarised=True, polarity="cathode")


def _led(size: str) -> Footprint:
    # pin 1 is the cathode (the short lead, the flat of the flange)
    dia, drill = LED_PAD
    body = LED_SIZES[size]
    pads = [Pad("1", (-PITCH_100MIL / 2, 0.0), "rectangle", (dia, dia), drill),
            Pad("2", (PITCH_100MIL / 2, 0.0), "round", (dia, dia), drill)]
    return Footprint(f"led-{size}", (body, body), pads, polarised=True, polarity="cathode")


def _tantalum(code: str) -> Footprint:
    # pin 1 is the anode (+), the end the case's band marks
    length, width, px, py, cx = TANTALUM_SIZES[code]
    pads = [Pad("1", (-cx, 0.0), "rectangle", (px, py)), Pad("2", (cx, 0.0), "rectangle", (px, py))]
    return Footprint(f"tantalum-{code}", (length, width), pads, polarised=True, polarity="plus")


def _hole(d: float, name: str) -> Footprint:
    return Footprint(name, (d, d), [], [Hole((0.0, 0.0), d)])


_NUM = r"(\d+(?:\.\d+)?)"


@lru_cache(maxsize=None)
def _builtin(name: str):
    m = re.fullmatch(r"chip-(0402|0603|0805|1206)", name)
    if m:
        return _chip(m.group(1))
    if name == "sot-23":
        return _sot23()
    if name == "to-220":
        return _to220()
    m = re.fullmatch(r"soic-(\d+)", name)
    if m:
        n = int(m.group(1))
        return _soic(n) if (n % 2 == 0 and 8 <= n <= 28) else None
    m = re.fullmatch(r"dip-(\d+)(-wide)?", name)
    if m:
        n = int(m.group(1))
        return _dip(n, bool(m.group(2))) if (n % 2 == 0 and 4 <= n <= 40) else None
    m = re.fullmatch(r"header-([12])x(\d+)", name)
    if m:
        n = int(m.group(2))
        return _header(int(m.group(1)), n) if 1 <= n <= 40 else None
    m = re.fullmatch(r"terminal-(\d+)", name)
    if m:
        n = int(m.group(1))
        return _terminal(n) if 2 <= n <= 12 else None
    m = re.fullmatch(r"axial-" + _NUM, name)
    if m:
        p = float(m.group(1))
        return _axial(p, name) if 2.0 <= p <= 50.0 else None
    m = re.fullmatch(r"radial-" + _NUM, name)
    if m:
        p = float(m.group(1))
        return _radial(p, name) if 1.0 <= p <= 20.0 else None
    m = re.fullmatch(r"diode-" + _NUM, name)
    if m:
        p = float(m.group(1))
        return _diode(p, name) if 5.0 <= p <= 30.0 else None
    m = re.fullmatch(r"led-(3|5)", name)
    if m:
        return _led(m.group(1))
    m = re.fullmatch(r"tantalum-([ABCD])", name)
    if m:
        return _tantalum(m.group(1))
    m = re.fullmatch(r"hole-" + _NUM, name)
    if m:
        d = float(m.group(1))
        return _hole(d, name) if 0.5 <= d <= 10.0 else None
    return builtin_package(name)


def builtin_footprint(name: str) -> Footprint | None:
    """The built-in footprint called `name`, or None if there is none.

    Examples
    --------
    >>> fp = builtin_footprint("dip-8")
    >>> [p.pin for p in fp.pads][:4], fp.pads[0].offset
    (['1', '2', '3', '4'], (-3.81, -3.81))
    >>> builtin_footprint("dip-7") is None
    True
    """
    return _builtin(name)


def resolve_footprint(name: str, own: dict[str, Footprint]) -> Footprint | None:
    """The board's own footprint `name` if it has one, else the built-in one, else None."""
    if name in own:
        return own[name]
    return builtin_footprint(name)
