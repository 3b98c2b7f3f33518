"""One cage axis as any number of coaxial coils, and the three-axis cage of such axes.

Cage frame, SI units. An axis ``a`` ("x", "y" or "z") is a list of coils centred on the
a-axis, each in the plane a = ``position_m`` (signed distance of the coil plane from the
cage centre), normals along a, all wound in series aiding: a positive drive current
circulates right-handed about +a in every coil, so the field at the centre is along +a.
Square coils have their sides parallel to the other two cage axes (``side_m``, the winding
centreline's side); round coils have ``radius_m`` (the centreline's radius). All coils of
one axis share its shape.

A coil pair (``cage.coils.CoilPair``) is the two-coil case: coils of equal size and turns at
+spacing/2 and -spacing/2 (``axis_from_pair``). Fields go through the same exact filament
kernels (``cage.coils.coil_filaments``, ``cage.biot_savart``), so a pair gives the same
numbers either way.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from cage.coils import (
    AXES,
    CoilPair,
    FilamentPack,
    Filaments,
    check_axis_and_shape,
    check_turns,
    coil_filaments,
    filaments_field_T,
)
from cage.errors import InputError

__all__ = [
    "SYSTEM_NAMES",
    "Coil",
    "CoilAxis",
    "AxisCage",
    "axis_from_pair",
    "pair_from_axis",
    "check_coil_axis",
    "axis_filaments",
    "axis_field_T",
    "axis_cage_filaments",
    "axis_cage_field_T",
]

# The coil systems an axis may be (cage.coilsystems derives their geometry); "custom" is any
# other list of coils (e.g. a design file written elsewhere).
SYSTEM_NAMES = ("pair", "three", "four", "four-equal", "custom")


def _number(value) -> bool:
    return isinstance(value, (int, float, np.integer, np.floating)) and not isinstance(value, bool)


@dataclass(frozen=True)
class Coil:
    """One coil of an axis.

    position_m: signed distance of the coil plane from the cage centre along the axis (m).
    turns: turns of this coil. size_m: side (square) or radius (round) of the winding
    centreline (m); the axis's shape says which.
    """

    position_m: float
    turns: int
    size_m: float


@dataclass(frozen=True)
class CoilAxis:
    """The coils of one cage axis, in series aiding (see the module docstring).

    axis: "x", "y" or "z". shape: "square" or "round". system: one of ``SYSTEM_NAMES``.
    coils: the coils, ordered by position (made so on construction).
    """

    axis: str
    shape: str
    system: str
    coils: tuple[Coil, ...]

    def __post_init__(self):
        object.__setattr__(self, "coils", tuple(sorted(tuple(self.coils), key=lambda c: c.position_m)))

    @property
    def count(self) -> int:
        return len(self.coils)

    @property
    def size_m(self) -> float:
        """The largest coil's side (square) or radius (round): the system's nominal size."""
        return max(c.size_m for c in self.coils)

    @property
    def half_width_m(self) -> float:
        """Half the largest extent of any centreline across the axis (half side, or radius)."""
        return max(_half_width(self.shape, c.size_m) for c in self.coils)

    @property
    def half_length_m(self) -> float:
        """Largest |position| of a coil plane (m)."""
        return max(abs(c.position_m) for c in self.coils)

    @property
    def total_turns(self) -> int:
        return sum(int(c.turns) for c in self.coils)

    def scaled_turns(self, factor: int) -> "CoilAxis":
        """The same axis with every coil's turns multiplied by the whole number ``factor``."""
        k = int(factor)
        return CoilAxis(self.axis, self.shape, self.system,
                        tuple(Coil(c.position_m, int(c.turns) * k, c.size_m) for c in self.coils))

    def with_turns(self, turns) -> "CoilAxis":
        """The same axis with the turns given per coil (in the order of ``coils``)."""
        turns = tuple(int(n) for n in turns)
        if len(turns) != self.count:
            raise InputError(f"axis {self.axis}: {len(turns)} turns given for {self.count} coils")
        return CoilAxis(self.axis, self.shape, self.system,
                        tuple(Coil(c.position_m, n, c.size_m) for c, n in zip(self.coils, turns)))


def _half_width(shape: str, size_m: float) -> float:
    return size_m / 2.0 if shape == "square" else size_m


def perimeter_m(shape: str, size_m: float) -> float:
    """Length of one turn along the centreline: 4 side (square) or 2 pi radius (round)."""
    return 4.0 * size_m if shape == "square" else 2.0 * math.pi * size_m


