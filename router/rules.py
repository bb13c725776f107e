"""Clearances between nets and the IPC-2221 figures behind them.

The required clearance between two nets is the larger of their classes'
``clearance``, raised to the IPC-2221 Table 6-1 spacing for the larger declared
``voltage``. The required width for a class's ``current`` comes from the
IPC-2221 conductor-sizing formula.

References
----------
.. [1] IPC-2221 "Generic Standard on Printed Board Design", Table 6-1
   "Electrical Conductor Spacing", and section 6.2 (conductor current capacity).
"""
from __future__ import annotations

import math

from .model import Board, NetClass

__all__ = ["VOLTAGE_COLUMNS", "ipc2221_spacing", "ipc2221_width_for_current",
           "ipc2221_current_for_width", "required_clearance", "class_clearance_table", "own_pad_clearance",
           "via_current", "via_drill_for_current", "JUMPER_AMPACITY", "jumper_ampacity"]

# IPC-2221 Table 6-1, minimum spacing in mm, by the upper voltage of each band (DC or AC peak).
# Columns: B1 internal conductors; B2 external, uncoated, sea level to 3050 m; B3 external,
# uncoated, above 3050 m; B4 external with permanent polymer coating; A5 external with conformal
# coating (assemblies); A6 external component lead/termination, uncoated; A7 external component
# lead/termination with conformal coating. Values from memory of the published table.
_BANDS = (15, 30, 50, 100, 150, 170, 250, 300, 500)
_TABLE_6_1 = {
    "B1": (0.05, 0.05, 0.1, 0.1, 0.2, 0.2, 0.2, 0.2, 0.25),
    "B2": (0.1, 0.1, 0.6, 0.6, 0.6, 1.25, 1.25, 1.25, 2.5),
    "B3": (0.1, 0.1, 0.6, 1.5, 3.2, 3.2, 6.4, 12.5, 12.5),
    "B4": (0.05, 0.05, 0.13, 0.13, 0.4, 0.4, 0.4, 0.4, 0.8),
    "A5": (0.13, 0.13, 0.13, 0.13, 0.4, 0.4, 0.4, 0.4, 0.8),
    "A6": (0.13, 0.25, 0.4, 0.5, 0.8, 0.8, 0.8, 0.8, 1.5),
    "A7": (0.13, 0.13, 0.13, 0.13, 0.4, 0.4, 0.4, 0.8, 0.8),
}
# Above 500 V: the 500 V value plus this many mm per volt above 500.
_PER_VOLT = {"B1": 0.0025, "B2": 0.005, "B3": 0.025, "B4": 0.00305, "A5": 0.00305,
             "A6": 0.00305, "A7": 0.00305}
VOLTAGE_COLUMNS = tuple(_TABLE_6_1)

# IPC-2221 conductor sizing: I = k * dT^0.44 * A^0.725, A in square mils.
K_EXTERNAL = 0.048
K_INTERNAL = 0.024
OZ_THICKNESS_MM = 0.035      # 1 oz/ft^2 copper is 35 um thick (common practice: 1.378 mil)
MIL = 0.0254


def ipc2221_spacing(voltage: float, column: str = "B2") -> float:
    """Minimum conductor spacing in mm for `voltage` (V, DC or AC peak), IPC-2221 Table 6-1.

    Examples
    --------
    >>> ipc2221_spacing(12), ipc2221_spacing(48), ipc2221_spacing(230), ipc2221_spacing(600)
    (0.1, 0.6, 1.25, 3.0)
    """
    if column not in _TABLE_6_1:
        raise ValueError(f"unknown IPC-2221 Table 6-1 column {column!r}")
    v = abs(float(voltage))
    row = _TABLE_6_1[column]
    for limit, spacing in zip(_BANDS, row):
        if v <= limit:
            return spacing
    return round(row[-1] + _PER_VOLT[column] * (v - 500.0), 6)


def ipc2221_width_for_current(current: float, copper_oz: float = 1.0, temperature_rise: float = 10.0,
                              external: bool = True) -> float:
    """Trace width in mm that carries `current` A with the given rise, by the IPC-2221 formula.

    Examples
    --------
    >>> round(ipc2221_width_for_current(1.0, 1.0, 10.0), 3)   # the usual worked example: ~0.30 mm
    0.3
    """
    k = K_EXTERNAL if external else K_INTERNAL
    area_mil2 = (current / (k * temperature_rise ** 0.44)) ** (1 / 0.725)
    thickness_mil = copper_oz * OZ_THICKNESS_MM / MIL
    return area_mil2 / thickness_mil * MIL


