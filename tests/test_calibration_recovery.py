"""Calibration fit B = B0 + K I: recovery of a known synthetic truth, agreement with
numpy.linalg.lstsq, build check against scipy's rotations and Rodrigues' formula, and the
calibration file round trip.

The reference of the recovery tests is the synthetic truth the readings are made from
(K, B0 chosen here, Gaussian noise of known sigma, outliers at known rows).
"""
import json
import math

import numpy as np
import pytest
from scipy.spatial.transform import Rotation

from cage.calibrate import (
    build_check,
    calibration_summary,
    check_current_set,
    currents_for_field_A,
    design_condition_number,
    fit_calibration,
    suggest_currents_A,
)
from cage.calibrationfile import load_calibration, load_calibration_record, save_calibration
from cage.errors import InfeasibleError, InputError

DESIGN_K = np.diag([50_000.0, 49_000.0, 51_000.0])  # nT/A, an invented ideal cage
TRUE_B0 = np.array([18_000.0, -1_500.0, 43_000.0])  # nT, invented site + building + offset
MAX_A = np.array([2.0, 2.0, 1.5])


def true_coupling():
    """Design K with per-axis scale errors (+2, -1.5, +3 %), each column turned by about
    0.5 degrees about its own axis, and small cross terms (the synthetic truth)."""
    scales = np.array([1.02, 0.985, 1.03])
    k = DESIGN_K * scales
    cols = []
    for j, axis in enumerate(([0, 1, 1], [1, 0, 1], [1, 1, 0])):
        rot = Rotation.from_rotvec(np.radians(0.5) * np.array(axis) / np.linalg.norm(axis))
        cols.append(rot.apply(k[:, j]))
    k = np.column_stack(cols)
    k += np.array([[0, 60, -40], [25, 0, 80], [-70, 30, 0]])  # cross terms, nT/A
    return k


def synthetic_readings(seed=7, n_random=20, outliers=True, sigma_nT=3.0):
    rng = np.random.default_rng(seed)
    currents = np.vstack([suggest_currents_A(MAX_A), rng.uniform(-1, 1, (n_random, 3)) * 0.8 * MAX_A])
    k = true_coupling()
    field = TRUE_B0 + currents @ k.T + rng.normal(0.0, sigma_nT, currents.shape)
    bad = (5, 31)
    if outliers:
        field[5, 1] += 2_000.0
        field[31] += np.array([-2_000.0, 1_000.0, 500.0])
    return currents, field, k, bad


def test_recovers_known_coupling_and_offset_despite_outliers():
    currents, field, k_true, bad = synthetic_readings()
    fit = fit_calibration(currents, field)
    # reference: the synthetic truth
    rel_frob = np.linalg.norm(fit.coupling_nT_per_A - k_true) / np.linalg.norm(k_true)
    assert rel_frob < 0.003
    per_element = np.abs(fit.coupling_nT_per_A - k_true) / np.linalg.norm(k_true, axis=0)
    assert per_element.max() < 0.003
    assert np.all(np.abs(fit.offset_nT - TRUE_B0) < 5.0)
    assert fit.outlier_rows == bad and fit.n_outliers == 2
    assert fit.n_rows == len(currents)
    # noise sigma 3 nT per component: inlier RMS of the 3-component norm ~ sqrt(3) * 3 nT
    assert 0.7 * math.sqrt(3) * 3 < fit.rms_residual_nT < 1.3 * math.sqrt(3) * 3
    assert fit.rms_residual_all_nT > 100  # the outliers are in this one
    assert 2.0 < fit.noise_sigma_nT < 4.0
    # corrected null: the true field at the corrected currents
    i_null = currents_for_field_A(fit, [0, 0, 0])
    assert np.linalg.norm(TRUE_B0 + k_true @ i_null) < 10.0
    np.testing.assert_allclose(fit.null_current_A, i_null)


