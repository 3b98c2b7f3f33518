"""The design file: a JSON document describing the three coil axes of a cage (SI units).

Format (our own), ``"format": "cage-design"``, ``"version": 1``::

    {"format": "cage-design", "version": 1,
     "axes": {"x": {"shape": "square", "side_m": 1.9, "spacing_m": 1.0346, "turns": 40},
              "y": {"shape": "round", "radius_m": 0.9, "spacing_m": 0.9, "turns": 35},
              "z": {...}},
     "site": {...}, "requirement": {...}, "layout": {...}, "envelope_m": [...], "notes": "..."}

Per axis, required: ``shape`` ("square" or "round"), ``side_m`` (square: side of the winding
centreline) or ``radius_m`` (round: radius of the centreline), ``spacing_m`` (distance between
the two coil planes) and ``turns`` (per coil). Optional per axis: ``wire`` (a name) and the
positive numbers in ``OPTIONAL_AXIS_NUMBERS``. Optional top level, kept verbatim: ``site``,
``requirement``, ``layout``, ``provenance`` (objects; see cage.provenance), ``envelope_m`` (a list
of numbers), ``notes`` (text).

Version 2 (written when an axis is not a pair; version 1 is still read and written for cages
of pairs) describes every coil::

    "axes": {"x": {"system": "four", "shape": "square",
                   "coils": [{"position_m": -0.72, "turns": 52, "side_m": 1.42}, ...],
                   "wire": "AWG 18", ...}, ...}

Per axis, required: ``system`` (``cage.coilaxis.SYSTEM_NAMES``: "pair", "three", "four",
"four-equal", or "custom" for any other list), ``shape`` and ``coils``: a list of
``{"position_m": p, "turns": n, "side_m": s}`` (square) or ``{"position_m": p, "turns": n,
"radius_m": r}`` (round), ``position_m`` the coil plane's signed distance from the cage centre
along the axis (a pair is two coils). A named system must have its number of coils. The
optional keys are those of version 1 (``inductance_H`` and the others are of the whole axis).

Reading is strict: unknown keys are refused with the nearest known key suggested, and every
problem is one line naming the file and the key path, e.g.
``design.json: axes.y.turns must be a positive whole number, got -3``
(raised as ``cage.errors.InputError``). Writing is atomic (``cage.atomicfile``) and keeps full
float precision, so a design read back is equal to the one written.
"""
from __future__ import annotations

import difflib
import json
import math
import os
from collections.abc import Mapping, Sequence
from pathlib import Path


from cage.atomicfile import write_text
from cage.coilaxis import SYSTEM_NAMES, Coil, CoilAxis, pair_from_axis
from cage.coils import AXES, SHAPES, CoilPair
from cage.design import (FORMAT, OPTIONAL_AXIS_NUMBERS, READ_VERSIONS, VERSION, VERSION_COILS, AxisDesign,  # noqa: F401
                         Design, _show, design_to_dict, field_T)
from cage.errors import InputError

__all__ = [
    "FORMAT",
    "VERSION",
    "OPTIONAL_AXIS_NUMBERS",
    "AxisDesign",
    "Design",
    "load_design",
    "design_from_dict",
    "design_to_dict",
    "design_to_json",
    "save_design",
    "field_T",
]

SYSTEM_COIL_COUNTS = {"pair": 2, "three": 3, "four": 4, "four-equal": 4}

# Sanity limits: a value beyond these is a typing error, not a cage.
MAX_LENGTH_M = 50.0
MAX_TURNS = 100000
MAX_LEAD_LENGTH_M = 10_000.0  # as the site file's coil.lead_length_m

_AXIS_KEYS = ("shape", "side_m", "radius_m", "spacing_m", "turns", "wire") + OPTIONAL_AXIS_NUMBERS
_AXIS_KEYS_V2 = ("system", "shape", "coils", "wire") + OPTIONAL_AXIS_NUMBERS
_COIL_KEYS = ("position_m", "turns", "side_m", "radius_m")
_TOP_KEYS = ("format", "version", "axes", "site", "requirement", "layout", "envelope_m", "notes", "provenance")
_TOP_OBJECTS = ("site", "requirement", "layout", "provenance")


# ---------------------------------------------------------------------------------------------
# Dataclasses
# ---------------------------------------------------------------------------------------------


# Reading
# ---------------------------------------------------------------------------------------------


class _Obj(dict):
    """A JSON object that remembers keys given twice."""

    duplicates: tuple = ()


def _pairs_hook(pairs):
    obj = _Obj()
    dups = []
    for key, value in pairs:
        if key in obj:
            dups.append(key)
        obj[key] = value
    obj.duplicates = tuple(dups)
    return obj


