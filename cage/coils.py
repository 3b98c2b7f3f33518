"""Square and round coils, coil pairs and the three-axis cage (cage frame, SI units).

A coil pair for cage axis ``a`` is two equal coils centred on the a-axis at
a = +spacing/2 and a = -spacing/2, normals along a, wound series-aiding so that a
positive current gives a field along +a at the centre. Square coils have their sides
parallel to the other two cage axes.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from cage.errors import InputError

AXES = ("x", "y", "z")
SHAPES = ("square", "round")

# Spacing / side of a square pair whose on-axis second derivative vanishes at the centre:
# Firester, Rev. Sci. Instrum. 37, 1264 (1966).
SQUARE_FLAT_SPACING_PER_SIDE = 0.5445


@dataclass(frozen=True)
class CoilPair:
    """One axis of the cage.

    axis: "x", "y" or "z" (cage frame).
    shape: "square" or "round".
    size_m: square, side of the winding centreline; round, radius of the centreline.
    spacing_m: distance between the two coil planes.
    turns: turns per coil.
    """

    axis: str
    shape: str
    size_m: float
    spacing_m: float
    turns: int

    @property
    def side_m(self) -> float:
        if self.shape != "square":
            raise AttributeError("a round coil has a radius, not a side")
        return self.size_m

    @property
    def radius_m(self) -> float:
        if self.shape != "round":
            raise AttributeError("a square coil has a side, not a radius")
        return self.size_m

    @property
    def half_width_m(self) -> float:
        """Half the extent of the centreline across the axis (half side, or radius)."""
        return self.size_m / 2 if self.shape == "square" else self.size_m

    @property
    def perimeter_m(self) -> float:
        """Length of one turn along the centreline."""
        return 4 * self.size_m if self.shape == "square" else 2 * math.pi * self.size_m


def flat_spacing_m(shape: str, size_m: float) -> float:
    """Spacing at which the on-axis field of a pair is flattest at the centre.

    Round: spacing = radius (Helmholtz). Square: 0.5445 x side (Firester 1966).
    """
    if shape == "round":
        return float(size_m)
    if shape == "square":
        return SQUARE_FLAT_SPACING_PER_SIDE * float(size_m)
    raise ValueError(f"unknown coil shape {shape!r}; expected one of {SHAPES}")


@dataclass(frozen=True)
class CoilCage:
    """Three pairs, one per cage axis."""

    x: CoilPair
    y: CoilPair
    z: CoilPair

    @property
    def pairs(self) -> tuple[CoilPair, CoilPair, CoilPair]:
        return (self.x, self.y, self.z)


# =============================================================================================
# Geometry of the filaments and the fields of pairs and cages (cage frame, SI units).
#
# Coil on cage axis a (index i): its centreline lies in the plane a = a0, centred on the axis.
# With u = axis (i+1) mod 3 and v = axis (i+2) mod 3 (so e_u x e_v = e_a), a positive current
# circulates from +u toward +v: right-handed about +a, field along +a at the coil's centre.
# A square centreline of side s has vertices (u, v) = (h,-h), (h,h), (-h,h), (-h,-h), h = s/2.
# =============================================================================================

# A channel of exactly k wire diameters holds k turns despite rounding (as cage.electrical).
_FIT_SLACK = 1e-9


def check_pair(pair: CoilPair) -> CoilPair:
    """Raise InputError (one line naming the axis and field) unless ``pair`` is usable."""
    if not isinstance(pair, CoilPair):
        raise InputError(f"expected a CoilPair, got {type(pair).__name__}")
    check_axis_and_shape(pair.axis, pair.shape, "coil pair axis")
    for name in ("size_m", "spacing_m"):
        value = getattr(pair, name)
        ok = isinstance(value, (int, float, np.integer, np.floating)) and not isinstance(value, bool)
        if not ok or not math.isfinite(value) or value <= 0:
            raise InputError(f"axis {pair.axis}: {name} must be a positive finite number, got {value!r}")
    check_turns(pair.turns, f"axis {pair.axis}: turns")
    return pair


def check_axis_and_shape(axis, shape, what: str) -> None:
    """Raise InputError unless ``axis`` is one of AXES and ``shape`` one of SHAPES; ``what``
    names the axis field in the message ("coil pair axis", "coil axis")."""
    if axis not in AXES:
        raise InputError(f"{what} must be one of {AXES}, got {axis!r}")
    if shape not in SHAPES:
        raise InputError(f"axis {axis}: coil shape must be one of {SHAPES}, got {shape!r}")


def check_turns(turns, where: str) -> None:
    """Raise InputError unless ``turns`` is a whole number (not a bool) of at least 1."""
    ok = isinstance(turns, (int, np.integer)) and not isinstance(turns, bool)
    if not ok or turns < 1:
        raise InputError(f"{where} must be a whole number of at least 1, got {turns!r}")


def check_cage(cage: CoilCage) -> CoilCage:
    """Raise InputError unless ``cage`` holds three usable pairs on x, y and z in that order."""
    if not isinstance(cage, CoilCage):
        raise InputError(f"expected a CoilCage, got {type(cage).__name__}")
    for name, pair in zip(AXES, cage.pairs):
        check_pair(pair)
        if pair.axis != name:
            raise InputError(f"cage.{name} is a pair on axis {pair.axis!r}, expected {name!r}")
    return cage


def as_points_m(points_m, what: str = "points_m") -> tuple[np.ndarray, bool]:
    """Points as a float (n, 3) array and whether a single (3,) point was given.

    Raises InputError for other shapes, non-numbers and non-finite values.
    """
    try:
        pts = np.asarray(points_m, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"{what} must be numbers of shape (3,) or (n, 3)") from None
    single = pts.shape == (3,)
    if single:
        pts = pts[None, :]
    if pts.ndim != 2 or pts.shape[1] != 3:
        raise InputError(f"{what} must have shape (3,) or (n, 3), got {pts.shape}")
    if not np.all(np.isfinite(pts)):
        raise InputError(f"{what} must be finite (no NaN or infinity)")
    return pts, single


@dataclass(frozen=True)
class FilamentPack:
    """A winding pack as a grid of filaments, one filament per turn.

    wire_od_m: outer (insulated) wire diameter, the grid pitch.
    channel_width_m: the channel's width along the coil axis; a layer holds
        floor(width / od) turns side by side, and ceil(turns / per layer) layers stack
        radially.

    Placement (our choice): the pack's rectangle, width per_layer x od along the axis and
    depth layers x od radially, is centred on the coil's nominal centreline; filament
    centres sit on the grid at pitch od. A last, partly filled layer is the outermost one,
    with its turns centred along the axis. Each filament carries the drive current once.
    """

    wire_od_m: float
    channel_width_m: float

    def __post_init__(self):
        for name in ("wire_od_m", "channel_width_m"):
            value = getattr(self, name)
            if isinstance(value, bool) or not isinstance(value, (int, float, np.integer, np.floating)) \
                    or not math.isfinite(value) or value <= 0:
                raise InputError(f"winding pack {name} must be a positive finite number, got {value!r}")
        if self.channel_width_m * (1.0 + _FIT_SLACK) < self.wire_od_m:
            raise InputError(
                f"winding pack channel_width_m {self.channel_width_m:g} is narrower than the wire "
                f"({self.wire_od_m:g} m)"
            )

    @property
    def turns_per_layer(self) -> int:
        return int(math.floor(self.channel_width_m / self.wire_od_m * (1.0 + _FIT_SLACK)))

    def layers(self, turns: int) -> int:
        """Radial layers needed for ``turns`` turns."""
        return -(-int(turns) // self.turns_per_layer)

    def depth_m(self, turns: int) -> float:
        """Radial depth of the pack of ``turns`` turns."""
        return self.layers(turns) * self.wire_od_m

    def offsets_m(self, turns: int) -> np.ndarray:
        """(turns, 2) filament offsets from the centreline: (along the axis, radially outward)."""
        n = int(turns)
        per = self.turns_per_layer
        layers = self.layers(n)
        od = float(self.wire_od_m)
        rows = []
        for j in range(layers):
            count = per if j < layers - 1 else n - per * (layers - 1)
            radial = (j - (layers - 1) / 2.0) * od
            for k in range(count):
                rows.append(((k - (count - 1) / 2.0) * od, radial))
        return np.array(rows, dtype=float)


@dataclass(frozen=True, eq=False)
class Filaments:
    """The filaments of one or more coils, for a drive current of 1 A.

    polygons: closed polygons (square coils), ``cage.biot_savart.Polygon``; loops: circles
    (round coils), ``cage.biot_savart.Loop``. Each filament's ``current_A`` is the
    ampere-turns it carries per ampere of drive: the coil's turns N when the winding is one
    filament (the field of N coincident turns is N times that of one), 1 per filament of a
    winding pack.
    """

    polygons: tuple
    loops: tuple

    def __add__(self, other: "Filaments") -> "Filaments":
        return Filaments(self.polygons + other.polygons, self.loops + other.loops)

    def scaled(self, current_A: float) -> "Filaments":
        """These filaments driven at ``current_A`` amperes."""
        k = float(current_A)
        return Filaments(tuple(p.scaled(k) for p in self.polygons), tuple(lp.scaled(k) for lp in self.loops))

    @property
    def count(self) -> int:
        return len(self.polygons) + len(self.loops)


def _square_vertices(axis_index: int, axial_m: float, half_side_m: float) -> np.ndarray:
    i = axis_index
    iu, iv = (i + 1) % 3, (i + 2) % 3
    h = half_side_m
    verts = np.zeros((4, 3))
    verts[:, i] = axial_m
    verts[:, iu] = (h, h, -h, -h)
    verts[:, iv] = (-h, h, h, -h)
    return verts


def coil_filaments(shape: str, axis: str, size_m: float, axial_m: float, turns: int,
                   pack: FilamentPack | None = None) -> Filaments:
    """Filaments of one coil centred on cage axis ``axis`` in the plane axis = ``axial_m``.

    size_m: side (square) or radius (round) of the winding centreline. Positive current is
    right-handed about +axis. pack: None for one filament of ``turns`` ampere-turns per
    ampere, else a ``FilamentPack`` grid (one filament per turn).
    """
    from cage.biot_savart import Loop, Polygon

    i = AXES.index(axis)
    if pack is None:
        offsets = np.zeros((1, 2))
        weight = float(turns)
    else:
        offsets = pack.offsets_m(turns)
        weight = 1.0
    normal = np.zeros(3)
    normal[i] = 1.0
    polygons, loops = [], []
    for along, radial in offsets:
        a0 = axial_m + along
        if shape == "square":
            h = size_m / 2.0 + radial
            if h <= 0:
                raise InputError(f"axis {axis}: the winding pack is deeper than the coil is wide")
            polygons.append(Polygon(_square_vertices(i, a0, h), weight))
        elif shape == "round":
            r = size_m + radial
            if r <= 0:
                raise InputError(f"axis {axis}: the winding pack is deeper than the coil is wide")
            centre = np.zeros(3)
            centre[i] = a0
            loops.append(Loop(centre, normal, r, weight))
        else:
            raise InputError(f"axis {axis}: coil shape must be one of {SHAPES}, got {shape!r}")
    return Filaments(tuple(polygons), tuple(loops))


def pair_filaments(pair: CoilPair, pack: FilamentPack | None = None) -> Filaments:
    """Filaments of both coils of ``pair`` (at axis = +spacing/2 and -spacing/2), per ampere.

    The coils are in series aiding: both circulate right-handed about +axis, so a positive
    current gives a field along +axis at the centre.
    """
    check_pair(pair)
    half = pair.spacing_m / 2.0
    return (coil_filaments(pair.shape, pair.axis, pair.size_m, +half, pair.turns, pack)
            + coil_filaments(pair.shape, pair.axis, pair.size_m, -half, pair.turns, pack))


def cage_filaments(cage: CoilCage, currents_A) -> Filaments:
    """All filaments of the cage, each driven at its axis's current (A)."""
    check_cage(cage)
    currents = _currents3(currents_A)
    out = Filaments((), ())
    for pair, current in zip(cage.pairs, currents):
        if current != 0.0:
            out = out + pair_filaments(pair).scaled(current)
    return out


