"""The flat spacing of a pair, derived numerically from the exact field.

At the flat spacing the second derivative of the on-axis field vanishes at the centre. We find
that spacing by root finding on the exact field (central second differences of
``pair_field_T``) and compare with the published values:

* round pair: spacing = radius (Helmholtz's condition; standard textbook result);
* square pair: spacing = 0.5445 x side (A. H. Firester, "Design of square Helmholtz coil
  systems", Rev. Sci. Instrum. 37, 1264 (1966)), to within 1e-3 relative.
"""
from __future__ import annotations

import pytest
from scipy.optimize import brentq

from cage.coils import AXES, SQUARE_FLAT_SPACING_PER_SIDE, CoilPair, flat_spacing_m, pair_field_T


def _second_derivative_at_centre(shape, axis, size, spacing, h):
    pair = CoilPair(axis, shape, size, spacing, 1)
    i = AXES.index(axis)
    pts = [[0.0, 0.0, 0.0], [0.0, 0.0, 0.0], [0.0, 0.0, 0.0]]
    pts[1][i] = h
    pts[2][i] = -h
    b = pair_field_T(pair, 1.0, pts)[:, i]
    return (b[1] - 2 * b[0] + b[2]) / h**2


def _flat_spacing(shape, axis, size):
    # Richardson's extrapolation of the second difference, (4 D(h/2) - D(h)) / 3: truncation
    # ~ (h / size)^4 ~ 1e-8, rounding ~ 1e-16 (size / h)^2 ~ 1e-11.
    h = 1e-2 * size

    def curvature(s):
        d1 = _second_derivative_at_centre(shape, axis, size, s, h)
        d2 = _second_derivative_at_centre(shape, axis, size, s, h / 2)
        return (4 * d2 - d1) / 3

    return brentq(curvature, 0.3 * size, 1.5 * size, xtol=1e-12 * size)


@pytest.mark.parametrize("radius", [0.4, 1.0, 2.3])
def test_round_pair_flat_at_spacing_equal_radius(radius):
    spacing = _flat_spacing("round", "z", radius)
    assert spacing / radius == pytest.approx(1.0, rel=1e-7)
    assert flat_spacing_m("round", radius) == radius


@pytest.mark.parametrize("axis", AXES)
@pytest.mark.parametrize("side", [0.5, 1.9])
def test_square_pair_flat_at_firester_spacing(side, axis):
    spacing = _flat_spacing("square", axis, side)
    assert spacing / side == pytest.approx(0.5445, rel=1e-3)
    assert flat_spacing_m("square", side) == pytest.approx(SQUARE_FLAT_SPACING_PER_SIDE * side)
    # the derived value is the same for every size: it scales with the side
    assert spacing / side == pytest.approx(_flat_spacing("square", axis, 1.0), rel=1e-6)


def test_second_derivative_changes_sign_across_the_flat_spacing():
    # Closer coils: a maximum at the centre (negative curvature); farther: a dip (positive).
    size = 1.0
    h = 2e-3
    for shape, flat in (("round", 1.0), ("square", 0.5445)):
        near = _second_derivative_at_centre(shape, "x", size, 0.8 * flat, h)
        far = _second_derivative_at_centre(shape, "x", size, 1.2 * flat, h)
        assert near < 0 < far
