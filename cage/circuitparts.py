"""The parts of an axis circuit on the build sheet: connection of its coils, fuse, freewheel diode
and snubber, touch-voltage class, shorted turn in a metal frame, insulation class.

Planning layer, below ``cage.buildsheet`` (which re-exports these names); the formulas and their
sources are listed in the ``cage.buildsheet`` docstring (IEC 60127 fuse series, IEC 61140 and
IEC 60364-4-41 voltage bands, IEC 60085 thermal classes, IEC 60889 aluminium resistivity).
"""
from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

from cage.coils import AXES

FUSE_FACTOR = 1.25  # fuse rating above the design current (common practice)
R10_SERIES = (1.0, 1.25, 1.6, 2.0, 2.5, 3.15, 4.0, 5.0, 6.3, 8.0)  # IEC 60127 fuse ratings (x 10^k)
DIODE_VOLTAGE_FACTOR = 2.0  # freewheel diode reverse rating over the supply voltage (common practice)
SNUBBER_PEAK_FACTOR = 2.0  # peak voltage allowed across the coils at switch-off, x supply voltage
ELV_DC_LIMIT_V = 120.0  # IEC 61140: extra-low voltage, ripple-free DC
SELV_DRY_TOUCH_LIMIT_V = 60.0  # IEC 60364-4-41, dry conditions, ripple-free DC (from memory)
ALUMINIUM_RESISTIVITY_OHM_M = 2.826e-8  # 61 % IACS (IEC 60889), from memory
DEFAULT_FRAME_WALL_M = 0.003
HOT_SPOT_ALLOWANCE_K = 10.0  # common practice
IEC60085_CLASSES = ((90.0, "Y"), (105.0, "A"), (120.0, "E"), (130.0, "B"), (155.0, "F"),
                    (180.0, "H"), (200.0, "N"), (220.0, "R"), (250.0, "250"))
CLASS_B_C = 130.0
CLASS_F_C = 155.0
CHECK_CURRENT_FRACTION = 0.1  # the check after winding runs at a tenth of the design current
SETTLE_TIME_CONSTANTS = 5.0  # wait this many L/R before switching polarity


@dataclass(frozen=True)
class Connection:
    """How to wind and connect an axis so that positive current gives +axis field.

    sense: the winding sense in words; steps: the wiring from the supply's + to its -, one per
    line; check: what to measure after winding; check_current_A and expected_change_nT: the test
    current and the field change along +axis it must give at the centre.
    """

    sense: str
    steps: tuple[str, ...]
    check: tuple[str, ...]
    check_current_A: float
    expected_change_nT: float


@dataclass(frozen=True)
class Protection:
    """Fuse, stored energy, suppressor and voltage class of an axis.

    design_current_A: full-range current. fuse_A: fuse or breaker rating. stored_energy_J:
    1/2 L I^2 at the design current. inductance_H. bipolar: the supply (None when unknown).
    supply_voltage_V: the supply's limit, else the full-range voltage. suppressor: words.
    diode_current_A, diode_reverse_V (unipolar), tvs_standoff_V, tvs_energy_J,
    snubber_capacitance_F, snubber_resistance_ohm (bipolar or unknown); decay_time_s: L / R of
    the coils. voltage_class: words. polarity_switch: wiring lines (unipolar supplies; else empty).
    """

    design_current_A: float
    fuse_A: float
    stored_energy_J: float
    inductance_H: float
    bipolar: bool | None
    supply_voltage_V: float
    suppressor: str
    diode_current_A: float | None
    diode_reverse_V: float | None
    tvs_standoff_V: float | None
    tvs_energy_J: float | None
    snubber_capacitance_F: float | None
    snubber_resistance_ohm: float | None
    decay_time_s: float | None
    voltage_class: str
    polarity_switch: tuple[str, ...]


@dataclass(frozen=True)
class FrameShortedTurn:
    """A closed aluminium frame of this axis's coil size: its turn's L, R and time constant."""

    frame_wall_m: float
    metal_area_m2: float
    resistance_ohm: float
    inductance_H: float
    time_constant_s: float


@dataclass(frozen=True)
class Insulation:
    """Winding temperature against the IEC 60085 thermal classes.

    winding_temperature_C: mean steady temperature at full range (None when unknown);
    hot_spot_C: plus the allowance; class_needed: e.g. "105 (A)"; margin_class_B_K: 130 - hot
    spot (class F insulation run at class B); margin_class_F_K: 155 - hot spot.
    """

    winding_temperature_C: float | None
    hot_spot_C: float | None
    class_needed: str | None
    margin_class_B_K: float | None
    margin_class_F_K: float | None


