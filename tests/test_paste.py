"""Paste layers: openings over surface pads, the paste reduction, exposed pads in windows.

Files are read back with gerbonara; areas are measured with shapely.
"""
import warnings

import pytest
from gerbonara import GerberFile
from gerbonara.apertures import RectangleAperture
from gerbonara.graphic_objects import Flash
from shapely.geometry import box
from shapely.ops import unary_union

from router.boardfile import loads_board
from router.cli import main
from router.errors import BoardError
from router.fabfiles import export, file_names
from router.geometry import placed_pads
from router.paste import WINDOW_SCALE, exposed_pads, paste_openings, reduced_size

# A QFN-16 of the file's own: JEDEC MO-220 3 x 3 mm, 0.5 mm pitch, exposed pad 1.7 x 1.7 mm;
# land sizes 0.3 x 0.8 (IPC-7351B nominal, from memory). Beside it a chip-0805 on the bottom,
# a sot-23 on top and a dip-8 (through-hole: no paste).
QFN = """format = 1
[board]
name = "paste test"
size = [30.0, 20.0]
[footprints.qfn-16]
body = [3.0, 3.0]
pads = [
  { pin = "1", offset = [-1.45, 0.75], shape = "rectangle", size = [0.8, 0.3] },
  { pin = "2", offset = [-1.45, 0.25], shape = "rectangle", size = [0.8, 0.3] },
  { pin = "3", offset = [-1.45, -0.25], shape = "rectangle", size = [0.8, 0.3] },
  { pin = "4", offset = [-1.45, -0.75], shape = "rectangle", size = [0.8, 0.3] },
  { pin = "5", offset = [-0.75, -1.45], shape = "rectangle", size = [0.3, 0.8] },
  { pin = "6", offset = [-0.25, -1.45], shape = "rectangle", size = [0.3, 0.8] },
  { pin = "7", offset = [0.25, -1.45], shape = "rectangle", size = [0.3, 0.8] },
  { pin = "8", offset = [0.75, -1.45], shape = "rectangle", size = [0.3, 0.8] },
  { pin = "9", offset = [1.45, -0.75], shape = "rectangle", size = [0.8, 0.3] },
  { pin = "10", offset = [1.45, -0.25], shape = "rectangle", size = [0.8, 0.3] },
  { pin = "11", offset = [1.45, 0.25], shape = "rectangle", size = [0.8, 0.3] },
  { pin = "12", offset = [1.45, 0.75], shape = "rectangle", size = [0.8, 0.3] },
  { pin = "13", offset = [0.75, 1.45], shape = "rectangle", size = [0.3, 0.8] },
  { pin = "14", offset = [0.25, 1.45], shape = "rectangle", size = [0.3, 0.8] },
  { pin = "15", offset = [-0.25, 1.45], shape = "rectangle", size = [0.3, 0.8] },
  { pin = "16", offset = [-0.75, 1.45], shape = "rectangle", size = [0.3, 0.8] },
  { pin = "17", offset = [0.0, 0.0], shape = "rectangle", size = [1.7, 1.7] },
]
[[parts]]
ref = "U1"
footprint = "qfn-16"
at = [8.0, 10.0]
[[parts]]
ref = "C1"
footprint = "chip-0805"
at = [20.0, 10.0]
side = "bottom"
[[parts]]
ref = "Q1"
footprint = "sot-23"
at = [20.0, 4.0]
rotation = 90
[[parts]]
ref = "U2"
footprint = "dip-8"
at = [15.0, 15.0]
"""


def _read(path):
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        return GerberFile.open(path)


def _shape(f: Flash):
    ap = f.aperture
    assert isinstance(ap, RectangleAperture)
    return box(f.x - ap.w / 2, f.y - ap.h / 2, f.x + ap.w / 2, f.y + ap.h / 2)


def _files(board, tmp_path):
    files = {f.name: f for f in export(board, tmp_path)}
    names = file_names(board)
    return {role: files[names[role]] for role in names}


def test_paste_files_have_the_specs_file_function_and_only_surface_pads(tmp_path):
    board = loads_board(QFN)
    files = _files(board, tmp_path)
    for side, word in (("top", "Top"), ("bottom", "Bot")):
        g = _read(files[f"paste-{side}"])
        # Gerber specification (Ucamco, revision 2023.08, section 5.6.3): Paste,(Top|Bot), positive
        assert g.file_attrs[".FileFunction"] == ("Paste", word)
        assert g.file_attrs[".FilePolarity"] == ("Positive",)
    top = _read(files["paste-top"]).objects
    bottom = _read(files["paste-bottom"]).objects
    # top: 16 QFN leads + 3 sot-23 pads + the exposed pad's windows; no dip-8 pad (plated)
    assert len(bottom) == 2                                      # the 0805 on the bottom
    assert len(top) == 16 + 3 + 4                                # 1.7 mm pad: 2 x 2 windows
    want_bottom = sorted((p.x, p.y) for p in placed_pads(board) if p.ref == "C1")
    assert [v for o in sorted(bottom, key=lambda o: o.x) for v in (o.x, o.y)] == pytest.approx([v for p in want_bottom for v in p])


