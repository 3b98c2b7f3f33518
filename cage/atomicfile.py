"""Write output files atomically: a temporary file beside the target, then rename.

A failed run never leaves a half-written file behind; the temporary file names its process
(``.NAME.PID-XXXX.tmp``) and one left by a killed run is removed by the next write. Errors
(missing folder, no permission) become :class:`cage.errors.InputError` with the path named.
"""
from __future__ import annotations

import os
import stat
import tempfile
from pathlib import Path

from cage.errors import InputError


def write_bytes(path: str | os.PathLike, data: bytes) -> Path:
    """Write ``data`` to ``path`` atomically and return the path."""
    target = Path(path)
    folder = target.parent if str(target.parent) else Path(".")
    if not folder.is_dir():
        what = "is a file, not a folder" if folder.exists() else "does not exist"
        raise InputError(f"{target}: output folder {folder} {what}")
    if target.is_dir():
        raise InputError(f"{target}: is a folder, not a file")
    _refuse_special(target)
    _clean_stale(target, folder)
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.{os.getpid()}-", suffix=".tmp", dir=folder)
    except OSError as exc:
        raise InputError(f"{target}: cannot write in {folder} ({exc.strerror})") from None
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
        os.chmod(tmp, 0o644)
        os.replace(tmp, target)
    except OSError as exc:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise InputError(f"{target}: cannot write ({exc.strerror})") from None
    return target


def _clean_stale(target: Path, folder: Path) -> None:
    """Remove temporaries a killed run left for this target (their process is gone)."""
    from cage.outputs import pid_alive

    prefix = f".{target.name}."
    try:
        names = [n for n in os.listdir(folder) if n.startswith(prefix) and n.endswith(".tmp")]
    except OSError:
        return
    for name in names:
        pid = name[len(prefix):].split("-", 1)[0]
        if pid.isdigit() and not pid_alive(int(pid)):
            try:
                os.unlink(folder / name)
            except OSError:
                pass


def _refuse_special(target: Path) -> None:
    """Refuse a target that exists and is not a regular file (device, FIFO, socket).

    The rename that makes a write atomic would replace such a node with a plain file
    (``--out /dev/null`` run as root would turn the null device into a file), so it is
    never done: the user names a file path instead.
    """
    try:
        mode = os.stat(target).st_mode
    except OSError:
        return
    if not stat.S_ISREG(mode):
        raise InputError(f"{target}: is not a regular file (a device, pipe or socket); give a file path")


def write_text(path: str | os.PathLike, text: str) -> Path:
    """Write UTF-8 ``text`` to ``path`` atomically and return the path."""
    return write_bytes(path, text.encode("utf-8"))
