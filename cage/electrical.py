"""Electrical and thermal model of one axis: a series-aiding coil pair and its leads (SI units).

- Wire: turns x centreline perimeter x 2 coils for the winding, plus ``lead_length_m`` (the
  whole run from the supply to the pair and back, same wire). The leads are taken to stay at
  the ambient temperature; the winding runs at its steady temperature (``cage.thermal``).
- Winding pack: the turns of each coil lie in a channel frame_width_m wide (along the coil
  axis) and frame_depth_m deep (radial), in layers of floor(width / outer diameter) turns;
  ceil(turns / per layer) layers must fit the depth.
- Inductance: Grover's self terms with the GMD of the pack (square cells of the insulated
  diameter; full layers plus a part-filled last layer started at one flange) and Rosa's
  round-wire correction, and the exact filament mutual between the two coils
  (``cage.inductance``). L = L1 + L2 + 2M.
- Cooling surface: all four faces of the pack's rectangular cross-section, 2 (width + depth),
  times the centreline turn length, for each coil. The faces against the channel shed their
  heat through the thin metal frame, taken to do as well as the bare pack would.
- Current density: current / copper area, flagged above 3 A/mm^2 (common practice,
  air-cooled continuous duty).
"""
from __future__ import annotations

import math
import numbers
from dataclasses import dataclass

from cage.coils import SHAPES, CoilPair
from cage.checks import positive_number as _positive
from cage.errors import InputError
from cage.inductance import gmd_layered_pack_m, pair_inductance, round_wire_correction_H
from cage.thermal import (
    AMBIENT_RANGE_C,
    CURRENT_DENSITY_LIMIT_A_PER_MM2,
    NATURAL_CONVECTION_W_PER_M2_K,
    steady_winding_temperature,
)
from cage.wires import (
    COPPER_TEMPERATURE_COEFFICIENT_PER_K,
    REFERENCE_TEMPERATURE_C,
    Wire,
    wire_from_name,
)

DEFAULT_LEAD_LENGTH_M = 6.0
DEFAULT_AMBIENT_TEMPERATURE_C = 22.0

# Relative slack when counting how many wire diameters fit a width, so that a channel of
# exactly k diameters holds k turns despite rounding.
_FIT_SLACK = 1e-9


@dataclass(frozen=True)
class WindingPack:
    """How the turns of one coil sit in the frame channel.

    turns: turns of the coil; layers: radial layers; turns_per_layer: turns side by side
    along the axis in a full layer; width_m, depth_m: the pack's actual extent (along the
    axis, radial), from the insulated diameter.
    """

    turns: int
    layers: int
    turns_per_layer: int
    width_m: float
    depth_m: float


@dataclass(frozen=True)
class AxisElectrics:
    """Electrical and thermal state of one axis at one operating current.

    wire_name: canonical wire name. turns: per coil. layers, turns_per_layer: winding pack.
    wire_length_m: winding of both coils (leads excluded). lead_length_m: leads, supply to pair
    and back. resistance_20C_ohm: both windings at 20 degC (leads excluded).
    lead_resistance_20C_ohm: the leads at 20 degC. resistance_hot_ohm: both windings at
    winding_temperature_C. inductance_H: the series pair, 2 self + 2 mutual.
    self_inductance_H: one coil. mutual_inductance_H: between the two coils.
    time_constant_s: inductance / (hot winding + leads at ambient); 0 on runaway.
    copper_mass_kg: copper of both windings (leads excluded). current_A: the operating
    current (signed). winding_temperature_C: steady winding temperature (inf on runaway).
    temperature_converged: False on thermal runaway. power_W: winding + leads.
    voltage_V: current x (hot winding + leads at ambient), same sign as the current.
    current_density_A_per_mm2: |current| / copper area. current_density_high: above 3 A/mm^2.
    ambient_temperature_C: room air, also the leads' temperature.
    """

    wire_name: str
    turns: int
    layers: int
    turns_per_layer: int
    wire_length_m: float
    lead_length_m: float
    resistance_20C_ohm: float
    lead_resistance_20C_ohm: float
    resistance_hot_ohm: float
    inductance_H: float
    self_inductance_H: float
    mutual_inductance_H: float
    time_constant_s: float
    copper_mass_kg: float
    current_A: float
    winding_temperature_C: float
    temperature_converged: bool
    power_W: float
    voltage_V: float
    current_density_A_per_mm2: float
    current_density_high: bool
    ambient_temperature_C: float = DEFAULT_AMBIENT_TEMPERATURE_C

    @property
    def lead_resistance_ambient_ohm(self) -> float:
        """The leads at the ambient temperature."""
        return self.lead_resistance_20C_ohm * (
            1.0 + COPPER_TEMPERATURE_COEFFICIENT_PER_K * (self.ambient_temperature_C - REFERENCE_TEMPERATURE_C)
        )

    @property
    def circuit_resistance_ohm(self) -> float:
        """What the supply sees: hot winding plus leads at ambient (inf on runaway)."""
        return self.resistance_hot_ohm + self.lead_resistance_ambient_ohm


