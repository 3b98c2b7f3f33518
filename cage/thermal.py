"""Steady temperature of a winding cooled by natural convection and radiation (SI units, degC).

Model: the winding dissipates P(T) = I^2 R20 (1 + alpha (T - 20)) (copper, IEC 60028) and
sheds G (T - T_ambient) with G = h A, A its exposed surface and h a combined
convection + radiation coefficient. The steady temperature is the fixed point of

    T_(k+1) = T_ambient + P(T_k) / G.

The map is affine with slope q = alpha I^2 R20 / G, so the iteration converges exactly when
q < 1, to T = T_ambient + P(T_ambient) / (G (1 - q)); for q >= 1 the winding heats without
bound (thermal runaway) and the temperature is reported as infinite with ``converged=False``.
The fixed point is computed in closed form, which is what the iteration tends to.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

from cage.wires import COPPER_TEMPERATURE_COEFFICIENT_PER_K, REFERENCE_TEMPERATURE_C

# Combined natural convection + radiation from a winding in still room air, W/(m^2 K).
# Common practice: 6 to 10 W/(m^2 K); 8 is used.
NATURAL_CONVECTION_W_PER_M2_K = 8.0

# Room air the model is used for, degC: the one range for the site file's
# coil.ambient_temperature_C and the electrical model (a winding in hotter air is beyond the
# natural-convection coefficient above).
AMBIENT_RANGE_C = (-50.0, 80.0)

# Current density above which an air-cooled winding on continuous duty is usually thought
# to run hot: 3 A/mm^2 (common practice).
CURRENT_DENSITY_LIMIT_A_PER_MM2 = 3.0


@dataclass(frozen=True)
class SteadyTemperature:
    """Steady state of one winding.

    temperature_C: steady winding temperature (inf on runaway).
    converged: False on thermal runaway.
    resistance_ohm: winding resistance at that temperature (inf on runaway).
    power_W: dissipated power I^2 R at that temperature (inf on runaway; 0 at zero current).
    """

    temperature_C: float
    converged: bool
    resistance_ohm: float
    power_W: float


def steady_winding_temperature(
    resistance_20C_ohm: float,
    current_A: float,
    surface_m2: float,
    ambient_temperature_C: float,
    heat_transfer_W_per_m2_K: float = NATURAL_CONVECTION_W_PER_M2_K,
) -> SteadyTemperature:
    """Steady temperature of a copper winding of resistance ``resistance_20C_ohm`` at 20 degC.

    current_A: DC current (sign ignored); surface_m2: exposed surface shedding the heat;
    ambient_temperature_C: room air; heat_transfer_W_per_m2_K: combined coefficient h.
    """
    alpha = COPPER_TEMPERATURE_COEFFICIENT_PER_K
    i2r20 = current_A * current_A * resistance_20C_ohm
    conductance = heat_transfer_W_per_m2_K * surface_m2
    r_ambient = resistance_20C_ohm * (1.0 + alpha * (ambient_temperature_C - REFERENCE_TEMPERATURE_C))
    if i2r20 == 0.0:
        return SteadyTemperature(float(ambient_temperature_C), True, r_ambient, 0.0)
    slope = alpha * i2r20 / conductance
    if not slope < 1.0:
        return SteadyTemperature(math.inf, False, math.inf, math.inf)
    p_ambient = current_A * current_A * r_ambient
    rise = p_ambient / (conductance * (1.0 - slope))
    temperature = ambient_temperature_C + rise
    resistance = resistance_20C_ohm * (1.0 + alpha * (temperature - REFERENCE_TEMPERATURE_C))
    return SteadyTemperature(temperature, True, resistance, current_A * current_A * resistance)
