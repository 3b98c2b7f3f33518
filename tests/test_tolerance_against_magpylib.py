"""Monte Carlo of built round pairs against an independent Monte Carlo written with magpylib."""
import math

import numpy as np
import pytest

magpylib = pytest.importorskip("magpylib")
from scipy.spatial.transform import Rotation  # noqa: E402

from cage.coils import CoilPair  # noqa: E402
from cage.buildyield import monte_carlo  # noqa: E402
from cage.tolerance import BuildErrors, pair_system  # noqa: E402

R = 1.0
SIDE = 1.8
SPACING_SQUARE = 0.5445 * SIDE  # Firester, Rev. Sci. Instrum. 37, 1264 (1966)
TURNS = 10
BOX = 0.3
N = 200
ERRORS = BuildErrors(position_m=3e-3, tilt_rad=math.radians(0.3), size_m=3e-3, turns=0.3,
                     orthogonality_rad=math.radians(0.1), imbalance=2e-3)


def box_surface(side, n=9):
    t = np.linspace(-side / 2, side / 2, n)
    g = np.stack(np.meshgrid(t, t, t, indexing="ij"), axis=-1).reshape(-1, 3)
    return g[np.any(np.isclose(np.abs(g), side / 2), axis=1)]


def square_coil(current, side, centre, orient):
    """A closed square, counter-clockwise seen from the +normal side (normal = orient applied to z)."""
    h = side / 2
    local = np.array([[h, -h, 0], [h, h, 0], [-h, h, 0], [-h, -h, 0], [h, -h, 0]], dtype=float)
    return magpylib.current.Polyline(current=current, vertices=orient.apply(local) + centre)


def magpylib_deviations(errors, n, seed, shape="round"):
    """Independent sampling and fields: magpylib Circle / Polyline sources, rotations by scipy."""
    rng = np.random.default_rng(seed)
    pts = np.vstack([np.zeros((1, 3)), box_surface(BOX)])
    to_x = Rotation.from_rotvec([0.0, math.pi / 2, 0.0])  # a Circle's normal z turned onto x
    out = []
    for _ in range(n):
        axis_rot = Rotation.from_rotvec([0.0, rng.normal(0, errors.orthogonality_rad),
                                         rng.normal(0, errors.orthogonality_rad)])
        coils = []
        for x0 in (+R / 2, -R / 2):
            shift = rng.normal(0, errors.position_m)
            tilt = Rotation.from_rotvec([0.0, rng.normal(0, errors.tilt_rad), rng.normal(0, errors.tilt_rad)])
            size = (R if shape == "round" else SIDE) + rng.normal(0, errors.size_m)
            turns = TURNS + round(rng.normal(0, errors.turns))
            current = turns * (1 + rng.normal(0, errors.imbalance))
            x_plane = x0 if shape == "round" else x0 * SPACING_SQUARE / R
            centre = axis_rot.apply([x_plane + shift, 0.0, 0.0])
            orient = axis_rot * tilt * to_x
            if shape == "round":
                coils.append(magpylib.current.Circle(current=current, diameter=2 * size, position=centre,
                                                     orientation=orient))
            else:
                coils.append(square_coil(current, size, centre, orient))
        b = magpylib.getB(coils, pts, sumup=True)
        d = np.linalg.norm(b[1:] - b[0], axis=1).max() / np.linalg.norm(b[0])
        out.append(d)
    return np.array(out)


def ks_statistic(a, b):
    both = np.sort(np.concatenate([a, b]))
    fa = np.searchsorted(np.sort(a), both, side="right") / len(a)
    fb = np.searchsorted(np.sort(b), both, side="right") / len(b)
    return np.abs(fa - fb).max()


def ks_critical(n, m, c_alpha=1.628):
    # Two-sample Kolmogorov-Smirnov critical value at alpha = 0.01 (c(alpha) = 1.628,
    # standard asymptotic table).
    return c_alpha * math.sqrt((n + m) / (n * m))


def cage_deviations(errors, seed, shape="round"):
    if shape == "round":
        systems = [pair_system(CoilPair(a, "round", R, R, TURNS)) for a in ("x", "y", "z")]
    else:
        systems = [pair_system(CoilPair(a, "square", SIDE, SPACING_SQUARE, TURNS)) for a in ("x", "y", "z")]
    mc = monte_carlo(systems, (BOX,) * 3, 1e-3, errors, N, seed)
    return mc.axes[0].deviation


def test_same_distribution_of_uniformity_as_magpylib():
    ours = cage_deviations(ERRORS, seed=11)
    theirs = magpylib_deviations(ERRORS, N, seed=12345)
    assert ks_statistic(ours, theirs) < ks_critical(N, N)
    # The comparison has power: a build twice as tilted is told apart.
    tilted = cage_deviations(BuildErrors(**{**ERRORS.__dict__, "tilt_rad": 2 * ERRORS.tilt_rad}), seed=11)
    assert ks_statistic(tilted, theirs) > ks_critical(N, N)


def test_same_distribution_for_a_square_pair():
    ours = cage_deviations(ERRORS, seed=21, shape="square")
    theirs = magpylib_deviations(ERRORS, N, seed=54321, shape="square")
    assert ks_statistic(ours, theirs) < ks_critical(N, N)
