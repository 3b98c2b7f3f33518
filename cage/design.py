"""A cage design: three axes of coils with what is known of their winding and drive.

Planning layer. ``Design`` and ``AxisDesign`` (frozen dataclasses), their plain-dict form
(:func:`design_to_dict`, the document ``cage.designfile`` writes as JSON and whose content hash
``cage.provenance`` records) and the field of a whole design (:func:`field_T`). Reading and
writing the file is ``cage.designfile``.
"""
from __future__ import annotations

import copy
import math
from collections.abc import Mapping
from dataclasses import dataclass, fields

import numpy as np

from cage.coilaxis import AxisCage, CoilAxis, axis_cage_field_T, axis_from_pair, pair_from_axis
from cage.coils import AXES, CoilCage, CoilPair, as_points_m, cage_field_T
from cage.errors import InputError

FORMAT = "cage-design"
VERSION = 1  # written for a cage of pairs
VERSION_COILS = 2  # written when an axis is not a pair (every coil listed)
READ_VERSIONS = (1, 2)
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
    """One axis of a design: its coils and what is known about its winding and drive.

    pair: the coil pair (its ``axis`` names the axis), or None when the axis is not a pair.
    coil_axis: every coil of the axis (``cage.coilaxis.CoilAxis``); made from ``pair`` when not
    given. Give at least one of the two. wire: the wire's name.
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

    pair: CoilPair | None
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
    coil_axis: CoilAxis | None = None
    frame_size_m: float | None = None

    def __post_init__(self):
        if self.pair is None and self.coil_axis is None:
            raise InputError("AxisDesign needs a pair or a coil_axis")
        if self.pair is not None and not isinstance(self.pair, CoilPair):
            raise InputError(f"AxisDesign.pair must be a CoilPair, got {type(self.pair).__name__}")
        if self.coil_axis is None:
            object.__setattr__(self, "coil_axis", axis_from_pair(self.pair))
        elif not isinstance(self.coil_axis, CoilAxis):
            raise InputError(f"AxisDesign.coil_axis must be a CoilAxis, got {type(self.coil_axis).__name__}")
        elif self.pair is None and self.coil_axis.system == "pair":
            object.__setattr__(self, "pair", pair_from_axis(self.coil_axis))
        if self.pair is not None and self.pair.axis != self.coil_axis.axis:
            raise InputError(f"AxisDesign: the pair is on axis {self.pair.axis!r}, the coils on {self.coil_axis.axis!r}")
        if self.wire is not None and not isinstance(self.wire, str):
            raise InputError(f"axes.{self.name}.wire must be text, got {self.wire!r}")
        for name in OPTIONAL_AXIS_NUMBERS:
            value = _optional_positive(getattr(self, name), f"axes.{self.name}.{name}")
            object.__setattr__(self, name, value)

    @property
    def name(self) -> str:
        """The cage axis, "x", "y" or "z"."""
        return self.coil_axis.axis

    @property
    def system(self) -> str:
        return self.coil_axis.system

    @property
    def is_pair(self) -> bool:
        """True when the axis is a coil pair (``pair`` is set)."""
        return self.pair is not None


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
    provenance: dict | None = None  # cage.provenance: where, when and from what it was made

    def __post_init__(self):
        axes = tuple(self.axes)
        if len(axes) != 3 or not all(isinstance(a, AxisDesign) for a in axes):
            raise InputError("Design.axes must be three AxisDesign, for x, y and z")
        for name, a in zip(AXES, axes):
            if a.name != name:
                raise InputError(f"Design.axes must be ordered x, y, z; found axis {a.name!r} "
                                 f"where {name!r} belongs")
        object.__setattr__(self, "axes", axes)

    @property
    def cage(self) -> CoilCage:
        """The three coil pairs as a ``CoilCage``; InputError when an axis is not a pair."""
        for a in self.axes:
            if a.pair is None:
                raise InputError(f"axis {a.name} is a {a.system} coil system with {a.coil_axis.count} coils; "
                                 f"this needs coil pairs on every axis")
        return CoilCage(x=self.axes[0].pair, y=self.axes[1].pair, z=self.axes[2].pair)

    @property
    def axis_cage(self) -> AxisCage:
        """Every coil of the three axes as a ``cage.coilaxis.AxisCage``."""
        return AxisCage(*(a.coil_axis for a in self.axes))

    @property
    def all_pairs(self) -> bool:
        return all(a.pair is not None for a in self.axes)

    def axis(self, name: str) -> AxisDesign:
        """The axis named "x", "y" or "z"."""
        if name not in AXES:
            raise InputError(f"axis must be one of x, y, z, got {name!r}")
        return self.axes[AXES.index(name)]


# ---------------------------------------------------------------------------------------------


def design_to_dict(design: Design, version: int | None = None) -> dict:
    """The JSON-ready document of ``design`` (plain dicts, lists, floats at full precision).

    version: 1 (pairs only) or 2 (every coil); None writes 1 for a cage of pairs, else 2.
    """
    if not isinstance(design, Design):
        raise InputError(f"expected a Design, got {type(design).__name__}")
    if version is None:
        version = VERSION if design.all_pairs else VERSION_COILS
    if version not in READ_VERSIONS:
        raise InputError(f"design file version must be one of {READ_VERSIONS}, got {version!r}")
    if version == VERSION and not design.all_pairs:
        raise InputError("a design file of version 1 holds coil pairs only; write version 2")
    axes = {}
    for a in design.axes:
        if version == VERSION:
            pair = a.pair
            entry = {"shape": pair.shape}
            entry["side_m" if pair.shape == "square" else "radius_m"] = float(pair.size_m)
            entry["spacing_m"] = float(pair.spacing_m)
            entry["turns"] = int(pair.turns)
        else:
            ax = a.coil_axis
            size_key = "side_m" if ax.shape == "square" else "radius_m"
            entry = {"system": ax.system, "shape": ax.shape,
                     "coils": [{"position_m": float(c.position_m), "turns": int(c.turns), size_key: float(c.size_m)}
                               for c in ax.coils]}
        if a.wire is not None:
            entry["wire"] = a.wire
        for name in OPTIONAL_AXIS_NUMBERS:
            value = getattr(a, name)
            if value is not None:
                entry[name] = float(value)
        axes[a.name] = entry
    out = {"format": FORMAT, "version": version, "axes": axes}
    for f in fields(Design):
        if f.name == "axes":
            continue
        value = getattr(design, f.name)
        if value is not None:
            out[f.name] = copy.deepcopy(value)
    return out


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
    (each axis's coils in series aiding; positive gives +axis at the centre).
    points_m: (n, 3) or (3,); the result has the same shape. Each coil's N turns are one
    filament on its centreline carrying N x I (exact Biot-Savart, ``cage.biot_savart``).
    """
    if not isinstance(design, Design):
        raise InputError(f"expected a Design, got {type(design).__name__}")
    currents = _currents(currents_A)
    pts, single = as_points_m(points_m)
    if design.all_pairs:
        out = cage_field_T(design.cage, currents, pts)
    else:
        out = axis_cage_field_T(design.axis_cage, currents, pts)
    return out[0] if single else out
