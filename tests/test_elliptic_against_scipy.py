"""cage.elliptic (arithmetic-geometric mean) against scipy.special's complete elliptic integrals
(a general-purpose reference library: ellipk, ellipe, and ellipkm1 for m near 1), and against
closed values: K(0) = E(0) = pi/2, E(1) = 1 (Abramowitz and Stegun 17.3)."""
import math

import numpy as np
import pytest

special = pytest.importorskip("scipy.special")

from cage.elliptic import complete_K_E  # noqa: E402


def test_against_scipy_over_the_whole_range():
    # complementary parameters p = 1 - m: m from 0 to 0.999, then p down to 1e-300 (m near 1)
    p = np.concatenate([1.0 - np.linspace(0.0, 0.999, 2001), np.logspace(-3.001, -300, 600)])
    K, E = complete_K_E(p)
    np.testing.assert_allclose(K, special.ellipkm1(p), rtol=2e-15)
    # E = K (1 - sum): the sum nears 1 as m nears 1, so a few units in 1e-14 are lost there
    np.testing.assert_allclose(E, special.ellipe(1.0 - p), rtol=1e-13)
    np.testing.assert_allclose(E[:2001], special.ellipe(1.0 - p[:2001]), rtol=2e-15)


def test_closed_values():
    K, E = complete_K_E(np.array([1.0, 0.0]))
    assert K[0] == pytest.approx(math.pi / 2, rel=1e-16) and E[0] == pytest.approx(math.pi / 2, rel=1e-16)
    assert math.isinf(K[1]) and E[1] == 1.0
