"""Reading an input file as text, with one-line errors that name the file.

Every reader of user files (site, design, calibration, targets, readings, series, earlier
tables) goes through :func:`read_text`, so a missing file, a folder, unreadable bytes or a
binary file are reported the same way everywhere.
"""
from __future__ import annotations

import json
import os
import stat
from pathlib import Path

from cage.errors import InputError


# Largest file accepted per kind, in bytes (README "Input limits"): a larger file is refused
# before it is read. Kinds not listed get DEFAULT_SIZE_CAP_BYTES.
MB = 1024 * 1024
SIZE_CAPS_BYTES = {
    "site file": 1 * MB,
    "calibration file": 1 * MB,
    "design file": 16 * MB,
    "targets file": 16 * MB,
    "readings CSV": 16 * MB,
    "series CSV": 64 * MB,
    "setpoints file": 256 * MB,
}
DEFAULT_SIZE_CAP_BYTES = 64 * MB


def size_cap_bytes(what: str) -> int:
    """The size cap of a file kind (see SIZE_CAPS_BYTES)."""
    return SIZE_CAPS_BYTES.get(what, DEFAULT_SIZE_CAP_BYTES)


def read_text(path: str | os.PathLike, what: str = "file") -> str:
    """The UTF-8 text of ``path`` (a leading byte-order mark dropped, universal newlines).

    what: how the user calls the file ("site file", "design file"), used in messages and to
    pick the size cap. Only regular files are read: a FIFO, socket or device file is refused
    without opening it (it could block or never end), and a file above its kind's size cap
    is refused after reading at most cap + 1 bytes.
    """
    where = str(path)
    p = Path(path)
    cap = size_cap_bytes(what)
    try:
        info = os.stat(p)
        if stat.S_ISDIR(info.st_mode):
            raise IsADirectoryError
        if not stat.S_ISREG(info.st_mode):
            raise InputError(f"{where}: is not a regular file (a pipe, socket or device); give the {what} "
                             "as a file")
        if info.st_size > cap:
            raise InputError(f"{where}: the {what} is {info.st_size / MB:.1f} MB, more than the "
                             f"{cap / MB:g} MB accepted")
        with open(p, "rb") as fh:
            data = fh.read(cap + 1)
    except FileNotFoundError:
        raise InputError(f"{where}: no such file ({what} not found)") from None
    except IsADirectoryError:
        raise InputError(f"{where}: is a folder, not a {what}") from None
    except PermissionError:
        raise InputError(f"{where}: cannot read the {what} (permission denied)") from None
    except OSError as exc:
        raise InputError(f"{where}: cannot read the {what} ({exc.strerror or exc})") from None
    if len(data) > cap:
        raise InputError(f"{where}: the {what} is more than the {cap / MB:g} MB accepted")
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise InputError(f"{where}: the {what} is not UTF-8 text (bad byte at offset {exc.start})") from None
    if "\x00" in text:
        raise InputError(f"{where}: the {what} is not a text file (it holds NUL bytes)")
    return text.replace("\r\n", "\n").replace("\r", "\n")


def parse_json(text: str, where: str, **json_options):
    """Any JSON value from ``text``; syntax errors name ``where``, the line and the column."""
    try:
        return json.loads(text, **json_options)
    except json.JSONDecodeError as exc:
        raise InputError(f"{where}: not valid JSON at line {exc.lineno}, column {exc.colno}: {exc.msg}") from None
    except RecursionError:
        raise InputError(f"{where}: not valid JSON (nested too deeply)") from None
    except ValueError:  # Python's cap on the digits of an integer (4300 by default)
        raise InputError(f"{where}: holds a number with thousands of digits; no value here needs more "
                         f"than a few") from None


def read_json_object(path: str | os.PathLike, what: str = "JSON file", **json_options) -> dict:
    """A JSON object from ``path``; syntax errors name the line and column."""
    doc = parse_json(read_text(path, what), str(path), **json_options)
    if not isinstance(doc, dict):
        raise InputError(f"{path}: must hold a JSON object ({what})")
    return doc
