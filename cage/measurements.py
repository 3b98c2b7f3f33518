"""Readers of the two CSV inputs: calibration readings and field time series.

Both files are UTF-8 text (a byte-order mark is allowed), comma-separated, with a header
line naming the columns. Blank lines and lines starting with ``#`` are skipped; line
numbers in messages count every line of the file from 1. Extra columns are ignored.
Every problem raises :class:`cage.errors.InputError` with one line naming the file and,
where there is one, the line and column.

Calibration readings (one row per applied current set, sensor axes = cage axes)::

    current_x_A,current_y_A,current_z_A,field_x_nT,field_y_nT,field_z_nT

Field time series (what the cage should make, over time)::

    t_s,x_nT,y_nT,z_nT[,frame]

The optional ``frame`` column holds ``cage`` or ``ned`` and must be the same on every row;
without it the frame comes from the reader's ``frame`` argument (default ``cage``). The
series is returned in the frame it was written in; turning ``ned`` into ``cage`` needs the
cage heading and is the caller's job (:mod:`cage.frames`).
"""
from __future__ import annotations

import csv
import math
import os
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from cage.errors import InputError

CALIBRATION_COLUMNS = ("current_x_A", "current_y_A", "current_z_A",
                       "field_x_nT", "field_y_nT", "field_z_nT")
SERIES_COLUMNS = ("t_s", "x_nT", "y_nT", "z_nT")
FRAMES = ("cage", "ned")

# Largest magnitudes accepted (a value beyond them is a typing error, and keeps the fits and
# the resampling clear of floating-point overflow): currents as the site file's supplies
# (10 kA), fields 1 T, times about 30,000 years.
MAX_CURRENT_A = 10_000.0
MAX_FIELD_NT = 1e9
MAX_TIME_S = 1e12
# Row caps (README "Input limits"): reading stops at the first row beyond them.
MAX_READINGS_ROWS = 100_000
MAX_SERIES_ROWS = 1_000_000


@dataclass(frozen=True, eq=False)
class CalibrationReadings:
    """Rows of a calibration CSV.

    currents_A: (n, 3) applied currents x, y, z in A.
    field_nT: (n, 3) sensor readings x, y, z in nT, cage frame.
    line_numbers: (n,) the file line of each row (1-based).
    source_file: the path as given.
    """

    currents_A: np.ndarray
    field_nT: np.ndarray
    line_numbers: tuple[int, ...]
    source_file: str


@dataclass(frozen=True, eq=False)
class FieldSeries:
    """Rows of a field time-series CSV.

    t_s: (n,) strictly increasing times in s.
    field_nT: (n, 3) field components in nT, in ``frame``.
    frame: "cage" or "ned".
    line_numbers: (n,) the file line of each row (1-based).
    source_file: the path as given.
    """

    t_s: np.ndarray
    field_nT: np.ndarray
    frame: str
    line_numbers: tuple[int, ...]
    source_file: str


def _read_table(path, required: tuple[str, ...], optional: tuple[str, ...] = (), *, what: str = "CSV file",
                max_rows: int = MAX_READINGS_ROWS):
    """Return (header index map, [(line_number, cells)]) of a CSV file.

    Stops with InputError as soon as the file has more than ``max_rows`` data rows, before
    the rest is parsed.
    """
    from cage.textfile import read_text

    p = Path(path)
    text = read_text(p, what)

    lines = text.split("\n")  # only LF ends a line (read_text made CR and CRLF into LF)
    rows = []
    header = None
    header_line = 0
    try:
        for number, line in enumerate(lines, start=1):
            if not line.strip() or line.lstrip().startswith("#"):
                continue
            cells = [c.strip() for c in next(csv.reader([line]))]
            if header is None:
                header, header_line = cells, number
            else:
                rows.append((number, cells))
                if len(rows) > max_rows:
                    raise InputError(f"{p}: more than {max_rows:,} data rows (line {number}); the {what} "
                                     f"takes at most {max_rows:,}")
    except csv.Error as exc:
        raise InputError(f"{p}: line {number}: cannot parse CSV ({exc})") from None
    expected = ",".join(required)
    if header is None:
        raise InputError(f"{p}: file is empty; expected a header line {expected}")
    seen = set()
    for name in header:
        if name in seen and name in required + optional:
            raise InputError(f"{p}: line {header_line}: column {name} appears twice")
        seen.add(name)
    missing = [c for c in required if c not in header]
    if missing:
        plural = "s" if len(missing) > 1 else ""
        raise InputError(
            f"{p}: line {header_line}: missing column{plural} {', '.join(missing)} "
            f"(header must include {expected})"
        )
    index = {name: header.index(name) for name in required + optional if name in header}
    width = len(header)
    for number, cells in rows:
        if len(cells) != width:
            raise InputError(f"{p}: line {number}: {len(cells)} cells, but the header has {width}")
    return p, index, rows


def _number(p: Path, number: int, column: str, cell: str, limit: float | None = None) -> float:
    try:
        value = float(cell)
    except ValueError:
        shown = cell if len(cell) <= 30 else cell[:27] + "..."
        what = "an empty cell" if cell == "" else f"{shown!r}"
        raise InputError(f"{p}: line {number}, column {column}: {what} is not a number") from None
    if not math.isfinite(value):
        raise InputError(f"{p}: line {number}, column {column}: {cell!r} is not a finite number")
    if limit is not None and abs(value) > limit:
        raise InputError(f"{p}: line {number}, column {column}: {value:g} is beyond +-{limit:g}")
    return value


def _limit(column: str) -> float:
    if column.endswith("_A"):
        return MAX_CURRENT_A
    if column.endswith("_nT"):
        return MAX_FIELD_NT
    return MAX_TIME_S


