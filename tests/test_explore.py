"""explore/: sweep and shrink on local processes and on a real Dask cluster.

Outside references: the sweep's boards are compared byte for byte with what the
`place` and `route` commands write by hand; the shrink's answer with an exhaustive scan
made here with the router's public API (place, route, check), not through explore/; the
non-dominated set with a brute-force pairwise test; the Dask path against a real
`distributed.LocalCluster` (worker processes), whose worker we kill with SIGKILL.
"""
import csv
import json
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

from explore.runners import RETRIES, LocalRunner
from explore.shrink import resized, shrink
from explore.sweep import combinations, parse_rank, parse_seeds, run_sweep
from explore.tasks import Task, parse_result
from router.cli import main

# Our own tiny two-layer board: a plant-light switch, a connector fixed at the left edge.
SWITCH = """format = 1

[board]
name = "plant-light-switch"
size = [20.0, 14.0]

[[parts]]
ref = "J1"
footprint = "header-1x3"
at = [2.5, 7.0]
rotation = 90
fixed = true

[[parts]]
ref = "R1"
footprint = "chip-0805"
at = [8.0, 10.0]

[[parts]]
ref = "R2"
footprint = "chip-0805"
at = [14.0, 10.0]

[[parts]]
ref = "C1"
footprint = "chip-0603"
at = [14.0, 4.0]

[[parts]]
ref = "Q1"
footprint = "sot-23"
at = [9.0, 4.0]

[[nets]]
name = "VIN"
pins = ["J1.1", "R1.1"]

[[nets]]
name = "SENSE"
pins = ["J1.2", "R1.2", "Q1.1"]

[[nets]]
name = "GND"
pins = ["J1.3", "Q1.2", "C1.2"]

[[nets]]
name = "LAMP"
pins = ["Q1.3", "R2.1"]

[[nets]]
name = "FILT"
pins = ["R2.2", "C1.1"]
"""

# A soil-probe amplifier's input stage: five small parts, nothing fixed, to be shrunk.
PROBE = """format = 1

[board]
name = "soil-probe-input"
size = [16.0, 12.0]

[[parts]]
ref = "R1"
footprint = "chip-0805"

[[parts]]
ref = "R2"
footprint = "chip-0805"

[[parts]]
ref = "C1"
footprint = "chip-0603"

[[parts]]
ref = "C2"
footprint = "chip-0603"

[[parts]]
ref = "Q1"
footprint = "sot-23"

[[nets]]
name = "IN"
pins = ["R1.1", "C1.1"]

[[nets]]
name = "BASE"
pins = ["R1.2", "Q1.1", "R2.1"]

[[nets]]
name = "GND"
pins = ["R2.2", "Q1.2", "C2.2"]

[[nets]]
name = "OUT"
pins = ["Q1.3", "C2.1", "C1.2"]
"""


@pytest.fixture(scope="module")
def runner():
    with LocalRunner(2) as r:
        yield r


@pytest.fixture
def switch(tmp_path):
    p = tmp_path / "switch.toml"
    p.write_text(SWITCH)
    return p


def _files(folder: Path) -> dict:
    return {str(p.relative_to(folder)): p.read_bytes() for p in sorted(folder.rglob("*")) if p.is_file()}


# --------------------------------------------------------------- sweep

def test_sweep_equals_route_by_hand(runner, switch, tmp_path):
    out = tmp_path / "sweep"
    sw = run_sweep(switch, out, runner, seeds=[0, 1], bends=[0.5, 2.0], vias=[1.0])
    assert [r["status"] for r in sw.rows] == ["ok"] * 4 and not sw.failed
    # three combinations routed by hand with the route command (its defaults otherwise)
    for seed, b, v in [(0, 0.5, 1.0), (1, 2.0, 1.0), (1, 0.5, 1.0)]:
        hand = tmp_path / f"hand-{seed}-{b}.toml"
        assert main(["route", str(switch), "-o", str(hand), "-q", "--seed", str(seed),
                     "--bend-penalty", str(b), "--via-penalty", str(v)]) == 0
        tid = f"s{seed}-b{b:g}-v{v:g}"
        assert (out / "boards" / f"{tid}.toml").read_bytes() == hand.read_bytes(), tid


