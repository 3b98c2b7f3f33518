"""Fields of coils, pairs and a whole cage against magpylib (reference library).

magpylib 6.x: ``magpylib.current.Circle(current=A, diameter=m, position=m, orientation=Rotation)``
(loop in its local xy plane, positive current right-handed about local +z) and
``magpylib.current.Polyline(current=A, vertices=(k, 3) m)``; ``getB`` returns tesla. Both use
closed-form Biot-Savart fields (Ortner et al. 2023 for the circle), computed independently of
ours.

Criterion: |B_ours - B_magpylib| <= 1e-10 |B_magpylib| + 1e-18 T at every point. magpylib is
itself ill-conditioned within a few millimetres of a wire (its circle loses ~1e-13 there, its
segment formula loses digits near a segment's extension line), so points closer than 5 mm to
any wire centreline are left out; no point is dropped for any other reason.
"""
from __future__ import annotations

import numpy as np
import pytest
from scipy.spatial.transform import Rotation

magpy = pytest.importorskip("magpylib")

from cage.biot_savart import Loop, Polygon, filaments_field_T  # noqa: E402
from cage.coils import (  # noqa: E402
    AXES,
    CoilCage,
    CoilPair,
    FilamentPack,
    cage_field_T,
    flat_spacing_m,
    pair_field_T,
)

REL = 1e-10
ABS_T = 1e-18
WIRE_CLEARANCE_M = 5e-3


def _close(ours, ref):
    err = np.linalg.norm(ours - ref, axis=-1)
    bound = REL * np.linalg.norm(ref, axis=-1) + ABS_T
    return err <= bound, err / np.maximum(np.linalg.norm(ref, axis=-1), 1e-300)


def _mag_circle(centre, normal, radius, current):
    rot, _ = Rotation.align_vectors([normal], [[0.0, 0.0, 1.0]])
    return magpy.current.Circle(current=current, diameter=2 * radius, position=centre, orientation=rot)


def _mag_polygon(vertices, current):
    v = np.asarray(vertices, dtype=float)
    return magpy.current.Polyline(current=current, vertices=np.vstack([v, v[:1]]))


def _mag_pair(pair: CoilPair, current_A: float):
    """The pair built from its definition in cage.coils' docstring, one source per coil."""
    i = AXES.index(pair.axis)
    iu, iv = (i + 1) % 3, (i + 2) % 3
    sources = []
    for a0 in (pair.spacing_m / 2, -pair.spacing_m / 2):
        amp_turns = pair.turns * current_A
        if pair.shape == "round":
            centre = np.zeros(3)
            centre[i] = a0
            normal = np.zeros(3)
            normal[i] = 1.0
            sources.append(_mag_circle(centre, normal, pair.size_m, amp_turns))
        else:
            h = pair.size_m / 2
            verts = np.zeros((4, 3))
            verts[:, i] = a0
            verts[:, iu] = (h, h, -h, -h)  # from +u toward +v: right-handed about +axis
            verts[:, iv] = (-h, h, h, -h)
            sources.append(_mag_polygon(verts, amp_turns))
    return sources


def _distance_to_pair_wires(pair: CoilPair, pts):
    """Distance from points to the centrelines of both coils of a pair (metres)."""
    i = AXES.index(pair.axis)
    iu, iv = (i + 1) % 3, (i + 2) % 3
    out = np.full(len(pts), np.inf)
    for a0 in (pair.spacing_m / 2, -pair.spacing_m / 2):
        da = pts[:, i] - a0
        u, v = pts[:, iu], pts[:, iv]
        if pair.shape == "round":
            rho = np.hypot(u, v)
            d = np.hypot(rho - pair.size_m, da)
        else:
            h = pair.size_m / 2
            # distance to the square outline in the plane, then add the axial offset
            cu = np.clip(np.abs(u), None, h)
            cv = np.clip(np.abs(v), None, h)
            d_edge_u = np.hypot(np.abs(u) - h, np.abs(v) - cv)  # to the sides |u| = h
            d_edge_v = np.hypot(np.abs(v) - h, np.abs(u) - cu)  # to the sides |v| = h
            d = np.hypot(np.minimum(d_edge_u, d_edge_v), da)
        out = np.minimum(out, d)
    return out


def _mixed_cage():
    # x square, y round, z square: different shapes, sizes and turns on each axis.
    return CoilCage(
        x=CoilPair("x", "square", 2.0, flat_spacing_m("square", 2.0), 40),
        y=CoilPair("y", "round", 0.95, flat_spacing_m("round", 0.95), 35),
        z=CoilPair("z", "square", 1.8, 0.9, 52),
    )


