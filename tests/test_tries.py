"""The whole-board tries of route_board: a try that loses more nets after repair and the swap than
an earlier try is not finished (polish and the via passes never route a lost net and the exact
check only takes nets out, so it could not be the kept one); a try that loses nets is finished only
if it is the one kept; and the board written is the one every try finished would give.

Outside references: the same routing with every try finished, compared byte for byte (common
practice: a cut that must not change the result is checked against the result without it);
the written board is judged by the exact check (shapely distances). The board is
tests/test_lanes.py's (JEDEC MO-220 0.5 mm quad, EIA 0402 chips): its first try loses S4, the
fan-out plan's try loses S4 too, the next order routes every net.
"""
from __future__ import annotations

import pytest

from router import negotiate
from router.boardfile import dumps_board
from router.check import check

from test_lanes import quad_on_fine_grid

_PLAIN = negotiate._attempt, negotiate._polish, negotiate._swap     # as the router has them


def _routed(monkeypatch, finish_all: bool):
    """route_board on the board, the fan-out plan's try made to lose one net more after the swap
    (a routed net taken out: a try that loses more, as a harder board's other tries do); returns
    the result and, per try, (the fewest nets lost before it, nets lost after the swap, polished)."""
    attempt, polish, swap = _PLAIN
    seen, calls, repairs = [], [], []

    def watched_attempt(*a, **kw):
        if finish_all:
            kw["beat"], kw["finish"] = None, True
        polished, n = len(calls), len(repairs)
        out = attempt(*a, **kw)
        if out is not None:
            seen.append((kw.get("beat"), repairs[-1] if len(repairs) > n else 0, len(calls) > polished))
        return out

    def watched_polish(neg, order):
        calls.append(1)
        return polish(neg, order)

    def watched_swap(neg, lost, *a, **kw):          # the last step that may route a lost net
        swap(neg, lost, *a, **kw)
        if neg.fanout is not None:                     # the plan's try: one routed net taken out
            net = next(n for n in neg.nets if n in neg.routes and n not in lost)
            neg.rip(net)
            lost[net] = "taken out by the test"
        repairs.append(len(lost))

    monkeypatch.setattr(negotiate, "_attempt", watched_attempt)
    monkeypatch.setattr(negotiate, "_polish", watched_polish)
    monkeypatch.setattr(negotiate, "_swap", watched_swap)
    # the fan-out with the supplies after the swap routes S4 in the first try (tests/test_fan_supplies.py):
    # left out, so that the tries this test watches are made
    monkeypatch.setattr(negotiate, "_fan_with_supplies", lambda neg, lost, **kw: None)
    return negotiate.route_board(quad_on_fine_grid(), classic=False), seen   # classic: complete in the first try


def test_a_losing_try_stops_after_repair_and_the_board_is_the_same(monkeypatch):
    cut, tries = _routed(monkeypatch, finish_all=False)
    # the first try loses S4 and waits unfinished; the third routes every net and is the one finished
    assert [(lost, done) for _, lost, done in tries] == [(1, False), (2, False), (0, True)]
    assert [beat for beat, _, _ in tries] == [None, 1, 1]
    full, tries = _routed(monkeypatch, finish_all=True)
    assert [(lost, done) for _, lost, done in tries] == [(1, True), (2, True), (0, True)]
    assert dumps_board(cut.board) == dumps_board(full.board)
    assert cut.failed == full.failed == {}
    assert [v for v in check(cut.board) if v.rule != "open"] == []


_ALL_TRIES = [(0, False, False, None), (0, True, False, None), (1, False, False, None), (2, False, False, None),
              (0, False, True, None), (0, True, True, None), (0, False, False, True)]


