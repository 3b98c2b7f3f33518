"""How the coils of three axes of any coil system sit together (frames of every coil), and the room.

The rules are those of ``cage.layout`` for pairs, applied to every coil of every axis:

* Frames of different axes: the smallest distance between the centrelines of any coil of one
  axis and any coil of another must be at least the frame cross-section's circumcircle
  diameter plus the gap (``FrameSpec.needed_distance_m``); the distances are the exact ones of
  ``cage.layout`` (segment to segment for squares, point to circle refined along the other
  curve otherwise).
* Frames of one axis: two coils of the same axis collide when their frame rectangles
  (``width_m`` along the axis by ``depth_m`` radially, centred on each centreline) overlap,
  i.e. their planes are closer than the frame width and their half-widths closer than the
  frame depth.
* Test volume: no coil may pass through it (a box may pass through a coil's aperture).
* Envelope: the bounding box of every frame; it must fit the room less its clearance.

Kept apart from ``cage.layout`` so the pair planner's module stays as it is; for a cage of
pairs these functions give the numbers of ``cage.layout``.
"""
from __future__ import annotations

import math

import numpy as np

from cage.coilaxis import AxisCage, Coil, CoilAxis
from cage.coils import AXES, CoilPair
from cage.layout import (
    FrameSpec,
    Layout,
    _curve_to_circle_m,
    _segments_distance_m,
    _square_segments,
    square_sides,
    first_clear_size_m,
    layout_from,
    rings_clear,
    sampled_ring_distances,
)

__all__ = [
    "coil_distance_m",
    "axes_min_distance_m",
    "axis_extent_m",
    "axes_envelope_m",
    "check_axes_layout",
    "axis_clears",
    "axes_clear",
    "same_axis_collisions",
    "axes_geometry_problems",
    "smallest_nesting_axis_size_m",
]


def _as_pair(ax: CoilAxis, c: Coil) -> tuple[CoilPair, float]:
    """One coil as (the +side coil of a pair of spacing 2|p|, sign of p), for cage.layout's kernels."""
    return CoilPair(ax.axis, ax.shape, float(c.size_m), 2.0 * abs(float(c.position_m)), 1), \
        (1.0 if c.position_m >= 0 else -1.0)


def coil_distance_m(ax_a: CoilAxis, ca: Coil, ax_b: CoilAxis, cb: Coil) -> float:
    """Smallest distance between the centrelines of coil ``ca`` of axis a and ``cb`` of axis b."""
    pa, sa = _as_pair(ax_a, ca)
    pb, sb = _as_pair(ax_b, cb)
    if pa.shape == "square" and pb.shape == "square":
        return _segments_distance_m(*_square_segments(pa, sa), *_square_segments(pb, sb))
    if pb.shape == "round":
        return _curve_to_circle_m(pa, sa, pb, sb)
    return _curve_to_circle_m(pb, sb, pa, sa)


def axes_min_distance_m(ax_a: CoilAxis, ax_b: CoilAxis) -> float:
    """Smallest centreline distance between any coil of axis a and any coil of axis b (different axes)."""
    if ax_a.axis == ax_b.axis:
        raise ValueError("the two axes must be different")
    if ax_a.shape == "square" and ax_b.shape == "square":
        return _segments_distance_m(*_square_axis_segments(ax_a), *_square_axis_segments(ax_b))
    # Only coil pairs whose sampled distance, less the Lipschitz slack (see axes_clear), reaches
    # below the smallest sample can hold the minimum: only those are refined.
    curve, circles = _curves_and_circles(ax_a, ax_b)
    dist, slack = sampled_ring_distances(*_ring_args(curve, circles))
    lowest = dist.min(axis=-1)
    return min(coil_distance_m(curve, curve.coils[j], circles, circles.coils[i])
               for i, j in zip(*np.nonzero(lowest - slack <= lowest.min())))


def axis_extent_m(ax: CoilAxis, frame: FrameSpec) -> np.ndarray:
    """Half-extent (3,) of one axis's frames along cage x, y, z."""
    a = AXES.index(ax.axis)
    ext = np.full(3, ax.half_width_m + frame.depth_m / 2.0)
    ext[a] = ax.half_length_m + frame.width_m / 2.0
    return ext


def axes_envelope_m(cage: AxisCage, frame: FrameSpec) -> np.ndarray:
    """Outer size (3,) of the bounding box of every frame along cage x, y, z."""
    return 2.0 * np.max([axis_extent_m(ax, frame) for ax in cage.axes], axis=0)


