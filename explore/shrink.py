"""``elbowroom shrink``: the smallest rectangular outline in which the board places and routes clean.

A size *works* when, for one of the placement seeds ``0 .. tries-1``, the parts that are
not fixed place legally (:func:`placement.place` with every part not fixed moved) and
every net routes with no violation of ``check``. Sizes are compared by area first, then
by the shorter side (the smaller wins), then by the width.

The rule for what stays (:func:`resized`): the new outline is a rectangle with the old
outline's lower-left corner (of its bounding box). Its width and height differ from the
old ones by whole ``step``s, and ``step`` is a whole number of grid pitches, so the
outline shrinks on the grid only. A part marked ``fixed`` keeps its distance to the
nearest edge across x (left or right) and to the nearest edge across y (bottom or top;
on a tie, left and bottom): a connector at the right edge stays at the right edge.
Keepouts and fixed traces follow the same rule as a whole; copper that is not fixed,
and every via and jumper, is removed and routed again. A pour with a polygon of its own
cannot follow a new outline and is refused (leave ``polygon`` out: the outline less the
edge clearance).

The search (:func:`shrink`):

1. A lower bound (:class:`Bound`) excludes sizes that cannot hold the parts: every part
   to place must fit inside the outline less ``edge_clearance`` in one of its rotations
   (the longest part sets the sides), every fixed part's body must stay on the board,
   and the area must hold every part's rectangle grown by half the placement gap.
2. Bisection on area over the sizes of the old aspect ratio (the height rounded up to
   the step), several placement seeds per size, all seeds of a size (and, with more
   workers than seeds, several sizes) run at once.
3. Without ``keep_aspect``: bisection on the width alone at the height found, then on
   the height alone at that width, again while either shrinks.

Bisection assumes a larger board is no harder to route. That is not always true (a
different placement may route worse), so the answer is the smallest size that worked
among those tried, not a proof that nothing smaller works; the report lists every size
tried.
"""
from __future__ import annotations

import math
import time
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Optional

from router.errors import BoardError
from router.model import Board
from router.units import TOL, on_grid, snap

from .runners import Interrupted
from .tasks import Result, Task, parse_result

__all__ = ["resized", "Bound", "SizeTry", "ShrinkResult", "shrink", "format_shrink"]


def _bbox(points):
    xs = [p[0] for p in points]
    ys = [p[1] for p in points]
    return min(xs), min(ys), max(xs), max(ys)


def _shift_for(box, frame, w: float, h: float):
    """How far an item with bounding box `box` moves when the outline `frame` (x0, y0, x1, y1)
    becomes w x h: nothing along an axis where it is nearer the left/bottom edge (or as
    near), the change of width/height where it is nearer the right/top edge."""
    x0, y0, x1, y1 = box
    fx0, fy0, fx1, fy1 = frame
    sx = 0.0 if (x0 - fx0) <= (fx1 - x1) + TOL else w - (fx1 - fx0)
    sy = 0.0 if (y0 - fy0) <= (fy1 - y1) + TOL else h - (fy1 - fy0)
    return sx, sy


def resized(board: Board, w: float, h: float) -> Board:
    """`board` with a w x h rectangular outline, by the rule of the module docstring.

    Raises
    ------
    BoardError
        For a pour with a polygon of its own.
    """
    from router.geometry import part_rect
    for k, p in enumerate(board.pours):
        if p.polygon is not None:
            raise BoardError(board.source, f"pours[{k}] ({p.net})",
                             "a pour with its own polygon cannot follow a new outline; leave polygon out "
                             "(the pour then fills the outline less the edge clearance) and shrink again")
    frame = _bbox(board.outline)
    fx0, fy0 = frame[0], frame[1]
    out = board.copy()
    rect = [(fx0, fy0), (snap(fx0 + w), fy0), (snap(fx0 + w), snap(fy0 + h)), (fx0, snap(fy0 + h))]
    out.outline = rect
    out.size = (snap(w), snap(h)) if abs(fx0) <= TOL and abs(fy0) <= TOL else None
    parts = []
    for p in out.parts:
        if p.fixed and p.at is not None:
            sx, sy = _shift_for(part_rect(board, p), frame, w, h)
            p = replace(p, at=(snap(p.at[0] + sx), snap(p.at[1] + sy)))
        parts.append(p)
    out.parts = parts
    keepouts = []
    for k in out.keepouts:
        sx, sy = _shift_for(_bbox(k.polygon), frame, w, h)
        keepouts.append(replace(k, polygon=[(snap(x + sx), snap(y + sy)) for x, y in k.polygon]))
    out.keepouts = keepouts
    traces = []
    for t in out.traces:
        if not t.fixed:
            continue
        sx, sy = _shift_for(_bbox(t.points), frame, w, h)
        traces.append(replace(t, points=[(snap(x + sx), snap(y + sy)) for x, y in t.points]))
    out.traces = traces
    out.vias = []
    out.jumpers = []
    return out


