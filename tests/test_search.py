"""The A* kernel against hand-worked paths and against networkx on the same state graph.

networkx's Dijkstra (an independent, general-purpose implementation) on the graph
built by :func:`router.search.reference_graph` is the outside reference for
optimality: our cost must equal its shortest-path cost on every random grid.
"""
import networkx as nx
import numpy as np
import pytest

from router.search import MAX_BOXES, STEP, SearchSpace, find_path, path_cost, reference_graph, target_boxes


def space_from(rows, layers=1, via_ok=None, extra=None, **kw):
    """A space from a hand-drawn map: '.' open, '#' blocked; rows listed top (high j) first."""
    grid = np.array([[c == "." for c in r] for r in reversed(rows)], dtype=np.uint8)
    cell = np.repeat(grid[None], layers, axis=0)
    ny, nx_ = grid.shape
    ones = np.ones_like(cell)
    return SearchSpace(cell, ones, ones,
                       np.zeros((ny, nx_), np.uint8) if via_ok is None else via_ok,
                       np.zeros_like(cell, dtype=np.int32) if extra is None else extra, **kw)


def test_straight_line_has_no_bend():
    sp = space_from(["......"])
    p = find_path(sp, [(0, 0, 0)], [(0, 0, 5)], bend=300, via=0)
    assert p.cost == 5 * STEP and p.bends == 0
    assert p.cells.tolist() == [[0, 0, i] for i in range(6)]


def test_detour_around_a_wall_hand_worked():
    # S at lower left, T at lower right, a wall in the middle open only at the top:
    #   row 2: . . . . .
    #   row 1: . . # . .
    #   row 0: S . # . T
    sp = space_from([".....", "..#..", "..#.."])
    p = find_path(sp, [(0, 0, 0)], [(0, 0, 4)], bend=10, via=0)
    # up 2, east 4, down 2 = 8 steps; leaving the source is free, so two bends: at (0, 2) and (4, 2)
    assert p.cost == 8 * STEP + 2 * 10
    assert p.bends == 2
    assert p.cells.tolist() == [[0, 0, 0], [0, 1, 0], [0, 2, 0], [0, 2, 1], [0, 2, 2], [0, 2, 3],
                                [0, 2, 4], [0, 1, 4], [0, 0, 4]]


def test_bend_penalty_prefers_fewer_bends_over_length():
    # two ways round a block: a staircase would have many bends
    sp = space_from(["....", "....", "...."])
    p = find_path(sp, [(0, 0, 0)], [(0, 2, 3)], bend=1000, via=0)
    assert p.bends == 1 and p.cost == 5 * STEP + 1000


def test_blocked_gives_none():
    sp = space_from(["..#.."])
    assert find_path(sp, [(0, 0, 0)], [(0, 0, 4)], bend=1, via=1) is None


def test_source_that_is_a_target():
    sp = space_from(["..."])
    p = find_path(sp, [(0, 0, 1)], [(0, 0, 1)], bend=1, via=1)
    assert p.cost == 0 and len(p.cells) == 1


def test_via_crosses_a_wall_straight_on():
    # layer 0 has a wall; layer 1 is open; vias allowed everywhere: down, along, up, no turn
    cell = np.ones((2, 1, 5), np.uint8)
    cell[0, 0, 2] = 0
    ones = np.ones_like(cell)
    sp = SearchSpace(cell, ones, ones, np.ones((1, 5), np.uint8), np.zeros_like(cell, dtype=np.int32))
    p = find_path(sp, [(0, 0, 0)], [(0, 0, 4)], bend=1, via=250)
    assert p.vias == 2 and p.bends == 0 and p.cost == 4 * STEP + 2 * 250


def _l_through_a_via():
    # hand drawn: layer 0 open only along row 0, layer 1 only along column 3; the one via place
    # is their meeting cell (0, 3). The only path goes east on layer 0, vias, and north on layer 1
    cell = np.zeros((2, 4, 4), np.uint8)
    cell[0, 0, :] = 1
    cell[1, :, 3] = 1
    ones = np.ones_like(cell)
    via_ok = np.zeros((4, 4), np.uint8)
    via_ok[0, 3] = 1
    return SearchSpace(cell, ones, ones, via_ok, np.zeros_like(cell, dtype=np.int32))


