"""What the router keeps between routes gives what a fresh computation gives (common practice for a
cache: the kept answer must equal the answer worked out again from nothing):

- segment_clear's answer against the fixed copper, kept per segment on the grid;
- the soft items of each net as arrays for exit_conflicts, kept while the net's items are the same;
- the cost maxima of a search space, kept through raised cells (and with hist's largest entry given);
- a net's own openings, compared near each own obstacle only, against the whole grid compared.
"""
from __future__ import annotations

import random

import numpy as np

from router.grid import RoutingGrid
from router.realgen import real_board
from router.search import STEP


def test_segment_clear_kept_equals_fresh():
    b = real_board(2, 30)
    grid, fresh = RoutingGrid(b), RoutingGrid(b)
    rnd = random.Random(5)
    x0, y0, x1, y1 = grid.xs[0], grid.ys[0], grid.xs[-1], grid.ys[-1]
    items = grid.soft_items("GND", [((x0 + 5.0, y0 + 5.0), (x1 - 5.0, y0 + 5.0), 0, 0.5)], [], [])
    others = grid.obstacle_arrays(items, grid.profile_of("S1"))
    nets = [n.name for n in b.nets][:6]
    seen = {True: 0, False: 0}
    segs = []
    for _ in range(300):
        a = (round(rnd.uniform(x0, x1), 3), round(rnd.uniform(y0, y1), 3))
        c = (round(a[0] + rnd.choice([0.0, rnd.uniform(-2, 2)]), 3), a[1]) if rnd.random() < 0.5 else \
            (a[0], round(a[1] + rnd.uniform(-2, 2), 3))
        segs.append((rnd.choice(nets), a, c, rnd.randrange(2), rnd.choice([0.15, 0.25, 0.6])))
    for rounds in range(2):                          # the second time every answer is a kept one
        for net, a, c, layer, width in segs:
            for oth in (None, others):
                got = grid.segment_clear(net, a, c, layer, width, oth)
                want = fresh.segment_clear(net, a, c, layer, width, oth)
                fresh.__dict__.pop("_fixed_clear", None)
                assert got == want, (net, a, c, layer, width)
                seen[got] += 1
    assert seen[True] > 50 and seen[False] > 50


def test_exit_conflicts_kept_rows_follow_the_items():
    from router.escape import exit_conflicts
    from router.nets import NetRoute
    b = real_board(2, 30)
    grid = RoutingGrid(b)
    rng = np.random.default_rng(3)
    x0, y0, x1, y1 = grid.xs[0] + 2, grid.ys[0] + 2, grid.xs[-1] - 2, grid.ys[-1] - 2
    routes, soft = {}, {}
    clashes = 0
    for k in range(40):
        net = f"N{k}"
        x, y = round(float(rng.uniform(x0, x1)), 3), round(float(rng.uniform(y0, y1)), 3)
        stubs = [((x, y), (round(x + 0.3, 3), y), k % 2)]
        routes[net] = NetRoute(net, stubs=stubs)
        soft[net] = grid.soft_items(net, [(p, q, l, 0.25) for p, q, l in stubs], [], [])
    for step in range(4):
        got = exit_conflicts(grid, routes, soft)
        fresh = RoutingGrid(b)
        want = exit_conflicts(fresh, routes, soft)
        assert got[0] == want[0]
        assert [c.tolist() for c in got[1]] == [c.tolist() for c in want[1]]
        clashes += len(got[0])
        for k in range(step, 40, 4):                 # some nets' copper moved onto others' exits
            net, other = f"N{k}", f"N{(k * 7 + step) % 40}"
            (p, q, l), = routes[other].stubs
            soft[net] = grid.soft_items(net, [((p[0], p[1] + 0.3), (q[0], q[1] + 0.3), l, 0.25)], [], [])
    assert clashes > 0


