"""The design file: a JSON document describing the three coil pairs of a cage (SI units).

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
``requirement``, ``layout`` (objects), ``envelope_m`` (a list of numbers), ``notes`` (text).

Reading is strict: unknown keys are refused with the nearest known key suggested, and every
problem is one line naming the file and the key path, e.g.
``design.json: axes.y.turns must be a positive whole number, got -3``
(raised as ``cage.errors.InputError``). Writing is atomic (``cage.atomicfile``) and keeps full
float precision, so a design read back is equal to the one written.
"""
from __future__ import annotations

import copy
import difflib
import json
import math
import os
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, fields
from pathlib import Path

import numpy as np

from cage.atomicfile import write_text
from cage.coils import AXES, SHAPES, CoilCage, CoilPair, as_points_m, cage_field_T
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

FORMAT = "cage-design"
VERSION = 1

# Sanity limits: a value beyond these is a typing error, not a cage.
MAX_LENGTH_M = 50.0
MAX_TURNS = 100000
MAX_LEAD_LENGTH_M = 10_000.0  # as the site file's coil.lead_length_m

OPTIONAL_AXIS_NUMBERS = (
    "resistance_20C_ohm",
    "resistance_hot_ohm",
    "inductance_H",
    "time_constant_s",
    "copper_mass_kg",
    "field_per_amp_nT",
    "max_current_A",
    "winding_temperature_C",
    "current_density_A_per_mm2",
    "lead_length_m",
    "frame_width_m",
    "frame_depth_m",
    "frame_size_m",
)
_AXIS_KEYS = ("shape", "side_m", "radius_m", "spacing_m", "turns", "wire") + OPTIONAL_AXIS_NUMBERS
_TOP_KEYS = ("format", "version", "axes", "site", "requirement", "layout", "envelope_m", "notes")
_TOP_OBJECTS = ("site", "requirement", "layout")


# ---------------------------------------------------------------------------------------------
# Dataclasses
# ---------------------------------------------------------------------------------------------


def _optional_positive(value, what: str):
    if value is None:
        return None
    if isinstance(value, bool) or not isinstance(value, (int, float, np.integer, np.floating)):
        raise InputError(f"{what} must be a positive number, got {value!r}")
    v = float(value)
    if not math.isfinite(v) or v <= 0:
        raise InputError(f"{what} must be a positive finite number, got {_show(value)}")
    return v


@dataclass(frozen=True)
class AxisDesign:
    """One axis of a design: the coil pair and what is known about its winding and drive.

    pair: the coil pair (its ``axis`` names the axis). wire: the wire's name.
    resistance_20C_ohm, resistance_hot_ohm: both windings at 20 degC / at the winding
    temperature (ohm). inductance_H: the series pair (H). time_constant_s: L / R (s).
    copper_mass_kg: both windings (kg). field_per_amp_nT: centre field per ampere (nT/A).
    max_current_A: the design current (A). winding_temperature_C: steady winding temperature
    (degC). current_density_A_per_mm2: at max_current_A (A/mm^2). lead_length_m: supply to
    pair and back (m). frame_width_m, frame_depth_m: the winding channel along the axis and
    radially (m). frame_size_m: the frame line the channel is centred on (side or radius, m);
    the winding lies on the channel floor inside it (cage.channel). Every number is positive
    and finite when present.
    """

    pair: CoilPair
    wire: str | None = None
    resistance_20C_ohm: float | None = None
    resistance_hot_ohm: float | None = None
    inductance_H: float | None = None
    time_constant_s: float | None = None
    copper_mass_kg: float | None = None
    field_per_amp_nT: float | None = None
    max_current_A: float | None = None
    winding_temperature_C: float | None = None
    current_density_A_per_mm2: float | None = None
    lead_length_m: float | None = None
    frame_width_m: float | None = None
    frame_depth_m: float | None = None
    frame_size_m: float | None = None

    def __post_init__(self):
        if not isinstance(self.pair, CoilPair):
            raise InputError(f"AxisDesign.pair must be a CoilPair, got {type(self.pair).__name__}")
        if self.wire is not None and not isinstance(self.wire, str):
            raise InputError(f"axes.{self.pair.axis}.wire must be text, got {self.wire!r}")
        for name in OPTIONAL_AXIS_NUMBERS:
            value = _optional_positive(getattr(self, name), f"axes.{self.pair.axis}.{name}")
            object.__setattr__(self, name, value)