@dataclass
class Bound:
    """The lower bound: which sizes can hold the parts at all (see the module docstring).

    A size passes when (i) every part to place fits, in one of its rotations, inside the
    outline less ``edge_clearance`` (the placer's rule for a legal place); (ii) every fixed
    part's body stays on the board where the anchoring rule puts it; (iii)
    ``(w - 2e + g) (h - 2e + g) >= sum over parts to place of (a + g)(b + g)`` plus the
    fixed bodies' area inside that region, with e the edge clearance, g the placement gap
    and a x b a part's rectangle (body, pads, holes): the rectangles grown by g/2 do not
    overlap one another or a fixed body and lie inside the region grown by g/2.
    """
    board: Board
    edge: float
    gap: float
    movable: list = field(default_factory=list)      # (a, b) of each part to place
    fixed: list = field(default_factory=list)        # body boxes of the fixed parts
    need: float = 0.0

    @classmethod
    def of(cls, board: Board) -> "Bound":
        from placement.legalize import effective_gap
        from router.geometry import part_footprint, part_rect, transform
        g = effective_gap(board, None)
        movable, fixed = [], []
        for p in board.parts:
            if p.fixed and p.at is not None:
                fp = part_footprint(board, p)
                bw, bh = fp.body
                corners = [transform(p, (sx * bw / 2, sy * bh / 2)) for sx in (-1, 1) for sy in (-1, 1)]
                fixed.append((_bbox(corners), part_rect(board, p)))
            else:
                x0, y0, x1, y1 = part_rect(board, p, at=(0.0, 0.0), rotation=0)
                movable.append((x1 - x0, y1 - y0))
        need = sum((a + g) * (b + g) for a, b in movable)
        return cls(board, board.rules.edge_clearance, g, movable, fixed, need)

    def passes(self, w: float, h: float) -> bool:
        e, g = self.edge, self.gap
        iw, ih = w - 2 * e, h - 2 * e
        for a, b in self.movable:
            if not ((a <= iw + TOL and b <= ih + TOL) or (b <= iw + TOL and a <= ih + TOL)):
                return False
        frame = _bbox(self.board.outline)
        fx0, fy0 = frame[0], frame[1]
        fixed_area = 0.0
        rx0, ry0, rx1, ry1 = fx0 + e - g / 2, fy0 + e - g / 2, fx0 + w - e + g / 2, fy0 + h - e + g / 2
        for body, prect in self.fixed:
            sx, sy = _shift_for(prect, frame, w, h)
            x0, y0, x1, y1 = body[0] + sx, body[1] + sy, body[2] + sx, body[3] + sy
            if x0 < fx0 - TOL or y0 < fy0 - TOL or x1 > fx0 + w + TOL or y1 > fy0 + h + TOL:
                return False
            fixed_area += max(0.0, min(x1, rx1) - max(x0, rx0)) * max(0.0, min(y1, ry1) - max(y0, ry0))
        return (iw + g) * (ih + g) >= self.need + fixed_area - TOL


