"""Where outputs go: never onto an input, and a plan folder written as one unit.

- :func:`refuse_overwriting_inputs`: ``--out`` (or ``--plot``) naming one of the command's own
  inputs (or, for a folder, a folder holding one) is an error, before anything is computed.
- :func:`refuse_same_outputs`: two output options naming one file (one write would replace
  the other) is an error too.
- :func:`trailing_slash_problem`: ``--out name/`` means a folder; a command that writes one
  file refuses it instead of writing a file called ``name``.
- :func:`write_folder`: the whole folder is built beside the target (``.NAME.cage-new-PID-*``)
  and swapped in with one rename (Linux ``renameat2(RENAME_EXCHANGE)``; elsewhere two renames,
  with the earlier folder restored by the next run if a kill falls between them). A failed
  or killed run leaves the earlier folder as it was; its temporaries are removed by the next
  run (those of a process still running are left alone). An existing folder holding
  anything but plan outputs is refused rather than replaced.
"""
from __future__ import annotations

import ctypes
import errno
import os
import re
import secrets
import shutil
from pathlib import Path

from cage.errors import InputError

NEW_TAG = ".cage-new-"
OLD_TAG = ".cage-old-"
#: Files a plan folder may hold besides the ones being written (a plan's own outputs).
PLAN_NAMES = re.compile(r"^(field\.json|design\.json|setpoints\.(csv|json|scpi)|build\.csv|[a-z_]+\.png|report\.(html|pdf))$")
_FOLDER_OPTIONS = {"plan": ("--out",)}
_PATH_OPTIONS = ("--out", "--plot")


def _same(a: Path, b: Path) -> bool:
    try:
        return a.resolve() == b.resolve() or (a.exists() and b.exists() and os.path.samefile(a, b))
    except OSError:
        return False


def refuse_overwriting_inputs(out, inputs, *, folder: bool = False, option: str = "--out") -> None:
    """InputError when ``out`` is one of ``inputs`` (or, for a folder, holds one).

    option: the output option the message names ("--out", "--plot").
    """
    if out is None:
        return
    out = Path(out)
    for p in inputs:
        p = Path(p)
        if _same(out, p):
            raise InputError(f"{option} {out} is one of this command's inputs; give another name")
        if folder:
            try:
                inside = out.resolve() in p.resolve().parents
            except OSError:
                inside = False
            if inside:
                raise InputError(f"{option} {out} holds {p}, an input of this command; the folder is replaced "
                                 f"as a whole, so give another folder")


def refuse_same_outputs(outputs: dict) -> None:
    """InputError when two output options (option name -> path or None) name the same file."""
    given = [(name, Path(path)) for name, path in outputs.items() if path is not None]
    for i, (name, path) in enumerate(given):
        for other, other_path in given[i + 1:]:
            if _same(path, other_path):
                raise InputError(f"{name} {path} and {other} {other_path} name the same file; one would "
                                 f"overwrite the other, so give two names")


def trailing_slash_problem(argv) -> str:
    """'' or the one-line problem when a one-file output option is given a folder name (``x/``)."""
    args = [str(a) for a in argv]
    command = next((a for a in args if not a.startswith("-")), "")
    folders = _FOLDER_OPTIONS.get(command, ())
    for i, a in enumerate(args):
        name, _, value = a.partition("=")
        if name in _PATH_OPTIONS and name not in folders:
            if not value and i + 1 < len(args):
                value = args[i + 1]
            if value.endswith(("/", os.sep)):
                return f"{name} {value} ends with a slash, so it names a folder; {command} writes one file there: give a file name"
    return ""


# ----------------------------------------------------------------------------- folder as a unit

def pid_alive(pid: int) -> bool:
    """True when a process with this id runs (or may: not ours to signal)."""
    if pid == os.getpid():
        return True
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True
    except OSError:
        return False
    return True