def test_plain_least_squares_would_miss_by_more_than_robust_fit():
    # the outliers matter: an ordinary fit on all rows (numpy.linalg.lstsq) is worse
    currents, field, k_true, _ = synthetic_readings()
    a = np.column_stack([np.ones(len(currents)), currents])
    x, *_ = np.linalg.lstsq(a, field, rcond=None)
    fit = fit_calibration(currents, field)
    err_ols = np.linalg.norm(x[0] - TRUE_B0)
    err_fit = np.linalg.norm(fit.offset_nT - TRUE_B0)
    assert err_fit < err_ols / 5


@pytest.mark.parametrize("loss", ["soft_l1", "huber"])
def test_without_outliers_matches_numpy_lstsq(loss):
    # independent solver: numpy.linalg.lstsq on the design matrix [1, I]
    currents, field, _, _ = synthetic_readings(seed=3, outliers=False)
    fit = fit_calibration(currents, field, loss=loss)
    assert fit.n_outliers == 0
    a = np.column_stack([np.ones(len(currents)), currents])
    x, res, *_ = np.linalg.lstsq(a, field, rcond=None)
    np.testing.assert_allclose(fit.offset_nT, x[0], rtol=0, atol=1e-8)
    np.testing.assert_allclose(fit.coupling_nT_per_A, x[1:].T, rtol=1e-12, atol=1e-8)
    # residual sum of squares as lstsq reports it
    assert math.isclose(fit.rms_residual_nT ** 2 * len(currents), res.sum(), rel_tol=1e-9)
    assert fit.rms_residual_nT == fit.rms_residual_all_nT


def test_standard_errors_match_monte_carlo_spread():
    # Gauss-Markov: cov = sigma^2 (A^T A)^-1; checked against the spread over repeated noise
    rng = np.random.default_rng(11)
    currents = suggest_currents_A(MAX_A)
    k_true = true_coupling()
    fits = []
    for _ in range(300):
        field = TRUE_B0 + currents @ k_true.T + rng.normal(0, 3.0, currents.shape)
        fits.append(fit_calibration(currents, field, loss="linear"))
    k_spread = np.std([f.coupling_nT_per_A for f in fits], axis=0, ddof=1)
    b_spread = np.std([f.offset_nT for f in fits], axis=0, ddof=1)
    k_se = np.mean([f.coupling_stderr_nT_per_A for f in fits], axis=0)
    b_se = np.mean([f.offset_stderr_nT for f in fits], axis=0)
    np.testing.assert_allclose(k_se, k_spread, rtol=0.2)
    np.testing.assert_allclose(b_se, b_spread, rtol=0.2)


def test_exactly_four_sets_solve_exactly_and_flag_nothing():
    k_true = true_coupling()
    currents = np.array([[0, 0, 0], [1.0, 0, 0], [0, 1.0, 0], [0, 0, 1.0]])
    field = TRUE_B0 + currents @ k_true.T
    fit = fit_calibration(currents, field)
    np.testing.assert_allclose(fit.coupling_nT_per_A, k_true, rtol=1e-10)
    np.testing.assert_allclose(fit.offset_nT, TRUE_B0, rtol=1e-12)
    assert fit.n_outliers == 0
    assert np.all(np.isnan(fit.coupling_stderr_nT_per_A))  # no spare rows


def test_target_field_is_made_by_the_fit():
    currents, field, _, _ = synthetic_readings(outliers=False)
    fit = fit_calibration(currents, field)
    targets = np.array([[0, 0, 0], [30_000, 0, 0], [0, -20_000, 10_000.0]])
    i = currents_for_field_A(fit, targets)
    np.testing.assert_allclose(fit.predict_nT(i), targets, atol=1e-6)


def test_dead_coil_makes_null_infeasible():
    k = true_coupling()
    k[:, 2] = 0.0  # the z coil is not connected
    currents = suggest_currents_A(MAX_A)
    field = TRUE_B0 + currents @ k.T
    fit = fit_calibration(currents, field)
    with pytest.raises(InfeasibleError, match="singular"):
        fit.null_current_A
    summary = calibration_summary(fit)
    assert summary["null_current_A"] is None and "singular" in summary["null_current_note"]


