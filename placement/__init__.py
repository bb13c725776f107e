"""Placement of the parts that have no place (issue 7; being built).

The command line calls ``placement.place(board, seed=..., all_parts=..., gap=...)``; until it
exists here, ``elbowroom place`` says plainly that it is not built yet (exit status 2).
"""
__all__: list[str] = []
