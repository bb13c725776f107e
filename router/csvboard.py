"""A board file from two CSV files: a parts list and a netlist (``elbowroom new``).

The parts file has a header row and one part a row: ``ref, footprint, value``, and
optionally ``x, y, rotation, side, fixed``. The nets file has one connection a row:
``net, pin`` (``pin`` written ``REF.PIN``) and optionally ``class``. Column names are
matched without regard to case or surrounding spaces; cells are trimmed.

Reading follows the CSV conventions of RFC 4180 through the standard library's
:mod:`csv` module: quoted fields (with commas, quotes doubled inside), a byte order
mark, and the semicolon or tab that spreadsheets write in locales whose decimal mark
is a comma (the delimiter is found with :class:`csv.Sniffer` and confirmed by the
header row; with a semicolon or tab delimiter, ``12,5`` is read as 12.5).

Every bad row is a :class:`~router.errors.BoardError` naming the file and the line;
the board is written only when every row is good, as TOML by tomli-w (:func:`board_toml`,
an atomic write), after it has been read back by the board file's own reader, so the
result is exactly what the other commands read.

Board size, when not given: see :func:`estimate_size`.
"""
from __future__ import annotations

import csv
import difflib
import math
import re
from dataclasses import dataclass, field
from pathlib import Path

import tomli_w

from .boardfile import _angle, _to_dict, dumps_board, loads_board
from .safefile import write_atomic
from .errors import BoardError
from .footprints import builtin_footprint
from .model import Board, Footprint, Net, NetClass, Part, Rules

__all__ = ["read_csv_board", "write_csv_board", "estimate_size", "PARTS_COLUMNS", "NETS_COLUMNS",
           "ROUTING_FACTOR", "ASPECT", "NewResult", "NEW_HELP",
           "nearest_footprints"]

#: (required, optional) columns of each file
PARTS_COLUMNS = (("ref", "footprint", "value"), ("x", "y", "rotation", "side", "fixed"))
NETS_COLUMNS = (("net", "pin"), ("class",))

#: Board area over the area the parts need (each part rectangle grown by the placement's
#: routing gap), by copper layer count; see :func:`estimate_size` and scripts/bench_newsize.py.
ROUTING_FACTOR = {2: 2.0, 1: 3.0}
#: Width over height of an estimated board (common practice: a 3:2 rectangle).
ASPECT = 1.5

NEW_HELP = f"""\
files:
  parts CSV   a header row, then one part a row. Columns: ref, footprint, value; optional
              x, y (mm, the body centre; leave both empty and `place` places the part),
              rotation (degrees, any angle), side (top or bottom), fixed (true/false).
  nets CSV    a header row, then one connection a row: net, pin (REF.PIN, e.g. U1.8);
              optional class. A class not defined yet is made with the default class's
              trace width and clearance; set its own under [classes.NAME] in the board file.
  Column names in any case; spaces around cells are trimmed; other columns are ignored.
  Comma, semicolon or tab between cells (found from the file); quotes as spreadsheets
  write them; UTF-8 with or without a byte order mark. With semicolons or tabs, 12,5 is 12.5.

board size without --size:
  every part's rectangle (body and pads) grown by the gap `place` keeps for two traces,
  summed, times {ROUTING_FACTOR[2]:g} (two layers) or {ROUTING_FACTOR[1]:g} (one layer): a {ASPECT:g}:1 rectangle of
  that area, at least as wide as the largest part and holding the parts that have a
  place, plus the edge clearance on each side, rounded up to whole mm.

Any bad row (an unknown footprint, a pin the footprint lacks, a ref used twice, a pin in
two nets, a broken number, a missing column) stops with one line naming the file and
the line, exit status 2; nothing is written.
"""

_DELIMITERS = ",;\t"
_TRUE = {"true", "yes", "y", "1", "x"}
_FALSE = {"false", "no", "n", "0", ""}


@dataclass
class NewResult:
    """What :func:`read_csv_board` made: the board, and notes for the user (one line each)."""
    board: Board
    notes: list[str] = field(default_factory=list)
    estimated: bool = False


# ------------------------------------------------------------------ reading CSV

@dataclass
class _Row:
    line: int                 # the line the row starts on (1 = the header)
    cells: dict[str, str]     # column -> trimmed cell


