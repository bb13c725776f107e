"""Every new built-in family routed completely, with no violation, on a small fan-out board.

The board: the part in the middle, and for each of its pins an EIA 0402 chip in a row facing
that side of the part, 1.0 mm apart, the pin netted to the chip's near pad; an exposed pad
nets to a chip below the part (it can only leave through a via). The contract's default
rules and class (0.25 mm traces, 0.2 mm clearance) on a 0.25 mm grid, two layers: what a maker
gets without tuning anything. One member of each family; ``router.check`` (shapely geometry)
is the judge.
"""
import math

import pytest

from router.boardfile import dumps_board, loads_board
from router.check import check
from router.footprints import builtin_footprint
from router.negotiate import route_board

GRID = 0.25


def fan_board(name: str, grid: float = GRID, spacing: float = 1.0, gap: float = 3.0) -> str:
    fp = builtin_footprint(name)
    ext_x = max(max(abs(p.offset[0]) + p.size[0] / 2 for p in fp.pads), fp.body[0] / 2)
    ext_y = max(max(abs(p.offset[1]) + p.size[1] / 2 for p in fp.pads), fp.body[1] / 2)
    sides = {"S": [], "E": [], "N": [], "W": []}
    centre = []
    seen = set()
    for p in fp.pads:
        if p.pin in seen:
            continue
        seen.add(p.pin)
        x, y = p.offset
        if x == 0 and y == 0 and len(fp.pads) > 2:
            centre.append(p.pin)
        elif abs(y) / ext_y >= abs(x) / ext_x:
            sides["S" if y < 0 else "N"].append((x, p.pin))
        else:
            sides["E" if x > 0 else "W"].append((y, p.pin))
    span = max(len(v) for v in sides.values()) * spacing
    w = math.ceil(2 * (max(ext_x, span / 2) + gap + 3.0))
    h = math.ceil(2 * (max(ext_y, span / 2) + gap + 3.0))
    cx, cy = w / 2, h / 2
    txt = (f'format = 1\n[board]\nname = "fan-{name}"\nsize = [{w}, {h}]\n[rules]\ngrid = {grid}\n'
           f'[[parts]]\nref = "U1"\nfootprint = "{name}"\nat = [{cx}, {cy}]\n')
    nets = []
    for side, items in sides.items():
        items.sort()
        for m, (_, pin) in enumerate(items):
            k = len(nets) + 1
            u = (m - (len(items) - 1) / 2) * spacing
            at, rot, near = {"S": ((cx + u, cy - ext_y - gap), 90, 2), "N": ((cx + u, cy + ext_y + gap), 90, 1),
                             "E": ((cx + ext_x + gap, cy + u), 0, 1), "W": ((cx - ext_x - gap, cy + u), 0, 2)}[side]
            txt += f'[[parts]]\nref = "R{k}"\nfootprint = "chip-0402"\nat = [{at[0]:.3f}, {at[1]:.3f}]\nrotation = {rot}\n'
            nets.append((f"U1.{pin}", f"R{k}.{near}"))
    for pin in centre:
        k = len(nets) + 1
        txt += f'[[parts]]\nref = "R{k}"\nfootprint = "chip-0402"\nat = [{cx}, {cy - ext_y - gap - 2.0}]\n'
        nets.append((f"U1.{pin}", f"R{k}.1"))
    for k, (a, b) in enumerate(nets):
        txt += f'[[nets]]\nname = "N{k + 1}"\npins = ["{a}", "{b}"]\n'
    return txt


FAMILY_MEMBERS = [
    "tssop-14", "ssop-16", "qfp-32-0.8", "qfp-48-0.5", "qfn-32-0.5", "qfn-32-0.5-ep",
    "sot-23-5", "sot-23-6", "sot-223", "sot-89", "to-92", "sod-123", "sod-323",
    "do-214ac", "do-214aa", "do-214ab", "crystal-hc49", "crystal-3225", "switch-6x6", "cap-smd-6.3",
]


@pytest.mark.parametrize("name", FAMILY_MEMBERS)
def test_family_routes_completely_and_clean(name):
    board = loads_board(fan_board(name))
    n_pins = len(builtin_footprint(name).pins())
    assert len(board.nets) == n_pins
    result = route_board(board)
    totals = result.figures["totals"]
    assert result.failed == {}, result.failed
    assert totals["routed"] == totals["nets"] == n_pins
    assert check(result.board) == []
    # the routed board survives the file: written and read back, still clean
    again = loads_board(dumps_board(result.board))
    assert check(again) == []
