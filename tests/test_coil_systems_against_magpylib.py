"""Multi-coil axes (cage.coilaxis, cage.coilsystems, cage.axissizing) against magpylib.

magpylib 6.x (reference Biot-Savart library): ``magpylib.current.Circle`` and
``magpylib.current.Polyline``; getB returns tesla. Every magpylib source here is built from the
written definitions (the design file's coils, or the system's positions), not from our
filaments.
"""
import json
import math

import numpy as np
import pytest
from scipy.spatial.transform import Rotation

magpy = pytest.importorskip("magpylib")

from cage.axissizing import (  # noqa: E402
    axis_deviation,
    axis_sensitivity,
    deviation_with_error,
    smallest_uniform_axis,
)
from cage.coilaxis import AxisCage, axis_field_T  # noqa: E402
from cage.coils import AXES  # noqa: E402
from cage.coilsystems import system_axis  # noqa: E402
from cage.designfile import AxisDesign, Design, field_T, load_design, save_design  # noqa: E402


def _mag_coil(axis, shape, position_m, size_m, amp_turns, tilt_deg=0.0):
    """One coil from the design file's definition: plane axis = position, right-handed about +axis."""
    i = AXES.index(axis)
    iu, iv = (i + 1) % 3, (i + 2) % 3
    centre = np.zeros(3)
    centre[i] = position_m
    tilt = np.zeros(3)
    tilt[iu] = math.radians(tilt_deg)
    rot_tilt = Rotation.from_rotvec(tilt)
    if shape == "round":
        normal = np.zeros(3)
        normal[i] = 1.0
        rot, _ = Rotation.align_vectors([rot_tilt.apply(normal)], [[0.0, 0.0, 1.0]])
        return magpy.current.Circle(current=amp_turns, diameter=2 * size_m, position=centre, orientation=rot)
    h = size_m / 2
    verts = np.zeros((4, 3))
    verts[:, iu] = (h, h, -h, -h)
    verts[:, iv] = (-h, h, h, -h)
    verts = rot_tilt.apply(verts) + centre
    return magpy.current.Polyline(current=amp_turns, vertices=np.vstack([verts, verts[:1]]))


def _mag_axis(ax, shift_index=None, shift_m=0.0, tilt_deg=0.0):
    return magpy.Collection(*[
        _mag_coil(ax.axis, ax.shape, c.position_m + (shift_m if k == shift_index else 0.0), c.size_m, c.turns,
                  tilt_deg if k == shift_index else 0.0)
        for k, c in enumerate(ax.coils)])


def _cube_surface(side, n=25):
    t = np.linspace(-1, 1, n)
    g = np.stack(np.meshgrid(t, t, t, indexing="ij"), -1).reshape(-1, 3)
    return g[np.any(np.abs(g) == 1, axis=1)] * side / 2


def _mag_deviation(source, pts):
    b = source.getB(np.vstack([np.zeros((1, 3)), pts]))
    return float(np.max(np.linalg.norm(b[1:] - b[0], axis=1)) / np.linalg.norm(b[0]))


def _largest_cube(dev, upper):
    lo, hi = 0.0, upper
    while hi - lo > 1e-4 * upper:
        mid = (lo + hi) / 2
        lo, hi = (mid, hi) if dev(mid) <= 1e-3 else (lo, mid)
    return lo


def test_four_square_coils_give_a_far_larger_uniform_cube_than_the_pair_at_equal_size():
    # Issue 16: at equal outer size (side 1 m) the 0.1 % cube of the four-square-coil system
    # (Merritt et al. 1983) is at least 2.5 x the pair's side.
    pair = system_axis("x", "square", "pair", 1.0)
    four = system_axis("x", "square", "four", 1.0)
    cube_pair = _largest_cube(lambda s: axis_deviation(pair, box_m=(s, s, s)), 0.5)
    cube_four = _largest_cube(lambda s: axis_deviation(four, box_m=(s, s, s)), 0.9)
    assert cube_four >= 2.5 * cube_pair
    # magpylib on a finer grid (25 x 25 per face): the cubes hold, and 3 % larger ones do not
    for ax, side in ((pair, cube_pair), (four, cube_four)):
        src = _mag_axis(ax)
        assert _mag_deviation(src, _cube_surface(side)) <= 1e-3 * 1.002
        assert _mag_deviation(src, _cube_surface(1.03 * side)) > 1e-3
    assert cube_four / cube_pair > 2.5