def test_three_axis_cage_at_random_points_inside_and_outside():
    cage = _mixed_cage()
    currents = (1.3, -0.7, 2.1)
    rng = np.random.default_rng(20240611)
    inside = rng.uniform(-0.9, 0.9, size=(1500, 3))
    around = rng.uniform(-3.0, 3.0, size=(1500, 3))
    far = rng.normal(size=(300, 3))
    far *= rng.uniform(5.0, 50.0, size=(300, 1)) / np.linalg.norm(far, axis=1, keepdims=True)
    pts = np.vstack([inside, around, far])
    clearance = np.min([_distance_to_pair_wires(p, pts) for p in cage.pairs], axis=0)
    pts = pts[clearance > WIRE_CLEARANCE_M]
    assert len(pts) >= 2000

    sources = []
    for pair, cur in zip(cage.pairs, currents):
        sources += _mag_pair(pair, cur)
    ref = magpy.getB(sources, pts, sumup=True)
    ours = cage_field_T(cage, currents, pts)
    ok, rel = _close(ours, ref)
    assert ok.all(), f"{(~ok).sum()} points disagree; worst relative error {rel.max():.3g} at {pts[np.argmax(rel)]}"


@pytest.mark.parametrize("shape,size", [("square", 1.7), ("round", 0.8)])
@pytest.mark.parametrize("axis", AXES)
def test_each_pair_alone(shape, size, axis):
    pair = CoilPair(axis, shape, size, flat_spacing_m(shape, size), 25)
    rng = np.random.default_rng(7)
    pts = rng.uniform(-2.0, 2.0, size=(400, 3))
    pts = pts[_distance_to_pair_wires(pair, pts) > WIRE_CLEARANCE_M]
    ref = magpy.getB(_mag_pair(pair, 0.37), pts, sumup=True)
    ok, rel = _close(pair_field_T(pair, 0.37, pts), ref)
    assert ok.all(), rel.max()
    # and the sign convention: positive current, field along +axis at the centre
    centre = pair_field_T(pair, 1.0, [0.0, 0.0, 0.0])
    assert centre[AXES.index(axis)] > 0


def test_tilted_polygon_and_loop_general_kernel():
    """Non-axis-aligned sources exercise the general code paths of both kernels."""
    rng = np.random.default_rng(11)
    rot = Rotation.from_rotvec([0.3, -1.1, 0.7])
    ang = np.sort(rng.uniform(0, 2 * np.pi, 7))
    rad = rng.uniform(0.5, 1.2, 7)
    planar = np.column_stack([rad * np.cos(ang), rad * np.sin(ang), np.zeros(7)])
    verts = rot.apply(planar) + [0.2, -0.1, 0.4]
    normal = rot.apply([0.0, 0.0, 1.0])
    loop_centre = np.array([-0.3, 0.5, 0.1])
    pts = rng.uniform(-2.5, 2.5, size=(1200, 3))
    ours = filaments_field_T(pts, [Polygon(verts, 2.5)], [Loop(loop_centre, normal, 0.65, -1.75)])
    ref = magpy.getB([_mag_polygon(verts, 2.5), _mag_circle(loop_centre, normal, 0.65, -1.75)], pts, sumup=True)
    # keep away from wires: the loop circle and the polygon edges
    rel_pts = pts - loop_centre
    z = rel_pts @ normal
    rho = np.linalg.norm(rel_pts - np.outer(z, normal), axis=1)
    d_loop = np.hypot(rho - 0.65, z)
    d_poly = np.full(len(pts), np.inf)
    for a, b in zip(verts, np.roll(verts, -1, axis=0)):
        t = np.clip((pts - a) @ (b - a) / np.dot(b - a, b - a), 0, 1)
        d_poly = np.minimum(d_poly, np.linalg.norm(pts - (a + np.outer(t, b - a)), axis=1))
    keep = (d_loop > WIRE_CLEARANCE_M) & (d_poly > WIRE_CLEARANCE_M)
    ok, rel = _close(ours[keep], ref[keep])
    assert ok.all(), rel.max()


@pytest.mark.parametrize("shape,size", [("square", 1.5), ("round", 0.75)])
def test_winding_pack_filaments(shape, size):
    """The pack grid (one filament per turn) against magpylib sources built from the grid rule."""
    pack = FilamentPack(wire_od_m=2.0e-3, channel_width_m=9.0e-3)  # 4 per layer
    pair = CoilPair("z", shape, size, flat_spacing_m(shape, size), 10)  # 3 layers: 4, 4, 2
    # grid from the FilamentPack docstring: centred on the centreline, outer layer partial
    offsets = []
    for j, count in enumerate((4, 4, 2)):
        radial = (j - 1) * 2.0e-3
        for k in range(count):
            offsets.append(((k - (count - 1) / 2) * 2.0e-3, radial))
    sources = []
    for a0 in (pair.spacing_m / 2, -pair.spacing_m / 2):
        for along, radial in offsets:
            if shape == "round":
                sources.append(_mag_circle([0, 0, a0 + along], [0, 0, 1], size + radial, 0.8))
            else:
                h = size / 2 + radial
                verts = [(h, -h, a0 + along), (h, h, a0 + along), (-h, h, a0 + along), (-h, -h, a0 + along)]
                sources.append(_mag_polygon(verts, 0.8))
    rng = np.random.default_rng(5)
    pts = rng.uniform(-1.0, 1.0, size=(300, 3)) * [size * 0.6, size * 0.6, 0.4]
    ref = magpy.getB(sources, pts, sumup=True)
    ok, rel = _close(pair_field_T(pair, 0.8, pts, pack=pack), ref)
    assert ok.all(), rel.max()
