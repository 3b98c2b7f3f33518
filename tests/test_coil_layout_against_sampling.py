"""Frames of every coil (cage.coillayout) against brute-force sampling of the centrelines, and
against the pair layout (cage.layout) for cages of pairs."""
import numpy as np
import pytest

from cage.coilaxis import AxisCage
from cage.coillayout import (
    axes_envelope_m,
    axis_clears,
    check_axes_layout,
    coil_distance_m,
    smallest_nesting_axis_size_m,
)
from cage.coils import AXES, CoilCage, CoilPair
from cage.coilsystems import system_axis
from cage.layout import FrameSpec, check_layout, envelope_m

FRAME = FrameSpec(0.04, 0.04, 0.01)


def _sample(ax, c, n=4000):
    a = AXES.index(ax.axis)
    u, v = (a + 1) % 3, (a + 2) % 3
    t = np.arange(n) / n
    pts = np.zeros((n, 3))
    pts[:, a] = c.position_m
    if ax.shape == "round":
        pts[:, u] = c.size_m * np.cos(2 * np.pi * t)
        pts[:, v] = c.size_m * np.sin(2 * np.pi * t)
    else:
        h = c.size_m / 2
        s = t * 4
        k = np.minimum(s.astype(int), 3)
        f = s - k
        corners = np.array([[h, -h], [h, h], [-h, h], [-h, -h], [h, -h]])
        uv = corners[k] + (corners[k + 1] - corners[k]) * f[:, None]
        pts[:, u], pts[:, v] = uv[:, 0], uv[:, 1]
    return pts


def _brute(ax_a, ca, ax_b, cb):
    pa, pb = _sample(ax_a, ca, 800), _sample(ax_b, cb, 800)
    best = np.inf
    for chunk in np.array_split(pa, 4):
        best = min(best, float(np.min(np.linalg.norm(chunk[:, None, :] - pb[None, :, :], axis=-1))))
    return best


@pytest.mark.parametrize("shapes", [("square", "square"), ("square", "round"), ("round", "square"),
                                    ("round", "round")])
def test_coil_distances_against_sampling(shapes):
    a = system_axis("x", shapes[0], "four", 1.6 if shapes[0] == "square" else 0.8)
    b = system_axis("y", shapes[1], "three", 1.4 if shapes[1] == "square" else 0.7)
    for ca in [c for c in a.coils if c.position_m > 0]:  # the mirror images give the same distances
        for cb in b.coils:
            exact = coil_distance_m(a, ca, b, cb)
            sampled = _brute(a, ca, b, cb)
            # the exact distance is never above the sampled one, and within the sampling step of it
            assert exact <= sampled + 1e-12
            assert sampled - exact < 4 * 1.6 / 800


def test_pairs_give_the_pair_layout():
    rng = np.random.default_rng(5)
    for _ in range(10):
        pairs = []
        for name in AXES:
            shape = ["square", "round"][rng.integers(2)]
            size = rng.uniform(0.5, 2.0)
            pairs.append(CoilPair(name, shape, size, rng.uniform(0.3, 1.0) * size, 1))
        cage = CoilCage(*pairs)
        old = check_layout(cage, FRAME)
        new = check_axes_layout(AxisCage.from_cage(cage), FRAME)
        assert new.min_distance_m == pytest.approx(old.min_distance_m, abs=1e-9)
        assert new.envelope_m == pytest.approx(old.envelope_m)
        assert new.order == old.order and new.nests == old.nests
        np.testing.assert_allclose(axes_envelope_m(AxisCage.from_cage(cage), FRAME), envelope_m(cage, FRAME))


def test_nesting_a_four_coil_axis_around_two_inner_ones():
    inner = [system_axis("y", "square", "four", 1.45), system_axis("z", "square", "four", 1.42)]
    size = smallest_nesting_axis_size_m("x", "square", "four", inner, FRAME, 1.42)
    assert axis_clears(system_axis("x", "square", "four", size), inner, FRAME)
    assert not axis_clears(system_axis("x", "square", "four", size - 0.002), inner, FRAME)


def test_clearance_decision_against_sampling():
    """axes_clear (samples with a Lipschitz bound, refined near the edge) against brute-force
    sampling of both centrelines, for needs just above and just below the sampled distance,
    and against the exact distance of axes_min_distance_m for needs within 1e-6 m of it."""
    from cage.coillayout import axes_clear, axes_min_distance_m

    rng = np.random.default_rng(11)
    systems = {"square": ["pair", "three", "four"], "round": ["pair", "three", "four", "four-equal"]}
    for _ in range(12):
        sa, sb = rng.choice(["square", "round"], 2)
        a = system_axis("x", sa, rng.choice(systems[sa]), rng.uniform(0.5, 2.0))
        b = system_axis(["y", "z"][rng.integers(2)], sb, rng.choice(systems[sb]), rng.uniform(0.5, 2.0))
        brute = min(_brute(a, ca, b, cb) for ca in a.coils for cb in b.coils)
        # 1-Lipschitz along each centreline: the true distance is within half a sample step on
        # each curve below the brute-force one
        perimeter = [(2 * np.pi if ax.shape == "round" else 4.0) * ax.size_m for ax in (a, b)]
        slack = sum(perimeter) / (2 * 800)
        assert not axes_clear(a, b, brute + 1e-9)
        assert axes_clear(a, b, brute - slack - 1e-9)
        exact = axes_min_distance_m(a, b)
        assert axes_clear(a, b, exact - 1e-6) and not axes_clear(a, b, exact + 1e-6)


def test_pair_clearance_decision_against_sampling():
    """cage.layout.pairs_clear (the pair planner's nesting test) against brute-force sampling of
    all four coils' centrelines, needs just above and just below the sampled distance."""
    from cage.layout import pairs_clear

    rng = np.random.default_rng(12)
    for _ in range(12):
        sa, sb = rng.choice(["square", "round"], 2)
        pa = CoilPair("x", sa, rng.uniform(0.5, 2.0), rng.uniform(0.3, 1.8), 1)
        pb = CoilPair(["y", "z"][rng.integers(2)], sb, rng.uniform(0.5, 2.0), rng.uniform(0.3, 1.8), 1)
        from cage.coilaxis import axis_from_pair

        a, b = axis_from_pair(pa), axis_from_pair(pb)
        brute = min(_brute(a, ca, b, cb) for ca in a.coils for cb in b.coils)
        perimeter = [(2 * np.pi if p.shape == "round" else 4.0) * p.size_m for p in (pa, pb)]
        slack = sum(perimeter) / (2 * 800)
        assert not pairs_clear(pa, pb, brute + 1e-9)
        assert pairs_clear(pa, pb, brute - slack - 1e-9)
