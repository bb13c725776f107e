"""What `route` says before and after routing: classes that do not fit between a footprint's
pads (given necks and the own-pad rule), overlapping bodies, and the check's summary with exit 1.

Pad gaps are measured with shapely on the placed pads (outside the router); the soic-8 row gap is
1.27 mm pitch (JEDEC MS-012) less the 0.6 mm pad width the footprint uses: 0.67 mm.
"""
import json

import pytest
import shapely

from router.boardfile import loads_board
from router.cli import main
from router.copper import pad_core
from router.geometry import placed_pads
from router.preflight import fit_notes, footprint_fits, overlap_notes

HEAD = """format = 1
[board]
name = "t"
size = [30.0, 20.0]
"""

SOIC = HEAD + """[classes.wide]
trace_width = 0.3
clearance = 0.8
[[parts]]
ref = "U1"
footprint = "soic-8"
at = [10.0, 10.0]
[[parts]]
ref = "J1"
footprint = "terminal-2"
at = [22.0, 10.0]
[[nets]]
name = "A"
pins = ["U1.1", "J1.1"]
class = "wide"
[[nets]]
name = "B"
pins = ["U1.2", "J1.2"]
"""


def _gap_by_shapely(board, ref):
    pads = [p for p in placed_pads(board) if p.ref == ref]
    shapes = [pad_core(p)[0].buffer(pad_core(p)[1], quad_segs=64) for p in pads]
    return min(shapely.distance(a, b) for k, a in enumerate(shapes) for b in shapes[k + 1:])


def test_soic_gap_and_the_class_that_does_not_fit():
    b = loads_board(SOIC)
    assert _gap_by_shapely(b, "U1") == pytest.approx(0.67, abs=1e-6)       # 1.27 - 0.6
    fits = {(f.footprint, f.cls): f for f in footprint_fits(b)}
    wide = fits[("soic-8", "wide")]
    assert wide.gap == pytest.approx(0.67, abs=1e-9)
    assert wide.full == pytest.approx(0.3 + 2 * 0.8) and wide.necked == pytest.approx(0.15 + 2 * 0.67)
    assert not wide.fits and wide.pads_break_clearance
    assert fits[("soic-8", "default")].fits          # 0.25 + 2 x 0.2 = 0.65 <= 0.67
    notes = fit_notes(b)
    assert len(notes) == 1
    assert notes[0].startswith("class wide (0.30 mm trace, 0.80 mm clearance) does not fit between the pads "
                               "of soic-8 (U1), 0.67 mm apart")
    assert "0.30 + 2 x 0.80 = 1.90 mm" in notes[0] and "0.15 + 2 x 0.67 = 1.49 mm" in notes[0]
    assert "check warns" in notes[0]


# two rectangle pads 1.0 mm wide, 1.0 mm apart (edge to edge), in a footprint of the file's own
PAIR = HEAD + """[classes.c30]
trace_width = 0.6
clearance = 0.3
[classes.c45]
trace_width = 0.6
clearance = 0.45
[footprints.pair]
body = [4.0, 2.0]
pads = [{ pin = "1", offset = [-1.0, 0.0], shape = "rectangle", size = [1.0, 1.5] },
        { pin = "2", offset = [1.0, 0.0], shape = "rectangle", size = [1.0, 1.5] }]
[[parts]]
ref = "P1"
footprint = "pair"
at = [10.0, 10.0]
[[parts]]
ref = "J1"
footprint = "header-1x2"
at = [22.0, 10.0]
[[nets]]
name = "A"
pins = ["P1.1", "J1.1"]
class = "CLS"
[[nets]]
name = "B"
pins = ["P1.2", "J1.2"]
"""


@pytest.mark.parametrize("cls,fits", [
    # 0.6 + 2 x 0.3 = 1.2 > 1.0, but necked 0.15 + 2 x 0.3 = 0.75 <= 1.0: fits given necks
    ("c30", True),
    # 0.6 + 2 x 0.45 = 1.5 and necked 0.15 + 2 x 0.45 = 1.05, both above 1.0: does not fit
    ("c45", False),
])
def test_a_class_fits_when_its_neck_fits(cls, fits):
    b = loads_board(PAIR.replace("CLS", cls))
    assert _gap_by_shapely(b, "P1") == pytest.approx(1.0, abs=1e-6)
    f = {(f.footprint, f.cls): f for f in footprint_fits(b)}[("pair", cls)]
    assert f.fits is fits and not f.pads_break_clearance
    notes = fit_notes(b)
    assert (notes == []) is fits
    if not fits:
        assert "1.05 mm" in notes[0] and "the pads themselves" not in notes[0]


OVERLAP = HEAD + """[[parts]]
ref = "R1"
footprint = "axial-10.16"
at = [10.0, 10.0]
[[parts]]
ref = "R2"
footprint = "chip-0805"
at = [10.0, 10.5]
[[nets]]
name = "A"
pins = ["R1.1", "R2.1"]
"""


def test_route_says_bodies_overlap_prints_the_check_and_exits_1(tmp_path, capsys):
    b = loads_board(OVERLAP)
    assert any("R1 and R2: bodies overlap" in n for n in overlap_notes(b))
    src = tmp_path / "o.toml"
    src.write_text(OVERLAP)
    code = main(["route", str(src), "-o", str(tmp_path / "r.toml")])
    out = capsys.readouterr().out
    assert "before routing: R1 and R2: bodies overlap" in out
    assert "check: 1 violation (placement 1)" in out
    assert code == 1                               # every net routed, but the written board has a violation
    code = main(["route", str(src), "-o", str(tmp_path / "r.toml"), "--json"])
    data = json.loads(capsys.readouterr().out)
    assert code == 1 and data["check"] == {"violations": 1, "counts": {"placement": 1}}
    assert data["before"] and data["totals"]["routed"] == data["totals"]["nets"]


def test_route_prints_fit_notes_and_a_clean_summary(tmp_path, capsys):
    src = tmp_path / "s.toml"
    src.write_text(SOIC)
    code = main(["route", str(src), "-o", str(tmp_path / "r.toml")])
    out = capsys.readouterr().out
    assert "before routing: class wide (0.30 mm trace, 0.80 mm clearance) does not fit" in out
    assert "check: no violations" in out          # a warning (the footprint's own spacing) is not a violation
    assert code == 0