def test_turn_at_a_via_costs_a_bend():
    # the contract counts a turn at a via as a bend: 6 steps, one via, one bend (hand counted)
    p = find_path(_l_through_a_via(), [(0, 0, 0)], [(1, 3, 3)], bend=400, via=250)
    assert (p.vias, p.bends) == (1, 1) and p.cost == 6 * STEP + 250 + 400
    assert path_cost(_l_through_a_via(), p.cells, bend=400, via=250) == p.cost


def test_a_via_does_not_hide_a_corner():
    # an open two-layer 5 x 5 grid: the L from (0, 0) to (4, 4) costs 8 steps and one bend on one
    # layer; spending a via at the corner cannot make it cheaper, so none is spent even when a
    # bend costs ten times a via
    cell = np.ones((2, 5, 5), np.uint8)
    sp = SearchSpace(cell, cell, cell, np.ones((5, 5), np.uint8), np.zeros_like(cell, dtype=np.int32))
    p = find_path(sp, [(0, 0, 0)], [(0, 4, 4), (1, 4, 4)], bend=1000, via=100)
    assert (p.vias, p.bends, p.cost) == (0, 1, 8 * STEP + 1000)


def test_turn_at_a_jumper_end_costs_a_bend():
    # one layer: row 1 open on both sides of a wall at column 2, the target above the far side:
    #   row 2: # # # . .
    #   row 1: S . # . .
    #   row 0: # # # # #
    sp = space_from(["###.T".replace("T", "."), "..#..", "#####"],
                    jump_ok=np.ones((3, 5), np.uint8), wire_block=np.zeros((3, 5), np.uint8),
                    jump_cells=np.array([2], np.int64))
    # a jumper east from (1, 1) to (1, 3), then north one step to (2, 3): the wire's heading is
    # east, so the step north is a turn at the jumper end, one bend (hand counted)
    p = find_path(sp, [(0, 1, 0)], [(0, 2, 3)], bend=300, via=0, jump=500)
    assert (p.jumpers, p.bends) == (1, 1)
    assert p.cost == STEP + (500 + 2 * STEP) + STEP + 300
    # arriving across the wire's heading costs a bend too: come up column 0, jump east
    sp2 = space_from(["..#..", ".##..", ".####"],
                     jump_ok=np.ones((3, 5), np.uint8), wire_block=np.zeros((3, 5), np.uint8),
                     jump_cells=np.array([3], np.int64))
    p = find_path(sp2, [(0, 0, 0)], [(0, 2, 4)], bend=300, via=0, jump=500)
    assert (p.jumpers, p.bends) == (1, 1) and p.cost == 2 * STEP + 300 + 500 + 3 * STEP + STEP


def test_order_changes_ties_not_costs():
    # an open grid has many equal L and staircase-free paths; the step order picks among them
    sp = space_from(["......"] * 6)
    found = set()
    for order in [(0, 1, 2, 3), (1, 0, 3, 2), (2, 3, 0, 1), (3, 2, 1, 0)]:
        p = find_path(sp, [(0, 0, 0)], [(0, 5, 5)], bend=50, via=0, order=order)
        assert p.cost == 10 * STEP + 50
        found.add(tuple(map(tuple, p.cells.tolist())))
    assert len(found) == 2          # east-then-north and north-then-east
    with pytest.raises(ValueError):
        find_path(sp, [(0, 0, 0)], [(0, 5, 5)], bend=50, via=0, order=(0, 0, 1, 2))


