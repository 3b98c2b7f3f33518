"""Field sequences: the Fibonacci sphere against sphere geometry (scipy cKDTree nearest
neighbours, Archimedes' hat-box theorem), resampling against scipy.interpolate, the
slew check against an ODE solution of the R-L circuit (scipy.integrate.solve_ivp), and the
field-to-current solve against numpy.linalg.lstsq."""
import math

import numpy as np
import pytest
from scipy.integrate import solve_ivp
from scipy.interpolate import make_interp_spline
from scipy.spatial import cKDTree

from cage.errors import InfeasibleError, InputError
from cage.sequence import check_slew, currents_for_fields_A, fibonacci_sphere, resample_series

# ---- Fibonacci sphere -----------------------------------------------------------------


@pytest.mark.parametrize("n", [1, 2, 7, 50, 1000])
def test_sphere_points_are_unit_vectors(n):
    p = fibonacci_sphere(n)
    assert p.shape == (n, 3)
    np.testing.assert_allclose(np.linalg.norm(p, axis=1), 1.0, rtol=0, atol=1e-12)


@pytest.mark.parametrize("n", [50, 200, 1000, 2000])
def test_sphere_points_are_nearly_evenly_spaced(n):
    p = fibonacci_sphere(n)
    d, _ = cKDTree(p).query(p, k=2)  # scipy.spatial.cKDTree: nearest other point
    nn = d[:, 1]
    assert nn.min() / nn.max() > 0.6  # measured 0.88-0.90
    # a hexagonal lattice with one point per area 4 pi / n has spacing
    # sqrt(2 * (4 pi / n) / sqrt(3)) (hexagon cell area (sqrt 3 / 2) d^2, plane geometry);
    # the golden-angle lattice is close to hexagonal (Gonzalez 2010); measured 0.87-0.89
    hex_spacing = math.sqrt(8 * math.pi / (math.sqrt(3) * n))
    assert 0.82 < nn.mean() / hex_spacing < 0.95


@pytest.mark.parametrize("n", [101, 1000])
def test_sphere_zones_hold_points_in_proportion_to_height(n):
    # Archimedes' hat-box theorem: a zone between heights z1 < z2 of the unit sphere has
    # area 2 pi (z2 - z1), so an even spread puts n (z2 - z1) / 2 points in it
    z = fibonacci_sphere(n)[:, 2]
    for z1, z2 in [(-1, -0.5), (-0.3, 0.4), (0.9, 1.0), (0.0, 1.0)]:
        count = np.count_nonzero((z > z1) & (z <= z2))
        assert abs(count - n * (z2 - z1) / 2) <= 1.0
    # longitudes too: every half-space through the centre holds about half the points
    p = fibonacci_sphere(n)
    for normal in ([1, 0, 0], [0, 1, 0], [1, 1, 1]):
        frac = np.mean(p @ np.array(normal, float) > 0)
        assert abs(frac - 0.5) < 0.02


@pytest.mark.parametrize("bad", [0, -3, 100_001, 2.5, True, "10", None])
def test_sphere_rejects_bad_counts(bad):
    with pytest.raises(InputError, match="number of directions"):
        fibonacci_sphere(bad)


# ---- resampling -----------------------------------------------------------------------


def test_resample_matches_scipy_linear_spline():
    rng = np.random.default_rng(4)
    t = np.cumsum(rng.uniform(0.05, 0.4, 40)) + 3.0
    field = rng.normal(0, 20_000, (40, 3))
    t_new, f_new = resample_series(t, field, 10.0)
    # grid starts at t[0], step 1 / rate, not beyond t[-1]
    assert t_new[0] == t[0]
    np.testing.assert_allclose(np.diff(t_new), 0.1, rtol=1e-9)
    assert t_new[-1] <= t[-1] < t_new[-1] + 0.1
    ref = make_interp_spline(t, field, k=1)(t_new)  # scipy piecewise-linear spline
    np.testing.assert_allclose(f_new, ref, rtol=1e-12, atol=1e-8)


