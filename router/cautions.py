"""The cautions a user needs before trusting a board with mains voltage or real current.

A class ``voltage`` is the *peak* working voltage between that net and any other
(for AC: RMS x 1.414, so 230 V RMS mains peaks at 325 V), and the IPC-2221 Table 6-1
spacing it raises clearances to is *working* spacing between conductors, not the
isolation a product needs from mains. A class ``current`` sizes the trace width by the
IPC-2221 formula only: heat from parts, copper weight and the current of vias and
jumper wires are other matters (the check measures vias and jumper wires separately,
:func:`router.rules.via_current` and :func:`router.rules.jumper_ampacity`).

``check``, ``route``, ``render`` and ``export`` print :func:`cautions` (and ``export``
writes them into its list of files), and ``check`` says once when no class declares a
voltage or a current (:func:`undeclared_note`), because then neither was checked.
"""
from __future__ import annotations

from .model import Board

__all__ = ["MAINS_VOLTS", "HIGH_CURRENT", "PEAK_PER_RMS", "peak_note", "cautions", "not_declared",
           "undeclared_note"]

#: Above this a declared voltage counts as mains-like (IPC-2221 Table 6-1's bands change at 50 V;
#: 50 V is also the usual extra-low-voltage limit for AC: common practice).
MAINS_VOLTS = 50.0
#: Above this a declared current always gets the heat caution (our choice; any declared current does too).
HIGH_CURRENT = 3.0
#: Peak over RMS for a sine wave: sqrt(2), written as the trade writes it.
PEAK_PER_RMS = 1.414


def peak_note() -> str:
    """The one phrase that says what a class voltage is.

    Examples
    --------
    >>> peak_note()
    'a class voltage is the peak working voltage (AC: RMS x 1.414; 230 V RMS mains peaks at 325 V)'
    """
    return (f"a class voltage is the peak working voltage (AC: RMS x {PEAK_PER_RMS:g}; "
            f"230 V RMS mains peaks at {230 * PEAK_PER_RMS:.0f} V)")


def _mains_classes(board: Board) -> list[str]:
    return [f"{n} ({nc.voltage:g} V)" for n, nc in board.classes.items()
            if nc.voltage is not None and nc.voltage > MAINS_VOLTS]


def _current_classes(board: Board) -> list[str]:
    return [f"{n} ({nc.current:g} A)" for n, nc in board.classes.items() if nc.current is not None]


def cautions(board: Board) -> list[str]:
    """The cautions that apply to `board`, one paragraph (one line) each; empty when none.

    A class over :data:`MAINS_VOLTS` gets the isolation caution; a class that declares a
    current (any current, so also one over :data:`HIGH_CURRENT`) gets the heat caution.

    Examples
    --------
    >>> from router.model import Board, NetClass
    >>> b = Board("t", [(0, 0), (1, 0), (1, 1)])
    >>> cautions(b)
    []
    >>> b.classes["mains"] = NetClass("mains", voltage=325.0)
    >>> cautions(b)[0].startswith("Caution (class mains (325 V))")
    True
    """
    out = []
    mains = _mains_classes(board)
    if mains:
        out.append(
            f"Caution (class {', '.join(mains)}): IPC-2221 Table 6-1 spacing is working spacing between "
            f"conductors, not safety isolation. Isolation from mains follows the product's safety "
            f"standard (creepage, clearance, slots in the board) and licensed practice; this tool does "
            f"not check it. {peak_note()[0].upper() + peak_note()[1:]}.")
    amps = _current_classes(board)
    if amps:
        out.append(
            f"Caution (class {', '.join(amps)}): the IPC-2221 trace-width figure leaves out heat from "
            f"parts, the copper weight the board house actually plates, and the current through vias "
            f"and jumper wires (the check measures those apart: a via's plated barrel by the same "
            f"formula, a jumper by its wire gauge). Above {HIGH_CURRENT:g} A, or where parts get hot, "
            f"follow the parts' data, the local codes and licensed practice.")
    return out


def not_declared(board: Board) -> list[str]:
    """The electrical rules nothing could be checked for: ``"voltage"`` and/or ``"current"``
    when no class declares one.

    Examples
    --------
    >>> from router.model import Board, NetClass
    >>> b = Board("t", [(0, 0), (1, 0), (1, 1)])
    >>> not_declared(b)
    ['voltage', 'current']
    >>> b.classes["p"] = NetClass("p", current=1.0)
    >>> not_declared(b)
    ['voltage']
    """
    out = []
    if all(nc.voltage is None for nc in board.classes.values()):
        out.append("voltage")
    if all(nc.current is None for nc in board.classes.values()):
        out.append("current")
    return out


def undeclared_note(board: Board):
    """One line when no class declares a voltage or a current (so neither was checked), else None."""
    if not_declared(board) == ["voltage", "current"]:
        return ("note: no class declares a voltage or a current, so neither voltage spacing nor "
                "current capacity was checked (add voltage = peak V and current = A to [classes.X])")
    return None
