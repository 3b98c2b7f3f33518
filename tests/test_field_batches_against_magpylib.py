"""Many filaments at once (the batched path of cage.biot_savart) against magpylib (reference library).

A winding pack modelled as one filament per turn gives hundreds of coaxial loops or square
polygons at a few hundred points; cage.biot_savart evaluates those as (sources x points)
batches. These tests build such sets (and sets of mixed and general orientations), evaluate
them with ``filaments_field_T`` and compare with magpylib 6.x (``magpylib.current.Circle``,
``magpylib.current.Polyline``; closed-form Biot-Savart fields computed independently of ours,
``getB`` in tesla), with the criterion of tests/test_field_against_magpylib.py:
|B_ours - B_magpylib| <= 1e-10 |B_magpylib| + 1e-18 T at every point farther than 5 mm from
every wire (magpylib loses digits closer in). A point on a wire (and at least 1 mm from the
others: the wires of a winding pack lie a few millimetres apart) gets nothing from that wire
and the full field of all the others (the on-wire rule of cage.biot_savart): there it is
compared with magpylib's sum over the other sources only.

Each test also checks that the batched path ran (a spy on the batch functions) and that it
agrees with the one-source-at-a-time path of the same module (itself checked against magpylib
in tests/test_field_against_magpylib.py) to 1e-12 relative at every point.
"""
from __future__ import annotations

import numpy as np
import pytest
from scipy.spatial.transform import Rotation

magpy = pytest.importorskip("magpylib")

import cage.biot_savart as bs  # noqa: E402
from cage.biot_savart import Loop, Polygon, filaments_field_T  # noqa: E402

REL = 1e-10
ABS_T = 1e-18
WIRE_CLEARANCE_M = 5e-3
ON_WIRE_CLEARANCE_M = 1e-3  # a point on one wire of a dense pack: the others at least 1 mm away


def _mag_circle(lp: Loop):
    rot, _ = Rotation.align_vectors([lp.normal], [[0.0, 0.0, 1.0]])
    return magpy.current.Circle(current=lp.current_A, diameter=2 * lp.radius_m, position=lp.centre_m,
                                orientation=rot)


def _mag_polygon(p: Polygon):
    v = np.asarray(p.vertices_m)
    keep = np.linalg.norm(np.roll(v, -1, axis=0) - v, axis=1) > 0  # drop repeated vertices
    v = v[keep]
    return magpy.current.Polyline(current=p.current_A, vertices=np.vstack([v, v[:1]]))


def _distance_to_loop(lp: Loop, pts):
    rel = pts - lp.centre_m
    z = rel @ lp.normal
    rho = np.linalg.norm(rel - np.outer(z, lp.normal), axis=1)
    return np.hypot(rho - lp.radius_m, z)


def _distance_to_polygon(p: Polygon, pts):
    out = np.full(len(pts), np.inf)
    v = np.asarray(p.vertices_m)
    for a, b in zip(v, np.roll(v, -1, axis=0)):
        e = b - a
        ee = float(e @ e)
        t = np.clip((pts - a) @ e / ee, 0.0, 1.0) if ee > 0 else np.zeros(len(pts))
        out = np.minimum(out, np.linalg.norm(pts - (a + np.outer(t, e)), axis=1))
    return out


def _spy(monkeypatch):
    """Count the calls of the batch functions (they still run as they are)."""
    calls = {"polygons": 0, "loops": 0}
    real_poly, real_loop = bs._polygon_batch, bs._loop_batch

    def poly(*args):
        calls["polygons"] += 1
        return real_poly(*args)

    def loop(*args):
        calls["loops"] += 1
        return real_loop(*args)

    monkeypatch.setattr(bs, "_polygon_batch", poly)
    monkeypatch.setattr(bs, "_loop_batch", loop)
    return calls


def _one_at_a_time(pts, polygons, loops, monkeypatch):
    with monkeypatch.context() as m:
        m.setattr(bs, "BATCH_MIN_SOURCES", 10**9)
        return filaments_field_T(pts, polygons, loops)


