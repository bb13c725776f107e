"""The board as plain dataclasses, free of I/O.

Units are millimetres, x to the right, y up; angles in degrees counter-clockwise.
A board read from a file, placed, routed or drawn by hand is the same object:
routing only fills :attr:`Board.traces`, :attr:`Board.vias` and
:attr:`Board.jumpers`.
"""
from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import Optional

__all__ = [
    "Point", "Rules", "NetClass", "Pad", "Hole", "Footprint", "Part", "Net",
    "Keepout", "Trace", "Via", "Jumper", "Board", "LAYERS", "Pour", "Thermal",
]

Point = tuple[float, float]

#: Copper layer names, part side first.  A one-layer board has ``bottom`` only.
LAYERS = ("top", "bottom")


@dataclass
class Rules:
    """Design rules of the board and of the board house (the ``[rules]`` table)."""
    grid: float = 0.25
    edge_clearance: float = 0.5
    via_drill: float = 0.4
    via_diameter: float = 0.8
    min_trace_width: float = 0.15
    min_clearance: float = 0.15
    min_annular_ring: float = 0.15
    min_drill: float = 0.3
    min_hole_spacing: float = 0.5
    copper_oz: float = 1.0
    temperature_rise: float = 10.0
    jumper_drill: float = 0.8
    jumper_diameter: float = 1.6
    # fields of our own, beyond the contract
    mask_expansion: float = 0.05     # solder-mask opening beyond each pad, per side
    part_gap: float = 0.5            # placement: body to body
    voltage_table: str = "B2"        # IPC-2221 Table 6-1 column used for `voltage`
    paste_reduction: float | str = 0.0   # paste inset per side in mm, or "N%" of each pad side (router.paste)
    plating_thickness: float = 0.025  # plated-hole wall copper, mm (25 um: common practice), for via current
    jumper_wire_gauge: int = 22      # AWG of jumper wires, for their current (22 AWG: common practice)


@dataclass
class NetClass:
    name: str
    trace_width: float = 0.25
    clearance: float = 0.2
    current: Optional[float] = None   # A
    voltage: Optional[float] = None   # V
    neck_width: Optional[float] = None   # pad escape width where the class width does not fit (router.escape)
    neck_length: Optional[float] = None  # how far from the pad edge a neck may run (router.escape)


@dataclass
class Pad:
    """A pad of a footprint, in the footprint's own coordinates (body centre at 0, 0)."""
    pin: str
    offset: Point                    # the pad centre in the footprint's own coordinates
    shape: str = "round"             # "round", "rectangle", "obround" or "rounded-rectangle"
    size: Point = (1.6, 1.6)         # width along x, height along y (before the pad's own rotation)
    drill: Optional[float] = None    # None: a surface pad on the part's side
    rotation: float = 0.0            # degrees counter-clockwise about the pad centre, in the footprint
    corner_radius: Optional[float] = None   # rounded-rectangle only: the radius of its four corners

    @property
    def plated(self) -> bool:
        return self.drill is not None


@dataclass
class Hole:
    """A non-plated hole of a footprint (local coordinates)."""
    offset: Point
    drill: float


@dataclass
class Footprint:
    name: str
    body: Point                       # (width along x, height along y)
    pads: list[Pad] = field(default_factory=list)
    holes: list[Hole] = field(default_factory=list)
    keepout_body: bool = False
    polarised: bool = False           # pin 1 is the marked end (router.silkscreen)
    polarity: str = "plus"            # the mark at pin 1: "plus" (a + sign) or "cathode" (a band)

    def pins(self) -> list[str]:
        """Pin names in first-seen order (a pin may sit on several pads)."""
        seen: dict[str, None] = {}
        for pad in self.pads:
            seen.setdefault(pad.pin, None)
        return list(seen)


@dataclass
class Part:
    ref: str
    footprint: str
    value: str = ""
    at: Optional[Point] = None        # None: unplaced
    rotation: float = 0               # degrees counter-clockwise, any value (0, 90, 180, 270 most often)
    side: str = "top"
    fixed: bool = False

    @property
    def placed(self) -> bool:
        return self.at is not None


@dataclass
class Net:
    name: str
    pins: list[str]                   # "REF.PIN"
    net_class: str = "default"


