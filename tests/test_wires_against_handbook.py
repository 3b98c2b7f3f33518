"""Wire catalogue against copper-wire handbook tables and the standards they come from."""
import math

import pytest

from cage.errors import InputError
from cage.wires import (
    COPPER_DENSITY_KG_PER_M3,
    COPPER_RESISTIVITY_20C_OHM_M,
    awg_diameter_m,
    awg_names,
    canonical_wire_name,
    resistance_per_m_ohm,
    wire_from_name,
)

INCH_M = 0.0254
FOOT_M = 0.3048
POUND_KG = 0.45359237

# NBS Copper Wire Tables, Handbook 100 (1966), solid annealed copper at 20 degC, ohms per
# 1000 ft; values from memory.
NBS_OHM_PER_1000_FT = {10: 0.9989, 14: 2.525, 18: 6.385, 22: 16.14, 26: 40.81, 30: 103.2}

# NEMA MW 1000 bare copper table (nominal diameter in inches, nominal ohms per 1000 ft at 20 degC,
# nominal pounds per 1000 ft), as reproduced in magnet-wire makers' data books; the resistances
# there are computed from the rounded diameters, hence a few tenths of a percent off the NBS values.
NEMA_BARE = {
    10: (0.1019, 0.9988, 31.43),
    14: (0.0641, 2.524, 12.4),
    18: (0.0403, 6.386, 4.920),
    22: (0.0253, 16.20, 1.940),
    30: (0.0100, 103.7, 0.303),
}


@pytest.mark.parametrize("gauge", sorted(NBS_OHM_PER_1000_FT))
def test_awg_resistance_per_km_matches_nbs_handbook_100(gauge):
    expected_ohm_per_km = NBS_OHM_PER_1000_FT[gauge] / (1000 * FOOT_M) * 1000
    wire = wire_from_name(f"AWG {gauge}")
    got = wire.resistance_per_m_20C_ohm * 1000
    assert got == pytest.approx(expected_ohm_per_km, rel=0.005)


@pytest.mark.parametrize("gauge", sorted(NEMA_BARE))
def test_awg_diameter_resistance_mass_match_nema_mw1000_bare_table(gauge):
    diameter_in, ohm_per_kft, lb_per_kft = NEMA_BARE[gauge]
    wire = wire_from_name(f"AWG {gauge}")
    # Table diameters are rounded to 0.0001 in.
    assert abs(wire.bare_diameter_m / INCH_M - diameter_in) <= 0.00006
    assert wire.resistance_per_m_20C_ohm * 1000 * FOOT_M == pytest.approx(ohm_per_kft, rel=0.005)
    lb_per_kft_got = wire.mass_per_m_kg * 1000 * FOOT_M / POUND_KG
    assert lb_per_kft_got == pytest.approx(lb_per_kft, rel=0.01)


def test_astm_b258_rule_end_points():
    # ASTM B258: AWG 36 is 0.005 in exactly and AWG 0000 is 0.46 in exactly (the rule's anchors).
    assert awg_diameter_m(36) == pytest.approx(0.005 * INCH_M, rel=1e-12)
    assert awg_diameter_m(-3) == pytest.approx(0.46 * INCH_M, rel=1e-12)
    # Wikipedia-style AWG tables (from memory): AWG 14 = 1.628 mm, AWG 10 = 2.588 mm.
    assert awg_diameter_m(14) * 1e3 == pytest.approx(1.628, abs=0.0006)
    assert awg_diameter_m(10) * 1e3 == pytest.approx(2.588, abs=0.0006)


def test_copper_constants_are_the_iacs_values():
    # IEC 60028 (IACS): 1/58 ohm mm^2/m at 20 degC, 8.89 g/cm^3.
    assert COPPER_RESISTIVITY_20C_OHM_M == pytest.approx(1e-6 / 58, rel=1e-4)
    assert COPPER_DENSITY_KG_PER_M3 == pytest.approx(8890)


@pytest.mark.parametrize(
    "name, ohm_per_km",
    # IEC 60317 specification sheets list the nominal resistance of the conductor at 20 degC;
    # values from memory: 0.5 mm 87.81, 1.0 mm 21.95, 2.0 mm 5.488 ohm/km.
    [("0.5 mm", 87.81), ("1 mm", 21.95), ("2 mm", 5.488)],
)
def test_metric_resistance_matches_iec_60317_nominal_values(name, ohm_per_km):
    assert wire_from_name(name).resistance_per_m_20C_ohm * 1000 == pytest.approx(ohm_per_km, rel=0.002)


