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


def _walled(columns):
    """Net A of R1 (pads at x 4.92 and 15.08) in a negotiation where nets of the board's other
    parts have routes laid by hand along whole grid columns: {net: [(x, layer index), ...]}."""
    from router.grid import RoutingGrid
    from router.negotiate import _Negotiation, _pad_groups
    from router.nets import NetRoute
    extra = "".join(f'[[parts]]\nref = "R{k}"\nfootprint = "chip-0805"\nat = [{16.0 * k - 30.0}, 2.0]\n'
                    f'[[nets]]\nname = "{n}"\npins = ["R{k}.1", "R{k}.2"]\n' for k, n in enumerate(columns, 2))
    b = loads_board(head() + PARTS + extra)
    grid = RoutingGrid(b)
    neg = _Negotiation(b, grid, ["A"] + list(columns), _pad_groups(b, grid), bend=400, via=800, jump=2000)
    for n, cols in columns.items():
        r = NetRoute(n)
        for x, l in cols:
            i = int(round(x / grid.pitch)) - grid.i0
            for j in range(grid.ny - 1):
                r.edges.add(((l, j, i), (l, j + 1, i)))
                r.cells.update({(l, j, i), (l, j + 1, i)})
        neg.lay(n, r)
    return neg


def _named(reason: str, net: str) -> str:
    """`reason` with `net` named for the routed copper, as _name_routed words it (the tail of several
    kinds, when there, after a semicolon)."""
    from router.blockage import ROUTED
    tail = " (taking away any one of them opens a way)"
    said = f"{ROUTED} ({net}: taking it away opens a way)"
    if ROUTED + tail in reason:
        return reason.replace(ROUTED + tail, said + "; taking away any one of them opens a way")
    return reason.replace(ROUTED, said)


def test_routed_copper_that_closes_a_way_is_named():
    """The router's own copper closing a way is named by net after routing
    (router.negotiate._name_routed): B's routed copper along x 9.5 on the top layer and C's along
    x 10.5 on the bottom wall A's pads apart (a via between them would stand 0.5 mm from each,
    short of 0.3 + 0.2 + 0.125: common practice, a via needs its radius, the clearance and the
    trace's half width); either taken away opens a way on the other layer, and the one A's way
    through the others crosses is named. B on both layers alone: B is named. The routing is the
    same after naming."""
    from router.negotiate import _name_routed
    from router.blockage import ROUTED
    neg = _walled({"B": [(9.5, 0)], "C": [(10.5, 1)]})
    r = neg.route("A", strict=True)
    assert r.failed.startswith("no way from R1.1 to R1.2: closed by") and ROUTED in r.failed, r.failed
    before = dict(neg.routes)
    # the way through the others crosses one of the two columns: that net is named
    assert _name_routed(neg, "A", r.failed) in [_named(r.failed, n) for n in "BC"]
    assert neg.routes == before
    neg = _walled({"B": [(9.5, 0), (9.5, 1)], "C": [(12.5, 1)]})
    r = neg.route("A", strict=True)
    assert _name_routed(neg, "A", r.failed) == _named(r.failed, "B")


def test_named_routers_and_the_kinds_tail_share_one_pair_of_brackets():
    """When several kinds of obstacle each alone would open the way (router.blockage adds "(taking
    away any one of them opens a way)" after them), the nets named for the routed copper keep their
    own brackets and the tail follows after a semicolon: one pair of brackets after the names."""
    from router.negotiate import _name_routed
    from router.blockage import ROUTED
    neg = _walled({"B": [(9.5, 0), (9.5, 1)], "C": [(12.5, 1)]})
    tail = " (taking away any one of them opens a way)"
    reason = "no way from R1.1 to R1.2: closed by keepout 1 and " + ROUTED + tail
    assert _name_routed(neg, "A", reason) == ("no way from R1.1 to R1.2: closed by keepout 1 and " + ROUTED
                                               + " (B: taking it away opens a way); taking away any one of them"
                                               " opens a way")