def ipc2221_current_for_width(width: float, copper_oz: float = 1.0, temperature_rise: float = 10.0,
                              external: bool = True) -> float:
    """Current in A that a trace `width` mm wide carries with the given rise (IPC-2221)."""
    k = K_EXTERNAL if external else K_INTERNAL
    area_mil2 = (width / MIL) * (copper_oz * OZ_THICKNESS_MM / MIL)
    return k * temperature_rise ** 0.44 * area_mil2 ** 0.725


def via_current(drill: float, plating: float = 0.025, temperature_rise: float = 10.0) -> float:
    """Current in A a via's plated barrel carries with the given rise, by the IPC-2221 formula.

    The barrel is a conductor of cross-section circumference x plating thickness
    (pi x drill x plating, common practice for plated holes) with the formula's outer-layer
    constant k = 0.048, as via current calculators commonly take it (from memory): the
    barrel is short and both its ends sit in copper that carries its heat away. The
    inner-layer constant (0.024) would halve the figure.

    Examples
    --------
    >>> round(via_current(0.4, 0.025, 10.0), 2)     # a 0.4 mm via, 25 um plating: about 2.2 A
    2.21
    """
    area_mil2 = math.pi * drill * plating / (MIL * MIL)
    return K_EXTERNAL * temperature_rise ** 0.44 * area_mil2 ** 0.725


def via_drill_for_current(current: float, plating: float = 0.025, temperature_rise: float = 10.0) -> float:
    """The smallest drill in mm whose plated barrel carries `current` A (inverse of :func:`via_current`)."""
    area_mil2 = (current / (K_EXTERNAL * temperature_rise ** 0.44)) ** (1 / 0.725)
    return area_mil2 * MIL * MIL / (math.pi * plating)


#: Ampacity in A of one copper wire in free air ("chassis wiring"), by AWG, from the American
#: Wire Gauge table of the Handbook of Electronic Tables and Formulas (values from memory).
JUMPER_AMPACITY = {18: 16.0, 19: 14.0, 20: 11.0, 21: 9.0, 22: 7.0, 23: 4.7, 24: 3.5, 25: 2.7,
                   26: 2.2, 27: 1.7, 28: 1.4, 29: 1.2, 30: 0.86}


def jumper_ampacity(gauge: int) -> float:
    """Current in A a jumper wire of `gauge` AWG carries (:data:`JUMPER_AMPACITY`).

    Examples
    --------
    >>> jumper_ampacity(22), jumper_ampacity(24)
    (7.0, 3.5)
    """
    if gauge not in JUMPER_AMPACITY:
        raise ValueError(f"no ampacity for {gauge} AWG (known: {min(JUMPER_AMPACITY)} to {max(JUMPER_AMPACITY)})")
    return JUMPER_AMPACITY[gauge]


def required_clearance(board: Board, a: NetClass, b: NetClass) -> float:
    """The clearance two nets of classes `a` and `b` must keep, in mm.

    The larger class clearance, raised to the IPC-2221 spacing for the larger
    declared voltage where either class declares one.
    """
    req = max(a.clearance, b.clearance)
    volts = [v for v in (a.voltage, b.voltage) if v is not None]
    if volts:
        req = max(req, ipc2221_spacing(max(volts), board.rules.voltage_table))
    return req


def own_pad_clearance(board: Board, required: float, own_gap: float) -> float:
    """The clearance a pad's escaping trace keeps from the other pads of its own part.

    A footprint's own pad spacing is the footprint's business (the contract's "Conventions"):
    within its class's ``neck_length`` of such a pad, a trace keeps at least the larger of the
    board house's ``min_clearance`` and the footprint's own pad gap from that part's other pads,
    never more than the pair's ordinary `required` clearance. The check and the router both
    use this one function.

    Examples
    --------
    >>> from router.model import Board
    >>> b = Board("t", [(0, 0), (1, 0), (1, 1)])
    >>> own_pad_clearance(b, 0.3, 0.2), own_pad_clearance(b, 0.3, 0.1), own_pad_clearance(b, 0.2, 0.5)
    (0.2, 0.15, 0.2)
    """
    return min(required, max(board.rules.min_clearance, own_gap))


def class_clearance_table(board: Board) -> dict[tuple[str, str], float]:
    """Required clearance for every ordered pair of class names."""
    names = list(board.classes)
    return {(x, y): required_clearance(board, board.classes[x], board.classes[y])
            for x in names for y in names}


def needs_caution(board: Board) -> bool:
    """True when a class declares mains-like voltage (over 50 V) or a high current (over 3 A)."""
    for nc in board.classes.values():
        if (nc.voltage or 0) > 50 or (nc.current or 0) > 3:
            return True
    return False


CAUTION = ("Caution: a rough route for prototypes, not a certified design. Fabrication follows the "
           "board house's rules and the local electrical codes; mains or high-voltage work needs "
           "licensed practice.")
