"""`elbowroom demo`: the bundled demo board, then every stage this version has built.

The stages run in the order of the data flow (place, route, check, draw,
export); a stage whose module is not in this version yet is named and skipped,
so the demo always shows what the installed version can do.
"""
from __future__ import annotations

from importlib import resources
from pathlib import Path

from .boardfile import loads_board, save_board
from .rules import CAUTION
from .safefile import write_atomic

__all__ = ["run_demo", "demo_text"]


def demo_text() -> str:
    """The bundled demo board file's text."""
    return resources.files("router").joinpath("data/demo.toml").read_text(encoding="utf-8")


def _have(module: str) -> bool:
    import importlib.util
    return importlib.util.find_spec(module) is not None


def run_demo(out: Path, quiet: bool = False) -> int:
    say = (lambda *a: None) if quiet else print
    out.mkdir(parents=True, exist_ok=True)
    src = out / "demo.toml"
    write_atomic(src, demo_text())
    board = loads_board(demo_text(), str(src))
    from .geometry import part_footprint
    pads = sum(len(part_footprint(board, p).pads) for p in board.parts)
    waiting = sum(1 for p in board.parts if p.at is None)
    say(f"demo board '{board.name}': {len(board.parts)} parts ({waiting} without a place), {pads} pads, "
        f"{len(board.nets)} nets, {board.copper_layers} copper layers -> {src}")
    skipped = []

    if any(p.at is None for p in board.parts):
        if _have("placement.anneal"):
            from placement import place
            placed = place(board, seed=0)
            board = placed.board
            save_board(board, out / "placed.toml")
            say(f"placed -> {out / 'placed.toml'}")
            for line in placed.summary().splitlines()[1:]:
                say("  " + line.strip())
        else:
            skipped.append("place")

    if _have("router.negotiate"):
        from . import route
        result = route(board, seed=0)
        board = result.board
        save_board(board, out / "routed.toml")
        t = result.figures["totals"]
        say(f"routed {t['routed']} of {t['nets']} nets in {result.seconds:.1f} s: {t['bends']} bends, "
            f"{t['length']:.1f} mm (lower bound {t['length_lower_bound']:.1f} mm), {t['vias']} vias "
            f"-> {out / 'routed.toml'}")
        for layer, pa in (result.figures.get("pours") or {}).items():    # router.pour
            if pa["area"]:
                say(f"  poured {layer}: {pa['area']:.1f} mm^2, {100 * pa['share']:.0f} % of the board")
    else:
        skipped.append("route")

    violations = None
    if _have("router.check"):
        from .check import check
        violations = check(board)
        say(f"check: {len(violations)} violations")
    else:
        skipped.append("check")

    if _have("router.draw"):
        from .draw import render
        render(board, out / "board.png", violations=violations)
        say(f"picture -> {out / 'board.png'}")
    else:
        skipped.append("render")

    if _have("router.fabfiles"):
        from .fabfiles import export
        files = export(board, out / "fabrication")
        say(f"fabrication files ({len(files)}) -> {out / 'fabrication'}")
    else:
        skipped.append("export")

    if skipped:
        say(f"not in this version yet: {', '.join(skipped)}")
    say(CAUTION)
    from .cautions import cautions
    for line in cautions(board):
        say(line)
    return 0
