"""Magnet-wire catalogue: AWG and metric enamelled round copper wire, copper constants (SI).

Names accepted: ``"AWG 14"``, ``"awg14"``, ``"14 AWG"``, ``"14awg"`` (gauges 8 to 30) and
metric bare diameters ``"1.5 mm"``, ``"1.5mm"``, ``"0.8 mm"`` (0.1 mm to 5 mm). They are
normalised to ``"AWG 14"`` and ``"1.5 mm"``.

Sources:

- AWG bare diameter: ASTM B258, d_n = 0.127 mm x 92 ** ((36 - n) / 39).
- Resistivity of annealed copper: 1/58 ohm mm^2/m = 1.7241e-8 ohm m at 20 degC (International
  Annealed Copper Standard, IEC 60028), temperature coefficient 0.00393 /K at 20 degC (IEC 60028).
- Density of copper 8890 kg/m^3 (IEC 60028). The enamel's mass is neglected.
- Insulated (overall) diameter, used for the winding pack:
  AWG: NEMA MW 1000 heavy build (double film), maximum overall diameter;
  metric: IEC 60317-0-1 grade 2, maximum overall diameter, the increase over the bare
  diameter interpolated linearly between the listed sizes.
  The AWG 8 and 9 entries match a wire maker's data sheet drawn up to NEMA MW 1000; the other
  entries of both tables are typed in from memory and are good to about 0.03 mm. The maximum
  (not the nominal) diameter is used so that a pack that fits here fits with any wire in
  tolerance.
"""
from __future__ import annotations

import math
import re
from dataclasses import dataclass
from functools import lru_cache

from cage.errors import InputError

COPPER_RESISTIVITY_20C_OHM_M = 1.7241e-8
COPPER_TEMPERATURE_COEFFICIENT_PER_K = 0.00393
COPPER_DENSITY_KG_PER_M3 = 8890.0
REFERENCE_TEMPERATURE_C = 20.0

AWG_MIN = 8
AWG_MAX = 30
METRIC_MIN_DIAMETER_MM = 0.1
METRIC_MAX_DIAMETER_MM = 5.0

INCH_M = 0.0254

# NEMA MW 1000 heavy build, maximum overall diameter in inches, AWG 8..30 (mostly from memory).
_AWG_HEAVY_BUILD_MAX_OD_IN = {
    8: 0.1332, 9: 0.1189, 10: 0.1061, 11: 0.0947, 12: 0.0846, 13: 0.0756, 14: 0.0675,
    15: 0.0603, 16: 0.0538, 17: 0.0481, 18: 0.0428, 19: 0.0383, 20: 0.0342, 21: 0.0305,
    22: 0.0272, 23: 0.0244, 24: 0.0218, 25: 0.0195, 26: 0.0175, 27: 0.0157, 28: 0.0140,
    29: 0.0126, 30: 0.0113,
}

# IEC 60317-0-1 grade 2: (nominal conductor diameter mm, maximum overall diameter mm), from memory.
_IEC_GRADE2_MAX_OD_MM = (
    (0.100, 0.125),
    (0.200, 0.239),
    (0.315, 0.367),
    (0.500, 0.566),
    (0.710, 0.789),
    (1.000, 1.093),
    (1.400, 1.503),
    (2.000, 2.118),
    (3.150, 3.276),
    (5.000, 5.146),
)

KNOWN_FORMS = (
    f"'AWG n' with n from {AWG_MIN} to {AWG_MAX} (also 'awg14', '14 AWG'), "
    f"or a bare diameter 'D mm' with D from {METRIC_MIN_DIAMETER_MM:g} to {METRIC_MAX_DIAMETER_MM:g}"
)

_AWG_FIRST = re.compile(r"^\s*awg\s*#?\s*(\d+)\s*$", re.IGNORECASE)
_AWG_LAST = re.compile(r"^\s*#?\s*(\d+)\s*awg\s*$", re.IGNORECASE)
_METRIC = re.compile(r"^\s*(\d+(?:\.\d*)?|\.\d+)\s*mm\s*$", re.IGNORECASE)


