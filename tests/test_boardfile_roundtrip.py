"""Load -> save -> load gives an equal board, for every example board."""
from pathlib import Path

import pytest

from router import load_board, save_board
from router.boardfile import dumps_board, loads_board

BOARDS = sorted((Path(__file__).parent.parent / "boards").glob("*.toml"))


@pytest.mark.parametrize("path", BOARDS, ids=lambda p: p.name)
def test_round_trip_equal(path, tmp_path):
    board = load_board(path)
    out = tmp_path / "again.toml"
    save_board(board, out)
    again = load_board(out)
    assert again == board
    # and writing is deterministic: the same board gives the same bytes
    assert dumps_board(again) == out.read_text()


def test_examples_exist():
    assert len(BOARDS) >= 1


def test_save_over_input_is_safe(tmp_path):
    src = tmp_path / "b.toml"
    src.write_text(dumps_board(load_board(BOARDS[0])))
    board = load_board(src)
    save_board(board, src)
    assert loads_board(src.read_text()) == board
    assert [p.name for p in tmp_path.iterdir()] == ["b.toml"]   # no temporary file left behind


def test_written_files_get_the_usual_mode(tmp_path):
    """Atomic writes go through a temporary file (mode 0600); the result gets 0666 less the umask."""
    import os
    from router.safefile import write_atomic
    old = os.umask(0o022)
    try:
        write_atomic(tmp_path / "a.txt", "x")
    finally:
        os.umask(old)
    assert (tmp_path / "a.txt").stat().st_mode & 0o777 == 0o644
