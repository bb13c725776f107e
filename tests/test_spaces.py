"""Search spaces made from parts (router.spaces) and costs computed where the search looks
(router.search.LazyCosts): the same spaces and costs as the full arrays they replace.

Outside reference: networkx's Dijkstra on the state graph of :func:`router.search.reference_graph`
gives the optimal cost with the lazy costs; the arrays built here with numpy, as the negotiation
built them before, give the same path.
"""
import networkx as nx
import numpy as np
import pytest

from router.boardgen import generate_board
from router.grid import RoutingGrid
from router.negotiate import _Negotiation, _pad_groups
from router.nets import route_net
from router.realgen import real_board
from router.search import STEP, LazyCosts, SearchSpace, find_path, path_cost, reference_graph


def _lazy_case(rng, L, ny, nx_, strict, crowd):
    soft = np.where(rng.random((L, ny, nx_)) > 0.7, rng.integers(0, 4, (L, ny, nx_)), 0).astype(np.int32)
    hist = np.where(rng.random((L, ny, nx_)) > 0.8, rng.integers(0, 5, (L, ny, nx_)) * STEP, 0).astype(np.int64)
    soft_via = np.where(rng.random((ny, nx_)) > 0.7, rng.integers(0, 3, (ny, nx_)), 0).astype(np.int32)
    cr = rng.integers(0, 3, (ny, nx_)).astype(np.int32) * 25 if crowd else None
    pf = 0.5 * 1.8 ** int(rng.integers(0, 6)) * STEP
    lz = LazyCosts(soft, hist, soft_via, hist.max(axis=0), pf, strict=strict, crowd=cr, crowd_price=1)
    # the arrays as the negotiation made them with numpy (router.negotiate before router.spaces)
    if strict:
        extra = np.zeros((L, ny, nx_), np.int32)
        hole = np.zeros((ny, nx_), np.int32)
    else:
        extra = np.minimum(pf * soft.astype(np.float64) + hist, 2**24).astype(np.int32)
        hole = np.minimum(pf * soft_via.astype(np.float64) + hist.max(axis=0), 2**24).astype(np.int32)
    if cr is not None:
        hole = np.minimum(hole.astype(np.int64) + cr, 2**24).astype(np.int32)
    return lz, extra, hole


@pytest.mark.parametrize("seed", range(24))
def test_lazy_costs_equal_the_arrays_and_networkx(seed):
    rng = np.random.default_rng(900 + seed)
    L = 1 + seed % 2
    ny, nx_ = int(rng.integers(4, 11)), int(rng.integers(4, 11))
    cell = (rng.random((L, ny, nx_)) > 0.2).astype(np.uint8)
    oh = (rng.random((L, ny, nx_)) > 0.1).astype(np.uint8)
    ov = (rng.random((L, ny, nx_)) > 0.1).astype(np.uint8)
    via_ok = (rng.random((ny, nx_)) > 0.4).astype(np.uint8) if L == 2 else np.zeros((ny, nx_), np.uint8)
    kw = {}
    if L == 1 and seed % 4 == 1:
        kw = dict(jump_ok=(rng.random((ny, nx_)) > 0.3).astype(np.uint8),
                  wire_block=(rng.random((ny, nx_)) > 0.85).astype(np.uint8), jump_cells=np.array([3], np.int64))
    lz, extra, hole = _lazy_case(rng, L, ny, nx_, strict=seed % 3 == 0, crowd=seed % 5 != 0)
    lazy_sp = SearchSpace(cell, oh, ov, via_ok, None, lazy=lz, **kw)
    full_sp = SearchSpace(cell, oh, ov, via_ok, extra, hole_extra=hole, **kw)
    src = np.stack([rng.integers(0, L, 2), rng.integers(0, ny, 2), rng.integers(0, nx_, 2)], axis=1)
    tgt = np.stack([rng.integers(0, L, 2), rng.integers(0, ny, 2), rng.integers(0, nx_, 2)], axis=1)
    bend, via, jump = int(rng.integers(0, 500)), int(rng.integers(0, 900)), int(rng.integers(0, 900))
    p = find_path(lazy_sp, src, tgt, bend=bend, via=via, jump=jump)
    q = find_path(full_sp, src, tgt, bend=bend, via=via, jump=jump)
    G = reference_graph(lazy_sp, src, tgt, bend=bend, via=via, jump=jump)
    try:
        ref = nx.dijkstra_path_length(G, "S", "T")
    except (nx.NetworkXNoPath, nx.NodeNotFound):
        ref = None
    assert (p is None) == (ref is None) == (q is None)
    if p is not None:
        assert p.cost == ref == q.cost
        assert p.cells.tolist() == q.cells.tolist()          # the same path, not just the same cost
        assert path_cost(lazy_sp, p.cells, bend=bend, via=via, jump=jump) == ref
        assert path_cost(full_sp, p.cells, bend=bend, via=via, jump=jump) == ref