def test_resample_keeps_an_end_on_the_grid():
    t = np.array([0.0, 1.0, 2.0])
    field = np.array([[0, 0, 0], [10, 20, 30], [0, 0, 0.0]])
    t_new, f_new = resample_series(t, field, 4.0)
    assert len(t_new) == 9 and t_new[-1] == 2.0
    np.testing.assert_allclose(f_new[2], [5, 10, 15])


@pytest.mark.parametrize(
    "t, rate, match",
    [
        ([0.0, 1.0, 1.0], 10.0, "increase strictly"),
        ([0.0, 2.0, 1.0], 10.0, "increase strictly"),
        ([0.0, math.nan, 1.0], 10.0, "not finite"),
        ([0.0, 1.0, 2.0], 0.0, "positive"),
        ([0.0, 1.0, 2.0], math.inf, "positive"),
        ([0.0, 1.0, 2.0e7], 1.0, "more than"),
    ],
)
def test_resample_rejects_bad_input(t, rate, match):
    with pytest.raises(InputError, match=match):
        resample_series(t, np.zeros((3, 3)), rate)


# ---- fields to currents ---------------------------------------------------------------


def test_currents_for_fields_solve_the_linear_map():
    rng = np.random.default_rng(5)
    k = np.diag([50_000.0, 49_000.0, 51_000.0]) + rng.normal(0, 300, (3, 3))
    ambient = np.array([18_000.0, -1_500.0, 43_000.0])
    targets = rng.normal(0, 30_000, (20, 3))
    i = currents_for_fields_A(k, ambient, targets)
    ref = np.linalg.lstsq(k, (targets - ambient).T, rcond=None)[0].T  # independent solver
    np.testing.assert_allclose(i, ref, rtol=1e-10, atol=1e-12)
    np.testing.assert_allclose(ambient + i @ k.T, targets, atol=1e-6)
    single = currents_for_fields_A(k, ambient, [0, 0, 0])
    assert single.shape == (3,)


def test_singular_coupling_is_infeasible():
    k = np.array([[50_000.0, 50_000.0, 0], [0, 0, 0], [0, 0, 51_000.0]])
    with pytest.raises(InfeasibleError, match="singular"):
        currents_for_fields_A(k, np.zeros(3), [[1.0, 2.0, 3.0]])


# ---- slew check -----------------------------------------------------------------------

R = np.array([2.0, 2.5, 3.0])  # ohm, hot, with leads (invented)
L = np.array([0.010, 0.012, 0.015])  # H
VMAX = np.array([10.0, 10.0, 10.0])
IMAX = np.array([2.0, 2.0, 2.0])


def test_required_voltage_drives_the_rl_circuit_to_the_next_current():
    # reference: numerical solution of L dI/dt + R I = V (scipy.integrate.solve_ivp) with the
    # constant voltage the check reports; it must land on the next current after one step
    dt = 1e-3
    currents = np.array([[0.2, -0.5, 1.0], [1.0, 0.3, 0.4]])
    check = check_slew(currents, dt, R, L, 100.0, 10.0)
    for j in range(3):
        i0, i1 = currents[0, j], currents[1, j]
        sign = 1.0 if i1 > i0 * math.exp(-dt * R[j] / L[j]) else -1.0
        v = sign * check.required_voltage_V[1, j]
        sol = solve_ivp(lambda t, y: [(v - R[j] * y[0]) / L[j]], (0, dt), [i0], rtol=1e-10, atol=1e-12)
        assert math.isclose(sol.y[0, -1], i1, rel_tol=0, abs_tol=1e-7)


def test_required_voltage_is_within_the_finite_difference_bound():
    # |I| R + L |dI| / dt bounds it above and is its limit as dt -> 0 (L / R = 5 ms here)
    currents = np.array([[0.0, 0, 0], [0.5, -0.4, 0.3]])
    for dt in (1e-2, 1e-3, 1e-5):
        check = check_slew(currents, dt, R, L, 1e6, 10.0)
        fd = np.abs(currents[1]) * R + L * np.abs(currents[1] - currents[0]) / dt
        assert np.all(check.required_voltage_V[1] <= fd * (1 + 1e-12))
    np.testing.assert_allclose(check.required_voltage_V[1], fd, rtol=1e-2)


