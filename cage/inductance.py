"""Self and mutual inductance of square and round coils of a finite winding pack (SI units).

Published sources:

- Geometric mean distance (GMD) of a rectangle b x c from itself: J. C. Maxwell,
  A Treatise on Electricity and Magnetism (1873); tabulated in E. B. Rosa and
  F. W. Grover, "Formulas and tables for the calculation of mutual and self-inductance",
  Bull. Bureau of Standards 8 (1912), and F. W. Grover, Inductance Calculations (1946).
  For a square, g = 0.44705 b; for a thin strip of length l, g = l exp(-3/2) = 0.22313 l.
- GMD of a layered winding pack (full layers plus one part-filled layer): the area-weighted
  mean of ln g over the two rectangles, ln g = sum_ab (A_a A_b / A^2) ln g_ab (Maxwell's
  additivity of GMDs, Rosa and Grover 1912). The mutual GMD g_ab of two rectangles follows by
  summing, over their 16 corner differences, the fourth antiderivative of ln r,
  G(x, y) = (6x^2y^2 - x^4 - y^4)/48 ln(x^2 + y^2) + (x^3 y atan(y/x) + x y^3 atan(x/y))/6
  - 25 x^2 y^2 / 48, which for a rectangle with itself gives Maxwell's formula back.
- Round-wire correction (Rosa's correction A; Rosa and Grover 1912, Grover 1946): the GMD model
  spreads each turn's current over its square cell of side D (the pitch); a round wire of
  diameter d has GMD (d/2) exp(-1/4) instead of 0.44705 D, which adds
  mu0 N (perimeter / 2 pi) ln(0.44705 D / ((d/2) exp(-1/4))) = mu0 N (perimeter / 2 pi)
  (ln(D/d) + 0.1381) to L.
  Rosa's second correction (the turns' neighbours) is left out; it is below 0.05 % here.
- Self inductance of a circular coil of mean radius R and N turns with a cross-section of
  GMD g << R (Grover 1946, circular coils of small cross-section):
  L = mu0 N^2 R (ln(8R/g) - 2).
- Self inductance of a square coil of side a (centreline), N turns, cross-section GMD g << a
  (Grover 1946, square coil; in Grover's units L = 0.008 a N^2 [ln(a/g) + g/a - 0.774] uH,
  a in cm): L = (2 mu0 N^2 a / pi) (ln(a/g) + g/a - C) with C = 2 - sqrt(2) - ln 2
  + ln(1 + sqrt 2) = 0.77401. The constant follows from the Neumann sum over the four sides:
  four partial self inductances of straight bundles minus four mutuals of opposite sides.
- Mutual inductance of two coaxial circles (Maxwell 1873):
  M = mu0 sqrt(a b) [(2/k - k) K(k) - (2/k) E(k)], k^2 = 4ab / ((a + b)^2 + d^2),
  K and E the complete elliptic integrals, computed here by the arithmetic-geometric mean
  (Abramowitz and Stegun 17.6).
- Mutual inductance of two equal, parallel straight filaments of length l at distance r, ends
  aligned (Neumann integral in closed form; Grover 1946):
  M = (mu0 / 2 pi) [l asinh(l / r) - sqrt(l^2 + r^2) + r].
  Two coaxial parallel squares of side a at distance d: only parallel sides couple, so
  M = 4 [M_par(a, d) - M_par(a, sqrt(a^2 + d^2))] (Grover 1946, coaxial squares), exact for
  filaments.

The two coils of a pair are treated as filaments on their centrelines for the mutual term
(the correction for the finite cross-section is of order (pack size / spacing)^2).
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache

MU0_H_PER_M = 4e-7 * math.pi

# GMD of a square from itself per unit side, exp(ln(sqrt 2) - ln(2)/6 + pi/3 - 25/12) = 0.44705 (Maxwell).
GMD_SQUARE_PER_SIDE = math.exp(0.5 * math.log(2.0) - math.log(2.0) / 6.0 + math.pi / 3.0 - 25.0 / 12.0)

# The constant C of Grover's square-coil formula: 2 - sqrt 2 - ln 2 + ln(1 + sqrt 2) = 0.77401.
SQUARE_COIL_CONSTANT = 2.0 - math.sqrt(2.0) - math.log(2.0) + math.log(1.0 + math.sqrt(2.0))


@dataclass(frozen=True)
class PairInductance:
    """Inductance of a series-aiding coil pair.

    self_H: self inductance of one coil; mutual_H: mutual inductance between the two coils;
    total_H: L1 + L2 + 2M = 2 self_H + 2 mutual_H.
    """

    self_H: float
    mutual_H: float
    total_H: float


def gmd_rectangle_m(width_m: float, depth_m: float) -> float:
    """Geometric mean distance of a b x c rectangle from itself, in metres (Maxwell 1873).

    ln g = ln sqrt(b^2 + c^2) - (b^2 / 6c^2) ln sqrt(1 + c^2/b^2) - (c^2 / 6b^2) ln sqrt(1 + b^2/c^2)
           + (2b / 3c) atan(c / b) + (2c / 3b) atan(b / c) - 25/12.
    A side of zero gives the GMD of a straight segment, l exp(-3/2).
    """
    b = float(width_m)
    c = float(depth_m)
    if b < 0 or c < 0 or (b == 0 and c == 0):
        raise ValueError("rectangle sides must be non-negative and not both zero")
    if b == 0 or c == 0:
        return max(b, c) * math.exp(-1.5)
    rb = b / c
    rc = c / b
    ln_g = (
        0.5 * math.log(b * b + c * c)
        - (rb * rb / 12.0) * math.log1p(rc * rc)
        - (rc * rc / 12.0) * math.log1p(rb * rb)
        + (2.0 / 3.0) * rb * math.atan(rc)
        + (2.0 / 3.0) * rc * math.atan(rb)
        - 25.0 / 12.0
    )
    return math.exp(ln_g)


def _ln_r_antiderivative(x: float, y: float) -> float:
    """G(x, y) with d^4 G / dx^2 dy^2 = ln sqrt(x^2 + y^2); even in x and y."""
    x = abs(x)
    y = abs(y)
    if x == 0.0 and y == 0.0:
        return 0.0
    x2 = x * x
    y2 = y * y
    value = (6.0 * x2 * y2 - x2 * x2 - y2 * y2) / 48.0 * math.log(x2 + y2) - 25.0 / 48.0 * x2 * y2
    if x > 0.0 and y > 0.0:
        value += (x2 * x * y * math.atan(y / x) + x * y2 * y * math.atan(x / y)) / 6.0
    return value


def mutual_gmd_rectangles_m(
    rect1: tuple[float, float, float, float], rect2: tuple[float, float, float, float]
) -> float:
    """Geometric mean distance between two axis-aligned rectangles (x0, x1, y0, y1), in metres.

    A1 A2 ln g = sum over corners of +/- G(x_i - u_k, y_j - v_l) (see the module docstring).
    Either rectangle may be the other one (then it is the GMD of the rectangle from itself).
    """
    x0, x1, y0, y1 = rect1
    u0, u1, v0, v1 = rect2
    total = 0.0
    for xi, sx in ((x1, 1.0), (x0, -1.0)):
        for uk, su in ((u0, 1.0), (u1, -1.0)):
            for yj, sy in ((y1, 1.0), (y0, -1.0)):
                for vl, sv in ((v0, 1.0), (v1, -1.0)):
                    total += sx * su * sy * sv * _ln_r_antiderivative(xi - uk, yj - vl)
    area = (x1 - x0) * (y1 - y0) * (u1 - u0) * (v1 - v0)
    return math.exp(total / area)


@lru_cache(maxsize=8192)
def _unit_pack_gmd(turns: int, turns_per_layer: int) -> float:
    full_layers, partial = divmod(turns, turns_per_layer)
    if full_layers == 0:
        return gmd_rectangle_m(float(partial), 1.0)
    if partial == 0:
        return gmd_rectangle_m(float(turns_per_layer), float(full_layers))
    area_b = float(turns_per_layer * full_layers)
    area_p = float(partial)
    ln_bb = math.log(gmd_rectangle_m(float(turns_per_layer), float(full_layers)))
    ln_pp = math.log(gmd_rectangle_m(float(partial), 1.0))
    ln_bp = math.log(
        mutual_gmd_rectangles_m(
            (0.0, float(turns_per_layer), 0.0, float(full_layers)),
            (0.0, float(partial), float(full_layers), float(full_layers + 1)),
        )
    )
    ln_g = (area_b * area_b * ln_bb + 2.0 * area_b * area_p * ln_bp + area_p * area_p * ln_pp) / (
        (area_b + area_p) ** 2
    )
    return math.exp(ln_g)


def gmd_layered_pack_m(turns: int, turns_per_layer: int, pitch_m: float) -> float:
    """GMD in metres of a winding pack of square cells of side ``pitch_m``.

    ``turns // turns_per_layer`` full layers of ``turns_per_layer`` cells and one layer of the
    remaining cells, started at one flange. Cached on (turns, turns_per_layer).
    """
    return pitch_m * _unit_pack_gmd(int(turns), int(turns_per_layer))


def round_wire_correction_H(perimeter_m: float, turns: int, pitch_m: float, wire_diameter_m: float) -> float:
    """Rosa's correction for round wire in square cells: mu0 N (P / 2 pi) ln(0.44705 D / ((d/2) e^(-1/4))).

    Add it to a self inductance computed with the GMD of the cells (``gmd_layered_pack_m``).
    perimeter_m: centreline turn length; pitch_m: cell side D; wire_diameter_m: bare d.
    """
    ln_ratio = math.log(GMD_SQUARE_PER_SIDE * pitch_m / (0.5 * wire_diameter_m * math.exp(-0.25)))
    return MU0_H_PER_M * turns * perimeter_m / (2.0 * math.pi) * ln_ratio


def complete_elliptic_KE(m: float) -> tuple[float, float]:
    """Complete elliptic integrals K(m), E(m) of the parameter m = k^2, 0 <= m < 1.

    Arithmetic-geometric mean (Abramowitz and Stegun 17.6.1-17.6.4):
    K = pi / (2 AGM(1, sqrt(1 - m))), E = K (1 - sum 2^(n-1) c_n^2), c_0^2 = m.
    """
    if not 0.0 <= m < 1.0:
        raise ValueError("elliptic parameter m must be in [0, 1)")
    a = 1.0
    b = math.sqrt(1.0 - m)
    total = 0.5 * m  # 2^-1 c_0^2
    power = 0.5
    for _ in range(40):
        c = 0.5 * (a - b)
        a, b = 0.5 * (a + b), math.sqrt(a * b)
        power *= 2.0
        total += power * c * c
        if abs(c) < 1e-16 * a:
            break
    k_val = math.pi / (2.0 * a)
    return k_val, k_val * (1.0 - total)


def mutual_inductance_coaxial_circles_H(radius1_m: float, radius2_m: float, distance_m: float) -> float:
    """Mutual inductance in henries of two coaxial circular filaments (Maxwell's elliptic formula).

    radius1_m, radius2_m: loop radii; distance_m: axial distance between the loop planes.
    Not defined for coincident loops (same radius, zero distance).
    """
    a = float(radius1_m)
    b = float(radius2_m)
    d = float(distance_m)
    m = 4.0 * a * b / ((a + b) ** 2 + d * d)
    if m >= 1.0:
        raise ValueError("coincident filaments have no finite mutual inductance")
    k = math.sqrt(m)
    k_int, e_int = complete_elliptic_KE(m)
    return MU0_H_PER_M * math.sqrt(a * b) * ((2.0 / k - k) * k_int - (2.0 / k) * e_int)


def mutual_inductance_parallel_filaments_H(length_m: float, distance_m: float) -> float:
    """Mutual inductance of two equal parallel straight filaments, ends aligned (Neumann, closed form).

    M = (mu0 / 2 pi) [l asinh(l / r) - sqrt(l^2 + r^2) + r]; same current direction positive.
    """
    ell = float(length_m)
    r = float(distance_m)
    return (MU0_H_PER_M / (2.0 * math.pi)) * (ell * math.asinh(ell / r) - math.hypot(ell, r) + r)


def mutual_inductance_coaxial_squares_H(side_m: float, distance_m: float) -> float:
    """Mutual inductance in henries of two equal coaxial parallel square filaments.

    side_m: side of both squares; distance_m: distance between their planes (> 0).
    Exact for filaments: M = 4 [M_par(a, d) - M_par(a, sqrt(a^2 + d^2))] (Grover 1946).
    """
    a = float(side_m)
    d = float(distance_m)
    return 4.0 * (
        mutual_inductance_parallel_filaments_H(a, d)
        - mutual_inductance_parallel_filaments_H(a, math.hypot(a, d))
    )


def self_inductance_round_H(radius_m: float, turns: int, gmd_m: float) -> float:
    """Self inductance of a circular coil, L = mu0 N^2 R (ln(8R/g) - 2) (Grover 1946), g << R."""
    r = float(radius_m)
    return MU0_H_PER_M * turns * turns * r * (math.log(8.0 * r / gmd_m) - 2.0)


def self_inductance_square_H(side_m: float, turns: int, gmd_m: float) -> float:
    """Self inductance of a square coil, L = (2 mu0 N^2 a / pi)(ln(a/g) + g/a - 0.77401) (Grover 1946)."""
    a = float(side_m)
    g = float(gmd_m)
    return (2.0 * MU0_H_PER_M * turns * turns * a / math.pi) * (
        math.log(a / g) + g / a - SQUARE_COIL_CONSTANT
    )


def pair_inductance(
    shape: str,
    size_m: float,
    spacing_m: float,
    turns: int,
    gmd_m: float,
    self_correction_H: float = 0.0,
) -> PairInductance:
    """Inductance of a series-aiding pair of equal coils.

    shape: "square" (size_m = side of the centreline) or "round" (size_m = radius);
    spacing_m: distance between the coil planes; turns: per coil; gmd_m: GMD of one coil's
    winding cross-section; self_correction_H: added to each coil's self inductance (e.g.
    ``round_wire_correction_H``). Costs a few microseconds.
    """
    n = int(turns)
    if shape == "square":
        self_h = self_inductance_square_H(size_m, n, gmd_m) + self_correction_H
        mutual_h = n * n * mutual_inductance_coaxial_squares_H(size_m, spacing_m)
    elif shape == "round":
        self_h = self_inductance_round_H(size_m, n, gmd_m) + self_correction_H
        mutual_h = n * n * mutual_inductance_coaxial_circles_H(size_m, size_m, spacing_m)
    else:
        raise ValueError(f"unknown coil shape {shape!r}")
    return PairInductance(self_H=self_h, mutual_H=mutual_h, total_H=2.0 * self_h + 2.0 * mutual_h)


# ---------------------------------------------------------------------------------------------
# Axes of more than two coils (coaxial coils of different sizes, positions and turns)
# ---------------------------------------------------------------------------------------------


def mutual_inductance_parallel_offset_filaments_H(length1_m: float, length2_m: float, offset_m: float,
                                                  distance_m: float) -> float:
    """Mutual inductance of two parallel straight filaments of lengths l and m at perpendicular
    distance d, the second starting ``offset_m`` = s along the common direction from the start of
    the first (Neumann integral in closed form; Grover 1946, parallel filaments in any position)::

        M = (mu0 / 4 pi) [g(s + m) - g(s) - g(s + m - l) + g(s - l)],  g(x) = x asinh(x/d) - sqrt(x^2 + d^2)

    Same current direction positive. With s = 0 and m = l it is ``mutual_inductance_parallel_filaments_H``.
    """
    ell, em, s, d = float(length1_m), float(length2_m), float(offset_m), float(distance_m)

    def g(x: float) -> float:
        return x * math.asinh(x / d) - math.hypot(x, d)

    return MU0_H_PER_M / (4.0 * math.pi) * (g(s + em) - g(s) - g(s + em - ell) + g(s - ell))


def mutual_inductance_coaxial_unequal_squares_H(side1_m: float, side2_m: float, distance_m: float) -> float:
    """Mutual inductance (H) of two coaxial parallel square filaments of sides a, b, sides parallel,
    planes ``distance_m`` apart. Perpendicular sides do not couple; each side couples with the
    parallel side on its own side of the axis (same direction, lateral offset (a - b)/2) and with
    the opposite one (reverse direction, lateral offset (a + b)/2), both centred:
    M = 4 [M_par(a, b, (a - b)/2, sqrt(z^2 + ((a - b)/2)^2)) - M_par(a, b, (a - b)/2,
    sqrt(z^2 + ((a + b)/2)^2))] (Grover 1946). Equal sides give ``mutual_inductance_coaxial_squares_H``.
    """
    a, b, z = float(side1_m), float(side2_m), float(distance_m)
    s = (a - b) / 2.0
    near = math.hypot(z, (a - b) / 2.0)
    far = math.hypot(z, (a + b) / 2.0)
    return 4.0 * (mutual_inductance_parallel_offset_filaments_H(a, b, s, near)
                  - mutual_inductance_parallel_offset_filaments_H(a, b, s, far))


@dataclass(frozen=True)
class AxisInductance:
    """Inductance of the coils of one axis in series aiding.

    self_H: each coil's self inductance; mutual_H: the mutual inductance of each pair of coils
    (i, j), i < j, in the order (0,1), (0,2), ..., (1,2), ...; total_H: sum of self_H
    + 2 sum of mutual_H.
    """

    self_H: tuple[float, ...]
    mutual_H: tuple[float, ...]
    total_H: float


def axis_inductance(shape: str, sizes_m, positions_m, turns, gmds_m, self_corrections_H=None) -> AxisInductance:
    """Inductance of coaxial coils in series aiding (any number, sizes, positions and turns).

    shape: "square" (sizes are sides) or "round" (radii); gmds_m: GMD of each coil's winding
    cross-section; self_corrections_H: added to each self inductance (e.g. Rosa's round-wire
    correction). Self terms by Grover; mutual terms of the coils as filaments on their
    centrelines (Maxwell's formula for circles, Neumann's closed form for squares), times
    N_i N_j.
    """
    k = len(sizes_m)
    corr = self_corrections_H if self_corrections_H is not None else [0.0] * k
    selfs = []
    for size, n, g, c in zip(sizes_m, turns, gmds_m, corr):
        if shape == "square":
            selfs.append(self_inductance_square_H(size, int(n), g) + c)
        elif shape == "round":
            selfs.append(self_inductance_round_H(size, int(n), g) + c)
        else:
            raise ValueError(f"unknown coil shape {shape!r}")
    mutuals = []
    for i in range(k):
        for j in range(i + 1, k):
            z = abs(float(positions_m[j]) - float(positions_m[i]))
            if shape == "square":
                m = mutual_inductance_coaxial_unequal_squares_H(sizes_m[i], sizes_m[j], z)
            else:
                m = mutual_inductance_coaxial_circles_H(sizes_m[i], sizes_m[j], z)
            mutuals.append(int(turns[i]) * int(turns[j]) * m)
    return AxisInductance(tuple(selfs), tuple(mutuals), float(sum(selfs) + 2.0 * sum(mutuals)))