def test_jumper_hops_over_a_wall_on_one_layer():
    sp = space_from(["..#..", "..#..", "..#.."],
                    jump_ok=np.ones((3, 5), np.uint8), wire_block=np.zeros((3, 5), np.uint8),
                    jump_cells=np.array([2], np.int64))
    p = find_path(sp, [(0, 1, 0)], [(0, 1, 4)], bend=1, via=0, jump=500)
    assert p.jumpers == 1 and p.cost == 4 * STEP + 500
    # a wire may not pass over a blocked wire cell (a part body)
    wb = np.zeros((3, 5), np.uint8)
    wb[:, 2] = 1
    sp2 = space_from(["..#..", "..#..", "..#.."], jump_ok=np.ones((3, 5), np.uint8), wire_block=wb,
                     jump_cells=np.array([2], np.int64))
    assert find_path(sp2, [(0, 1, 0)], [(0, 1, 4)], bend=1, via=0, jump=500) is None


def test_no_jumper_straight_off_another():
    """Two jumpers back to back would put two holes on one point: the search needs a step between."""
    ok = dict(jump_ok=np.ones((1, 5), np.uint8), wire_block=np.zeros((1, 5), np.uint8),
              jump_cells=np.array([2], np.int64))
    assert find_path(space_from([".#.#."], **ok), [(0, 0, 0)], [(0, 0, 4)], bend=1, via=0, jump=500) is None
    ok6 = dict(jump_ok=np.ones((1, 6), np.uint8), wire_block=np.zeros((1, 6), np.uint8),
               jump_cells=np.array([2], np.int64))
    p = find_path(space_from([".#..#."], **ok6), [(0, 0, 0)], [(0, 0, 5)], bend=1, via=0, jump=500)
    assert p.jumpers == 2 and p.cost == 5 * STEP + 2 * 500


def test_path_cost_agrees_with_search():
    rng = np.random.default_rng(5)
    sp = random_space(rng, 2, 12, 15)
    p = find_path(sp, [(0, 0, 0)], [(1, 11, 14)], bend=70, via=330)
    if p is not None:
        assert path_cost(sp, p.cells, bend=70, via=330) == p.cost


def random_space(rng, L, ny, nx_, density=0.25, jumpers=False):
    cell = (rng.random((L, ny, nx_)) > density).astype(np.uint8)
    oh = (rng.random((L, ny, nx_)) > 0.1).astype(np.uint8)
    ov = (rng.random((L, ny, nx_)) > 0.1).astype(np.uint8)
    via_ok = (rng.random((ny, nx_)) > 0.5).astype(np.uint8) if L == 2 else np.zeros((ny, nx_), np.uint8)
    extra = np.where(rng.random((L, ny, nx_)) > 0.8, rng.integers(0, 400, (L, ny, nx_)), 0).astype(np.int32)
    kw = {}
    if jumpers:
        kw = dict(jump_ok=(rng.random((ny, nx_)) > 0.3).astype(np.uint8),
                  wire_block=(rng.random((ny, nx_)) > 0.85).astype(np.uint8),
                  jump_cells=np.array([3, 5], np.int64))
    kw["hole_extra"] = np.where(rng.random((ny, nx_)) > 0.7, rng.integers(0, 600, (ny, nx_)), 0).astype(np.int32)
    return SearchSpace(cell, oh, ov, via_ok, extra, **kw)


def _search_and_networkx(sp, src, tgt, **pen):
    """Our search's path and networkx's Dijkstra cost on the same state graph (None: no path);
    asserts that both find a path or neither does, and at the same cost."""
    p = find_path(sp, src, tgt, **pen)
    try:
        ref = nx.dijkstra_path_length(reference_graph(sp, src, tgt, **pen), "S", "T")
    except (nx.NetworkXNoPath, nx.NodeNotFound):
        ref = None
    if ref is None:
        assert p is None
    else:
        assert p is not None and p.cost == ref
    return p, ref