def test_exposed_pad_windows_cover_50_to_80_percent(tmp_path):
    board = loads_board(QFN)
    pads = placed_pads(board)
    assert exposed_pads(board, pads) == {("U1", 16)}
    ep = next(p for p in pads if p.pin == "17")
    pad = box(*ep.bounds())
    g = _read(_files(board, tmp_path)["paste-top"])
    windows = [_shape(o) for o in g.objects if _shape(o).intersects(pad) and _shape(o).area > 0.3]
    covered = unary_union(windows)
    assert len(windows) == 4
    assert pad.contains(covered)                     # windows stay on the pad
    ratio = covered.area / pad.area
    assert 0.5 <= ratio <= 0.8                       # common practice: 50 to 80 %
    assert ratio == pytest.approx(WINDOW_SCALE ** 2)
    # windows do not touch each other (paste bricks apart)
    for i, a in enumerate(windows):
        for b in windows[i + 1:]:
            assert a.distance(b) > 0.1


@pytest.mark.parametrize("side", [1.2, 2.0, 3.3, 4.1, 5.6])
def test_window_coverage_for_many_pad_sizes(side):
    # shapely area of the windows over the pad, for square and oblong exposed pads
    text = QFN.replace("size = [1.7, 1.7]", f"size = [{side}, {side * 0.7:.3f}]")
    board = loads_board(text)
    pads = placed_pads(board)
    ep = next(p for p in pads if p.pin == "17")
    opening = [o for o in paste_openings(board, "top", pads) if o.pin == "17"]
    if min(ep.w, ep.h) < 1.5:
        assert len(opening) == 1 and not opening[0].window      # too small to count as exposed
        return
    area = unary_union([box(o.at[0] - o.w / 2, o.at[1] - o.h / 2, o.at[0] + o.w / 2, o.at[1] + o.h / 2)
                        for o in opening]).area
    assert 0.5 <= area / (ep.w * ep.h) <= 0.8


@pytest.mark.parametrize("rule,want", [(0.05, (0.2, 0.7)), ('"10%"', (0.27, 0.72)), (0, (0.3, 0.8))])
def test_paste_reduction(tmp_path, rule, want):
    # QFN pin 5 is 0.3 x 0.8 (hand computed: 0.05 inset -> 0.2 x 0.7; 10 % -> 0.27 x 0.72)
    board = loads_board(QFN.replace("[footprints.qfn-16]", f"[rules]\npaste_reduction = {rule}\n[footprints.qfn-16]"))
    g = _read(_files(board, tmp_path)["paste-top"])
    pin5 = next(p for p in placed_pads(board) if p.name == "U1.5")
    o = next(o for o in g.objects if (o.x, o.y) == pytest.approx(pin5.at))
    assert (o.aperture.w, o.aperture.h) == pytest.approx(want, abs=1e-6)


def test_reduced_size_by_hand():
    assert reduced_size(1.0, 0.6, 0.1) == (0.8, 0.4)
    assert reduced_size(2.0, 1.0, "25%") == (1.5, 0.75)


@pytest.mark.parametrize("value,word", [(-0.1, "0 mm or more"), ('"120%"', "below 100"), ("true", "number"),
                                        ('"ten"', "percentage")])
def test_bad_paste_reduction_is_one_line_exit_2(tmp_path, capsys, value, word):
    src = tmp_path / "b.toml"
    src.write_text(QFN.replace("[footprints.qfn-16]", f"[rules]\npaste_reduction = {value}\n[footprints.qfn-16]"))
    assert main(["export", str(src), "-o", str(tmp_path / "fab")]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "rules.paste_reduction" in err[0] and word in err[0] and str(src) in err[0]
    assert not (tmp_path / "fab").exists()


def test_reduction_that_leaves_no_paste(tmp_path):
    board = loads_board(QFN.replace("[footprints.qfn-16]", "[rules]\npaste_reduction = 0.2\n[footprints.qfn-16]"))
    with pytest.raises(BoardError, match="leaves pad U1.1 .* no paste"):
        export(board, tmp_path / "fab")
    assert not (tmp_path / "fab").exists()