def _currents3(currents_A) -> tuple[float, float, float]:
    try:
        arr = np.asarray(currents_A, dtype=float)
    except (TypeError, ValueError):
        raise InputError("currents_A must be three numbers (x, y, z) in amperes") from None
    if arr.shape != (3,):
        raise InputError(f"currents_A must be three numbers (x, y, z), got shape {arr.shape}")
    if not np.all(np.isfinite(arr)):
        raise InputError(f"currents_A must be finite, got {arr.tolist()}")
    return tuple(float(c) for c in arr)


def filaments_field_T(filaments: Filaments, points_m) -> np.ndarray:
    """Field in tesla of ``filaments`` (currents as they stand) at points in metres."""
    from cage.biot_savart import filaments_field_T as _kernel

    pts, single = as_points_m(points_m)
    out = _kernel(pts, filaments.polygons, filaments.loops)
    return out[0] if single else out


def pair_field_T(pair: CoilPair, current_A: float, points_m,
                 pack: FilamentPack | None = None) -> np.ndarray:
    """Field in tesla of one pair driven at ``current_A`` amperes, at points in metres.

    points_m: (n, 3) or (3,) in the cage frame; the result has the same shape.
    pack: None models each coil's N turns as one filament on the centreline carrying N x I;
    a ``FilamentPack`` spreads the turns over the winding cross-section.
    Exact Biot-Savart fields of the filaments (``cage.biot_savart``).
    """
    try:
        current = float(current_A)
    except (TypeError, ValueError):
        raise InputError(f"current_A must be a number, got {current_A!r}") from None
    if not math.isfinite(current):
        raise InputError(f"current_A must be finite, got {current_A!r}")
    return filaments_field_T(pair_filaments(pair, pack).scaled(current), points_m)