@pytest.mark.parametrize("shape,system", [("square", "pair"), ("square", "three"), ("square", "four"),
                                          ("round", "pair"), ("round", "three"), ("round", "four"),
                                          ("round", "four-equal")])
def test_smallest_uniform_axis_meets_the_tolerance_in_magpylib(shape, system):
    box = (0.5, 0.4, 0.3)
    r = smallest_uniform_axis("y", shape, system, 1e-3, box_m=box)
    assert r.deviation <= 1e-3
    pts = _cube_surface(1.0, 21) * np.array(box)
    # magpylib, finer grid: within the tolerance (0.5 % slack for the 9 x 9 planning grid)
    assert _mag_deviation(_mag_axis(r.coil_axis), pts) <= 1e-3 * 1.005
    # 2 % smaller misses it
    smaller = system_axis("y", shape, system, 0.98 * r.size_m)
    assert _mag_deviation(_mag_axis(smaller), pts) > 1e-3


def test_sphere_volume_sizing_against_magpylib():
    r = smallest_uniform_axis("z", "round", "four", 1e-4, sphere_radius_m=0.2)
    rng = np.random.default_rng(3)
    d = rng.normal(size=(3000, 3))
    pts = 0.2 * d / np.linalg.norm(d, axis=1)[:, None]
    assert _mag_deviation(_mag_axis(r.coil_axis), pts) <= 1e-4 * 1.01


def _multi_coil_design():
    return Design(axes=(
        AxisDesign(pair=None, coil_axis=system_axis("x", "square", "four", 1.9, multiplier=2), wire="AWG 18"),
        AxisDesign(pair=None, coil_axis=system_axis("y", "round", "four", 0.85, multiplier=30)),
        AxisDesign(pair=None, coil_axis=system_axis("z", "round", "three", 0.8, multiplier=1)),
    ), requirement={"test_volume_m": [0.5, 0.5, 0.5], "uniformity": 0.001})


def test_v2_design_file_rebuilt_in_magpylib(tmp_path):
    path = tmp_path / "design.json"
    save_design(path, _multi_coil_design())
    raw = json.loads(path.read_text())
    assert raw["version"] == 2
    design = load_design(path)
    box = np.array(raw["requirement"]["test_volume_m"])
    pts = _cube_surface(1.0, 17) * box
    for name in AXES:
        entry = raw["axes"][name]
        key = "side_m" if entry["shape"] == "square" else "radius_m"
        src = magpy.Collection(*[_mag_coil(name, entry["shape"], c["position_m"], c[key], c["turns"])
                                 for c in entry["coils"]])
        currents = {a: (1.0 if a == name else 0.0) for a in AXES}
        ours_centre = field_T(design, currents, np.zeros(3))
        ref_centre = src.getB(np.zeros(3))
        np.testing.assert_allclose(ours_centre, ref_centre, rtol=1e-10, atol=1e-18)
        ours = axis_deviation(design.axis(name).coil_axis, box_m=box)
        ref = _mag_deviation(src, pts)
        assert ours == pytest.approx(ref, rel=0.02)
    # the whole cage at random points away from the wires
    rng = np.random.default_rng(7)
    p = rng.uniform(-0.3, 0.3, size=(200, 3))
    cur = (0.7, -1.3, 0.4)
    ref = sum(c * magpy.Collection(*[
        _mag_coil(name, raw["axes"][name]["shape"], k["position_m"],
                  k["side_m" if raw["axes"][name]["shape"] == "square" else "radius_m"], k["turns"])
        for k in raw["axes"][name]["coils"]]).getB(p) for name, c in zip(AXES, cur))
    np.testing.assert_allclose(field_T(design, cur, p), ref, rtol=1e-9, atol=1e-16)