def _numbers(p: Path, index: dict, rows, columns) -> np.ndarray:
    out = np.empty((len(rows), len(columns)))
    for r, (number, cells) in enumerate(rows):
        for c, name in enumerate(columns):
            out[r, c] = _number(p, number, name, cells[index[name]], _limit(name))
    return out


def read_calibration_csv(path: str | os.PathLike) -> CalibrationReadings:
    """Read and check a calibration CSV (columns in the module docstring).

    Besides the cell checks, the current sets must be able to determine the 12 unknowns
    of B = B0 + K I: at least 4 distinct sets and [1, I] of rank 4
    (:func:`cage.calibrate.check_current_set`); the message then says how many there are
    or which combination never changes.
    """
    from cage.calibrate import check_current_set

    p, index, rows = _read_table(path, CALIBRATION_COLUMNS, what="readings CSV", max_rows=MAX_READINGS_ROWS)
    values = _numbers(p, index, rows, CALIBRATION_COLUMNS)
    currents = values[:, :3] if rows else np.zeros((0, 3))
    fields = values[:, 3:] if rows else np.zeros((0, 3))
    check_current_set(currents, str(p))
    return CalibrationReadings(
        currents_A=currents,
        field_nT=fields,
        line_numbers=tuple(n for n, _ in rows),
        source_file=str(path),
    )


def read_field_series_csv(path: str | os.PathLike, frame: str | None = None) -> FieldSeries:
    """Read and check a field time-series CSV (columns in the module docstring).

    frame: the frame of the whole file when it has no ``frame`` column ("cage" or "ned";
    None means "cage"). If the file has a ``frame`` column and ``frame`` is also given,
    they must agree. Times must be finite and strictly increasing; at least 2 rows.
    """
    if frame is not None and frame not in FRAMES:
        raise InputError(f"{path}: frame must be one of {', '.join(FRAMES)}, got {frame!r}")
    p, index, rows = _read_table(path, SERIES_COLUMNS, optional=("frame",), what="series CSV",
                                 max_rows=MAX_SERIES_ROWS)
    if len(rows) < 2:
        raise InputError(f"{p}: {len(rows)} data row{'s' if len(rows) != 1 else ''}; a time series needs at least 2")
    values = _numbers(p, index, rows, SERIES_COLUMNS)
    t = values[:, 0]
    for k in range(1, len(rows)):
        if not t[k] > t[k - 1]:
            raise InputError(
                f"{p}: line {rows[k][0]}, column t_s: {t[k]:g} s is not after {t[k - 1]:g} s "
                f"on line {rows[k - 1][0]}; times must increase strictly"
            )
    file_frame = None
    if "frame" in index:
        for number, cells in rows:
            value = cells[index["frame"]].lower()
            if value not in FRAMES:
                raise InputError(
                    f"{p}: line {number}, column frame: {cells[index['frame']]!r} is not one of "
                    f"{', '.join(FRAMES)}"
                )
            if file_frame is None:
                file_frame, first_line = value, number
            elif value != file_frame:
                raise InputError(
                    f"{p}: line {number}, column frame: {value} differs from {file_frame} on line "
                    f"{first_line}; one frame per file"
                )
        if frame is not None and frame != file_frame:
            raise InputError(f"{p}: the file's frame column says {file_frame} but {frame} was asked for")
    return FieldSeries(
        t_s=t,
        field_nT=values[:, 1:],
        frame=file_frame or frame or "cage",
        line_numbers=tuple(n for n, _ in rows),
        source_file=str(path),
    )


# ----------------------------------------------------------------------------- attitude quaternions

QUAT_FIRST = ("t_s", "qw", "qx", "qy", "qz")
QUAT_LAST = ("t_s", "qx", "qy", "qz", "qw")


def read_quaternion_csv(path) -> QuaternionTable:
    """Read an attitude CSV. The header states the order: ``t_s,qw,qx,qy,qz`` (scalar first) or
    ``t_s,qx,qy,qz,qw`` (scalar last); t_s is seconds from the orbit's start, strictly increasing.
    Quaternions are normalised; a norm far from 1 (off by more than 1 %) is refused."""
    from pathlib import Path

    from cage.attitude import QuaternionTable

    p = Path(path)
    _, index, rows = _read_table(p, ("t_s", "qw", "qx", "qy", "qz"))
    order = [name for name in sorted(index, key=index.get)]
    if tuple(order) == QUAT_FIRST:
        first = True
    elif tuple(order) == QUAT_LAST:
        first = False
    else:
        raise InputError(f"{p}: columns must be in the order {','.join(QUAT_FIRST)} (scalar first) or "
                         f"{','.join(QUAT_LAST)} (scalar last)")
    if len(rows) < 2:
        raise InputError(f"{p}: an attitude table needs at least 2 rows, got {len(rows)}")
    values = _numbers(p, index, rows, ("t_s", "qw", "qx", "qy", "qz"))
    t = values[:, 0]
    for k in range(1, len(rows)):
        if not t[k] > t[k - 1]:
            raise InputError(f"{p}: line {rows[k][0]}, column t_s: {t[k]:g} s is not after {t[k - 1]:g} s; "
                             f"times must increase strictly")
    q = values[:, 1:]
    norm = np.linalg.norm(q, axis=1)
    bad = np.flatnonzero(np.abs(norm - 1.0) > 0.01)
    if bad.size:
        raise InputError(f"{p}: line {rows[bad[0]][0]}: the quaternion's length is {norm[bad[0]]:.4g}, "
                         f"not 1 (unit quaternions only)")
    return QuaternionTable(t_s=t, q=q / norm[:, None], scalar_first_in_file=first, source=str(p))