def cage_field_T(cage: CoilCage, currents_A, points_m) -> np.ndarray:
    """Field in tesla of the whole cage, currents_A (3,) amperes for x, y, z, at points in metres.

    points_m: (n, 3) or (3,) in the cage frame; the result has the same shape. One pass over
    the points for all six coils (one filament of N x I per coil).
    """
    return filaments_field_T(cage_filaments(cage, currents_A), points_m)


@dataclass(frozen=True)
class PackDifference:
    """How much a winding-pack model differs from the N-turns-as-one-filament model.

    centre_field_filament_T, centre_field_pack_T: axial field at the centre per ampere (T/A).
    centre_relative: |B_pack(0) - B_fil(0)| / |B_fil(0)|.
    box_max_relative: max over the test box of |B_pack(p) - B_fil(p)| / |B_fil(0)|.
    box_deviation_filament, box_deviation_pack: the uniformity of each model over the box,
    max |B(p) - B(0)| / |B(0)| (``cage.uniformity.box_deviation``).
    box_m: the test box's sides (x, y, z), centred on the cage centre.
    """

    centre_field_filament_T: float
    centre_field_pack_T: float
    centre_relative: float
    box_max_relative: float
    box_deviation_filament: float
    box_deviation_pack: float
    box_m: tuple[float, float, float]


