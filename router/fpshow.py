"""`elbowroom footprints`: the built-in footprint families, and one footprint's pads, drawn.

With no name it lists every family with its parameters and the outline it follows; with a
name it prints the footprint's pads (pin, offset, shape, size, drill) and, with ``-o``, draws
it (matplotlib) with pin numbers, the body, pin 1 marked and a millimetre grid, a picture to
hold against a datasheet's land drawing. An unknown name is bad input (exit 2) and the
message names the nearest known ones.
"""
from __future__ import annotations

import io
import json
from pathlib import Path

from .errors import BoardError
from .footprints import builtin_footprint
from .model import Footprint
from .units import snap

__all__ = ["FAMILIES", "family_list", "footprint_table", "format_families", "format_footprint",
           "draw_footprint", "run_footprints"]

#: Every built-in family: (name pattern, parameter values, example, what fixes it).
FAMILIES = [
    ("chip-CODE", "CODE 0402, 0603, 0805, 1206", "chip-0805", "two surface pads, EIA chip sizes"),
    ("sot-23", "", "sot-23", "JEDEC TO-236, 3 pads"),
    ("soic-N", "N even, 8 to 28", "soic-8", "1.27 mm pitch, JEDEC MS-012 / MS-013"),
    ("dip-N, dip-N-wide", "N even, 4 to 40", "dip-8", "2.54 mm pitch, rows 7.62 / 15.24 mm (JEDEC MS-001 / MS-011)"),
    ("header-1xN, header-2xN", "N 1 to 40", "header-2x5", "2.54 mm pitch pin headers"),
    ("to-220", "", "to-220", "JEDEC TO-220AB, 3 leads in line at 2.54 mm"),
    ("terminal-N", "N 2 to 12", "terminal-2", "5.08 mm pitch screw terminals"),
    ("axial-P", "P lead spacing in mm, 2 to 50", "axial-10.16", "two plated holes P apart"),
    ("radial-P", "P lead spacing in mm, 1 to 20", "radial-2.5", "two plated holes P apart, pin 1 +"),
    ("diode-P", "P lead spacing in mm, 5 to 30", "diode-10.16", "axial rectifier, pin 1 the cathode"),
    ("led-S", "S 3 or 5 (mm)", "led-5", "LED lamp, 2.54 mm leads, pin 1 the cathode"),
    ("tantalum-C", "C case A, B, C, D", "tantalum-B", "EIA-535BAAC molded tantalum, pin 1 +"),
    ("hole-D", "D diameter in mm, 0.5 to 10", "hole-3.2", "a non-plated mounting hole"),
    ("tssop-N", "N 8, 14, 16, 20, 24, 28", "tssop-20", "0.65 mm pitch, JEDEC MO-153, lands IPC-7351B"),
    ("ssop-N", "N 14, 16, 20, 24, 28, 30", "ssop-28", "0.65 mm pitch, JEDEC MO-150, lands IPC-7351B"),
    ("qfp-N-0.8", "N 32, 44, 64", "qfp-44-0.8", "quad flat, JEDEC MS-026, lands IPC-7351B"),
    ("qfp-N-0.5", "N 32, 48, 64, 100, 144", "qfp-48-0.5", "quad flat, JEDEC MS-026, lands IPC-7351B"),
    ("qfn-N-0.5, qfn-N-0.5-ep", "N 16, 20, 24, 28, 32, 40, 48, 56, 64", "qfn-32-0.5-ep",
     "quad no-lead, JEDEC MO-220, lands IPC-7351B; -ep: exposed pad, pin N+1"),
    ("sot-23-5, sot-23-6", "", "sot-23-6", "0.95 mm pitch, JEDEC MO-178, lands IPC-7351B"),
    ("sot-223", "", "sot-223", "JEDEC TO-261AA, tab pin 4, lands IPC-7351B"),
    ("sot-89", "", "sot-89", "JEDEC TO-243AA, pin 2 lead and tab, lands IPC-7351B"),
    ("to-92", "", "to-92", "JEDEC TO-226AA, 3 leads in line at 1.27 mm"),
    ("sod-123, sod-323", "", "sod-123", "small outline diodes, pin 1 the cathode, lands IPC-7351B"),
    ("do-214ac, do-214aa, do-214ab", "", "do-214ac", "JEDEC SMA, SMB, SMC bodies, pin 1 the cathode, lands IPC-7351B"),
    ("crystal-hc49", "", "crystal-hc49", "HC-49/U, HC-49/S: two leads 4.88 mm apart"),
    ("crystal-3225", "", "crystal-3225", "3.2 x 2.5 mm ceramic crystal, 4 pads, lands IPC-7351B"),
    ("switch-6x6", "", "switch-6x6", "6 x 6 mm through-hole tactile switch, 4 pins on 6.5 x 4.5 mm"),
    ("cap-smd-D", "D 4, 5, 6.3, 8, 10 (can diameter, mm)", "cap-smd-6.3",
     "aluminium electrolytic vertical chip, pin 1 +, lands IPC-7351B"),
]


