"""Inductances against published formulas, numeric Neumann integrals and magpylib fluxes.

References used here, independent of cage.inductance:
- Neumann's formula M = mu0/(4 pi) sum dl1 . dl2 / r, summed numerically with composite
  Gauss-Legendre nodes along each filament.
- scipy.special.ellipk / ellipe (reference library) in Maxwell's formula for coaxial circles.
- magpylib (reference library): the flux through one loop of the field of the other, M = flux / I.
- Rosa's straight round wire, L = (mu0 l / 2 pi)(ln(2l / rho) - 3/4) (Bull. Bureau of Standards 4,
  1908), and Kirchhoff's circular loop of round wire, L = mu0 R (ln(8R / rho) - 7/4), for the
  self terms of single turns when summing discrete filaments.
- Grover's tables (Inductance Calculations, 1946): GMD of a square = 0.44705 x side (from memory).
"""
import math

import magpylib as magpy
import numpy as np
import pytest
from scipy import integrate, special

from cage.inductance import (
    MU0_H_PER_M,
    complete_elliptic_KE,
    gmd_layered_pack_m,
    gmd_rectangle_m,
    mutual_gmd_rectangles_m,
    mutual_inductance_coaxial_circles_H,
    mutual_inductance_coaxial_squares_H,
    pair_inductance,
    round_wire_correction_H,
    self_inductance_round_H,
    self_inductance_square_H,
)

MU0 = 4e-7 * math.pi


# --- numeric Neumann integral ---------------------------------------------------------------


def _gauss_nodes(start, stop, panels, order):
    x, w = np.polynomial.legendre.leggauss(order)
    edges = np.linspace(start, stop, panels + 1)
    half = 0.5 * np.diff(edges)
    mid = 0.5 * (edges[:-1] + edges[1:])
    return (mid[:, None] + half[:, None] * x).ravel(), (half[:, None] * w).ravel()


def _circle_filament(radius, z, panels=64, order=8):
    phi, w = _gauss_nodes(0.0, 2 * math.pi, panels, order)
    points = np.column_stack([radius * np.cos(phi), radius * np.sin(phi), np.full_like(phi, z)])
    dl = np.column_stack([-radius * np.sin(phi) * w, radius * np.cos(phi) * w, np.zeros_like(phi)])
    return points, dl


def _square_filament(side, z, panels=32, order=8):
    h = side / 2
    corners = np.array([(-h, -h, z), (h, -h, z), (h, h, z), (-h, h, z), (-h, -h, z)])
    t, w = _gauss_nodes(0.0, 1.0, panels, order)
    points, dls = [], []
    for c0, c1 in zip(corners[:-1], corners[1:]):
        points.append(c0 + t[:, None] * (c1 - c0))
        dls.append(w[:, None] * (c1 - c0))
    return np.vstack(points), np.vstack(dls)


def _neumann_H(filament1, filament2, chunk=800):
    p1, dl1 = filament1
    p2, dl2 = filament2
    total = 0.0
    for i in range(0, len(p1), chunk):
        r = np.linalg.norm(p1[i : i + chunk, None, :] - p2[None, :, :], axis=2)
        total += np.sum((dl1[i : i + chunk] @ dl2.T) / r)
    return MU0 / (4 * math.pi) * total


# --- closed forms written out independently --------------------------------------------------


def _maxwell_circles_scipy(a, b, d):
    # Maxwell, Treatise (1873) art. 701, with scipy's elliptic integrals (parameter m = k^2).
    m = 4 * a * b / ((a + b) ** 2 + d**2)
    k = math.sqrt(m)
    return MU0 * math.sqrt(a * b) * ((2 / k - k) * special.ellipk(m) - (2 / k) * special.ellipe(m))


def _parallel_centred_H(l1, l2, r):
    # Neumann integral of two parallel, centred straight filaments (lengths l1, l2, distance r):
    # (mu0 / 4 pi) [2 F((l1 + l2)/2) - 2 F((l1 - l2)/2)], F(u) = u asinh(u/r) - sqrt(u^2 + r^2).
    def big_f(u):
        return u * math.asinh(u / r) - math.hypot(u, r)

    return MU0 / (4 * math.pi) * (2 * big_f((l1 + l2) / 2) - 2 * big_f((l1 - l2) / 2))