def pack_vs_filament_difference(pair: CoilPair, pack: FilamentPack, box_m,
                                n_per_edge: int = 9) -> PackDifference:
    """Compare the pack model of ``pair`` with its one-filament model, per ampere.

    box_m: test box sides (x, y, z) in metres, centred. The difference field is harmonic in the
    wire-free box, so its largest magnitude is on the box surface: the six faces are sampled on
    an n_per_edge x n_per_edge grid (``cage.samplepoints.box_points_m``).
    """
    if not isinstance(pack, FilamentPack):
        raise InputError(f"pack must be a FilamentPack, got {type(pack).__name__}")
    check_pair(pair)
    return filaments_pack_difference(pair_filaments(pair), pair_filaments(pair, pack), pair.axis, box_m, n_per_edge)


def filaments_pack_difference(filament: Filaments, packed: Filaments, axis: str, box_m,
                              n_per_edge: int = 9) -> PackDifference:
    """``PackDifference`` of one axis given as its one-filament and its winding-pack filaments
    (per ampere), over the centred test box (faces sampled, see pack_vs_filament_difference)."""
    from cage.samplepoints import box_points_m, deviation_of_field

    pts = np.vstack([np.zeros((1, 3)), box_points_m(box_m, n_per_edge)])
    b_fil = filaments_field_T(filament, pts)
    b_pack = filaments_field_T(packed, pts)
    i = AXES.index(axis)
    ref = float(np.linalg.norm(b_fil[0]))
    diff = np.linalg.norm(b_pack - b_fil, axis=1) / ref
    return PackDifference(
        centre_field_filament_T=float(b_fil[0, i]),
        centre_field_pack_T=float(b_pack[0, i]),
        centre_relative=float(diff[0]),
        box_max_relative=float(diff.max()),
        box_deviation_filament=deviation_of_field(b_fil),
        box_deviation_pack=deviation_of_field(b_pack),
        box_m=tuple(float(v) for v in np.asarray(box_m, dtype=float)),
    )