@dataclass
class Keepout:
    polygon: list[Point]              # closed implicitly
    layers: Optional[list[str]] = None   # None: every copper layer
    is_rect: bool = False             # written back as `rect` when it came as one

    def layers_on(self, copper_layers: tuple[str, ...]) -> list[str]:
        return list(copper_layers) if self.layers is None else list(self.layers)


@dataclass
class Trace:
    net: str
    layer: str
    width: float
    points: list[Point]
    fixed: bool = False


@dataclass
class Via:
    net: str
    at: Point
    drill: float
    diameter: float


@dataclass
class Jumper:
    net: str
    start: Point                      # `from` in the file
    end: Point                        # `to` in the file
    drill: float
    diameter: float


@dataclass
class Thermal:
    """Thermal relief of a pour for its net's pads; None fields take the defaults (router.pour)."""
    spokes: int = 4
    width: Optional[float] = None     # default: the net's class trace width
    gap: Optional[float] = None       # default: the pour's clearance


@dataclass
class Pour:
    """A filled copper area of one net on one layer (``[[pours]]``); `filled` is computed (router.pour)."""
    net: str
    layer: str
    polygon: Optional[list[Point]] = None     # None: the outline less edge_clearance
    clearance: Optional[float] = None         # None: as for any copper of the net (router.rules)
    thermal: Thermal = field(default_factory=Thermal)
    min_island_area: float = 0.0              # mm^2
    priority: int = 0
    filled: list = field(default_factory=list)   # [[ring, hole, ...], ...], each ring [(x, y), ...]
    filled_for: Optional[str] = None          # digest of the copper the fill was computed against


@dataclass
class Board:
    name: str
    outline: list[Point]              # a simple polygon; from `size` it is the rectangle; with arcs,
                                      # their chords (router.outline) for inside tests and pictures
    copper_layers: int = 2
    rules: Rules = field(default_factory=Rules)
    classes: dict[str, NetClass] = field(default_factory=lambda: {"default": NetClass("default")})
    footprints: dict[str, Footprint] = field(default_factory=dict)   # the file's own
    parts: list[Part] = field(default_factory=list)
    nets: list[Net] = field(default_factory=list)
    keepouts: list[Keepout] = field(default_factory=list)
    traces: list[Trace] = field(default_factory=list)
    vias: list[Via] = field(default_factory=list)
    jumpers: list[Jumper] = field(default_factory=list)
    pours: list[Pour] = field(default_factory=list)
    size: Optional[Point] = None      # set when the file gave `size`, kept for writing back
    format: int = 1
    source: Optional[str] = field(default=None, compare=False)   # the path it was read from
    outline_path: Optional[list] = None   # the outline as given with arcs ([x, y] and router.outline.OutlineArc); None: no arcs

    @property
    def layers(self) -> tuple[str, ...]:
        """The copper layers, part side first: ("top", "bottom") or ("bottom",)."""
        return LAYERS if self.copper_layers == 2 else ("bottom",)

    def part(self, ref: str) -> Part:
        for p in self.parts:
            if p.ref == ref:
                return p
        raise KeyError(ref)

    def net(self, name: str) -> Net:
        for n in self.nets:
            if n.name == name:
                return n
        raise KeyError(name)

    def net_class(self, net_name: str) -> NetClass:
        """The class of a net by name; nets not in the file (lone pads) are `default`."""
        for n in self.nets:
            if n.name == net_name:
                return self.classes[n.net_class]
        return self.classes["default"]

    def copy(self) -> "Board":
        """A deep enough copy: lists of copper and parts are new, items are copied."""
        return replace(
            self,
            classes={k: replace(v) for k, v in self.classes.items()},
            footprints=dict(self.footprints),
            parts=[replace(p) for p in self.parts],
            nets=[replace(n, pins=list(n.pins)) for n in self.nets],
            keepouts=list(self.keepouts),
            traces=[replace(t, points=list(t.points)) for t in self.traces],
            vias=[replace(v) for v in self.vias],
            jumpers=[replace(j) for j in self.jumpers],
            pours=[replace(p, thermal=replace(p.thermal), filled=list(p.filled)) for p in self.pours],
            rules=replace(self.rules),
            outline_path=None if self.outline_path is None else list(self.outline_path),
        )
