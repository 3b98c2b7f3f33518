"""The calibration file: JSON with ``"format": "cage-calibration"``, ``"version": 1``.

Keys (units in the names; vectors x, y, z in the cage frame; ``coupling_nT_per_A`` is a
list of 3 rows, row = field component, column = axis):

required: format, version, coupling_nT_per_A, offset_nT
optional: rms_residual_nT, rms_residual_all_nT, noise_sigma_nT, n_rows, n_outliers,
          outlier_rows, condition_number, coupling_stderr_nT_per_A, offset_stderr_nT
          (numbers, or null when unknown), source_file, design, design_checksum (text),
          provenance (object, cage.provenance: the site, date and design the offset holds for).

Any other key is an error, so that a misspelt key is not silently ignored. Written
atomically (:mod:`cage.atomicfile`); every problem on reading is one InputError line
naming the file and the key.
"""
from __future__ import annotations

import json
import math
import os
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from cage.atomicfile import write_text
from cage.calibrate import CalibrationFit, check_usable
from cage.errors import InputError

FORMAT = "cage-calibration"
VERSION = 1
REQUIRED_KEYS = ("format", "version", "coupling_nT_per_A", "offset_nT")
OPTIONAL_NUMBER_KEYS = ("rms_residual_nT", "rms_residual_all_nT", "noise_sigma_nT", "condition_number")
OPTIONAL_TEXT_KEYS = ("source_file", "design", "design_checksum")
OPTIONAL_KEYS = OPTIONAL_NUMBER_KEYS + OPTIONAL_TEXT_KEYS + (
    "n_rows", "n_outliers", "outlier_rows", "coupling_stderr_nT_per_A", "offset_stderr_nT", "provenance")


@dataclass(frozen=True, eq=False)
class CalibrationRecord:
    """A calibration file's content: the fit plus which design it belongs to (may be empty)."""

    fit: CalibrationFit
    design: str
    design_checksum: str
    provenance: dict | None = None


def _num(v):
    v = float(v)
    return v if math.isfinite(v) else None


def calibration_document(fit: CalibrationFit, *, source_file: str | None = None,
                         design: str = "", design_checksum: str = "", provenance: dict | None = None) -> dict:
    """The JSON object written by :func:`save_calibration` (NaN becomes null)."""
    doc = {
        "format": FORMAT,
        "version": VERSION,
        "coupling_nT_per_A": [[float(v) for v in row] for row in fit.coupling_nT_per_A],
        "offset_nT": [float(v) for v in fit.offset_nT],
        "rms_residual_nT": _num(fit.rms_residual_nT),
        "rms_residual_all_nT": _num(fit.rms_residual_all_nT),
        "noise_sigma_nT": _num(fit.noise_sigma_nT),
        "n_rows": int(fit.n_rows),
        "n_outliers": int(fit.n_outliers),
        "outlier_rows": list(fit.outlier_rows),
        "condition_number": _num(fit.condition_number),
        "coupling_stderr_nT_per_A": [[_num(v) for v in row] for row in fit.coupling_stderr_nT_per_A],
        "offset_stderr_nT": [_num(v) for v in fit.offset_stderr_nT],
        "source_file": fit.source_file if source_file is None else str(source_file),
    }
    if design:
        doc["design"] = str(design)
    if design_checksum:
        doc["design_checksum"] = str(design_checksum)
    if provenance is not None:
        doc["provenance"] = provenance
    return doc


def save_calibration(path: str | os.PathLike, fit: CalibrationFit, *, source_file: str | None = None,
                     design: str = "", design_checksum: str = "", provenance: dict | None = None) -> Path:
    """Write ``fit`` as a calibration file at ``path`` atomically; return the path.

    source_file: overrides fit.source_file. design, design_checksum: which design file the
    cage was built to (free text), kept so a later run can check it still matches.
    Raises InputError if the coupling or offset is not finite, or the file cannot be written.
    """
    if not (np.all(np.isfinite(fit.coupling_nT_per_A)) and np.all(np.isfinite(fit.offset_nT))):
        raise InputError(f"{path}: refusing to write a calibration with non-finite coupling or offset")
    doc = calibration_document(fit, source_file=source_file, design=design, design_checksum=design_checksum,
                               provenance=provenance)
    return write_text(path, json.dumps(doc, indent=2, allow_nan=False) + "\n")


def _finite(p, key, value, *, allow_null=False):
    if value is None and allow_null:
        return math.nan
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise InputError(f"{p}: {key} must be a number, got {json.dumps(value)[:40]}")
    try:
        v = float(value)
    except OverflowError:
        v = math.inf
    if not math.isfinite(v):
        raise InputError(f"{p}: {key} must be a finite number, got {value}")
    return v


def _vector(p, key, value, *, allow_null=False):
    if not isinstance(value, list) or len(value) != 3:
        raise InputError(f"{p}: {key} must be a list of 3 numbers (x, y, z)")
    return np.array([_finite(p, f"{key}[{j}]", v, allow_null=allow_null) for j, v in enumerate(value)])


