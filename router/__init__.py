"""elbowroom: rough routing, checking and fabrication files for small boards.

The public API:

- :func:`load_board` / :func:`save_board`: the board file in and out;
- :func:`route`: route every net not yet routed; returns the routed board and its figures;
- :func:`check`: the clearance, connectivity and manufacturing checks.
"""
from .boardfile import load_board, save_board
from .errors import BoardError, ElbowroomError
from .model import Board

__all__ = ["load_board", "save_board", "route", "check", "Board", "BoardError", "ElbowroomError"]
__version__ = "0.1.0"


def route(board, **options):
    """Route every net of `board` that is not yet routed.

    Returns a result that unpacks as ``(routed_board, figures)`` and also has
    ``.failed`` (net -> reason) and ``.seconds``. See :func:`router.negotiate.route_board`.
    """
    from .negotiate import route_board
    return route_board(board, **options)


def check(board):
    """The violations of `board`, a list of :class:`router.check.Violation`."""
    from .check import check as _check
    return _check(board)
