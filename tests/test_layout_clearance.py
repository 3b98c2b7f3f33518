"""cage.layout against brute force and hand computation.

- ``min_centreline_distance_m``: compared with a brute-force dense sampling of both coils of
  each pair (12,000 evenly spaced points per centreline, nearest neighbours by scipy's k-d
  tree, all four coil combinations), within 1 mm. Dense sampling can only over-estimate the
  true distance, by at most ~0.7 x the sample pitch (about 1 mm for the largest coils here)
  where the curves cross, far less elsewhere.
- ``check_layout``: envelope, room fit and clearance for a mixed cage worked by hand (frame
  half-depth across the axis, half-width along it, as the README's room rule implies).
"""
from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.spatial import cKDTree

from cage.coils import CoilCage, CoilPair
from cage.layout import FrameSpec, check_layout, min_centreline_distance_m

AXES = ("x", "y", "z")
SAMPLES = 12000
TOL_M = 1e-3


def centreline(pair: CoilPair, sign: float, n: int = SAMPLES) -> np.ndarray:
    """Evenly spaced points on one coil's centreline: square of side s, or circle of radius r,
    in the plane axis = sign x spacing / 2, centred on the axis."""
    i = AXES.index(pair.axis)
    u, v = (i + 1) % 3, (i + 2) % 3
    t = np.arange(n) / n
    pts = np.zeros((n, 3))
    pts[:, i] = sign * pair.spacing_m / 2
    if pair.shape == "round":
        pts[:, u] = pair.size_m * np.cos(2 * np.pi * t)
        pts[:, v] = pair.size_m * np.sin(2 * np.pi * t)
    else:
        h = pair.size_m / 2
        s = 4 * t
        k = np.floor(s).astype(int)
        f = s - k
        # perimeter walk: four sides of length 2h each
        start = np.array([[h, -h], [h, h], [-h, h], [-h, -h]])[k]
        direction = np.array([[0, 2 * h], [-2 * h, 0], [0, -2 * h], [2 * h, 0]])[k]
        uv = start + direction * f[:, None]
        pts[:, u], pts[:, v] = uv[:, 0], uv[:, 1]
    return pts


def _sampled_distance_m(a: CoilPair, b: CoilPair, n: int, bound: float = math.inf) -> float:
    best = math.inf
    trees = [cKDTree(centreline(b, s, n)) for s in (1.0, -1.0)]
    for sa in (1.0, -1.0):
        pa = centreline(a, sa, n)
        for tree in trees:
            best = min(best, float(np.min(tree.query(pa, distance_upper_bound=bound)[0])))
    return best


def brute_distance_m(a: CoilPair, b: CoilPair) -> float:
    """Dense sampling (SAMPLES per coil); a coarse pass first only bounds the k-d tree search
    (the true minimum is below any sampled distance), it does not pick the answer."""
    coarse = _sampled_distance_m(a, b, 1000)
    return _sampled_distance_m(a, b, SAMPLES, bound=coarse * (1 + 1e-9) + 1e-12)


def _pair(axis, shape, size, ratio):
    return CoilPair(axis, shape, float(size), float(ratio * size), 10)


axis_pairs = st.sampled_from([("x", "y"), ("x", "z"), ("y", "z"), ("z", "x"), ("y", "x")])


@settings(max_examples=10, deadline=None)
@given(axes=axis_pairs, side=st.floats(0.6, 3.0), radius=st.floats(0.3, 1.5),
       ra=st.floats(0.3, 1.2), rb=st.floats(0.3, 1.2))
def test_round_and_square_of_different_axes(axes, side, radius, ra, rb):
    a = _pair(axes[0], "round", radius, ra)
    b = _pair(axes[1], "square", side, rb)
    ours = min_centreline_distance_m(a, b)
    assert abs(ours - brute_distance_m(a, b)) <= TOL_M
    assert abs(min_centreline_distance_m(b, a) - ours) <= TOL_M


@settings(max_examples=10, deadline=None)
@given(axes=axis_pairs, sa=st.floats(0.6, 3.0), sb=st.floats(0.6, 3.0), ra=st.floats(0.3, 1.2),
       rb=st.floats(0.3, 1.2))
def test_two_squares_of_different_axes(axes, sa, sb, ra, rb):
    a = _pair(axes[0], "square", sa, ra)
    b = _pair(axes[1], "square", sb, rb)
    assert abs(min_centreline_distance_m(a, b) - brute_distance_m(a, b)) <= TOL_M


@pytest.mark.parametrize("a,b", [
    # nested flat-spaced squares as a planner would place them (tens of mm apart)
    (CoilPair("x", "square", 2.0146, 0.5445 * 2.0146, 1), CoilPair("z", "square", 1.8814, 0.5445 * 1.8814, 1)),
    # a round pair inside a square pair
    (CoilPair("z", "round", 0.9, 0.9, 1), CoilPair("y", "square", 2.0, 1.089, 1)),
    # two round pairs (their circles nearly touch)
    (CoilPair("x", "round", 1.0, 1.0, 1), CoilPair("y", "round", 1.05, 1.05, 1)),
])
def test_planner_like_cases(a, b):
    assert abs(min_centreline_distance_m(a, b) - brute_distance_m(a, b)) <= TOL_M


