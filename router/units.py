"""Units and the one tolerance used everywhere.

Coordinates are millimetres in floats; grid work is in integer cells. Distances
are compared with :data:`TOL`: a clearance of 0.2 mm that measures 0.19999999
is met. Every module that compares a measured distance with a required one uses
:func:`meets` or :func:`short_of`, so the tolerance is the same everywhere.
"""
from __future__ import annotations

import math

__all__ = ["TOL", "meets", "short_of", "mm_to_mil", "snap", "on_grid", "to_cell"]

#: Tolerance on distances, in mm (1 nm): far below any board house's resolution,
#: far above float round-off on boards up to a metre.
TOL = 1e-6


def meets(actual: float, required: float) -> bool:
    """True when a measured distance meets a required one, within :data:`TOL`.

    >>> meets(0.19999999999, 0.2), meets(0.1999, 0.2)
    (True, False)
    """
    return actual >= required - TOL


def short_of(actual: float, required: float) -> bool:
    """True when `actual` falls short of `required` by more than :data:`TOL`."""
    return not meets(actual, required)


def mm_to_mil(v: float) -> float:
    return v / 0.0254


def snap(v: float, digits: int = 6) -> float:
    """Round a coordinate for writing (removes float noise such as 0.30000000000000004)."""
    r = round(v, digits)
    return 0.0 if r == 0 else r


def to_cell(v: float, pitch: float) -> int:
    """The nearest grid index of coordinate `v` on a grid of `pitch` from 0."""
    return int(math.floor(v / pitch + 0.5))


def on_grid(v: float, pitch: float) -> bool:
    """True when `v` lies on the grid within :data:`TOL`."""
    return abs(to_cell(v, pitch) * pitch - v) <= TOL