# ---------------------------------------------------------------------------------- geometry

def cyclic_axes(axis: str) -> tuple[str, str]:
    """The next two cage axes in cyclic order (u, v) with e_u x e_v = e_axis."""
    i = AXES.index(axis)
    return AXES[(i + 1) % 3], AXES[(i + 2) % 3]


def turn_perimeter_m(shape: str, size_m: float, radial_m: float) -> float:
    """Length of one turn whose path is ``radial_m`` outside the centreline (side or radius size_m)."""
    if shape == "square":
        return 4.0 * (size_m + 2.0 * radial_m)
    return 2.0 * math.pi * (size_m + radial_m)


# ---------------------------------------------------------------------------------- parts

def fuse_rating_A(design_current_A: float, factor: float = FUSE_FACTOR) -> float:
    """Smallest R10 value (1, 1.25, 1.6, 2, 2.5, 3.15, 4, 5, 6.3, 8 x 10^k) at or above factor x I."""
    need = factor * abs(design_current_A)
    if need <= 0:
        return R10_SERIES[0]
    k = math.floor(math.log10(need))
    for decade in (k, k + 1):
        for v in R10_SERIES:
            value = round(v * 10.0 ** decade, 6)
            if value >= need * (1 - 1e-12):
                return value
    return round(10.0 ** (k + 1), 6)


def insulation_check(winding_temperature_C: float | None) -> Insulation:
    """Hot spot, the IEC 60085 class needed and the margins (see the module text)."""
    if winding_temperature_C is None or not math.isfinite(winding_temperature_C):
        return Insulation(winding_temperature_C, None, None, None, None)
    hot = winding_temperature_C + HOT_SPOT_ALLOWANCE_K
    needed = next((f"{t:g} ({n})" if n != f"{t:g}" else f"{t:g}" for t, n in IEC60085_CLASSES if t >= hot),
                  "above 250 (no IEC 60085 class)")
    return Insulation(winding_temperature_C, hot, needed, CLASS_B_C - hot, CLASS_F_C - hot)


def frame_shorted_turn(shape: str, size_m: float, width_m: float, depth_m: float,
                       wall_m: float = DEFAULT_FRAME_WALL_M) -> FrameShortedTurn:
    """L, R and L/R of a closed aluminium U-channel frame on the centreline (see the module text).

    size_m: side (square) or radius (round) of the centreline; width_m, depth_m: the frame's
    cross-section; wall_m: the channel's wall thickness.
    """
    from cage.inductance import gmd_rectangle_m, self_inductance_round_H, self_inductance_square_H

    t = min(wall_m, width_m / 2.0, depth_m)
    area = width_m * t + 2.0 * (depth_m - t) * t
    gmd = gmd_rectangle_m(width_m, depth_m)
    if shape == "square":
        inductance = self_inductance_square_H(size_m, 1, gmd)
    else:
        inductance = self_inductance_round_H(size_m, 1, gmd)
    resistance = ALUMINIUM_RESISTIVITY_OHM_M * turn_perimeter_m(shape, size_m, 0.0) / area
    return FrameShortedTurn(t, area, resistance, inductance, inductance / resistance)


def voltage_class(voltage_V: float) -> str:
    """The supply's voltage class in words (IEC 61140; IEC 60364-4-41 touch limit, from memory)."""
    v = abs(voltage_V)
    if v <= SELV_DRY_TOUCH_LIMIT_V:
        return (f"extra-low voltage ({v:g} V DC, at most {SELV_DRY_TOUCH_LIMIT_V:g} V: as SELV in a dry room it "
                f"needs no touch protection)")
    if v <= ELV_DC_LIMIT_V:
        return (f"extra-low voltage ({v:g} V DC, above {SELV_DRY_TOUCH_LIMIT_V:g} V): cover terminals and "
                f"coil ends against touch")
    return (f"low voltage ({v:g} V DC, above the {ELV_DC_LIMIT_V:g} V extra-low limit): a qualified "
            f"electrician designs the protection")


