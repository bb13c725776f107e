"""``elbowroom sweep``: route one board with every combination of seeds and penalties, rank them.

Every combination of the seeds, bend penalties and via penalties is one task
(:mod:`explore.tasks`): with ``place``, the parts that are not fixed are placed with the
seed first (as ``elbowroom place --all --seed S``), then the board is routed as
``elbowroom route --seed S --bend-penalty B --via-penalty V`` routes it. Every result is
kept: its routed board file under ``DIR/boards/``, and one row of figures in
``DIR/sweep.csv`` and ``DIR/sweep.json``. The best is named by a stated order
(:data:`RANK`: most nets routed, then fewest violations, vias, bends, mm of length; the
task order breaks ties), and ``DIR/bends-vias.png`` plots bends against vias with the
non-dominated routings marked (:mod:`explore.plot`).

Everything written depends on the results only, never on where or when they ran, so
a sweep on local processes and one on a cluster write the same bytes.
"""
from __future__ import annotations

import csv
import io
import json
import math
import time
from dataclasses import dataclass, field
from pathlib import Path
from typing import Optional, Sequence

from router.errors import BoardError
from router.safefile import write_atomic

from .runners import Interrupted
from .tasks import Result, Task, parse_result

__all__ = ["RANK", "parse_seeds", "parse_numbers", "parse_rank", "combinations", "rank_rows", "Sweep",
           "run_sweep"]

#: The default order that names the best routing: (figure, better when higher?).
RANK = ("routed", "violations", "vias", "bends", "length")
_HIGHER_IS_BETTER = {"routed"}
_COLUMNS = ("id", "seed", "bend_penalty", "via_penalty", "place", "status", "nets", "routed", "violations",
            "vias", "bends", "length", "jumpers", "rank", "non_dominated", "file", "message")


def parse_seeds(text: str, entry: str = "--seeds") -> list[int]:
    """Seeds from ``"1-20"``, ``"0,3,7"`` or ``"1-4,9"``, in the order given, without repeats.

    >>> parse_seeds("1-3,7,2")
    [1, 2, 3, 7]
    """
    out: dict[int, None] = {}
    for piece in str(text).split(","):
        piece = piece.strip()
        try:
            if "-" in piece[1:]:
                a, b = piece.split("-", 1) if not piece.startswith("-") else piece[1:].split("-", 1)
                lo, hi = int(a), int(b)
                if hi < lo:
                    raise ValueError
                for s in range(lo, hi + 1):
                    out[s] = None
            else:
                out[int(piece)] = None
        except ValueError:
            raise BoardError(None, entry, f"'{piece}' is not a seed or a range of seeds; "
                             "write e.g. 1-20 or 0,3,7") from None
    if not out:
        raise BoardError(None, entry, "no seed given; write e.g. 1-20")
    if len(out) > 100000:
        raise BoardError(None, entry, f"{len(out)} seeds is too many for one sweep; use fewer")
    return list(out)


def parse_numbers(text: str, entry: str) -> list[float]:
    """Penalties from ``"0.5,1,2"``: numbers of mm, 0 or more, in the order given, without repeats."""
    out: dict[float, None] = {}
    for piece in str(text).split(","):
        try:
            v = float(piece)
        except ValueError:
            raise BoardError(None, entry, f"'{piece.strip()}' is not a number; write e.g. 0.5,1,2") from None
        if not math.isfinite(v) or v < 0:
            raise BoardError(None, entry, f"{piece.strip()} is not a penalty; use mm of trace, 0 or more")
        out[v] = None
    return list(out)


def parse_rank(text: Optional[str]) -> tuple[str, ...]:
    """The ranking order from ``"vias,bends"`` (each of :data:`RANK` at most once).

    >>> parse_rank("bends,vias")
    ('bends', 'vias')
    """
    if text is None:
        return RANK
    keys = tuple(k.strip() for k in str(text).split(",") if k.strip())
    bad = [k for k in keys if k not in RANK]
    if bad or not keys or len(set(keys)) != len(keys):
        raise BoardError(None, "--rank", f"'{text}' is not an order of {', '.join(RANK)} "
                         "(each at most once, e.g. vias,bends)")
    return keys


def _num(v: float) -> str:
    return f"{v:g}"


def combinations(seeds: Sequence[int], bends: Sequence[float], vias: Sequence[float]):
    """(id, seed, bend, via) for every combination, seeds outermost, in a fixed order."""
    return [(f"s{s}-b{_num(b)}-v{_num(v)}", s, b, v) for s in seeds for b in bends for v in vias]