def family_list() -> list[dict]:
    """The families as plain dicts (for ``--json``), each with its example's pin count."""
    out = []
    for pattern, params, example, what in FAMILIES:
        fp = builtin_footprint(example)
        out.append({"family": pattern, "parameters": params, "example": example, "pins": len(fp.pins()),
                    "source": what})
    return out


def format_families() -> str:
    rows = family_list()
    w = max(len(r["family"]) for r in rows)
    lines = ["built-in footprint families (at rotation 0 rows run along x; pin 1 at the lower left,",
             "numbered counter-clockwise seen from the top):"]
    for r in rows:
        params = f" ({r['parameters']})" if r["parameters"] else ""
        lines.append(f"  {r['family']:<{w}}  {r['source']}{params}; e.g. {r['example']}")
    lines.append("elbowroom footprints NAME prints one footprint's pads; -o PICTURE draws it.")
    return "\n".join(lines)


def footprint_table(fp: Footprint) -> dict:
    """One footprint as a plain dict: body, pads (pin, offset, shape, size, drill), holes."""
    return {"name": fp.name, "body": [snap(fp.body[0]), snap(fp.body[1])],
            "pins": len(fp.pins()),
            "polarised": bool(getattr(fp, "polarised", False)),
            "pads": [{"pin": p.pin, "offset": [snap(p.offset[0]), snap(p.offset[1])], "shape": p.shape,
                      "size": [snap(p.size[0]), snap(p.size[1])], "drill": p.drill} for p in fp.pads],
            "holes": [{"offset": [snap(h.offset[0]), snap(h.offset[1])], "drill": h.drill} for h in fp.holes]}


def format_footprint(fp: Footprint) -> str:
    t = footprint_table(fp)
    lines = [f"{fp.name}: body {t['body'][0]:g} x {t['body'][1]:g} mm, {t['pins']} pins, "
             f"{len(fp.pads)} pads" + (f", {len(fp.holes)} holes" if fp.holes else ""),
             f"  {'pin':>4}  {'x':>8} {'y':>8}  {'shape':<9} {'w':>6} {'h':>6}  drill"]
    for p in t["pads"]:
        drill = f"{p['drill']:g}" if p["drill"] is not None else "-"
        lines.append(f"  {p['pin']:>4}  {p['offset'][0]:8.3f} {p['offset'][1]:8.3f}  {p['shape']:<9} "
                     f"{p['size'][0]:6.3f} {p['size'][1]:6.3f}  {drill}")
    for h in t["holes"]:
        lines.append(f"  hole  {h['offset'][0]:8.3f} {h['offset'][1]:8.3f}  non-plated          drill {h['drill']:g}")
    lines.append("  (mm, the footprint's own coordinates: body centre at 0, 0, seen from the top)")
    return "\n".join(lines)


