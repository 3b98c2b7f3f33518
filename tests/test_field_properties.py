"""Physical properties the exact fields must have, checked with hypothesis and finite differences.

Sources: linearity and superposition (the Biot-Savart law is linear in the current);
mirror and rotation symmetry of the field, a pseudovector (J. D. Jackson, Classical
Electrodynamics, 3rd ed., sec. 6.10); div B = 0 and, away from currents, curl B = 0
(Maxwell's equations, magnetostatics, Jackson sec. 5.3-5.4).
"""
from __future__ import annotations

import math
import tracemalloc
import warnings

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from scipy.spatial.transform import Rotation

from cage.biot_savart import ON_WIRE_M, Loop, Polygon, filaments_field_T
from cage.coils import AXES, CoilCage, CoilPair, cage_field_T, flat_spacing_m, pair_field_T

SETTINGS = settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.too_slow])

shapes = st.sampled_from(["square", "round"])
axes = st.sampled_from(AXES)
sizes = st.floats(0.2, 3.0)
coords = st.floats(-2.5, 2.5)
point = st.tuples(coords, coords, coords)
currents = st.floats(-50.0, 50.0).filter(lambda c: abs(c) > 1e-3)


def _pair(shape, axis, size, turns=10):
    return CoilPair(axis, shape, size, flat_spacing_m(shape, size), turns)


def _cage():
    return CoilCage(
        x=CoilPair("x", "square", 2.0, flat_spacing_m("square", 2.0), 40),
        y=CoilPair("y", "round", 0.95, 0.95, 40),
        z=CoilPair("z", "square", 1.8, flat_spacing_m("square", 1.8), 40),
    )


@SETTINGS
@given(shape=shapes, axis=axes, size=sizes, p=point, i1=currents, i2=currents)
def test_linear_in_current(shape, axis, size, p, i1, i2):
    pair = _pair(shape, axis, size)
    b1 = pair_field_T(pair, i1, p)
    b2 = pair_field_T(pair, i2, p)
    b12 = pair_field_T(pair, i1 + i2, p)
    scale = np.linalg.norm(b1) + np.linalg.norm(b2) + 1e-30
    assert np.linalg.norm(b12 - (b1 + b2)) <= 1e-12 * scale
    assert np.linalg.norm(pair_field_T(pair, 2.5 * i1, p) - 2.5 * b1) <= 1e-13 * np.linalg.norm(2.5 * b1) + 1e-30


@SETTINGS
@given(p=point, c=st.tuples(currents, currents, currents))
def test_cage_is_the_sum_of_its_pairs(p, c):
    cage = _cage()
    total = cage_field_T(cage, c, p)
    parts = sum(pair_field_T(pair, ci, p) for pair, ci in zip(cage.pairs, c))
    assert np.linalg.norm(total - parts) <= 1e-12 * (np.linalg.norm(parts) + 1e-30)


@SETTINGS
@given(shape=shapes, axis=axes, size=sizes, p=point)
def test_mirror_symmetry_of_a_pair(shape, axis, size, p):
    # Reflection through the mid-plane (axis -> -axis) swaps the coils and keeps their sense:
    # B(Mp) = -M B(p). Reflection of a transverse coordinate reverses each coil's sense:
    # B(Mp) = +M B(p). (A pseudovector under reflections M.)
    pair = _pair(shape, axis, size)
    i = AXES.index(axis)
    p = np.array(p)
    b = pair_field_T(pair, 1.0, p)
    tol = 1e-12 * np.linalg.norm(b) + 1e-30
    m_axial = np.ones(3)
    m_axial[i] = -1
    assert np.linalg.norm(pair_field_T(pair, 1.0, m_axial * p) - (-m_axial * b)) <= tol
    for j in range(3):
        if j == i:
            continue
        m = np.ones(3)
        m[j] = -1
        assert np.linalg.norm(pair_field_T(pair, 1.0, m * p) - m * b) <= tol


# Cyclic rotation x -> y -> z -> x: its matrix maps e_x to e_y, e_y to e_z, e_z to e_x.
CYCLIC = np.array([[0.0, 0.0, 1.0], [1.0, 0.0, 0.0], [0.0, 1.0, 0.0]])