def _temporaries(target: Path):
    prefix = f".{target.name}"
    if not target.parent.is_dir():
        return
    for p in target.parent.iterdir():
        name = p.name
        for tag in (NEW_TAG, OLD_TAG):
            if name.startswith(prefix + tag):
                m = re.match(r"(\d+)-", name[len(prefix + tag):])
                if m:
                    yield p, tag, int(m.group(1))


def clean_stale(target) -> list[Path]:
    """Remove temporaries of killed runs beside ``target``; restore an earlier folder a kill left aside."""
    target = Path(target)
    removed = []
    for p, tag, pid in sorted(_temporaries(target), key=lambda t: t[1] != OLD_TAG):
        if pid_alive(pid):
            continue
        if tag == OLD_TAG and not target.exists():
            try:
                os.rename(p, target)
                continue
            except OSError:
                pass
        shutil.rmtree(p, ignore_errors=True)
        removed.append(p)
    return removed


def _exchange(a: Path, b: Path) -> bool:
    """Swap two paths atomically (Linux renameat2 RENAME_EXCHANGE); False when not available."""
    try:
        libc = ctypes.CDLL(None, use_errno=True)
        fn = libc.renameat2
    except (OSError, AttributeError):
        return False
    at_fdcwd, rename_exchange = -100, 2
    rc = fn(at_fdcwd, os.fsencode(str(a)), at_fdcwd, os.fsencode(str(b)), rename_exchange)
    if rc == 0:
        return True
    err = ctypes.get_errno()
    if err in (errno.EINVAL, errno.ENOSYS, errno.EOPNOTSUPP):
        return False
    raise OSError(err, os.strerror(err), str(b))


def check_replaceable(target, names) -> None:
    """InputError when ``target`` exists and is not a folder, or holds files other than plan outputs."""
    target = Path(target)
    if not target.exists():
        return
    if not target.is_dir():
        raise InputError(f"{target}: exists and is not a folder")
    others = sorted(p.name for p in target.iterdir() if p.name not in names and not PLAN_NAMES.match(p.name))
    if others:
        raise InputError(f"{target}: holds {others[0]!r}, which is not a plan output; the folder is replaced as a "
                         f"whole, so give a new or empty folder")


def write_folder(target, files: dict) -> Path:
    """Write ``files`` (name -> bytes or str) as the whole folder ``target``, swapped in at once."""
    target = Path(os.path.abspath(target))
    check_replaceable(target, files)
    try:
        target.parent.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise InputError(f"{target}: cannot make the folder ({exc.strerror})") from None
    clean_stale(target)
    token = f"{os.getpid()}-{secrets.token_hex(4)}"
    new = target.parent / f".{target.name}{NEW_TAG}{token}"
    try:
        new.mkdir()
        for name, data in files.items():
            with open(new / name, "wb") as fh:
                fh.write(data.encode("utf-8") if isinstance(data, str) else bytes(data))
                fh.flush()
                os.fsync(fh.fileno())
            os.chmod(new / name, 0o644)
        os.chmod(new, 0o755)
        _swap_in(new, target, token)
    except OSError as exc:
        shutil.rmtree(new, ignore_errors=True)
        raise InputError(f"{target}: cannot write the folder ({exc.strerror})") from None
    return target


def _swap_in(new: Path, target: Path, token: str) -> None:
    if target.exists():
        if _exchange(new, target):
            shutil.rmtree(new, ignore_errors=True)  # now holds the earlier run
            return
        old = target.parent / f".{target.name}{OLD_TAG}{token}"
        os.rename(target, old)
        os.rename(new, target)  # a kill just before this line: the next run puts `old` back
        shutil.rmtree(old, ignore_errors=True)
        return
    try:
        os.rename(new, target)
    except OSError as exc:  # made meanwhile by a run at the same time: swap with it
        if exc.errno not in (errno.ENOTEMPTY, errno.EEXIST) or not _exchange(new, target):
            raise
        shutil.rmtree(new, ignore_errors=True)
