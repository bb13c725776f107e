"""The board file: TOML in and out, with validation and atomic writes.

:func:`load_board` reads and validates a file of the format in
``board-format.md`` and returns a :class:`~router.model.Board`; every problem is
a :class:`~router.errors.BoardError` naming the file, the entry and what is
wrong. :func:`save_board` writes a board back so that loading it again gives an
equal board.
"""
from __future__ import annotations

import math
import re
import tomllib
from dataclasses import fields
from pathlib import Path

import json
from shapely.geometry import Polygon
from shapely.validation import explain_validity

from .errors import BoardError
from .footprints import resolve_footprint
from .model import (Board, Footprint, Hole, Jumper, Keepout, NetClass, Net, Pad, Part, Rules,
                    Trace, Via, LAYERS)
from .safefile import write_atomic
from .units import TOL, snap

__all__ = ["load_board", "save_board", "loads_board", "dumps_board", "validate_board", "FORMAT"]

FORMAT = 1
TOP_KEYS = {"format", "board", "rules", "classes", "footprints", "parts", "nets", "keepouts",
            "traces", "vias", "jumpers", "pours"}
PAD_SHAPES = ("round", "rectangle", "obround", "rounded-rectangle")   # Gerber aperture words, and ours
#: words of an older pad vocabulary, refused with the word to use instead
OLD_PAD_SHAPES = {"circle": "round", "rect": "rectangle", "oval": "obround"}
RULE_FIELDS = {f.name: f for f in fields(Rules)}
# rules that may be zero (a board with no edge margin is odd but legal)
RULES_NONNEGATIVE = {"edge_clearance", "min_annular_ring", "min_hole_spacing", "mask_expansion",
                     "part_gap", "min_clearance", "min_trace_width", "min_drill"}


class _Reader:
    """Typed access to TOML values with errors that name the file and the entry."""

    def __init__(self, file):
        self.file = file

    def fail(self, entry, message):
        raise BoardError(self.file, entry, message)

    def table(self, value, entry):
        if not isinstance(value, dict):
            self.fail(entry, f"must be a table, not {_kind(value)}")
        return value

    def keys(self, table, entry, allowed, required=()):
        for key in table:
            if key not in allowed:
                self.fail(entry, f"unknown field '{key}' (known: {', '.join(sorted(allowed))})")
        for key in required:
            if key not in table:
                self.fail(entry, f"missing field '{key}'")

    def number(self, value, entry, *, positive=False, nonnegative=False):
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            self.fail(entry, f"must be a number, not {_kind(value)}")
        v = float(value)
        if not math.isfinite(v):
            self.fail(entry, f"must be a finite number, not {value}")
        if positive and v <= 0:
            self.fail(entry, f"must be greater than zero, not {value}")
        if nonnegative and v < 0:
            self.fail(entry, f"must not be negative, not {value}")
        return v

    def integer(self, value, entry):
        if isinstance(value, bool) or not isinstance(value, (int, float)) or \
                (isinstance(value, float) and (not math.isfinite(value) or value != int(value))):
            self.fail(entry, f"must be a whole number, not {value!r}")
        return int(value)

    def string(self, value, entry, *, nonempty=True):
        if not isinstance(value, str):
            self.fail(entry, f"must be a string, not {_kind(value)}")
        if nonempty and not value.strip():
            self.fail(entry, "must not be empty")
        return value

    def boolean(self, value, entry):
        if not isinstance(value, bool):
            self.fail(entry, f"must be true or false, not {value!r}")
        return value

    def point(self, value, entry):
        if not isinstance(value, list) or len(value) != 2:
            self.fail(entry, f"must be a pair [x, y], not {value!r}")
        return (self.number(value[0], entry), self.number(value[1], entry))

    def size(self, value, entry):
        if not isinstance(value, list) or len(value) != 2:
            self.fail(entry, f"must be a pair [width, height], not {value!r}")
        return (self.number(value[0], entry, positive=True), self.number(value[1], entry, positive=True))

    def array(self, value, entry):
        if not isinstance(value, list):
            self.fail(entry, f"must be an array, not {_kind(value)}")
        return value

    def polygon(self, value, entry):
        pts = [self.point(p, entry) for p in self.array(value, entry)]
        if len(pts) >= 2 and pts[0] == pts[-1]:
            pts = pts[:-1]
        if len(pts) < 3:
            self.fail(entry, "a polygon needs at least three corners")
        poly = Polygon(pts)
        if not poly.is_valid or poly.area <= 0:
            self.fail(entry, f"the polygon is not simple ({explain_validity(poly)}); "
                             "list its corners in order around it without crossing")
        return pts

    def layer(self, value, entry, layers):
        name = self.string(value, entry)
        if name not in layers:
            self.fail(entry, f"unknown layer '{name}' (this board has {', '.join(layers)})")
        return name


