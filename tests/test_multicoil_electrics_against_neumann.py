"""Resistance and inductance of multi-coil axes (cage.electrical.coil_axis_electrics,
cage.inductance.axis_inductance) against the Neumann integral evaluated numerically.

Neumann's formula for the mutual inductance of two closed filaments,
M = mu0 / (4 pi) oint oint dl1 . dl2 / |r1 - r2| (e.g. Grover, Inductance Calculations, 1946,
chapter 1), is integrated here by Gauss-Legendre quadrature on each side of a square or
over the angle of a circle: an evaluation independent of the closed forms in cage.inductance.
"""
import math

import numpy as np
import pytest

from cage.coilaxis import CoilAxis, Coil, axis_from_pair
from cage.coils import CoilPair
from cage.coilsystems import system_axis
from cage.electrical import axis_electrics, coil_axis_electrics
from cage.inductance import (
    axis_inductance,
    gmd_layered_pack_m,
    mutual_inductance_coaxial_circles_H,
    mutual_inductance_coaxial_squares_H,
    mutual_inductance_coaxial_unequal_squares_H,
    pair_inductance,
)
from cage.wires import wire_from_name

MU0 = 4e-7 * math.pi


def _square_curve(side, z, n=60):
    """Quadrature points and weighted tangents (dl) of a square of ``side`` in the plane z."""
    x, w = np.polynomial.legendre.leggauss(n)
    h = side / 2
    corners = np.array([[h, -h], [h, h], [-h, h], [-h, -h], [h, -h]])
    pts, dls = [], []
    for k in range(4):
        a, b = corners[k], corners[k + 1]
        t = (x + 1) / 2
        p = a + (b - a) * t[:, None]
        pts.append(np.column_stack([p, np.full(n, z)]))
        dls.append(np.column_stack([np.outer(w / 2, b - a), np.zeros(n)]))
    return np.vstack(pts), np.vstack(dls)


def _circle_curve(radius, z, n=400):
    phi = 2 * np.pi * np.arange(n) / n
    pts = np.column_stack([radius * np.cos(phi), radius * np.sin(phi), np.full(n, z)])
    dls = np.column_stack([-np.sin(phi), np.cos(phi), np.zeros(n)]) * radius * 2 * np.pi / n
    return pts, dls


def _neumann(c1, c2):
    (p1, d1), (p2, d2) = c1, c2
    r = np.linalg.norm(p1[:, None, :] - p2[None, :, :], axis=-1)
    return MU0 / (4 * np.pi) * float(np.sum((d1 @ d2.T) / r))


@pytest.mark.parametrize("a,b,z", [(1.0, 1.0, 0.5), (1.0, 0.7, 0.3), (1.4, 0.6, 0.9), (0.8, 1.2, 0.05 + 0.25)])
def test_unequal_coaxial_squares_against_the_neumann_integral(a, b, z):
    ref = _neumann(_square_curve(a, 0.0), _square_curve(b, z))
    assert mutual_inductance_coaxial_unequal_squares_H(a, b, z) == pytest.approx(ref, rel=1e-6)


def test_unequal_squares_reduce_to_the_equal_formula():
    # Grover 1946, coaxial squares: the closed form already used for pairs
    for z in (0.1, 0.5, 2.0):
        assert mutual_inductance_coaxial_unequal_squares_H(1.3, 1.3, z) == pytest.approx(
            mutual_inductance_coaxial_squares_H(1.3, z), rel=1e-12)


def test_unequal_circles_against_the_neumann_integral():
    # Maxwell's formula for coaxial circles (Treatise, 1873) against the numerical Neumann integral
    ref = _neumann(_circle_curve(1.0, 0.0), _circle_curve(0.7639, 0.8457 - 0.2780))
    assert mutual_inductance_coaxial_circles_H(1.0, 0.7639, 0.8457 - 0.2780) == pytest.approx(ref, rel=1e-6)