def _check(pts, polygons, loops, ours, monkeypatch):
    """ours against magpylib (clear points: all sources; points on one wire: the others) and
    against the one-at-a-time path."""
    d_poly = np.array([_distance_to_polygon(p, pts) for p in polygons]).reshape(len(polygons), len(pts))
    d_loop = np.array([_distance_to_loop(lp, pts) for lp in loops]).reshape(len(loops), len(pts))
    dist = np.vstack([d_poly, d_loop])
    sources = [_mag_polygon(p) for p in polygons] + [_mag_circle(lp) for lp in loops]
    clear = dist.min(axis=0) > WIRE_CLEARANCE_M
    assert clear.sum() > 0.8 * len(pts)
    ref = magpy.getB(sources, pts[clear], sumup=True)
    err = np.linalg.norm(ours[clear] - ref, axis=1)
    assert np.all(err <= REL * np.linalg.norm(ref, axis=1) + ABS_T), (err / np.linalg.norm(ref, axis=1)).max()
    # on a wire: within ON_WIRE_M of exactly one source and clear of every other
    on = dist <= bs.ON_WIRE_M
    second = np.sort(dist, axis=0)[1]
    lone = np.flatnonzero((on.sum(axis=0) == 1) & (second > ON_WIRE_CLEARANCE_M))
    assert lone.size >= 2
    for i in lone:
        j = int(np.flatnonzero(on[:, i])[0])
        others = [s for k, s in enumerate(sources) if k != j]
        ref_i = magpy.getB(others, pts[i], sumup=True)
        assert np.linalg.norm(ours[i] - ref_i) <= REL * np.linalg.norm(ref_i) + ABS_T
    single = _one_at_a_time(pts, polygons, loops, monkeypatch)
    scale = np.maximum(np.linalg.norm(single, axis=1), 1e-300)
    assert np.all(np.linalg.norm(ours - single, axis=1) <= 1e-12 * scale)


def _square(axis_vec_index: int, axial_m: float, half_m: float, current_A: float, shift=(0.0, 0.0)) -> Polygon:
    i = axis_vec_index
    iu, iv = (i + 1) % 3, (i + 2) % 3
    v = np.zeros((4, 3))
    v[:, i] = axial_m
    v[:, iu] = np.array([half_m, half_m, -half_m, -half_m]) + shift[0]
    v[:, iv] = np.array([-half_m, half_m, half_m, -half_m]) + shift[1]
    return Polygon(v, current_A)


def test_many_coaxial_loops_and_squares_with_points_on_wires_and_axis(monkeypatch):
    """150 coaxial loops and 150 squares along z (a winding pack's grid: sizes and planes
    spread over a few centimetres), plus squares off the axis; points in the volume, on the
    axis, on a loop and on a square's edge and corner."""
    rng = np.random.default_rng(21)
    loops = [Loop([0.0, 0.0, a], [0.0, 0.0, 1.0], r, c) for a, r, c in
             zip(rng.uniform(0.40, 0.45, 150), rng.uniform(0.80, 0.83, 150), rng.uniform(0.5, 1.5, 150))]
    squares = [_square(2, a, h, c) for a, h, c in
               zip(rng.uniform(-0.45, -0.40, 150), rng.uniform(0.70, 0.73, 150), rng.uniform(-1.5, -0.5, 150))]
    squares += [_square(2, a, h, 1.0, shift=(0.05, -0.02)) for a, h in
                zip(rng.uniform(-0.1, 0.1, 20), rng.uniform(0.3, 0.6, 20))]
    pts = rng.uniform(-0.9, 0.9, size=(400, 3))
    pts[:30] = np.column_stack([np.zeros(30), np.zeros(30), np.linspace(-1.0, 1.0, 30)])  # the axis
    lp, sq = loops[7], squares[11]
    pts[30] = lp.centre_m + lp.radius_m * np.array([np.cos(0.3), np.sin(0.3), 0.0])  # on the loop
    v = sq.vertices_m
    pts[31] = v[1] + 0.37 * (v[2] - v[1])  # on an edge
    pts[32] = v[3]  # on a corner
    pts[33] = lp.centre_m + np.array([lp.radius_m, 0.0, 2e-10])  # 0.2 nm off the loop
    calls = _spy(monkeypatch)
    ours = filaments_field_T(pts, squares, loops)
    assert calls["polygons"] > 0 and calls["loops"] > 0
    assert np.all(np.isfinite(ours))
    _check(pts, squares, loops, ours, monkeypatch)


