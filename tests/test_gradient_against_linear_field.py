"""Survey fit against a field with a known uniform part and linear gradient."""
import itertools

import numpy as np
import pytest

from cage.errors import InputError
from cage.gradient import fit_gradient, residual_after_null_nT

# A gradient that a current-free room can hold: symmetric and traceless (Maxwell's equations).
G = np.array([[12.0, -5.0, 3.0], [-5.0, -20.0, 7.0], [3.0, 7.0, 8.0]])  # nT/m
B0 = np.array([18000.0, -1200.0, 45000.0])  # nT


def survey(points):
    return B0 + points @ G.T


def test_known_gradient_and_residual_come_back():
    rng = np.random.default_rng(3)
    pts = rng.uniform(-0.8, 0.8, size=(9, 3))
    fit = fit_gradient(pts, survey(pts))
    np.testing.assert_allclose(fit.gradient_nT_per_m, G, atol=1e-8)
    np.testing.assert_allclose(fit.centre_nT, B0, atol=1e-8)
    assert fit.rms_misfit_nT < 1e-8
    box = np.array([0.4, 0.5, 0.6])
    per, worst, rms = residual_after_null_nT(fit.gradient_nT_per_m, box)
    # Direct check: the residual G p over a dense grid of the box (corners included).
    t = [np.linspace(-s / 2, s / 2, 11) for s in box]
    grid = np.stack(np.meshgrid(*t, indexing="ij"), -1).reshape(-1, 3)
    res = grid @ G.T
    assert worst == pytest.approx(np.linalg.norm(res, axis=1).max(), rel=1e-9)
    np.testing.assert_allclose(per, np.abs(res).max(axis=0), rtol=1e-9)
    # RMS over the volume: the grid mean converges to it (Simpson-free check with a fine grid).
    t = [np.linspace(-s / 2, s / 2, 81) for s in box]
    fine = np.stack(np.meshgrid(*t, indexing="ij"), -1).reshape(-1, 3) @ G.T
    assert rms == pytest.approx(np.sqrt(np.mean(np.sum(fine**2, axis=1))), rel=0.03)
    # Hand value for one corner: G (0.2, 0.25, 0.3) = (2.4 - 1.25 + 0.9, -1 - 5 + 2.1, 0.6 + 1.75 + 2.4).
    corner = np.array([0.2, 0.25, 0.3])
    np.testing.assert_allclose(G @ corner, [2.05, -3.9, 4.75])


def test_noisy_survey_fits_within_noise():
    rng = np.random.default_rng(5)
    pts = np.array(list(itertools.product((-0.5, 0.5), repeat=3)) + [[0, 0, 0]], dtype=float)
    fit = fit_gradient(pts, survey(pts) + rng.normal(0, 1.0, size=(9, 3)))
    assert np.abs(fit.gradient_nT_per_m - G).max() < 3.0  # 1 nT noise over 1 m baselines
    assert 0.2 < fit.rms_misfit_nT < 2.0


def test_flat_survey_is_refused():
    pts = np.array([[0, 0, 0], [1, 0, 0], [2, 0, 0], [3, 0, 0.0]])
    with pytest.raises(InputError):
        fit_gradient(pts, survey(pts))