def test_pair_as_two_coil_axis_gives_the_pair_field():
    from cage.coilaxis import axis_from_pair
    from cage.coilaxis import axis_cage_field_T
    from cage.coils import CoilCage, CoilPair, cage_field_T, pair_field_T

    pair = CoilPair("z", "square", 1.3, 0.7, 17)
    pts = np.random.default_rng(1).uniform(-0.4, 0.4, size=(100, 3))
    np.testing.assert_allclose(axis_field_T(axis_from_pair(pair), 1.5, pts), pair_field_T(pair, 1.5, pts),
                               rtol=1e-13, atol=1e-20)
    cage = AxisCage.from_cage(CoilCage(CoilPair("x", "round", 1, 1, 1), CoilPair("y", "round", 1, 1, 1), pair))
    assert cage.z.count == 2
    np.testing.assert_allclose(axis_cage_field_T(cage, (0.3, 0.0, 1.5), pts),
                               cage_field_T(CoilCage(CoilPair("x", "round", 1, 1, 1),
                                                     CoilPair("y", "round", 1, 1, 1), pair), (0.3, 0.0, 1.5), pts),
                               rtol=1e-13, atol=1e-20)


def test_one_outer_coil_shift_shrinks_the_four_coil_region_far_more_than_the_pair():
    # Issue 16: moving one outer coil of the four-square-coil system by 0.5 % of the half side
    # shrinks its 0.01 % region to about a seventh (of the cube's side); a pair barely notices
    # the same error.
    def cube(ax, index, shift):
        src = _mag_axis(ax, index, shift)
        lo, hi = 0.0, 0.9 * ax.size_m
        while hi - lo > 1e-3:
            mid = (lo + hi) / 2
            lo, hi = (mid, hi) if _mag_deviation(src, _cube_surface(mid, 11)) <= 1e-4 else (lo, mid)
        return lo

    four = system_axis("x", "square", "four", 1.0)
    pair = system_axis("x", "square", "pair", 1.0)
    shift = 0.005 * 0.5
    side_four = cube(four, 3, shift) / cube(four, None, 0.0)
    side_pair = cube(pair, 1, shift) / cube(pair, None, 0.0)
    assert 1 / 9 < side_four < 1 / 5  # measured 0.146
    assert side_pair > 0.9  # measured 0.95


def test_sensitivity_limits_hold_in_magpylib():
    box = (0.5, 0.5, 0.5)
    r = smallest_uniform_axis("x", "square", "four", 1e-3, box_m=box)
    ax = system_axis("x", "square", "four", 1.1 * r.size_m)
    s = axis_sensitivity(ax, 1e-3, box_m=box)
    assert 0 < s.max_position_error_m < 0.05 * ax.size_m
    assert 0 < s.max_tilt_deg < 10
    pts = _cube_surface(0.5, 17)
    k = [c.position_m for c in ax.coils].index(s.worst_shift_coil_m)
    # at the limit (either direction gives at most the tolerance), and 30 % beyond it misses it
    ok = max(_mag_deviation(_mag_axis(ax, k, d * s.max_position_error_m), pts) for d in (1, -1))
    bad = max(_mag_deviation(_mag_axis(ax, k, d * 1.3 * s.max_position_error_m), pts) for d in (1, -1))
    assert ok <= 1e-3 * 1.005 and bad > 1e-3
    k = [c.position_m for c in ax.coils].index(s.worst_tilt_coil_m)
    assert _mag_deviation(_mag_axis(ax, k, 0.0, s.max_tilt_deg), pts) <= 1e-3 * 1.005
    assert _mag_deviation(_mag_axis(ax, k, 0.0, 1.3 * s.max_tilt_deg), pts) > 1e-3
    # our perturbed deviation agrees with magpylib's
    ours = deviation_with_error(ax, k, 0.002, 0.1, box_m=box)
    assert ours == pytest.approx(_mag_deviation(_mag_axis(ax, k, 0.002, 0.1), _cube_surface(0.5, 9)), rel=1e-6)
    # a pair of the same requirement tolerates a larger shift
    rp = smallest_uniform_axis("x", "square", "pair", 1e-3, box_m=box)
    sp = axis_sensitivity(system_axis("x", "square", "pair", 1.1 * rp.size_m), 1e-3, box_m=box)
    assert sp.max_position_error_m > s.max_position_error_m