def _decode(raw: bytes, name: str) -> str:
    """Text of a CSV file: UTF-8 (a byte order mark allowed) or UTF-16 with its mark."""
    if raw.startswith((b"\xff\xfe", b"\xfe\xff")):
        try:
            return raw.decode("utf-16")
        except UnicodeDecodeError:
            raise BoardError(name, "", "is not readable UTF-16 text; save it as CSV in UTF-8") from None
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = raw[:exc.start].count(b"\n") + 1
        raise BoardError(name, f"line {line}", f"is not UTF-8 text (byte {exc.start}); save the file "
                                               "as CSV in UTF-8") from None


def _split_header(line: str, delimiter: str) -> list[str]:
    row = next(csv.reader([line], delimiter=delimiter, skipinitialspace=True), [])
    return [c.strip().lower() for c in row]


def _delimiter(text: str, required: tuple[str, ...]) -> str:
    """The delimiter: the Sniffer's guess when the header splits into the required columns
    with it, else the first of comma, semicolon, tab that does; else a comma (the missing
    column is then reported)."""
    header = next((ln for ln in text.splitlines() if ln.strip()), "")
    fits = lambda d: set(required) <= set(_split_header(header, d))   # noqa: E731
    try:
        guess = csv.Sniffer().sniff(text[:8192], delimiters=_DELIMITERS).delimiter
    except csv.Error:
        guess = None
    if guess and fits(guess):
        return guess
    for d in _DELIMITERS:
        if fits(d):
            return d
    counts = {d: header.count(d) for d in _DELIMITERS}
    best = max(counts, key=lambda d: counts[d])
    return best if counts[best] else ","


def _read_rows(path, kind: str, required, optional, notes: list[str]):
    """(file name, delimiter, rows) of one CSV file; the header checked."""
    name = str(path)
    try:
        raw = Path(path).read_bytes()
    except FileNotFoundError:
        raise BoardError(name, "", f"no such file; check the path of the {kind} list") from None
    except IsADirectoryError:
        raise BoardError(name, "", f"is a folder, not a CSV {kind} list") from None
    except OSError as exc:
        raise BoardError(name, "", f"cannot be read ({exc.strerror})") from None
    text = _decode(raw, name)
    if not text.strip():
        raise BoardError(name, "line 1", f"the file is empty; the first row names the columns: "
                                         f"{', '.join(required)}")
    delim = _delimiter(text, required)
    reader = csv.reader(text.splitlines(keepends=True), delimiter=delim, quotechar='"',
                        doublequote=True, skipinitialspace=True, strict=True)
    rows: list[_Row] = []
    header = None
    known = list(required) + list(optional)
    prev = 0
    try:
        for cells in reader:
            start, prev = prev + 1, reader.line_num
            if not any(c.strip() for c in cells):
                continue
            if header is None:
                header = _check_header(name, start, cells, required, known, notes)
                continue
            extra = [c for c in cells[len(header):] if c.strip()]
            if extra:
                raise BoardError(name, f"line {start}", f"has {len(cells)} cells but the header names "
                                                        f"{len(header)} columns; quote a cell that contains "
                                                        f"'{delim}' (\"like{delim} this\")")
            rows.append(_Row(start, {col: cell.strip() for col, cell in zip(header, cells) if col}))
    except csv.Error as exc:
        raise BoardError(name, f"line {reader.line_num}", f"broken CSV ({exc}); check the quotes") from None
    return name, delim, rows


def _check_header(name, line, cells, required, known, notes) -> list[str]:
    cols = [c.strip().lower() for c in cells]
    seen = set()
    ignored = []
    header = []
    for col in cols:
        if col in seen and col:
            raise BoardError(name, f"line {line}", f"column '{col}' appears twice in the header")
        seen.add(col)
        if col in known:
            header.append(col)
            continue
        close = difflib.get_close_matches(col, known, n=1, cutoff=0.75)
        if close:
            raise BoardError(name, f"line {line}", f"unknown column '{col}'; did you mean '{close[0]}'? "
                                                   f"(columns: {', '.join(known)})")
        if col:
            ignored.append(col)
        header.append("")     # an unknown column is read past
    missing = [c for c in required if c not in seen]
    if missing:
        raise BoardError(name, f"line {line}", f"missing column {', '.join(repr(m) for m in missing)}; "
                                               f"the header row names {', '.join(required)} "
                                               f"(optional: {', '.join(c for c in known if c not in required)})")
    if ignored:
        notes.append(f"{name}: columns not used: {', '.join(ignored)}")
    return header