# ---- build check ----------------------------------------------------------------------


def test_rotation_about_z_gives_that_misalignment():
    # rotating the whole cage about z by 0.7 degrees turns the x and y axes by 0.7 degrees
    # and leaves z; rotations keep angles, so no non-orthogonality (scipy Rotation)
    rot = Rotation.from_euler("z", 0.7, degrees=True).as_matrix()
    check = build_check(rot @ DESIGN_K, DESIGN_K)
    np.testing.assert_allclose(check.misalignment_deg, [0.7, 0.7, 0.0], atol=1e-9)
    np.testing.assert_allclose(check.scale_error_percent, 0.0, atol=1e-9)
    for v in check.non_orthogonality_deg.values():
        assert abs(v) < 1e-9


def test_rotation_about_general_axis_matches_rodrigues():
    # Rodrigues' rotation formula: the angle phi between e_j and R e_j for a rotation by
    # theta about unit axis n satisfies cos phi = cos theta + (1 - cos theta) n_j^2
    n = np.array([1.0, 2.0, 2.0]) / 3.0
    theta = np.radians(1.3)
    rot = Rotation.from_rotvec(theta * n).as_matrix()
    check = build_check(rot @ DESIGN_K, DESIGN_K)
    expected = np.degrees(np.arccos(np.cos(theta) + (1 - np.cos(theta)) * n ** 2))
    np.testing.assert_allclose(check.misalignment_deg, expected, rtol=1e-6)


def test_known_scale_and_known_shear():
    k = DESIGN_K * np.array([1.02, 0.97, 1.0])
    delta = np.radians(0.4)
    k[:, 1] = 0.97 * 49_000.0 * np.array([np.sin(delta), np.cos(delta), 0.0])  # y leans toward x
    check = build_check(k, DESIGN_K)
    np.testing.assert_allclose(check.scale_error_percent, [2.0, -3.0, 0.0], atol=1e-9)
    assert math.isclose(check.non_orthogonality_deg["xy"], -0.4, abs_tol=1e-9)
    assert abs(check.non_orthogonality_deg["yz"]) < 1e-9
    assert abs(check.non_orthogonality_deg["zx"]) < 1e-9
    np.testing.assert_allclose(check.misalignment_deg, [0.0, 0.4, 0.0], atol=1e-9)


def test_reversed_axis_shows_as_180_degrees():
    k = DESIGN_K.copy()
    k[:, 1] *= -1
    check = build_check(k, DESIGN_K)
    assert math.isclose(check.misalignment_deg[1], 180.0, abs_tol=1e-9)


def test_fit_of_built_cage_reports_its_build_errors():
    currents, field, k_true, _ = synthetic_readings(outliers=False)
    fit = fit_calibration(currents, field)
    check = build_check(fit, DESIGN_K)
    truth = build_check(k_true, DESIGN_K)  # reference: the build errors put into the truth
    np.testing.assert_allclose(check.scale_error_percent, truth.scale_error_percent, atol=0.01)
    np.testing.assert_allclose(check.misalignment_deg, truth.misalignment_deg, atol=0.01)
    np.testing.assert_allclose(check.scale_error_percent, [2.0, -1.5, 3.0], atol=0.05)


# ---- suggested current set ------------------------------------------------------------