def _kind(value):
    return {dict: "a table", list: "an array", str: "a string", bool: "a boolean",
            int: "a number", float: "a number"}.get(type(value), type(value).__name__)


def _toml_line_hint(exc: tomllib.TOMLDecodeError) -> str:
    msg = str(exc)
    return msg[0].lower() + msg[1:] if msg else "broken TOML"


def loads_board(text: str, file: str | None = None) -> Board:
    """Parse and validate board-file text. `file` is used in error messages."""
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise BoardError(file, "TOML", f"{_toml_line_hint(exc)}; fix the syntax there") from None
    return _from_dict(data, file)


def load_board(path) -> Board:
    """Read and validate a board file.

    Parameters
    ----------
    path : str or Path

    Returns
    -------
    Board

    Raises
    ------
    BoardError
        For an unreadable file or any bad entry; the message names the file,
        the entry and what is wrong.
    """
    path = Path(path)
    name = str(path)
    try:
        raw = path.read_bytes()
    except FileNotFoundError:
        raise BoardError(name, "", "no such file; check the path") from None
    except IsADirectoryError:
        raise BoardError(name, "", "is a folder, not a board file") from None
    except OSError as exc:
        raise BoardError(name, "", f"cannot be read ({exc.strerror})") from None
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise BoardError(name, "", f"is not UTF-8 text (byte {exc.start}); save it as UTF-8") from None
    board = loads_board(text, name)
    board.source = name
    return board