def test_axis_inductance_of_a_pair_is_the_pair_inductance():
    pi_ = pair_inductance("square", 1.2, 0.65, 30, 0.01)
    ai = axis_inductance("square", [1.2, 1.2], [-0.325, 0.325], [30, 30], [0.01, 0.01])
    assert ai.total_H == pytest.approx(pi_.total_H, rel=1e-12)


@pytest.mark.parametrize("shape,system", [("square", "four"), ("round", "four"), ("round", "three"),
                                          ("square", "three")])
def test_axis_mutual_terms_against_the_neumann_integral(shape, system):
    ax = system_axis("x", shape, system, 1.5)
    ai = axis_inductance(shape, [c.size_m for c in ax.coils], [c.position_m for c in ax.coils],
                         [c.turns for c in ax.coils], [0.01] * ax.count)
    curve = _square_curve if shape == "square" else _circle_curve
    ref = 0.0
    for i in range(ax.count):
        for j in range(i + 1, ax.count):
            ci, cj = ax.coils[i], ax.coils[j]
            ref += ci.turns * cj.turns * _neumann(curve(ci.size_m, ci.position_m), curve(cj.size_m, cj.position_m))
    assert sum(ai.mutual_H) == pytest.approx(ref, rel=1e-6)
    assert ai.total_H == pytest.approx(sum(ai.self_H) + 2 * ref, rel=1e-6)


def test_pair_as_two_coil_axis_gives_the_pair_electrics():
    pair = CoilPair("y", "round", 0.9, 0.9, 55)
    kw = dict(frame_width_m=0.03, frame_depth_m=0.02, lead_length_m=8.0, ambient_temperature_C=25.0)
    a = axis_electrics(pair, "AWG 20", 1.7, **kw)
    b = coil_axis_electrics(axis_from_pair(pair), "AWG 20", 1.7, **kw)
    for name in ("wire_length_m", "resistance_20C_ohm", "resistance_hot_ohm", "inductance_H", "mutual_inductance_H",
                 "time_constant_s", "copper_mass_kg", "winding_temperature_C", "power_W", "voltage_V",
                 "circuit_resistance_ohm", "layers", "turns"):
        assert getattr(b, name) == pytest.approx(getattr(a, name), rel=1e-12), name
    assert b.self_inductance_H == pytest.approx(2 * a.self_inductance_H, rel=1e-12)


def test_four_coil_resistance_is_the_sum_of_each_coils_wire():
    ax = system_axis("z", "square", "four", 1.42, multiplier=2)
    wire = wire_from_name("AWG 18")
    el = coil_axis_electrics(ax, wire, 2.0, frame_width_m=0.04, frame_depth_m=0.04, lead_length_m=0.0)
    length = sum(c.turns * 4 * c.size_m for c in ax.coils)  # turns x perimeter of each coil
    assert el.wire_length_m == pytest.approx(length, rel=1e-12)
    assert el.resistance_20C_ohm == pytest.approx(length * wire.resistance_per_m_20C_ohm, rel=1e-12)
    assert [c.turns for c in el.coils] == [52, 22, 22, 52]
    # the outer coils carry more turns in the same channel: they run hotter
    assert el.coils[0].winding_temperature_C > el.coils[1].winding_temperature_C
    assert el.winding_temperature_C == max(c.winding_temperature_C for c in el.coils)
    # self terms: Grover with the pack GMD of each coil's own turns
    pack_gmd = gmd_layered_pack_m(52, el.coils[0].turns_per_layer, wire.outer_diameter_m)
    assert pack_gmd > 0
    assert el.inductance_H > el.self_inductance_H > 0


def test_custom_axis_of_unequal_turns_and_sizes():
    ax = CoilAxis("x", "round", "custom", (Coil(-0.3, 10, 0.5), Coil(0.2, 25, 0.6), Coil(0.5, 5, 0.4)))
    el = coil_axis_electrics(ax, "AWG 22", 0.5, frame_width_m=0.02, frame_depth_m=0.02)
    assert el.wire_length_m == pytest.approx(2 * math.pi * (10 * 0.5 + 25 * 0.6 + 5 * 0.4), rel=1e-12)