@pytest.mark.parametrize("seed", range(60))
def test_optimal_cost_equals_networkx_dijkstra(seed):
    rng = np.random.default_rng(seed)
    L = 1 + seed % 2
    jumpers = (L == 1 and seed % 4 == 1)
    ny, nx_ = int(rng.integers(4, 14)), int(rng.integers(4, 14))
    sp = random_space(rng, L, ny, nx_, jumpers=jumpers)
    def cells(n):
        return np.stack([rng.integers(0, L, n), rng.integers(0, ny, n), rng.integers(0, nx_, n)], axis=1)
    src, tgt = cells(int(rng.integers(1, 4))), cells(int(rng.integers(1, 4)))
    bend, via, jump = int(rng.integers(0, 500)), int(rng.integers(0, 900)), int(rng.integers(0, 900))
    p, ref = _search_and_networkx(sp, src, tgt, bend=bend, via=via, jump=jump)
    if ref is not None:
        assert path_cost(sp, p.cells, bend=bend, via=via, jump=jump) == ref
        assert p.cells[0].tolist() in src.tolist() and p.cells[-1].tolist() in tgt.tolist()


def test_target_boxes_hold_every_target_and_are_few():
    rng = np.random.default_rng(5)
    for n in (1, 3, 40, 400):
        t = np.stack([rng.integers(0, 2, n), rng.integers(0, 300, n), rng.integers(0, 500, n)], axis=1)
        boxes = target_boxes(t)
        assert 1 <= len(boxes) <= MAX_BOXES
        inside = ((t[:, None, 2] >= boxes[None, :, 0]) & (t[:, None, 2] <= boxes[None, :, 2])
                  & (t[:, None, 1] >= boxes[None, :, 1]) & (t[:, None, 1] <= boxes[None, :, 3]))
        assert inside.any(axis=1).all()
    # two clusters far apart keep a box each (not one box spanning the gap between them)
    t = np.array([(0, 2, 2), (0, 3, 3), (0, 50, 60), (0, 51, 61)])
    assert sorted(target_boxes(t).tolist()) == [[2, 2, 3, 3], [60, 50, 61, 51]]
    # within ONE_BOX_SPAN: one box, the targets' bounds
    t = np.array([(0, 2, 2), (0, 3, 3), (0, 20, 30), (0, 21, 31)])
    assert target_boxes(t).tolist() == [[2, 2, 31, 21]]