@SETTINGS
@given(shape=shapes, size=sizes, p=point)
def test_rotating_a_pair_rotates_its_field(shape, size, p):
    # The y pair is the x pair turned by the cyclic rotation C, and the z pair is the y pair
    # turned by C: B_y(C p) = C B_x(p). Also the x pair turned 90 degrees about z is the y pair.
    px, py, pz = (_pair(shape, a, size) for a in AXES)
    p = np.array(p)
    bx = pair_field_T(px, 1.0, p)
    tol = 1e-12 * np.linalg.norm(bx) + 1e-30
    assert np.linalg.norm(pair_field_T(py, 1.0, CYCLIC @ p) - CYCLIC @ bx) <= tol
    by = pair_field_T(py, 1.0, p)
    assert np.linalg.norm(pair_field_T(pz, 1.0, CYCLIC @ p) - CYCLIC @ by) <= 1e-12 * np.linalg.norm(by) + 1e-30
    rz = Rotation.from_euler("z", 90, degrees=True).as_matrix()
    assert np.linalg.norm(pair_field_T(py, 1.0, rz @ p) - rz @ bx) <= tol


@SETTINGS
@given(rotvec=st.tuples(st.floats(-3, 3), st.floats(-3, 3), st.floats(-3, 3)), p=point)
def test_rotating_any_source_rotates_its_field(rotvec, p):
    # General polygon and tilted loop: B_R(R p) = R B(p) for a proper rotation R.
    rot = Rotation.from_rotvec(rotvec).as_matrix()
    verts = np.array([(0.9, -0.2, 0.1), (0.3, 0.8, -0.2), (-0.7, 0.4, 0.3), (-0.4, -0.9, 0.0)])
    centre, normal = np.array([0.1, -0.3, 0.2]), np.array([0.2, 0.5, 0.84])
    p = np.array(p)
    b = filaments_field_T(p, [Polygon(verts, 3.0)], [Loop(centre, normal, 0.6, -2.0)])
    b_rot = filaments_field_T(rot @ p, [Polygon(verts @ rot.T, 3.0)], [Loop(rot @ centre, rot @ normal, 0.6, -2.0)])
    assert np.linalg.norm(b_rot - rot @ b) <= 1e-11 * np.linalg.norm(b) + 1e-30


def _jacobian(field, p, h):
    jac = np.empty((3, 3))  # jac[i, j] = dB_i / dx_j
    for j in range(3):
        step = np.zeros(3)
        step[j] = h
        jac[:, j] = (field(p + step) - field(p - step)) / (2 * h)
    return jac


def _clear_of_wires(p, cage, clearance):
    """Crude test: far from every coil plane, or well inside/outside the coil outline."""
    for pair in cage.pairs:
        i = AXES.index(pair.axis)
        lateral = np.delete(p, i)
        for a0 in (pair.spacing_m / 2, -pair.spacing_m / 2):
            if abs(p[i] - a0) > clearance:
                continue
            if pair.shape == "round":
                if abs(np.linalg.norm(lateral) - pair.size_m) < clearance:
                    return False
            elif abs(np.max(np.abs(lateral)) - pair.size_m / 2) < clearance:
                return False
    return True


@SETTINGS
@given(p=point)
def test_div_and_curl_vanish_away_from_wires(p):
    cage = _cage()
    p = np.array(p)
    if not _clear_of_wires(p, cage, 0.05):
        return
    field = lambda q: cage_field_T(cage, (1.0, -2.0, 0.5), q)  # noqa: E731
    jac = _jacobian(field, p, 1e-4)
    # scale: the Jacobian itself, plus |B| / (1 m) for the nearly uniform centre where the
    # Jacobian is tiny and rounding (~1e-16 |B| / h) would dominate
    scale = np.linalg.norm(jac) + np.linalg.norm(field(p)) / 1.0
    div = np.trace(jac)
    curl = np.array([jac[2, 1] - jac[1, 2], jac[0, 2] - jac[2, 0], jac[1, 0] - jac[0, 1]])
    # central differences with h = 1e-4 m at >= 5 cm from a wire: error ~ (h / d)^2 ~ 4e-6
    assert abs(div) <= 1e-4 * scale
    assert np.linalg.norm(curl) <= 1e-4 * scale