def _from_dict(data: dict, file) -> Board:
    r = _Reader(file)
    for key in data:
        if key not in TOP_KEYS:
            r.fail(f"[{key}]", f"unknown section (known: {', '.join(sorted(TOP_KEYS))})")
    if "format" not in data:
        r.fail("format", f"missing; the first line should be 'format = {FORMAT}'")
    fmt = r.integer(data["format"], "format")
    if fmt != FORMAT:
        r.fail("format", f"format {fmt} is not known to this version (it reads format {FORMAT})")
    if "board" not in data:
        r.fail("[board]", "missing section; give at least name and size")

    # [board]
    b = r.table(data["board"], "[board]")
    r.keys(b, "[board]", {"name", "size", "outline", "copper_layers"})
    name = r.string(b.get("name", "board"), "board.name")
    if "size" in b and "outline" in b:
        r.fail("[board]", "give either size or outline, not both")
    size = None
    outline_path = None
    if "size" in b:
        size = r.size(b["size"], "board.size")
        outline = [(0.0, 0.0), (size[0], 0.0), (size[0], size[1]), (0.0, size[1])]
    elif "outline" in b:
        outline, outline_path = _outline(r, b["outline"])
    else:
        r.fail("[board]", "missing size (or outline); e.g. size = [60.0, 40.0]")
    layers_n = r.integer(b.get("copper_layers", 2), "board.copper_layers")
    if layers_n not in (1, 2):
        r.fail("board.copper_layers", f"must be 1 or 2, not {layers_n}")
    layers = LAYERS if layers_n == 2 else ("bottom",)

    # [rules]
    rules = Rules()
    if "rules" in data:
        rt = r.table(data["rules"], "[rules]")
        r.keys(rt, "[rules]", set(RULE_FIELDS))
        for key, value in rt.items():
            entry = f"rules.{key}"
            if key == "voltage_table":
                v = r.string(value, entry)
                from .rules import VOLTAGE_COLUMNS
                if v not in VOLTAGE_COLUMNS:
                    r.fail(entry, f"unknown IPC-2221 column '{v}' (known: {', '.join(VOLTAGE_COLUMNS)})")
                setattr(rules, key, v)
            elif key == "paste_reduction":
                from .paste import parse_reduction
                setattr(rules, key, parse_reduction(value, r.file, entry))
            else:
                setattr(rules, key, r.number(value, entry, nonnegative=key in RULES_NONNEGATIVE,
                                             positive=key not in RULES_NONNEGATIVE))
    g = rules.jumper_wire_gauge
    from .rules import JUMPER_AMPACITY
    if g != int(g) or int(g) not in JUMPER_AMPACITY:
        r.fail("rules.jumper_wire_gauge", f"{g:g} is not a wire gauge of the jumper table; use a whole AWG "
                                          f"from {min(JUMPER_AMPACITY)} to {max(JUMPER_AMPACITY)}")
    rules.jumper_wire_gauge = int(g)
    if rules.via_drill >= rules.via_diameter:
        r.fail("rules.via_drill", f"drill {rules.via_drill} is as large as the via diameter "
                                  f"{rules.via_diameter}; make the drill smaller")
    if rules.jumper_drill >= rules.jumper_diameter:
        r.fail("rules.jumper_drill", f"drill {rules.jumper_drill} is as large as the jumper pad "
                                     f"diameter {rules.jumper_diameter}; make the drill smaller")

    # [classes]
    classes = {"default": NetClass("default")}
    if "classes" in data:
        ct = r.table(data["classes"], "[classes]")
        for cname, cval in ct.items():
            entry = f"classes.{cname}"
            cval = r.table(cval, entry)
            r.keys(cval, entry, {"trace_width", "clearance", "current", "voltage", "neck_width", "neck_length"})
            nc = NetClass(cname)
            if "trace_width" in cval:
                nc.trace_width = r.number(cval["trace_width"], f"{entry}.trace_width", positive=True)
            if "clearance" in cval:
                nc.clearance = r.number(cval["clearance"], f"{entry}.clearance", positive=True)
            if "current" in cval:
                nc.current = r.number(cval["current"], f"{entry}.current", positive=True)
            if "voltage" in cval:
                nc.voltage = r.number(cval["voltage"], f"{entry}.voltage", positive=True)
            for key in ("neck_width", "neck_length"):
                if key in cval:
                    setattr(nc, key, r.number(cval[key], f"{entry}.{key}", positive=True))
            classes[cname] = nc
    for nc in classes.values():
        if nc.trace_width < rules.min_trace_width - TOL:
            r.fail(f"classes.{nc.name}.trace_width", f"{nc.trace_width} mm is below rules.min_trace_width "
                                                     f"{rules.min_trace_width} mm; widen the class")
        if nc.clearance < rules.min_clearance - TOL:
            r.fail(f"classes.{nc.name}.clearance", f"{nc.clearance} mm is below rules.min_clearance "
                                                   f"{rules.min_clearance} mm; raise it")
        if nc.neck_width is not None and nc.neck_width < rules.min_trace_width - TOL:
            r.fail(f"classes.{nc.name}.neck_width", f"{nc.neck_width} mm is below rules.min_trace_width "
                                                    f"{rules.min_trace_width} mm; widen the neck")
        if nc.neck_width is not None and nc.neck_width > nc.trace_width + TOL:
            r.fail(f"classes.{nc.name}.neck_width", f"{nc.neck_width} mm is wider than the class's trace_width "
                                                    f"{nc.trace_width} mm; a neck is narrower than the trace")

    # [footprints]
    own: dict[str, Footprint] = {}
    if "footprints" in data:
        ft = r.table(data["footprints"], "[footprints]")
        for fname, fval in ft.items():
            own[fname] = _footprint(r, fname, fval)

    # [[parts]]
    parts: list[Part] = []
    refs: dict[str, int] = {}
    for i, pv in enumerate(r.array(data.get("parts", []), "[[parts]]")):
        ref_hint = pv.get("ref") if isinstance(pv, dict) and isinstance(pv.get("ref"), str) else None
        entry = f"part {i + 1}" + (f" ({ref_hint})" if ref_hint else "")
        pv = r.table(pv, entry)
        r.keys(pv, entry, {"ref", "footprint", "value", "at", "rotation", "side", "fixed"}, ("ref", "footprint"))
        ref = r.string(pv["ref"], f"{entry} ref")
        if not re.fullmatch(r"[^\s.]+", ref):
            r.fail(entry, f"ref '{ref}' may not contain spaces or dots (pins are named REF.PIN)")
        if ref in refs:
            r.fail(entry, f"duplicate ref '{ref}' (also part {refs[ref] + 1}); give each part its own ref")
        refs[ref] = i
        fpname = r.string(pv["footprint"], f"{entry} footprint")
        fp = resolve_footprint(fpname, own)
        if fp is None:
            r.fail(entry, f"unknown footprint '{fpname}'; use a built-in name (dip-8, soic-14, chip-0603, "
                          f"header-1x4, ...) or define it under [footprints.{fpname}]")
        value = r.string(pv.get("value", ""), f"{entry} value", nonempty=False)
        at = r.point(pv["at"], f"{entry} at") if "at" in pv else None
        rot = _angle(r.number(pv.get("rotation", 0), f"{entry} rotation"))
        side = r.string(pv.get("side", "top"), f"{entry} side")
        if side not in ("top", "bottom"):
            r.fail(entry, f"side '{side}' must be 'top' or 'bottom'")
        fixed = r.boolean(pv.get("fixed", False), f"{entry} fixed")
        if fixed and at is None:
            r.fail(entry, "is fixed but has no 'at'; give it a place or drop 'fixed'")
        if layers_n == 1:
            for pad in fp.pads:
                if pad.drill is None and side == "top":
                    r.fail(entry, f"surface pad of pin {pad.pin} on top of a one-layer board; the copper "
                                  "is on the bottom: put the part on side = \"bottom\" or use two layers")
        parts.append(Part(ref, fpname, value, at, rot, side, fixed))
    part_fp = {p.ref: resolve_footprint(p.footprint, own) for p in parts}

    # [[nets]]
    nets: list[Net] = []
    net_names: dict[str, int] = {}
    pin_owner: dict[str, str] = {}
    for i, nv in enumerate(r.array(data.get("nets", []), "[[nets]]")):
        nhint = nv.get("name") if isinstance(nv, dict) and isinstance(nv.get("name"), str) else None
        entry = f'nets "{nhint}"' if nhint else f"net {i + 1}"
        nv = r.table(nv, entry)
        r.keys(nv, entry, {"name", "pins", "class"}, ("name", "pins"))
        nname = r.string(nv["name"], f"{entry} name")
        if nname in net_names:
            r.fail(entry, f"duplicate net name '{nname}'; merge the two nets or rename one")
        net_names[nname] = i
        cname = r.string(nv.get("class", "default"), f"{entry} class")
        if cname not in classes:
            r.fail(entry, f"unknown class '{cname}'; define [classes.{cname}] or use one of "
                          f"{', '.join(sorted(classes))}")
        pins = []
        for pin in r.array(nv["pins"], f"{entry} pins"):
            pin = r.string(pin, f"{entry} pins")
            pentry = f'{entry} pin "{pin}"'
            ref, dot, pname = pin.partition(".")
            if not dot or not ref or not pname:
                r.fail(pentry, "pins are written REF.PIN, e.g. \"U1.8\"")
            if ref not in part_fp:
                r.fail(pentry, f"no part '{ref}'; add it to [[parts]] or fix the ref")
            if pname not in part_fp[ref].pins():
                r.fail(pentry, f"footprint '{part_fp[ref].name}' of {ref} has no pin '{pname}' "
                               f"(it has {_pin_list(part_fp[ref])})")
            if pin in pin_owner:
                other = pin_owner[pin]
                r.fail(pentry, f"is already in net '{other}'" if other != nname else "is listed twice")
            pin_owner[pin] = nname
            pins.append(pin)
        if not pins:
            r.fail(entry, "has no pins")
        nets.append(Net(nname, pins, cname))

    # [[keepouts]]
    keepouts = []
    for i, kv in enumerate(r.array(data.get("keepouts", []), "[[keepouts]]")):
        entry = f"keepout {i + 1}"
        kv = r.table(kv, entry)
        r.keys(kv, entry, {"layers", "rect", "polygon"})
        klayers = None
        if "layers" in kv:
            klayers = [r.layer(x, f"{entry} layers", layers) for x in r.array(kv["layers"], f"{entry} layers")]
            if not klayers:
                r.fail(entry, "layers is empty; leave it out for every layer")
        if ("rect" in kv) == ("polygon" in kv):
            r.fail(entry, "give exactly one of rect = [x0, y0, x1, y1] or polygon = [[x, y], ...]")
        if "rect" in kv:
            rv = r.array(kv["rect"], f"{entry} rect")
            if len(rv) != 4:
                r.fail(f"{entry} rect", "must be [x0, y0, x1, y1]")
            x0, y0, x1, y1 = (r.number(v, f"{entry} rect") for v in rv)
            if x1 <= x0 or y1 <= y0:
                r.fail(f"{entry} rect", "must have x1 > x0 and y1 > y0")
            keepouts.append(Keepout([(x0, y0), (x1, y0), (x1, y1), (x0, y1)], klayers, True))
        else:
            keepouts.append(Keepout(r.polygon(kv["polygon"], f"{entry} polygon"), klayers, False))

    # copper
    traces = []
    for i, tv in enumerate(r.array(data.get("traces", []), "[[traces]]")):
        entry = f"trace {i + 1}"
        tv = r.table(tv, entry)
        r.keys(tv, entry, {"net", "layer", "width", "points", "fixed"}, ("net", "layer", "width", "points"))
        net = _net_ref(r, tv["net"], entry, net_names)
        entry = f'trace {i + 1} (net "{net}")'
        layer = r.layer(tv["layer"], f"{entry} layer", layers)
        width = r.number(tv["width"], f"{entry} width", positive=True)
        pts = [r.point(p, f"{entry} points") for p in r.array(tv["points"], f"{entry} points")]
        if len(pts) < 2:
            r.fail(entry, "a trace needs at least two points")
        for k in range(1, len(pts)):
            (xa, ya), (xb, yb) = pts[k - 1], pts[k]
            if abs(xa - xb) > TOL and abs(ya - yb) > TOL:
                r.fail(entry, f"step {k} from ({xa}, {ya}) to ({xb}, {yb}) is diagonal; "
                              "each step changes x or y, never both")
        traces.append(Trace(net, layer, width, pts, r.boolean(tv.get("fixed", False), f"{entry} fixed")))
    vias = []
    for i, vv in enumerate(r.array(data.get("vias", []), "[[vias]]")):
        entry = f"via {i + 1}"
        vv = r.table(vv, entry)
        r.keys(vv, entry, {"net", "at", "drill", "diameter"}, ("net", "at"))
        if layers_n == 1:
            r.fail(entry, "a one-layer board has no vias; use a jumper or a second layer")
        net = _net_ref(r, vv["net"], entry, net_names)
        drill = r.number(vv.get("drill", rules.via_drill), f"{entry} drill", positive=True)
        dia = r.number(vv.get("diameter", rules.via_diameter), f"{entry} diameter", positive=True)
        if drill >= dia - TOL:
            r.fail(entry, f"drill {drill} is as large as the diameter {dia}; make the drill smaller")
        vias.append(Via(net, r.point(vv["at"], f"{entry} at"), drill, dia))
    jumpers = []
    for i, jv in enumerate(r.array(data.get("jumpers", []), "[[jumpers]]")):
        entry = f"jumper {i + 1}"
        jv = r.table(jv, entry)
        r.keys(jv, entry, {"net", "from", "to", "drill", "diameter"}, ("net", "from", "to"))
        if layers_n == 2:
            r.fail(entry, "jumpers are for one-layer boards; on two layers use a via")
        net = _net_ref(r, jv["net"], entry, net_names)
        a, b = r.point(jv["from"], f"{entry} from"), r.point(jv["to"], f"{entry} to")
        if abs(a[0] - b[0]) > TOL and abs(a[1] - b[1]) > TOL:
            r.fail(entry, "a jumper runs straight along x or y")
        if abs(a[0] - b[0]) <= TOL and abs(a[1] - b[1]) <= TOL:
            r.fail(entry, "a jumper's two ends are at the same place")
        drill = r.number(jv.get("drill", rules.jumper_drill), f"{entry} drill", positive=True)
        dia = r.number(jv.get("diameter", rules.jumper_diameter), f"{entry} diameter", positive=True)
        if drill >= dia - TOL:
            r.fail(entry, f"drill {drill} is as large as the diameter {dia}; make the drill smaller")
        jumpers.append(Jumper(net, a, b, drill, dia))

    from .pourfile import read_pours
    pours = read_pours(r, data.get("pours", []), layers, net_names, rules, outline)

    return Board(name=name, outline=outline, copper_layers=layers_n, rules=rules, classes=classes,
                 footprints=own, parts=parts, nets=nets, keepouts=keepouts, traces=traces, vias=vias,
                 jumpers=jumpers, pours=pours, size=size, format=fmt, outline_path=outline_path)


