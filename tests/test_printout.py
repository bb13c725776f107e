"""The 1:1 print, read back with pdfplumber (a PDF reader from PyPI): page size, the scale bar's
drawn length and the board outline's extent, exact to 0.1 mm; black copper where the board has it."""
from pathlib import Path

import pdfplumber
import pytest

from router.boardfile import load_board, loads_board
from router.cli import main
from router.geometry import outline_polygon
from router.printout import SCALE_BAR, print_layer

ROOT = Path(__file__).resolve().parent.parent
PT = 72.0 / 25.4                  # PDF units are points: 72 per inch (ISO 32000-1, 8.3.2.3)
EXACT = 0.1                       # mm


def _mm(v):
    return v / PT


def _read(path):
    with pdfplumber.open(path) as pdf:
        assert len(pdf.pages) == 1
        page = pdf.pages[0]
        return (_mm(page.width), _mm(page.height)), page.lines, page.rects + page.curves, _mm(page.height)


@pytest.mark.parametrize("name,layer,mirror", [("bench-power-monitor.toml", "top", True),
                                               ("bench-power-monitor.toml", "bottom", False),
                                               ("soil-alarm-1layer.toml", "bottom", False)])
def test_page_size_scale_bar_and_outline_exact(tmp_path, name, layer, mirror):
    board = load_board(ROOT / "boards" / name)
    info = print_layer(board, tmp_path / "p.pdf", layer=layer, mirror=mirror)
    size, lines, shapes, height = _read(tmp_path / "p.pdf")
    assert info.page == "A4"
    assert size == pytest.approx((210.0, 297.0), abs=EXACT)          # ISO 216 A4
    # the bar: the horizontal line drawn where the print says, SCALE_BAR mm long
    (bx0, by), (bx1, _) = info.bar
    bars = [l for l in lines if abs(l["top"] - l["bottom"]) < 1e-6
            and abs((height - _mm(l["top"])) - by) < EXACT and abs(_mm(l["x0"]) - bx0) < EXACT]
    assert len(bars) == 1
    assert _mm(bars[0]["x1"] - bars[0]["x0"]) == pytest.approx(SCALE_BAR, abs=EXACT)
    assert SCALE_BAR == 50.0
    # the board outline: its drawn extent is the board's, at 1:1
    x0, y0, x1, y1 = outline_polygon(board).bounds
    drawn = [s for s in shapes if s.get("stroke") and not s.get("fill")]     # outlines, not the paper
    widest = max(drawn, key=lambda s: s["x1"] - s["x0"])
    assert _mm(widest["x1"] - widest["x0"]) == pytest.approx(x1 - x0, abs=EXACT)
    assert _mm(widest["bottom"] - widest["top"]) == pytest.approx(y1 - y0, abs=EXACT)
    assert _mm(widest["x0"]) == pytest.approx(info.board_origin[0], abs=EXACT)


def test_large_board_gets_a_larger_page(tmp_path):
    # 250 x 150 with 15 mm margins and 18 mm for the bar: 280 x 198 fits A4 landscape (297 x 210);
    # 300 x 150 needs A3 landscape; 500 x 100 a page of its own, 530 x 148 (hand computed)
    for (w, h), page, want in (((250, 150), "A4 landscape", (297.0, 210.0)),
                               ((300, 150), "A3 landscape", (420.0, 297.0)),
                               ((500, 100), "board size", (530.0, 148.0))):
        board = loads_board(f'format = 1\n[board]\nname = "big"\nsize = [{w}.0, {h}.0]\n')
        info = print_layer(board, tmp_path / "big.pdf")
        size, *_ = _read(tmp_path / "big.pdf")
        assert info.page == page and size == pytest.approx(want, abs=EXACT)


def test_drill_centres_and_mirror(tmp_path):
    # one axial resistor at (10, 5) on a 30 x 20 board: pads at x 4.92 and 15.08 (hand computed);
    # mirrored, they land at 30 - x within the board
    text = ('format = 1\n[board]\nname = "r"\nsize = [30.0, 20.0]\n[[parts]]\nref = "R1"\n'
            'footprint = "axial-10.16"\nat = [10.0, 5.0]\n')
    board = loads_board(text)
    for mirror, want in ((False, [4.92, 15.08]), (True, [14.92, 25.08])):
        info = print_layer(board, tmp_path / f"{mirror}.pdf", mirror=mirror)
        with pdfplumber.open(tmp_path / f"{mirror}.pdf") as pdf:
            page = pdf.pages[0]
            def colour(c):
                v = c.get("non_stroking_color")
                return tuple(v) if isinstance(v, (list, tuple)) else (v,)
            white = [c for c in page.curves if c.get("fill") and set(colour(c)) == {1}]
            black = [c for c in page.curves if c.get("fill") and set(colour(c)) == {0}]
            assert len(black) == 2                     # the two pads, in black
            xs = sorted(round(_mm((c["x0"] + c["x1"]) / 2) - info.board_origin[0], 2) for c in white)
        assert xs == pytest.approx(want, abs=EXACT)


def test_cli_print_and_bad_input(tmp_path, capsys):
    src = ROOT / "boards" / "soil-alarm-1layer.toml"
    assert main(["print", str(src), "-o", str(tmp_path / "a.pdf")]) == 0
    assert "copper bottom" in capsys.readouterr().out
    assert main(["print", str(src), "-o", str(tmp_path / "b.pdf"), "--layer", "top"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "no top copper" in err[0]
    assert main(["print", str(src), "-o", str(tmp_path / "c.png")]) == 2
    assert ".pdf" in capsys.readouterr().err
    assert not (tmp_path / "b.pdf").exists() and not (tmp_path / "c.png").exists()


def test_export_writes_a_print_per_copper_layer(tmp_path):
    from router.fabfiles import export, file_names
    board = load_board(ROOT / "boards" / "soil-alarm-1layer.toml")
    names = file_names(board)
    files = {f.name for f in export(board, tmp_path)}
    assert names["print-bottom"] in files and "print-top" not in names      # one-layer: bottom only
    size, lines, _, _ = _read(tmp_path / names["print-bottom"])
    assert size == pytest.approx((210.0, 297.0), abs=EXACT)
    assert any(_mm(l["x1"] - l["x0"]) == pytest.approx(SCALE_BAR, abs=EXACT) for l in lines)
    listing = (tmp_path / names["list"]).read_text()
    assert names["print-bottom"] in listing and "toner transfer" in listing