class _Reader:
    def __init__(self, where: str):
        self.where = where

    def fail(self, path: str, problem: str):
        raise InputError(f"{self.where}: {path} {problem}" if path else f"{self.where}: {problem}")

    def check_keys(self, obj: Mapping, path: str, known: Sequence[str]):
        dups = getattr(obj, "duplicates", ())
        if dups:
            self.fail(_join(path, dups[0]), "is given twice")
        for key in obj:
            if key not in known:
                close = difflib.get_close_matches(str(key).lower(), [k.lower() for k in known], n=1, cutoff=0.6)
                hint = ""
                if close:
                    hint = f' (did you mean "{known[[k.lower() for k in known].index(close[0])]}"?)'
                else:
                    hint = f" (known keys: {', '.join(known)})"
                self.fail(_join(path, key), f"is not a known key{hint}")

    def object(self, value, path: str) -> Mapping:
        if not isinstance(value, dict):
            self.fail(path, f"must be an object, got {_show(value)}")
        return value

    def number(self, value, path: str, unit: str = "", upper: float | None = None) -> float:
        """A positive finite number; unit: "m" for lengths (said in the messages), else ""."""
        of = " of metres" if unit == "m" else ""
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            self.fail(path, f"must be a positive number{of}, got {_show(value)}")
        v = float(value)
        if not math.isfinite(v) or v <= 0:
            self.fail(path, f"must be a positive finite number{of}, got {_show(value)}")
        if upper is not None and v > upper:
            self.fail(path, f"must be at most {upper:g}{' ' + unit if unit else ''}, got {value!r}")
        return v

    def turns(self, value, path: str) -> int:
        ok = not isinstance(value, bool) and isinstance(value, (int, float)) \
            and math.isfinite(value) and value == int(value) and value >= 1
        if not ok:
            self.fail(path, f"must be a positive whole number, got {_show(value)}")
        n = int(value)
        if n > MAX_TURNS:
            self.fail(path, f"must be at most {MAX_TURNS}, got {n}")
        return n

    def verbatim(self, value, path: str):
        """Check a kept-verbatim value holds only finite numbers and plain JSON; copy it."""
        if isinstance(value, dict):
            dups = getattr(value, "duplicates", ())
            if dups:
                self.fail(_join(path, dups[0]), "is given twice")
            return {k: self.verbatim(v, _join(path, k)) for k, v in value.items()}
        if isinstance(value, list):
            return [self.verbatim(v, f"{path}[{i}]") for i, v in enumerate(value)]
        if isinstance(value, float) and not math.isfinite(value):
            self.fail(path, f"must be finite, got {_show(value)}")
        return value

    def site_record(self, site: dict) -> None:
        """The place and date a design was planned for (kept verbatim, used by the re-use rules):
        the same ranges as a site file's, the date within the field model's span."""
        import datetime as _dt

        from cage.geomag import FIRST_DATE, LAST_DATE
        from cage.sitefile import ALTITUDE_RANGE_M, HEADING_RANGE_DEG, LATITUDE_RANGE_DEG, LONGITUDE_RANGE_DEG

        ranges = {"latitude_deg": LATITUDE_RANGE_DEG, "longitude_deg": LONGITUDE_RANGE_DEG,
                  "altitude_m": ALTITUDE_RANGE_M, "heading_deg": HEADING_RANGE_DEG,
                  "heading_true_deg": HEADING_RANGE_DEG}
        for key, (lo, hi) in ranges.items():
            v = site.get(key)
            if v is not None and (isinstance(v, bool) or not isinstance(v, (int, float)) or not lo <= v <= hi):
                self.fail(f"site.{key}", f"must be a number from {lo:g} to {hi:g}, got {_show(v)}")
        if site.get("date") is not None:
            try:
                day = _dt.date.fromisoformat(site["date"]) if isinstance(site["date"], str) else None
            except ValueError:
                day = None
            if day is None or not FIRST_DATE <= day <= LAST_DATE:
                self.fail("site.date", f"must be a date YYYY-MM-DD from {FIRST_DATE} to {LAST_DATE}, "
                                       f"got {_show(site['date'])}")

    def optional_axis_entries(self, obj, path: str) -> dict:
        extra = {}
        if "wire" in obj:
            wire = obj["wire"]
            if not isinstance(wire, str) or not wire.strip():
                self.fail(f"{path}.wire", f"must be a wire name (text), got {_show(wire)}")
            extra["wire"] = wire
        for key in OPTIONAL_AXIS_NUMBERS:
            if key in obj:
                if key in ("frame_width_m", "frame_depth_m", "frame_size_m"):
                    extra[key] = self.number(obj[key], f"{path}.{key}", "m", MAX_LENGTH_M)
                elif key == "lead_length_m":
                    extra[key] = self.number(obj[key], f"{path}.{key}", "m", MAX_LEAD_LENGTH_M)
                else:
                    extra[key] = self.number(obj[key], f"{path}.{key}")
        return extra

    def shape(self, obj, path: str) -> str:
        if "shape" not in obj:
            self.fail(f"{path}.shape", 'is missing (expected "square" or "round")')
        shape = obj["shape"]
        if shape not in SHAPES:
            close = difflib.get_close_matches(str(shape).lower(), SHAPES, n=1) if isinstance(shape, str) else []
            hint = f' (did you mean "{close[0]}"?)' if close else ""
            self.fail(f"{path}.shape", f'must be "square" or "round", got {_show(shape)}{hint}')
        return shape

    def position(self, value, path: str) -> float:
        if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
            self.fail(path, f"must be a finite number of metres, got {_show(value)}")
        if abs(value) > MAX_LENGTH_M:
            self.fail(path, f"must be within {MAX_LENGTH_M:g} m of the centre, got {value!r}")
        return float(value)

    def axis_v2(self, value, name: str) -> AxisDesign:
        path = f"axes.{name}"
        obj = self.object(value, path)
        self.check_keys(obj, path, _AXIS_KEYS_V2)
        if "system" not in obj:
            self.fail(f"{path}.system", f"is missing (expected one of {', '.join(SYSTEM_NAMES)})")
        system = obj["system"]
        if system not in SYSTEM_NAMES:
            self.fail(f"{path}.system", f"must be one of {', '.join(SYSTEM_NAMES)}, got {_show(system)}")
        shape = self.shape(obj, path)
        if "coils" not in obj:
            self.fail(f"{path}.coils", "is missing")
        items = obj["coils"]
        if not isinstance(items, list) or not items:
            self.fail(f"{path}.coils", f"must be a non-empty list of coils, got {_show(items)}")
        want = SYSTEM_COIL_COUNTS.get(system)
        if want is not None and len(items) != want:
            self.fail(f"{path}.coils", f"must hold {want} coils for the {system} system, got {len(items)}")
        size_key, other_key = ("side_m", "radius_m") if shape == "square" else ("radius_m", "side_m")
        coils = []
        for i, item in enumerate(items):
            cpath = f"{path}.coils[{i}]"
            c = self.object(item, cpath)
            self.check_keys(c, cpath, _COIL_KEYS)
            if other_key in c:
                self.fail(f"{cpath}.{other_key}", f"does not apply to a {shape} coil (give {size_key})")
            for key in ("position_m", "turns", size_key):
                if key not in c:
                    self.fail(f"{cpath}.{key}", "is missing")
            coils.append(Coil(self.position(c["position_m"], f"{cpath}.position_m"),
                              self.turns(c["turns"], f"{cpath}.turns"),
                              self.number(c[size_key], f"{cpath}.{size_key}", "m", MAX_LENGTH_M)))
        for i in range(len(coils)):
            for j in range(i + 1, len(coils)):
                if coils[i].position_m == coils[j].position_m and coils[i].size_m == coils[j].size_m:
                    self.fail(f"{path}.coils[{j}]", f"coincides with coils[{i}] (same plane and size)")
        extra = self.optional_axis_entries(obj, path)
        if "wire" in extra:
            for i, c in enumerate(coils):
                self.check_winding(f"{path}.coils[{i}]", extra["wire"], c.turns, extra.get("frame_width_m"),
                                   extra.get("frame_depth_m"), wire_path=f"{path}.wire")
        ax = CoilAxis(name, shape, system, tuple(coils))
        pair = pair_from_axis(ax) if system == "pair" else None
        return AxisDesign(pair=pair, coil_axis=ax, **extra)

    def axis(self, value, name: str) -> AxisDesign:
        path = f"axes.{name}"
        obj = self.object(value, path)
        self.check_keys(obj, path, _AXIS_KEYS)
        shape = self.shape(obj, path)
        size_key, other_key = ("side_m", "radius_m") if shape == "square" else ("radius_m", "side_m")
        if other_key in obj:
            self.fail(f"{path}.{other_key}", f"does not apply to a {shape} coil (give {size_key})")
        for key in (size_key, "spacing_m", "turns"):
            if key not in obj:
                self.fail(f"{path}.{key}", "is missing")
        size = self.number(obj[size_key], f"{path}.{size_key}", "m", MAX_LENGTH_M)
        spacing = self.number(obj["spacing_m"], f"{path}.spacing_m", "m", MAX_LENGTH_M)
        turns = self.turns(obj["turns"], f"{path}.turns")
        extra = self.optional_axis_entries(obj, path)
        if "wire" in extra:
            self.check_winding(path, extra["wire"], turns, extra.get("frame_width_m"), extra.get("frame_depth_m"))
        pair = CoilPair(axis=name, shape=shape, size_m=size, spacing_m=spacing, turns=turns)
        return AxisDesign(pair=pair, **extra)

    def check_winding(self, path: str, wire: str, turns: int, width_m, depth_m, wire_path: str | None = None) -> None:
        """The wire is one the catalogue knows and, with the frame given, the turns fit its channel."""
        from cage.electrical import winding_pack
        from cage.wires import wire_from_name

        try:
            wire_from_name(wire)
        except InputError as exc:
            self.fail(wire_path or f"{path}.wire", f"is not usable: {exc}")
        if width_m is not None and depth_m is not None:
            try:
                winding_pack(wire, turns, width_m, depth_m)
            except InputError as exc:
                self.fail(f"{path}.turns", f"do not fit the frame channel: {exc}")

    def design(self, obj) -> Design:
        if not isinstance(obj, dict):
            self.fail("", f"the top level must be a JSON object, got {_show(obj)}")
        if "format" not in obj:
            for key in obj:
                if difflib.get_close_matches(str(key).lower(), ["format"], n=1, cutoff=0.6):
                    self.fail(_join("", key), 'is not a known key (did you mean "format"?)')
            self.fail("", f'not a cage design file (no "format": "{FORMAT}")')
        if obj["format"] != FORMAT:
            self.fail("format", f'must be "{FORMAT}", got {_show(obj["format"])}')
        self.check_keys(obj, "", _TOP_KEYS)
        if "version" not in obj:
            self.fail("version", f"is missing (expected {VERSION} or {VERSION_COILS})")
        version = obj["version"]
        if isinstance(version, bool) or not isinstance(version, (int, float)) or version not in READ_VERSIONS:
            self.fail("version", f"{_show(version)} is not supported (this program reads versions "
                                 f"{' and '.join(str(v) for v in READ_VERSIONS)})")
        if "axes" not in obj:
            self.fail("axes", "is missing")
        axes_obj = self.object(obj["axes"], "axes")
        self.check_keys(axes_obj, "axes", AXES)
        for name in AXES:
            if name not in axes_obj:
                self.fail(f"axes.{name}", "is missing")
        read_axis = self.axis if version == 1 else self.axis_v2
        axes = tuple(read_axis(axes_obj[name], name) for name in AXES)
        extra = {}
        for key in _TOP_OBJECTS:
            if key in obj:
                extra[key] = self.verbatim(self.object(obj[key], key), key)
        if "site" in extra:
            self.site_record(extra["site"])
        if "envelope_m" in obj:
            env = obj["envelope_m"]
            if not isinstance(env, list):
                self.fail("envelope_m", f"must be a list of numbers, got {_show(env)}")
            for i, v in enumerate(env):
                if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v):
                    self.fail(f"envelope_m[{i}]", f"must be a finite number, got {_show(v)}")
            extra["envelope_m"] = list(env)
        if "notes" in obj:
            if not isinstance(obj["notes"], str):
                self.fail("notes", f"must be text, got {_show(obj['notes'])}")
            extra["notes"] = obj["notes"]
        return Design(axes=axes, **extra)