def _pin_list(fp: Footprint) -> str:
    pins = fp.pins()
    if len(pins) > 8:
        return f"{', '.join(pins[:4])} ... {pins[-1]}"
    return ", ".join(pins) if pins else "no pins"


def _net_ref(r: _Reader, value, entry, net_names):
    net = r.string(value, f"{entry} net")
    if net not in net_names:
        r.fail(entry, f"unknown net '{net}'; every copper item belongs to a net of [[nets]]")
    return net


def _angle(v: float) -> float | int:
    """An angle in degrees in [0, 360): an int where it is whole (quarter turns stay 0, 90, ...)."""
    v = float(v) % 360.0
    if abs(v - round(v)) <= 1e-9:
        return int(round(v)) % 360
    return v


def _outline(r: _Reader, value):
    """The board outline: a polygon of corners, or a path of corners and arcs (router.outline)."""
    from .outline import OutlineArc, arc_problem, chords
    entry = "board.outline"
    items = r.array(value, entry)
    if not any(isinstance(e, dict) for e in items):
        return r.polygon(items, entry), None
    path: list = []
    for k, e in enumerate(items):
        if isinstance(e, dict):
            aentry = f"board.outline[{k}]"
            r.keys(e, aentry, {"to", "centre", "clockwise"}, ("to", "centre"))
            path.append(OutlineArc(r.point(e["to"], f"{aentry} to"), r.point(e["centre"], f"{aentry} centre"),
                                   r.boolean(e.get("clockwise", False), f"{aentry} clockwise")))
        else:
            path.append(r.point(e, entry))
    if not isinstance(path[-1], OutlineArc) and len(path) > 1 and path[0] == path[-1]:
        path.pop()
    if len(path) < 2:
        r.fail(entry, "an outline needs at least two entries (corners or arcs)")
    ends = [tuple(e.to) if isinstance(e, OutlineArc) else tuple(e) for e in path]
    for k, e in enumerate(path):
        if isinstance(e, OutlineArc):
            why = arc_problem(ends[k - 1], e)
            if why:
                r.fail(f"board.outline[{k}]", f"the arc to {list(e.to)} cannot be drawn: {why}")
    pts = chords(path)
    poly = Polygon(pts)
    if not poly.is_valid or poly.area <= 0:
        r.fail(entry, f"the outline is not simple ({explain_validity(poly)}); list its corners and arcs "
                      "in order around it without crossing")
    return pts, path


