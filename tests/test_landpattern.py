"""Computed land patterns (router.landpattern) and the families built on them (router.packages).

Worked examples: the package dimensions come from the outline named beside each case (JEDEC,
EIA, the makers' common drawings; "from memory" where recalled), the expected lands are the
IPC-7351B section 3 equations worked by hand, step by step in the comments (F = 0.05,
P = 0.025, so F^2 + P^2 = 0.003125; Z, G, X rounded to the nearest 0.05 mm).
"""
import itertools
import math

import pytest
from shapely.geometry import LineString, Point, box

from router.footprints import builtin_footprint
from router.landpattern import DENSITIES, Dim, Goals, goals_for, land, round_step
from router.packages import (CAP_SMD, DO214, QFN_BODY, QFP_BODY, SSOP_BODY, TSSOP_BODY, EP_GAP,
                             builtin_package)

NEW_FAMILIES = (
    [f"tssop-{n}" for n in TSSOP_BODY] + [f"ssop-{n}" for n in SSOP_BODY]
    + [f"qfp-{n}-{p}" for p in QFP_BODY for n in QFP_BODY[p]]
    + [f"qfn-{n}-0.5" for n in QFN_BODY] + [f"qfn-{n}-0.5-ep" for n in QFN_BODY]
    + ["sot-23-5", "sot-23-6", "sot-223", "sot-89", "to-92", "sod-123", "sod-323"]
    + [f"do-214{k}" for k in DO214] + ["crystal-hc49", "crystal-3225", "switch-6x6"]
    + [f"cap-smd-{d}" for d in CAP_SMD])


# ----------------------------------------------------------------- worked examples

def test_soic8_ms012aa_nominal():
    # JEDEC MS-012AA (from memory): E (lead span) 5.80-6.20, L (foot) 0.40-1.27, b 0.31-0.51,
    # pitch 1.27. IPC-7351B Table 3-2 (gull-wing, pitch > 0.625), level B: JT 0.35, JH 0.35, JS 0.03.
    # Z = 5.80 + 0.70 + sqrt(0.40^2 + 0.003125) = 6.5 + 0.40389 = 6.90389 -> 6.90
    # S_min = 5.80 - 2.54 = 3.26, S_max = 6.20 - 0.80 = 5.40, C_S worst = 2.14,
    # C_S rms = sqrt(0.40^2 + 2 * 0.87^2) = 1.29375, S_max' = 5.40 - (2.14 - 1.29375) / 2 = 4.97688
    # G = 4.97688 - 0.70 - sqrt(1.29375^2 + 0.003125) = 4.97688 - 0.70 - 1.29496 = 2.98192 -> 3.00
    # X = 0.31 + 0.06 + sqrt(0.20^2 + 0.003125) = 0.37 + 0.20767 = 0.57767 -> 0.60
    lp = land(Dim(5.8, 6.2), Dim(0.4, 1.27), Dim(0.31, 0.51), goals_for("gullwing", pitch=1.27))
    assert lp.z_exact == pytest.approx(6.90389, abs=1e-5)
    assert lp.g_exact == pytest.approx(2.98192, abs=1e-5)
    assert lp.x_exact == pytest.approx(0.57767, abs=1e-5)
    assert (lp.Z, lp.G, lp.X) == (6.9, 3.0, 0.6)
    assert (lp.length, lp.row) == (1.95, 4.95)


@pytest.mark.parametrize("density,expected", [
    # level A: JT 0.55, JH 0.45, JS 0.05 -> Z = 7.30389, G = 4.97688 - 0.90 - 1.29496 = 2.78192, X = 0.61767
    ("most", (7.3, 2.8, 0.6)),
    # level C: JT 0.15, JH 0.25, JS 0.01 -> Z = 6.50389, G = 4.97688 - 0.50 - 1.29496 = 3.18192, X = 0.53767
    ("least", (6.5, 3.2, 0.55)),
])
def test_soic8_other_densities(density, expected):
    lp = land(Dim(5.8, 6.2), Dim(0.4, 1.27), Dim(0.31, 0.51), goals_for("gullwing", density, pitch=1.27))
    assert (lp.Z, lp.G, lp.X) == expected