def protection(axis: str, current_A: float, inductance_H: float, circuit_resistance_ohm: float | None,
               supply_voltage_V: float, bipolar: bool | None, first: str, last: str) -> Protection:
    """Fuse, energy, suppressor, voltage class and (unipolar) polarity-switch wiring of an axis."""
    i = abs(current_A)
    energy = 0.5 * inductance_H * i * i
    decay = inductance_H / circuit_resistance_ohm if circuit_resistance_ohm else None
    v = abs(supply_voltage_V)
    diode_i = diode_v = tvs_v = tvs_e = snub_c = snub_r = None
    switch: tuple[str, ...] = ()
    if bipolar is False:
        diode_i, diode_v = i, DIODE_VOLTAGE_FACTOR * v
        suppressor = (f"freewheel diode across the supply's output terminals (cathode to +, on the supply side of "
                      f"the polarity switch), at least {diode_i:.2f} A forward and {diode_v:.0f} V reverse; it "
                      f"carries the coil current for about {SETTLE_TIME_CONSTANTS:g} L/R after the supply stops")
        settle = f" about {SETTLE_TIME_CONSTANTS * decay * 1e3:.0f} ms ({SETTLE_TIME_CONSTANTS:g} L/R) for the " \
                 f"current to die away" if decay else " until the supply shows 0 A"
        switch = (
            "double-pole double-throw switch between supply and coils, rated for the fuse current",
            "supply + to the first common pole, supply - to the second common pole",
            f"forward throw: first pole to the start of {first}, second pole to the finish of {last}",
            f"reverse throw (crossed): first pole to the finish of {last}, second pole to the start of {first}",
            "the freewheel diode stays on the supply side, so the coils discharge through it in either throw "
            "and it never sees a reversed voltage",
            f"switch only at zero current: set the supply to 0 A and wait{settle}; never switch under load",
        )
    else:
        peak = SNUBBER_PEAK_FACTOR * v
        tvs_v, tvs_e = v, energy
        if i > 0 and peak > 0:
            snub_c = inductance_H * i * i / (peak * peak)
            snub_r = peak / i
        suppressor = (f"bidirectional transient suppressor across the coils, stand-off above {tvs_v:.0f} V and "
                      f"rated for at least {tvs_e:.3g} J, or an RC snubber"
                      + (f" of {snub_c * 1e6:.3g} uF in series with {snub_r:.3g} ohm" if snub_c else "")
                      + " (a diode would short a bipolar supply's negative output)")
    return Protection(
        design_current_A=i, fuse_A=fuse_rating_A(i), stored_energy_J=energy, inductance_H=inductance_H,
        bipolar=bipolar, supply_voltage_V=v, suppressor=suppressor, diode_current_A=diode_i,
        diode_reverse_V=diode_v, tvs_standoff_V=tvs_v, tvs_energy_J=tvs_e, snubber_capacitance_F=snub_c,
        snubber_resistance_ohm=snub_r, decay_time_s=decay, voltage_class=voltage_class(v),
        polarity_switch=switch)


def winding_sense_text(axis: str) -> str:
    """The right-hand rule for this axis in words."""
    u, v = cyclic_axes(axis)
    text = (f"positive current runs counter-clockwise seen from the +{axis} side: on each coil's +{u} side it "
            f"flows toward +{v} (right hand: fingers along the current, thumb along +{axis})")
    if axis == "z":
        text += "; seen from above (z points down) that is clockwise"
    return text


def connection(axis: str, labels: Sequence[str], positions_m: Sequence[float], links_m: Sequence[float],
               current_A: float, field_per_amp_nT: float | None) -> Connection:
    """Winding sense, wiring steps and the after-winding check of one axis."""
    steps = [f"wind every coil counter-clockwise seen from the +{axis} side, from its start at the channel "
             f"floor to its finish on the outside"]
    steps.append(f"supply + to the start of {labels[0]} (at {positions_m[0]:+.3f} m)")
    for k in range(len(labels) - 1):
        steps.append(f"finish of {labels[k]} to the start of {labels[k + 1]} (at {positions_m[k + 1]:+.3f} m), "
                     f"link about {links_m[k]:.2f} m")
    steps.append(f"finish of {labels[-1]} to supply -")
    check_i = round(CHECK_CURRENT_FRACTION * abs(current_A), 3) or round(abs(current_A), 3)
    change = (field_per_amp_nT or 0.0) * check_i
    check = [
        f"with a magnetometer at the centre, aligned with the cage axes: note the reading, drive +{check_i:g} A; "
        f"the {axis} reading must rise by about {change:,.0f} nT and the other two barely move",
        "if it falls by that much, swap the supply leads; if it barely moves, one coil is reversed: swap that "
        "coil's start and finish and test each coil alone",
    ]
    if axis in ("x", "y"):
        check.append(f"with a compass instead: drive enough current to outweigh the local horizontal field; the "
                     f"north-seeking end of the needle at the centre turns toward +{axis}")
    return Connection(winding_sense_text(axis), tuple(steps), tuple(check), check_i, change)