def rank_rows(rows: list[dict], order: Sequence[str] = RANK) -> list[dict]:
    """The finished rows, best first, by `order`; rows that found no placement come last."""
    def key(r):
        placed = r["status"] == "ok"
        k = [0 if placed else 1]
        for name in order:
            v = r.get(name)
            if v is None:
                k.append(math.inf)
            else:
                k.append(-v if name in _HIGHER_IS_BETTER else v)
        k.append(r["order"])
        return tuple(k)
    return sorted([r for r in rows if r["status"] in ("ok", "unplaced")], key=key)


@dataclass
class Sweep:
    """What a sweep did: the rows (every combination, finished or not), the best, the files."""
    rows: list[dict]
    best: Optional[str]
    front: list[str]
    failed: dict = field(default_factory=dict)
    interrupted: bool = False
    seconds: float = 0.0
    where: str = ""
    retried: list = field(default_factory=list)
    files: list = field(default_factory=list)


def _row(order: int, tid: str, seed: int, b: float, v: float, place: bool) -> dict:
    return {"order": order, "id": tid, "seed": seed, "bend_penalty": b, "via_penalty": v, "place": place,
            "status": "not run", "nets": None, "routed": None, "violations": None, "vias": None,
            "bends": None, "length": None, "jumpers": None, "rank": None, "non_dominated": False,
            "file": None, "message": ""}


def _summary(r: dict) -> str:
    if r["status"] != "ok":
        return f"{r['id']}: no placement"
    return (f"{r['id']}: {r['routed']}/{r['nets']} nets, {r['violations']} violations, {r['vias']} vias, "
            f"{r['bends']} bends, {r['length']:.1f} mm")


def run_sweep(board_path, out_dir, runner, seeds: Sequence[int] = (0,), bends: Sequence[float] = (1.0,),
              vias: Sequence[float] = (2.0,), place: bool = False, reroute: bool = False,
              rank: Sequence[str] = RANK, progress: bool = False) -> Sweep:
    """Route `board_path` with every combination on `runner` and write the results into `out_dir`.

    Parameters
    ----------
    board_path : the board file
    out_dir : folder for ``boards/``, ``sweep.csv``, ``sweep.json`` and ``bends-vias.png``
    runner : an entered :class:`explore.runners.LocalRunner` or :class:`DaskRunner`
    seeds, bends, vias : the values combined (placement and route seed; penalties in mm)
    place : place the parts that are not fixed first, with the seed
    reroute : remove the copper that is not fixed first (as ``route --reroute``)
    rank : the order naming the best (names of :data:`RANK`)
    progress : a tqdm bar on stderr (tasks done, failed, the best so far)

    Returns
    -------
    Sweep

    Raises
    ------
    BoardError
        Bad board file; parts without a place when `place` is false.
    KeyboardInterrupt
        After writing what had finished (``Sweep.interrupted``), re-raised as
        :class:`explore.runners.Interrupted` carrying the :class:`Sweep` as ``.sweep``.
    """
    from router import __version__
    from router.boardfile import load_board

    t0 = time.perf_counter()
    board_path = Path(board_path)
    out_dir = Path(out_dir)
    board = load_board(board_path)
    text = board_path.read_text(encoding="utf-8")
    unplaced = [p.ref for p in board.parts if p.at is None]
    if unplaced and not place:
        raise BoardError(str(board_path), f"parts ({unplaced[0]})",
                         f"{len(unplaced)} part(s) have no place; add --place to place them in every "
                         "routing, or run `elbowroom place` first")
    combos = combinations(seeds, bends, vias)
    rows = {tid: _row(k, tid, s, b, v, place) for k, (tid, s, b, v) in enumerate(combos)}
    tasks = [(tid, Task(tid, text, place=place, seed=s, bend_penalty=b, via_penalty=v, reroute=reroute).text())
             for tid, s, b, v in combos]
    boards_dir = out_dir / "boards"
    failed: dict = {}
    bar = None
    if progress:
        from tqdm import tqdm
        bar = tqdm(total=len(tasks), unit="task", desc="sweep", leave=True)
    best_so_far: list = []

    def on_result(tid, res_text):
        res: Result = parse_result(res_text)
        r = rows[tid]
        if res.version != __version__:
            on_failed(tid, f"the worker runs elbowroom {res.version or '?'}, this machine {__version__}; "
                      "install the same version on every worker")
            return
        r.update(status=res.status, nets=res.nets, routed=res.routed, violations=res.violations,
                 vias=res.vias, bends=res.bends, length=res.length, jumpers=res.jumpers, message=res.message)
        if res.status == "ok":
            name = f"boards/{tid}.toml"
            write_atomic(out_dir / name, res.board)
            r["file"] = name
            if not r["message"] and res.failed_nets:
                r["message"] = "; ".join(f"{n}: {why}" for n, why in res.failed_nets.items())
        if bar is not None:
            ranked = rank_rows([x for x in rows.values() if x["status"] in ("ok", "unplaced")], rank)
            best_so_far[:] = ranked[:1]
            bar.update(1)
            bar.set_postfix_str(f"failed {len(failed)}, best {_summary(ranked[0])}", refresh=False)

    def on_failed(tid, reason):
        failed[tid] = reason
        rows[tid].update(status="failed", message=reason)
        if bar is not None:
            bar.update(1)
            bar.set_postfix_str(f"failed {len(failed)}" + (f", best {_summary(best_so_far[0])}"
                                                            if best_so_far else ""), refresh=False)

    boards_dir.mkdir(parents=True, exist_ok=True)
    interrupted = False
    retried: list = []
    try:
        outcome = runner.run(tasks, on_result=on_result, on_failed=on_failed)
        retried = outcome.retried
    except Interrupted as exc:
        interrupted = True
        retried = exc.outcome.retried
    finally:
        if bar is not None:
            bar.close()
    sweep = _finish(board, board_path, out_dir, list(rows.values()), rank, failed, interrupted)
    sweep.seconds = time.perf_counter() - t0
    sweep.where = runner.where
    sweep.retried = retried
    if interrupted:
        exc = Interrupted(None)
        exc.sweep = sweep
        raise exc
    return sweep


