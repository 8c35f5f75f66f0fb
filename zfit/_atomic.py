"""Writing output files atomically, never over the user's files without force."""

from __future__ import annotations

import os
import stat
import tempfile
from pathlib import Path

from ._errors import OutputExistsError, ZfitInputError

__all__ = ["write_atomic", "write_all_atomic", "check_writable"]


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def check_writable(path, force: bool = False) -> Path:
    """Return `path` as a Path, raising if it exists and `force` is false.

    Parameters
    ----------
    path : str or os.PathLike
        The output file.
    force : bool
        Whether an existing file may be replaced.
    """
    path = Path(path)
    if path.is_dir():
        raise ZfitInputError("is a folder; give the name of a file to write", path)
    for parent in path.parents:
        if parent.exists():
            if not parent.is_dir():
                raise ZfitInputError(f"cannot write here: {parent} is a file, not a folder", path)
            break
    if path.exists() and not force:
        raise OutputExistsError(path)
    return path


def _special(path: Path) -> bool:
    """Whether `path` is a node that must never be renamed over (device, FIFO, socket)."""
    try:
        mode = os.stat(path).st_mode
    except (FileNotFoundError, NotADirectoryError):
        return False
    return not (stat.S_ISREG(mode) or stat.S_ISDIR(mode))


def write_atomic(path, data, force: bool = False) -> Path:
    """Write `data` to `path` through a temporary file and a rename.

    An interrupted write leaves either the old file or the new one, never a
    half-written file, because ``os.replace`` is atomic on one file system.
    A symbolic link is followed (the file it points to is replaced, the link
    stays); a device, FIFO or socket (``/dev/null``, a named pipe) is written
    in place, never replaced by a regular file.

    Parameters
    ----------
    path : str or os.PathLike
        The output file; its folder is created if needed.
    data : str or bytes
        The content; text is written as UTF-8.
    force : bool
        Whether an existing file may be replaced.

    Returns
    -------
    pathlib.Path
        The path written.

    Raises
    ------
    OutputExistsError
        When `path` exists and `force` is false.
    ZfitInputError
        When the file cannot be written (no space left, no permission),
        naming the file and not the temporary.
    """
    return write_all_atomic([(path, data)], force)[0]


def write_all_atomic(items, force: bool = False) -> list[Path]:
    """Write several files as one: all of them, or none.

    Every file is first written to a temporary beside it; only when all are
    on disk are they renamed into place, so a failure while writing (no
    space left, a refused path) leaves none of the new files and every old
    one as it was.  A device, FIFO or socket is written in place at the end,
    a symbolic link's target is replaced (as `write_atomic` does).

    Parameters
    ----------
    items : sequence of (path, str or bytes)
        The files and their contents; text is written as UTF-8.
    force : bool
        Whether existing files may be replaced (checked for all before any
        is written).

    Returns
    -------
    list of pathlib.Path
        The paths written, in the order given.
    """
    staged = []  # (given, target, temporary or None, raw)
    for path, data in items:
        given = check_writable(path, force)
        target = Path(os.path.realpath(given)) if given.is_symlink() else given
        staged.append((given, target, None, data.encode("utf-8") if isinstance(data, str) else bytes(data)))
    temps = []
    try:
        for k, (given, target, _, raw) in enumerate(staged):
            if _special(target):
                continue
            try:
                target.parent.mkdir(parents=True, exist_ok=True)
                fd, tmp = tempfile.mkstemp(prefix="." + target.name + ".", suffix=".part", dir=target.parent)
                temps.append(tmp)
                os.chmod(tmp, 0o666 & ~_umask())
                with os.fdopen(fd, "wb") as fh:
                    fh.write(raw)
                    fh.flush()
                    os.fsync(fh.fileno())
            except OSError as exc:
                raise ZfitInputError(f"cannot write: {exc.strerror or exc}", given) from None
            staged[k] = (given, target, tmp, raw)
        for given, target, tmp, raw in staged:
            try:
                if tmp is None:
                    with open(target, "wb") as fh:
                        fh.write(raw)
                else:
                    os.replace(tmp, target)
                    temps.remove(tmp)
            except OSError as exc:
                raise ZfitInputError(f"cannot write: {exc.strerror or exc}", given) from None
    finally:
        for tmp in temps:
            try:
                os.unlink(tmp)
            except FileNotFoundError:
                pass
    return [given for given, _, _, _ in staged]