def _squares_general_H(a1, a2, h):
    # Coaxial parallel squares of sides a1, a2 at axial distance h: parallel sides only.
    near = math.hypot((a1 - a2) / 2, h)
    far = math.hypot((a1 + a2) / 2, h)
    return 4 * (_parallel_centred_H(a1, a2, near) - _parallel_centred_H(a1, a2, far))


# --- tests ------------------------------------------------------------------------------------


def test_mu0_is_the_classical_value():
    # CODATA 2018: mu0 = 1.25663706212e-6 N/A^2 (differs from 4 pi 1e-7 by 5e-10 relative).
    assert MU0_H_PER_M == pytest.approx(1.25663706212e-6, rel=1e-9)


@pytest.mark.parametrize("m", [0.0, 0.1, 0.5, 0.9, 0.99, 0.999999, 1 - 1e-12])
def test_agm_elliptic_integrals_match_scipy(m):
    k_int, e_int = complete_elliptic_KE(m)
    assert k_int == pytest.approx(special.ellipk(m), rel=1e-13)
    assert e_int == pytest.approx(special.ellipe(m), rel=1e-13)


def test_gmd_of_square_and_thin_strip_match_grover_and_maxwell():
    # Grover (1946) / Rosa and Grover (1912): square of side b, g = 0.44705 b (from memory).
    assert gmd_rectangle_m(1.0, 1.0) == pytest.approx(0.44705, abs=1e-5)
    assert gmd_rectangle_m(0.03, 0.03) == pytest.approx(0.44705 * 0.03, rel=1e-4)
    # Maxwell: a straight segment of length l has g = l exp(-3/2) = 0.22313 l.
    assert gmd_rectangle_m(2.0, 0.0) == pytest.approx(2.0 * 0.22313, rel=1e-4)
    assert gmd_rectangle_m(2.0, 1e-7) == pytest.approx(2.0 * 0.22313, rel=1e-4)
    # Common approximation for thin rectangles, g ~ 0.2235 (b + c) (Grover 1946).
    assert gmd_rectangle_m(0.04, 0.0035) == pytest.approx(0.2235 * 0.0435, rel=0.005)


@pytest.mark.parametrize("b, c", [(1.0, 1.0), (1.0, 0.25), (0.04, 0.0035), (0.002, 0.03)])
def test_gmd_rectangle_against_numeric_definition(b, c):
    # Definition: ln g = mean of ln|P - Q| over P, Q in the rectangle. With the difference vector
    # (u, v) it is (4 / b^2 c^2) int_0^b int_0^c (b - u)(c - v) ln sqrt(u^2 + v^2) dv du.
    value, _ = integrate.dblquad(
        lambda v, u: (b - u) * (c - v) * 0.5 * math.log(u * u + v * v + 1e-300),
        0.0,
        b,
        0.0,
        c,
        epsabs=1e-13,
        epsrel=1e-11,
    )
    ln_g = 4 * value / (b * b * c * c)
    assert gmd_rectangle_m(b, c) == pytest.approx(math.exp(ln_g), rel=1e-7)


@pytest.mark.parametrize(
    "rect1, rect2",
    [
        ((0.0, 1.0, 0.0, 0.5), (0.3, 2.0, 0.5, 1.2)),  # touching along an edge
        ((0.0, 23.0, 0.0, 1.0), (0.0, 17.0, 1.0, 2.0)),  # a part-filled layer on a full one
        ((0.0, 1.0, 0.0, 1.0), (3.0, 4.0, 2.0, 2.5)),  # apart
    ],
)
def test_mutual_gmd_of_rectangles_against_numeric_definition(rect1, rect2):
    # Definition: ln g = mean of ln|P - Q| for P in one rectangle, Q in the other (Maxwell),
    # summed with Gauss-Legendre nodes (the log singularity only touches shared edges).
    def nodes(rect):
        x0, x1, y0, y1 = rect
        across = max(2, min(24, round(2 * (x1 - x0) / (y1 - y0))))
        return _gauss_nodes(x0, x1, across, 8), _gauss_nodes(y0, y1, 2, 8)

    (px, wx), (py, wy) = nodes(rect1)
    (qx, wqx), (qy, wqy) = nodes(rect2)
    p = np.array(np.meshgrid(px, py, indexing="ij")).reshape(2, -1).T
    wp = np.outer(wx, wy).ravel()
    q = np.array(np.meshgrid(qx, qy, indexing="ij")).reshape(2, -1).T
    wq = np.outer(wqx, wqy).ravel()
    dist = np.linalg.norm(p[:, None, :] - q[None, :, :], axis=2)
    ln_g = np.sum(wp[:, None] * wq[None, :] * np.log(dist)) / (wp.sum() * wq.sum())
    assert math.log(mutual_gmd_rectangles_m(rect1, rect2)) == pytest.approx(ln_g, abs=5e-6)