# ------------------------------------------------------------------ cells

def _number(cell: str, delim: str, fail, column: str) -> float:
    text = cell
    if delim != "," and re.fullmatch(r"[+-]?\d+,\d+", text):
        text = text.replace(",", ".")     # a decimal comma from a semicolon/tab locale
    try:
        v = float(text)
    except ValueError:
        v = None
    if v is None or not math.isfinite(v) or not re.fullmatch(r"[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?", text):
        fail(f"{column} '{cell}' is not a number; write it in mm like 12.5")
    return v


_KNOWN: list[str] | None = None


def _footprint_names() -> list[str]:
    """Built-in names to suggest from: templates of every family, kept when the footprints
    module's own lookup knows them (so a family is suggested exactly when it exists)."""
    global _KNOWN
    if _KNOWN is None:
        counts = range(1, 101)
        templates = [f"chip-{c}" for c in ("0201", "0402", "0603", "0805", "1206", "1210", "2010", "2512")]
        templates += ["sot-23", "sot-23-5", "sot-23-6", "sot-223", "sot-89", "to-92", "to-220",
                      "sod-123", "sod-323", "do-214ac", "do-214ab", "do-214aa", "crystal-hc49",
                      "crystal-3225", "switch-6x6"]
        names = [t for t in templates if builtin_footprint(t)]
        for fam in ("soic-{}", "tssop-{}", "ssop-{}", "dip-{}", "dip-{}-wide", "header-1x{}",
                    "header-2x{}", "terminal-{}", "qfp-{}-0.8", "qfp-{}-0.5", "qfn-{}-0.5",
                    "qfn-{}-0.5-ep"):
            names += [fam.format(n) for n in counts if builtin_footprint(fam.format(n))]
        for fam, values in (("axial-{}", ("5.08", "7.62", "10.16", "12.7", "15.24")),
                            ("radial-{}", ("2.0", "2.5", "3.5", "5.0", "7.5")),
                            ("hole-{}", ("2.2", "2.7", "3.2", "3.7", "4.3")),
                            ("cap-smd-{}", ("4", "5", "6.3", "8", "10")),
                            ("diode-{}", ("7.62", "10.16", "12.7")), ("led-{}", ("3", "5")),
                            ("tantalum-{}", ("A", "B", "C", "D"))):
            names += [fam.format(v) for v in values if builtin_footprint(fam.format(v))]
        try:        # the examples of `elbowroom footprints`, where that command is built
            from .fpshow import FAMILIES
        except ImportError:
            FAMILIES = []
        for row in FAMILIES:
            for cand in [row[2], *(x.strip() for x in row[0].split(","))]:
                if cand not in names and builtin_footprint(cand):
                    names.append(cand)
        _KNOWN = names
    return _KNOWN


def nearest_footprints(name: str, n: int = 3) -> list[str]:
    """Known footprint names nearest to `name`: the same name with a nearby number first
    (``soic-7`` -> ``soic-8``), then the closest by :func:`difflib.get_close_matches`."""
    found: list[str] = []
    low = name.strip().lower()
    if builtin_footprint(low):
        found.append(low)
    nums = list(re.finditer(r"\d+(?:\.\d+)?", low))
    for m in nums:
        if "." in m.group():
            continue
        v = int(m.group())
        for d in (1, -1, 2, -2, 3, -3, 4, -4):
            if v + d <= 0:
                continue
            cand = low[:m.start()] + str(v + d) + low[m.end():]
            if builtin_footprint(cand) and cand not in found:
                found.append(cand)
    by_low = {c.lower(): c for c in _footprint_names()}
    for cand in difflib.get_close_matches(low, list(by_low), n=n + len(found), cutoff=0.5):
        cand = by_low[cand]
        if cand not in found:
            found.append(cand)
    return found[:n]