def test_sot23_to236ab_nominal():
    # JEDEC TO-236AB as drawn in makers' SOT23 outlines (from memory): HE 2.10-2.50, Lp 0.15-0.45,
    # bp 0.38-0.48, e 0.95. Table 3-2, level B.
    # Z = 2.10 + 0.70 + sqrt(0.40^2 + 0.003125) = 3.20389 -> 3.20
    # S_min = 2.10 - 0.90 = 1.20, S_max = 2.50 - 0.30 = 2.20, C_S = 1.00, rms = sqrt(0.16 + 0.18) = 0.58310
    # S_max' = 2.20 - (1.00 - 0.58310) / 2 = 1.99155; G = 1.99155 - 0.70 - 0.58577 = 0.70578 -> 0.70
    # X = 0.38 + 0.06 + sqrt(0.10^2 + 0.003125) = 0.55456 -> 0.55
    lp = land(Dim(2.1, 2.5), Dim(0.15, 0.45), Dim(0.38, 0.48), goals_for("gullwing", pitch=0.95))
    assert lp.g_exact == pytest.approx(0.70578, abs=1e-5)
    assert (lp.Z, lp.G, lp.X) == (3.2, 0.7, 0.55)
    assert (lp.length, lp.row) == (1.25, 1.95)


def test_chip_0805_nominal():
    # EIA 0805 (2012 metric) thick-film chip resistor, the makers' common drawing (from memory):
    # L 2.00 +/- 0.10, W 1.25 +/- 0.10, terminal 0.40 +/- 0.20. IPC-7351B Table 3-5 (chips of 1608
    # and larger), level B: JT 0.35, JH 0.00, JS 0.00.
    # Z = 1.90 + 0.70 + sqrt(0.20^2 + 0.003125) = 2.80767 -> 2.80
    # S_min = 1.90 - 1.20 = 0.70, S_max = 2.10 - 0.40 = 1.70, rms = sqrt(0.04 + 2 * 0.16) = 0.60
    # S_max' = 1.70 - (1.00 - 0.60) / 2 = 1.50; G = 1.50 - 0 - sqrt(0.36 + 0.003125) = 0.89740 -> 0.90
    # X = 1.15 + 0 + 0.20767 = 1.35767 -> 1.35
    lp = land(Dim(1.9, 2.1), Dim(0.2, 0.6), Dim(1.15, 1.35), goals_for("chip"))
    assert lp.g_exact == pytest.approx(0.89740, abs=1e-5)
    assert (lp.Z, lp.G, lp.X) == (2.8, 0.9, 1.35)
    assert (lp.length, lp.row) == (0.95, 1.85)


def test_qfn32_mo220_nominal_and_the_family():
    # JEDEC MO-220 VHHD-2 (5 x 5 mm, 0.5 mm pitch, from memory): D 4.90-5.10, L 0.30-0.50,
    # b 0.18-0.30. IPC-7351B flat no-lead, level B: JT 0.30, JH 0.00, JS -0.04.
    # Z = 4.90 + 0.60 + sqrt(0.20^2 + 0.003125) = 5.70767 -> 5.70
    # S_min = 4.90 - 1.00 = 3.90, S_max = 5.10 - 0.60 = 4.50, rms = sqrt(0.04 + 2 * 0.04) = 0.34641
    # S_max' = 4.50 - (0.60 - 0.34641) / 2 = 4.37321; G = 4.37321 - sqrt(0.12 + 0.003125) = 4.02231 -> 4.00
    # X = 0.18 - 0.08 + sqrt(0.12^2 + 0.003125) = 0.23238 -> 0.25
    lp = land(Dim(4.9, 5.1), Dim(0.3, 0.5), Dim(0.18, 0.30), goals_for("nolead"))
    assert lp.g_exact == pytest.approx(4.02231, abs=1e-5)
    assert (lp.Z, lp.G, lp.X) == (5.7, 4.0, 0.25)
    fp = builtin_footprint("qfn-32-0.5-ep")
    pads = {p.pin: p for p in fp.pads}
    # lower row: pad centres at y = -(Z + G) / 4 = -2.425, pads 0.25 wide (x) and 0.85 long (y)
    assert pads["1"].offset == (-1.75, -2.425) and pads["1"].size == (0.25, 0.85)
    # right side: pins 9..16 upwards at x = +2.425, pads turned
    assert pads["9"].offset == (2.425, -1.75) and pads["9"].size == (0.85, 0.25)
    # exposed pad: MO-220 nominal 3.45 (from memory), kept 0.2 mm from the lands' inner ends (G / 2 = 2.0)
    assert pads["33"].offset == (0.0, 0.0) and pads["33"].size == (3.45, 3.45)
    assert 4.0 / 2 - 3.45 / 2 >= EP_GAP


