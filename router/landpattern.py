"""Surface land patterns computed from package dimensions by the IPC-7351B calculation.

A package is described by its lead span ``L`` (toe to toe, across the two rows), its
terminal length ``T`` (the part of each lead that lies on the board), its lead width ``W``
and the pitch, each dimension as a (min, max) pair from the package outline (JEDEC, EIA or
the maker's drawing). The land pattern is three numbers [1]_:

    Z = L_min + 2 J_T + sqrt(C_L^2 + F^2 + P^2)          outer edge to outer edge (toe)
    G = S_max - 2 J_H - sqrt(C_S^2 + F^2 + P^2)          inner edge to inner edge (heel)
    X = W_min + 2 J_S + sqrt(C_W^2 + F^2 + P^2)          land width (side)

``J_T``, ``J_H``, ``J_S`` are the toe, heel and side solder fillet goals of the lead type at
the chosen density level (most = A, nominal = B, least = C; IPC-7351B Tables 3-2 to 3-22);
``C_L``, ``C_W`` are the tolerances (max - min) of ``L`` and ``W``; ``F`` is the board
fabrication tolerance and ``P`` the placement tolerance, combined with the part's own
tolerance root-sum-square. ``S = L - 2 T`` is the heel-to-heel distance; its worst-case
tolerance (``C_L + 2 C_T``) overstates what real parts show, so IPC-7351B takes the
root-sum-square one, ``C_S = sqrt(C_L^2 + 2 C_T^2)``, and moves ``S_max`` in by half the
difference: ``S_max = (L_max - 2 T_min) - ((C_L + 2 C_T) - C_S) / 2``.

Z, G and X are rounded to the standard's 0.05 mm round-off step, to the nearest step (the
step, the direction and the F and P values below are from memory of IPC-7351B section 3;
change them in one place here). Pad length is ``(Z - G) / 2``, the pad centres of the two
rows are ``(Z + G) / 2`` apart, the pad width is ``X``.

References
----------
.. [1] IPC-7351B, "Generic Requirements for Surface Mount Design and Land Pattern
   Standard", IPC, June 2010, section 3.1 (equations) and Tables 3-2 to 3-22 (goals).
"""
from __future__ import annotations

import math
from dataclasses import dataclass

__all__ = ["Dim", "Goals", "Land", "DENSITIES", "GOALS", "FAB_TOL", "PLACE_TOL", "ROUND_OFF",
           "goals_for", "land", "round_step"]

#: Board fabrication tolerance F and part placement tolerance P, mm (IPC-7351B, from memory).
FAB_TOL = 0.05
PLACE_TOL = 0.025
#: IPC-7351B round-off step for land dimensions, mm (from memory).
ROUND_OFF = 0.05

#: density level names: IPC-7351B level A (most land), B (nominal), C (least)
DENSITIES = ("most", "nominal", "least")


@dataclass(frozen=True)
class Dim:
    """A package dimension as its (min, max) pair, mm."""
    lo: float
    hi: float

    def __post_init__(self):
        if not (self.lo <= self.hi):
            raise ValueError(f"dimension min {self.lo} above max {self.hi}")

    @classmethod
    def nom(cls, nominal: float, tol: float) -> "Dim":
        """``nominal`` +/- ``tol``."""
        return cls(round(nominal - tol, 6), round(nominal + tol, 6))

    @property
    def tol(self) -> float:
        return self.hi - self.lo

    @property
    def mid(self) -> float:
        return (self.lo + self.hi) / 2


@dataclass(frozen=True)
class Goals:
    """Solder fillet goals (mm) of one lead type at one density level."""
    toe: float
    heel: float
    side: float


# Goals per lead type as (most, nominal, least), from IPC-7351B (table numbers and values
# from memory; the gull-wing, J-lead, chip and no-lead rows are the ones the standard is
# best known for).
_TABLE = {
    # Table 3-2: flat ribbon L and gull-wing leads, pitch above 0.625 mm
    "gullwing": ((0.55, 0.45, 0.05), (0.35, 0.35, 0.03), (0.15, 0.25, 0.01)),
    # Table 3-3: the same, pitch 0.625 mm or less
    "gullwing-fine": ((0.55, 0.45, 0.01), (0.35, 0.35, -0.02), (0.15, 0.25, -0.04)),
    # Table 3-5: rectangular or square-end chips, 1608 (0603) and larger
    "chip": ((0.55, 0.0, 0.05), (0.35, 0.0, 0.0), (0.15, 0.0, -0.05)),
    # Table 3-6: rectangular or square-end chips smaller than 1608 (0603)
    "chip-small": ((0.30, 0.0, 0.05), (0.20, 0.0, 0.0), (0.10, 0.0, -0.05)),
    # Table 3-15 / 3-16: flat no-lead (quad and dual no-lead)
    "nolead": ((0.40, 0.0, -0.04), (0.30, 0.0, -0.04), (0.20, 0.0, -0.04)),
    # molded body, inward flat ribbon L / J bend under the body (tantalum chips, DO-214)
    "molded": ((0.25, 0.80, 0.01), (0.15, 0.50, -0.05), (0.07, 0.20, -0.10)),
    # aluminium electrolytic (vertical chip) capacitors: least sure of the rows, from memory
    "electrolytic": ((0.70, 0.0, 0.50), (0.50, -0.10, 0.40), (0.30, -0.20, 0.30)),
}