def test_step_change_is_flagged_and_slow_ramp_is_not():
    dt = 1e-3  # 1 kHz update; L / R = 5 ms on x
    m = 100
    step = np.zeros((m, 3))
    step[50:, 0] = 1.0  # a 1 A jump at step 50 needs about 11 V > 10 V
    step[80:, 0] = 0.0  # back down at step 80: the IR drop helps, 9.0 V is enough
    check = check_slew(step, dt, R, L, VMAX, IMAX)
    assert check.failing_steps == (50,)
    assert check.voltage_over_limit[50, 0] and not check.voltage_over_limit[80, 0]
    a = dt * R[0] / L[0]  # closed form R I1 + R dI / (e^a - 1), checked against solve_ivp above
    assert math.isclose(check.required_voltage_V[50, 0], 2.0 + 2.0 / math.expm1(a))  # 11.03 V
    assert math.isclose(check.required_voltage_V[80, 0], 2.0 / math.expm1(a))  # 9.03 V
    step[80:, 0] = -1.0  # a reversal 1 A -> -1 A at step 80 is too fast
    assert check_slew(step, dt, R, L, VMAX, IMAX).failing_steps == (50, 80)
    assert not check.voltage_over_limit[:, 1:].any()
    assert not check.current_over_limit.any()
    assert math.isclose(check.required_voltage_V[51, 0], 2.0)  # holding 1 A through 2 ohm
    np.testing.assert_allclose(check.time_constant_s, L / R)
    assert not check.ok

    ramp = np.zeros((1001, 3))
    ramp[:, 0] = np.linspace(0, 1.0, 1001)  # the same 1 A over 1 s
    ok = check_slew(ramp, dt, R, L, VMAX, IMAX)
    assert ok.failing_steps == () and ok.ok
    assert ok.peak_voltage_V[0] < 2.1


def test_current_limit_and_start_from_rest():
    currents = np.array([[1.0, 0, 0], [2.5, 0, 0], [1.0, 0, 0]])
    check = check_slew(currents, 1.0, R, L, 100.0, IMAX)
    assert check.failing_steps == (1,)
    assert check.current_over_limit[1, 0] and not check.voltage_over_limit.any()
    # from rest, the first step has to ramp up too
    fast = np.full((3, 3), 1.5)
    assert check_slew(fast, 1e-4, R, L, VMAX, IMAX).failing_steps == ()
    assert check_slew(fast, 1e-4, R, L, VMAX, IMAX, initial_current_A=0.0).failing_steps == (0,)


def test_zero_inductance_needs_only_ir():
    currents = np.array([[0.0, 0, 0], [1.0, -1.0, 0.5]])
    check = check_slew(currents, 1e-6, R, 0.0, VMAX, IMAX)
    np.testing.assert_allclose(check.required_voltage_V[1], np.abs(currents[1]) * R)


@pytest.mark.parametrize(
    "kwargs, match",
    [
        (dict(dt_s=0.0), "step length"),
        (dict(resistance_hot_ohm=[1.0, 0.0, 1.0]), "axis y"),
        (dict(inductance_H=[1.0, -1.0, 1.0]), "axis y"),
        (dict(max_voltage_V=math.nan), "not finite"),
        (dict(currents_A=np.zeros((4, 2))), "shape"),
    ],
)
def test_slew_check_rejects_bad_input(kwargs, match):
    args = dict(currents_A=np.zeros((4, 3)), dt_s=1e-3, resistance_hot_ohm=R, inductance_H=L,
                max_voltage_V=VMAX, max_current_A=IMAX)
    args.update(kwargs)
    with pytest.raises(InputError, match=match):
        check_slew(**args)
