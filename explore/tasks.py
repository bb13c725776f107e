"""One task: place (optionally) and route one board, sent and returned as TOML text.

A task is everything a worker needs, as plain text, so that no shared disk is needed
and a task runs the same on a local process and on a cluster worker::

    board = "format = 1\\n[board]\\n..."     # the whole board file, as a string

    [task]
    id = "s3-b1-v2"
    place = true          # place every part that is not fixed first (as `place --all`)
    seed = 3              # the placement seed and the route seed
    bend_penalty = 1.0    # optional: the route's default when left out
    via_penalty = 2.0     # optional
    reroute = false       # remove the copper that is not fixed first (as `route --reroute`)

The result is TOML text too: the routed board file (byte for byte what ``elbowroom
route`` would write for the same input and options) and its figures::

    board = "..."         # the routed board file ("" when placement failed)

    [result]
    id = "s3-b1-v2"
    version = "0.1.0"     # the worker's elbowroom; results of another version are refused
    status = "ok"         # or "unplaced": the parts found no legal place (message says why)
    nets = 7              # nets of the board, routed, violations of `check`, and the
    routed = 7            # totals of `report` (bends, length, vias, jumpers)
    ...

    [timing]              # not part of the result proper: differs from run to run
    seconds = 1.62

The same task text gives the same result text outside ``[timing]``, whichever process
or machine runs it (placement and routing are seeded; see :func:`run_task`).
"""
from __future__ import annotations

import time
import tomllib
from dataclasses import dataclass, field
from typing import Optional

import tomli_w

__all__ = ["Task", "Result", "run_task", "run_task_text", "task_text", "parse_task", "parse_result",
           "RESULT_FIELDS"]

#: The figures of a result, in the order tables list them.
RESULT_FIELDS = ("nets", "routed", "violations", "vias", "bends", "length", "jumpers")


@dataclass
class Task:
    """One place-and-route of one board (see the module docstring for the text form)."""
    id: str
    board: str                                  # board-file text
    place: bool = False
    seed: int = 0
    bend_penalty: Optional[float] = None
    via_penalty: Optional[float] = None
    reroute: bool = False

    def text(self) -> str:
        """The task as TOML text."""
        t = {"id": self.id, "place": self.place, "seed": int(self.seed), "reroute": self.reroute}
        if self.bend_penalty is not None:
            t["bend_penalty"] = float(self.bend_penalty)
        if self.via_penalty is not None:
            t["via_penalty"] = float(self.via_penalty)
        return tomli_w.dumps({"board": self.board, "task": t})


@dataclass
class Result:
    """What one task made: the routed board text and its figures."""
    id: str
    status: str                                 # "ok" or "unplaced"
    board: str = ""                             # the routed board file ("" when unplaced)
    nets: int = 0
    routed: int = 0
    violations: Optional[int] = None            # None when unplaced (nothing to check)
    vias: Optional[int] = None
    bends: Optional[int] = None
    length: Optional[float] = None
    jumpers: Optional[int] = None
    message: str = ""                           # why unplaced
    failed_nets: dict = field(default_factory=dict)      # net -> reason
    violation_counts: dict = field(default_factory=dict)  # rule -> count
    version: str = ""
    seconds: float = 0.0                        # the task's own time (not part of the result proper)
    route_seconds: float = 0.0

    @property
    def complete(self) -> bool:
        """Every net routed and no violation: a board ready for the board house."""
        return self.status == "ok" and self.routed == self.nets and self.violations == 0

    def text(self) -> str:
        r = {"id": self.id, "version": self.version, "status": self.status, "nets": self.nets,
             "routed": self.routed}
        for k in ("violations", "vias", "bends", "length", "jumpers"):
            if getattr(self, k) is not None:
                r[k] = getattr(self, k)
        if self.message:
            r["message"] = self.message
        if self.failed_nets:
            r["failed_nets"] = dict(self.failed_nets)
        if self.violation_counts:
            r["violation_counts"] = dict(self.violation_counts)
        return tomli_w.dumps({"board": self.board, "result": r,
                              "timing": {"seconds": round(self.seconds, 4),
                                         "route_seconds": round(self.route_seconds, 4)}})


def task_text(id: str, board: str, **options) -> str:
    """Shorthand: the text of ``Task(id, board, **options)``."""
    return Task(id, board, **options).text()


def parse_task(text: str) -> Task:
    d = tomllib.loads(text)
    t = d["task"]
    return Task(t["id"], d["board"], place=bool(t.get("place", False)), seed=int(t.get("seed", 0)),
                bend_penalty=t.get("bend_penalty"), via_penalty=t.get("via_penalty"),
                reroute=bool(t.get("reroute", False)))


def parse_result(text: str) -> Result:
    d = tomllib.loads(text)
    r = d["result"]
    timing = d.get("timing", {})
    return Result(r["id"], r["status"], d.get("board", ""), r.get("nets", 0), r.get("routed", 0),
                  r.get("violations"), r.get("vias"), r.get("bends"), r.get("length"), r.get("jumpers"),
                  r.get("message", ""), dict(r.get("failed_nets", {})), dict(r.get("violation_counts", {})),
                  r.get("version", ""), float(timing.get("seconds", 0.0)), float(timing.get("route_seconds", 0.0)))


def run_task(task: Task) -> Result:
    """Place (when asked) and route one board; check it and measure it.

    Parameters
    ----------
    task : Task

    Returns
    -------
    Result
        ``status`` "unplaced" when the placement finds no legal place for the parts (the
        message says why); otherwise the routed board as board-file text, the number of
        nets routed, the violations of ``check`` and the totals of ``report``.

    Raises
    ------
    BoardError
        When the board text is bad input.

    Notes
    -----
    With ``place``, the parts are placed as ``elbowroom place --all --seed S`` places them,
    the placed board goes through its file text (as it would between the two commands) and
    is routed as ``elbowroom route --seed S`` routes it, so the routed board file is the one
    those two commands write, byte for byte.
    """
    from router import __version__, route
    from router.boardfile import dumps_board, loads_board
    from router.check import check        # the module, not router.check (which a first import replaces)
    from router.errors import PlacementError

    t0 = time.perf_counter()
    where = f"task {task.id}"
    board = loads_board(task.board, where)
    nets = len(board.nets)
    if task.place:
        from placement import place
        try:
            placed = place(board, seed=task.seed, all_parts=True, random_baseline=False)
        except PlacementError as exc:
            return Result(task.id, "unplaced", nets=nets, message=exc.message, version=__version__,
                          seconds=time.perf_counter() - t0)
        board = loads_board(dumps_board(placed.board), where)
    t1 = time.perf_counter()
    result = route(board, bend_penalty=task.bend_penalty, via_penalty=task.via_penalty, seed=task.seed,
                   reroute=task.reroute)
    t2 = time.perf_counter()
    text = dumps_board(result.board)
    violations = check(result.board)
    counts: dict[str, int] = {}
    for v in violations:
        counts[v.rule] = counts.get(v.rule, 0) + 1
    tot = result.figures["totals"]
    return Result(task.id, "ok", text, nets=int(tot["nets"]), routed=int(tot["routed"]),
                  violations=len(violations), vias=int(tot["vias"]), bends=int(tot["bends"]),
                  length=float(tot["length"]), jumpers=int(tot["jumpers"]),
                  failed_nets=dict(result.failed), violation_counts=dict(sorted(counts.items())),
                  version=__version__, seconds=time.perf_counter() - t0, route_seconds=t2 - t1)


def run_task_text(text: str) -> str:
    """:func:`run_task` from TOML text to TOML text: what a worker runs."""
    return run_task(parse_task(text)).text()