def test_cost_maxima_kept_through_raises_equal_fresh():
    """LazyCosts.maxima keeps its parts and add_cell's largest entry through SearchSpace.raise_cell:
    the same bounds as measured on the whole arrays afresh after every raise."""
    from router.search import LazyCosts, SearchSpace
    rng = np.random.default_rng(11)
    for case in range(24):
        L, ny, nx_ = 2, int(rng.integers(3, 9)), int(rng.integers(3, 9))
        soft = rng.integers(0, 4, (L, ny, nx_)).astype(np.int32)
        hist = (rng.integers(0, 5, (L, ny, nx_)) * STEP).astype(np.int64)
        soft_via = rng.integers(0, 3, (ny, nx_)).astype(np.int32)
        given = case % 3 != 0
        add_cell = rng.integers(0, 900, (L, ny, nx_)).astype(np.int64) if given else None
        add_hole = rng.integers(0, 900, (ny, nx_)).astype(np.int64) if given else None
        crowd = rng.integers(0, 3, (ny, nx_)).astype(np.int32) if case % 2 else None
        lz = LazyCosts(soft, hist, soft_via, hist.max(axis=0), float(rng.uniform(10, 5000)), strict=case % 4 == 0,
                       crowd=crowd, crowd_price=1, add_cell=add_cell, add_hole=add_hole, cap=int(rng.choice([3000, 2**24])))
        ones = np.ones((L, ny, nx_), np.uint8)
        sp = SearchSpace(ones, ones, ones, np.ones((ny, nx_), np.uint8), None, lazy=lz)
        for k in range(6):
            if k % 2 == 0:
                sp.extra_max()               # asked before and between raises
            c = (int(rng.integers(0, L)), int(rng.integers(0, ny)), int(rng.integers(0, nx_)))
            sp.raise_cell(c, int(rng.integers(0, 3000)))
            fresh = LazyCosts(soft, hist, soft_via, hist.max(axis=0), lz.pf, strict=lz.strict, crowd=crowd,
                              crowd_price=1, add_cell=lz.add_cell.copy(), add_hole=lz.add_hole.copy(), cap=lz.cap)
            assert lz.maxima() == fresh.maxima()
            told = LazyCosts(soft, hist, soft_via, hist.max(axis=0), lz.pf, strict=lz.strict, crowd=crowd,
                             crowd_price=1, add_cell=lz.add_cell.copy(), add_hole=lz.add_hole.copy(), cap=lz.cap,
                             hist_max=int(hist.max()))       # hist's largest entry given, as the negotiation keeps it
            assert told.maxima() == fresh.maxima()


def test_own_openings_near_each_obstacle_equal_the_whole_grid():
    """NetSpaces._own_open compares the net's space with the class's open places only near each of
    the net's own obstacles: the same places as the whole grids compared (RoutingGrid.space_for)."""
    from router.boardgen import generate_board
    from router.spaces import NetSpaces
    boards = [real_board(2, 30), real_board(0, 30, angled=True),
              generate_board(4, nets=12, size=(30.0, 25.0), layers=1, max_pins=4, offgrid=True, grid=0.5)]
    for b in boards:
        grid = RoutingGrid(b)
        spaces = NetSpaces(grid)
        hard = [a.copy() for a in (grid.hard_cell, grid.hard_h, grid.hard_v, grid.hard_via)]
        for n in b.nets:
            own = grid.own_obstacles(n.name)
            got = spaces._own_open(n.name, own)
            sp = grid.space_for(n.name, None, soft_block=False, own=own)     # from copies of the counts
            base = spaces._class_open(grid.profile_of(n.name).index)
            holes = sp.jump_ok if grid.one_layer else sp.via_ok
            want = [np.flatnonzero(new.ravel() != old.ravel())
                    for new, old in zip((sp.open_cell, sp.open_h, sp.open_v, holes), base)]
            assert all(np.array_equal(x, y) for x, y in zip(got, want)), (b.name, n.name)
            assert any(len(x) for x in got)
        # the class's counts, changed in place while a net's openings are found, are as they were
        assert all(np.array_equal(a, b_) for a, b_ in zip(hard, (grid.hard_cell, grid.hard_h, grid.hard_v,
                                                                  grid.hard_via)))
