"""The project's own exceptions.

Every problem with a user's input is a :class:`BoardError`: it names the file,
the entry inside it and what is wrong, and the command line turns it into one
plain line and exit status 2.
"""

__all__ = ["ElbowroomError", "BoardError", "PlacementError"]


class ElbowroomError(Exception):
    """Base class of every error the project raises on purpose."""


class BoardError(ElbowroomError):
    """Bad input: a file, an entry in it, and what is wrong.

    Parameters
    ----------
    file : str or None
        The file the entry came from (``None`` for a board built in code).
    entry : str
        Where in the file, e.g. ``part 4 (U7)`` or ``nets "SDA" pin "U9.4"``.
    message : str
        What is wrong, ideally with the fix.

    Examples
    --------
    >>> str(BoardError("a.toml", "part 1 (U1)", "unknown footprint 'dip-7'"))
    "a.toml: part 1 (U1): unknown footprint 'dip-7'"
    """

    def __init__(self, file, entry, message):
        self.file = file
        self.entry = entry
        self.message = message
        super().__init__(str(self))

    def __str__(self):
        parts = [p for p in (self.file, self.entry) if p]
        parts.append(self.message)
        return ": ".join(parts)


class PlacementError(BoardError):
    """The parts cannot be placed (for instance they do not fit on the board)."""