GOALS: dict[str, dict[str, Goals]] = {
    kind: {d: Goals(*row) for d, row in zip(DENSITIES, rows)} for kind, rows in _TABLE.items()
}


def goals_for(kind: str, density: str = "nominal", pitch: float | None = None) -> Goals:
    """The fillet goals of a lead type; gull-wing leads at pitch <= 0.625 mm take Table 3-3.

    >>> goals_for("gullwing", "nominal", pitch=0.5)
    Goals(toe=0.35, heel=0.35, side=-0.02)
    """
    if density not in DENSITIES:
        raise ValueError(f"density {density!r}: use one of {', '.join(DENSITIES)}")
    if kind == "gullwing" and pitch is not None and pitch <= 0.625 + 1e-9:
        kind = "gullwing-fine"
    if kind not in GOALS:
        raise ValueError(f"lead type {kind!r}: use one of {', '.join(GOALS)}")
    return GOALS[kind][density]


def round_step(v: float, step: float = ROUND_OFF) -> float:
    """`v` rounded to the nearest multiple of `step` (halves up), free of float noise.

    >>> round_step(6.9039), round_step(2.9819), round_step(0.225)
    (6.9, 3.0, 0.25)
    """
    return round(math.floor(v / step + 0.5 + 1e-9) * step, 6)


@dataclass(frozen=True)
class Land:
    """A computed land pattern for one pair of opposite rows (or one two-terminal part)."""
    Z: float            # outer edge to outer edge, rounded
    G: float            # inner edge to inner edge, rounded
    X: float            # pad width, rounded
    z_exact: float
    g_exact: float
    x_exact: float

    @property
    def length(self) -> float:
        """Pad length, along the lead."""
        return round((self.Z - self.G) / 2, 6)

    @property
    def row(self) -> float:
        """Distance between the pad centres of the two rows."""
        return round((self.Z + self.G) / 2, 6)

    @property
    def size(self) -> tuple[float, float]:
        """(length, width)."""
        return (self.length, self.X)


def land(L: Dim, T: Dim, W: Dim, goals: Goals, fab: float = FAB_TOL, place: float = PLACE_TOL,
         step: float = ROUND_OFF) -> Land:
    """The IPC-7351B land pattern (Z, G, X) of a package row pair.

    Parameters
    ----------
    L : Dim
        Lead span, toe to toe across the package (for a two-terminal chip: its length).
    T : Dim
        Terminal (foot) length, the part of one lead that lies on the board.
    W : Dim
        Lead (terminal) width.
    goals : Goals
        Toe, heel and side fillet goals (:func:`goals_for`).
    fab, place : float
        Fabrication and placement tolerances, combined root-sum-square.
    step : float
        Round-off step.

    Returns
    -------
    Land
        Rounded Z, G, X (and the exact values before rounding).

    Raises
    ------
    ValueError
        When the lands would meet or cross (G not positive): the dimensions are not a package.

    Examples
    --------
    JEDEC MS-012AA (SOIC-8): L 5.80-6.20, T 0.40-1.27, W 0.31-0.51, nominal density:

    >>> lp = land(Dim(5.8, 6.2), Dim(0.4, 1.27), Dim(0.31, 0.51), goals_for("gullwing"))
    >>> lp.Z, lp.G, lp.X, lp.length, lp.row
    (6.9, 3.0, 0.6, 1.95, 4.95)
    """
    ff = fab * fab + place * place
    z = L.lo + 2 * goals.toe + math.sqrt(L.tol ** 2 + ff)
    s_min = L.lo - 2 * T.hi
    s_max = L.hi - 2 * T.lo
    s_tol = s_max - s_min
    s_tol_rms = math.sqrt(L.tol ** 2 + 2 * T.tol ** 2)
    s_max_rms = s_max - (s_tol - s_tol_rms) / 2
    g = s_max_rms - 2 * goals.heel - math.sqrt(s_tol_rms ** 2 + ff)
    x = W.lo + 2 * goals.side + math.sqrt(W.tol ** 2 + ff)
    Z, G, X = round_step(z, step), round_step(g, step), round_step(x, step)
    if G <= 0 or Z <= G or X <= 0:
        raise ValueError(f"lands meet or vanish: Z {Z}, G {G}, X {X} (L {L}, T {T}, W {W})")
    return Land(Z, G, X, z, g, x)
