"""Atomic writes: nothing on disk is lost or half-written when a run fails.

A file is written to a temporary file in the same folder and renamed over the
target only when complete, so an output path equal to the input is safe.
"""
from __future__ import annotations

import os
import shutil
import tempfile
from contextlib import contextmanager
from pathlib import Path

__all__ = ["write_atomic", "atomic_dir"]


def _file_mode() -> int:
    """The mode a plain new file gets (0666 less the umask); temporary files start at 0600."""
    mask = os.umask(0)
    os.umask(mask)
    return 0o666 & ~mask


def write_atomic(path, data: str | bytes) -> None:
    """Write `data` to `path` through a temporary file and a rename."""
    path = Path(path)
    folder = path.parent if str(path.parent) else Path(".")
    folder.mkdir(parents=True, exist_ok=True)
    mode = "wb" if isinstance(data, bytes) else "w"
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=folder)
    try:
        with os.fdopen(fd, mode, **({} if mode == "wb" else {"encoding": "utf-8", "newline": "\n"})) as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        os.chmod(tmp, _file_mode())
        os.replace(tmp, path)
    except BaseException:
        try:
            os.unlink(tmp)
        except FileNotFoundError:
            pass
        raise


@contextmanager
def atomic_dir(target):
    """Yield a temporary folder; on success its files are moved into `target`.

    Files already in `target` with other names are left alone; files with the
    same names are replaced one by one with a rename. On failure `target` is
    untouched and the temporary folder removed.
    """
    target = Path(target)
    parent = target.parent if str(target.parent) else Path(".")
    parent.mkdir(parents=True, exist_ok=True)
    tmp = Path(tempfile.mkdtemp(prefix=f".{target.name}.", dir=parent))
    try:
        yield tmp
        target.mkdir(parents=True, exist_ok=True)
        for item in sorted(tmp.iterdir()):
            os.replace(item, target / item.name)
    finally:
        shutil.rmtree(tmp, ignore_errors=True)