def _boxes_by_hand(t, most=MAX_BOXES, gap=8):
    """target_boxes' rule written plainly (lists and dicts; common practice): tile bounds, then the
    first nearest pair (row by row) joined while nearer than `gap` or more than `most` boxes."""
    xs, ys = [int(v) for v in t[:, 2]], [int(v) for v in t[:, 1]]
    if (max(xs) - min(xs)) + (max(ys) - min(ys)) <= 64:
        return [[min(xs), min(ys), max(xs), max(ys)]]
    tile = gap
    while len({(y // tile, x // tile) for x, y in zip(xs, ys)}) > 64:
        tile *= 2
    tiles = {}
    for x, y in zip(xs, ys):
        b = tiles.setdefault((y // tile, x // tile), [x, y, x, y])
        b[:] = [min(b[0], x), min(b[1], y), max(b[2], x), max(b[3], y)]
    boxes = [tiles[k] for k in sorted(tiles)]
    while len(boxes) > 1:
        def gap_of(p, q):
            return max(0, p[0] - q[2], q[0] - p[2]) + max(0, p[1] - q[3], q[1] - p[3])
        a, b = min(((a, b) for a in range(len(boxes)) for b in range(len(boxes)) if a != b),
                   key=lambda ab: gap_of(boxes[ab[0]], boxes[ab[1]]))
        if gap_of(boxes[a], boxes[b]) >= gap and len(boxes) <= most:
            break
        p, q = boxes[a], boxes[b]
        boxes[a] = [min(p[0], q[0]), min(p[1], q[1]), max(p[2], q[2]), max(p[3], q[3])]
        del boxes[b]
    return boxes


def test_target_boxes_follow_the_rule_written_plainly():
    rng = np.random.default_rng(9)
    for k in range(150):
        n = int(rng.integers(1, 300))
        t = np.stack([rng.integers(0, 2, n), rng.integers(0, 400, n), rng.integers(0, 400, n)], axis=1)
        if k % 2:                        # clusters far apart
            c = rng.integers(0, 400, (5, 2))
            w = rng.integers(0, 5, n)
            t[:, 1], t[:, 2] = c[w, 0] + rng.integers(0, 7, n), c[w, 1] + rng.integers(0, 7, n)
        assert target_boxes(t).tolist() == _boxes_by_hand(t)


@pytest.mark.parametrize("seed", range(12))
def test_clustered_targets_cost_equals_networkx_dijkstra(seed):
    """Targets in clusters far apart (the heuristic is the least over several boxes, and with
    more clusters than MAX_BOXES the boxes are merged): the cost is still networkx's."""
    rng = np.random.default_rng(100 + seed)
    L = 1 + seed % 2
    ny, nx_ = int(rng.integers(36, 56)), int(rng.integers(36, 56))
    sp = random_space(rng, L, ny, nx_, density=0.2)
    k = int(rng.integers(2, 14))
    centres = np.stack([rng.integers(0, ny, k), rng.integers(0, nx_, k)], axis=1)
    tgt = []
    for cj, ci in centres:
        for _ in range(3):
            tgt.append((int(rng.integers(0, L)), int(np.clip(cj + rng.integers(-1, 2), 0, ny - 1)),
                        int(np.clip(ci + rng.integers(-1, 2), 0, nx_ - 1))))
    tgt = np.array(tgt)
    assert len(target_boxes(tgt)) > 1 or (np.ptp(tgt[:, 1]) + np.ptp(tgt[:, 2])) <= 64
    src = np.stack([rng.integers(0, L, 5), rng.integers(0, ny, 5), rng.integers(0, nx_, 5)], axis=1)
    bend, via = int(rng.integers(0, 500)), int(rng.integers(0, 900))
    _search_and_networkx(sp, src, tgt, bend=bend, via=via)


def test_far_clusters_search_less_than_one_box():
    """A target cluster near the source and one far off: with a box per cluster the search
    stays near the source; one box over both would make every state inside it look free."""
    sp = space_from(["." * 120] * 120)
    src = [(0, 60, 60)]
    tgt = [(0, 60, 64), (0, 119, 119), (0, 0, 0)]
    p = find_path(sp, src, tgt, bend=50, via=0)
    # hand-worked: a straight run of four steps east; the states on it and the first steps off it
    assert p.cost == 4 * STEP and p.expanded <= 12


def _independent_graph(sp, src, tgt, bend, via):
    """The pricing written out again, apart from router.search, for two-layer grids without
    jumpers: a node is (layer, j, i, heading or None); a step pays STEP, its cell's extra and a
    bend when the heading changes; a via keeps the heading and pays via, the cell's extra on the
    other layer and the hole's extra; no step back against the heading."""
    L, ny, nx_ = sp.shape
    G = nx.DiGraph()
    moves = {"E": (0, 1), "N": (1, 0), "W": (0, -1), "S": (-1, 0)}
    back = {"E": "W", "W": "E", "N": "S", "S": "N"}
    for l in range(L):
        for j in range(ny):
            for i in range(nx_):
                for h in (None, "E", "N", "W", "S"):
                    for m, (dj, di) in moves.items():
                        if h is not None and m == back[h]:
                            continue
                        j2, i2 = j + dj, i + di
                        if not (0 <= j2 < ny and 0 <= i2 < nx_) or not sp.open_cell[l, j2, i2]:
                            continue
                        step_open = {"E": sp.open_h[l, j, i], "W": sp.open_h[l, j, i2] if i2 >= 0 else 0,
                                     "N": sp.open_v[l, j, i], "S": sp.open_v[l, j2, i] if j2 >= 0 else 0}[m]
                        if not step_open:
                            continue
                        G.add_edge((l, j, i, h), (l, j2, i2, m),
                                   weight=STEP + int(sp.extra[l, j2, i2]) + (bend if h not in (None, m) else 0))
                    if L == 2 and sp.via_ok[j, i] and sp.open_cell[1 - l, j, i]:
                        G.add_edge((l, j, i, h), (1 - l, j, i, h),
                                   weight=via + int(sp.extra[1 - l, j, i]) + int(sp.hole_extra[j, i]))
    for l, j, i in src:
        G.add_edge("S", (int(l), int(j), int(i), None), weight=0)
    for l, j, i in tgt:
        for h in (None, "E", "N", "W", "S"):
            G.add_edge((int(l), int(j), int(i), h), "T", weight=0)
    return G


@pytest.mark.parametrize("seed", range(30))
def test_via_pricing_against_an_independent_networkx_graph(seed):
    # networkx Dijkstra on a graph built in this file from the rule itself (a via keeps the
    # heading; a turn after it is a bend): the same optimal cost as our A*, on small two-layer grids
    rng = np.random.default_rng(700 + seed)
    ny, nx_ = int(rng.integers(3, 9)), int(rng.integers(3, 9))
    sp = random_space(rng, 2, ny, nx_)
    src = np.stack([rng.integers(0, 2, 2), rng.integers(0, ny, 2), rng.integers(0, nx_, 2)], axis=1)
    tgt = np.stack([rng.integers(0, 2, 2), rng.integers(0, ny, 2), rng.integers(0, nx_, 2)], axis=1)
    bend, via = int(rng.integers(0, 1500)), int(rng.integers(0, 600))
    p = find_path(sp, src, tgt, bend=bend, via=via)
    G = _independent_graph(sp, src, tgt, bend, via)
    try:
        ref = nx.dijkstra_path_length(G, "S", "T")
    except (nx.NetworkXNoPath, nx.NodeNotFound):
        ref = None
    assert (p is None) == (ref is None)
    if p is not None:
        assert p.cost == ref
        assert path_cost(sp, p.cells, bend=bend, via=via) == ref


def test_deterministic():
    rng = np.random.default_rng(1)
    sp = random_space(rng, 2, 30, 30, density=0.2)
    a = find_path(sp, [(0, 0, 0)], [(1, 29, 29)], bend=200, via=500)
    b = find_path(sp, [(0, 0, 0)], [(1, 29, 29)], bend=200, via=500)
    assert (a is None and b is None) or (a.cells.tolist() == b.cells.tolist() and a.cost == b.cost)


def test_bad_costs_rejected():
    sp = space_from(["..."])
    with pytest.raises(ValueError):
        find_path(sp, [(0, 0, 0)], [(0, 0, 2)], bend=-1, via=0)
    with pytest.raises(ValueError):
        find_path(sp, [(0, 0, 9)], [(0, 0, 2)], bend=1, via=0)


def _random_case(rng, L: int, density: float):
    """A random space of 6 to 39 cells a side, two sources and 1 to 11 targets."""
    ny, nx_ = int(rng.integers(6, 40)), int(rng.integers(6, 40))
    sp = random_space(rng, L, ny, nx_, density=density)
    src = np.stack([rng.integers(0, L, 2), rng.integers(0, ny, 2), rng.integers(0, nx_, 2)], axis=1)
    k = int(rng.integers(1, 12))
    tgt = np.stack([rng.integers(0, L, k), rng.integers(0, ny, k), rng.integers(0, nx_, k)], axis=1)
    return sp, src, tgt


@pytest.mark.parametrize("seed", range(40))
def test_bound_keeps_the_path_or_says_over(seed):
    """find_path's ``bound``: at or above networkx's Dijkstra cost (the outside reference) the
    same path as without it; below it OVER_BOUND (false, like None); no path at all stays None
    when nothing was left out for the bound."""
    from router.search import OVER_BOUND
    rng = np.random.default_rng(500 + seed)
    L = 1 + seed % 2
    sp, src, tgt = _random_case(rng, L, 0.25)
    bend, via = int(rng.integers(0, 500)), int(rng.integers(0, 900))
    p, ref = _search_and_networkx(sp, src, tgt, bend=bend, via=via)
    if ref is None:
        q = find_path(sp, src, tgt, bend=bend, via=via, bound=10 ** 9)
        assert q is None and not q
        return
    for extra in (0, 1, 250, 10 ** 6):
        q = find_path(sp, src, tgt, bend=bend, via=via, bound=ref + extra)
        assert q is not None and q.cost == ref and q.cells.tolist() == p.cells.tolist()
    if ref > 0:
        q = find_path(sp, src, tgt, bend=bend, via=via, bound=ref - 1)
        assert q is OVER_BOUND and not q


@pytest.mark.parametrize("seed", range(20))
def test_work_limit_keeps_the_path_or_says_over(seed):
    """search.work_limit: with room for every state the search expands, the same path at
    networkx's Dijkstra cost (the outside reference); with less, OVER_BOUND, and the searches
    together expand no more states than the limit allows."""
    from router.search import OVER_BOUND, states_expanded, work_limit
    rng = np.random.default_rng(900 + seed)
    L = 1 + seed % 2
    sp, src, tgt = _random_case(rng, L, 0.25)
    bend, via = int(rng.integers(0, 500)), int(rng.integers(0, 900))
    p, ref = _search_and_networkx(sp, src, tgt, bend=bend, via=via)
    if ref is None or p.expanded < 2:
        return
    s0 = states_expanded()
    with work_limit(s0 + p.expanded):
        q = find_path(sp, src, tgt, bend=bend, via=via)
    assert q and q.cost == ref and q.cells.tolist() == p.cells.tolist()
    s0 = states_expanded()
    with work_limit(s0 + p.expanded // 2):
        q = find_path(sp, src, tgt, bend=bend, via=via)
        assert q is OVER_BOUND and not q
        assert states_expanded() - s0 <= p.expanded // 2
        assert find_path(sp, src, tgt, bend=bend, via=via) is OVER_BOUND     # nothing left
    assert find_path(sp, src, tgt, bend=bend, via=via).cost == ref           # no limit outside


@pytest.mark.parametrize("seed", range(40))
def test_costly_targets_same_path_as_plain(seed):
    """Targets whose every cell is dear to enter (the entry cost goes into the heuristic,
    find_path's two searches): the cost is networkx's Dijkstra's, and the path is the one the
    plain search finds (ENTRY_MIN raised so that it runs)."""
    import router.search as S
    rng = np.random.default_rng(900 + seed)
    L = 1 + seed % 2
    sp, src, tgt = _random_case(rng, L, 0.2)
    extra = sp.extra.copy()
    extra[tgt[:, 0], tgt[:, 1], tgt[:, 2]] += int(rng.integers(1, 5000))
    sp = SearchSpace(sp.open_cell, sp.open_h, sp.open_v, sp.via_ok, extra)
    bend, via = int(rng.integers(0, 500)), int(rng.integers(0, 900))
    p, ref = _search_and_networkx(sp, src, tgt, bend=bend, via=via)
    saved = S.ENTRY_MIN
    S.ENTRY_MIN = 10 ** 9
    try:
        plain = find_path(sp, src, tgt, bend=bend, via=via)
    finally:
        S.ENTRY_MIN = saved
    if ref is None:
        assert plain is None
    else:
        assert plain.cost == p.cost and plain.cells.tolist() == p.cells.tolist()


def _ring(sp, l, j, i, r, gap):
    """Close the cells at Chebyshev distance `r` around (j, i) on layer `l`, but `gap` of them."""
    L, ny, nx_ = sp.shape
    ring = [(jj, ii) for jj in range(j - r, j + r + 1) for ii in range(i - r, i + r + 1)
            if max(abs(jj - j), abs(ii - i)) == r and 0 <= jj < ny and 0 <= ii < nx_]
    for k, (jj, ii) in enumerate(ring):
        if k not in gap:
            sp.open_cell[l, jj, ii] = 0


@pytest.mark.parametrize("seed", range(40))
def test_walled_in_side_equals_networkx(seed):
    # a source or target cell inside a ring of closed cells (sometimes with a gap, sometimes with
    # a via place inside the ring) on a random grid: the flood that finds a side cut off
    # (search._cut_off_sides) must agree with networkx's Dijkstra on the same state graph
    rng = np.random.default_rng(1000 + seed)
    L = 1 + seed % 2
    ny, nx_ = int(rng.integers(9, 16)), int(rng.integers(9, 16))
    sp = random_space(rng, L, ny, nx_, density=0.1)
    j, i = int(rng.integers(2, ny - 2)), int(rng.integers(2, nx_ - 2))
    inside = [(int(rng.integers(0, L)), j, i)]
    for l in range(L):
        _ring(sp, l, j, i, 2, {int(rng.integers(0, 16))} if seed % 3 == 0 else set())
    outside = [(int(rng.integers(0, L)), int(rng.integers(0, ny)), 0), (0, 0, int(rng.integers(0, nx_)))]
    outside = [c for c in outside if max(abs(c[1] - j), abs(c[2] - i)) > 2]
    src, tgt = (inside, outside) if seed % 4 < 2 else (outside, inside)
    _search_and_networkx(sp, np.array(src), np.array(tgt), bend=int(rng.integers(0, 300)),
                         via=int(rng.integers(0, 500)))


def test_walled_in_target_found_by_the_flood():
    # a 60 x 60 open grid, the target walled in by a ring: the flood from the target meets no
    # source within its few cells, so no search runs (hand-drawn; networkx agrees: no path)
    from router import search as S
    sp = space_from(["." * 60] * 60)
    _ring(sp, 0, 30, 30, 2, set())
    src, tgt = np.array([(0, 0, 0)]), np.array([(0, 30, 30)])
    ws = S._workspace(60 * 60 * S.NDIR)

    def cut(t):
        tmask = ws.target_mask((1, 60, 60))
        tmask[t[:, 0], t[:, 1], t[:, 2]] = 1
        try:
            return S._cut_off_sides(sp, src, t, tmask, ws)
        finally:
            tmask[t[:, 0], t[:, 1], t[:, 2]] = 0
    assert cut(tgt)
    assert not cut(np.array([(0, 59, 59)]))
    _search_and_networkx(sp, src, tgt, bend=10, via=0)
    # the same ring with one gap: a path exists, the flood does not say otherwise
    sp.open_cell[0, 28, 30] = 1
    p, ref = _search_and_networkx(sp, src, tgt, bend=10, via=0)
    assert p is not None


@pytest.mark.parametrize("seed", range(24))
def test_any_tie_one_search_same_cost(seed):
    """With ``any_tie`` (big boards), find_path keeps the first of its two searches' path: far-apart
    target clusters and dear targets alike, the cost is networkx's Dijkstra's and the path joins
    a source to a target at that cost (path_cost), found in fewer expanded states than two."""
    rng = np.random.default_rng(2000 + seed)
    L = 1 + seed % 2
    ny, nx_ = int(rng.integers(36, 56)), int(rng.integers(36, 56))
    sp = random_space(rng, L, ny, nx_, density=0.2)
    k = int(rng.integers(2, 8))
    tgt = np.stack([rng.integers(0, L, k), rng.integers(0, ny, k), rng.integers(0, nx_, k)], axis=1)
    if seed % 2:                         # dear targets: the entry cost in the heuristic
        sp.extra[tgt[:, 0], tgt[:, 1], tgt[:, 2]] += int(rng.integers(STEP, 5000))
    src = np.stack([rng.integers(0, L, 3), rng.integers(0, ny, 3), rng.integers(0, nx_, 3)], axis=1)
    bend, via = int(rng.integers(0, 500)), int(rng.integers(0, 900))
    plain, ref = _search_and_networkx(sp, src, tgt, bend=bend, via=via)
    sp.any_tie = True
    p, ref2 = _search_and_networkx(sp, src, tgt, bend=bend, via=via)
    assert ref2 == ref
    if ref is not None:
        assert path_cost(sp, p.cells, bend=bend, via=via) == ref
        assert p.cells[0].tolist() in src.tolist() and p.cells[-1].tolist() in tgt.tolist()
        assert p.expanded <= plain.expanded