def _one_line(text: str) -> str:
    """A message stays one line when a quoted cell holds a line break."""
    return text.replace("\r", "\\r").replace("\n", "\\n")


def _pins_text(fp: Footprint) -> str:
    pins = fp.pins()
    if len(pins) > 8:
        return f"{', '.join(pins[:4])} ... {pins[-1]}"
    return ", ".join(pins) if pins else "no pins"


# ------------------------------------------------------------------ the board

def _parts(name, delim, rows, layers, notes):
    parts: list[Part] = []
    lines: dict[str, int] = {}
    fps: dict[str, Footprint] = {}
    for row in rows:
        c = row.cells
        ref = c.get("ref", "")
        where = f"line {row.line}" + (f" ({ref})" if ref else "")

        def fail(msg, where=where):
            raise BoardError(name, _one_line(where), _one_line(msg))
        if not ref:
            fail("the ref is empty; give each part a ref like R1 or U3")
        if not re.fullmatch(r"[^\s.]+", ref):
            fail(f"ref '{ref}' may not contain spaces or dots (pins are written REF.PIN)")
        if ref in lines:
            fail(f"ref '{ref}' is used twice (also on line {lines[ref]}); give each part its own ref")
        fpname = c.get("footprint", "")
        if not fpname:
            fail("the footprint is empty; give a built-in name like chip-0603 or soic-8")
        fp = builtin_footprint(fpname)
        if fp is None:                    # SOIC-8 from a spreadsheet is soic-8
            known = {k.lower(): k for k in _footprint_names()}
            fpname = next((n for n in (fpname.lower(), known.get(fpname.lower(), "")) if builtin_footprint(n)),
                          fpname)
            fp = builtin_footprint(fpname)
        if fp is None:
            near = nearest_footprints(fpname)
            hint = f"nearest known: {', '.join(near)}" if near else "see the built-in names in the README"
            fail(f"unknown footprint '{fpname}'; {hint}")
        xs, ys = c.get("x", ""), c.get("y", "")
        at = None
        if xs or ys:
            if not (xs and ys):
                fail(f"has {'x' if xs else 'y'} but no {'y' if xs else 'x'}; give both or leave both "
                     "empty for an unplaced part")
            at = (_number(xs, delim, fail, "x"), _number(ys, delim, fail, "y"))
        rot = 0
        if c.get("rotation", ""):
            r = _number(c["rotation"], delim, fail, "rotation")
            rot = _angle(r)             # any angle in degrees, as the board file takes it
        side = c.get("side", "").lower() or "top"
        if side not in ("top", "bottom"):
            fail(f"side '{c['side']}' must be top or bottom (or empty: top)")
        fixed_cell = c.get("fixed", "").lower()
        if fixed_cell not in _TRUE | _FALSE:
            fail(f"fixed '{c['fixed']}' must be true or false (or yes/no, 1/0, empty: false)")
        fixed = fixed_cell in _TRUE
        if fixed and at is None:
            fail("is fixed but has no x and y; give its place or clear 'fixed'")
        if layers == 1 and side == "top":
            smd = next((p for p in fp.pads if p.drill is None), None)
            if smd is not None:
                fail(f"surface pad of pin {smd.pin} on top of a one-layer board (its copper is on the "
                     "bottom); write bottom in the side column or use --layers 2")
        lines[ref] = row.line
        fps[ref] = fp
        parts.append(Part(ref, fpname, c.get("value", ""), at, rot, side, fixed))
    if not parts:
        raise BoardError(name, "", "lists no parts; add one row a part under the header")
    return parts, lines, fps


