"""The whole-board tries of route_board: a try that loses more nets after repair and the swap than
an earlier try is not finished (polish and the via passes never route a lost net and the exact
check only takes nets out, so it could not be the kept one), and the board written is the one every try
finished would give.

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
            kw["beat"] = None
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
    assert [(lost, done) for _, lost, done in tries] == [(1, True), (2, False), (0, True)]
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
