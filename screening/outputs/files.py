"""Writing output files: the target checked first, the file moved into place on success only.

Every file the tool writes (report PDF, batch PDF, JSON, CSV) goes through :func:`atomic_writer`:

* only a regular file (or a new path) is written: a directory, a device, a FIFO or a socket is refused,
  and so is a target that is one of the command's input files, or the same file as another output;
* :func:`check_target` runs before any screening, so a bad target costs nothing;
* the data go to a temporary file beside the target (a name within the file-name limit), which is moved
  into place only when it is complete; a failure on the way (no space, no permission, a path that
  disappears) is one :class:`~screening.errors.OutputError` naming the file and the cause, and an earlier
  file at the target is left as it was.
"""

from __future__ import annotations

import contextlib
import errno
import os
import stat
import tempfile
from pathlib import Path

from screening.errors import OutputError

#: File-name length limit [bytes] used where the file system does not say (Linux, macOS, Windows: 255).
NAME_MAX_DEFAULT = 255
#: Bytes the temporary name adds to the part of the target's name it keeps: "." + "." + 8 random + ".part".
_TMP_EXTRA = 1 + 1 + 8 + len(".part")


def _name_max(folder: Path) -> int:
    with contextlib.suppress(OSError, ValueError, AttributeError):
        n = os.pathconf(folder, "PC_NAME_MAX")
        if n and n > 0:
            return int(n)
    return NAME_MAX_DEFAULT


def _kind(mode: int) -> str | None:
    """Plain words for a file type that is not written to; None for a regular file."""
    if stat.S_ISREG(mode):
        return None
    if stat.S_ISDIR(mode):
        return "a directory"
    if stat.S_ISCHR(mode) or stat.S_ISBLK(mode):
        return "a device"
    if stat.S_ISFIFO(mode):
        return "a named pipe (FIFO)"
    if stat.S_ISSOCK(mode):
        return "a socket"
    return "not a regular file"


def _same_file(a: Path, b: str | os.PathLike) -> bool:
    try:
        return os.path.samefile(a, b)
    except OSError:
        return os.path.realpath(a) == os.path.realpath(b)


def check_target(path: str | os.PathLike, what: str, *, inputs=(), others=()) -> Path:
    """The path to write the `what` to, after checking it can be written; OutputError otherwise.

    `inputs`: the command's input files (never overwritten); `others`: the other outputs of the same
    command (two outputs may not be the same file). A symbolic link to a regular file is followed: the
    file it points to is the one replaced."""
    text = os.fspath(path)
    if not str(text).strip():
        raise OutputError(f"no file name given for the {what}", given=str(text),
                          expected="a file path, e.g. out/report.pdf")
    target = Path(text)
    try:
        st = os.stat(target)
    except FileNotFoundError:
        st = None
    except OSError as exc:
        if exc.errno == errno.ENAMETOOLONG:
            raise OutputError(f"the {what}'s file name is longer than the file system allows", given=str(target),
                              expected=f"a name of at most {NAME_MAX_DEFAULT} bytes") from None
        raise OutputError(f"cannot use the {what} target: {exc.strerror or exc}", file=str(target)) from None
    if st is not None:
        kind = _kind(st.st_mode)
        if kind is not None:
            raise OutputError(f"the {what} target is {kind}, not a file this tool may replace", given=str(target),
                              expected="a regular file or a new path")
        if os.path.islink(target):
            target = Path(os.path.realpath(target))
    for other in inputs:
        if other is not None and _same_file(target, other):
            raise OutputError(f"the {what} target is the input file {os.fspath(other)!r}; it would be replaced",
                              given=str(text), expected="an output path different from every input")
    for other in others:
        if other is not None and _same_file(target, other):
            raise OutputError(f"the {what} target is also given for another output", given=str(text),
                              expected="a different file for each output")
    parent = target.parent if str(target.parent) else Path(".")
    if not parent.is_dir():
        if parent.exists():
            raise OutputError(f"the folder for the {what} is not a folder", given=str(target))
        raise OutputError(f"the folder for the {what} does not exist", given=str(target))
    if not os.access(parent, os.W_OK | os.X_OK):
        raise OutputError(f"the {what}'s folder is not writable", given=str(target))
    if st is not None and not os.access(target, os.W_OK):
        raise OutputError(f"the {what} target is not writable", given=str(target))
    limit = _name_max(parent)
    if len(target.name.encode("utf-8", "surrogateescape")) > limit:
        raise OutputError(f"the {what}'s file name is longer than the file system allows", given=str(target),
                          expected=f"a name of at most {limit} bytes")
    _probe(parent, target, what, limit, st is not None)
    return target


def _probe(parent: Path, target: Path, what: str, limit: int, existed: bool) -> None:
    """Create and remove a temporary file where the output will be written: a folder that refuses new
    files (a read-only mount, /proc, a full quota of inodes) is found before the work, not after it."""
    try:
        fd, name = tempfile.mkstemp(prefix=_tmp_prefix(target.name, limit), suffix=".part", dir=parent)
    except OSError as exc:
        raise _failed(what, target, exc, existed) from None
    os.close(fd)
    with contextlib.suppress(OSError):
        os.unlink(name)


def _tmp_prefix(name: str, limit: int) -> str:
    """'.' + as much of `name` as keeps the temporary name within `limit` bytes (whole characters)."""
    room = max(0, limit - _TMP_EXTRA)
    kept = name.encode("utf-8", "surrogateescape")[:room].decode("utf-8", "ignore")
    return f".{kept}."


def _failed(what: str, target: Path, exc: OSError, existed: bool) -> OutputError:
    cause = exc.strerror or str(exc) or type(exc).__name__
    kept = "the earlier file is unchanged" if existed else "nothing was written"
    return OutputError(f"cannot write the {what}: {cause}; {kept}", file=str(target))


@contextlib.contextmanager
def atomic_writer(path: str | os.PathLike, what: str, binary: bool = False, *, inputs=(), others=()):
    """A file object writing into a temporary file beside `path`, moved into place on success only.

    An OSError on the way (from the caller's writes too) becomes one OutputError naming the file and the
    cause; the temporary file is removed and an earlier file at `path` is left as it was."""
    target = check_target(path, what, inputs=inputs, others=others)
    existed = target.exists()
    folder = target.parent if str(target.parent) else Path(".")
    tmp = None
    try:
        fd, tmp = tempfile.mkstemp(prefix=_tmp_prefix(target.name, _name_max(folder)), suffix=".part",
                                   dir=folder)
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
    except OSError as exc:
        raise _failed(what, target, exc, existed) from None
    finally:
        if tmp is not None:
            with contextlib.suppress(OSError):
                os.unlink(tmp)


def write_bytes(path: str | os.PathLike, data: bytes, what: str, *, inputs=(), others=()) -> Path:
    """Write `data` to `path` through :func:`atomic_writer`; the path written."""
    with atomic_writer(path, what, binary=True, inputs=inputs, others=others) as fh:
        fh.write(data)
    return Path(os.fspath(path))


def _umask() -> int:
    m = os.umask(0)
    os.umask(m)
    return m