def _old_space(neg, net, strict):
    """The search space as _Negotiation.route made it before router.spaces (full arrays per net)."""
    grid = neg.grid
    k = grid.profile_of(net).index
    if strict:
        extra = np.zeros((grid.L, grid.ny, grid.nx), np.int32)
    else:
        e = neg.present * STEP * grid.soft_cell[k].astype(np.float64) + neg.hist
        extra = np.minimum(e, 2**24).astype(np.int32)
    res = neg.reserve.extra_for(net)
    if res is not None:
        extra = np.minimum(extra.astype(np.int64) + res[0], 2**24).astype(np.int32)
    space = grid.space_for(net, extra, soft_block=strict, own=neg.own[net])
    if not strict:
        he = neg.present * STEP * grid.soft_via[k].astype(np.float64) + neg.hist.max(axis=0)
        space.hole_extra = np.minimum(he, 2**24).astype(np.int32)
    if neg.crowd is not None:
        space.hole_extra = np.minimum(space.hole_extra.astype(np.int64) + neg.crowd.price(neg.via),
                                      2**24).astype(np.int32)
    if res is not None:
        space.hole_extra = np.minimum(space.hole_extra.astype(np.int64) + res[1], 2**24).astype(np.int32)
    if strict:
        space.open_cell = space.open_cell & ~(grid.soft_cell[k] > 0)
        prof = grid.profile_of(net)
        off = [ob for n, items in sorted(neg.off_grid.items()) if n != net for ob in items]
        c = np.zeros((grid.L, grid.ny, grid.nx), np.int32)
        h = np.zeros_like(c)
        v = np.zeros_like(c)
        for ob in off:
            grid._stamp_maps(ob, grid._need(ob, prof, prof.half), 1, c, h, v)
        space.open_cell = (space.open_cell.astype(bool) & (c == 0)).astype(np.uint8)
        space.open_h = (space.open_h.astype(bool) & (h == 0)).astype(np.uint8)
        space.open_v = (space.open_v.astype(bool) & (v == 0)).astype(np.uint8)
    return space


