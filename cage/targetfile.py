"""Reader of user target fields for current tables: CSV ``label,x_uT,y_uT,z_uT[,frame]``.

Fields in microtesla; ``frame`` per row is ``cage`` (default) or ``ned``. Labels must be
unique and must not reuse the standard labels (null, +x, -x, +y, -y, +z, -z). Every problem
is one line naming the file and the line.
"""
from __future__ import annotations

import csv
import io
import math
from dataclasses import dataclass

from cage.errors import InputError
from cage.textfile import read_text
from cage.setpoints import FIXED_LABELS

REQUIRED = ("label", "x_uT", "y_uT", "z_uT")
MAX_FIELD_UT = 100_000.0
MAX_ROWS = 100_000


@dataclass(frozen=True)
class Target:
    label: str
    field_uT: tuple[float, float, float]
    frame: str  # "cage" or "ned"


def _records(text: str, where: str) -> list[tuple[int, list[str]]]:
    """(first line number, cells) of each CSV record, blank rows and ``#`` comment rows left out.
    Read as one CSV text, so a quoted cell keeps its line breaks (a label may hold any text)."""
    reader = csv.reader(io.StringIO(text, newline=""))
    out = []
    start = 1
    try:
        for row in reader:
            if row and any(cell.strip() for cell in row) and not row[0].lstrip().startswith("#"):
                out.append((start, row))
            start = reader.line_num + 1
    except csv.Error as exc:
        raise InputError(f"{where}: line {start}: CSV error ({exc})") from None
    return out


def read_targets_csv(path) -> list[Target]:
    where = str(path)
    text = read_text(path, "targets file")
    lines = _records(text, where)
    if not lines:
        raise InputError(f"{where}: empty; expected a header {','.join(REQUIRED)}[,frame]")
    rows = [row for _, row in lines]
    header = [h.strip() for h in rows[0]]
    missing = [c for c in REQUIRED if c not in header]
    if missing:
        raise InputError(f"{where}: line {lines[0][0]}: missing column(s) {', '.join(missing)}; "
                         f"expected {','.join(REQUIRED)}[,frame]")
    unknown = [c for c in header if c not in REQUIRED + ("frame",)]
    if unknown:
        raise InputError(f"{where}: line {lines[0][0]}: unknown column(s) {', '.join(unknown)}")
    if len(rows) - 1 > MAX_ROWS:
        raise InputError(f"{where}: {len(rows) - 1} rows, at most {MAX_ROWS}")
    index = {c: header.index(c) for c in header}
    out, seen = [], set()
    for (lineno, _), row in zip(lines[1:], rows[1:]):
        if "frame" in index and index["frame"] == len(header) - 1 and len(row) == len(header) - 1:
            row = row + [""]  # the frame cell may be left off a row: cage frame
        if len(row) != len(header):
            raise InputError(f"{where}: line {lineno}: {len(row)} cells, the header has {len(header)}")
        label = row[index["label"]].strip()
        if not label:
            raise InputError(f"{where}: line {lineno}: empty label")
        if label in FIXED_LABELS or label in seen:
            raise InputError(f"{where}: line {lineno}: label {label!r} is already used")
        seen.add(label)
        values = []
        for c in ("x_uT", "y_uT", "z_uT"):
            cell = row[index[c]].strip()
            try:
                v = float(cell)
            except ValueError:
                raise InputError(f"{where}: line {lineno}: {c} must be a number, got {cell!r}") from None
            if not math.isfinite(v) or abs(v) > MAX_FIELD_UT:
                raise InputError(f"{where}: line {lineno}: {c} must be a finite number of microtesla "
                                 f"within +-{MAX_FIELD_UT:g}, got {cell!r}")
            values.append(v)
        frame = (row[index["frame"]].strip().lower() or "cage") if "frame" in index else "cage"
        if frame not in ("cage", "ned"):
            raise InputError(f"{where}: line {lineno}: frame must be cage or ned, got {frame!r}")
        out.append(Target(label, tuple(values), frame))
    if not out:
        raise InputError(f"{where}: no target rows below the header")
    return out
