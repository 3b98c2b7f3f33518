"""Complete elliptic integrals K and E by the arithmetic-geometric mean (numpy only).

With the complementary parameter p = 1 - m (m = k^2), start a_0 = 1, b_0 = sqrt(p), c_0^2 = m,
and iterate a_{n+1} = (a_n + b_n) / 2, b_{n+1} = sqrt(a_n b_n), c_{n+1} = (a_n - b_n) / 2 until
a_n and b_n agree to rounding; then

    K(m) = pi / (2 a_N),    E(m) = K(m) (1 - sum_{n>=0} 2^(n-1) c_n^2)

(Abramowitz and Stegun, Handbook of Mathematical Functions, 17.6.3-17.6.4; from memory, checked
against scipy.special in tests/test_elliptic_against_scipy.py). The convergence is quadratic:
about five rounds for p near 1, under a dozen for p down to 1e-300. Taking p rather than m keeps
full relative precision of K near m = 1 (a point close to a circular wire), as scipy's
``ellipkm1``; E there loses a few units in 1e-14 to the sum nearing 1.

Used by the circular-loop field (``cage.biot_savart``) so that planning round coils does not
import scipy.special (about 0.2 s of start-up).
"""
from __future__ import annotations

import math

import numpy as np

_MAX_ROUNDS = 40


def complete_K_E(p) -> tuple[np.ndarray, np.ndarray]:
    """(K, E) at m = 1 - p for an array p in (0, 1] (p = 0: K = inf, E = 1)."""
    p = np.asarray(p, dtype=float)
    zero = p <= 0.0  # on the wire: set apart, so the rounds converge everywhere else
    q = np.where(zero, 1.0, p)
    a = np.ones_like(q)
    b = np.sqrt(q)
    c2 = 1.0 - q  # c_0^2 = m
    total = 0.5 * c2
    weight = 0.5
    # Rounds: as many as the smallest p needs (the slowest to converge), found on scalars, so the
    # array rounds carry no test. Agreement to 4e-16 relative (two units in the last place: the
    # two means may settle one unit apart and stay there).
    rounds, sa, sb = 0, 1.0, math.sqrt(float(q.min())) if q.size else 1.0
    while abs(sa - sb) > 4e-16 * sa and rounds < _MAX_ROUNDS:
        sa, sb = 0.5 * (sa + sb), math.sqrt(sa * sb)
        rounds += 1
    for _ in range(rounds + 1):
        c = 0.5 * (a - b)
        a, b = 0.5 * (a + b), np.sqrt(a * b)
        weight *= 2.0
        total += weight * c * c
    K = math.pi / (2.0 * a)
    E = K * (1.0 - total)
    if zero.any():
        K = np.where(zero, np.inf, K)
        E = np.where(zero, 1.0, E)
    return K, E
