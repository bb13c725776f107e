"""Cautions where the tool can lead to harm, and the electrical checks behind them.

Sources: IPC-2221 Table 6-1 (conductor spacing) and section 6.2 (I = k x dT^0.44 x A^0.725, A in
square mils, k = 0.048 for external conductors), worked by hand below; a sine wave's peak is
RMS x sqrt(2) (1.414); the jumper wire ampacities are the "chassis wiring" column of the American
Wire Gauge table (Handbook of Electronic Tables and Formulas), values from memory.
"""
import json
import math

import pytest

from router.boardfile import loads_board
from router.check import check
from router.cli import main
from router.cautions import cautions, not_declared, undeclared_note
from router.errors import BoardError
from router.rules import (ipc2221_current_for_width, jumper_ampacity, via_current,
                          via_drill_for_current)

BASE = """format = 1
[board]
name = "t"
size = [40.0, 20.0]
copper_layers = {layers}
{classes}
[[parts]]
ref = "R1"
footprint = "axial-10.16"
at = [10.0, 5.0]
[[parts]]
ref = "R2"
footprint = "axial-10.16"
at = [10.0, 15.0]
[[nets]]
name = "A"
pins = ["R1.1", "R1.2"]
class = "{cls}"
[[nets]]
name = "B"
pins = ["R2.1", "R2.2"]
"""


def board(classes="", cls="default", layers=2, extra=""):
    return loads_board(BASE.format(layers=layers, classes=classes, cls=cls) + extra)


def text(classes="", cls="default", layers=2, extra=""):
    return BASE.format(layers=layers, classes=classes, cls=cls) + extra


MAINS = "[classes.mains]\ntrace_width = 0.5\nclearance = 0.5\nvoltage = 325.0\n"
AMPS = "[classes.power]\ntrace_width = 1.5\nclearance = 0.3\ncurrent = 3.0\n"


# ---------------------------------------------------------------- item: voltage is the peak
def test_peak_of_230_v_rms_mains_is_325_v():
    assert 230 * math.sqrt(2) == pytest.approx(325.27, abs=0.01)        # sine: peak = RMS x sqrt(2)


def test_voltage_messages_say_peak_and_how_to_get_it():
    # 325 V: Table 6-1 B2 band 301-500 V asks 2.5 mm; the class clearance 0.5 mm is below it
    vs = check(board(MAINS, "mains"))
    v = next(v for v in vs if v.rule == "voltage")
    assert v.required == pytest.approx(2.5)
    assert "325 V peak" in v.message and "230 V RMS mains peaks at 325 V" in v.message
    # copper of a 325 V net 1.0 mm from another net: a clearance violation raised by the voltage says so
    near = '[[traces]]\nnet = "B"\nlayer = "top"\nwidth = 0.25\npoints = [[20.0, 5.0], [20.0, 12.0]]\n'
    near += '[[traces]]\nnet = "A"\nlayer = "top"\nwidth = 0.25\npoints = [[15.08, 5.0], [18.75, 5.0]]\n'
    vs = check(board(MAINS, "mains", extra=near))
    c = next(v for v in vs if v.rule == "clearance")
    assert c.actual == pytest.approx(1.0) and c.required == pytest.approx(2.5)
    assert "IPC-2221 Table 6-1 (B2) spacing for 325 V peak" in c.message and "RMS x 1.414" in c.message


def test_help_and_readme_say_what_voltage_means(capsys):
    from pathlib import Path
    with pytest.raises(SystemExit):
        main(["check", "--help"])
    helptext = " ".join(capsys.readouterr().out.split())
    assert "peak working voltage" in helptext and "RMS x 1.414" in helptext
    readme = " ".join((Path(__file__).resolve().parent.parent / "README.md").read_text().split())
    assert "peak working voltage" in readme and "RMS x 1.414" in readme


# ---------------------------------------------------------------- item: the mains caution
MAINS_WORDS = ("working spacing between conductors, not safety isolation", "creepage", "licensed practice")


@pytest.mark.parametrize("cmd", ["check", "route", "render", "export"])
def test_mains_caution_printed_by_every_command(cmd, tmp_path, capsys):
    src = tmp_path / "m.toml"
    src.write_text(text(MAINS, "mains"))
    argv = {"check": ["check", str(src)], "route": ["route", str(src), "-o", str(tmp_path / "r.toml")],
            "render": ["render", str(src), "-o", str(tmp_path / "m.png")],
            "export": ["export", str(src), "-o", str(tmp_path / "fab")]}[cmd]
    main(argv)
    out = capsys.readouterr().out
    for w in MAINS_WORDS:
        assert w in out, (cmd, out)
    if cmd == "export":
        listing = next((tmp_path / "fab").glob("*files.txt")).read_text()
        assert all(w in listing for w in MAINS_WORDS)


def test_no_mains_caution_at_or_below_50_v(tmp_path, capsys):
    low = MAINS.replace("325.0", "50.0")
    assert cautions(board(low, "mains")) == []
    src = tmp_path / "m.toml"
    src.write_text(text(low, "mains"))
    main(["check", str(src)])
    assert "not safety isolation" not in capsys.readouterr().out