def _footprint(r: _Reader, fname, fval) -> Footprint:
    entry = f"footprints.{fname}"
    fval = r.table(fval, entry)
    r.keys(fval, entry, {"body", "pads", "holes", "keepout_body", "polarised", "polarity"}, ("body",))
    body = r.size(fval["body"], f"{entry}.body")
    pads = []
    for k, pv in enumerate(r.array(fval.get("pads", []), f"{entry}.pads")):
        pentry = f"{entry} pad {k + 1}"
        pv = r.table(pv, pentry)
        if "at" in pv:
            r.fail(pentry, "a pad's place in its footprint is 'offset', not 'at'; rename the key")
        r.keys(pv, pentry, {"pin", "offset", "shape", "size", "drill", "rotation", "corner_radius"},
               ("pin", "offset", "size"))
        pin = pv["pin"]
        if isinstance(pin, int) and not isinstance(pin, bool):
            pin = str(pin)
        pin = r.string(pin, f"{pentry}.pin")
        pentry = f"{entry} pad of pin {pin}"
        shape = r.string(pv.get("shape", "round"), f"{pentry} shape")
        if shape in OLD_PAD_SHAPES:
            r.fail(pentry, f"shape '{shape}' is not a pad word of this format; "
                           f"use '{OLD_PAD_SHAPES[shape]}' (pad shapes: {', '.join(PAD_SHAPES)})")
        if shape not in PAD_SHAPES:
            r.fail(pentry, f"unknown shape '{shape}' (known: {', '.join(PAD_SHAPES)})")
        size = r.size(pv["size"], f"{pentry} size")
        corner = None
        if shape == "rounded-rectangle":
            if "corner_radius" not in pv:
                r.fail(pentry, "a rounded-rectangle pad needs corner_radius (mm), e.g. corner_radius = 0.1")
            corner = r.number(pv["corner_radius"], f"{pentry} corner_radius", positive=True)
            if corner > min(size) / 2 + TOL:
                r.fail(pentry, f"corner_radius {corner:g} is more than half the pad's smaller side "
                               f"{min(size):g}; make it at most {min(size) / 2:g} (or use shape = \"obround\")")
        elif "corner_radius" in pv:
            r.fail(pentry, f"only a rounded-rectangle pad has a corner_radius, not a {shape} one; "
                           "drop it or set shape = \"rounded-rectangle\"")
        prot = _angle(r.number(pv.get("rotation", 0), f"{pentry} rotation"))
        drill = None
        if "drill" in pv:
            drill = r.number(pv["drill"], f"{pentry} drill", positive=True)
            if drill >= min(size) - TOL:
                r.fail(pentry, f"drill {drill} is as large as the pad's smaller side {min(size)}; "
                               "make the pad larger or the drill smaller")
        pads.append(Pad(pin, r.point(pv["offset"], f"{pentry} offset"), shape, size, drill, prot, corner))
    holes = []
    for k, hv in enumerate(r.array(fval.get("holes", []), f"{entry}.holes")):
        hentry = f"{entry} hole {k + 1}"
        hv = r.table(hv, hentry)
        if "at" in hv:
            r.fail(hentry, "a hole's place in its footprint is 'offset', not 'at'; rename the key")
        r.keys(hv, hentry, {"offset", "drill"}, ("offset", "drill"))
        holes.append(Hole(r.point(hv["offset"], f"{hentry} offset"), r.number(hv["drill"], f"{hentry} drill", positive=True)))
    keepout_body = r.boolean(fval.get("keepout_body", False), f"{entry}.keepout_body")
    polarised = r.boolean(fval.get("polarised", False), f"{entry}.polarised")
    polarity = r.string(fval.get("polarity", "plus"), f"{entry}.polarity")
    if polarity not in ("plus", "cathode"):
        r.fail(f"{entry}.polarity", f"unknown mark '{polarity}' (known: plus, cathode): the mark "
                                    "at pin 1, a + sign or a cathode band")
    if polarised and not any(p.pin == "1" for p in pads):
        r.fail(f"{entry}.polarised", "a polarised footprint marks its pin 1; give it a pad of pin \"1\"")
    return Footprint(fname, body, pads, holes, keepout_body, polarised, polarity)