def _nets(name, rows, fps, notes):
    nets: dict[str, Net] = {}
    class_line: dict[str, int] = {}
    owner: dict[str, tuple[str, int]] = {}
    for row in rows:
        c = row.cells
        net, pin = c.get("net", ""), c.get("pin", "")
        where = f"line {row.line}" + (f" ({net} {pin})" if net and pin else "")

        def fail(msg, where=where):
            raise BoardError(name, _one_line(where), _one_line(msg))
        if not net:
            fail("the net name is empty; give it, e.g. GND")
        if not pin:
            fail("the pin is empty; write it REF.PIN, e.g. U1.8")
        ref, dot, pname = pin.partition(".")
        if not dot or not ref or not pname:
            fail(f"pin '{pin}' is not written REF.PIN, e.g. U1.8")
        if ref not in fps:
            near = difflib.get_close_matches(ref, list(fps), n=3, cutoff=0.5)
            fail(f"no part '{ref}' in the parts list" + (f" (nearest: {', '.join(near)})" if near else "")
                 + "; add it there or fix the ref")
        fp = fps[ref]
        if pname not in fp.pins():
            fail(f"footprint '{fp.name}' of {ref} has no pin '{pname}' (it has {_pins_text(fp)})")
        key = f"{ref}.{pname}"
        if key in owner:
            other, oline = owner[key]
            fail(f"pin {key} is already in net '{other}' (line {oline}); a pin belongs to one net"
                 if other != net else f"pin {key} is listed twice for net '{net}' (also line {oline})")
        owner[key] = (net, row.line)
        cls = c.get("class", "")
        n = nets.get(net)
        if n is None:
            n = nets[net] = Net(net, [], "default")
        if cls:
            if net in class_line and n.net_class != cls:
                fail(f"net '{net}' has class '{n.net_class}' on line {class_line[net]} and "
                     f"'{cls}' here; give a net one class")
            n.net_class = cls
            class_line.setdefault(net, row.line)
        n.pins.append(key)
    return list(nets.values())


def estimate_size(board: Board, factor: float | None = None) -> tuple[float, float]:
    """A board size for parts that have no outline yet, in whole mm.

    The rule: each part's rectangle (body and pads, :func:`router.geometry.part_rect`) is
    grown by the gap placement keeps for two traces between neighbours
    (:func:`placement.legalize.routing_gap`); the sum of those areas times
    :data:`ROUTING_FACTOR` (2.0 on two layers, 3.0 on one) is the board's area, as a
    rectangle :data:`ASPECT` (3:2) wide, no narrower than the largest part and grown to hold
    the parts that have a place, plus the edge clearance on every side, each side rounded up
    to a whole mm. `factor` replaces :data:`ROUTING_FACTOR` (for scripts/bench_newsize.py).

    Examples
    --------
    >>> from router.model import Board, Part
    >>> b = Board("b", [(0, 0), (1, 0), (1, 1), (0, 1)], parts=[Part("U1", "dip-8")])
    >>> estimate_size(b)
    (20.0, 14.0)
    """
    # the gap rule is placement's own, so that the estimate and `place` agree
    from placement.legalize import effective_gap, routing_gap
    from .geometry import part_rect
    gap = routing_gap(board, effective_gap(board, None))
    ec = board.rules.edge_clearance
    area = 0.0
    longest = shortest = 0.0
    for p in board.parts:
        x0, y0, x1, y1 = part_rect(board, p, at=(0.0, 0.0), rotation=0)
        w, h = x1 - x0 + gap, y1 - y0 + gap
        area += w * h
        longest, shortest = max(longest, w, h), max(shortest, min(w, h))
    area *= ROUTING_FACTOR[board.copper_layers] if factor is None else factor
    width = max(math.sqrt(area * ASPECT), longest)
    height = max(area / width, shortest)
    width, height = width + 2 * ec, height + 2 * ec
    for p in board.parts:
        if p.at is not None:
            x0, y0, x1, y1 = part_rect(board, p)
            width, height = max(width, x1 + ec), max(height, y1 + ec)
    return float(math.ceil(width - 1e-9)), float(math.ceil(height - 1e-9))


def _check_inside(board: Board, name, lines, size):
    from .geometry import part_rect
    for p in board.parts:
        if p.at is None:
            continue
        x0, y0, x1, y1 = part_rect(board, p)
        if x0 < -1e-9 or y0 < -1e-9 or x1 > size[0] + 1e-9 or y1 > size[1] + 1e-9:
            raise BoardError(name, f"line {lines[p.ref]} ({p.ref})",
                             f"at ({p.at[0]:g}, {p.at[1]:g}) the part reaches ({x0:g}, {y0:g})..({x1:g}, {y1:g}), "
                             f"outside the {size[0]:g} x {size[1]:g} mm board from (0, 0); move it or give a "
                             "larger --size")