@pytest.mark.parametrize("b, c", [(1.0, 1.0), (0.04, 0.0035), (3.0, 0.2)])
def test_mutual_gmd_of_a_rectangle_with_itself_is_maxwells_formula(b, c):
    assert mutual_gmd_rectangles_m((0.0, b, 0.0, c), (0.0, b, 0.0, c)) == pytest.approx(gmd_rectangle_m(b, c), rel=1e-9)


@pytest.mark.parametrize("turns, per_layer", [(40, 23), (46, 23), (7, 8), (61, 8), (200, 30)])
def test_layered_pack_gmd_against_discrete_cells(turns, per_layer):
    # The GMD of the pack equals that of its square cells taken together: ln g is the mean over all
    # ordered pairs of cells of their mutual GMD (self terms: 0.44705 D, Grover's table).
    pitch = 1.0
    cells = [divmod(k, per_layer)[::-1] for k in range(turns)]  # (slot, layer)
    xs = np.array([c[0] for c in cells], dtype=float)
    ys = np.array([c[1] for c in cells], dtype=float)
    dist = np.hypot(xs[:, None] - xs[None, :], ys[:, None] - ys[None, :])
    off = ~np.eye(turns, dtype=bool)
    # Between two distinct unit cells the mutual GMD is close to their centre distance; use the
    # exact cell-to-cell value for neighbours and the centre distance beyond (error < 1e-4).
    ln_sum = turns * math.log(0.44705)
    for i, j in zip(*np.nonzero(off)):
        if dist[i, j] < 3.5:
            r1 = (xs[i], xs[i] + 1, ys[i], ys[i] + 1)
            r2 = (xs[j], xs[j] + 1, ys[j], ys[j] + 1)
            ln_sum += math.log(mutual_gmd_rectangles_m(r1, r2))
        else:
            ln_sum += math.log(dist[i, j])
    expected = math.exp(ln_sum / turns**2)
    assert gmd_layered_pack_m(turns, per_layer, pitch) == pytest.approx(expected, rel=5e-5)
    assert gmd_layered_pack_m(turns, per_layer, 2e-3) == pytest.approx(2e-3 * expected, rel=5e-5)


def test_rosa_round_wire_correction_constant():
    # Rosa's correction A for round wire of diameter d in a square cell of side D:
    # ln(D/d) + 0.1381 (Rosa and Grover 1912; the constant from memory), per turn and per
    # mu0 x perimeter / 2 pi.
    per_turn = round_wire_correction_H(2 * math.pi, 1, 1.1e-3, 1.0e-3) / MU0
    assert per_turn == pytest.approx(math.log(1.1) + 0.1381, abs=2e-4)


@pytest.mark.parametrize("a, b, d", [(1.0, 1.0, 1.0), (1.0, 1.0, 0.3), (1.0, 0.6, 0.2), (0.5, 1.2, 2.0)])
def test_maxwell_circles_against_scipy_and_numeric_neumann(a, b, d):
    got = mutual_inductance_coaxial_circles_H(a, b, d)
    assert got == pytest.approx(_maxwell_circles_scipy(a, b, d), rel=1e-12)
    numeric = _neumann_H(_circle_filament(a, 0.0), _circle_filament(b, d))
    assert got == pytest.approx(numeric, rel=1e-9)


