"""`RoutingGrid.index_box`, the one place a box in mm becomes grid index ranges (used by the grid's
obstacle windows, escape exits, blockage, the negotiation's search windows and its nets near a pad).
Checked against a brute-force numpy scan of every grid point (an independent computation)."""
from __future__ import annotations

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from router.grid import RoutingGrid
from router.realgen import real_board
from router.units import TOL

GRID = RoutingGrid(real_board(0, 30))


def _near(grid, box, grow):
    """Boolean (ny, nx): grid points within `grow` mm of `box` along each axis (a square reach)."""
    xs = (np.arange(grid.nx) + grid.i0) * grid.pitch
    ys = (np.arange(grid.ny) + grid.j0) * grid.pitch
    x0, y0, x1, y1 = box
    gx = np.maximum(np.maximum(x0 - xs, 0.0), xs - x1)
    gy = np.maximum(np.maximum(y0 - ys, 0.0), ys - y1)
    return (gy[:, None] <= grow + TOL) & (gx[None, :] <= grow + TOL)


coord = st.floats(-20.0, 120.0, allow_nan=False)


@settings(max_examples=200, deadline=None)
@given(coord, coord, st.floats(0.0, 30.0), st.floats(0.0, 30.0), st.floats(0.0, 5.0),
       st.integers(0, 4))
def test_the_ranges_hold_every_near_point_and_no_far_one(x, y, w, h, grow, cells):
    grid = GRID
    box = (x, y, x + w, y + h)
    ia, ib, ja, jb = grid.index_box(box, grow, cells=cells)
    assert 0 <= ia and 0 <= ja and ib <= grid.nx and jb <= grid.ny
    inside = np.zeros((grid.ny, grid.nx), bool)
    inside[ja:jb, ia:ib] = True
    near = _near(grid, box, grow)
    assert not (near & ~inside).any()            # every point within reach is in the ranges
    # and nothing beyond reach + `cells` + one step of rounding on each side
    assert not (inside & ~_near(grid, box, grow + (cells + 1) * grid.pitch)).any()


def test_a_box_off_the_grid_gives_empty_ranges():
    grid = GRID
    ia, ib, ja, jb = grid.index_box((-500.0, -500.0, -400.0, -400.0), 1.0)
    assert ia >= ib or ja >= jb