def _join(path: str, key) -> str:
    # a key that is empty or holds a line break or other unprintable text is quoted, so the
    # message stays on one line
    shown = key if isinstance(key, str) and key and key.isprintable() else repr(key)
    return f"{path}.{shown}" if path else str(shown)


def design_from_dict(obj, where: str) -> Design:
    """Validate a parsed design document and build the ``Design``.

    where: the name used at the start of error messages (normally the file name).
    Raises InputError with one line naming ``where`` and the key path.
    """
    return _Reader(where).design(obj)


def _parse_constant(name: str) -> float:
    return float(name)  # NaN / Infinity: caught with their key path by the reader


def load_design(path: str | os.PathLike) -> Design:
    """Read and validate a ``cage-design`` JSON file; InputError (one line) when it is wrong."""
    where = str(path)
    from cage.textfile import parse_json, read_text

    obj = parse_json(read_text(path, "design file"), where, object_pairs_hook=_pairs_hook,
                     parse_constant=_parse_constant)
    return design_from_dict(obj, where)


# ---------------------------------------------------------------------------------------------
# Writing
# ---------------------------------------------------------------------------------------------


def design_to_json(design: Design, version: int | None = None) -> str:
    """The design file's text: indented JSON, floats written with full precision."""
    try:
        return json.dumps(design_to_dict(design, version), indent=2, allow_nan=False) + "\n"
    except ValueError:
        raise InputError("design holds a NaN or infinite number; it cannot be written") from None


def save_design(path: str | os.PathLike, design: Design, version: int | None = None) -> Path:
    """Write ``design`` to ``path`` atomically (temporary file, then rename); version as
    ``design_to_dict``."""
    design_from_dict(design_to_dict(design, version), str(path))  # refuse to write what cannot be read
    return write_text(path, design_to_json(design, version))


# ---------------------------------------------------------------------------------------------
# Field
# ---------------------------------------------------------------------------------------------