@dataclass(frozen=True)
class Design:
    """A whole cage design: three axes (x, y, z in that order) and optional context.

    site, requirement, layout: objects kept verbatim from the file; envelope_m: a list kept
    verbatim; notes: free text.
    """

    axes: tuple[AxisDesign, AxisDesign, AxisDesign]
    site: dict | None = None
    requirement: dict | None = None
    layout: dict | None = None
    envelope_m: list | None = None
    notes: str | None = None

    def __post_init__(self):
        axes = tuple(self.axes)
        if len(axes) != 3 or not all(isinstance(a, AxisDesign) for a in axes):
            raise InputError("Design.axes must be three AxisDesign, for x, y and z")
        for name, a in zip(AXES, axes):
            if a.pair.axis != name:
                raise InputError(f"Design.axes must be ordered x, y, z; found axis {a.pair.axis!r} "
                                 f"where {name!r} belongs")
        object.__setattr__(self, "axes", axes)

    @property
    def cage(self) -> CoilCage:
        """The three coil pairs as a ``CoilCage``."""
        return CoilCage(x=self.axes[0].pair, y=self.axes[1].pair, z=self.axes[2].pair)

    def axis(self, name: str) -> AxisDesign:
        """The axis named "x", "y" or "z"."""
        if name not in AXES:
            raise InputError(f"axis must be one of x, y, z, got {name!r}")
        return self.axes[AXES.index(name)]


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


def _show(value) -> str:
    if isinstance(value, float):
        if math.isnan(value):
            return "NaN"
        if math.isinf(value):
            return "Infinity" if value > 0 else "-Infinity"
    if isinstance(value, (dict, list)):
        return "an object" if isinstance(value, dict) else "a list"
    if value is None:
        return "null"
    if isinstance(value, bool):
        return "true" if value else "false"
    return repr(value)


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

    def axis(self, value, name: str) -> AxisDesign:
        path = f"axes.{name}"
        obj = self.object(value, path)
        self.check_keys(obj, path, _AXIS_KEYS)
        if "shape" not in obj:
            self.fail(f"{path}.shape", 'is missing (expected "square" or "round")')
        shape = obj["shape"]
        if shape not in SHAPES:
            close = difflib.get_close_matches(str(shape).lower(), SHAPES, n=1) if isinstance(shape, str) else []
            hint = f' (did you mean "{close[0]}"?)' if close else ""
            self.fail(f"{path}.shape", f'must be "square" or "round", got {_show(shape)}{hint}')
        size_key, other_key = ("side_m", "radius_m") if shape == "square" else ("radius_m", "side_m")
        if other_key in obj:
            self.fail(f"{path}.{other_key}", f"does not apply to a {shape} coil (give {size_key})")
        for key in (size_key, "spacing_m", "turns"):
            if key not in obj:
                self.fail(f"{path}.{key}", "is missing")
        size = self.number(obj[size_key], f"{path}.{size_key}", "m", MAX_LENGTH_M)
        spacing = self.number(obj["spacing_m"], f"{path}.spacing_m", "m", MAX_LENGTH_M)
        turns = self.turns(obj["turns"], f"{path}.turns")
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
        if "wire" in extra:
            self.check_winding(path, extra["wire"], turns, extra.get("frame_width_m"), extra.get("frame_depth_m"))
        pair = CoilPair(axis=name, shape=shape, size_m=size, spacing_m=spacing, turns=turns)
        return AxisDesign(pair=pair, **extra)

    def check_winding(self, path: str, wire: str, turns: int, width_m, depth_m) -> None:
        """The wire is one the catalogue knows and, with the frame given, the turns fit its channel."""
        from cage.electrical import winding_pack
        from cage.wires import wire_from_name

        try:
            wire_from_name(wire)
        except InputError as exc:
            self.fail(f"{path}.wire", f"is not usable: {exc}")
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
            self.fail("version", f"is missing (expected {VERSION})")
        version = obj["version"]
        if isinstance(version, bool) or not isinstance(version, (int, float)) or version != VERSION:
            self.fail("version", f"{_show(version)} is not supported (this program reads version {VERSION})")
        if "axes" not in obj:
            self.fail("axes", "is missing")
        axes_obj = self.object(obj["axes"], "axes")
        self.check_keys(axes_obj, "axes", AXES)
        for name in AXES:
            if name not in axes_obj:
                self.fail(f"axes.{name}", "is missing")
        axes = tuple(self.axis(axes_obj[name], name) for name in AXES)
        extra = {}
        for key in _TOP_OBJECTS:
            if key in obj:
                extra[key] = self.verbatim(self.object(obj[key], key), key)
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