def validate_board(board: Board) -> None:
    """Validate a board built in code by writing it out and reading it back."""
    loads_board(dumps_board(board), board.source)


# ---------------------------------------------------------------- writing

def _pt(p):
    return [snap(p[0]), snap(p[1])]


def _num(v):
    return snap(float(v))


def _to_dict(board: Board) -> dict:
    d: dict = {"format": board.format}
    bt: dict = {"name": board.name}
    if board.size is not None:
        bt["size"] = _pt(board.size)
    else:
        bt["outline"] = _outline_out(board)
    bt["copper_layers"] = board.copper_layers
    d["board"] = bt
    rules = {}
    for f in fields(Rules):
        v = getattr(board.rules, f.name)
        rules[f.name] = v if isinstance(v, (str, int)) else _num(v)
    d["rules"] = rules
    classes = {}
    for name, nc in board.classes.items():
        c = {"trace_width": _num(nc.trace_width), "clearance": _num(nc.clearance)}
        if nc.current is not None:
            c["current"] = _num(nc.current)
        if nc.voltage is not None:
            c["voltage"] = _num(nc.voltage)
        for key in ("neck_width", "neck_length"):
            if getattr(nc, key) is not None:
                c[key] = _num(getattr(nc, key))
        classes[name] = c
    d["classes"] = classes
    if board.footprints:
        fps = {}
        for name, fp in board.footprints.items():
            f = {"body": _pt(fp.body)}
            if fp.keepout_body:
                f["keepout_body"] = True
            if fp.polarised:
                f["polarised"] = True
                f["polarity"] = fp.polarity
            pads = []
            for pad in fp.pads:
                pd = {"pin": pad.pin, "offset": _pt(pad.offset), "shape": pad.shape, "size": _pt(pad.size)}
                if pad.corner_radius is not None:
                    pd["corner_radius"] = _num(pad.corner_radius)
                if pad.rotation:
                    pd["rotation"] = _rot(pad.rotation)
                if pad.drill is not None:
                    pd["drill"] = _num(pad.drill)
                pads.append(pd)
            f["pads"] = pads
            if fp.holes:
                f["holes"] = [{"offset": _pt(h.offset), "drill": _num(h.drill)} for h in fp.holes]
            fps[name] = f
        d["footprints"] = fps
    parts = []
    for p in board.parts:
        pd = {"ref": p.ref, "footprint": p.footprint}
        if p.value:
            pd["value"] = p.value
        if p.at is not None:
            pd["at"] = _pt(p.at)
        pd["rotation"] = _rot(p.rotation)
        pd["side"] = p.side
        if p.fixed:
            pd["fixed"] = True
        parts.append(pd)
    if parts:
        d["parts"] = parts
    if board.nets:
        d["nets"] = [{"name": n.name, "pins": list(n.pins), "class": n.net_class} for n in board.nets]
    if board.keepouts:
        ks = []
        for k in board.keepouts:
            kd = {}
            if k.layers is not None:
                kd["layers"] = list(k.layers)
            if k.is_rect:
                xs = [p[0] for p in k.polygon]
                ys = [p[1] for p in k.polygon]
                kd["rect"] = [_num(min(xs)), _num(min(ys)), _num(max(xs)), _num(max(ys))]
            else:
                kd["polygon"] = [_pt(p) for p in k.polygon]
            ks.append(kd)
        d["keepouts"] = ks
    if board.traces:
        d["traces"] = [{"net": t.net, "layer": t.layer, "width": _num(t.width),
                        "points": [_pt(p) for p in t.points], **({"fixed": True} if t.fixed else {})}
                       for t in board.traces]
    if board.vias:
        d["vias"] = [{"net": v.net, "at": _pt(v.at), "drill": _num(v.drill), "diameter": _num(v.diameter)}
                     for v in board.vias]
    if board.jumpers:
        d["jumpers"] = [{"net": j.net, "from": _pt(j.start), "to": _pt(j.end), "drill": _num(j.drill),
                         "diameter": _num(j.diameter)} for j in board.jumpers]
    if board.pours:
        from .pourfile import pours_to_list
        d["pours"] = pours_to_list(board.pours)
    return d