def test_curl_is_mu0_j_around_a_wire():
    # Ampere's law, the check that the finite differences above would see a wrong field:
    # the line integral of B around one side of a square coil is mu0 I.
    from scipy.constants import mu_0

    h, current = 0.5, 3.0
    poly = Polygon([(h, -h, 0), (h, h, 0), (-h, h, 0), (-h, -h, 0)], current)
    r = 0.01
    t = np.linspace(0, 2 * np.pi, 2001)[:-1]
    # small circle around the side x = h (current along +y), in the x-z plane at y = 0
    pts = np.column_stack([h + r * np.cos(t), np.zeros_like(t), r * np.sin(t)])
    tangent = np.column_stack([-np.sin(t), np.zeros_like(t), np.cos(t)])
    b = filaments_field_T(pts, [poly])
    circulation = np.sum(np.einsum("ij,ij->i", b, tangent)) * r * (2 * np.pi / len(t))
    assert circulation == pytest.approx(-mu_0 * current, rel=1e-6)  # +y current, x-z loop sense


def test_on_and_near_wire_points_are_finite_without_warnings():
    # Documented in cage.biot_savart: within ON_WIRE_M of a filament, that filament adds nothing.
    h = 0.5
    verts = [(h, -h, 0.0), (h, h, 0.0), (-h, h, 0.0), (-h, -h, 0.0)]
    poly = Polygon(verts, 2.0)
    loop = Loop([0.0, 0.0, 1.0], [0.0, 0.0, 1.0], 0.7, 1.5)
    on_poly = [verts[0], verts[1], (h, 0.0, 0.0), (h, 0.2, 0.3 * ON_WIRE_M), (h + 0.5 * ON_WIRE_M, -0.1, 0.0),
               (h, h + 0.5 * ON_WIRE_M, 0.0)]
    on_loop = [(0.7, 0.0, 1.0), (0.0, -0.7, 1.0), (0.7 * math.cos(1.0), 0.7 * math.sin(1.0), 1.0),
               (0.7 + 0.4 * ON_WIRE_M, 0.0, 1.0)]
    pts = np.array(on_poly + on_loop)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        with np.errstate(all="raise"):
            b = filaments_field_T(pts, [poly], [loop])
            b_poly_only = filaments_field_T(pts[len(on_poly):], [poly])
            b_loop_only = filaments_field_T(pts[: len(on_poly)], [], [loop])
            near = filaments_field_T([(h, 0.0, 5 * ON_WIRE_M), (0.7 + 5 * ON_WIRE_M, 0.0, 1.0)], [poly], [loop])
            cage = _cage()
            corner = np.array([[flat_spacing_m("square", 2.0) / 2, 1.0, 1.0], [0.0, 0.475, 0.95]])
            b_cage = cage_field_T(cage, (1.0, 1.0, 1.0), corner)
    assert np.all(np.isfinite(b)) and np.all(np.isfinite(near)) and np.all(np.isfinite(b_cage))
    # on a filament: exactly the field of the other filaments
    np.testing.assert_allclose(b[: len(on_poly)], b_loop_only, rtol=1e-14, atol=0)
    np.testing.assert_allclose(b[len(on_poly):], b_poly_only, rtol=1e-14, atol=0)
    # just outside the 1e-9 m rule the thin-wire field is there and huge: mu0 I / (2 pi d)
    assert np.linalg.norm(near[0]) > 0.5 * 4e-7 * 2.0 / (2 * 5e-9)


def test_chunking_does_not_change_the_result():
    cage = _cage()
    rng = np.random.default_rng(2)
    pts = rng.uniform(-2, 2, size=(1001, 3))
    from cage.coils import cage_filaments

    fil = cage_filaments(cage, (0.3, 1.0, -0.8))
    a = filaments_field_T(pts, fil.polygons, fil.loops)
    b = filaments_field_T(pts, fil.polygons, fil.loops, chunk_points=7)
    np.testing.assert_array_equal(a, b)


def test_a_million_points_stay_well_under_500_MB():
    # The working set is bounded by the chunk size; beyond the (n, 3) input and output
    # (48 MB for a million points) only a few MB are used.
    cage = _cage()
    pts = np.random.default_rng(4).uniform(-1.0, 1.0, size=(1_000_000, 3))
    tracemalloc.start()
    try:
        tracemalloc.reset_peak()
        base = tracemalloc.get_traced_memory()[0]
        out = cage_field_T(cage, (1.0, 1.0, 1.0), pts)
        peak = tracemalloc.get_traced_memory()[1] - base
    finally:
        tracemalloc.stop()
    assert out.shape == (1_000_000, 3)
    assert peak < 100e6, peak


# --- uniformity (cage.uniformity) -------------------------------------------------------------