def test_hand_worked_square_pair_distance():
    # x pair side 2, spacing 1: coils in the planes x = +-0.5, points with |y| = 1 or |z| = 1.
    # z pair side 1.6, spacing 0.8: coils in z = +-0.4, points with |x| = 0.8 or |y| = 0.8.
    # Against x-coil points with |y| = 1 the gap is at least 1 - 0.8 = 0.2 in y, reached at
    # (0.5, 0.8, 0.4) and (0.5, 1, 0.4); against those with |z| = 1 at least 0.6 in z. So 0.2 m.
    a = CoilPair("x", "square", 2.0, 1.0, 1)
    b = CoilPair("z", "square", 1.6, 0.8, 1)
    assert min_centreline_distance_m(a, b) == pytest.approx(0.2, abs=1e-4)


def test_same_axis_is_refused():
    with pytest.raises(ValueError):
        min_centreline_distance_m(CoilPair("x", "round", 1, 1, 1), CoilPair("x", "square", 2, 1, 1))


def test_check_layout_envelope_by_hand():
    # Frame 0.04 m wide (along the coil axis) x 0.05 m deep (radial), gap 0.01.
    # x: square side 2.0, spacing 1.089 -> along x 1.089/2 + 0.02 = 0.5645; across 1.0 + 0.025 = 1.025
    # y: square side 2.2, spacing 1.2   -> along y 0.6 + 0.02 = 0.62;      across 1.1 + 0.025 = 1.125
    # z: round radius 0.9, spacing 0.9  -> along z 0.45 + 0.02 = 0.47;     across 0.9 + 0.025 = 0.925
    # half-extents: x max(0.5645, 1.125, 0.925) = 1.125; y max(1.025, 0.62, 0.925) = 1.025;
    # z max(1.025, 1.125, 0.47) = 1.125 -> envelope 2.25 x 2.05 x 2.25 m.
    cage = CoilCage(CoilPair("x", "square", 2.0, 1.089, 10), CoilPair("y", "square", 2.2, 1.2, 10),
                    CoilPair("z", "round", 0.9, 0.9, 10))
    frame = FrameSpec(width_m=0.04, depth_m=0.05, gap_m=0.01)

    class Room:  # length along x, width along y, height along z, clearance each side
        length_m, width_m, height_m, clearance_m = 3.0, 2.8, 2.8, 0.3

    lay = check_layout(cage, frame, Room)
    assert lay.envelope_m == pytest.approx((2.25, 2.05, 2.25), abs=1e-12)
    # room less 0.3 m each side: 2.4 x 2.2 x 2.2 -> z (2.25) does not fit
    assert lay.room_inner_m == pytest.approx((2.4, 2.2, 2.2), abs=1e-12)
    assert lay.fits_room is False
    Room.height_m = 2.85  # 2.25 inner: fits exactly
    assert check_layout(cage, frame, Room).fits_room is True
    # outermost first: the largest half-width across the axis (y 1.1, x 1.0, z 0.9)
    assert lay.order == ("y", "x", "z")
    # the clearance is the smallest centreline distance less the frame's circumcircle diameter
    brute = min(brute_distance_m(p, q) for p, q in ((cage.x, cage.y), (cage.x, cage.z), (cage.y, cage.z)))
    assert lay.min_distance_m == pytest.approx(brute, abs=TOL_M)
    assert lay.clearance_m == pytest.approx(lay.min_distance_m - math.hypot(0.04, 0.05), abs=1e-12)
    assert lay.nests == (lay.min_distance_m >= math.hypot(0.04, 0.05) + 0.01)


def test_square_pairs_spaced_near_their_side_regression():
    # Found by the hypothesis test above. y pair: side 1.609, spacing 1.641 (coils at
    # y = +-0.8206, points with |x| or |z| = 0.8045); z pair: side 1.7346, spacing 1.5241 (coils
    # at z = +-0.7621, points with |x| or |y| = 0.8673). The y coil's side x = 0.8045 (y = 0.8206)
    # passes the z coil's side y = 0.8673 (z = 0.7621) at (0.8045, 0.8206, 0.7621) and
    # (0.8045, 0.8673, 0.7621): 0.8673 - 0.8206 = 0.0467 m apart, by hand.
    a = CoilPair("y", "square", 1.6089741725316968, 1.6411594019668507, 1)
    b = CoilPair("z", "square", 1.734595148467573, 1.524110877939542, 1)
    by_hand = 1.734595148467573 / 2 - 1.6411594019668507 / 2
    assert brute_distance_m(a, b) == pytest.approx(by_hand, abs=TOL_M)
    assert min_centreline_distance_m(a, b) == pytest.approx(by_hand, abs=TOL_M)
