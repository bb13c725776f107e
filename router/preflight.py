"""What ``route`` says before and after it routes: rules a footprint cannot meet, part bodies
that overlap, and the check's summary of the board it wrote.

A class *fits between* two pads of a footprint when a trace of the class can run between
them keeping its clearance on both sides: ``trace_width + 2 x clearance <= gap``, the gap
being the footprint's smallest copper gap between two of its pads of different pins
(:func:`router.escape.own_gaps`). Near a pad of its own net a trace may narrow to the class's
``neck_width`` and keep only the own-pad clearance (:func:`router.rules.own_pad_clearance`)
from the part's other pads (:mod:`router.escape`), so the class still fits when
``neck_width + 2 x own-pad clearance <= gap``. When neither fits, no trace of the class runs
between two pads of that footprint; its traces leave each pad from its end. When the gap is
below the class clearance itself, the pads break the class's rule by themselves: the
footprint's own pad spacing (``check`` warns, a violation only below ``min_clearance``).
"""
from __future__ import annotations

from collections import defaultdict

from .escape import neck_of, own_gaps
from .geometry import placed_pads
from .model import Board
from .rules import own_pad_clearance, required_clearance
from .units import short_of

__all__ = ["Fit", "footprint_fits", "fit_notes", "overlap_notes", "check_summary"]


class Fit:
    """One class against one footprint: the figures behind the note."""

    def __init__(self, footprint, cls, refs, gap, width, clearance, neck, own):
        self.footprint, self.cls, self.refs, self.gap = footprint, cls, refs, gap
        self.width, self.clearance, self.neck, self.own = width, clearance, neck, own

    @property
    def full(self) -> float:
        return self.width + 2 * self.clearance

    @property
    def necked(self) -> float:
        return self.neck + 2 * self.own

    @property
    def fits(self) -> bool:
        return not short_of(self.gap, self.full) or not short_of(self.gap, self.necked)

    @property
    def pads_break_clearance(self) -> bool:
        return short_of(self.gap, self.clearance)


def footprint_fits(board: Board) -> list[Fit]:
    """Every (footprint, class) pair where a net of the class has a pad on a part of that footprint,
    with the smallest own-pad gap over those parts; sorted by footprint, then class."""
    from .layout import resolve
    pads = list(resolve(board).pads)          # the board resolved once (router.layout)
    gaps = own_gaps(board, pads)
    classes_on: dict[str, set] = defaultdict(set)
    names = {n.name for n in board.nets}
    for p in pads:
        if p.net in names:
            classes_on[p.ref].add(board.net_class(p.net).name)
    pairs: dict[tuple[str, str], list] = {}
    for ref, (gap, fp) in gaps.items():
        for cname in classes_on.get(ref, ()):
            pairs.setdefault((fp, cname), []).append((gap, ref))
    out = []
    for (fp, cname), found in sorted(pairs.items()):
        gap = min(g for g, _ in found)
        nc = board.classes[cname]
        clearance = required_clearance(board, nc, nc)
        width = max(nc.trace_width, board.rules.min_trace_width)
        neck, _ = neck_of(board, nc)
        own = own_pad_clearance(board, clearance, gap)
        out.append(Fit(fp, cname, sorted({r for _, r in found}), gap, width, clearance, neck, own))
    return out


def fit_notes(board: Board) -> list[str]:
    """One line per (footprint, class) whose traces cannot run between the footprint's pads, or
    whose clearance the footprint's own pads break; empty when every class fits.

    Examples
    --------
    >>> from router.boardfile import loads_board
    >>> b = loads_board('''format = 1
    ... [board]
    ... name = "t"
    ... size = [20.0, 20.0]
    ... [classes.wide]
    ... trace_width = 0.3
    ... clearance = 0.8
    ... [[parts]]
    ... ref = "U1"
    ... footprint = "soic-8"
    ... at = [10.0, 10.0]
    ... [[nets]]
    ... name = "A"
    ... pins = ["U1.1", "U1.8"]
    ... class = "wide"
    ... ''', "t.toml")
    >>> print(fit_notes(b)[0])     # doctest: +ELLIPSIS
    class wide (0.30 mm trace, 0.80 mm clearance) does not fit between the pads of soic-8 (U1), 0.67 mm apart: ...
    """
    out = []
    rules = board.rules
    for f in footprint_fits(board):
        if f.fits:               # (a gap below the clearance never fits: own >= gap there)
            continue
        refs = ", ".join(f.refs[:4]) + (" ..." if len(f.refs) > 4 else "")
        head = (f"class {f.cls} ({f.width:.2f} mm trace, {f.clearance:.2f} mm clearance) ")
        where = f"the pads of {f.footprint} ({refs}), {f.gap:.2f} mm apart"
        line = (f"{head}does not fit between {where}: a trace between two of them needs "
                f"{f.width:.2f} + 2 x {f.clearance:.2f} = {f.full:.2f} mm, or necked "
                f"{f.neck:.2f} + 2 x {f.own:.2f} = {f.necked:.2f} mm (neck_width + 2 x the own-pad "
                f"clearance); its traces leave those pads from their ends only")
        if f.pads_break_clearance:
            sev = ("a violation: below the board house's min_clearance"
                   if short_of(f.gap, rules.min_clearance) else
                   f"check warns, a violation only below min_clearance {rules.min_clearance:.2f} mm "
                   f"or with check --strict")
            line += (f"; the pads themselves are closer than the {f.clearance:.2f} mm clearance "
                     f"(the footprint's own pad spacing: {sev})")
        out.append(line)
    return out


def overlap_notes(board: Board) -> list[str]:
    """The check's placement findings on part bodies (overlapping, or off the board), one line each."""
    from .check import _placement
    return [v.message for v in _placement(board) if "bod" in v.message and "jumper" not in v.message]


def check_summary(board: Board):
    """The check of `board` in one line, and its violations.

    Returns
    -------
    (str, list of Violation)
        "check: no violations" or "check: N violations (rule n, ...)", with the warnings counted.
    """
    from .check import RULES, check, warnings
    vs = check(board)
    ws = warnings(board)
    counts: dict[str, int] = defaultdict(int)
    for v in vs:
        counts[v.rule] += 1
    order = [r for r in RULES if r in counts] + sorted(set(counts) - set(RULES))
    if vs:
        line = (f"check: {len(vs)} violation{'s' if len(vs) != 1 else ''} ("
                + ", ".join(f"{r} {counts[r]}" for r in order) + ")")
    else:
        line = "check: no violations"
    if ws:
        line += f", {len(ws)} warning{'s' if len(ws) != 1 else ''}"
    return line, vs
