"""The build sheet: what a technician needs to make, wire and protect each axis (SI units).

Pure core: takes a ``cage.designfile.Design`` (and, when known, the supply channel of each
axis) and returns frozen dataclasses. No terminal, no disk.

Per coil
    Coil planes: an axis's coils, listed from its -axis end to its +axis end (a pair's two
    planes at -spacing/2 and +spacing/2, or the coils an axis lists; ``axis_coils`` is the one
    place that knows).
    Frame: the channel's cross-section is frame_width_m (along the axis) by frame_depth_m
    (radial), centred on the winding centreline (as ``cage.layout``), so the frame's inner
    size is the centreline size less the depth and its outer size the centreline size plus the
    depth (square: sides; round: diameters). The winding pack is centred on the centreline too
    (as ``cage.coils.FilamentPack``): its inner face is where the channel floor must be packed
    up to.
    Wire length: each layer j of the pack (radial offset r_j from the centreline, a last part
    layer outermost) holds n_j turns whose path is a square of side s + 2 r_j (sharp corners)
    or a circle of radius R + r_j; winding length = sum_j n_j x perimeter_j. The link to the
    next coil of the axis runs along the axis between the two coil planes, plus one frame depth
    to leave one channel and enter the next (our allowance).
    Copper mass and resistance at 20 degC from the wire catalogue (``cage.wires``: IEC 60028
    resistivity and density).

Per axis
    Total wire with the leads (design ``lead_length_m``: supply to the coils and back), a spool
    plan (spools of each standard mass needed for the total plus a spare fraction), copper mass.

Connection
    Positive current must give +axis field. With (a, u, v) the axis and the next two cage axes
    in cyclic order (x: y, z; y: z, x; z: x, y), so that e_u x e_v = e_a, a positive current
    runs on the +u side of each coil toward +v: counter-clockwise seen from the +a side
    (right-hand rule: fingers along the current, thumb along +a). Every coil is wound in that
    sense from its start; the supply's + goes to the first coil's start, each coil's finish to
    the next coil's start (series aiding), the last coil's finish to the supply's -.
    ``winding_path_m`` gives one turn in that sense; the figures draw it.

Protection
    Fuse: the next value of the R10 series (IEC 60127 ratings) at or above 1.25 x the design
    current (common practice). Stored energy at full range E = 1/2 L I^2. Suppressor: a
    unipolar supply gets a freewheel diode across its output terminals, on the supply side of
    the polarity switch so that it clamps the coils in either throw and never sees a reversed
    voltage (forward current rating at least the design current, reverse rating at least twice
    the supply's voltage: common practice); a bipolar supply cannot have a diode across its
    output, so it gets a bidirectional transient suppressor (stand-off above the supply voltage, energy rating at least E) or an
    RC snubber with C = L I^2 / V_peak^2 (the capacitor takes E at V_peak) and R = V_peak / I
    (the current's first path), V_peak = 2 x the supply voltage (our choice). Voltage class:
    extra-low voltage (ELV) up to 120 V ripple-free DC (IEC 61140, band I of IEC 60449); a
    SELV circuit in a dry room needs no touch protection up to 60 V DC (IEC 60364-4-41, from
    memory).

Metal frame
    A closed conducting frame is a shorted turn coupled to the winding: after a current step
    the field approaches its new value with the frame's own time constant tau = L_f / R_f.
    L_f: Grover's self inductance of one turn of the frame's size with the GMD of the frame's
    outer cross-section (Grover 1946; ``cage.inductance``); R_f = rho_Al x perimeter / A_metal
    with rho_Al = 2.826e-8 ohm m (aluminium of 61 % IACS, IEC 60889, from memory) and A_metal a
    U-channel of the frame's width and depth with a wall of ``frame_wall_m`` (3 mm assumed).
    One insulating break anywhere in the loop removes it.

Insulation
    IEC 60085 thermal classes (degC): 90 (Y), 105 (A), 120 (E), 130 (B), 155 (F), 180 (H),
    200 (N), 220 (R), 250. Hot spot = mean winding temperature + 10 K (common practice). The
    class needed is the lowest at or above the hot spot; the usual practice is class F (155)
    insulation run within class B (130) temperatures, and the margin given is 130 - hot spot.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from types import SimpleNamespace

from cage.coils import AXES, CoilPair
from cage.circuitparts import (  # noqa: F401  (names kept importable from cage.buildsheet)
    ALUMINIUM_RESISTIVITY_OHM_M, CHECK_CURRENT_FRACTION, CLASS_B_C, CLASS_F_C, Connection,
    DEFAULT_FRAME_WALL_M, DIODE_VOLTAGE_FACTOR, ELV_DC_LIMIT_V, FUSE_FACTOR, FrameShortedTurn,
    HOT_SPOT_ALLOWANCE_K, IEC60085_CLASSES, Insulation, Protection, R10_SERIES,
    SELV_DRY_TOUCH_LIMIT_V, SETTLE_TIME_CONSTANTS, SNUBBER_PEAK_FACTOR, connection, cyclic_axes,
    frame_shorted_turn, fuse_rating_A, insulation_check, protection, turn_perimeter_m,
    voltage_class, winding_sense_text)
from cage.errors import InputError

STANDARD_SPOOL_MASSES_KG = (1.0, 2.0, 5.0, 10.0, 20.0)  # common practice for magnet-wire spools
DEFAULT_SPARE_FRACTION = 0.05  # wire ordered beyond the computed total (common practice)


# ---------------------------------------------------------------------------------- results

@dataclass(frozen=True)
class CoilBuild:
    """One coil of an axis.

    label: "x1", "x2", ... from the -axis end. size_kind: "side" (square) or "diameter" (round);
    every *_size_m below is that measure. position_m: the coil plane along the axis from the
    cage centre. centreline_size_m: the winding centreline. frame_inner_size_m,
    frame_outer_size_m: the frame (channel floor and rim with the channel centred on the
    centreline). winding_inner_size_m, winding_outer_size_m: the faces of the winding pack.
    channel_width_m (along the axis), channel_depth_m (radial). pack_width_m, pack_depth_m: the
    winding's extent. turns, layers, turns_per_layer, last_layer_turns. winding_length_m,
    link_length_m (to the next coil; 0 for the last), wire_length_m (their sum),
    copper_mass_kg and resistance_20C_ohm of wire_length_m.
    """

    axis: str
    label: str
    shape: str
    size_kind: str
    position_m: float
    centreline_size_m: float
    frame_inner_size_m: float
    frame_outer_size_m: float
    winding_inner_size_m: float
    winding_outer_size_m: float
    channel_width_m: float
    channel_depth_m: float
    pack_width_m: float
    pack_depth_m: float
    turns: int
    layers: int
    turns_per_layer: int
    last_layer_turns: int
    winding_length_m: float
    link_length_m: float
    wire_length_m: float
    copper_mass_kg: float
    resistance_20C_ohm: float


@dataclass(frozen=True)
class SpoolOption:
    """Spools of one standard mass: length each holds, how many the axis needs, whether one holds a coil."""

    spool_mass_kg: float
    length_per_spool_m: float
    spools_needed: int
    holds_one_coil: bool


@dataclass(frozen=True)
class AxisBuild:
    """The build sheet of one axis."""

    axis: str
    shape: str
    wire: str
    wire_bare_diameter_m: float
    wire_outer_diameter_m: float
    coils: tuple[CoilBuild, ...]
    lead_length_m: float
    winding_wire_m: float
    total_wire_m: float
    order_wire_m: float
    copper_mass_kg: float
    resistance_20C_ohm: float
    spools: tuple[SpoolOption, ...]
    connection: Connection
    protection: Protection
    frame: FrameShortedTurn
    insulation: Insulation


@dataclass(frozen=True)
class BuildSheet:
    """The whole cage: one ``AxisBuild`` per axis (x, y, z), the settings used and warnings."""

    axes: tuple[AxisBuild, ...]
    spool_masses_kg: tuple[float, ...]
    spare_fraction: float
    copper_mass_kg: float
    warnings: tuple[str, ...]


# ---------------------------------------------------------------------------------- geometry

def axis_coils(axis_design) -> tuple[tuple[float, int, float], ...]:
    """(position_m along the axis, turns, size_m) of each coil of an axis, from its -axis end.

    axis_design: a ``cage.designfile.AxisDesign`` (or a bare ``CoilPair``). An axis that lists
    its coils (``coil_axis`` with ``coils`` of ``position_m``, ``turns``, ``size_m``: three- and
    four-coil systems) gives every coil; otherwise its pair gives two equal coils at
    -spacing/2 and +spacing/2. size_m: side (square) or radius (round).
    """
    listed = getattr(axis_design, "coil_axis", None)
    if listed is not None and getattr(listed, "coils", None):
        coils = [(float(c.position_m), int(c.turns), float(c.size_m)) for c in listed.coils]
        return tuple(sorted(coils))
    pair = axis_design if isinstance(axis_design, CoilPair) else axis_design.pair
    half = pair.spacing_m / 2.0
    return ((-half, int(pair.turns), float(pair.size_m)), (+half, int(pair.turns), float(pair.size_m)))


def layer_counts(turns: int, turns_per_layer: int) -> tuple[int, ...]:
    """Turns in each layer from the channel floor outward (full layers, then the part layer)."""
    full, rest = divmod(int(turns), int(turns_per_layer))
    return (turns_per_layer,) * full + ((rest,) if rest else ())


def winding_length_m(shape: str, size_m: float, turns: int, turns_per_layer: int, pitch_m: float) -> float:
    """Wire in one coil's winding: sum over layers of turns x that layer's path length.

    Layers sit at radial offsets (j - (layers - 1) / 2) x pitch from the centreline.
    """
    counts = layer_counts(turns, turns_per_layer)
    n = len(counts)
    return sum(c * turn_perimeter_m(shape, size_m, (j - (n - 1) / 2.0) * pitch_m) for j, c in enumerate(counts))


def winding_path_m(axis: str, shape: str, size_m: float, position_m: float, n: int = 200):
    """One turn of the coil in the sense of positive current, (n, 3) points in the cage frame (m).

    Starts on the +u side at v = 0 and runs toward +v (counter-clockwise seen from +axis).
    The path is closed: the last point equals the first. A square gives its six corner and
    mid-side points (n is ignored), a circle n points.
    """
    import numpy as np

    i = AXES.index(axis)
    iu, iv = (i + 1) % 3, (i + 2) % 3
    if shape == "round":
        t = np.linspace(0.0, 2.0 * math.pi, n)
        u, v = size_m * np.cos(t), size_m * np.sin(t)
    else:
        h = size_m / 2.0
        u = np.array([h, h, -h, -h, h, h])
        v = np.array([0.0, h, h, -h, -h, 0.0])
        n = u.size
    pts = np.zeros((n, 3))
    pts[:, i] = position_m
    pts[:, iu] = u
    pts[:, iv] = v
    pts[-1] = pts[0]
    return pts


def _size_kind(shape: str) -> str:
    return "side" if shape == "square" else "diameter"


def _as_measure(shape: str, size_m: float) -> float:
    """Centreline side (square) or diameter (round) from the design's side or radius."""
    return size_m if shape == "square" else 2.0 * size_m