def design_to_dict(design: Design) -> dict:
    """The JSON-ready document of ``design`` (plain dicts, lists, floats at full precision)."""
    if not isinstance(design, Design):
        raise InputError(f"expected a Design, got {type(design).__name__}")
    axes = {}
    for a in design.axes:
        pair = a.pair
        entry = {"shape": pair.shape}
        entry["side_m" if pair.shape == "square" else "radius_m"] = float(pair.size_m)
        entry["spacing_m"] = float(pair.spacing_m)
        entry["turns"] = int(pair.turns)
        if a.wire is not None:
            entry["wire"] = a.wire
        for name in OPTIONAL_AXIS_NUMBERS:
            value = getattr(a, name)
            if value is not None:
                entry[name] = float(value)
        axes[pair.axis] = entry
    out = {"format": FORMAT, "version": VERSION, "axes": axes}
    for f in fields(Design):
        if f.name == "axes":
            continue
        value = getattr(design, f.name)
        if value is not None:
            out[f.name] = copy.deepcopy(value)
    return out


def design_to_json(design: Design) -> str:
    """The design file's text: indented JSON, floats written with full precision."""
    try:
        return json.dumps(design_to_dict(design), indent=2, allow_nan=False) + "\n"
    except ValueError:
        raise InputError("design holds a NaN or infinite number; it cannot be written") from None


def save_design(path: str | os.PathLike, design: Design) -> Path:
    """Write ``design`` to ``path`` atomically (temporary file, then rename)."""
    design_from_dict(design_to_dict(design), str(path))  # refuse to write what cannot be read
    return write_text(path, design_to_json(design))


# ---------------------------------------------------------------------------------------------
# Field
# ---------------------------------------------------------------------------------------------


def _currents(currents_A) -> tuple[float, float, float]:
    if isinstance(currents_A, Mapping):
        keys = set(currents_A)
        if keys != set(AXES):
            unknown = sorted(str(k) for k in keys - set(AXES))
            missing = [k for k in AXES if k not in keys]
            what = f"unknown {', '.join(unknown)}" if unknown else f"missing {', '.join(missing)}"
            raise InputError(f"currents_A must have the keys x, y and z ({what})")
        values = [currents_A[k] for k in AXES]
    elif isinstance(currents_A, (str, bytes)):
        raise InputError(f"currents_A must be a mapping x, y, z or three numbers, got {currents_A!r}")
    else:
        try:
            values = list(np.asarray(currents_A, dtype=float).reshape(-1)) \
                if np.ndim(currents_A) == 1 else None
        except (TypeError, ValueError):
            values = None
        if values is None or len(values) != 3:
            raise InputError(f"currents_A must be a mapping x, y, z or three numbers, got {currents_A!r}")
    out = []
    for name, v in zip(AXES, values):
        if isinstance(v, bool):
            raise InputError(f"currents_A[{name}] must be a number of amperes, got {v!r}")
        try:
            f = float(v)
        except (TypeError, ValueError):
            raise InputError(f"currents_A[{name}] must be a number of amperes, got {v!r}") from None
        if not math.isfinite(f):
            raise InputError(f"currents_A[{name}] must be finite, got {v!r}")
        out.append(f)
    return tuple(out)


def field_T(design: Design, currents_A, points_m) -> np.ndarray:
    """Field in tesla of the whole cage of ``design`` at points in metres (cage frame).

    currents_A: a mapping with the keys x, y, z, or a sequence of three numbers, in amperes
    (each axis's pair in series aiding; positive gives +axis at the centre).
    points_m: (n, 3) or (3,); the result has the same shape. Each coil's N turns are one
    filament on its centreline carrying N x I (exact Biot-Savart, ``cage.biot_savart``).
    """
    if not isinstance(design, Design):
        raise InputError(f"expected a Design, got {type(design).__name__}")
    currents = _currents(currents_A)
    pts, single = as_points_m(points_m)
    out = cage_field_T(design.cage, currents, pts)
    return out[0] if single else out