def check_axes_layout(cage: AxisCage, frame: FrameSpec, room=None) -> Layout:
    """Clearances between the frames of different axes, the envelope and the fit in the room
    (``cage.layout.Layout``; ``order``: outermost first by the largest half-width)."""
    axes = cage.axes
    distances = {}
    for i in range(3):
        for j in range(i + 1, 3):
            distances[(axes[i].axis, axes[j].axis)] = axes_min_distance_m(axes[i], axes[j])
    return layout_from(distances, axes_envelope_m(cage, frame), axes, frame, room)


def axis_clears(ax: CoilAxis, others, frame: FrameSpec) -> bool:
    """True when every coil of ``ax`` keeps the needed centreline distance from every coil of
    every axis in ``others`` (``axes_clear``)."""
    need = frame.needed_distance_m
    return all(axes_clear(ax, o, need) for o in others)


def _square_axis_segments(ax: CoilAxis) -> tuple[np.ndarray, np.ndarray]:
    """Starts and directions (4 x coils, 3) of the sides of every square coil of ``ax``."""
    return square_sides(AXES.index(ax.axis), np.array([float(c.size_m) for c in ax.coils]),
                        np.array([float(c.position_m) for c in ax.coils]))


def _curves_and_circles(ax_a: CoilAxis, ax_b: CoilAxis):
    """(curve axis, round axis): the round one carries the circles (either when both are round)."""
    return (ax_a, ax_b) if ax_b.shape == "round" else (ax_b, ax_a)


def _ring_args(curve: CoilAxis, circles: CoilAxis) -> tuple:
    return (AXES.index(curve.axis), curve.shape, np.array([k.size_m for k in curve.coils]),
            np.array([k.position_m for k in curve.coils]), AXES.index(circles.axis),
            np.array([k.size_m for k in circles.coils]), np.array([k.position_m for k in circles.coils]))


def axes_clear(ax_a: CoilAxis, ax_b: CoilAxis, need_m: float) -> bool:
    """True when the smallest centreline distance between any coil of axis a and any coil of
    axis b (different axes) is at least ``need_m``: the answer of
    ``axes_min_distance_m(ax_a, ax_b) >= need_m``, reached with far less work.

    Two squares: the exact side-to-side distance, all sides of both axes at once. With a round
    coil: samples of the exact distance to each circle with a Lipschitz bound, refined near the
    edge (``cage.layout.rings_clear``).
    """
    if ax_a.axis == ax_b.axis:
        raise ValueError("the two axes must be different")
    if ax_a.shape == "square" and ax_b.shape == "square":
        return _segments_distance_m(*_square_axis_segments(ax_a), *_square_axis_segments(ax_b)) >= need_m
    curve, circles = _curves_and_circles(ax_a, ax_b)

    def exact(i: int, j: int) -> float:
        return coil_distance_m(curve, curve.coils[j], circles, circles.coils[i])

    return rings_clear(*_ring_args(curve, circles), need_m, exact)


def same_axis_collisions(ax: CoilAxis, frame: FrameSpec) -> list[tuple[int, int]]:
    """Index pairs (i, j) of coils of one axis whose frame rectangles overlap."""
    out = []
    hw = [c.size_m / 2.0 if ax.shape == "square" else c.size_m for c in ax.coils]
    for i in range(ax.count):
        for j in range(i + 1, ax.count):
            if abs(ax.coils[i].position_m - ax.coils[j].position_m) < frame.width_m - 1e-12 \
                    and abs(hw[i] - hw[j]) < frame.depth_m - 1e-12:
                out.append((i, j))
    return out


def smallest_buildable_scale(unit_axis: CoilAxis, frame: FrameSpec, test_volume_m) -> float:
    """The smallest factor s by which an axis's coils (``unit_axis``: positions and sizes at
    nominal size 1; every coil scales with the size) can be built on ``frame`` around the test
    volume (a box, sides x, y, z in metres): each coil wider than its frame's depth, no two
    frames of the axis overlapping (``same_axis_collisions``: planes a frame width apart, or
    half-widths a frame depth apart), and the frame's inner face outside the test volume for a
    coil whose frame reaches into the box along the axis. Each is a bound linear in s."""
    a = AXES.index(unit_axis.axis)
    half = np.asarray(test_volume_m, dtype=float) / 2.0
    u, v = (a + 1) % 3, (a + 2) % 3
    lateral = max(half[u], half[v]) if unit_axis.shape == "square" else math.hypot(half[u], half[v])
    hw = [c.size_m / 2.0 if unit_axis.shape == "square" else c.size_m for c in unit_axis.coils]
    pos = [c.position_m for c in unit_axis.coils]
    scale = 0.0
    for i, (p, h) in enumerate(zip(pos, hw)):
        scale = max(scale, frame.depth_m / (2.0 * h) * (1.0 + 1e-9))
        # the frame clear of the box: along the axis (|p| s - width / 2 >= half[a]) or, reaching
        # into it, with its inner face outside it (h s - depth / 2 >= lateral): the lesser bound
        along = (half[a] + frame.width_m / 2.0) / abs(p) if p != 0 else math.inf
        scale = max(scale, min(along, (lateral + frame.depth_m / 2.0) / h))
        for j in range(i + 1, len(pos)):
            dp, dh = abs(p - pos[j]), abs(h - hw[j])
            apart = min(frame.width_m / dp if dp > 0 else math.inf, frame.depth_m / dh if dh > 0 else math.inf)
            scale = max(scale, apart * (1.0 + 1e-9))
    return scale


