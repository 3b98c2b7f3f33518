"""Power-supply channels and what they can drive (one channel per cage axis)."""
from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

from cage.errors import InputError


@dataclass(frozen=True)
class Supply:
    """One supply channel, as given by a site file's ``[[supply]]`` table.

    axis: "x", "y", "z", or "any" (the model used on every axis without its own entry).
    max_voltage_V, max_current_A: the channel's limits.
    resolution_A: the smallest current step the channel can be set to.
    bipolar: True if the channel can source both signs; False needs a polarity switch.
    name: free text (model name or label), may be empty.
    drive: "current" (the channel regulates its current: constant-current mode) or "voltage".
    temperature_coefficient_ppm_per_K, drift_ppm_per_hour, noise_ppm: the channel's stability,
    in ppm of full-scale current (per K of room temperature, per hour, rms); defaults 100, 10
    and 50 are common practice for a programmable laboratory supply (``cage.errorbudget``).
    """

    axis: str
    max_voltage_V: float
    max_current_A: float
    resolution_A: float
    bipolar: bool
    name: str = ""
    drive: str = "current"
    temperature_coefficient_ppm_per_K: float = 100.0
    drift_ppm_per_hour: float = 10.0
    noise_ppm: float = 50.0


SUPPLY_AXES = ("x", "y", "z", "any")


@dataclass(frozen=True)
class DriveCheck:
    """Whether a supply channel can drive one axis at one current.

    voltage_V: I (R_hot + R_leads), same sign as the current. power_W: I^2 (R_hot + R_leads),
    what the channel delivers. current_headroom_A: max_current_A - |I|.
    voltage_headroom_V: max_voltage_V - |V|. within_limits: both headrooms >= 0.
    polarity_switch_needed: the channel is unipolar and the current is negative.
    """

    voltage_V: float
    power_W: float
    current_headroom_A: float
    voltage_headroom_V: float
    within_limits: bool
    polarity_switch_needed: bool


def validate_supply(supply: Supply, where: str) -> Supply:
    """Return ``supply`` if its axis and limits make sense, else InputError naming ``where``.

    where: how the user finds the entry, e.g. "site.toml: supply[2] (axis x)".
    """
    if supply.axis not in SUPPLY_AXES:
        raise InputError(f"{where}: axis must be one of {', '.join(SUPPLY_AXES)}, got {supply.axis!r}")
    for key in ("max_voltage_V", "max_current_A", "resolution_A"):
        value = getattr(supply, key)
        try:
            number = float(value)
        except (TypeError, ValueError):
            raise InputError(f"{where}: {key} must be a number, got {value!r}") from None
        if isinstance(value, bool) or not math.isfinite(number) or number <= 0.0:
            raise InputError(f"{where}: {key} must be a positive number, got {value!r}")
    if supply.resolution_A < 1e-9:
        raise InputError(f"{where}: resolution_A must be at least 1e-09 A (no supply sets current finer), "
                         f"got {supply.resolution_A:g}")
    if supply.resolution_A > supply.max_current_A:
        raise InputError(
            f"{where}: resolution_A {supply.resolution_A:g} is larger than max_current_A {supply.max_current_A:g}"
        )
    if not isinstance(supply.bipolar, bool):
        raise InputError(f"{where}: bipolar must be true or false, got {supply.bipolar!r}")
    return supply


def supply_for_axis(supplies: Sequence[Supply], axis: str) -> Supply:
    """The channel that drives cage ``axis``: its own entry, else the "any" entry.

    InputError if there is none, or if two entries claim the same axis (or two are "any").
    """
    own = [i for i, s in enumerate(supplies) if s.axis == axis]
    anyone = [i for i, s in enumerate(supplies) if s.axis == "any"]
    for found, label in ((own, f"axis {axis}"), (anyone, "axis any")):
        if len(found) > 1:
            entries = " and ".join(f"supply[{i}]" for i in found)
            both = "both" if len(found) == 2 else "all"
            raise InputError(f"{entries} are {both} for {label}; give one entry per axis")
    if own:
        return supplies[own[0]]
    if anyone:
        return supplies[anyone[0]]
    raise InputError(f"no supply for axis {axis}: add one with axis = \"{axis}\" or axis = \"any\"")


def check_drive(
    supply: Supply, current_A: float, resistance_hot_ohm: float, lead_resistance_ohm: float
) -> DriveCheck:
    """Voltage, power and headroom of ``supply`` driving ``current_A`` through the winding and leads.

    resistance_hot_ohm: the winding at its operating temperature; lead_resistance_ohm: the leads.
    """
    resistance = resistance_hot_ohm + lead_resistance_ohm
    voltage = current_A * resistance
    current_headroom = supply.max_current_A - abs(current_A)
    voltage_headroom = supply.max_voltage_V - abs(voltage)
    return DriveCheck(
        voltage_V=voltage,
        power_W=current_A * current_A * resistance,
        current_headroom_A=current_headroom,
        voltage_headroom_V=voltage_headroom,
        within_limits=current_headroom >= 0.0 and voltage_headroom >= 0.0,
        polarity_switch_needed=(not supply.bipolar) and current_A < 0.0,
    )


def field_step_nT(supply: Supply, field_per_amp_nT: float) -> float:
    """Field resolution of the axis in nT: the supply's current step times the field per amp (nT/A)."""
    return supply.resolution_A * abs(field_per_amp_nT)


def rounded_setpoint_A(supply: Supply, current_A: float) -> float:
    """``current_A`` rounded to the nearest multiple of the supply's resolution (halves away from 0)."""
    steps = math.floor(abs(current_A) / supply.resolution_A + 0.5)
    if steps == 0:
        return 0.0
    # round() drops the binary noise of steps x step (0.1 x 3 = 0.30000000000000004).
    return math.copysign(round(steps * supply.resolution_A, 12), current_A)


# A supply whose current step moves the field by more than this share of the axis's full range
# sets the field too coarsely to be of use (a hundred steps over the range, common practice).
COARSE_STEP_SHARE = 0.01


def coarse_supply_warning(axis: str, resolution_A: float, full_current_A, field_per_amp_nT) -> str:
    """A warning when one current step of the supply (A) is more than COARSE_STEP_SHARE of the
    axis's full-range current (A), with the field step it gives (nT, from the field per
    ampere); '' otherwise or when the design does not record them."""
    if full_current_A is None or resolution_A is None or not full_current_A > 0 or not resolution_A > 0:
        return ""
    if resolution_A <= COARSE_STEP_SHARE * full_current_A:
        return ""
    step = "" if field_per_amp_nT is None else f", a field step of {abs(field_per_amp_nT) * resolution_A:,.0f} nT"
    return (f"axis {axis}: the supply's current step {resolution_A:g} A is {resolution_A / full_current_A:.0%} of the "
            f"full-range current {full_current_A:.3g} A{step}: too coarse to set the field; use a finer supply "
            f"(or plan with max_field_step_nT)")
