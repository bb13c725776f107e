"""Imported once by the local runner's fork server, before any worker forks from it.

Routing a tiny board here loads the router's and the placer's compiled (numba) kernels
and every module they use, so each worker process forked from the server starts with
them in memory instead of spending seconds loading them for its first task (and again
for each worker that replaces one that died).
"""
from __future__ import annotations

__all__ = ["WARM_BOARD", "warm"]

#: Our own tiny two-layer board: a lamp switch, four parts to place, three nets.
WARM_BOARD = """format = 1

[board]
name = "warm-up"
size = [14.0, 10.0]

[[parts]]
ref = "J1"
footprint = "header-1x2"
at = [2.5, 5.0]
rotation = 90
fixed = true

[[parts]]
ref = "R1"
footprint = "chip-0805"

[[parts]]
ref = "Q1"
footprint = "sot-23"

[[nets]]
name = "IN"
pins = ["J1.1", "R1.1"]

[[nets]]
name = "BASE"
pins = ["R1.2", "Q1.1"]

[[nets]]
name = "GND"
pins = ["J1.2", "Q1.2"]
"""


def warm() -> None:
    """Place, route and check :data:`WARM_BOARD` once; any failure is only a slower first task."""
    try:
        from .tasks import Task, run_task
        run_task(Task("warm-up", WARM_BOARD, place=True, seed=0))
    except Exception:          # noqa: BLE001 - warming is an optimisation, never an error
        pass


warm()