def check_coil_axis(ax: CoilAxis) -> CoilAxis:
    """Raise InputError (one line naming the axis and the coil) unless ``ax`` is usable."""
    if not isinstance(ax, CoilAxis):
        raise InputError(f"expected a CoilAxis, got {type(ax).__name__}")
    check_axis_and_shape(ax.axis, ax.shape, "coil axis")
    if ax.system not in SYSTEM_NAMES:
        raise InputError(f"axis {ax.axis}: system must be one of {SYSTEM_NAMES}, got {ax.system!r}")
    if not ax.coils:
        raise InputError(f"axis {ax.axis}: an axis needs at least one coil")
    for k, c in enumerate(ax.coils):
        if not isinstance(c, Coil):
            raise InputError(f"axis {ax.axis}: coil {k} must be a Coil, got {type(c).__name__}")
        if not _number(c.position_m) or not math.isfinite(c.position_m):
            raise InputError(f"axis {ax.axis}: coil {k} position_m must be a finite number, got {c.position_m!r}")
        if not _number(c.size_m) or not math.isfinite(c.size_m) or c.size_m <= 0:
            raise InputError(f"axis {ax.axis}: coil {k} size must be a positive finite number, got {c.size_m!r}")
        check_turns(c.turns, f"axis {ax.axis}: coil {k} turns")
    return ax


def axis_from_pair(pair: CoilPair) -> CoilAxis:
    """The two-coil axis of a ``CoilPair``: coils at -spacing/2 and +spacing/2."""
    half = pair.spacing_m / 2.0
    return CoilAxis(pair.axis, pair.shape, "pair",
                    (Coil(-half, pair.turns, pair.size_m), Coil(+half, pair.turns, pair.size_m)))


def pair_from_axis(ax: CoilAxis) -> CoilPair | None:
    """The ``CoilPair`` an axis is, or None when it is not two equal coils placed symmetrically."""
    if ax.count != 2:
        return None
    a, b = ax.coils
    if a.turns != b.turns or a.size_m != b.size_m or not math.isclose(a.position_m, -b.position_m,
                                                                       rel_tol=1e-12, abs_tol=1e-15):
        return None
    if b.position_m <= 0:
        return None
    return CoilPair(ax.axis, ax.shape, float(a.size_m), float(b.position_m - a.position_m), int(a.turns))


def axis_filaments(ax: CoilAxis, pack: FilamentPack | None = None) -> Filaments:
    """Filaments of every coil of ``ax`` per ampere of drive (series aiding).

    pack: None for one filament of N ampere-turns per coil on its centreline; a
    ``FilamentPack`` spreads each coil's turns over its winding cross-section (one channel per
    coil, the same pack rule as the pairs).
    """
    check_coil_axis(ax)
    out = Filaments((), ())
    for c in ax.coils:
        out = out + coil_filaments(ax.shape, ax.axis, float(c.size_m), float(c.position_m), int(c.turns), pack)
    return out


def axis_field_T(ax: CoilAxis, current_A: float, points_m, pack: FilamentPack | None = None) -> np.ndarray:
    """Field in tesla of one axis driven at ``current_A`` amperes at points (m, cage frame).

    points_m: (n, 3) or (3,); the result has the same shape. Exact Biot-Savart fields of the
    filaments (``cage.biot_savart``).
    """
    try:
        current = float(current_A)
    except (TypeError, ValueError):
        raise InputError(f"current_A must be a number, got {current_A!r}") from None
    if not math.isfinite(current):
        raise InputError(f"current_A must be finite, got {current_A!r}")
    return filaments_field_T(axis_filaments(ax, pack).scaled(current), points_m)


@dataclass(frozen=True)
class AxisCage:
    """Three axes of coils, one per cage axis (x, y, z in that order)."""

    x: CoilAxis
    y: CoilAxis
    z: CoilAxis

    @property
    def axes(self) -> tuple[CoilAxis, CoilAxis, CoilAxis]:
        return (self.x, self.y, self.z)

    @classmethod
    def from_cage(cls, cage) -> "AxisCage":
        """The axes of a ``cage.coils.CoilCage`` of pairs."""
        return cls(*(axis_from_pair(p) for p in cage.pairs))


def check_axis_cage(cage: AxisCage) -> AxisCage:
    if not isinstance(cage, AxisCage):
        raise InputError(f"expected an AxisCage, got {type(cage).__name__}")
    for name, ax in zip(AXES, cage.axes):
        check_coil_axis(ax)
        if ax.axis != name:
            raise InputError(f"cage.{name} is an axis of coils on {ax.axis!r}, expected {name!r}")
    return cage


def axis_cage_filaments(cage: AxisCage, currents_A) -> Filaments:
    """All filaments of the cage, each axis driven at its current (A, x, y, z)."""
    from cage.coils import _currents3

    check_axis_cage(cage)
    out = Filaments((), ())
    for ax, current in zip(cage.axes, _currents3(currents_A)):
        if current != 0.0:
            out = out + axis_filaments(ax).scaled(current)
    return out


def axis_cage_field_T(cage: AxisCage, currents_A, points_m) -> np.ndarray:
    """Field in tesla of the whole cage (currents_A (3,) amperes for x, y, z) at points in metres."""
    return filaments_field_T(axis_cage_filaments(cage, currents_A), points_m)