# ---------------------------------------------------------------- item: the current caution
def test_current_caution_names_heat_copper_weight_vias_and_jumpers(tmp_path, capsys):
    cs = cautions(board(AMPS, "power"))
    assert len(cs) == 1
    for w in ("heat from parts", "copper weight", "vias", "jumper wires"):
        assert w in cs[0]
    src = tmp_path / "p.toml"
    src.write_text(text(AMPS, "power"))
    main(["check", str(src)])
    assert "heat from parts" in capsys.readouterr().out


def test_via_barrel_current_worked_by_hand():
    """IPC-2221 6.2 worked by hand for a 0.4 mm via with 25 um plating at 10 C rise:
    barrel cross-section = pi x 0.4 x 0.025 = 0.031416 mm^2 = 0.031416 / 0.0254^2 = 48.695 mil^2;
    I = 0.048 x 10^0.44 x 48.695^0.725 = 0.048 x 2.7542 x 16.73 = 2.21 A."""
    area = math.pi * 0.4 * 0.025 / 0.0254 ** 2
    assert area == pytest.approx(48.695, abs=1e-3)
    assert 10 ** 0.44 == pytest.approx(2.7542, abs=1e-4)
    assert area ** 0.725 == pytest.approx(16.73, abs=0.01)
    assert via_current(0.4, 0.025, 10.0) == pytest.approx(0.048 * 2.7542 * 16.73, rel=1e-3)
    assert via_current(0.4, 0.025, 10.0) == pytest.approx(2.21, abs=0.005)
    # the same conductor as a flat trace: width = circumference, copper 25 um thick (25/35 oz)
    assert via_current(0.4) == pytest.approx(ipc2221_current_for_width(math.pi * 0.4, 0.025 / 0.035), rel=1e-12)
    assert via_drill_for_current(via_current(0.7)) == pytest.approx(0.7, rel=1e-9)


def test_via_current_violation_and_the_drill_that_would_carry_it():
    via = '[[vias]]\nnet = "A"\nat = [15.08, 9.0]\ndrill = 0.4\ndiameter = 0.8\n'
    vs = [v for v in check(board(AMPS, "power", extra=via)) if v.rule == "current"]
    assert len(vs) == 1
    v = vs[0]
    need = via_drill_for_current(3.0)
    assert v.actual == pytest.approx(0.4) and v.required == pytest.approx(need, abs=1e-6)
    assert via_current(need) == pytest.approx(3.0, rel=1e-9) and need > 0.4
    assert "2.21 A by IPC-2221" in v.message and "3 A declared" in v.message
    # a thicker plating stated in [rules] carries it: 3 A needs about 0.4 x (2.21 / 3)^-... : measure it
    thick = (text(AMPS, "power", extra=via)).replace("copper_layers = 2", "copper_layers = 2\n[rules]\nplating_thickness = 0.05")
    assert [v for v in check(loads_board(thick)) if v.rule == "current"] == []
    assert via_current(0.4, 0.05) >= 3.0


def test_jumper_wire_current():
    assert jumper_ampacity(22) == 7.0 and jumper_ampacity(24) == 3.5       # AWG table, chassis wiring
    hot = AMPS.replace("current = 3.0", "current = 5.0").replace("trace_width = 1.5", "trace_width = 3.0")
    j = '[[jumpers]]\nnet = "A"\nfrom = [15.08, 5.0]\nto = [15.08, 10.08]\n'
    onel = dict(layers=1, extra=j)
    assert [v for v in check(board(hot, "power", **onel)) if v.rule == "current"] == []      # 22 AWG: 7 A
    thin = text(hot, "power", **onel).replace("copper_layers = 1", "copper_layers = 1\n[rules]\njumper_wire_gauge = 24")
    vs = [v for v in check(loads_board(thin)) if v.rule == "current"]
    assert len(vs) == 1 and "24 AWG wire carries 3.5 A" in vs[0].message and "5 A declared" in vs[0].message
    with pytest.raises(BoardError, match="rules.jumper_wire_gauge: 22.5 is not a wire gauge"):
        loads_board(thin.replace("= 24", "= 22.5"))


# ---------------------------------------------------------------- item: nothing declared, nothing checked
def test_check_says_once_when_no_voltage_or_current_was_declared(tmp_path, capsys):
    b = board()
    assert not_declared(b) == ["voltage", "current"] and undeclared_note(b)
    src = tmp_path / "n.toml"
    joined = ('[[traces]]\nnet = "A"\nlayer = "top"\nwidth = 0.25\npoints = [[4.92, 5.0], [15.08, 5.0]]\n'
              '[[traces]]\nnet = "B"\nlayer = "top"\nwidth = 0.25\npoints = [[4.92, 15.0], [15.08, 15.0]]\n')
    src.write_text(text(extra=joined))
    assert main(["check", str(src)]) == 0
    out = capsys.readouterr().out
    assert out.count("no class declares a voltage or a current") == 1
    main(["check", str(src), "--json"])
    data = json.loads(capsys.readouterr().out)
    assert data["not_declared"] == ["voltage", "current"] and data["violations"] == []
    src.write_text(text(AMPS, "power", extra=joined))
    main(["check", str(src)])
    assert "no class declares" not in capsys.readouterr().out
    main(["check", str(src), "--json"])
    assert json.loads(capsys.readouterr().out)["not_declared"] == ["voltage"]