@settings(max_examples=15, deadline=None)
@given(shape=shapes, size=st.floats(0.5, 2.5), frac=st.floats(0.1, 0.9),
       aspect=st.tuples(st.floats(0.3, 1.0), st.floats(0.3, 1.0), st.floats(0.3, 1.0)))
def test_box_maximum_is_on_the_faces(shape, size, frac, aspect):
    # Maximum principle (|B - B0| is subharmonic where there is no current; Jackson sec. 1.9
    # for harmonic functions): no interior point of a wire-free box deviates more than the
    # box's faces. The 9 x 9 face grid is compared with a 9 x 9 x 9 grid through the volume.
    from cage.uniformity import box_deviation, wire_free_cube_side_m

    pair = _pair(shape, "z", size)
    box = np.array(aspect) * frac * wire_free_cube_side_m(pair) / np.sqrt(3)
    faces = box_deviation(pair, box, n_per_edge=9)
    t = np.linspace(-0.5, 0.5, 9)
    grid = np.stack(np.meshgrid(t, t, t, indexing="ij"), axis=-1).reshape(-1, 3) * box
    b = pair_field_T(pair, 1.0, np.vstack([[0.0, 0.0, 0.0], grid]))
    volume = np.max(np.linalg.norm(b[1:] - b[0], axis=1)) / np.linalg.norm(b[0])
    assert volume <= faces * (1 + 1e-12)
    assert volume >= faces * (1 - 1e-12)  # the volume grid contains the face grid


@pytest.mark.parametrize("shape", ["square", "round"])
def test_largest_cube_is_where_the_deviation_reaches_the_tolerance(shape):
    from cage.uniformity import box_deviation, largest_uniform_cube_side_m, sphere_deviation, \
        largest_uniform_sphere_radius_m

    pair = _pair(shape, "y", 1.4)
    for tol in (1e-4, 1e-2):
        side = largest_uniform_cube_side_m(pair, tol)
        assert box_deviation(pair, (side, side, side)) <= tol
        assert box_deviation(pair, np.full(3, side * (1 + 1e-4))) > tol
        radius = largest_uniform_sphere_radius_m(pair, tol)
        assert sphere_deviation(pair, radius) <= tol < sphere_deviation(pair, radius * (1 + 1e-4))
    # a finer face grid does not find a larger deviation at the bisected size (sampling is enough)
    side = largest_uniform_cube_side_m(pair, 1e-3)
    assert box_deviation(pair, (side, side, side), n_per_edge=41) == pytest.approx(1e-3, rel=1e-3)


def test_deviation_map_matches_direct_evaluation():
    from cage.uniformity import deviation_map

    pair = _pair("square", "x", 1.6)
    m = deviation_map(pair, "zx", size_m=(1.0, 0.6), n=(11, 7), offset_m=0.1)
    assert m.u_m.shape == m.v_m.shape == m.deviation.shape == (7, 11)
    b0 = pair_field_T(pair, 1.0, [0.0, 0.0, 0.0])
    j, i = 2, 8
    p = np.array([m.v_m[j, i], 0.1, m.u_m[j, i]])  # u along z, v along x, offset along y
    expected = np.linalg.norm(pair_field_T(pair, 1.0, p) - b0) / np.linalg.norm(b0)
    assert m.deviation[j, i] == pytest.approx(expected, rel=1e-12)
    assert np.all(np.isfinite(m.deviation)) and m.deviation.min() >= 0


@pytest.mark.parametrize("shape", ["square", "round"])
def test_pack_difference_is_second_order_in_pack_size(shape):
    # A pack centred on the centreline differs from the one-filament model only at second order
    # in its size (the first-order terms of opposite filaments cancel): doubling the wire
    # diameter with the same grid quadruples the difference.
    from cage.coils import FilamentPack, pack_vs_filament_difference

    pair = CoilPair("x", shape, 1.0, flat_spacing_m(shape, 1.0), 16)
    small = pack_vs_filament_difference(pair, FilamentPack(2e-3, 8e-3), (0.3, 0.3, 0.3))
    large = pack_vs_filament_difference(pair, FilamentPack(4e-3, 16e-3), (0.3, 0.3, 0.3))
    assert 0 < small.centre_relative < 1e-4
    assert large.centre_relative / small.centre_relative == pytest.approx(4.0, rel=0.01)
    assert large.box_max_relative / small.box_max_relative == pytest.approx(4.0, rel=0.02)
    assert small.box_max_relative >= small.centre_relative