def _turns(turns: object, what: str = "turns") -> int:
    if isinstance(turns, bool) or not isinstance(turns, numbers.Integral) or turns < 1:
        raise InputError(f"{what} must be a whole number of at least 1, got {turns!r}")
    return int(turns)


def _as_wire(wire: Wire | str) -> Wire:
    return wire if isinstance(wire, Wire) else wire_from_name(wire)


def _per_layer(wire: Wire, frame_width_m: float) -> int:
    return int(math.floor(frame_width_m / wire.outer_diameter_m * (1.0 + _FIT_SLACK)))


def max_turns(wire: Wire | str, frame_width_m: float, frame_depth_m: float) -> int:
    """Most turns of ``wire`` one coil's channel (width along the axis x radial depth) holds."""
    w = _as_wire(wire)
    width = _positive(frame_width_m, "frame_width_m")
    depth = _positive(frame_depth_m, "frame_depth_m")
    layers = int(math.floor(depth / w.outer_diameter_m * (1.0 + _FIT_SLACK)))
    return _per_layer(w, width) * layers


def winding_pack(wire: Wire | str, turns: int, frame_width_m: float, frame_depth_m: float) -> WindingPack:
    """Layers of ``turns`` turns of ``wire`` in the channel; InputError if they do not fit."""
    w = _as_wire(wire)
    n = _turns(turns)
    width = _positive(frame_width_m, "frame_width_m")
    depth = _positive(frame_depth_m, "frame_depth_m")
    od = w.outer_diameter_m
    per_layer = _per_layer(w, width)
    if per_layer < 1:
        raise InputError(
            f"{w.name} ({od * 1e3:.3f} mm over enamel) is wider than the {width * 1e3:.3g} mm frame width"
        )
    layers = -(-n // per_layer)
    pack_depth = layers * od
    if pack_depth > depth * (1.0 + _FIT_SLACK):
        fit = per_layer * int(math.floor(depth / od * (1.0 + _FIT_SLACK)))
        raise InputError(
            f"{n} turns of {w.name} ({od * 1e3:.3f} mm over enamel, {per_layer} per layer in "
            f"{width * 1e3:.3g} mm) need {layers} layers = {pack_depth * 1e3:.3g} mm, more than the "
            f"{depth * 1e3:.3g} mm frame depth (at most {fit} turns fit)"
        )
    return WindingPack(
        turns=n,
        layers=layers,
        turns_per_layer=per_layer,
        width_m=min(n, per_layer) * od,
        depth_m=pack_depth,
    )


def _operating_inputs(axis: str, current_A, lead_length_m, ambient_temperature_C, heat_transfer_W_per_m2_K):
    """Checked (current, lead length, ambient temperature, heat transfer) of one axis."""
    try:
        current = float(current_A)
    except (TypeError, ValueError):
        raise InputError(f"axis {axis}: current_A must be a number, got {current_A!r}") from None
    if not math.isfinite(current):
        raise InputError(f"axis {axis}: current_A must be finite, got {current_A!r}")
    try:
        leads = float(lead_length_m)
    except (TypeError, ValueError):
        leads = math.nan
    if not math.isfinite(leads) or leads < 0.0:
        raise InputError(f"axis {axis}: lead_length_m must be zero or positive, got {lead_length_m!r}")
    try:
        ambient = float(ambient_temperature_C)
    except (TypeError, ValueError):
        ambient = math.nan
    if not AMBIENT_RANGE_C[0] <= ambient <= AMBIENT_RANGE_C[1]:
        raise InputError(
            f"coil.ambient_temperature_C (room air) must be between {AMBIENT_RANGE_C[0]:g} and "
            f"{AMBIENT_RANGE_C[1]:g}, "
            f"got {ambient_temperature_C!r}"
        )
    h = _positive(heat_transfer_W_per_m2_K, "heat_transfer_W_per_m2_K")
    return current, leads, ambient, h


def axis_electrics(
    pair: CoilPair,
    wire: Wire | str,
    current_A: float,
    *,
    lead_length_m: float = DEFAULT_LEAD_LENGTH_M,
    frame_width_m: float,
    frame_depth_m: float,
    ambient_temperature_C: float = DEFAULT_AMBIENT_TEMPERATURE_C,
    heat_transfer_W_per_m2_K: float = NATURAL_CONVECTION_W_PER_M2_K,
) -> AxisElectrics:
    """Resistance, inductance, temperature and drive of one axis at ``current_A`` amperes.

    pair: the coil pair (``size_m`` is the winding centreline's side or radius).
    wire: a ``Wire`` or a wire name. lead_length_m: supply to pair and back (>= 0).
    frame_width_m, frame_depth_m: the channel of each coil (along the axis, radial).
    ambient_temperature_C: room air, also the leads' temperature.
    heat_transfer_W_per_m2_K: combined convection + radiation coefficient (8, common practice).
    Pure arithmetic, no arrays: some tens of microseconds per call.
    """
    if pair.shape not in SHAPES:
        raise InputError(f"axis {pair.axis}: coil shape must be one of {SHAPES}, got {pair.shape!r}")
    size = _positive(pair.size_m, f"axis {pair.axis}: coil size_m")
    spacing = _positive(pair.spacing_m, f"axis {pair.axis}: coil spacing_m")
    n = _turns(pair.turns, f"axis {pair.axis}: turns")
    w = _as_wire(wire)
    current, leads, ambient, h = _operating_inputs(pair.axis, current_A, lead_length_m, ambient_temperature_C,
                                                   heat_transfer_W_per_m2_K)
    try:
        pack = winding_pack(w, n, frame_width_m, frame_depth_m)
    except InputError as exc:
        raise InputError(f"axis {pair.axis}: {exc}") from None

    perimeter = 4.0 * size if pair.shape == "square" else 2.0 * math.pi * size
    winding_length = 2.0 * n * perimeter
    r20 = winding_length * w.resistance_per_m_20C_ohm
    lead_r20 = leads * w.resistance_per_m_20C_ohm
    alpha = COPPER_TEMPERATURE_COEFFICIENT_PER_K
    lead_r_ambient = lead_r20 * (1.0 + alpha * (ambient - REFERENCE_TEMPERATURE_C))

    od = w.outer_diameter_m
    ind = pair_inductance(
        pair.shape,
        size,
        spacing,
        n,
        gmd_layered_pack_m(n, pack.turns_per_layer, od),
        round_wire_correction_H(perimeter, n, od, w.bare_diameter_m),
    )

    surface = 2.0 * 2.0 * (pack.width_m + pack.depth_m) * perimeter
    steady = steady_winding_temperature(r20, current, surface, ambient, h)
    circuit_r = steady.resistance_ohm + lead_r_ambient
    if steady.converged:
        power = current * current * circuit_r
        voltage = current * circuit_r
        tau = ind.total_H / circuit_r
    else:
        power = math.inf
        voltage = math.copysign(math.inf, current)
        tau = 0.0
    density = abs(current) / (w.area_m2 * 1e6)
    return AxisElectrics(
        wire_name=w.name,
        turns=n,
        layers=pack.layers,
        turns_per_layer=pack.turns_per_layer,
        wire_length_m=winding_length,
        lead_length_m=leads,
        resistance_20C_ohm=r20,
        lead_resistance_20C_ohm=lead_r20,
        resistance_hot_ohm=steady.resistance_ohm,
        inductance_H=ind.total_H,
        self_inductance_H=ind.self_H,
        mutual_inductance_H=ind.mutual_H,
        time_constant_s=tau,
        copper_mass_kg=winding_length * w.mass_per_m_kg,
        current_A=current,
        winding_temperature_C=steady.temperature_C,
        temperature_converged=steady.converged,
        power_W=power,
        voltage_V=voltage,
        current_density_A_per_mm2=density,
        current_density_high=density > CURRENT_DENSITY_LIMIT_A_PER_MM2,
        ambient_temperature_C=ambient,
    )


def max_current_slew_A_per_s(
    max_voltage_V: float, current_A: float, resistance_ohm: float, inductance_H: float
) -> float:
    """Largest rate of rise of |current| the supply allows: dI/dt = (V_max - |I| R) / L.

    resistance_ohm: the whole circuit (winding and leads). Negative: the supply cannot even
    hold this current.
    """
    return (max_voltage_V - abs(current_A) * resistance_ohm) / inductance_H


def current_slew_A_per_s(electrics: AxisElectrics, max_voltage_V: float) -> float:
    """``max_current_slew_A_per_s`` for one axis at its operating current and temperature."""
    return max_current_slew_A_per_s(
        max_voltage_V, electrics.current_A, electrics.circuit_resistance_ohm, electrics.inductance_H
    )


def field_slew_nT_per_s(electrics: AxisElectrics, max_voltage_V: float, field_per_amp_nT: float) -> float:
    """Largest field slew in nT/s: the current slew times the axis's field per amp (nT/A)."""
    return current_slew_A_per_s(electrics, max_voltage_V) * abs(field_per_amp_nT)


# ---------------------------------------------------------------------------------------------
# Axes of any number of coils (cage.coilaxis.CoilAxis): all coils in series aiding
# ---------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class CoilElectrics:
    """One coil of a multi-coil axis at the operating current.

    position_m, turns: the coil. layers, turns_per_layer: its winding pack. wire_length_m:
    its winding. resistance_20C_ohm, resistance_hot_ohm: at 20 degC and at its own steady
    temperature. winding_temperature_C: that temperature (inf on runaway).
    self_inductance_H: its self inductance. copper_mass_kg: its copper.
    """

    position_m: float
    turns: int
    layers: int
    turns_per_layer: int
    wire_length_m: float
    resistance_20C_ohm: float
    resistance_hot_ohm: float
    winding_temperature_C: float
    self_inductance_H: float
    copper_mass_kg: float


@dataclass(frozen=True)
class CoilAxisElectrics(AxisElectrics):
    """Electrical and thermal state of an axis of any number of coils in series: an
    ``AxisElectrics`` (the same names mean the same whole-axis quantities) with per-coil figures.

    coils: ``CoilElectrics`` per coil. turns, layers: the most of any coil.
    winding_temperature_C: the hottest coil. mutual_inductance_H: the sum over all pairs of
    coils of their mutual inductances (each pair counted once); inductance_H = sum of self +
    2 x that sum. self_inductance_H: the sum of the coils' self inductances.
    """

    coils: tuple[CoilElectrics, ...] = ()


def coil_axis_electrics(
    axis,
    wire: Wire | str,
    current_A: float,
    *,
    lead_length_m: float = DEFAULT_LEAD_LENGTH_M,
    frame_width_m: float,
    frame_depth_m: float,
    ambient_temperature_C: float = DEFAULT_AMBIENT_TEMPERATURE_C,
    heat_transfer_W_per_m2_K: float = NATURAL_CONVECTION_W_PER_M2_K,
) -> CoilAxisElectrics:
    """Resistance, inductance, temperature and drive of a ``cage.coilaxis.CoilAxis`` at ``current_A``.

    As ``axis_electrics``, coil by coil: each coil's wire length is its turns x its centreline
    perimeter, its pack sits in its own frame channel, its steady temperature follows from its
    own heat and surface; the series resistance is the sum. Inductance: every coil's Grover
    self inductance (with Rosa's round-wire correction) plus twice every mutual inductance
    between two coils of the axis (``cage.inductance.axis_inductance``). For a pair it gives
    the numbers of ``axis_electrics``.
    """
    from cage.coilaxis import check_coil_axis, perimeter_m
    from cage.inductance import axis_inductance

    check_coil_axis(axis)
    w = _as_wire(wire)
    current, leads, ambient, h = _operating_inputs(axis.axis, current_A, lead_length_m, ambient_temperature_C,
                                                   heat_transfer_W_per_m2_K)
    od = w.outer_diameter_m
    packs, perims, gmds, corrs = [], [], [], []
    for c in axis.coils:
        try:
            pack = winding_pack(w, c.turns, frame_width_m, frame_depth_m)
        except InputError as exc:
            raise InputError(f"axis {axis.axis}, coil at {c.position_m:+.4g} m: {exc}") from None
        per = perimeter_m(axis.shape, c.size_m)
        packs.append(pack)
        perims.append(per)
        gmds.append(gmd_layered_pack_m(c.turns, pack.turns_per_layer, od))
        corrs.append(round_wire_correction_H(per, c.turns, od, w.bare_diameter_m))
    ind = axis_inductance(axis.shape, [c.size_m for c in axis.coils], [c.position_m for c in axis.coils],
                          [c.turns for c in axis.coils], gmds, corrs)
    alpha = COPPER_TEMPERATURE_COEFFICIENT_PER_K
    lead_r20 = leads * w.resistance_per_m_20C_ohm
    lead_r_ambient = lead_r20 * (1.0 + alpha * (ambient - REFERENCE_TEMPERATURE_C))
    coils = []
    converged = True
    for c, pack, per, self_h in zip(axis.coils, packs, perims, ind.self_H):
        length = c.turns * per
        r20 = length * w.resistance_per_m_20C_ohm
        surface = 2.0 * (pack.width_m + pack.depth_m) * per
        steady = steady_winding_temperature(r20, current, surface, ambient, h)
        converged = converged and steady.converged
        coils.append(CoilElectrics(
            position_m=float(c.position_m), turns=int(c.turns), layers=pack.layers,
            turns_per_layer=pack.turns_per_layer, wire_length_m=length, resistance_20C_ohm=r20,
            resistance_hot_ohm=steady.resistance_ohm, winding_temperature_C=steady.temperature_C,
            self_inductance_H=self_h, copper_mass_kg=length * w.mass_per_m_kg))
    r_hot = sum(c.resistance_hot_ohm for c in coils) if converged else math.inf
    circuit_r = r_hot + lead_r_ambient
    if converged:
        power = current * current * circuit_r
        voltage = current * circuit_r
        tau = ind.total_H / circuit_r
    else:
        power = math.inf
        voltage = math.copysign(math.inf, current)
        tau = 0.0
    density = abs(current) / (w.area_m2 * 1e6)
    length = sum(c.wire_length_m for c in coils)
    return CoilAxisElectrics(
        wire_name=w.name,
        coils=tuple(coils),
        turns=max(c.turns for c in coils),
        layers=max(c.layers for c in coils),
        turns_per_layer=packs[0].turns_per_layer,
        wire_length_m=length,
        lead_length_m=leads,
        resistance_20C_ohm=sum(c.resistance_20C_ohm for c in coils),
        lead_resistance_20C_ohm=lead_r20,
        resistance_hot_ohm=r_hot,
        inductance_H=ind.total_H,
        self_inductance_H=float(sum(ind.self_H)),
        mutual_inductance_H=float(sum(ind.mutual_H)),
        time_constant_s=tau,
        copper_mass_kg=sum(c.copper_mass_kg for c in coils),
        current_A=current,
        winding_temperature_C=max(c.winding_temperature_C for c in coils) if converged else math.inf,
        temperature_converged=converged,
        power_W=power,
        voltage_V=voltage,
        current_density_A_per_mm2=density,
        current_density_high=density > CURRENT_DENSITY_LIMIT_A_PER_MM2,
        ambient_temperature_C=ambient,
    )


def winding_heat_terms(geometry, wire: Wire | str, frame_width_m: float, frame_depth_m: float
                       ) -> list[tuple[float, float]]:
    """Per coil of an axis (a ``CoilPair`` or a ``cage.coilaxis.CoilAxis``): its resistance at
    20 degC (ohm) and the surface it sheds its heat from (m^2), as ``axis_electrics`` and
    ``coil_axis_electrics`` take them (all four faces of the pack times the turn length).
    What the steady temperature needs besides the current, for evaluating many currents at once.
    """
    from cage.coilaxis import perimeter_m

    w = _as_wire(wire)
    if isinstance(geometry, CoilPair):
        coils = [(geometry.turns, geometry.size_m)] * 2
    else:
        coils = [(c.turns, c.size_m) for c in geometry.coils]
    out = []
    for turns, size in coils:
        pack = winding_pack(w, turns, frame_width_m, frame_depth_m)
        per = perimeter_m(geometry.shape, size)
        out.append((turns * per * w.resistance_per_m_20C_ohm, 2.0 * (pack.width_m + pack.depth_m) * per))
    return out


def electrics_of(geometry, wire: Wire | str, current_A: float, **kwargs):
    """``axis_electrics`` for a ``CoilPair``, ``coil_axis_electrics`` for a ``cage.coilaxis.CoilAxis``
    (same keyword arguments); for callers that take either, e.g. a design file's axis
    (``AxisDesign.pair or AxisDesign.coil_axis``)."""
    if isinstance(geometry, CoilPair):
        return axis_electrics(geometry, wire, current_A, **kwargs)
    return coil_axis_electrics(geometry, wire, current_A, **kwargs)
