"""Bad input: one plain line naming the file and the entry, exit status 2, no traceback."""
import math

import pytest

from router.boardfile import loads_board
from router.cli import main
from router.errors import BoardError

GOOD = '''format = 1
[board]
name = "t"
size = [30.0, 20.0]
[[parts]]
ref = "U1"
footprint = "dip-8"
at = [15.0, 10.0]
[[parts]]
ref = "R1"
footprint = "chip-0805"
at = [5.0, 5.0]
[[nets]]
name = "A"
pins = ["U1.1", "R1.1"]
'''


def test_good_board_loads():
    b = loads_board(GOOD, "good.toml")
    assert [p.ref for p in b.parts] == ["U1", "R1"]


@pytest.mark.parametrize("old,new,words", [
    ('format = 1', 'format = 7', ["format", "7"]),
    ('format = 1\n', '', ["format", "missing"]),
    ('[board]', '[bored]\nx = 1\n[board]', ["[bored]", "unknown section"]),
    ('size = [30.0, 20.0]', 'size = [30.0, -20.0]', ["board.size", "greater than zero"]),
    ('size = [30.0, 20.0]', 'size = [30.0, nan]', ["board.size", "finite"]),
    ('size = [30.0, 20.0]', 'size = [inf, 20.0]', ["board.size", "finite"]),
    ('size = [30.0, 20.0]', 'size = "big"', ["board.size", "pair"]),
    ('size = [30.0, 20.0]', 'outline = [[0,0],[10,10],[10,0],[0,10]]', ["board.outline", "not simple"]),
    ('footprint = "dip-8"', 'footprint = "dip-7"', ["part 1 (U1)", "unknown footprint 'dip-7'"]),
    ('ref = "R1"', 'ref = "U1"', ["part 2 (U1)", "duplicate ref"]),
    ('at = [15.0, 10.0]', 'at = [15.0, 10.0]\nrotation = "45"', ["part 1 (U1)", "must be a number"]),
    ('at = [15.0, 10.0]', 'at = [15.0, 10.0]\nside = "left"', ["part 1 (U1)", "side"]),
    ('pins = ["U1.1", "R1.1"]', 'pins = ["U1.9", "R1.1"]', ['nets "A" pin "U1.9"', "no pin '9'"]),
    ('pins = ["U1.1", "R1.1"]', 'pins = ["U9.4", "R1.1"]', ['nets "A" pin "U9.4"', "no part 'U9'"]),
    ('pins = ["U1.1", "R1.1"]', 'pins = ["U1.1", "R1.1"]\nclass = "hv"', ['nets "A"', "unknown class 'hv'"]),
    ('name = "A"\npins = ["U1.1", "R1.1"]', 'name = "A"\npins = ["U1.1", "R1.1"]\n[[nets]]\nname = "A"\npins = ["U1.2"]',
     ['nets "A"', "duplicate net name"]),
    ('name = "A"\npins = ["U1.1", "R1.1"]', 'name = "A"\npins = ["U1.1", "R1.1"]\n[[nets]]\nname = "B"\npins = ["U1.1"]',
     ['nets "B" pin "U1.1"', "already in net 'A'"]),
])
def test_bad_entries(old, new, words):
    text = GOOD.replace(old, new, 1)
    assert text != GOOD
    with pytest.raises(BoardError) as info:
        loads_board(text, "bad.toml")
    msg = str(info.value)
    assert msg.startswith("bad.toml: ")
    for w in words:
        assert w in msg