@dataclass
class SizeTry:
    """One size tried: its results per seed and whether it worked."""
    w: float
    h: float
    results: dict = field(default_factory=dict)      # seed -> Result
    failed: dict = field(default_factory=dict)       # seed -> why the task failed (worker died ...)
    round: int = 0

    @property
    def area(self) -> float:
        return self.w * self.h

    @property
    def key(self):
        return (round(self.area, 6), min(self.w, self.h), self.w)

    @property
    def seed(self) -> Optional[int]:
        """The lowest seed that placed and routed clean, or None."""
        ok = [s for s, r in self.results.items() if r.complete]
        return min(ok) if ok else None

    @property
    def works(self) -> bool:
        return self.seed is not None

    def detail(self) -> str:
        if self.works:
            r = self.results[self.seed]
            return f"routed clean with seed {self.seed}: {r.vias} vias, {r.bends} bends, {r.length:.1f} mm"
        bits = []
        for s in sorted(set(self.results) | set(self.failed)):
            if s in self.failed:
                bits.append(f"seed {s}: task failed ({self.failed[s]})")
                continue
            r = self.results[s]
            if r.status != "ok":
                bits.append(f"seed {s}: no placement")
            elif r.routed < r.nets:
                bits.append(f"seed {s}: {r.routed}/{r.nets} nets")
            else:
                bits.append(f"seed {s}: {r.violations} violations")
        return "; ".join(bits)


@dataclass
class ShrinkResult:
    """What :func:`shrink` found."""
    original: tuple
    step: float
    tries: int
    bound_area: Optional[float]                      # the smallest area passing the lower bound
    tried: list                                      # SizeTry in the order tried
    best: Optional[SizeTry]
    board_text: str = ""
    interrupted: bool = False
    seconds: float = 0.0
    where: str = ""

    def as_json(self) -> dict:
        def one(t: SizeTry):
            return {"width": t.w, "height": t.h, "area": round(t.area, 6), "works": t.works, "seed": t.seed,
                    "round": t.round, "detail": t.detail()}
        return {"original": list(self.original), "step": self.step, "tries": self.tries,
                "lower_bound_area": None if self.bound_area is None else round(self.bound_area, 6),
                "tried": [one(t) for t in self.tried], "best": one(self.best) if self.best else None,
                "interrupted": self.interrupted}


def _check_step(board: Board, step: float) -> float:
    grid = board.rules.grid
    if not (step > 0 and math.isfinite(step)):
        raise BoardError(None, "--step", f"{step} is not a length; use a positive number of mm, e.g. {grid * 2:g}")
    if not on_grid(step, grid):
        raise BoardError(board.source, "--step", f"{step:g} mm is not a whole number of grid pitches "
                         f"(rules.grid = {grid:g} mm); use e.g. {grid * max(1, round(step / grid)):g}")
    return float(step)


