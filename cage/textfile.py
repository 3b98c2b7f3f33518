"""Reading an input file as text, with one-line errors that name the file.

Every reader of user files (site, design, calibration, targets, readings, series, earlier
tables) goes through :func:`read_text`, so a missing file, a folder, unreadable bytes or a
binary file are reported the same way everywhere.
"""
from __future__ import annotations

import json
import os
from pathlib import Path

from cage.errors import InputError


def read_text(path: str | os.PathLike, what: str = "file") -> str:
    """The UTF-8 text of ``path`` (a leading byte-order mark dropped, universal newlines).

    what: how the user calls the file ("site file", "design file"), used in messages.
    """
    where = str(path)
    p = Path(path)
    try:
        with open(p, "r", encoding="utf-8-sig") as fh:
            text = fh.read()
    except FileNotFoundError:
        raise InputError(f"{where}: no such file ({what} not found)") from None
    except IsADirectoryError:
        raise InputError(f"{where}: is a folder, not a {what}") from None
    except PermissionError:
        raise InputError(f"{where}: cannot read the {what} (permission denied)") from None
    except UnicodeDecodeError as exc:
        raise InputError(f"{where}: the {what} is not UTF-8 text (bad byte at offset {exc.start})") from None
    except OSError as exc:
        raise InputError(f"{where}: cannot read the {what} ({exc.strerror or exc})") from None
    if "\x00" in text:
        raise InputError(f"{where}: the {what} is not a text file (it holds NUL bytes)")
    return text


def parse_json(text: str, where: str, **json_options):
    """Any JSON value from ``text``; syntax errors name ``where``, the line and the column."""
    try:
        return json.loads(text, **json_options)
    except json.JSONDecodeError as exc:
        raise InputError(f"{where}: not valid JSON at line {exc.lineno}, column {exc.colno}: {exc.msg}") from None
    except RecursionError:
        raise InputError(f"{where}: not valid JSON (nested too deeply)") from None


def read_json_object(path: str | os.PathLike, what: str = "JSON file", **json_options) -> dict:
    """A JSON object from ``path``; syntax errors name the line and column."""
    doc = parse_json(read_text(path, what), str(path), **json_options)
    if not isinstance(doc, dict):
        raise InputError(f"{path}: must hold a JSON object ({what})")
    return doc