def _rot(v) -> float | int:
    """An angle as written: a whole number where it is whole."""
    v = float(v)
    return int(round(v)) if abs(v - round(v)) <= 1e-9 else _num(v)


def _outline_out(board: Board) -> list:
    from .outline import OutlineArc
    if board.outline_path is None:
        return [_pt(p) for p in board.outline]
    path = list(board.outline_path)
    first = next((k for k, e in enumerate(path) if not isinstance(e, OutlineArc)), None)
    if first is None:                 # arcs only: start at the last arc's end (a corner on the path)
        path = [tuple(path[-1].to)] + path
    else:                             # a corner first (an arc starts where the entry before it ends)
        path = path[first:] + path[:first]
    out = []
    for e in path:
        if isinstance(e, OutlineArc):
            d = {"to": _pt(e.to), "centre": _pt(e.centre)}
            if e.clockwise:
                d["clockwise"] = True
            out.append(d)
        else:
            out.append(_pt(e))
    return out


def _literal(v) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        return repr(v)
    if isinstance(v, str):
        return json.dumps(v, ensure_ascii=False)   # JSON string escapes are valid TOML basic strings
    if isinstance(v, list):
        return "[" + ", ".join(_literal(x) for x in v) + "]"
    if isinstance(v, dict):
        return "{ " + ", ".join(f"{_key(k)} = {_literal(x)}" for k, x in v.items()) + " }"
    raise TypeError(f"cannot write {type(v).__name__} to a board file")