@pytest.mark.parametrize("wins, made", [
    # after the try with the lanes priced, one more in the first order with the fan-out planned as
    # well: a pad whose planned exit a neighbour's via closes just beyond the row needs both (angled
    # real_board(15, 30): only that try routes every net, docs/measurements.md)
    (lambda plan, lanes, mend: plan and lanes, _ALL_TRIES[:6]),
    # after every other try, the first order once more with repair mending the supplies in its way
    # (router.mend), as a big board's one try does; the tries before leave it to the board's size (None)
    (lambda plan, lanes, mend: bool(mend), _ALL_TRIES),
], ids=["plan-and-lanes", "mend"])
def test_the_last_tries_and_the_board_kept(monkeypatch, wins, made):
    """Each try here is a stand-in that loses S4 unless it is the try under test; the tries are
    made in order up to it, and the board kept is its (common practice: the fewest unrouted nets
    win)."""
    seen = []

    def stand_in(start, todo, seed, attempt, *a, plan=False, lanes=False, mend=None, **kw):
        seen.append((attempt, plan, lanes, mend))
        lost = {} if wins(plan, lanes, mend) else {"S4": "lost by the test"}
        return start.copy(), lost, 1, 0, set(), 0

    monkeypatch.setattr(negotiate, "_attempt", stand_in)
    r = negotiate.route_board(quad_on_fine_grid())
    assert seen == made
    assert r.failed == {}


class _Later:
    """A stand-in for an unfinished try (negotiate._Unfinished): finishing it may lose `more` nets."""

    def __init__(self, lost: dict, vias: int, more: int = 0):
        self.lost, self.vias, self.more, self.made = lost, vias, more, False

    def finish(self):
        from router.model import Board
        self.made = True
        for k in range(self.more):
            self.lost[f"X{k}"] = "its route broke the clearance rule on the exact check"
        b = Board("t", [(0.0, 0.0), (1.0, 0.0), (1.0, 1.0)])
        b.vias = []
        return b


def _kept(tries):
    return [(len(t.lost), t.vias, k, negotiate._Unfinished(t.finish, t.vias), t.lost, 1, 0) for k, t in enumerate(tries)]


def test_only_the_kept_try_is_finished():
    """Fewest lost nets, then fewest vias (common practice): the second try is kept and only it is
    finished."""
    a, b, c = _Later({"S1": ""}, 30), _Later({"S2": ""}, 20), _Later({"S1": "", "S2": ""}, 5)
    board, lost, *_ = negotiate._kept_try(_kept([a, b, c]))
    assert lost is b.lost and (a.made, b.made, c.made) == (False, True, False)


def test_a_try_the_exact_check_makes_lose_more_gives_way_to_the_next():
    """The kept try's exact check takes a net out: the next try in line, which loses no more before
    it is finished, is finished too and kept; the one after, losing two already, is not finished."""
    a, b, c = _Later({"S1": ""}, 10, more=1), _Later({"S2": ""}, 20), _Later({"S1": "", "S2": ""}, 5)
    board, lost, *_ = negotiate._kept_try(_kept([a, b, c]))
    assert lost is b.lost and (a.made, b.made, c.made) == (True, True, False)
    assert set(a.lost) == {"S1", "X0"}


def test_route_board_finishes_only_the_try_it_keeps(monkeypatch):
    """Every try a stand-in losing S4 with its own vias so far (the third try the fewest): route_board holds at
    most KEEP_TRIES of them unfinished and finishes only the third, which it keeps (common practice:
    fewest unrouted, then fewest vias)."""
    import weakref
    made, held, alive = [], [], []

    def stand_in(start, todo, seed, attempt, *a, plan=False, lanes=False, mend=None, finish=True, **kw):
        alive.append(sum(1 for w in held if w() is not None))     # the earlier tries still held
        k = len(made)
        vias = [9, 7, 3, 8, 5, 6, 4][k]
        made.append([vias, False])

        def finished(k=k, b=start.copy()):
            made[k][1] = True
            return b
        out = negotiate._Unfinished(finished, vias)
        held.append(weakref.ref(out))
        return out, {"S4": "lost by the test"}, 1, 0, set(), 0

    monkeypatch.setattr(negotiate, "_attempt", stand_in)
    r = negotiate.route_board(quad_on_fine_grid())
    assert len(made) == len(_ALL_TRIES) and [v for v, done in made if done] == [3]
    assert max(alive) == negotiate.KEEP_TRIES
    assert set(r.failed) == {"S4"}
