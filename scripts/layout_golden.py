"""Digests of everything the resolved layout (router.layout) feeds, on a few fixed boards.

    python scripts/layout_golden.py --boards     # route the three boards anew into tests/data/layout/
    python scripts/layout_golden.py --write      # digests of the outputs into tests/data/layout/golden.json
    python scripts/layout_golden.py              # compare today's outputs with the stored digests

The routed boards in ``tests/data/layout/`` and their digests were written by the code on main
at 913f18d, before the consumers moved onto ``router.layout`` (the board file is the router's
result then; the digests are of the check, the figures, the pictures and the fabrication files
made from it). One change since, on purpose: the check's candidate pairs now come in file
order from the layout's index instead of the order of a copper-only rtree, so where two pieces
of one trace lie at exactly the same distance from another net's copper (a corner's shared
point) the message names the first of them: that changed the six "+shifted" check, SVG and
page digests (the same violations, distances and places; one piece name in each). Another: the
figures gained ``escape_vias`` and ``escape_via_pads`` (per net and in totals), which changed
the figures and page digests of all six boards; with those fields left out, all 78 outputs are
the bytes stored before (and again when a via joined to its pad by a whole trace of a few segments
came to count too: the real board's escape vias 7 -> 12, nothing else in its figures changed).
``tests/test_layout.py`` compares today's outputs with them byte for byte. A
change that is meant to alter one of these outputs (a new Gerber attribute, say) rewrites the
digests with ``--write`` and says so in its commit.
"""
from __future__ import annotations

import argparse
import copy
import hashlib
import json
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

DATA = ROOT / "tests" / "data" / "layout"
GOLDEN = DATA / "golden.json"
BOARDS = ("demo", "gen", "real")


def _sha(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()[:16]


def routed_boards() -> dict:
    """Route the three boards as the router does today (placing the demo's unplaced parts first)."""
    from placement import place
    from router import route
    from router.boardfile import loads_board
    from router.boardgen import generate_board
    from router.demo import demo_text
    from router.realgen import real_board
    demo = loads_board(demo_text(), "demo.toml")
    demo = place(demo, seed=0).board
    return {"demo": route(demo, seed=0).board,
            "gen": route(generate_board(3, nets=14, size=(40.0, 30.0)), seed=0).board,
            "real": route(real_board(1, nets=30, angled=True), seed=0).board}


def shifted(board):
    """A copy of `board` with every third trace moved 0.3 mm right: clearance and open findings."""
    b = copy.deepcopy(board)
    for k, t in enumerate(b.traces):
        if k % 3 == 0:
            t.points = [(x + 0.3, y) for x, y in t.points]
    return b


def outputs(name: str, board) -> dict:
    """Digest of each output made from `board`: check, warnings, figures, pictures, fabrication files."""
    from router.check import check, violations_json, warnings
    from router.draw import render
    from router.fabfiles import export
    from router.figures import board_figures
    from router.page import write_page
    out = {}
    for label, b in ((name, board), (name + "+shifted", shifted(board))):
        v = check(b)
        out[f"{label}/check.json"] = _sha(json.dumps(violations_json(v), sort_keys=True).encode())
        out[f"{label}/warnings.json"] = _sha(json.dumps(violations_json(warnings(b)), sort_keys=True).encode())
        out[f"{label}/figures.json"] = _sha(json.dumps(board_figures(b), sort_keys=True).encode())
        with tempfile.TemporaryDirectory() as tmp:
            tmp = Path(tmp)
            render(b, tmp / "board.svg", violations=v)
            out[f"{label}/board.svg"] = _sha((tmp / "board.svg").read_bytes())
            write_page(b, tmp / "board.html", violations=v)
            out[f"{label}/board.html"] = _sha((tmp / "board.html").read_bytes())
            if label == name:
                for f in sorted(export(b, tmp / "fab")):
                    out[f"{label}/fab/{Path(f).name}"] = _sha(Path(f).read_bytes())
    return out


def all_outputs() -> dict:
    from router.boardfile import load_board
    out = {}
    for name in BOARDS:
        out.update(outputs(name, load_board(DATA / f"{name}.toml")))
    return out


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--boards", action="store_true", help="route the boards anew into tests/data/layout/")
    ap.add_argument("--write", action="store_true", help="store the digests of today's outputs")
    args = ap.parse_args(argv)
    DATA.mkdir(parents=True, exist_ok=True)
    if args.boards:
        from router.boardfile import save_board
        for name, b in routed_boards().items():
            save_board(b, DATA / f"{name}.toml")
            print(f"wrote {DATA / (name + '.toml')}")
    got = all_outputs()
    if args.write:
        GOLDEN.write_text(json.dumps(got, indent=1, sort_keys=True) + "\n", encoding="utf-8")
        print(f"wrote {GOLDEN} ({len(got)} digests)")
        return 0
    want = json.loads(GOLDEN.read_text(encoding="utf-8"))
    bad = sorted(k for k in set(want) | set(got) if want.get(k) != got.get(k))
    for k in bad:
        print(f"differs: {k}")
    print(f"{len(got) - len(bad)} of {len(got)} outputs the same bytes")
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main())