# ---------------------------------------------------------------------------------- the sheet

def _check_spools(masses) -> tuple[float, ...]:
    out = []
    for m in masses:
        try:
            v = float(m)
        except (TypeError, ValueError):
            raise InputError(f"spool mass must be a number of kilograms, got {m!r}") from None
        if not math.isfinite(v) or v <= 0 or v > 1000:
            raise InputError(f"spool mass must be between 0 and 1000 kg, got {m!r}")
        out.append(v)
    if not out:
        raise InputError("give at least one spool mass")
    return tuple(sorted(set(out)))


def axis_build(a, supply=None, *, spool_masses_kg=STANDARD_SPOOL_MASSES_KG,
               spare_fraction: float = DEFAULT_SPARE_FRACTION, frame_wall_m: float = DEFAULT_FRAME_WALL_M,
               ambient_temperature_C: float = 22.0) -> AxisBuild:
    """The build sheet of one axis of a design (``cage.designfile.AxisDesign``).

    supply: the axis's ``cage.supplies.Supply`` or None (then the full-range voltage stands in
    for the supply's and the suppressor suits either kind).
    """
    from cage.electrical import winding_pack
    from cage.wires import wire_from_name

    ca = getattr(a, "coil_axis", None)
    # the axis's name, shape and nominal (largest) size, from its coil list or its pair
    pair = SimpleNamespace(axis=ca.axis, shape=ca.shape, size_m=ca.size_m) if ca is not None else a.pair
    where = f"axes.{pair.axis}"
    for key in ("wire", "frame_width_m", "frame_depth_m"):
        if getattr(a, key) is None:
            raise InputError(f"{where}.{key} is missing; the build sheet needs it (make the design with cage design)")
    if a.max_current_A is None and supply is None:
        raise InputError(f"{where}.max_current_A is missing and no supply is known; the build sheet needs a current")
    wire = wire_from_name(a.wire)
    width, depth = a.frame_width_m, a.frame_depth_m
    coils_in = axis_coils(a)
    positions = [p for p, _, _ in coils_in]
    labels = [f"{pair.axis}{k + 1}" for k in range(len(coils_in))]
    links = [abs(positions[k + 1] - positions[k]) + depth for k in range(len(coils_in) - 1)]
    coils = []
    for k, (pos, turns, size_m) in enumerate(coils_in):
        try:
            pack = winding_pack(wire, turns, width, depth)
        except InputError as exc:
            raise InputError(f"{where}: {exc}") from None
        winding = winding_length_m(pair.shape, size_m, turns, pack.turns_per_layer, wire.outer_diameter_m)
        link = links[k] if k < len(links) else 0.0
        length = winding + link
        centre = _as_measure(pair.shape, size_m)
        coils.append(CoilBuild(
            axis=pair.axis, label=labels[k], shape=pair.shape, size_kind=_size_kind(pair.shape), position_m=pos,
            centreline_size_m=centre, frame_inner_size_m=centre - depth, frame_outer_size_m=centre + depth,
            winding_inner_size_m=centre - pack.depth_m, winding_outer_size_m=centre + pack.depth_m,
            channel_width_m=width, channel_depth_m=depth, pack_width_m=pack.width_m, pack_depth_m=pack.depth_m,
            turns=turns, layers=pack.layers, turns_per_layer=pack.turns_per_layer,
            last_layer_turns=layer_counts(turns, pack.turns_per_layer)[-1],
            winding_length_m=winding, link_length_m=link, wire_length_m=length,
            copper_mass_kg=length * wire.mass_per_m_kg, resistance_20C_ohm=length * wire.resistance_per_m_20C_ohm))
    leads = a.lead_length_m or 0.0
    winding_total = sum(c.wire_length_m for c in coils)
    total = winding_total + leads
    order = total * (1.0 + spare_fraction)
    longest_coil = max(c.wire_length_m for c in coils)
    spools = tuple(SpoolOption(m, m / wire.mass_per_m_kg, math.ceil(order / (m / wire.mass_per_m_kg)),
                               m / wire.mass_per_m_kg >= longest_coil) for m in spool_masses_kg)
    current = a.max_current_A if a.max_current_A is not None else supply.max_current_A
    circuit = None
    if a.resistance_hot_ohm is not None:
        from cage.wires import resistance_per_m_ohm

        circuit = a.resistance_hot_ohm + leads * resistance_per_m_ohm(wire, ambient_temperature_C)
    if supply is not None:
        volts = supply.max_voltage_V
    elif circuit is not None:
        volts = current * circuit
    else:
        volts = current * total * wire.resistance_per_m_20C_ohm
    inductance = a.inductance_H if a.inductance_H is not None else 0.0
    prot = protection(pair.axis, current, inductance, circuit, volts,
                      None if supply is None else bool(supply.bipolar), labels[0], labels[-1])
    return AxisBuild(
        axis=pair.axis, shape=pair.shape, wire=wire.name, wire_bare_diameter_m=wire.bare_diameter_m,
        wire_outer_diameter_m=wire.outer_diameter_m, coils=tuple(coils), lead_length_m=leads,
        winding_wire_m=winding_total, total_wire_m=total, order_wire_m=order,
        copper_mass_kg=total * wire.mass_per_m_kg,
        resistance_20C_ohm=winding_total * wire.resistance_per_m_20C_ohm,
        spools=spools,
        connection=connection(pair.axis, labels, positions, links, current, a.field_per_amp_nT),
        protection=prot,
        frame=frame_shorted_turn(pair.shape, pair.size_m, width, depth, frame_wall_m),
        insulation=insulation_check(a.winding_temperature_C))