def _matrix(p, key, value, *, allow_null=False):
    if not isinstance(value, list) or len(value) != 3:
        raise InputError(f"{p}: {key} must be a list of 3 rows of 3 numbers")
    rows = []
    for r, row in enumerate(value):
        if not isinstance(row, list) or len(row) != 3:
            raise InputError(f"{p}: {key}[{r}] must be a row of 3 numbers")
        rows.append([_finite(p, f"{key}[{r}][{c}]", v, allow_null=allow_null) for c, v in enumerate(row)])
    return np.array(rows)


def _count(p, key, value):
    if isinstance(value, bool) or not isinstance(value, int) or value < 0:
        raise InputError(f"{p}: {key} must be a whole number >= 0, got {json.dumps(value)[:40]}")
    return value


def load_calibration_record(path: str | os.PathLike) -> CalibrationRecord:
    """Read and validate a calibration file; see the module docstring for the keys."""
    from cage.textfile import parse_json, read_text

    p = Path(path)
    doc = parse_json(read_text(p, "calibration file"), str(p))
    if not isinstance(doc, dict):
        raise InputError(f"{p}: expected a JSON object with \"format\": \"{FORMAT}\"")
    if doc.get("format") != FORMAT:
        raise InputError(f"{p}: format must be \"{FORMAT}\", got {json.dumps(doc.get('format'))[:40]}")
    if doc.get("version") != VERSION or isinstance(doc.get("version"), bool):
        raise InputError(f"{p}: unsupported version {json.dumps(doc.get('version'))[:20]}; this program reads version {VERSION}")
    missing = [k for k in REQUIRED_KEYS if k not in doc]
    if missing:
        raise InputError(f"{p}: missing key{'s' if len(missing) > 1 else ''} {', '.join(missing)}")
    unknown = sorted(k for k in doc if k not in REQUIRED_KEYS + OPTIONAL_KEYS)
    if unknown:
        raise InputError(f"{p}: unknown key {unknown[0]!r}")

    k = _matrix(p, "coupling_nT_per_A", doc["coupling_nT_per_A"])
    b0 = _vector(p, "offset_nT", doc["offset_nT"])
    check_usable(k, b0, str(p))

    numbers = {key: _finite(p, key, doc[key], allow_null=True) if key in doc else math.nan
               for key in OPTIONAL_NUMBER_KEYS}
    for key in ("rms_residual_nT", "rms_residual_all_nT", "noise_sigma_nT"):
        if numbers[key] < 0:
            raise InputError(f"{p}: {key} must be >= 0, got {numbers[key]:g}")
    if numbers["condition_number"] < 1:
        raise InputError(f"{p}: condition_number must be >= 1, got {numbers['condition_number']:g}")
    texts = {}
    for key in OPTIONAL_TEXT_KEYS:
        value = doc.get(key, "")
        if not isinstance(value, str):
            raise InputError(f"{p}: {key} must be text")
        texts[key] = value
    n_rows = _count(p, "n_rows", doc["n_rows"]) if "n_rows" in doc else 0
    outlier_rows = doc.get("outlier_rows", [])
    if not isinstance(outlier_rows, list):
        raise InputError(f"{p}: outlier_rows must be a list of row indices")
    outlier_rows = [_count(p, f"outlier_rows[{j}]", v) for j, v in enumerate(outlier_rows)]
    if "n_rows" in doc:
        beyond = [v for v in outlier_rows if v >= n_rows]
        if beyond:
            raise InputError(f"{p}: outlier_rows has row {beyond[0]}, but n_rows is {n_rows}")
    n_outliers = _count(p, "n_outliers", doc["n_outliers"]) if "n_outliers" in doc else len(outlier_rows)
    if "outlier_rows" in doc and n_outliers != len(outlier_rows):
        raise InputError(f"{p}: n_outliers is {n_outliers} but outlier_rows lists {len(outlier_rows)}")
    k_se = (_matrix(p, "coupling_stderr_nT_per_A", doc["coupling_stderr_nT_per_A"], allow_null=True)
            if "coupling_stderr_nT_per_A" in doc else np.full((3, 3), np.nan))
    b_se = (_vector(p, "offset_stderr_nT", doc["offset_stderr_nT"], allow_null=True)
            if "offset_stderr_nT" in doc else np.full(3, np.nan))
    if np.any(k_se < 0) or np.any(b_se < 0):
        raise InputError(f"{p}: standard errors must be >= 0")

    fit = CalibrationFit(
        coupling_nT_per_A=k,
        offset_nT=b0,
        rms_residual_nT=numbers["rms_residual_nT"],
        rms_residual_all_nT=numbers["rms_residual_all_nT"],
        n_rows=n_rows,
        n_outliers=n_outliers,
        outlier_rows=tuple(outlier_rows),
        condition_number=numbers["condition_number"],
        noise_sigma_nT=numbers["noise_sigma_nT"],
        coupling_stderr_nT_per_A=k_se,
        offset_stderr_nT=b_se,
        source_file=texts["source_file"],
    )
    prov = None
    if "provenance" in doc:
        from cage.provenance import check_provenance_object

        prov = check_provenance_object(doc["provenance"], str(p))
    return CalibrationRecord(fit=fit, design=texts["design"], design_checksum=texts["design_checksum"],
                             provenance=prov)


def load_calibration(path: str | os.PathLike) -> CalibrationFit:
    """Read and validate a calibration file and return its :class:`CalibrationFit`."""
    return load_calibration_record(path).fit