def test_suggested_set_is_orthogonal_and_within_limits():
    table = suggest_currents_A(MAX_A)
    assert table.shape[0] >= 10 and table.shape[1] == 3
    assert np.all(np.abs(table) <= 0.8 * MAX_A + 1e-12)
    np.testing.assert_array_equal(table[0], 0.0)
    np.testing.assert_array_equal(table[-1], 0.0)
    # balanced +/- levels plus a full 2^3 factorial: the centred columns are orthogonal, so
    # the unit-column design matrix has condition number 1 (design of experiments, common
    # practice); checked with numpy.linalg.cond
    a = np.column_stack([np.ones(len(table)), table])
    cond = np.linalg.cond(a / np.linalg.norm(a, axis=0))
    assert math.isclose(cond, 1.0, abs_tol=1e-9)
    assert math.isclose(design_condition_number(table), cond)
    # Gray-code corners: one axis changes per step among the 8 corners
    corners = table[-9:-1]
    assert np.all((np.abs(np.diff(corners, axis=0)) > 0).sum(axis=1) == 1)


@pytest.mark.parametrize("unipolar", [True, (True, False, True), (False, False, True)])
def test_suggested_set_for_unipolar_supplies(unipolar):
    table = suggest_currents_A(MAX_A, unipolar=unipolar)
    flags = np.broadcast_to(unipolar, (3,))
    assert np.all(table[:, flags] >= 0)
    assert np.all(np.abs(table) <= 0.8 * MAX_A + 1e-12)
    check_current_set(table)  # full rank
    cond = design_condition_number(table)
    assert cond < 5.0  # measured 3.7 for all unipolar
    k_true = true_coupling()
    field = TRUE_B0 + table @ k_true.T + np.random.default_rng(2).normal(0, 3.0, table.shape)
    fit = fit_calibration(table, field)
    assert np.linalg.norm(fit.coupling_nT_per_A - k_true) / np.linalg.norm(k_true) < 0.003


def test_suggested_set_rejects_bad_limits():
    with pytest.raises(InputError, match="axis y"):
        suggest_currents_A([2.0, 0.0, 1.0])
    with pytest.raises(InputError, match="fraction"):
        suggest_currents_A(2.0, fraction=1.5)


# ---- summary and calibration file -----------------------------------------------------


def test_summary_has_the_keys_and_is_strict_json():
    currents, field, _, _ = synthetic_readings()
    fit = fit_calibration(currents, field, source_file="run1.csv")
    summary = calibration_summary(fit, build_check(fit, DESIGN_K), line_numbers=range(2, 2 + len(currents)))
    text = json.dumps(summary, allow_nan=False)
    back = json.loads(text)
    assert len(back["coupling_nT_per_A"]) == 3 and all(len(r) == 3 for r in back["coupling_nT_per_A"])
    assert len(back["offset_nT"]) == 3
    assert set(back["null_current_A"]) == {"x", "y", "z"}
    assert back["outlier_rows"] == [5, 31] and back["outlier_lines"] == [7, 33]
    assert set(back["build_check"]["non_orthogonality_deg"]) == {"xy", "yz", "zx"}
    for key in ("rms_residual_nT", "condition_number", "n_outliers", "source_file"):
        assert key in back


def test_calibration_file_round_trip(tmp_path):
    currents, field, _, _ = synthetic_readings()
    fit = fit_calibration(currents, field, source_file="run1.csv")
    path = save_calibration(tmp_path / "cal.json", fit, design="cage.json", design_checksum="abc123")
    doc = json.loads(path.read_text())
    assert doc["format"] == "cage-calibration" and doc["version"] == 1
    record = load_calibration_record(path)
    back = load_calibration(path)
    np.testing.assert_array_equal(back.coupling_nT_per_A, fit.coupling_nT_per_A)
    np.testing.assert_array_equal(back.offset_nT, fit.offset_nT)
    np.testing.assert_array_equal(back.coupling_stderr_nT_per_A, fit.coupling_stderr_nT_per_A)
    assert back.outlier_rows == fit.outlier_rows and back.n_rows == fit.n_rows
    assert back.rms_residual_nT == fit.rms_residual_nT
    assert back.source_file == "run1.csv"
    assert record.design == "cage.json" and record.design_checksum == "abc123"
    np.testing.assert_array_equal(back.null_current_A, fit.null_current_A)
    assert not list(tmp_path.glob(".*tmp"))  # atomic write left no temporary file
