"""A net that finds no way names the obstacle that closes it: a keepout, the board edge, a
non-plated hole, or a named net's copper. Each board is built here so that exactly one kind of
obstacle stands across the way; the geometry is checked with shapely (outside the router) so
that the test knows the cause independently: the obstacle really spans the way.
"""
import pytest
from shapely.geometry import LineString, Polygon, box

from router.boardfile import loads_board
from router.geometry import outline_polygon
from router.negotiate import route_board

PARTS = """[[parts]]
ref = "R1"
footprint = "axial-10.16"
at = [10.0, 10.0]
[[nets]]
name = "A"
pins = ["R1.1", "R1.2"]
"""
# R1's pads: (4.92, 10) and (15.08, 10), round 1.8 mm, drill 0.9.


def head(size="size = [20.0, 20.0]"):
    return f'format = 1\n[board]\nname = "cut"\n{size}\ncopper_layers = 2\n'


def reason(text):
    b = loads_board(text)
    r = route_board(b)
    assert "A" in r.failed, "the net must fail on this board"
    return b, r.failed["A"]


def test_cut_by_a_keepout():
    ko = '[[keepouts]]\nrect = [9.0, 0.0, 11.0, 20.0]\n'                 # full height, every layer
    b, why = reason(head() + PARTS + ko)
    assert box(9, 0, 11, 20).contains(LineString([(10, 0.0001), (10, 19.9999)]))
    assert why == "no way from R1.1 to R1.2: closed by keepout 1", why
    assert "other copper" not in why


def test_cut_by_the_board_edge():
    # a dumbbell: two 8 mm squares joined by a neck 1.0 mm high; a 0.25 mm trace needs
    # 0.25 + 2 x 0.5 = 1.25 mm of board across the neck (edge_clearance 0.5 on both sides)
    outline = ("outline = [[0, 6], [8, 6], [8, 9.5], [12, 9.5], [12, 6], [20, 6], [20, 14], [12, 14], "
               "[12, 10.5], [8, 10.5], [8, 14], [0, 14]]")
    text = head(outline) + PARTS.replace("axial-10.16", "axial-12.7")     # pads at x 3.65 and 16.35
    b = loads_board(text)
    neck = outline_polygon(b).intersection(box(8.5, 0, 11.5, 20))
    assert neck.bounds[3] - neck.bounds[1] == pytest.approx(1.0)            # shapely: the neck is 1 mm
    b, why = reason(text)
    assert why.startswith("no way from R1.") and why.endswith("closed by the board edge (0.5 mm edge clearance)"), why


def test_cut_by_a_non_plated_hole():
    # a neck 4.4 mm high with a 3.2 mm hole in its middle: 0.6 mm beside the hole, where a trace
    # needs 0.125 + 0.5 from the hole wall: the hole closes the way, the edge alone would not
    outline = ("outline = [[0, 4], [8, 4], [8, 7.8], [12, 7.8], [12, 4], [20, 4], [20, 16], [12, 16], "
               "[12, 12.2], [8, 12.2], [8, 16], [0, 16]]")
    hole = '[[parts]]\nref = "H1"\nfootprint = "hole-3.2"\nat = [10.0, 10.0]\n'
    text = head(outline) + PARTS.replace("axial-10.16", "axial-15.24") + hole     # pads at x 2.38 and 17.62
    b = loads_board(text)
    neck = outline_polygon(b).intersection(box(8.5, 0, 11.5, 20))
    assert neck.bounds[3] - neck.bounds[1] == pytest.approx(4.4)
    b, why = reason(text)
    assert why.endswith("closed by a non-plated hole (0.5 mm clearance)"), why


def test_cut_by_a_named_nets_copper():
    # net B's fixed traces run the full height on both layers between R1's pads
    wall = ""
    for layer in ("top", "bottom"):
        wall += (f'[[traces]]\nnet = "B"\nlayer = "{layer}"\nwidth = 0.5\npoints = [[10.0, 0.5], [10.0, 19.5]]\n'
                 'fixed = true\n')
    other = '[[parts]]\nref = "R2"\nfootprint = "chip-0805"\nat = [10.0, 19.0]\nrotation = 90\n' \
            '[[nets]]\nname = "B"\npins = ["R2.1", "R2.2"]\n'
    b, why = reason(head() + PARTS + other + wall)
    assert "closed by copper of net B" in why, why


def test_a_pad_walled_in_names_what_walls_it():
    # a keepout over R1.2's whole pad and two pitches around it: no grid point near the pad is open
    ko = '[[keepouts]]\nrect = [13.5, 8.5, 16.7, 11.5]\n'
    assert box(13.5, 8.5, 16.7, 11.5).contains(box(15.08 - 0.9 - 0.5, 10 - 0.9 - 0.5, 15.08 + 0.9 + 0.5, 10 + 1.4))
    b, why = reason(head() + PARTS + ko)
    assert why == "pad R1.2 has no open grid point within reach for a 0.25 mm trace: closed by keepout 1", why