def _key(k: str) -> str:
    return k if re.fullmatch(r"[A-Za-z0-9_-]+", k) else json.dumps(k, ensure_ascii=False)


def _emit_table(lines: list[str], header: str, table: dict) -> None:
    """Write one table: scalars and inline arrays first, then sub-tables and arrays of tables."""
    simple = {k: v for k, v in table.items()
              if (not isinstance(v, dict) or (header.startswith("[[") and v and   # small inline tables
                                              not any(isinstance(x, (dict, list)) for x in v.values())))
              and not (isinstance(v, list) and v and isinstance(v[0], dict))}
    if header and (simple or not table):
        lines.append("")
        lines.append(header)
    for k, v in simple.items():
        lines.append(f"{_key(k)} = {_literal(v)}")
    prefix = header.strip("[]") + "." if header else ""
    for k, v in table.items():
        if k in simple:
            continue
        if isinstance(v, dict):
            _emit_table(lines, f"[{prefix}{_key(k)}]", v)
        else:
            if all(len(_literal(item)) <= 100 for item in v) and header.startswith("[") and \
                    not header.startswith("[["):
                # short rows inside a table (pads of a footprint): an inline array of inline tables
                lines.append(f"{_key(k)} = [")
                lines.extend(f"  {_literal(item)}," for item in v)
                lines.append("]")
            else:
                for item in v:
                    _emit_table(lines, f"[[{prefix}{_key(k)}]]", item)


def dumps_board(board: Board) -> str:
    """The board as board-file text (deterministic: the same board gives the same bytes).

    Examples
    --------
    >>> from router.model import Board
    >>> print(dumps_board(Board("tiny", [(0, 0), (10, 0), (10, 5), (0, 5)], size=(10.0, 5.0))).splitlines()[0:4])
    ['format = 1', '', '[board]', 'name = "tiny"']
    """
    lines: list[str] = []
    _emit_table(lines, "", _to_dict(board))
    return "\n".join(lines) + "\n"


def save_board(board: Board, path) -> None:
    """Write `board` to `path` atomically (a temporary file, then a rename)."""
    write_atomic(path, dumps_board(board))
