"""Writing output files: the target checked first, the file moved into place on success only."""

from __future__ import annotations

import contextlib
import os
import tempfile
from pathlib import Path

from screening.errors import InputError


def check_target(path: str | os.PathLike, what: str) -> Path:
    target = Path(path)
    if target.is_dir():
        raise InputError(f"the {what} target is a directory", given=str(target), expected="a file path")
    parent = target.parent if str(target.parent) else Path(".")
    if not parent.is_dir():
        raise InputError(f"the folder for the {what} does not exist", given=str(target))
    if not os.access(parent, os.W_OK | os.X_OK):
        raise InputError(f"the {what}'s folder is not writable", given=str(target))
    return target


@contextlib.contextmanager
def atomic_writer(path: str | os.PathLike, what: str, binary: bool = False):
    """A file object writing into a temporary file beside `path`, moved into place on success only."""
    target = check_target(path, what)
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".part", dir=target.parent)
    try:
        with os.fdopen(fd, "wb" if binary else "w", **({} if binary else {"encoding": "utf-8", "newline": ""})) as fh:
            yield fh
            fh.flush()
            os.fsync(fh.fileno())
        mode = 0o666 & ~_umask()
        with contextlib.suppress(OSError):
            mode = target.stat().st_mode & 0o777
        os.chmod(tmp, mode)
        os.replace(tmp, target)
        tmp = None
    finally:
        if tmp is not None:
            with contextlib.suppress(OSError):
                os.unlink(tmp)


def _umask() -> int:
    m = os.umask(0)
    os.umask(m)
    return m