def test_equations_without_tolerance_are_the_goals():
    # with exact parts and F = P = 0 the lands are the part grown by the fillet goals, nothing else
    g = Goals(0.5, 0.3, 0.1)
    lp = land(Dim(6.0, 6.0), Dim(1.0, 1.0), Dim(0.4, 0.4), g, fab=0.0, place=0.0, step=0.01)
    assert (lp.Z, lp.G, lp.X) == (7.0, 3.4, 0.6)


def test_density_levels_order():
    # level A lands are never smaller than B, B never smaller than C (IPC-7351B's intent)
    dims = (Dim(6.2, 6.6), Dim(0.45, 0.75), Dim(0.19, 0.30))
    a, b, c = (land(*dims, goals_for("gullwing", d, pitch=0.65)) for d in DENSITIES)
    assert a.Z >= b.Z >= c.Z and a.G <= b.G <= c.G and a.X >= b.X >= c.X


def test_fine_pitch_takes_table_3_3():
    # IPC-7351B: gull-wing leads at 0.625 mm pitch or less take the smaller side goals
    assert goals_for("gullwing", pitch=0.65).side == 0.03
    assert goals_for("gullwing", pitch=0.5).side == -0.02
    with pytest.raises(ValueError):
        goals_for("gullwing", "dense")
    with pytest.raises(ValueError):
        land(Dim(1.0, 1.1), Dim(0.6, 0.7), Dim(0.3, 0.4), goals_for("gullwing"))   # lands would cross


@pytest.mark.parametrize("v,expected", [(6.90389, 6.9), (2.98192, 3.0), (0.225, 0.25), (0.2249, 0.2),
                                        (1.0, 1.0)])
def test_round_step(v, expected):
    assert round_step(v) == expected


@pytest.mark.parametrize("code,L,T,W,kind", [
    # EIA chip sizes, the makers' common drawings (from memory)
    ("0402", Dim(0.95, 1.05), Dim(0.15, 0.35), Dim(0.45, 0.55), "chip-small"),
    ("0603", Dim(1.5, 1.7), Dim(0.15, 0.45), Dim(0.7, 0.9), "chip"),
    ("0805", Dim(1.9, 2.1), Dim(0.2, 0.6), Dim(1.15, 1.35), "chip"),
    ("1206", Dim(3.0, 3.4), Dim(0.25, 0.75), Dim(1.5, 1.7), "chip"),
])
def test_existing_chip_lands_agree_with_the_calculation(code, L, T, W, kind):
    # the chip-* families keep their documented pads (boards already use them); they lie within
    # 0.2 mm of the IPC-7351B calculation in Z, G and X
    lp = land(L, T, W, goals_for(kind))
    fp = builtin_footprint(f"chip-{code}")
    p = fp.pads[1]
    z, g, x = p.offset[0] * 2 + p.size[0], p.offset[0] * 2 - p.size[0], p.size[1]
    assert abs(z - lp.Z) <= 0.2 + 1e-9 and abs(g - lp.G) <= 0.2 + 1e-9 and abs(x - lp.X) <= 0.2 + 1e-9


