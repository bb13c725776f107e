"""The command line: every command has --help; usage errors and unbuilt stages exit 2."""
import subprocess
import sys

import pytest

from router.cli import main

COMMANDS = ["demo", "place", "route", "check", "report", "compare", "render", "export", "new"]


@pytest.mark.parametrize("cmd", COMMANDS)
def test_command_help(cmd):
    with pytest.raises(SystemExit) as info:
        main([cmd, "--help"])
    assert info.value.code == 0


def test_top_help_via_subprocess():
    r = subprocess.run([sys.executable, "-m", "router.cli", "--help"], capture_output=True, text=True)
    assert r.returncode == 0 and all(c in r.stdout for c in COMMANDS)


def test_usage_error_exits_2():
    with pytest.raises(SystemExit) as info:
        main(["route"])
    assert info.value.code == 2
    assert main([]) == 2


def test_demo_runs(tmp_path, capsys):
    assert main(["demo", "-o", str(tmp_path / "d")]) == 0
    assert (tmp_path / "d" / "demo.toml").exists()
    assert "Caution" in capsys.readouterr().out


def test_demo_board_routes_and_pours_with_no_violation(tmp_path, capsys):
    # the demo a new user runs first must come out clean: every net routed, the pour included
    from router.boardfile import load_board
    from router.check import check
    from router.connectivity import routed
    assert main(["demo", "-o", str(tmp_path / "d")]) == 0
    said = capsys.readouterr().out
    assert "check: 0 violations" in said
    b = load_board(tmp_path / "d" / "routed.toml")
    assert b.pours and b.pours[0].filled
    assert check(b) == []
    assert all(routed(b).values())
