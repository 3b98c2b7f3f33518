"""Fields of loops, squares and pairs against published closed forms.

Each check names its source. mu0 is scipy.constants.mu_0 (CODATA), as in cage.biot_savart.
"""
from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.constants import mu_0

from cage.biot_savart import Loop, Polygon, filaments_field_T, loop_field_T, segment_field_T
from cage.coils import AXES, CoilPair, flat_spacing_m, pair_field_T


@pytest.mark.parametrize("radius", [0.05, 0.9, 3.0])
def test_round_coil_on_axis(radius):
    # On-axis field of a circular loop of N turns: B = N mu0 I R^2 / (2 (x^2 + R^2)^(3/2))
    # (J. D. Jackson, Classical Electrodynamics, 3rd ed., sec. 5.5, eq. 5.40 at theta = 0;
    # also Simpson et al. 2001, on-axis limit).
    turns, current = 37, 1.7
    x = np.array([0.0, 1e-9, 0.01, 0.3, 1.0, 2.5, 10.0, 300.0]) * radius
    x = np.concatenate([x, -x[1:]])
    pts = np.zeros((len(x), 3))
    pts[:, 0] = x
    b = loop_field_T(pts, [0, 0, 0], [1, 0, 0], radius, turns * current)
    expected = turns * mu_0 * current * radius**2 / (2 * (x**2 + radius**2) ** 1.5)
    np.testing.assert_allclose(b[:, 0], expected, rtol=1e-13, atol=0)
    assert np.all(b[:, 1:] == 0.0)  # no radial field on the axis (symmetry)


def test_helmholtz_centre():
    # Helmholtz pair (spacing = R): B = (4/5)^(3/2) mu0 N I / R at the centre
    # (the on-axis loop formula above summed at x = +-R/2; standard textbook result).
    for radius, turns, current in [(0.95, 40, 1.0), (1.6, 120, 0.25)]:
        pair = CoilPair("z", "round", radius, radius, turns)
        b = pair_field_T(pair, current, [0.0, 0.0, 0.0])
        expected = (4 / 5) ** 1.5 * mu_0 * turns * current / radius
        assert b[2] == pytest.approx(expected, rel=1e-14)
        assert b[0] == 0.0 and b[1] == 0.0


def test_helmholtz_fourth_order_flatness():
    # Helmholtz pair on axis: B(z) = B0 (1 - (144/125) (z/R)^4 + O(z^6)) (standard expansion,
    # from memory; the z^2 term vanishes at spacing = R).
    radius = 1.0
    pair = CoilPair("y", "round", radius, radius, 1)
    b0 = pair_field_T(pair, 1.0, [0.0, 0.0, 0.0])[1]
    for z in (0.01, 0.02, 0.04):
        b = pair_field_T(pair, 1.0, [0.0, z, 0.0])[1]
        coeff = (1 - b / b0) / z**4
        assert coeff == pytest.approx(144 / 125, rel=0.01)


@pytest.mark.parametrize("side", [0.1, 1.0, 2.2])
def test_square_coil_centre(side):
    # Square loop of side a, N turns, at its centre: B = 2 sqrt(2) mu0 N I / (pi a)
    # (four finite straight wires, B = mu0 I (sin a1 + sin a2) / (4 pi d) each; standard
    # textbook result).
    turns, current = 12, 3.0
    h = side / 2
    verts = [(0, h, -h), (0, h, h), (0, -h, h), (0, -h, -h)]
    b = filaments_field_T([0.0, 0.0, 0.0], [Polygon(verts, turns * current)])
    expected = 2 * math.sqrt(2) * mu_0 * turns * current / (math.pi * side)
    assert b[0] == pytest.approx(expected, rel=1e-14)
    assert abs(b[1]) < 1e-20 and abs(b[2]) < 1e-20


def test_square_coil_on_axis():
    # On the axis of a square loop of side a: B = mu0 I a^2 / (2 pi (z^2 + a^2/4) sqrt(z^2 + a^2/2))
    # (the four-finite-wire sum; standard result, from memory).
    a, current = 1.3, 2.0
    h = a / 2
    verts = [(h, -h, 0), (h, h, 0), (-h, h, 0), (-h, -h, 0)]
    z = np.array([0.0, 0.05, 0.4, 1.0, 3.0, 50.0])
    pts = np.column_stack([np.zeros_like(z), np.zeros_like(z), z])
    b = filaments_field_T(pts, [Polygon(verts, current)])
    expected = mu_0 * current * a**2 / (2 * math.pi * (z**2 + a**2 / 4) * np.sqrt(z**2 + a**2 / 2))
    np.testing.assert_allclose(b[:, 2], expected, rtol=1e-12)


def test_long_segment_tends_to_infinite_wire():
    # Infinite straight wire: B = mu0 I / (2 pi d), azimuthal (Ampere's law). A segment of
    # length L seen from its middle at distance d differs by the factor L / sqrt(L^2 + 4 d^2).
    d, length, current = 0.02, 40.0, 5.0
    b = segment_field_T([0.0, d, 0.0], [(-length / 2, 0, 0)], [(length / 2, 0, 0)], current)
    exact_segment = mu_0 * current / (2 * math.pi * d) * length / math.sqrt(length**2 + 4 * d**2)
    assert b[2] == pytest.approx(exact_segment, rel=1e-14)
    assert b[2] == pytest.approx(mu_0 * current / (2 * math.pi * d), rel=1e-6)
    assert b[2] > 0  # current along +x, point at +y: field along +z (right-hand rule)


