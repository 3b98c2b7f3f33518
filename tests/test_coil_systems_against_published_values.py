"""Coil-system coefficients (cage.coilsystems) against the published systems.

Positions are checked to 3 digits (absolute 5e-4 per unit size), ratios to 1e-3 relative.
Each check names its paper. The tabulated values are re-derived here (the derivation zeroes
the axial derivatives of the exact field numerically) and must agree with the table to 1e-6.
An independent check of the zeroed orders uses the textbook closed forms of the on-axis field
of a circular loop and of a square loop (not our kernels).
"""
import math

import numpy as np
import pytest

from cage.coilsystems import (
    SYSTEMS,
    TABLE,
    derive_for_turns,
    derive_system,
    system_axis,
    system_geometry,
    systems_for_shape,
)
from cage.errors import InputError

POS = 5e-4  # "positions to 3 digits"
RATIO = 1e-3


def _ideal(system, shape):
    coils, orders = derive_system(system, shape)
    return [c[0] for c in coils], [c[1] for c in coils], [c[2] for c in coils], orders


@pytest.mark.parametrize("key", sorted(TABLE))
def test_table_equals_a_fresh_derivation(key):
    system, shape = key
    g = TABLE[key]
    pos, w, sizes, _ = _ideal(system, shape)
    np.testing.assert_allclose(pos, g.ideal_positions, atol=1e-6)
    np.testing.assert_allclose(np.array(w) / w[0], np.array(g.weights) / g.weights[0], rtol=1e-6)
    np.testing.assert_allclose(sizes, g.sizes, rtol=1e-6)
    rounded, _ = derive_for_turns(system, shape, g.turns)
    np.testing.assert_allclose(rounded, g.positions, atol=1e-6)


def test_helmholtz_pair():
    # Helmholtz: two equal circles one radius apart (textbook, common practice).
    pos, _, _, _ = _ideal("pair", "round")
    assert pos[1] - pos[0] == pytest.approx(1.0, abs=POS)


def test_square_pair_firester():
    # Firester, Rev. Sci. Instrum. 37, 1264 (1966): spacing 0.5445 x side.
    pos, _, _, _ = _ideal("pair", "square")
    assert pos[1] - pos[0] == pytest.approx(0.5445, abs=POS)


def test_maxwell_three_coil():
    # Maxwell, A Treatise on Electricity and Magnetism (1873): outer coils of radius sqrt(4/7) R
    # at +-sqrt(3/7) R, ampere-turns centre:outer 64:49 (exact closed forms, from memory).
    pos, w, sizes, orders = _ideal("three", "round")
    assert pos[2] == pytest.approx(math.sqrt(3 / 7), abs=POS)
    assert pos[2] == pytest.approx(0.6547, abs=POS)
    assert sizes[0] == pytest.approx(math.sqrt(4 / 7), abs=POS)
    assert sizes[0] == pytest.approx(0.7559, abs=POS)
    assert w[1] / w[0] == pytest.approx(64 / 49, rel=RATIO)
    assert orders == (2, 4)
    assert TABLE[("three", "round")].turns == (49, 64, 49)


def test_merritt_three_square_coils():
    # Merritt, Purcell and Stroink, Rev. Sci. Instrum. 54, 879 (1983), three equal squares:
    # outer coils at +-0.8211 a (a = half side), centre:outer ampere-turns 0.5128 (values as
    # quoted in issue 16, from memory of the paper's table).
    pos, w, sizes, _ = _ideal("three", "square")
    assert pos[2] / 0.5 == pytest.approx(0.8211, abs=POS)
    assert w[1] / w[0] == pytest.approx(0.5128, rel=RATIO)
    assert sizes == [1.0, 1.0, 1.0]


def test_merritt_four_square_coils():
    # Merritt, Purcell and Stroink, Rev. Sci. Instrum. 54, 879 (1983), four equal squares:
    # +-0.1281 s and +-0.5055 s, outer:inner ampere-turns 2.3612, wound 26:11 (from memory).
    pos, w, _, orders = _ideal("four", "square")
    assert pos[2] == pytest.approx(0.1281, abs=POS)
    assert pos[3] == pytest.approx(0.5055, abs=POS)
    assert w[0] / w[1] == pytest.approx(2.3612, rel=RATIO)
    assert orders == (2, 4, 6)
    g = TABLE[("four", "square")]
    assert g.turns == (26, 11, 11, 26)
    # 26:11 is within 1.1e-3 of the exact ratio (Merritt et al.'s whole-turns example) and the
    # re-found positions move by less than 1e-3 of the side
    assert 26 / 11 == pytest.approx(w[0] / w[1], rel=1.1e-3)
    assert g.positions[3] == pytest.approx(0.5055, abs=1e-3)
    assert g.positions[2] == pytest.approx(0.1281, abs=1e-3)


