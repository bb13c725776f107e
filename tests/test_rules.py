"""IPC-2221 spacing and current figures, and the required clearance between classes."""
import pytest

from router.model import Board, NetClass
from router.rules import (ipc2221_current_for_width, ipc2221_spacing, ipc2221_width_for_current,
                          required_clearance)
from router.units import meets, short_of


# IPC-2221 Table 6-1, column B2 (external conductors, uncoated, sea level to 3050 m); values from memory
@pytest.mark.parametrize("volts,mm", [(5, 0.1), (15, 0.1), (16, 0.1), (30, 0.1), (31, 0.6), (50, 0.6),
                                      (100, 0.6), (150, 0.6), (151, 1.25), (250, 1.25), (300, 1.25),
                                      (301, 2.5), (500, 2.5), (600, 3.0), (1000, 5.0)])
def test_table_6_1_b2(volts, mm):
    assert ipc2221_spacing(volts) == pytest.approx(mm)


def test_table_6_1_other_column():
    # B1 (internal conductors), IPC-2221 Table 6-1, from memory: 0.1 mm for 31-100 V
    assert ipc2221_spacing(60, "B1") == 0.1
    with pytest.raises(ValueError):
        ipc2221_spacing(10, "Z9")


def test_current_formula_worked_example():
    # IPC-2221 I = 0.048 dT^0.44 A^0.725 (external): 1 A, 10 C rise, 1 oz copper -> about 0.30 mm (12 mil)
    w = ipc2221_width_for_current(1.0, copper_oz=1.0, temperature_rise=10.0)
    assert w == pytest.approx(0.30, abs=0.005)
    assert ipc2221_current_for_width(w) == pytest.approx(1.0)
    # twice the copper weight halves the width for the same cross-section
    assert ipc2221_width_for_current(1.0, copper_oz=2.0) == pytest.approx(w / 2)


def test_required_clearance_takes_the_larger_and_voltage():
    b = Board("t", [(0, 0), (1, 0), (1, 1), (0, 1)])
    a = NetClass("a", clearance=0.2)
    p = NetClass("p", clearance=0.3)
    mains = NetClass("m", clearance=0.3, voltage=230.0)
    assert required_clearance(b, a, p) == 0.3
    assert required_clearance(b, a, mains) == 1.25     # Table 6-1 B2, 171-250 V


@pytest.mark.parametrize("actual,required,ok", [(0.2, 0.2, True), (0.19999999999, 0.2, True),
                                                (0.199, 0.2, False), (0.2 - 2e-6, 0.2, False)])
def test_tolerance_at_the_edge(actual, required, ok):
    assert meets(actual, required) is ok and short_of(actual, required) is (not ok)