def _finish(board, board_path: Path, out_dir: Path, rows: list[dict], rank, failed: dict,
            interrupted: bool) -> Sweep:
    """Rank, mark the front, write the table (CSV, JSON) and the picture."""
    from .plot import non_dominated, plot_bends_vias
    ranked = rank_rows(rows, rank)
    for k, r in enumerate(ranked, 1):
        r["rank"] = k
    front = non_dominated(rows)
    for r in rows:
        r["non_dominated"] = r["id"] in front
    best = ranked[0]["id"] if ranked and ranked[0]["status"] == "ok" else None
    table = [{c: r[c] for c in _COLUMNS} for r in rows]
    doc = {
        "board": str(board_path),
        "name": board.name,
        "rank_order": list(rank),
        "best": best,
        "non_dominated": front,
        "tasks": len(rows),
        "finished": sum(r["status"] in ("ok", "unplaced") for r in rows),
        "failed": [{"id": k, "reason": failed[k]} for k in sorted(failed, key=lambda k: [r["id"] for r in rows].index(k))],
        "interrupted": interrupted,
        "results": table,
    }
    write_atomic(out_dir / "sweep.json", json.dumps(doc, indent=2) + "\n")
    buf = io.StringIO()
    w = csv.DictWriter(buf, fieldnames=list(_COLUMNS), lineterminator="\n")
    w.writeheader()
    for r in table:
        w.writerow({k: ("" if v is None else v) for k, v in r.items()})
    write_atomic(out_dir / "sweep.csv", buf.getvalue())
    plot_bends_vias(rows, out_dir / "bends-vias.png", board.name, best=best)
    files = [out_dir / "sweep.csv", out_dir / "sweep.json", out_dir / "bends-vias.png"]
    return Sweep(rows, best, front, dict(failed), interrupted, files=files)


def format_sweep(sweep: Sweep, rank: Sequence[str] = RANK, out_dir=None) -> str:
    """A few lines for the command line."""
    rows = sweep.rows
    done = sum(r["status"] in ("ok", "unplaced") for r in rows)
    lines = [f"{len(rows)} routings on {sweep.where} in {sweep.seconds:.1f} s: {done} finished, "
             f"{len(sweep.failed)} failed" + (", interrupted (Ctrl-C)" if sweep.interrupted else "")]
    if sweep.retried:
        lines.append(f"  started again after a worker died: {', '.join(sweep.retried)}")
    for tid, why in sweep.failed.items():
        lines.append(f"  failed: {tid}: {why}")
    unplaced = sum(r["status"] == "unplaced" for r in rows)
    if unplaced:
        lines.append(f"  {unplaced} found no placement")
    if sweep.best:
        b = next(r for r in rows if r["id"] == sweep.best)
        where = f" -> {Path(out_dir) / b['file']}" if out_dir is not None else ""
        lines.append(f"best by {', '.join(rank)}: {_summary(b)}{where}")
    else:
        lines.append("no routing finished")
    if sweep.front:
        lines.append(f"non-dominated on bends and vias: {', '.join(sweep.front)}")
    for f in sweep.files:
        lines.append(f"wrote {f}")
    return "\n".join(lines)