@pytest.mark.parametrize("layers", [2, 1])
def test_net_spaces_equal_the_full_arrays(layers):
    if layers == 2:                                   # fine-pitch pads: stubs and necks off the grid
        b = real_board(2, 30)
    else:
        b = generate_board(4, nets=12, size=(30.0, 25.0), layers=1, max_pins=4, offgrid=True, grid=0.5)
    grid = RoutingGrid(b)
    groups = _pad_groups(b, grid)
    nets = [n for n in groups if len(groups[n]) > 1]
    neg = _Negotiation(b, grid, nets, groups, bend=STEP, via=2 * STEP, jump=5 * STEP)
    for net in nets[: len(nets) // 2 + 1]:          # some nets laid, with history and a higher price
        neg.lay(net, neg.route(net))
    neg.hist[:, ::3, ::4] += STEP
    neg.hist_top = None
    neg.present *= 1.8
    if layers == 2:
        assert any(neg.off_grid.values()), "the board should lay some copper off the grid"
    for net in nets[::2] + [n for n in nets if neg.off_grid.get(n)]:
        laid = net in neg.routes
        for strict in (False, True):
            if strict and laid:
                neg.rip(net)                          # strict routes are made for nets taken up
            new, others = neg.spaces.space(neg, net, strict, neg.reserve.extra_for(net))
            old = _old_space(neg, net, strict)
            for name in ("open_cell", "open_h", "open_v", "via_ok"):
                assert np.array_equal(getattr(new, name).astype(bool), getattr(old, name).astype(bool)), name
            if layers == 1:
                assert np.array_equal(new.jump_ok.astype(bool), old.jump_ok.astype(bool))
                assert np.array_equal(new.wire_block.astype(bool), old.wire_block.astype(bool))
            L, ny, nx_ = grid.L, grid.ny, grid.nx
            cells = [(l, j, i) for l in range(L) for j in range(0, ny, 2) for i in range(0, nx_, 3)]
            assert all(new.cell_cost(*c) == int(old.extra[c]) for c in cells)
            assert all(new.hole_cost(j, i) == int(old.hole_extra[j, i]) for _, j, i in cells)
            ref = grid.obstacle_arrays([ob for n, items in sorted(neg.soft.items()) if n != net for ob in items],
                                       grid.profile_of(net)) if strict else None
            assert (others is None) == (ref is None)
            if others is not None:
                for a, r in zip(others, ref):
                    assert np.array_equal(a, r)
            # and the net routes the same way in both
            kw = dict(bend=neg.bend, via=neg.via, jump=neg.jump, cache=False)
            r_new = route_net(grid, net, new, groups[net], others=others, **kw)
            r_old = route_net(grid, net, old, groups[net], others=ref, **kw)
            assert r_new.edges == r_old.edges and r_new.vias == r_old.vias and r_new.failed == r_old.failed
            if strict and laid:
                neg.lay(net, r_old if not r_old.failed else neg.route(net))


@pytest.mark.parametrize("kind", ["arcs", "concave"])
def test_edge_band_equals_every_point_measured(kind):
    # the grid's edge distances are measured only near the edge (blocks far from it get a lower
    # bound): against shapely's distance to the outline at every point (edge_distance_xy, arcs exact)
    from shapely.geometry import Polygon
    from router.outline import edge_distance_xy
    if kind == "arcs":
        b = real_board(3, 30, angled=True)
    else:
        b = generate_board(6, nets=4, size=(40.0, 30.0))
        b.outline = [(0.0, 0.0), (40.0, 0.0), (40.0, 12.3), (17.1, 12.3), (17.1, 30.0), (0.0, 30.0)]
    grid = RoutingGrid(b)
    limit = 1.3
    inside, dist = grid._edge_band(grid.outline, limit, block=5)
    X, Y = np.meshgrid(grid.xs, grid.ys)
    exact = edge_distance_xy(b, X.ravel(), Y.ravel())
    poly = Polygon(b.outline)
    assert np.array_equal(inside, shapely_covers(poly, X.ravel(), Y.ravel()))
    close = exact < limit
    assert np.array_equal(dist[close], exact[close])
    assert (dist[~close] >= limit).all() and (dist <= exact + 1e-9).all()
    assert close.sum() < len(exact) / 2             # most of the board was not measured point by point


def shapely_covers(poly, x, y):
    import shapely
    return shapely.contains_xy(poly, x, y) | shapely.intersects_xy(poly, x, y)


def test_path_counts_equal_move_by_move():
    from router.search import _count, _count_moves
    rng = np.random.default_rng(3)
    for _ in range(200):
        cells = [(0, 5, 5)]
        for _ in range(int(rng.integers(0, 12))):
            l, j, i = cells[-1]
            m = int(rng.integers(0, 6))
            if m == 4:
                cells.append((1 - l, j, i))
            else:
                k = 3 if m == 5 else 1
                dj, di = [(0, 1), (1, 0), (0, -1), (-1, 0)][int(rng.integers(0, 4))]
                cells.append((l, j + k * dj, i + k * di))
        assert _count(np.array(cells)) == _count_moves(np.array(cells))


@pytest.mark.parametrize("layers", [2, 1])
def test_soft_stamping_at_once_equals_item_by_item(layers):
    # the compiled stamping of routed copper against RoutingGrid.stamp, one item after another
    from router.grid import Obstacle
    b = generate_board(7, nets=6, size=(25.0, 20.0), layers=layers, max_pins=3)
    grid = RoutingGrid(b)
    rng = np.random.default_rng(11)
    items = []
    for _ in range(40):
        x, y = rng.uniform(-1.0, 26.0), rng.uniform(-1.0, 21.0)
        kind = int(rng.integers(0, 3))
        if kind == 0:          # a via or jumper end: a point with a radius
            box = (x, y, x, y)
        elif kind == 1:        # a trace segment along x, off the grid
            box = (x, y, x + rng.uniform(0.1, 4.0), y)
        else:
            box = (x, y, x, y + rng.uniform(0.1, 4.0))
        cls = str(rng.choice(list(grid.profiles)))
        lay = tuple(range(grid.L)) if kind == 0 else (int(rng.integers(0, grid.L)),)
        items.append(Obstacle("copper", box, float(rng.uniform(0.1, 0.4)), lay, "X", cls))
    ref_cell, ref_via = grid.soft_cell.copy(), grid.soft_via.copy()
    for ob in items:
        grid.stamp(ob, +1, soft=True)
    want_cell, want_via = grid.soft_cell.copy(), grid.soft_via.copy()
    grid.soft_cell[:], grid.soft_via[:] = ref_cell, ref_via
    grid.add_soft(items, +1)
    assert np.array_equal(grid.soft_cell, want_cell) and np.array_equal(grid.soft_via, want_via)
    assert want_cell.any() and want_via.any()
    grid.add_soft(items, -1)
    assert np.array_equal(grid.soft_cell, ref_cell) and np.array_equal(grid.soft_via, ref_via)


def test_sorted_tree_cells_equal_a_fresh_sort():
    from types import SimpleNamespace
    from router.nets import _SortedCells
    rng = np.random.default_rng(8)
    grid = SimpleNamespace(ny=17, nx=23)
    cells = {(int(rng.integers(0, 2)), int(rng.integers(0, 17)), int(rng.integers(0, 23))) for _ in range(5)}
    tree = _SortedCells(grid, cells)
    for _ in range(30):
        for _ in range(int(rng.integers(0, 9))):
            c = (int(rng.integers(0, 2)), int(rng.integers(0, 17)), int(rng.integers(0, 23)))
            if c not in cells:
                cells.add(c)
                tree.add(c)
        assert tree.array().tolist() == [list(c) for c in sorted(cells)]


@pytest.mark.parametrize("seed", range(6))
def test_raised_cells_lazy_equal_the_arrays(seed):
    # exits priced by the cells beside them (router.nets._price_exits) raise a few cells' costs:
    # the same path and cost with lazy costs as with the arrays, and networkx agrees
    rng = np.random.default_rng(1300 + seed)
    L, ny, nx_ = 2, 9, 10
    cell = (rng.random((L, ny, nx_)) > 0.15).astype(np.uint8)
    ones = np.ones((L, ny, nx_), np.uint8)
    via_ok = (rng.random((ny, nx_)) > 0.4).astype(np.uint8)
    lz, extra, hole = _lazy_case(rng, L, ny, nx_, strict=seed % 2 == 0, crowd=True)
    lazy_sp = SearchSpace(cell, ones, ones, via_ok, None, lazy=lz)
    full_sp = SearchSpace(cell, ones, ones, via_ok, extra, hole_extra=hole)
    for _ in range(8):
        c = (int(rng.integers(0, L)), int(rng.integers(0, ny)), int(rng.integers(0, nx_)))
        v = int(rng.integers(0, 3000))
        lazy_sp.raise_cell(c, v)
        full_sp.raise_cell(c, v)
    src, tgt = [(0, 0, 0), (1, 0, 1)], [(1, ny - 1, nx_ - 1)]
    p = find_path(lazy_sp, src, tgt, bend=120, via=300)
    q = find_path(full_sp, src, tgt, bend=120, via=300)
    assert (p is None) == (q is None)
    if p is not None:
        ref = nx.dijkstra_path_length(reference_graph(lazy_sp, src, tgt, bend=120, via=300), "S", "T")
        assert p.cost == q.cost == ref and p.cells.tolist() == q.cells.tolist()


def test_a_net_alone_shares_nothing_with_its_own_copper():
    """The own counts of a laid route (negotiate._own_counts, measured in runs of nearby cells) are
    exactly what the route adds to its class's soft maps at its cells and hole places: laid alone on
    the grid, every net of a real-looking board (a supply of many pads among them) shares no cell,
    and the counts are the soft maps' own values there (outside reference: none; the grid's stamp
    is the arithmetic the counts must repeat, common practice)."""
    from router.negotiate import _cost
    b = real_board(1, 57)
    grid = RoutingGrid(b)
    groups = _pad_groups(b, grid)
    nets = sorted((n for n in groups if len(groups[n]) > 1), key=lambda n: -sum(len(g) for g in groups[n]))[:6]
    neg = _Negotiation(b, grid, nets, groups, _cost(1.0, grid.pitch), _cost(2.0, grid.pitch), _cost(5.0, grid.pitch))
    assert max(sum(len(g) for g in groups[n]) for n in nets) > 10
    sizes = []
    for net in nets:
        r = neg.route(net, strict=True)
        assert not r.failed
        sizes.append(len(r.cells))
        neg.lay(net, r)
        k = grid.profile_of(net).index
        cells, own_c, holes, own_h = neg.own_at[net]
        assert (grid.soft_cell[k][cells[:, 0], cells[:, 1], cells[:, 2]] == own_c).all()
        assert (grid.soft_via[k][holes[:, 0], holes[:, 1]] == own_h).all()
        assert neg.conflicts()[0] == {}
        neg.rip(net)
        assert not grid.soft_cell[k].any()
    assert max(sizes) > 256             # more than one run of cells (negotiate._OWN_RUN)