def test_temperature_factor_matches_nbs_handbook_100():
    # NBS Handbook 100 temperature factor for annealed copper referred to 20 degC (from memory):
    # 1.2162 at 75 degC, 0.9214 at 0 degC.
    wire = wire_from_name("AWG 18")
    r20 = wire.resistance_per_m_20C_ohm
    assert resistance_per_m_ohm(wire, 75.0) / r20 == pytest.approx(1.2162, abs=2e-4)
    assert resistance_per_m_ohm(wire, 0.0) / r20 == pytest.approx(0.9214, abs=2e-4)
    assert resistance_per_m_ohm(wire, 20.0) == r20


def test_heavy_build_maximum_matches_a_makers_nema_mw1000_sheet():
    # A magnet-wire maker's data sheet to NEMA MW 1000 (Centelsa), double (heavy) film maximum
    # diameter: AWG 8 133.2 mils, AWG 9 118.9 mils.
    assert wire_from_name("AWG 8").outer_diameter_m / INCH_M == pytest.approx(0.1332, abs=0.0001)
    assert wire_from_name("AWG 9").outer_diameter_m / INCH_M == pytest.approx(0.1189, abs=0.0001)


@pytest.mark.parametrize(
    "gauge, nominal_heavy_od_in",
    # Nominal heavy-build overall diameters in a magnet-wire seller's listing: AWG 8 0.132,
    # 10 0.1054, 11 0.0942, 12 0.0842 in; AWG 14 0.0666, 18 0.0424, 22 0.0270 in from memory.
    [(8, 0.1320), (10, 0.1054), (11, 0.0942), (12, 0.0842), (14, 0.0666), (18, 0.0424), (22, 0.0270)],
)
def test_heavy_build_outer_diameter_is_just_above_nominal(gauge, nominal_heavy_od_in):
    # Our table holds the NEMA MW 1000 heavy-build maximum, so it lies at or above the nominal
    # and within about 3 % of it.
    od_in = wire_from_name(f"AWG {gauge}").outer_diameter_m / INCH_M
    assert nominal_heavy_od_in <= od_in <= 1.03 * nominal_heavy_od_in


def test_enamel_build_grows_with_size_and_stays_thin():
    names = list(awg_names())
    builds = [wire_from_name(n).outer_diameter_m - wire_from_name(n).bare_diameter_m for n in names]
    # Thicker wire (lower gauge) carries a thicker film, never thinner (NEMA MW 1000 heavy build).
    assert all(b1 >= b2 for b1, b2 in zip(builds, builds[1:]))
    for n in names:
        w = wire_from_name(n)
        assert 1.02 < w.outer_diameter_m / w.bare_diameter_m < 1.20
    for d_mm in (0.1, 0.25, 0.8, 1.5, 3.0, 5.0):
        w = wire_from_name(f"{d_mm} mm")
        # IEC 60317-0-1 grade 2 increase: a few hundredths of a millimetre up to ~0.15 mm.
        assert 0.02e-3 < w.outer_diameter_m - w.bare_diameter_m < 0.16e-3


@pytest.mark.parametrize(
    "given, canonical",
    [
        ("AWG 14", "AWG 14"),
        ("awg14", "AWG 14"),
        ("14 AWG", "AWG 14"),
        ("14awg", "AWG 14"),
        ("  AWG   8 ", "AWG 8"),
        ("AWG 30", "AWG 30"),
        ("1.5 mm", "1.5 mm"),
        ("1.5mm", "1.5 mm"),
        ("1.50 MM", "1.5 mm"),
        ("0.8 mm", "0.8 mm"),
        ("0.1 mm", "0.1 mm"),
        ("5 mm", "5 mm"),
        ("5.0mm", "5 mm"),
    ],
)
def test_names_are_normalised(given, canonical):
    assert canonical_wire_name(given) == canonical
    assert wire_from_name(given).name == canonical


@pytest.mark.parametrize(
    "bad", ["AWG 7", "AWG 31", "awg", "0.05 mm", "5.5 mm", "1.5", "1,5 mm", "14", "copper", "", "AWG -2"]
)
def test_unknown_names_are_refused_with_the_known_forms(bad):
    with pytest.raises(InputError) as info:
        wire_from_name(bad)
    message = str(info.value)
    assert "\n" not in message
    assert repr(bad) in message
    assert "AWG n" in message and "D mm" in message


def test_metric_wire_properties_from_the_bare_diameter():
    w = wire_from_name("1.5 mm")
    assert w.bare_diameter_m == pytest.approx(1.5e-3)
    assert w.area_m2 == pytest.approx(math.pi * 1.5e-3**2 / 4)
    assert w.mass_per_m_kg == pytest.approx(8890 * w.area_m2)
    assert w.outer_diameter_m > w.bare_diameter_m