def test_sensitivity_summary_lines_and_pack_difference():
    from cage.axissizing import axis_pack_difference, sensitivity_summary_lines
    from cage.coilaxis import axis_from_pair
    from cage.coils import CoilPair, FilamentPack, pack_vs_filament_difference

    axes = [system_axis("x", "square", "four", 1.6), system_axis("y", "square", "pair", 1.0)]
    lines = sensitivity_summary_lines(axes, 1e-3, box_m=(0.5, 0.5, 0.5))
    assert lines[0].startswith("x (four square coils): keep each coil plane within ")
    assert "mm" in lines[0] and "deg" in lines[0]
    assert lines[1].startswith("y (square pair): misses 0.1 %")  # a 1 m pair is far too small
    pair = CoilPair("x", "square", 1.5, 0.8, 40)
    pack = FilamentPack(0.001, 0.01)
    a = pack_vs_filament_difference(pair, pack, (0.4, 0.4, 0.4))
    b = axis_pack_difference(axis_from_pair(pair), pack, (0.4, 0.4, 0.4))
    assert b.centre_field_pack_T == pytest.approx(a.centre_field_pack_T, rel=1e-12)
    assert b.box_deviation_pack == pytest.approx(a.box_deviation_pack, rel=1e-9)
    # the pack of a four-coil axis against magpylib: one loop per turn on the pack grid
    ax = system_axis("z", "round", "four", 0.9, multiplier=6)
    d = axis_pack_difference(ax, pack, (0.4, 0.4, 0.4))
    src = magpy.Collection(*[_mag_coil("z", "round", c.position_m + along, c.size_m + radial, 1.0)
                             for c in ax.coils for along, radial in pack.offsets_m(c.turns)])
    assert d.centre_field_pack_T == pytest.approx(src.getB(np.zeros(3))[2], rel=1e-10)


def test_a_room_too_small_for_any_pair_takes_a_nested_four_coil_cage():
    # 0.5 m cube at 0.1 %: a square pair needs about 3.8 m of side (issue 16), more than a
    # 3.0 m high room less 0.3 m clearance each side gives; nested four-square-coil axes fit.
    from types import SimpleNamespace

    from cage.coillayout import check_axes_layout, smallest_nesting_axis_size_m
    from cage.layout import FrameSpec

    box = (0.5, 0.5, 0.5)
    room = SimpleNamespace(length_m=4.0, width_m=4.0, height_m=3.0, clearance_m=0.3)
    pair = smallest_uniform_axis("z", "square", "pair", 1e-3, box_m=box)
    assert pair.size_m == pytest.approx(3.76, abs=0.02)
    assert pair.size_m > room.height_m - 2 * room.clearance_m
    frame = FrameSpec(0.04, 0.04, 0.01)
    axes = {}
    inner = []
    for name in ("z", "y", "x"):  # innermost first
        lower = smallest_uniform_axis(name, "square", "four", 1e-3, box_m=box).size_m
        size = smallest_nesting_axis_size_m(name, "square", "four", inner, frame, lower)
        axes[name] = system_axis(name, "square", "four", size)
        inner.append(axes[name])
    layout = check_axes_layout(AxisCage(axes["x"], axes["y"], axes["z"]), frame, room)
    assert layout.nests and layout.fits_room
    for name in AXES:
        assert _mag_deviation(_mag_axis(axes[name]), _cube_surface(0.5, 17)) <= 1e-3 * 1.005


def test_strict_sensitivity_limits_hold_in_magpylib():
    # A strict tolerance (10 ppm) puts the limits far below the search's upper end (5 % of the
    # size): they are found to their own precision, not rounded to 0 (they were printed as
    # "0 mm" and "0 deg"). magpylib: at the limit the deviation holds, 30 % beyond it misses.
    box = (0.3, 0.3, 0.3)
    tol = 1e-5
    r = smallest_uniform_axis("x", "square", "four", tol, box_m=box)
    ax = system_axis("x", "square", "four", 1.05 * r.size_m)
    s = axis_sensitivity(ax, tol, box_m=box)
    assert 0 < s.max_position_error_m < 1e-3 * 0.05 * ax.size_m  # below the old search step
    pts = _cube_surface(0.3, 17)
    k = [c.position_m for c in ax.coils].index(s.worst_shift_coil_m)
    ok = max(_mag_deviation(_mag_axis(ax, k, d * s.max_position_error_m), pts) for d in (1, -1))
    bad = max(_mag_deviation(_mag_axis(ax, k, d * 1.3 * s.max_position_error_m), pts) for d in (1, -1))
    assert ok <= tol * 1.005 and bad > tol