def build_sheet(design, supplies=None, *, spool_masses_kg=STANDARD_SPOOL_MASSES_KG,
                spare_fraction: float = DEFAULT_SPARE_FRACTION, frame_wall_m: float = DEFAULT_FRAME_WALL_M,
                ambient_temperature_C: float = 22.0) -> BuildSheet:
    """The build sheet of a ``cage.designfile.Design``.

    supplies: None or one ``cage.supplies.Supply`` per axis (x, y, z). spool_masses_kg: the
    spool masses to plan with. spare_fraction: wire ordered beyond the total (0 to 1).
    frame_wall_m: wall of the aluminium channel assumed in the shorted-turn warning.
    """
    masses = _check_spools(spool_masses_kg)
    if not (0.0 <= spare_fraction <= 1.0):
        raise InputError(f"spare fraction must be between 0 and 1, got {spare_fraction!r}")
    if not (0.0 < frame_wall_m < 0.1):
        raise InputError(f"frame wall must be between 0 and 0.1 m, got {frame_wall_m!r}")
    sup = tuple(supplies) if supplies is not None else (None,) * len(design.axes)
    axes = tuple(axis_build(a, s, spool_masses_kg=masses, spare_fraction=spare_fraction, frame_wall_m=frame_wall_m,
                            ambient_temperature_C=ambient_temperature_C) for a, s in zip(design.axes, sup))
    slowest = max(axes, key=lambda b: b.frame.time_constant_s)
    warnings = [
        f"metal frames: a closed conducting frame is a shorted turn (slow field response, heat); give every "
        f"metal frame an insulating break. A closed aluminium frame of this size adds a time constant of about "
        f"{slowest.frame.time_constant_s * 1e3:.1f} ms (axis {slowest.axis}; tau = L/R of the frame's one turn)",
    ]
    hot = [b for b in axes if b.insulation.margin_class_B_K is not None and b.insulation.margin_class_B_K < 0]
    if hot:
        warnings.append("windings run above class B: " + ", ".join(
            f"{b.axis} hot spot {b.insulation.hot_spot_C:.0f} C" for b in hot) + "; use a higher class or less current")
    if any(b.protection.supply_voltage_V > SELV_DRY_TOUCH_LIMIT_V for b in axes):
        warnings.append(f"supply voltage above {SELV_DRY_TOUCH_LIMIT_V:g} V DC: protect terminals and coil ends "
                        f"against touch; follow local electrical codes")
    return BuildSheet(axes=axes, spool_masses_kg=masses, spare_fraction=spare_fraction,
                      copper_mass_kg=sum(b.copper_mass_kg for b in axes), warnings=tuple(warnings))