def read_csv_board(parts_csv, nets_csv, *, size=None, layers: int = 2, name: str = "board") -> NewResult:
    """A board from a parts list and a netlist in CSV.

    Parameters
    ----------
    parts_csv, nets_csv : str or Path
        The two CSV files (see the module docstring for the columns).
    size : (width, height) in mm, optional
        The board rectangle; without it, :func:`estimate_size`.
    layers : 1 or 2
    name : the board's name

    Returns
    -------
    NewResult
        The board (already read back through the board file's reader) and notes.

    Raises
    ------
    BoardError
        For the first bad row: the file, ``line N`` and what is wrong.
    """
    if layers not in (1, 2):
        raise BoardError(None, "--layers", f"must be 1 or 2, not {layers}")
    if size is not None:
        size = (float(size[0]), float(size[1]))
        if not all(math.isfinite(v) and v > 0 for v in size):
            raise BoardError(None, "--size", f"width and height must be greater than zero, not {size[0]:g} {size[1]:g}")
    notes: list[str] = []
    pname, pdelim, prows = _read_rows(parts_csv, "parts", *PARTS_COLUMNS, notes)
    nname, _, nrows = _read_rows(nets_csv, "nets", *NETS_COLUMNS, notes)
    parts, lines, fps = _parts(pname, pdelim, prows, layers, notes)
    nets = _nets(nname, nrows, fps, notes)
    rules = Rules()
    classes = {"default": NetClass("default")}
    for n in nets:
        if n.net_class not in classes:
            classes[n.net_class] = NetClass(n.net_class)
            d = classes["default"]
            notes.append(f"class '{n.net_class}' made with the default class's rules (trace_width "
                         f"{d.trace_width:g} mm, clearance {d.clearance:g} mm); set its own under "
                         f"[classes.{n.net_class}] in the board file")
    board = Board(name=name, outline=[(0.0, 0.0), (1.0, 0.0), (1.0, 1.0)], copper_layers=layers, rules=rules, classes=classes,
                  parts=parts, nets=nets)
    estimated = size is None
    if estimated:
        size = estimate_size(board)
        notes.append(f"board size {size[0]:g} x {size[1]:g} mm, estimated from the parts' area "
                     f"(x {ROUTING_FACTOR[layers]:g} for routing on {layers} layer{'s' if layers == 2 else ''}); "
                     "give --size W H to choose it")
    _check_inside(board, pname, lines, size)
    board.size = size
    board.outline = [(0.0, 0.0), (size[0], 0.0), (size[0], size[1]), (0.0, size[1])]
    board = loads_board(dumps_board(board), None)     # exactly what the other commands will read
    unplaced = sum(1 for p in board.parts if p.at is None)
    if unplaced:
        notes.append(f"{unplaced} of {len(board.parts)} parts have no place yet: run elbowroom place")
    return NewResult(board, notes, estimated)


def write_csv_board(parts_csv, nets_csv, output, **options) -> NewResult:
    """:func:`read_csv_board`, then the board written atomically to `output`."""
    out = Path(output)
    for src in (parts_csv, nets_csv):
        try:
            same = out.exists() and out.resolve() == Path(src).resolve()
        except OSError:
            same = False
        if same:
            raise BoardError(str(out), "-o", "is one of the CSV files; write the board to another file")
    result = read_csv_board(parts_csv, nets_csv, **options)
    write_atomic(out, board_toml(result.board, Path(parts_csv).name, Path(nets_csv).name))
    return result


def board_toml(board: Board, parts_name: str = "parts.csv", nets_name: str = "nets.csv") -> str:
    """The new board as TOML text, written by tomli-w.

    The board-file tables come from the project's own writer's dictionary
    (:func:`router.boardfile._to_dict`, the one order of keys every command writes); tomli-w
    turns them into TOML. The text is read back before it is returned: a board that would not
    read back exactly as built is an error here, never a file on disk.
    """
    text = (f"# written by elbowroom new from {parts_name} and {nets_name}; every command reads it,\n"
            "# and rewrites it in the project's own layout when it saves a board\n"
            + tomli_w.dumps(_to_dict(board)))
    if dumps_board(loads_board(text, None)) != dumps_board(board):
        raise AssertionError("the new board does not read back as built")    # a bug, not bad input
    return text
