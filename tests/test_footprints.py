"""Built-in footprints against the published pitches and the trade's pin numbering."""
import math

import pytest

from router.footprints import builtin_footprint
from router.geometry import part_rect, placed_pads, transform
from router.model import Board, Part


def pitch_along_row(fp, pins):
    xs = [next(p.offset for p in fp.pads if p.pin == q)[0] for q in pins]
    return [round(b - a, 6) for a, b in zip(xs, xs[1:])]


@pytest.mark.parametrize("name,pitch,rows", [
    ("dip-8", 2.54, 7.62),          # JEDEC MS-001: 0.100 in pitch, 0.300 in rows
    ("dip-28-wide", 2.54, 15.24),   # JEDEC MS-011: 0.600 in rows
    ("soic-8", 1.27, None),         # JEDEC MS-012: 1.27 mm pitch
    ("soic-20", 1.27, None),        # JEDEC MS-013: 1.27 mm pitch
])
def test_dual_row_pitch_and_rows(name, pitch, rows):
    fp = builtin_footprint(name)
    n = len(fp.pads)
    assert pitch_along_row(fp, [str(i) for i in range(1, n // 2 + 1)]) == [pitch] * (n // 2 - 1)
    if rows is not None:
        assert round(fp.pads[-1].offset[1] - fp.pads[0].offset[1], 6) == rows


@pytest.mark.parametrize("name,pitch", [
    ("header-1x6", 2.54),   # 0.1 in pin headers, common practice
    ("terminal-3", 5.08),   # 0.200 in screw terminals, common practice
    ("to-220", 2.54),       # JEDEC TO-220AB: 0.100 in lead pitch
])
def test_single_row_pitch(name, pitch):
    fp = builtin_footprint(name)
    pins = [p.pin for p in fp.pads]
    assert pitch_along_row(fp, pins) == [pitch] * (len(pins) - 1)


def test_sot23_pitch():
    # JEDEC TO-236: pins 1 and 2 on the lower row 1.90 mm apart (2 x 0.95), pin 3 alone on the upper row
    fp = builtin_footprint("sot-23")
    p = {pad.pin: pad.offset for pad in fp.pads}
    assert round(p["2"][0] - p["1"][0], 6) == 1.9 and p["1"][1] == p["2"][1] < p["3"][1]


@pytest.mark.parametrize("code,metric,body", [("0402", "1005", (1.0, 0.5)), ("0603", "1608", (1.6, 0.8)),
                                              ("0805", "2012", (2.0, 1.25)), ("1206", "3216", (3.2, 1.6))])
def test_chip_body_sizes_eia(code, metric, body):
    # EIA-198 chip sizes (from memory): the metric code is the body length and width in tenths of a mm,
    # the inch code in hundredths of an inch, both rounded
    fp = builtin_footprint(f"chip-{code}")
    assert fp.body == body
    assert abs(fp.body[0] - int(metric[:2]) / 10) <= 0.06 and abs(fp.body[1] - int(metric[2:]) / 10) <= 0.06
    assert abs(fp.body[0] - int(code[:2]) * 0.254) < 0.16 and abs(fp.body[1] - int(code[2:]) * 0.254) < 0.16


@pytest.mark.parametrize("name", ["dip-8", "dip-14", "soic-8", "soic-16", "sot-23", "header-2x5", "chip-0603",
                                  "header-1x4", "terminal-2", "to-220", "axial-10.16", "radial-2.5"])
def test_pin1_lower_left_and_counter_clockwise(name):
    fp = builtin_footprint(name)
    first = fp.pads[0]
    assert first.pin == "1"
    assert first.offset == min((p.offset for p in fp.pads), key=lambda a: (a[0], a[1]))
    if name.startswith(("dip", "soic")):
        # walking the pins in order turns counter-clockwise around the centre: positive signed area
        pts = [p.offset for p in fp.pads]
        area = sum(x0 * y1 - x1 * y0 for (x0, y0), (x1, y1) in zip(pts, pts[1:] + pts[:1])) / 2
        assert area > 0


def test_header_2xn_pins_1_and_2_across_the_rows():
    fp = builtin_footprint("header-2x3")
    p = {pad.pin: pad.offset for pad in fp.pads}
    assert p["1"][0] == p["2"][0] and round(p["2"][1] - p["1"][1], 6) == 2.54


@pytest.mark.parametrize("name", ["dip-3", "dip-42", "soic-6", "soic-30", "header-1x0", "header-3x2",
                                  "terminal-1", "terminal-13", "chip-0201", "hole-0", "qfp-44"])
def test_out_of_range_names_are_unknown(name):
    assert builtin_footprint(name) is None


@pytest.mark.parametrize("name", ["dip-40", "dip-4-wide", "header-2x40", "terminal-12", "axial-7.62",
                                  "radial-5.0", "hole-3.2", "soic-28"])
def test_drills_smaller_than_pads(name):
    fp = builtin_footprint(name)
    for pad in fp.pads:
        if pad.drill is not None:
            assert pad.drill < min(pad.size)
    if name.startswith("hole"):
        assert fp.holes[0].drill == 3.2 and not fp.pads


def _board(part):
    return Board("t", [(0, 0), (50, 0), (50, 50), (0, 50)], parts=[part])


@pytest.mark.parametrize("rotation,side,expected", [
    # dip-8 pin 1 is at local (-3.81, -3.81); part at (20, 10); hand-computed
    (0, "top", (16.19, 6.19)),
    (90, "top", (23.81, 6.19)),     # (x, y) -> (-y, x) = (3.81, -3.81)
    (180, "top", (23.81, 13.81)),
    (270, "top", (16.19, 13.81)),   # (x, y) -> (y, -x) = (-3.81, 3.81)
    (0, "bottom", (23.81, 6.19)),   # mirror x first: (3.81, -3.81)
    (90, "bottom", (23.81, 13.81)), # mirrored (3.81, -3.81) -> rotate 90 -> (3.81, 3.81)
])
def test_placed_pin1(rotation, side, expected):
    part = Part("U1", "dip-8", at=(20.0, 10.0), rotation=rotation, side=side)
    pad = placed_pads(_board(part))[0]
    assert (pad.x, pad.y) == pytest.approx(expected, abs=1e-9)


def test_pad_size_turns_with_the_part():
    part = Part("R1", "chip-0805", at=(10.0, 10.0), rotation=90)
    pad = placed_pads(_board(part))[0]
    assert (pad.w, pad.h) == (1.4, 1.1) and pad.layers == ("top",)
    assert (pad.x, pad.y) == pytest.approx((10.0, 9.05))


def test_part_rect_covers_body_and_pads():
    part = Part("U1", "dip-8", at=(20.0, 10.0))
    x0, y0, x1, y1 = part_rect(_board(part), part)
    # pads reach 3.81 + 0.8 from the centre across the rows; the body is 10.16 long
    assert (x0, y0, x1, y1) == pytest.approx((14.92, 5.39, 25.08, 14.61))
    assert transform(Part("U1", "dip-8", at=(0.0, 0.0), rotation=270), (1.0, 0.0)) == (0.0, -1.0)