@dataclass(frozen=True)
class Wire:
    """One enamelled round copper magnet wire.

    name: canonical name ("AWG 14", "1.5 mm").
    bare_diameter_m: copper diameter.
    outer_diameter_m: maximum overall diameter over the enamel (heavy build / grade 2).
    area_m2: copper cross-section.
    resistance_per_m_20C_ohm: DC resistance per metre at 20 degC.
    mass_per_m_kg: copper mass per metre.
    """

    name: str
    bare_diameter_m: float
    outer_diameter_m: float
    area_m2: float
    resistance_per_m_20C_ohm: float
    mass_per_m_kg: float


def awg_diameter_m(gauge: int) -> float:
    """Bare diameter of AWG ``gauge`` in metres (ASTM B258: 0.127 mm x 92^((36-n)/39))."""
    return 0.127e-3 * 92.0 ** ((36 - gauge) / 39.0)


def _iec_grade2_outer_mm(d_mm: float) -> float:
    table = _IEC_GRADE2_MAX_OD_MM
    if d_mm <= table[0][0]:
        return d_mm + (table[0][1] - table[0][0])
    for (d0, o0), (d1, o1) in zip(table, table[1:]):
        if d_mm <= d1:
            inc0, inc1 = o0 - d0, o1 - d1
            return d_mm + inc0 + (inc1 - inc0) * (d_mm - d0) / (d1 - d0)
    return d_mm + (table[-1][1] - table[-1][0])


def _make(name: str, bare_m: float, outer_m: float) -> Wire:
    area = math.pi * bare_m * bare_m / 4.0
    return Wire(
        name=name,
        bare_diameter_m=bare_m,
        outer_diameter_m=outer_m,
        area_m2=area,
        resistance_per_m_20C_ohm=COPPER_RESISTIVITY_20C_OHM_M / area,
        mass_per_m_kg=COPPER_DENSITY_KG_PER_M3 * area,
    )


def _unknown(name: object) -> InputError:
    return InputError(f"unknown wire {name!r}; known forms: {KNOWN_FORMS}")


def canonical_wire_name(name: str) -> str:
    """Normalise a wire name ("awg14" -> "AWG 14", "1.50mm" -> "1.5 mm"); InputError if unknown."""
    if not isinstance(name, str):
        raise _unknown(name)
    m = _AWG_FIRST.match(name) or _AWG_LAST.match(name)
    if m:
        gauge = int(m.group(1))
        if AWG_MIN <= gauge <= AWG_MAX:
            return f"AWG {gauge}"
        raise _unknown(name)
    m = _METRIC.match(name)
    if m:
        d_mm = float(m.group(1))
        # Tiny tolerance so that "5.0 mm" and "0.10 mm" are accepted at the ends.
        if METRIC_MIN_DIAMETER_MM - 1e-12 <= d_mm <= METRIC_MAX_DIAMETER_MM + 1e-12:
            return f"{round(d_mm, 4):g} mm"
        raise _unknown(name)
    raise _unknown(name)


@lru_cache(maxsize=256)
def _wire_from_canonical(canonical: str) -> Wire:
    if canonical.startswith("AWG "):
        gauge = int(canonical[4:])
        return _make(canonical, awg_diameter_m(gauge), _AWG_HEAVY_BUILD_MAX_OD_IN[gauge] * INCH_M)
    d_mm = float(canonical[:-3])
    return _make(canonical, d_mm * 1e-3, _iec_grade2_outer_mm(d_mm) * 1e-3)


def wire_from_name(name: str) -> Wire:
    """The ``Wire`` for a name such as "AWG 14", "14awg", "1.5 mm"; InputError if unknown."""
    return _wire_from_canonical(canonical_wire_name(name))


def awg_names() -> tuple[str, ...]:
    """Canonical names of the catalogued AWG sizes, thickest first."""
    return tuple(f"AWG {n}" for n in range(AWG_MIN, AWG_MAX + 1))


def resistance_per_m_ohm(wire: Wire, temperature_C: float) -> float:
    """DC resistance per metre at ``temperature_C``: R20 (1 + 0.00393 (T - 20)) (IEC 60028)."""
    return wire.resistance_per_m_20C_ohm * (
        1.0 + COPPER_TEMPERATURE_COEFFICIENT_PER_K * (temperature_C - REFERENCE_TEMPERATURE_C)
    )