class _Search:
    """Sizes on the lattice W0 - i*step, H0 - j*step, evaluated in rounds on a runner."""

    def __init__(self, board: Board, runner, step: float, tries: int, progress: bool):
        from router.boardfile import dumps_board
        self.board, self.runner, self.step, self.tries = board, runner, step, tries
        self._dumps = dumps_board
        x0, y0, x1, y1 = _bbox(board.outline)
        self.w0, self.h0 = x1 - x0, y1 - y0
        self.bound = Bound.of(board)
        self.seen: dict = {}                          # (i, j) -> SizeTry
        self.order: list = []
        self.rounds = 0
        self.bar = None
        if progress:
            from tqdm import tqdm
            self.bar = tqdm(unit="task", desc="shrink", leave=True)
        self.failed_tasks = 0

    def size(self, i: int, j: int):
        return snap(self.w0 - i * self.step), snap(self.h0 - j * self.step)

    def passes(self, i: int, j: int) -> bool:
        w, h = self.size(i, j)
        return w > TOL and h > TOL and self.bound.passes(w, h)

    def best(self) -> Optional[SizeTry]:
        ok = [t for t in self.order if t.works]
        return min(ok, key=lambda t: t.key) if ok else None

    def evaluate(self, cells) -> None:
        """Run every seed of every new size in `cells` ((i, j) pairs) in one round."""
        from router import __version__
        new = [c for c in dict.fromkeys(cells) if c not in self.seen]
        if not new:
            return
        self.rounds += 1
        tasks, owner = [], {}
        for c in new:
            w, h = self.size(*c)
            t = SizeTry(w, h, round=self.rounds)
            self.seen[c] = t
            self.order.append(t)
            text = self._dumps(resized(self.board, w, h))
            for s in range(self.tries):
                tid = f"{w:g}x{h:g}-s{s}"
                owner[tid] = (t, s)
                tasks.append((tid, Task(tid, text, place=True, seed=s, reroute=True).text()))

        def on_result(tid, text):
            t, s = owner[tid]
            res: Result = parse_result(text)
            if res.version != __version__:
                on_failed(tid, f"the worker runs elbowroom {res.version or '?'}, this machine {__version__}")
                return
            t.results[s] = res
            self._tick()

        def on_failed(tid, why):
            t, s = owner[tid]
            t.failed[s] = why
            self.failed_tasks += 1
            self._tick()

        self.runner.run(tasks, on_result=on_result, on_failed=on_failed)

    def _tick(self):
        if self.bar is not None:
            b = self.best()
            self.bar.update(1)
            self.bar.set_postfix_str(f"failed {self.failed_tasks}, best " +
                                     (f"{b.w:g} x {b.h:g} mm ({b.area:.1f} mm^2)" if b else "none yet"),
                                     refresh=False)

    def works(self, c) -> bool:
        return self.seen[c].works

    def bisect(self, cells, good: int, bad: int, probes: int) -> int:
        """The largest index k in (good, bad) of `cells` (k -> (i, j)) that works, assuming that
        every index up to a limit works and none after it; `good` works (or is -1), `bad` does
        not (or is past the end). Each round evaluates `probes` indices spread over the gap."""
        while bad - good > 1:
            gap = bad - good - 1
            n = min(probes, gap)
            ks = sorted({good + max(1, round((gap + 1) * q / (n + 1))) for q in range(1, n + 1)})
            ks = [k for k in ks if good < k < bad]
            self.evaluate([cells(k) for k in ks])
            worked = [k for k in ks if self.works(cells(k))]
            if worked:
                good = max(good, max(worked))
            failed = [k for k in ks if k > good and not self.works(cells(k))]
            bad = min([bad] + failed)
        return good