@pytest.mark.parametrize("extra,words", [
    ('[[traces]]\nnet = "A"\nlayer = "top"\nwidth = 0.25\npoints = [[1, 1], [2, 2]]', ["trace 1", "diagonal"]),
    ('[[traces]]\nnet = "A"\nlayer = "top"\nwidth = 0.25\npoints = [[1, 1]]', ["trace 1", "at least two points"]),
    ('[[traces]]\nnet = "A"\nlayer = "inner"\nwidth = 0.25\npoints = [[1, 1], [1, 2]]', ["layer", "unknown layer 'inner'"]),
    ('[[traces]]\nnet = "Z"\nlayer = "top"\nwidth = 0.25\npoints = [[1, 1], [1, 2]]', ["trace 1", "unknown net 'Z'"]),
    ('[[traces]]\nnet = "A"\nlayer = "top"\nwidth = -0.25\npoints = [[1, 1], [1, 2]]', ["width", "greater than zero"]),
    ('[[vias]]\nnet = "A"\nat = [3, 3]\ndrill = 0.8\ndiameter = 0.8', ["via 1", "as large as the diameter"]),
    ('[[jumpers]]\nnet = "A"\nfrom = [3, 3]\nto = [3, 8]', ["jumper 1", "one-layer boards"]),
    ('[classes.thin]\ntrace_width = 0.1', ["classes.thin.trace_width", "below rules.min_trace_width"]),
    ('[footprints.blob]\nbody = [3, 3]\npads = [{ pin = "1", offset = [0, 0], size = [1.0, 1.0], drill = 1.0 }]',
     ["footprints.blob pad of pin 1", "as large as the pad"]),
    # an older pad vocabulary is refused with the word to use (board-format.md: offset, round/rectangle/obround)
    ('[footprints.blob]\nbody = [3, 3]\npads = [{ pin = "1", offset = [0, 0], shape = "circle", size = [1.0, 1.0] }]',
     ["footprints.blob pad of pin 1", "use 'round'"]),
    ('[footprints.blob]\nbody = [3, 3]\npads = [{ pin = "1", offset = [0, 0], shape = "rect", size = [1.0, 1.0] }]',
     ["use 'rectangle'"]),
    ('[footprints.blob]\nbody = [3, 3]\npads = [{ pin = "1", offset = [0, 0], shape = "oval", size = [1.0, 1.0] }]',
     ["use 'obround'"]),
    ('[footprints.blob]\nbody = [3, 3]\npads = [{ pin = "1", at = [0, 0], size = [1.0, 1.0] }]',
     ["footprints.blob pad 1", "'offset', not 'at'"]),
])
def test_bad_copper_and_classes(extra, words):
    with pytest.raises(BoardError) as info:
        loads_board(GOOD + extra + "\n", "bad.toml")
    for w in words:
        assert w in str(info.value)


def test_one_layer_rules():
    one = GOOD.replace('size = [30.0, 20.0]', 'size = [30.0, 20.0]\ncopper_layers = 1')
    with pytest.raises(BoardError, match="surface pad .* one-layer"):
        loads_board(one, "bad.toml")
    th = one.replace('footprint = "chip-0805"', 'footprint = "axial-7.62"')
    loads_board(th, "ok.toml")
    with pytest.raises(BoardError, match="no vias"):
        loads_board(th + '[[vias]]\nnet = "A"\nat = [3, 3]\n', "bad.toml")
    with pytest.raises(BoardError, match="straight"):
        loads_board(th + '[[jumpers]]\nnet = "A"\nfrom = [3, 3]\nto = [4, 8]\n', "bad.toml")


def test_broken_toml_names_the_line():
    with pytest.raises(BoardError) as info:
        loads_board(GOOD + "[[parts]\n", "broken.toml")
    assert "line 16" in str(info.value)   # GOOD has 15 lines


def test_cli_exit_2_one_line_and_output_untouched(tmp_path, capsys):
    bad = tmp_path / "bad.toml"
    bad.write_text(GOOD.replace("dip-8", "dip-7"))
    out = tmp_path / "out.toml"
    out.write_text("keep me")
    for argv in (["route", str(bad), "-o", str(out)], ["place", str(bad), "-o", str(out)],
                 ["report", str(bad)], ["check", str(bad)], ["render", str(bad), "-o", str(tmp_path / "x.png")]):
        code = main(argv)
        err = capsys.readouterr().err
        assert code == 2
        assert len(err.strip().splitlines()) == 1 and "Traceback" not in err
    assert out.read_text() == "keep me"


def test_missing_file(capsys):
    from router import load_board
    with pytest.raises(BoardError, match="no such file"):
        load_board("/nonexistent/board.toml")


def test_entries_count_from_one():
    """Messages number entries as people count them: the second part is 'part 2', never 'parts[1]'."""
    text = GOOD.replace('footprint = "chip-0805"', 'footprint = "chip-0807"')
    with pytest.raises(BoardError) as info:
        loads_board(text, "bad.toml")
    assert "part 2 (R1)" in str(info.value) and "[" not in str(info.value).split(":")[1]
    two = GOOD + '[[keepouts]]\nrect = [0, 0, 1, 1]\n[[keepouts]]\nrect = [5, 5, 4, 6]\n'
    with pytest.raises(BoardError, match=r"keepout 2 rect: must have x1 > x0"):
        loads_board(two, "bad.toml")
    tr = GOOD + ('[[traces]]\nnet = "A"\nlayer = "top"\nwidth = 0.25\npoints = [[1, 1], [1, 2]]\n'
                 '[[traces]]\nnet = "A"\nlayer = "top"\nwidth = 0.25\npoints = [[1, 1], [2, 2]]\n')
    with pytest.raises(BoardError, match=r'trace 2 \(net "A"\): step 1 .* diagonal'):
        loads_board(tr, "bad.toml")