@pytest.mark.parametrize("a, b, d", [(1.0, 1.0, 1.0), (1.0, 0.7, 0.4)])
def test_maxwell_circles_against_magpylib_flux(a, b, d):
    # M = flux through loop b of the field of loop a carrying 1 A (magpylib Circle, SI units).
    source = magpy.current.Circle(current=1.0, diameter=2 * a)
    rho, w = _gauss_nodes(0.0, b, 40, 8)
    observers = np.column_stack([rho, np.zeros_like(rho), np.full_like(rho, d)])
    bz = source.getB(observers)[:, 2]
    flux = float(np.sum(bz * 2 * math.pi * rho * w))
    assert mutual_inductance_coaxial_circles_H(a, b, d) == pytest.approx(flux, rel=1e-7)


@pytest.mark.parametrize("a, d", [(1.0, 0.5445), (2.0, 2 * 0.5445), (1.0, 0.1), (1.0, 3.0)])
def test_coaxial_squares_closed_form_against_numeric_neumann(a, d):
    got = mutual_inductance_coaxial_squares_H(a, d)
    panels = 32 if d >= 0.5 * a else 64
    numeric = _neumann_H(_square_filament(a, 0.0, panels), _square_filament(a, d, panels))
    assert got == pytest.approx(numeric, rel=1e-8)
    # ... and against the general (unequal-squares) filament sum written out above.
    assert got == pytest.approx(_squares_general_H(a, a, d), rel=1e-12)


@pytest.mark.parametrize("a, d", [(1.0, 0.5445), (1.0, 1.0)])
def test_coaxial_squares_against_magpylib_flux(a, d):
    # M = flux through square 2 of the field of square 1 carrying 1 A (magpylib Polyline).
    h = a / 2
    source = magpy.current.Polyline(
        current=1.0, vertices=[(-h, -h, 0), (h, -h, 0), (h, h, 0), (-h, h, 0), (-h, -h, 0)]
    )
    x, w = _gauss_nodes(-h, h, 24, 8)
    gx, gy = np.meshgrid(x, x, indexing="ij")
    observers = np.column_stack([gx.ravel(), gy.ravel(), np.full(gx.size, d)])
    bz = source.getB(observers)[:, 2]
    flux = float(np.sum(bz * np.outer(w, w).ravel()))
    assert mutual_inductance_coaxial_squares_H(a, d) == pytest.approx(flux, rel=1e-6)


def test_round_self_term_against_neumann_at_gmd_offset():
    # The standard check: the self inductance of a bundle equals N^2 times the mutual inductance
    # of the centreline and a filament at the GMD from it (Maxwell; Rosa and Grover 1912).
    radius, turns = 0.5, 30
    g = gmd_rectangle_m(0.04, 0.02)
    grover = self_inductance_round_H(radius, turns, g)
    exact_offset = turns**2 * _maxwell_circles_scipy(radius, radius, g)
    # Grover's form drops terms of order (g/R)^2 ln(8R/g): here below 1e-3.
    assert grover == pytest.approx(exact_offset, rel=1e-3)
    numeric = turns**2 * _neumann_H(_circle_filament(radius, 0.0, 256, 6), _circle_filament(radius, g, 256, 6))
    assert numeric == pytest.approx(exact_offset, rel=1e-6)


def test_square_self_term_against_neumann_at_gmd_offset():
    side, turns = 1.0, 30
    g = gmd_rectangle_m(0.03, 0.02)
    grover = self_inductance_square_H(side, turns, g)
    numeric = turns**2 * _neumann_H(_square_filament(side, 0.0, 128, 6), _square_filament(side, g, 128, 6))
    assert grover == pytest.approx(numeric, rel=1e-3)
    assert turns**2 * mutual_inductance_coaxial_squares_H(side, g) == pytest.approx(numeric, rel=1e-6)


def _pack_positions(per_layer, layers, pitch):
    # Turn centres (axial offset, radial offset) in a rectangular pack, centred on the centreline.
    axial = (np.arange(per_layer) - (per_layer - 1) / 2) * pitch
    radial = (np.arange(layers) - (layers - 1) / 2) * pitch
    return [(za, dr) for dr in radial for za in axial]


def _rosa_a(pitch, rho):
    # ln(GMD of the square cell / GMD of the round wire) = ln(0.44705 D / (rho exp(-1/4)))
    # = ln(D / d) + 0.1381, d = 2 rho: Rosa's correction A for round wire in square cells.
    return math.log(0.44705 * pitch / (rho * math.exp(-0.25)))