def test_batches_split_into_chunks(monkeypatch):
    """Small batches (a few sources each) and point chunks give the same fields as magpylib."""
    monkeypatch.setattr(bs, "BATCH_ELEMENTS", 1000)
    rng = np.random.default_rng(22)
    loops = [Loop([0.0, a, 0.0], [0.0, 1.0, 0.0], r, 2.0) for a, r in
             zip(rng.uniform(-0.6, 0.6, 40), rng.uniform(0.5, 0.9, 40))]
    squares = [_square(0, a, h, -1.0) for a, h in zip(rng.uniform(-0.6, 0.6, 40), rng.uniform(0.5, 0.9, 40))]
    pts = rng.uniform(-1.0, 1.0, size=(300, 3))
    pts[0] = loops[3].centre_m + [0.0, 0.0, loops[3].radius_m]
    pts[1] = squares[5].vertices_m[0] + 0.5 * (squares[5].vertices_m[1] - squares[5].vertices_m[0])
    calls = _spy(monkeypatch)
    ours = filaments_field_T(pts, squares, loops, chunk_points=64)
    assert calls["polygons"] > 10 and calls["loops"] > 10
    _check(pts, squares, loops, ours, monkeypatch)


def test_mixed_normals_and_general_orientations(monkeypatch):
    """Loops and squares on all three cage axes, a tilted coaxial set sharing one general
    normal, loops and polygons each with its own random orientation (batched with per-source
    directions), pentagons, and polygons with a repeated vertex (a zero-length edge)."""
    rng = np.random.default_rng(23)
    loops, polygons = [], []
    for i in range(3):
        normal = np.eye(3)[i]
        for a, r in zip(rng.uniform(-0.5, 0.5, 8), rng.uniform(0.6, 0.9, 8)):
            loops.append(Loop(a * normal, normal, r, rng.uniform(-2, 2)))
        for a, h in zip(rng.uniform(-0.5, 0.5, 8), rng.uniform(0.5, 0.8, 8)):
            polygons.append(_square(i, a, h, rng.uniform(-2, 2)))
    tilt = Rotation.from_rotvec([0.4, -0.9, 0.25])
    n_tilt = tilt.apply([0.0, 0.0, 1.0])
    for a, r in zip(rng.uniform(-0.3, 0.3, 10), rng.uniform(0.4, 0.7, 10)):
        loops.append(Loop([0.1, -0.05, 0.2] + a * n_tilt, n_tilt, r, 1.3))
        polygons.append(Polygon(tilt.apply(np.array(_square(2, a, r, 1.0).vertices_m)) + [0.1, -0.05, 0.2], -0.7))
    for k in range(12):
        rot = Rotation.random(random_state=100 + k)
        c = rng.uniform(-0.3, 0.3, 3)
        loops.append(Loop(c, rot.apply([0.0, 0.0, 1.0]), rng.uniform(0.3, 0.8), rng.uniform(-2, 2)))
        ang = np.sort(rng.uniform(0, 2 * np.pi, 5))
        rad = rng.uniform(0.3, 0.8, 5)
        pent = np.column_stack([rad * np.cos(ang), rad * np.sin(ang), np.zeros(5)])
        polygons.append(Polygon(rot.apply(pent) + c, rng.uniform(-2, 2)))
        polygons.append(Polygon(rot.apply(np.array(_square(2, 0.0, 0.5, 1.0).vertices_m)) + c, rng.uniform(-2, 2)))
    for a in (-0.2, 0.0, 0.2):  # repeated vertex: k = 5 with one zero-length edge
        v = _square(1, a, 0.55, 1.0).vertices_m
        polygons.append(Polygon(np.vstack([v[:2], v[1:2], v[2:]]), 0.9))
    pts = rng.uniform(-1.0, 1.0, size=(500, 3))
    pts[0] = loops[40].centre_m + loops[40].radius_m * np.cross(loops[40].normal, [1.0, 0.0, 0.0]) / np.linalg.norm(
        np.cross(loops[40].normal, [1.0, 0.0, 0.0]))  # on a tilted loop
    pv = polygons[-4].vertices_m
    pts[1] = pv[2] + 0.3 * (pv[3] - pv[2])  # on a randomly oriented square's edge
    pts[2:12] = loops[30].centre_m + np.outer(np.linspace(-1, 1, 10), loops[30].normal)  # tilted axis
    calls = _spy(monkeypatch)
    ours = filaments_field_T(pts, polygons, loops)
    assert calls["polygons"] > 0 and calls["loops"] > 0
    assert np.all(np.isfinite(ours))
    _check(pts, polygons, loops, ours, monkeypatch)