def draw_footprint(fp: Footprint, path: Path) -> None:
    """Draw `fp` to a .png or .svg: pads with their pin numbers, drills, body, pin 1 mark, mm grid."""
    import matplotlib
    matplotlib.use("Agg")
    import matplotlib.pyplot as plt
    from matplotlib.patches import Circle, FancyBboxPatch, Rectangle

    from .safefile import write_atomic

    bw, bh = fp.body
    xs = [abs(p.offset[0]) + p.size[0] / 2 for p in fp.pads] + [bw / 2] + [abs(h.offset[0]) + h.drill / 2 for h in fp.holes]
    ys = [abs(p.offset[1]) + p.size[1] / 2 for p in fp.pads] + [bh / 2] + [abs(h.offset[1]) + h.drill / 2 for h in fp.holes]
    ext_x, ext_y = max(xs) + 0.6, max(ys) + 0.6
    scale = 8.0 / max(2 * ext_x, 2 * ext_y)
    fig, ax = plt.subplots(figsize=(max(4.0, 2 * ext_x * scale + 1.5), max(3.5, 2 * ext_y * scale + 1.2)))
    ax.add_patch(Rectangle((-bw / 2, -bh / 2), bw, bh, fill=False, ls="--", lw=1.0, ec="#555555", zorder=1))
    small = min(min(p.size) for p in fp.pads) if fp.pads else 1.0
    font = max(4.0, min(9.0, small * scale * 30))
    for p in fp.pads:
        x, y = p.offset
        w, h = p.size
        colour = "#D55E00" if p.pin == "1" else "#E69F00"     # Okabe-Ito vermilion / orange
        if p.shape == "round":
            patch = Circle((x, y), w / 2, fc=colour, ec="#333333", lw=0.5, zorder=2)
        elif p.shape == "obround":
            r = min(w, h) / 2
            patch = FancyBboxPatch((x - w / 2 + r, y - h / 2 + r), w - 2 * r, h - 2 * r,
                                   boxstyle=f"round,pad={r}", fc=colour, ec="#333333", lw=0.5, zorder=2)
        else:
            patch = Rectangle((x - w / 2, y - h / 2), w, h, fc=colour, ec="#333333", lw=0.5, zorder=2)
        ax.add_patch(patch)
        if p.drill is not None:
            ax.add_patch(Circle((x, y), p.drill / 2, fc="white", ec="#333333", lw=0.5, zorder=3))
        ax.text(x, y, p.pin, ha="center", va="center", fontsize=font, color="black", zorder=4,
                rotation=90 if h > 1.6 * w and len(p.pin) > 1 else 0)
    for hole in fp.holes:
        ax.add_patch(Circle(hole.offset, hole.drill / 2, fc="white", ec="black", lw=0.8, zorder=3))
    ones = [p for p in fp.pads if p.pin == "1"]
    if ones:
        p = ones[0]
        ax.plot([p.offset[0] - p.size[0] / 2 - 0.35], [p.offset[1] - p.size[1] / 2 - 0.35], "o",
                color="#0072B2", ms=4, zorder=5)
    ax.set_xlim(-ext_x, ext_x)
    ax.set_ylim(-ext_y, ext_y)
    ax.set_aspect("equal")
    ax.grid(True, lw=0.3, color="#cccccc")
    ax.set_xlabel("x (mm)")
    ax.set_ylabel("y (mm)")
    ax.set_title(f"{fp.name}: seen from the top, pin 1 marked (dot), body dashed", fontsize=9)
    fig.tight_layout()
    buf = io.BytesIO()
    fig.savefig(buf, format=Path(path).suffix[1:].lower(), dpi=200)
    plt.close(fig)
    write_atomic(path, buf.getvalue())


def run_footprints(name: str | None, as_json: bool = False, output: str | None = None) -> str:
    """The text `elbowroom footprints` prints; draws when `output` is given.

    Raises
    ------
    BoardError
        An unknown name (with the nearest known names), or a picture that is not .png or .svg.
    """
    if name is None:
        if output:
            raise BoardError(None, "footprints -o", "give a footprint name to draw (e.g. soic-8)")
        return json.dumps({"families": family_list()}, indent=2) if as_json else format_families()
    fp = builtin_footprint(name)
    if fp is None:
        from .csvboard import nearest_footprints
        near = nearest_footprints(name)
        hint = f"; nearest: {', '.join(near)}" if near else ""
        raise BoardError(None, f"footprint '{name}'", f"no such built-in footprint{hint} "
                                                      f"(elbowroom footprints lists the families)")
    if output is not None:
        suffix = Path(output).suffix.lower()
        if suffix not in (".png", ".svg"):
            raise BoardError(output, "footprints -o", f"unknown picture type '{suffix or output}': use .png or .svg")
        draw_footprint(fp, Path(output))
    return json.dumps(footprint_table(fp), indent=2) if as_json else format_footprint(fp)