def test_round_coil_gmd_formula_against_discrete_filament_sum():
    # 5 x 4 turns of 2.0 mm wire at 2.2 mm pitch on R = 0.5 m: sum of Maxwell mutuals between
    # every pair of turns plus Kirchhoff's self inductance of each turn.
    radius, rho, pitch, per_layer, layers = 0.5, 1.0e-3, 2.2e-3, 5, 4
    turns = _pack_positions(per_layer, layers, pitch)
    total = 0.0
    for i, (zi, dri) in enumerate(turns):
        ri = radius + dri
        total += MU0 * ri * (math.log(8 * ri / rho) - 1.75)
        for j, (zj, drj) in enumerate(turns):
            if i != j:
                total += _maxwell_circles_scipy(ri, radius + drj, zi - zj)
    g = gmd_rectangle_m(per_layer * pitch, layers * pitch)
    gmd_formula = self_inductance_round_H(radius, len(turns), g)
    assert gmd_formula == pytest.approx(total, rel=0.005)
    # The remaining -0.26 % is Rosa's insulation correction (Rosa and Grover 1912): each turn is a
    # round wire, not a full square cell; per turn it adds mu0 R ln(g_cell / g_wire).
    corrected = gmd_formula + len(turns) * MU0 * radius * _rosa_a(pitch, rho)
    assert corrected == pytest.approx(total, rel=5e-4)


def test_square_coil_gmd_formula_against_discrete_filament_sum():
    # 6 x 3 turns of 1.6 mm wire at 1.75 mm pitch on a 1.2 m square: parallel-filament Neumann sums
    # between every pair of turns plus each turn's self inductance from Rosa's straight wire
    # (four sides) less the opposite sides' mutuals.
    side, rho, pitch, per_layer, layers = 1.2, 0.8e-3, 1.75e-3, 6, 3
    turns = _pack_positions(per_layer, layers, pitch)
    total = 0.0
    for i, (zi, dri) in enumerate(turns):
        ai = side + 2 * dri
        rosa_side = MU0 * ai / (2 * math.pi) * (math.log(2 * ai / rho) - 0.75)
        total += 4 * rosa_side - 4 * _parallel_centred_H(ai, ai, ai)
        for j, (zj, drj) in enumerate(turns):
            if i != j:
                total += _squares_general_H(ai, side + 2 * drj, abs(zi - zj))
    g = gmd_rectangle_m(per_layer * pitch, layers * pitch)
    gmd_formula = self_inductance_square_H(side, len(turns), g)
    assert gmd_formula == pytest.approx(total, rel=0.005)
    corrected = gmd_formula + len(turns) * 2 * MU0 * side / math.pi * _rosa_a(pitch, rho)
    assert corrected == pytest.approx(total, rel=5e-4)


def test_thin_loop_limits_match_kirchhoff_and_grover():
    # A single round wire of radius rho has GMD rho exp(-1/4) (Maxwell). Kirchhoff's loop:
    # mu0 R (ln(8R/rho) - 7/4); Grover's square of round wire: (2 mu0 a/pi)(ln(a/rho) - 0.524),
    # dropping the rho/a term.
    rho = 1e-3
    g = rho * math.exp(-0.25)
    assert self_inductance_round_H(1.0, 1, g) == pytest.approx(MU0 * (math.log(8 / rho) - 1.75), rel=1e-12)
    expected = 2 * MU0 * 1.0 / math.pi * (math.log(1.0 / rho) - 0.524)
    assert self_inductance_square_H(1.0, 1, g) == pytest.approx(expected, rel=2e-4)


@pytest.mark.parametrize("shape", ["square", "round"])
def test_pair_inductance_is_sum_of_self_and_mutual(shape):
    g = gmd_rectangle_m(0.04, 0.0035)
    result = pair_inductance(shape, 1.0, 0.6, 25, g)
    assert result.total_H == pytest.approx(2 * result.self_H + 2 * result.mutual_H, rel=1e-14)
    assert 0 < result.mutual_H < result.self_H
    with pytest.raises(ValueError):
        pair_inductance("hexagon", 1.0, 0.6, 25, g)