# ----------------------------------------------------------------- the families

def _shape(p):
    x, y = p.offset
    w, h = p.size
    if p.shape == "round":
        return Point(x, y).buffer(w / 2, 64)
    if p.shape == "obround":
        r = min(w, h) / 2
        if w >= h:
            return LineString([(x - w / 2 + r, y), (x + w / 2 - r, y)]).buffer(r, 64)
        return LineString([(x, y - h / 2 + r), (x, y + h / 2 - r)]).buffer(r, 64)
    return box(x - w / 2, y - h / 2, x + w / 2, y + h / 2)


@pytest.mark.parametrize("name", NEW_FAMILIES)
def test_pads_of_different_pins_never_meet(name):
    # shapely distance between every two pads of different pins: at least the board-house default
    # min_clearance (0.15 mm, the contract's default), so the footprint's own spacing never fails check
    fp = builtin_footprint(name)
    assert fp is not None and fp.name == name
    gaps = [_shape(a).distance(_shape(b)) for a, b in itertools.combinations(fp.pads, 2) if a.pin != b.pin]
    assert min(gaps) >= 0.15 - 1e-9
    for p in fp.pads:
        assert p.shape in ("round", "rectangle", "obround")
        if p.drill is not None:
            assert p.drill < min(p.size) and (min(p.size) - p.drill) / 2 >= 0.15 - 1e-9


def _first_pads(fp):
    seen = {}
    for p in fp.pads:
        seen.setdefault(p.pin, p)
    return [seen[k] for k in sorted(seen, key=int)]


@pytest.mark.parametrize("name", NEW_FAMILIES)
def test_pin1_and_counter_clockwise_numbering(name):
    fp = builtin_footprint(name)
    pads = _first_pads(fp)
    assert pads[0].pin == "1"
    n_pins = len(pads) - (1 if name.endswith("-ep") else 0)
    ring = pads[:n_pins]
    # pin 1 at the left end of the lowest row (the contract: lower left; quads: the lower row's left end)
    lowest = min(p.offset[1] for p in ring)
    low_row = [p for p in ring if abs(p.offset[1] - lowest) < 1e-9]
    assert pads[0].offset == min((p.offset for p in low_row), key=lambda a: a[0])
    if name.startswith(("qfp", "qfn")) or len(ring) == 2:
        assert pads[0].offset[0] < 0
    if len({p.offset[1] for p in ring}) == 1:
        # in line (TO-92): numbered left to right
        assert [p.offset[0] for p in ring] == sorted(p.offset[0] for p in ring)
    elif len(ring) >= 3:
        # seen from the top, the angle around the body centre grows from pin to pin: counter-clockwise
        a0 = math.atan2(ring[0].offset[1], ring[0].offset[0])
        angles = [(math.atan2(p.offset[1], p.offset[0]) - a0) % (2 * math.pi) for p in ring]
        assert all(b > a for a, b in zip(angles, angles[1:])), angles


@pytest.mark.parametrize("name,pitch", [
    ("tssop-20", 0.65), ("ssop-28", 0.65),        # JEDEC MO-153, MO-150
    ("qfp-44-0.8", 0.8), ("qfp-100-0.5", 0.5),    # JEDEC MS-026
    ("qfn-48-0.5", 0.5),                          # JEDEC MO-220
    ("sot-23-6", 0.95),                           # JEDEC MO-178
    ("sot-223", 2.3),                             # JEDEC TO-261AA
    ("sot-89", 1.5),                              # JEDEC TO-243AA
    ("to-92", 1.27),                              # JEDEC TO-226AA, in line
])
def test_pitch_exact(name, pitch):
    fp = builtin_footprint(name)
    ring = [p for p in _first_pads(fp)]
    lowest = min(p.offset[1] for p in ring)
    xs = sorted(p.offset[0] for p in ring if abs(p.offset[1] - lowest) < 1e-9)
    assert [round(b - a, 9) for a, b in zip(xs, xs[1:])] == [pitch] * (len(xs) - 1)


