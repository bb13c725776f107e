"""`elbowroom demo`: the bundled demo board, placed, routed, checked, drawn and exported."""
from __future__ import annotations

from importlib import resources
from pathlib import Path

from .boardfile import load_board, loads_board, save_board
from .rules import CAUTION
from .safefile import write_atomic

__all__ = ["run_demo", "demo_text"]


def demo_text() -> str:
    """The bundled demo board file's text."""
    return resources.files("router").joinpath("data/demo.toml").read_text(encoding="utf-8")


def run_demo(out: Path, quiet: bool = False) -> int:
    say = (lambda *a: None) if quiet else print
    out.mkdir(parents=True, exist_ok=True)
    src = out / "demo.toml"
    write_atomic(src, demo_text())
    board = loads_board(demo_text(), str(src))
    say(f"demo board '{board.name}': {len(board.parts)} parts, {len(board.nets)} nets -> {src}")

    if any(p.at is None for p in board.parts):
        from placement import place
        board = place(board, seed=0).board
        save_board(board, out / "placed.toml")
        say(f"placed -> {out / 'placed.toml'}")

    from . import route
    result = route(board, seed=0)
    routed = out / "routed.toml"
    save_board(result.board, routed)
    t = result.figures["totals"]
    say(f"routed {t['routed']} of {t['nets']} nets in {result.seconds:.1f} s: {t['bends']} bends "
        f"(at least {t['bends_lower_bound']}), {t['length']:.1f} mm (at least {t['length_lower_bound']:.1f}), "
        f"{t['vias']} vias -> {routed}")
    board = load_board(routed)

    from .check import check
    violations = check(board)
    say(f"check: {len(violations)} violations")

    from .draw import render
    from .page import write_page
    render(board, out / "routed.png", violations=violations)
    render(board, out / "routed.svg", violations=violations)
    write_page(board, out / "routed.html", violations=violations)
    say(f"pictures -> {out / 'routed.png'}, {out / 'routed.svg'}, {out / 'routed.html'}")

    from .fabfiles import export
    files = export(board, out / "fabrication")
    say(f"fabrication files ({len(files)}) -> {out / 'fabrication'}")
    say(CAUTION)
    return 0