def _dipole_field(moment, pts):
    # Magnetic dipole: B = mu0 / (4 pi) (3 (m.r) r / r^5 - m / r^3) (Jackson 3rd ed., eq. 5.56)
    r = np.linalg.norm(pts, axis=1, keepdims=True)
    mr = pts @ moment
    return mu_0 / (4 * math.pi) * (3 * mr[:, None] * pts / r**5 - moment / r**3)


@pytest.mark.parametrize("shape", ["square", "round"])
def test_far_field_is_the_dipole(shape):
    # Far from a loop of N turns and area A the field is the dipole of moment m = N I A n
    # (Jackson 3rd ed., sec. 5.6). A centred plane loop has no quadrupole, so the next term is
    # the octupole: the relative error falls like (size / r)^2.
    size, turns, current = 0.8, 20, 1.5
    if shape == "round":
        loops, polygons = [Loop([0, 0, 0], [0, 0, 1], size, turns * current)], []
        area = math.pi * size**2
    else:
        h = size / 2
        polygons, loops = [Polygon([(h, -h, 0), (h, h, 0), (-h, h, 0), (-h, -h, 0)], turns * current)], []
        area = size**2
    moment = np.array([0.0, 0.0, turns * current * area])
    rng = np.random.default_rng(3)
    dirs = rng.normal(size=(50, 3))
    dirs /= np.linalg.norm(dirs, axis=1, keepdims=True)
    errors = []
    for r in (10.0, 20.0, 40.0, 80.0):
        pts = dirs * r
        ours = filaments_field_T(pts, polygons, loops)
        dip = _dipole_field(moment, pts)
        rel = np.max(np.linalg.norm(ours - dip, axis=1) / np.linalg.norm(dip, axis=1))
        assert rel < 3.0 * (size / r) ** 2
        errors.append(rel)
    ratios = np.array(errors[:-1]) / np.array(errors[1:])
    np.testing.assert_allclose(ratios, 4.0, rtol=0.05)  # doubling r quarters the error


def test_flat_spacing_defaults():
    # Helmholtz: spacing = radius. Square pair: spacing = 0.5445 side (Firester,
    # Rev. Sci. Instrum. 37, 1264 (1966)).
    assert flat_spacing_m("round", 0.9) == 0.9
    assert flat_spacing_m("square", 2.0) == pytest.approx(1.089)
    with pytest.raises(ValueError):
        flat_spacing_m("hexagon", 1.0)
    for axis in AXES:
        pair = CoilPair(axis, "round", 0.5, 0.5, 1)
        b = pair_field_T(pair, 1.0, [0.0, 0.0, 0.0])
        assert b[AXES.index(axis)] == pytest.approx((4 / 5) ** 1.5 * mu_0 / 0.5, rel=1e-14)


def test_helmholtz_sphere_deviation_and_largest_sphere():
    # From the Helmholtz expansion B(z) = B0 (1 - (144/125)(z/R)^4 + ...) (from memory, as
    # above): over a small centred sphere of radius r the largest relative deviation is
    # (144/125)(r/R)^4 (on the axis), so the largest sphere within a tolerance t has radius
    # R (125 t / 144)^(1/4), to leading order.
    from cage.uniformity import largest_uniform_sphere_radius_m, sphere_deviation

    radius = 0.8
    pair = CoilPair("x", "round", radius, radius, 30)
    r = 0.02 * radius
    assert sphere_deviation(pair, r) == pytest.approx(144 / 125 * (r / radius) ** 4, rel=2e-3)
    tol = 1e-6
    expected = radius * (125 * tol / 144) ** 0.25
    assert largest_uniform_sphere_radius_m(pair, tol) == pytest.approx(expected, rel=5e-3)


def test_coupling_matrix_diagonal_from_closed_forms():
    # Centre of a round pair: the on-axis loop formula at x = +-s/2 (Jackson sec. 5.5), summed;
    # centre of a square pair: the square on-axis formula at z = +-s/2 (four finite wires).
    from cage.coils import CoilCage
    from cage.uniformity import coupling_T_per_A

    cage = CoilCage(
        x=CoilPair("x", "square", 2.0, flat_spacing_m("square", 2.0), 40),
        y=CoilPair("y", "round", 0.95, 0.7, 35),
        z=CoilPair("z", "square", 1.8, 1.1, 52),
    )
    k = coupling_T_per_A(cage)

    def square_centre(a, s, n):
        z = s / 2
        return 2 * n * mu_0 * a**2 / (2 * math.pi * (z**2 + a**2 / 4) * math.sqrt(z**2 + a**2 / 2))

    def round_centre(r, s, n):
        return 2 * n * mu_0 * r**2 / (2 * ((s / 2) ** 2 + r**2) ** 1.5)

    expected = [square_centre(2.0, flat_spacing_m("square", 2.0), 40), round_centre(0.95, 0.7, 35),
                square_centre(1.8, 1.1, 52)]
    np.testing.assert_allclose(np.diag(k), expected, rtol=1e-13)
    assert np.all(np.abs(k - np.diag(np.diag(k))) < 1e-20)  # no cross-coupling at the centre