def test_sweep_with_place_equals_place_then_route(runner, switch, tmp_path):
    out = tmp_path / "sweep"
    run_sweep(switch, out, runner, seeds=[3], bends=[1.0], vias=[2.0], place=True)
    placed, routed = tmp_path / "placed.toml", tmp_path / "routed.toml"
    assert main(["place", str(switch), "-o", str(placed), "-q", "--all", "--seed", "3"]) == 0
    assert main(["route", str(placed), "-o", str(routed), "-q", "--seed", "3", "--bend-penalty", "1",
                 "--via-penalty", "2"]) == 0
    assert (out / "boards" / "s3-b1-v2.toml").read_bytes() == routed.read_bytes()


def test_sweep_table_ranks_and_front(runner, switch, tmp_path):
    from router.boardfile import load_board
    from router.check import check
    from router.figures import board_figures
    out = tmp_path / "sweep"
    sw = run_sweep(switch, out, runner, seeds=[0, 1], bends=[0.5, 3.0], vias=[0.5, 6.0], rank=("vias", "bends"))
    doc = json.loads((out / "sweep.json").read_text())
    rows = list(csv.DictReader((out / "sweep.csv").open()))
    assert len(rows) == len(doc["results"]) == 8
    assert [r["id"] for r in rows] == [c[0] for c in combinations([0, 1], [0.5, 3.0], [0.5, 6.0])]
    for r in doc["results"]:            # every figure measured again from its board file
        b = load_board(out / r["file"])
        t = board_figures(b)["totals"]
        assert (r["routed"], r["vias"], r["bends"], r["length"]) == (t["routed"], t["vias"], t["bends"], t["length"])
        assert r["violations"] == len(check(b))
    # the best by vias, then bends, then task order
    best = min(doc["results"], key=lambda r: (r["vias"], r["bends"], doc["results"].index(r)))
    assert doc["best"] == sw.best == best["id"]
    assert sorted(r["rank"] for r in doc["results"]) == list(range(1, 9))
    # non-dominated, brute force over the complete routings
    pool = [r for r in doc["results"] if r["routed"] == r["nets"] and r["violations"] == 0]
    front = [r["id"] for r in pool if not any(o["bends"] <= r["bends"] and o["vias"] <= r["vias"] and
                                              (o["bends"], o["vias"]) != (r["bends"], r["vias"]) for o in pool)]
    assert doc["non_dominated"] == front and front
    assert (out / "bends-vias.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


@pytest.mark.parametrize("text,expected", [("1-3,7,2", [1, 2, 3, 7]), ("5", [5]), ("0-0", [0])])
def test_parse_seeds(text, expected):
    assert parse_seeds(text) == expected


@pytest.mark.parametrize("args,needle", [
    (["--seeds", "3-1"], "--seeds"),
    (["--bend-penalty", "1,x"], "--bend-penalty"),
    (["--via-penalty", "-1"], "--via-penalty"),
    (["--rank", "vias,colour"], "--rank"),
])
def test_sweep_bad_options_exit_2(switch, tmp_path, capsys, args, needle):
    assert main(["sweep", str(switch), "-o", str(tmp_path / "o"), "--jobs", "1"] + args) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and needle in err[0]
    assert not (tmp_path / "o").exists()


def test_sweep_unplaced_without_place_exit_2(tmp_path, capsys):
    p = tmp_path / "probe.toml"
    p.write_text(PROBE)
    assert main(["sweep", str(p), "-o", str(tmp_path / "o"), "--jobs", "1"]) == 2
    assert "--place" in capsys.readouterr().err
    assert parse_rank("bends") == ("bends",)


# --------------------------------------------------------------- shrink

def _works(text: str, tries: int) -> bool:
    """A size works: some seed places every part legally and routes every net clean (public API)."""
    from placement import place
    from router import route
    from router.boardfile import dumps_board, loads_board
    from router.check import check
    from router.errors import PlacementError
    board = loads_board(text)
    for seed in range(tries):
        try:
            placed = place(board, seed=seed, all_parts=True, random_baseline=False).board
        except PlacementError:
            continue
        res = route(loads_board(dumps_board(placed)), seed=seed, reroute=True)
        if not res.failed and not check(res.board):
            return True
    return False


def test_shrink_within_one_step_of_exhaustive_scan(runner, tmp_path):
    from router.boardfile import dumps_board, loads_board
    p = tmp_path / "probe.toml"
    p.write_text(PROBE)
    step, tries = 1.0, 2
    res = shrink(p, runner, step=step, tries=tries, keep_aspect=True)
    assert res.best is not None
    # the exhaustive scan: every size of the aspect 16:12 on the 1 mm lattice, smallest first,
    # down to the first that works
    board = loads_board(PROBE)
    sizes = [(16.0 - k, 12.0 - int(k * 12 / 16 + 1e-9)) for k in range(0, 12)]
    sizes = [s for s in sizes if s[0] > 2 and s[1] > 2]
    found = None
    for w, h in reversed(sizes):
        if _works(dumps_board(resized(board, w, h)), tries):
            found = (w, h)
            break
    assert found is not None
    assert abs(res.best.w - found[0]) <= step and abs(res.best.h - found[1]) <= step, (res.best.w, res.best.h, found)
    # the lower bound is never above what works
    assert res.bound_area <= found[0] * found[1] and res.bound_area <= res.best.area
    # the written board is complete and checks clean
    out = tmp_path / "small.toml"
    out.write_text(res.board_text)
    assert main(["check", str(out)]) == 0
    assert loads_board(res.board_text).size == (res.best.w, res.best.h)


def test_shrink_keeps_fixed_parts_at_their_edges(runner, switch, tmp_path):
    from router.boardfile import loads_board
    out = tmp_path / "small.toml"
    assert main(["shrink", str(switch), "-o", str(out), "--step", "1", "--tries", "2", "--jobs", "2"]) == 0
    b = loads_board(out.read_text())
    w, h = b.size
    assert w * h < 20 * 14
    # J1 is nearest the left and (a tie) the bottom edge: its place is unchanged
    assert b.part("J1").at == (2.5, 7.0) and b.part("J1").fixed
    # on the right instead: it keeps its distance to the right edge
    flipped = loads_board(SWITCH.replace("at = [2.5, 7.0]", "at = [17.5, 5.0]"))
    assert resized(flipped, 15.0, 11.0).part("J1").at == (12.5, 5.0)
    assert main(["check", str(out)]) == 0


def test_shrink_bad_step_exit_2(switch, tmp_path, capsys):
    assert main(["shrink", str(switch), "-o", str(tmp_path / "o.toml"), "--step", "0.3", "--jobs", "1"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "--step" in err[0] and "grid" in err[0]
    assert not (tmp_path / "o.toml").exists()


# --------------------------------------------------------------- dying workers, Ctrl-C

def _die_on_request(text: str) -> str:
    """A task function for the tests: the worker process dies on the text "die"."""
    if text == "die":
        os._exit(3)
    return text.upper()


def test_local_killed_worker_costs_one_retry(runner):
    tasks = [(f"t{s}", Task(f"t{s}", SWITCH, seed=s).text()) for s in range(3)]
    killed = []

    def kill_first(tid, pid):
        if not killed:
            killed.append(tid)
            os.kill(pid, signal.SIGKILL)
    out = runner.run(tasks, on_start=kill_first)
    assert not out.failed and set(out.results) == {"t0", "t1", "t2"}
    assert out.retried == killed and out.attempts[killed[0]] == 2
    # the retried task's result is the one a clean run gives
    again = runner.run([t for t in tasks if t[0] == killed[0]])
    assert parse_result(again.results[killed[0]]).board == parse_result(out.results[killed[0]]).board


def test_local_worker_dying_every_time_is_reported(runner):
    out = runner.run([("a", "ok"), ("b", "die"), ("c", "fine")], fn=_die_on_request)
    assert out.results == {"a": "OK", "c": "FINE"}
    assert list(out.failed) == ["b"] and "died" in out.failed["b"]
    assert out.attempts["b"] == 1 + RETRIES


def test_sweep_ctrl_c_keeps_finished(switch, tmp_path):
    # many tasks, so that the sweep is surely still running when the signal comes; the child gets
    # the default SIGINT handling back, since a shell running the tests in the background (no job
    # control) starts them with SIGINT ignored, and Python then never raises KeyboardInterrupt
    out = tmp_path / "sweep"
    proc = subprocess.Popen([sys.executable, "-m", "router.cli", "sweep", str(switch), "-o", str(out), "--jobs", "1",
                             "--seeds", "0-199", "--bend-penalty", "1", "--via-penalty", "2"],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
                            preexec_fn=lambda: signal.signal(signal.SIGINT, signal.SIG_DFL))
    deadline = time.monotonic() + 120
    while time.monotonic() < deadline and not list((out / "boards").glob("*.toml")):
        time.sleep(0.1)
    proc.send_signal(signal.SIGINT)
    stdout, stderr = proc.communicate(timeout=60)
    assert proc.returncode == 130, stderr
    assert "interrupted" in stderr and "Traceback" not in stderr
    doc = json.loads((out / "sweep.json").read_text())
    assert doc["interrupted"] is True
    done = [r for r in doc["results"] if r["status"] == "ok"]
    assert 1 <= len(done) < 200
    for r in done:
        assert (out / r["file"]).exists()
    assert {r["status"] for r in doc["results"]} <= {"ok", "not run"}


# --------------------------------------------------------------- Dask

@pytest.fixture(scope="module")
def cluster():
    distributed = pytest.importorskip(
        "distributed", reason="the cluster extra is not installed (pip install 'elbowroom[cluster]')")
    cl = distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None)
    try:
        with distributed.Client(cl) as c:
            c.run(lambda: __import__("explore.warm"))      # workers load the router once, in parallel
        yield cl
    finally:
        cl.close()


def test_dask_sweep_byte_identical_to_local(runner, cluster, switch, tmp_path):
    from explore.runners import DaskRunner
    opts = dict(seeds=[0, 1], bends=[0.5], vias=[1.0, 3.0], place=True)
    run_sweep(switch, tmp_path / "local", runner, **opts)
    with DaskRunner(cluster.scheduler_address) as dr:
        sw = run_sweep(switch, tmp_path / "dask", dr, **opts)
    assert not sw.failed
    local, dask = _files(tmp_path / "local"), _files(tmp_path / "dask")
    assert local.keys() == dask.keys() and len(local) == 4 + 3
    assert local == dask


def test_dask_killed_worker_costs_one_retry(cluster):
    from explore.runners import DaskRunner
    tasks = [(f"t{s}", Task(f"t{s}", SWITCH, seed=s).text()) for s in range(4)]
    with DaskRunner(cluster.scheduler_address) as dr:
        pids = dr.worker_pids()
        killed = []

        def kill_first(tid, worker):
            if not killed:
                killed.append(tid)
                os.kill(pids[worker], signal.SIGKILL)
        out = dr.run(tasks, on_start=kill_first)
        assert not out.failed and set(out.results) == {t for t, _ in tasks}
        assert out.retried == killed and out.attempts[killed[0]] == 2
        with LocalRunner(1) as lr:
            ref = lr.run(tasks)
    for t, _ in tasks:
        assert parse_result(out.results[t]).board == parse_result(ref.results[t]).board


@pytest.mark.parametrize("cmd", ["sweep", "shrink"])
def test_help(cmd, capsys):
    with pytest.raises(SystemExit) as info:
        main([cmd, "--help"])
    assert info.value.code == 0 and "--cluster" in capsys.readouterr().out