def axes_geometry_problems(cage: AxisCage, frame: FrameSpec, test_volume_m=None) -> list[str]:
    """What makes a cage of any coil systems impossible to build or to use (empty if nothing).

    As ``cage.layout.geometry_problems``, for every coil: a coil smaller than its frame, frames
    of one axis that overlap, frames of different axes that collide (1 mm of slack for a
    design made elsewhere), and a coil that passes through the test volume (a box, sides x,
    y, z in metres).
    """
    from cage.axissizing import wires_clear_volume

    out = []
    for ax in cage.axes:
        for c in ax.coils:
            hw = c.size_m / 2.0 if ax.shape == "square" else c.size_m
            if hw <= frame.depth_m / 2.0:
                out.append(f"the {ax.axis} axis coil at {c.position_m:+.3f} m ({ax.shape}, {c.size_m:g} m) is "
                           f"smaller than its {frame.depth_m * 1000:g} mm frame")
    if out:
        return out
    for ax in cage.axes:
        for i, j in same_axis_collisions(ax, frame):
            out.append(f"the frames of the {ax.axis} axis coils at {ax.coils[i].position_m:+.3f} m and "
                       f"{ax.coils[j].position_m:+.3f} m overlap")
    layout = check_axes_layout(cage, frame)
    if layout.min_distance_m < frame.needed_distance_m - 1e-3:
        a, b = layout.closest_axes
        out.append(f"the frames of the {a} and {b} axes collide: centrelines {layout.min_distance_m * 1000:.0f} mm "
                   f"apart, {frame.needed_distance_m * 1000:.0f} mm needed")
    if test_volume_m is not None:
        box = np.asarray(test_volume_m, dtype=float)
        for ax in cage.axes:
            if not wires_clear_volume(ax, box_m=box):
                out.append(f"the {ax.axis} axis's coils pass through the "
                           f"{' x '.join(f'{v:g}' for v in box)} m test volume")
    return out


def smallest_nesting_axis_size_m(axis: str, shape: str, system: str, inner, frame: FrameSpec, lower_m: float,
                                 upper_m: float = 100.0, tolerance_m: float = 1e-3) -> float:
    """Smallest nominal size >= lower_m of ``system`` (``cage.coilsystems.system_axis``) on
    ``axis`` whose every coil clears every coil of the axes in ``inner``.

    The scan of ``cage.layout.smallest_nesting_size_m`` (``first_clear_size_m``: a fixed 1 cm
    grid, clearance not being monotone in size, then bisection); the size returned always
    clears. ValueError beyond upper_m.
    """
    from cage.coilsystems import system_axis

    def ok(size: float) -> bool:
        return axis_clears(system_axis(axis, shape, system, size), inner, frame)

    if not inner:
        return float(lower_m)
    return first_clear_size_m(ok, lower_m, upper_m, tolerance_m,
                              f"no {shape} {system} {axis} axis up to {upper_m:g} m clears the inner axes")


def design_geometry_problems(design, frame: FrameSpec, test_volume_m=None) -> list[str]:
    """``cage.layout.geometry_problems`` for a design of pairs (on the frame lines and frame sizes
    each axis records, ``cage.layout.design_frames``), else
    ``axes_geometry_problems`` of every coil (``cage.designfile.Design``)."""
    from cage.layout import design_frames, geometry_problems, too_small_problems

    if design.all_pairs:
        frames, pair_frame = design_frames(design, design.layout)  # each axis's recorded frame line
        # a winding no wider than its frame is refused before its frame line is derived from it
        return too_small_problems(design.cage, pair_frame) or geometry_problems(frames, pair_frame, test_volume_m)
    return axes_geometry_problems(design.axis_cage, frame, test_volume_m)


def design_envelope_m(design, frame: FrameSpec) -> np.ndarray:
    """Outer size (3,) of every frame of a design (``cage.designfile.Design``), cage x, y, z."""
    return axes_envelope_m(design.axis_cage, frame)