def test_braunbek_four_coils():
    # Braunbek, Z. Phys. 88, 399 (1934): equal currents, radius R at +-0.2780 R and 0.7639 R at
    # +-0.8457 R (values as quoted in issue 16, from memory).
    pos, w, sizes, orders = _ideal("four", "round")
    assert pos[2] == pytest.approx(0.2780, abs=POS)
    assert pos[3] == pytest.approx(0.8457, abs=POS)
    assert sizes[3] == pytest.approx(0.7639, abs=POS)
    assert w == [1.0, 1.0, 1.0, 1.0]
    assert orders == (2, 4, 6)


def test_equal_radius_four_coils():
    # Equal-radius four-coil system (positions +-0.2432 R, +-0.9407 R, inner:outer 1:2.2604;
    # values as quoted in issue 16, from memory the system tabulated by Lee-Whiting, 1957).
    pos, w, sizes, _ = _ideal("four-equal", "round")
    assert pos[2] == pytest.approx(0.2432, abs=POS)
    assert pos[3] == pytest.approx(0.9407, abs=POS)
    assert w[0] / w[1] == pytest.approx(2.2604, rel=RATIO)
    assert sizes == [1.0] * 4


@pytest.mark.parametrize("key", sorted(TABLE))
def test_whole_turns_patterns_are_close_to_the_ideal_ratio(key):
    g = TABLE[key]
    ratio_turns = np.array(g.turns) / g.turns[0]
    np.testing.assert_allclose(ratio_turns, np.array(g.weights) / g.weights[0], rtol=1.2e-3)


# --------------------------------------------------------------------------------------------
# The zeroed orders, with the textbook closed forms of the on-axis field (independent of the
# filament kernels): circle of radius R, B = mu0 I R^2 / (2 (R^2 + z^2)^(3/2)); square of half
# side a, B = 2 mu0 I a^2 / (pi (a^2 + z^2) sqrt(2 a^2 + z^2)) (e.g. Firester 1966).
# --------------------------------------------------------------------------------------------


def _axis_field(shape, coils, z):
    total = np.zeros_like(z)
    for p, w, s in coils:
        d = z - p
        if shape == "round":
            total += w * s * s / (2 * (s * s + d * d) ** 1.5)
        else:
            a = s / 2
            total += w * 2 * a * a / (math.pi * (a * a + d * d) * np.sqrt(2 * a * a + d * d))
    return total


def _growth(shape, coils, order):
    h = {4: 0.03, 6: 0.05, 8: 0.1}[order]  # small, yet well above the table's 7-digit rounding
    b0 = _axis_field(shape, coils, np.array([0.0]))[0]
    d1 = _axis_field(shape, coils, np.array([h]))[0] / b0 - 1
    d2 = _axis_field(shape, coils, np.array([2 * h]))[0] / b0 - 1
    return d2 / d1


@pytest.mark.parametrize("key", sorted(TABLE))
def test_on_axis_deviation_grows_as_the_first_order_not_zeroed(key):
    # B(z)/B(0) - 1 ~ c z^n for the first order n not zeroed: doubling z multiplies it by about
    # 2^n (higher orders add to it); an order left unzeroed would give 2^(n - 2) or less.
    system, shape = key
    g = system_geometry(system, shape)
    whole = list(zip(g.positions, g.turns, g.sizes))
    assert _growth(shape, whole, max(g.zeroed) + 2) > 2.0 ** (max(g.zeroed) + 1)
    ideal_orders = {"pair": 2, "three": 4}.get(system, 6)
    ideal = list(zip(g.ideal_positions, g.weights, g.sizes))
    assert _growth(shape, ideal, ideal_orders + 2) > 2.0 ** (ideal_orders + 1)


def test_systems_per_shape_and_bad_names():
    assert systems_for_shape("square") == ("pair", "three", "four")
    assert systems_for_shape("round") == ("pair", "three", "four", "four-equal")
    assert set(SYSTEMS) >= set(systems_for_shape("round"))
    with pytest.raises(InputError, match="no square coil system 'four-equal'"):
        system_geometry("four-equal", "square")
    ax = system_axis("y", "square", "four", 2.0, multiplier=3)
    assert [c.turns for c in ax.coils] == [78, 33, 33, 78]
    assert ax.coils[-1].position_m == pytest.approx(2.0 * TABLE[("four", "square")].positions[-1])