def shrink(board_path, runner, step: float = 0.5, tries: int = 3, keep_aspect: bool = False,
           progress: bool = False) -> ShrinkResult:
    """The smallest rectangular outline that places and routes clean (module docstring).

    Parameters
    ----------
    board_path : the board file
    runner : an entered :class:`explore.runners.LocalRunner` or :class:`DaskRunner`
    step : mm by which a side shrinks; a whole number of grid pitches
    tries : placement seeds per size (0 .. tries-1)
    keep_aspect : only sizes of the old aspect ratio (the height rounded up to the step)
    progress : a tqdm bar on stderr

    Returns
    -------
    ShrinkResult
        ``best`` None when no size tried worked (the original size included). With
        ``board_text``, the placed and routed board of the best size (its lowest seed that
        worked), checked clean again here.

    Raises
    ------
    BoardError
        Bad input (board, step, tries, a pour with its own polygon).
    explore.runners.Interrupted
        On Ctrl-C, carrying the :class:`ShrinkResult` so far as ``.shrink``.
    """
    from router.boardfile import load_board
    t0 = time.perf_counter()
    board = load_board(board_path)
    step = _check_step(board, step)
    if int(tries) < 1:
        raise BoardError(None, "--tries", f"needs 1 or more placement seeds per size, not {tries}")
    resized(board, 1.0, 1.0)                          # refuses pours it cannot move, before any work
    s = _Search(board, runner, step, int(tries), progress)
    probes = max(1, getattr(runner, "jobs", 0) // s.tries) if hasattr(runner, "jobs") else \
        max(1, _cluster_cores(runner) // s.tries)
    interrupted = False
    try:
        _search(s, keep_aspect, probes)
    except Interrupted:
        interrupted = True
    finally:
        if s.bar is not None:
            s.bar.close()
    best = s.best()
    result = ShrinkResult((s.w0, s.h0), step, s.tries, _bound_area(s, keep_aspect), list(s.order), best,
                          interrupted=interrupted, where=runner.where)
    if best is not None:
        result.board_text = _verified(best, board_path)
    result.seconds = time.perf_counter() - t0
    if interrupted:
        exc = Interrupted(None)
        exc.shrink = result
        raise exc
    return result


def _cluster_cores(runner) -> int:
    try:
        info = runner.client.scheduler_info()
        return sum(w.get("nthreads", 1) for w in info.get("workers", {}).values())
    except Exception:            # noqa: BLE001 - the number only sets how many sizes go per round
        return 1


def _aspect_cells(s: _Search):
    """k -> (i, j): the sizes of the old aspect ratio, k steps off the longer side."""
    wide = s.w0 >= s.h0
    ratio = (s.h0 / s.w0) if wide else (s.w0 / s.h0)

    def cell(k):
        other = int(math.floor(k * ratio + 1e-9))
        return (k, other) if wide else (other, k)
    return cell


def _last_passing(cell, s: _Search, start: int) -> int:
    """The largest k >= start with cell(k) passing the bound (start - 1 when none)."""
    k = start
    while s.passes(*cell(k)):
        k += 1
    return k - 1


def _search(s: _Search, keep_aspect: bool, probes: int) -> None:
    cell = _aspect_cells(s)
    top = _last_passing(cell, s, 0)
    if top < 0:
        return                                        # not even the original size holds the parts
    good = s.bisect(cell, -1, top + 1, probes)
    if good < 0 or keep_aspect:
        return
    i, j = cell(good)
    for _ in range(4):                                # width alone, then height alone, while either shrinks
        before = (i, j)
        wcell = lambda k, j=j: (k, j)                  # noqa: E731
        i = s.bisect(wcell, i, _last_passing(wcell, s, i + 1) + 1, probes)
        hcell = lambda k, i=i: (i, k)                  # noqa: E731
        j = s.bisect(hcell, j, _last_passing(hcell, s, j + 1) + 1, probes)
        if (i, j) == before:
            break


def _bound_area(s: _Search, keep_aspect: bool) -> Optional[float]:
    """The smallest area on the searched lattice that passes the lower bound."""
    best = None
    if keep_aspect:
        cell = _aspect_cells(s)
        k = _last_passing(cell, s, 0)
        if k >= 0:
            w, h = s.size(*cell(k))
            best = w * h
        return best
    i = 0
    while s.passes(i, 0):
        j = 0
        while s.passes(i, j + 1):
            j += 1
        w, h = s.size(i, j)
        best = w * h if best is None else min(best, w * h)
        i += 1
    return best


def _verified(best: SizeTry, board_path) -> str:
    """The best size's board text, loaded and checked again: complete and clean."""
    from router.boardfile import loads_board
    from router.check import check
    from router.connectivity import routed
    text = best.results[best.seed].board
    b = loads_board(text, str(board_path))
    bad = check(b)
    joined = routed(b)
    if bad or not all(joined.values()):
        raise RuntimeError(f"the board found for {best.w:g} x {best.h:g} mm does not check clean "
                           f"({len(bad)} violations); this is a bug, please report it")
    return text


def format_shrink(r: ShrinkResult) -> str:
    """The sizes tried and the best, for the command line."""
    w0, h0 = r.original
    lines = [f"shrink: {w0:g} x {h0:g} mm ({w0 * h0:.1f} mm^2), step {r.step:g} mm, {r.tries} placement "
             f"seed{'s' if r.tries != 1 else ''} per size, on {r.where}, {r.seconds:.1f} s"]
    if r.bound_area is not None:
        lines.append(f"  lower bound: {r.bound_area:.1f} mm^2 (the parts' rectangles with the placement gap, "
                     "the longest part, the fixed parts where they stay)")
    else:
        lines.append("  lower bound: the parts do not fit even the original size")
    lines.append("  round  size (mm)        area (mm^2)  result")
    for t in r.tried:
        lines.append(f"  {t.round:5d}  {t.w:>6g} x {t.h:<6g}  {t.area:11.1f}  "
                     f"{'works' if t.works else 'no'}: {t.detail()}")
    if r.best is not None:
        b = r.best
        lines.append(f"smallest that works: {b.w:g} x {b.h:g} mm ({b.area:.1f} mm^2, "
                     f"{100 * b.area / (w0 * h0):.0f} % of the original), placement seed {b.seed}")
    else:
        lines.append("no size tried places and routes clean" +
                     (" (interrupted)" if r.interrupted else ""))
    if r.interrupted:
        lines.append("interrupted (Ctrl-C): the best so far, not the end of the search")
    return "\n".join(lines)