@pytest.mark.parametrize("name,dims,kind", [
    # the row spacing of each family is the calculation's (Z + G) / 2 for its outline, exactly
    ("tssop-14", (Dim(6.2, 6.6), Dim(0.45, 0.75), Dim(0.19, 0.30)), "gullwing"),      # JEDEC MO-153
    ("ssop-20", (Dim(7.4, 8.2), Dim(0.55, 0.95), Dim(0.22, 0.38)), "gullwing"),       # JEDEC MO-150
    ("sot-23-5", (Dim(2.6, 3.0), Dim(0.3, 0.6), Dim(0.3, 0.5)), "gullwing"),          # JEDEC MO-178
    ("qfp-32-0.8", (Dim(8.8, 9.2), Dim(0.45, 0.75), Dim(0.30, 0.45)), "gullwing"),    # JEDEC MS-026
])
def test_row_spacing_is_the_calculation(name, dims, kind):
    fp = builtin_footprint(name)
    pitch = 0.65 if "ssop" in name else 0.8 if "qfp" in name else 0.95
    lp = land(*dims, goals_for(kind, pitch=pitch))
    ys = sorted({p.offset[1] for p in fp.pads})
    assert round(ys[-1] - ys[0], 9) == lp.row
    p1 = fp.pads[0]
    assert p1.size == (lp.X, lp.length)


@pytest.mark.parametrize("name,spacing", [
    ("crystal-hc49", (4.88, None)),     # HC-49/U, HC-49/S: 0.192 in lead spacing (from memory)
    ("switch-6x6", (6.5, 4.5)),         # 6 x 6 mm tactile switches: 6.5 x 4.5 mm pin grid (from memory)
    ("crystal-3225", (None, 1.6)),      # 3.2 x 2.5 mm crystals: terminal rows 1.6 mm apart (from memory)
])
def test_fixed_spacings(name, spacing):
    fp = builtin_footprint(name)
    p = {q.pin: q.offset for q in fp.pads}
    dx, dy = spacing
    if dx is not None:
        assert round(p["2"][0] - p["1"][0], 9) == dx
    if dy is not None:
        assert round(p["4"][1] - p["1"][1], 9) == dy


def test_sot23_5_and_6_pinout():
    # JEDEC MO-178: pins 1-3 on one side; SOT-23-5 has pin 4 across from pin 3 and pin 5 across from pin 1
    p5 = {q.pin: q.offset for q in builtin_footprint("sot-23-5").pads}
    assert p5["4"][0] == p5["3"][0] and p5["5"][0] == p5["1"][0] and p5["4"][1] > 0 > p5["3"][1]
    p6 = {q.pin: q.offset for q in builtin_footprint("sot-23-6").pads}
    assert p6["5"][0] == p6["2"][0] and p6["6"][0] == p6["1"][0]


def test_tab_pins():
    # SOT-223: the tab is pin 4, alone on the upper row, wider than the leads (TO-261AA)
    fp = builtin_footprint("sot-223")
    tab = [p for p in fp.pads if p.pin == "4"][0]
    assert tab.offset[0] == 0 and tab.offset[1] > 0 and tab.size[0] > 3 * fp.pads[0].size[0]
    # SOT-89: pin 2 is its lead and the tab under the body, overlapping (one piece of copper)
    fp = builtin_footprint("sot-89")
    two = [_shape(p) for p in fp.pads if p.pin == "2"]
    assert len(two) == 2 and two[0].intersection(two[1]).area > 0


@pytest.mark.parametrize("name", ["tssop-9", "tssop-10", "ssop-12", "qfp-32", "qfp-40-0.8", "qfp-32-0.65",
                                  "qfn-32", "qfn-36-0.5", "qfn-32-0.4-ep", "sot-23-4", "do-214ad",
                                  "cap-smd-7", "crystal-5032", "switch-12x12"])
def test_unknown_names(name):
    assert builtin_footprint(name) is None and builtin_package(name) is None
