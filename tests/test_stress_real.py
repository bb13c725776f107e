"""scripts/stress_real.py's same task: a board cut down to some nets, routed by two routers.

The baseline here is this checkout itself (run in a subprocess as the script runs any reference),
so the two routings of the cut board must agree exactly: the same nets routed, the same vias.
"""
import importlib.util
from pathlib import Path

from router.geometry import placed_pads
from router.realgen import real_board

ROOT = Path(__file__).resolve().parent.parent


def _script():
    spec = importlib.util.spec_from_file_location("stress_real", ROOT / "scripts" / "stress_real.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


def test_cut_board_keeps_the_pads_of_the_nets_it_drops():
    sr = _script()
    made = real_board(0, 30)
    keep = {n.name for n in made.nets[::2]}
    cut = sr.cut_board(made, keep)
    assert {n.name for n in cut.nets} == keep
    assert len(made.nets) > len(cut.nets)                       # the original is left as it was
    before = {(p.ref, p.pin): (p.x, p.y) for p in placed_pads(made)}
    after = {(p.ref, p.pin): (p.x, p.y) for p in placed_pads(cut)}
    assert after == before                                       # every pad still there, as copper
    assert all(p.net not in {n.name for n in made.nets} - keep for p in placed_pads(cut))


def test_same_task_against_this_checkout_agrees(tmp_path):
    sr = _script()
    made = real_board(0, 30)
    keep = {n.name for n in made.nets if n.net_class == "default"}
    text = sr.dumps_board(sr.cut_board(made, keep))
    base = sr.run_baseline(ROOT, text, tmp_path, 0)
    assert "error" not in base
    got = sr.same_task(made, base, ROOT, tmp_path, 0)
    assert got is not None
    nets, routed, vias, b_routed, b_vias = got
    assert nets == len(base["joined"]) and routed == b_routed == nets
    assert vias == b_vias
