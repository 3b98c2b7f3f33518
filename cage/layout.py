"""How the three coil pairs of a cage sit together, and whether they fit the room.

Frames: every coil is wound on a frame whose cross-section is ``frame_width_m`` (along the
coil axis) by ``frame_depth_m`` (radial), centred on the winding centreline. Frames of
different axes must not collide. Square and round coils of different axes cross each
other's planes, so the rule is geometric: the smallest distance between the centrelines
of any two coils of different axes must be at least the diameter of the circle that
circumscribes a frame cross-section, sqrt(width^2 + depth^2), plus ``frame_gap_m``. That
holds whatever the angle at which two frames pass each other (two discs of that diameter
around the centrelines cannot overlap), so it is slightly conservative where frames pass
square-on.

The smallest distance is exact between two squares (closest points of their sides); with a
round coil it uses the exact distance from a point to a circle, minimised along the other
centreline by sampling and local refinement. By the mirror symmetry of each pair, one coil
of the first pair stands for both.

Envelope: the bounding box of all frames, cage frame, metres. It must fit the room less
``clearance_m`` on every side, floor and ceiling included (room length along x, width
along y, height along z).
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache

import numpy as np

from cage.coils import AXES, CoilCage, CoilPair, flat_spacing_m

CURVE_SAMPLES = 256
FINE_SAMPLES = 15
MAX_STARTS = 3
NESTING_STEP_M = 0.01


@dataclass(frozen=True)
class FrameSpec:
    """Frame cross-section and the gap kept between frames of different axes (metres)."""

    width_m: float = 0.04
    depth_m: float = 0.04
    gap_m: float = 0.01

    @property
    def needed_distance_m(self) -> float:
        """Least centreline distance between coils of different axes."""
        return math.hypot(self.width_m, self.depth_m) + self.gap_m


@dataclass(frozen=True)
class Layout:
    """The layout check of a cage.

    envelope_m: outer size of the frames' bounding box along cage x, y, z.
    min_distance_m: smallest centreline distance between coils of different axes.
    clearance_m: min_distance_m less the frame circumcircle diameter: the free gap
        between frames at their closest (must be at least the frame gap).
    closest_axes: the two axes whose coils come closest.
    order: axes from outermost (largest transverse half-width) to innermost.
    room_inner_m: the room less its clearance on every side, or None.
    fits_room: envelope within room_inner_m on every axis (True when no room given).
    """

    envelope_m: tuple[float, float, float]
    min_distance_m: float
    clearance_m: float
    closest_axes: tuple[str, str]
    order: tuple[str, str, str]
    nests: bool
    room_inner_m: tuple[float, float, float] | None
    fits_room: bool


def _curve_points(pair: CoilPair, t: np.ndarray, sign: float = 1.0) -> np.ndarray:
    """Points (len(t), 3) on the centreline of one coil, parameter t in [0, 1)."""
    a = AXES.index(pair.axis)
    return _ring_points(a, _unit_curve(pair.shape, t), np.array([float(pair.size_m)]),
                        np.array([sign * pair.spacing_m / 2.0]))[0]


def _square_segments(pair: CoilPair, sign: float) -> tuple[np.ndarray, np.ndarray]:
    """Start points and direction vectors (4, 3) of the four sides of one square coil."""
    return square_sides(AXES.index(pair.axis), np.array([float(pair.size_m)]),
                        np.array([sign * pair.spacing_m / 2.0]))


def square_sides(a: int, sizes_m: np.ndarray, positions_m: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Start points and direction vectors (4 x coils, 3) of the sides of square coils on axis
    index a (sides sizes_m, planes at positions_m), walked as ``_unit_curve`` walks the square."""
    corners = _ring_points(a, _SQUARE_CORNERS, sizes_m, positions_m)  # (coils, 5, 3)
    return corners[:, :-1].reshape(-1, 3), np.diff(corners, axis=1).reshape(-1, 3)


def _segments_distance_m(p1: np.ndarray, d1: np.ndarray, p2: np.ndarray, d2: np.ndarray) -> float:
    """Smallest distance between any segment p1 + s d1 and any p2 + t d2 (s, t in [0, 1]).

    Closest points of two segments, clamped (Ericson, Real-Time Collision Detection, 2005,
    section 5.1.9), vectorised over all pairs; the segments here have non-zero length.
    """
    P1, D1 = p1[:, None, :], d1[:, None, :]
    P2, D2 = p2[None, :, :], d2[None, :, :]
    r = P1 - P2
    a = (D1 * D1).sum(-1)
    e = (D2 * D2).sum(-1)
    f = (D2 * r).sum(-1)
    c = (D1 * r).sum(-1)
    b = (D1 * D2).sum(-1)
    denom = a * e - b * b
    parallel = denom <= 1e-12 * a * e
    s = np.where(parallel, 0.0, np.clip((b * f - c * e) / np.where(parallel, 1.0, denom), 0.0, 1.0))
    t = (b * s + f) / e
    s = np.where(t < 0.0, np.clip(-c / a, 0.0, 1.0), np.where(t > 1.0, np.clip((b - c) / a, 0.0, 1.0), s))
    t = np.clip(t, 0.0, 1.0)
    gap = P1 + D1 * s[..., None] - (P2 + D2 * t[..., None])
    return float(np.sqrt((gap * gap).sum(-1).min()))


def _distance_to_circle_m(points: np.ndarray, circle: CoilPair, sign: float) -> np.ndarray:
    """Exact distance from points (n, 3) to the centreline circle of one coil of a round pair:
    with h the height above the coil's plane and rho the distance from its axis,
    d = sqrt(h^2 + (rho - R)^2)."""
    a = AXES.index(circle.axis)
    h = points[:, a] - sign * circle.spacing_m / 2.0
    rho = np.hypot(points[:, (a + 1) % 3], points[:, (a + 2) % 3])
    return np.hypot(h, rho - circle.size_m)


def _curve_to_circle_m(curve: CoilPair, curve_sign: float, circle: CoilPair, circle_sign: float) -> float:
    """Smallest distance between one coil's centreline and one round coil's centreline.

    The distance to the circle is exact; along the other curve it is sampled, then refined
    around every local minimum that could hold the true one (within a sample step of the
    best sample), three rounds each.
    """
    t = np.arange(CURVE_SAMPLES) / CURVE_SAMPLES
    d = _distance_to_circle_m(_curve_points(curve, t, curve_sign), circle, circle_sign)
    slack = curve.perimeter_m / CURVE_SAMPLES
    local = (d <= np.roll(d, 1)) & (d <= np.roll(d, -1)) & (d <= d.min() + slack)
    best = float(d.min())
    offsets = np.linspace(-1.0, 1.0, FINE_SAMPLES)
    for i in np.flatnonzero(local)[np.argsort(d[local])][:MAX_STARTS]:
        centre, width = t[i], 1.5 / CURVE_SAMPLES
        for _ in range(3):
            f = (centre + width * offsets) % 1.0
            e = _distance_to_circle_m(_curve_points(curve, f, curve_sign), circle, circle_sign)
            k = int(np.argmin(e))
            centre, best = f[k], min(best, float(e[k]))
            width *= 2.0 / FINE_SAMPLES
    return best


# --------------------------------------------------------------------------- clearance decisions
#
# Whether two sets of coils keep a needed distance is asked far more often than the distance
# itself (every step of a nesting scan). With a round coil the distance from points of the
# other centreline to the circle is exact; it is 1-Lipschitz in arc length along that
# centreline, so between two samples h apart it is at least the smaller sample less h/2. A
# sample below the need says no; pieces whose bound reaches below it are split and sampled again
# until each is decided (or handed to the exact minimisation of ``_curve_to_circle_m``).

DECISION_SAMPLES = 256  # per coil: the undecided band is half a step (16 mm on a 2 m square), refined
_REFINE_SPLIT = 16
_REFINE_ROUNDS = 8
_REFINE_MAX_POINTS = 65536


def _unit_curve(shape: str, t: np.ndarray) -> np.ndarray:
    """(u, v) at parameters t in [0, 1), evenly spaced in arc length: the unit circle, or the
    square of side 1 walked corner to corner (the parameter of every centreline here)."""
    if shape == "round":
        return np.stack([np.cos(2.0 * np.pi * t), np.sin(2.0 * np.pi * t)], axis=-1)
    s = (t % 1.0) * 4.0
    side = np.minimum(s.astype(int), 3)
    f = s - side
    corners = np.array([[0.5, -0.5], [0.5, 0.5], [-0.5, 0.5], [-0.5, -0.5], [0.5, -0.5]])
    return corners[side] + (corners[side + 1] - corners[side]) * f[:, None]


_UNIT = {shape: _unit_curve(shape, np.arange(DECISION_SAMPLES) / DECISION_SAMPLES) for shape in ("round", "square")}

_SQUARE_CORNERS = _unit_curve("square", np.arange(5) / 4.0)  # the four corners, the first again at the end


def _perimeter_m(shape: str, size_m: float) -> float:
    return 2.0 * math.pi * size_m if shape == "round" else 4.0 * size_m


def _ring_points(a: int, uv: np.ndarray, sizes_m: np.ndarray, positions_m: np.ndarray) -> np.ndarray:
    """Points (rings, n, 3) of coils on axis index a: unit-curve (u, v) scaled by each size, in
    the plane axis = position."""
    pts = np.zeros((sizes_m.size, uv.shape[0], 3))
    pts[..., (a + 1) % 3] = uv[None, :, 0] * sizes_m[:, None]
    pts[..., (a + 2) % 3] = uv[None, :, 1] * sizes_m[:, None]
    pts[..., a] = positions_m[:, None]
    return pts


def _to_circles(pts: np.ndarray, c: int, positions_m: np.ndarray, radii_m: np.ndarray) -> np.ndarray:
    """Exact distance (circles, ...) from points (..., 3) to circles on axis index c (planes at
    positions_m, radii radii_m): sqrt(h^2 + (rho - R)^2), h above the plane, rho from the axis."""
    rho = np.hypot(pts[..., (c + 1) % 3], pts[..., (c + 2) % 3])
    shape = (-1,) + (1,) * (pts.ndim - 1)
    return np.hypot(pts[None, ..., c] - positions_m.reshape(shape), rho[None] - radii_m.reshape(shape))


def sampled_ring_distances(a: int, shape: str, sizes_m, positions_m, c: int, radii_m, circle_positions_m):
    """(distances (circles, curves, DECISION_SAMPLES), slack m): the exact distance to every circle
    (axis index c) from points evenly spaced in arc length on every curve (axis index a, one
    shape, sizes: side or radius), and half the largest sample step along the curves."""
    sizes = np.asarray(sizes_m, dtype=float)
    pts = _ring_points(a, _UNIT[shape], sizes, np.asarray(positions_m, dtype=float))
    dist = _to_circles(pts, c, np.asarray(circle_positions_m, dtype=float), np.asarray(radii_m, dtype=float))
    return dist, 0.5 * _perimeter_m(shape, float(sizes.max())) / DECISION_SAMPLES


def rings_clear(a: int, shape: str, sizes_m, positions_m, c: int, radii_m, circle_positions_m,
                need_m: float, exact) -> bool:
    """True when every curve (axis index a, ``shape``, sizes and plane positions) keeps at least
    need_m from every circle (axis index c, radii and plane positions), decided from samples as
    described above; ``exact(i, j)``: the exact distance between circle i and curve j, for pieces
    the refinement leaves undecided."""
    dist, slack = sampled_ring_distances(a, shape, sizes_m, positions_m, c, radii_m, circle_positions_m)
    if np.any(dist < need_m):
        return False
    for i, j in zip(*np.nonzero(dist.min(axis=-1) - slack < need_m)):
        size, pos = float(sizes_m[j]), float(positions_m[j])
        circle = (np.array([circle_positions_m[i]], dtype=float), np.array([radii_m[i]], dtype=float))
        verdict = _piece_clears(a, shape, size, pos, c, circle, dist[i, j], need_m)
        if verdict is False or (verdict is None and exact(i, j) < need_m):
            return False
    return True


def _piece_clears(a: int, shape: str, size: float, position: float, c: int, circle, dist: np.ndarray,
                  need_m: float) -> bool | None:
    """The refinement of ``rings_clear`` for one curve against one circle: pieces (parameter t,
    spacing dt) whose Lipschitz bound falls below need_m are split into _REFINE_SPLIT and
    sampled again. True: clear; False: a sample is too close; None: undecided when the pieces
    grow too many or the rounds run out (the caller asks the exact distance)."""
    n = dist.size
    t = np.arange(n) / n
    dt = 1.0 / n
    perimeter = _perimeter_m(shape, size)
    for _ in range(_REFINE_ROUNDS):
        unsure = dist - 0.5 * perimeter * dt < need_m
        if not unsure.any():
            return True
        centres = t[unsure]
        if centres.size * _REFINE_SPLIT > _REFINE_MAX_POINTS:
            return None
        dt /= _REFINE_SPLIT
        offsets = (np.arange(_REFINE_SPLIT) - 0.5 * (_REFINE_SPLIT - 1)) * dt
        t = ((centres[:, None] + offsets[None, :]) % 1.0).ravel()
        pts = _ring_points(a, _unit_curve(shape, t), np.array([size]), np.array([position]))[0]
        dist = _to_circles(pts, c, *circle)[0]
        if np.any(dist < need_m):
            return False
    return None


def pairs_clear(pair_a: CoilPair, pair_b: CoilPair, need_m: float) -> bool:
    """``min_centreline_distance_m(pair_a, pair_b) >= need_m``, decided with far less work for
    round coils (``rings_clear``); cached per distinct geometry like the distance."""
    if pair_a.axis == pair_b.axis:
        raise ValueError("the two pairs must belong to different axes")
    ga = (pair_a.shape, float(pair_a.size_m), float(pair_a.spacing_m))
    gb = (pair_b.shape, float(pair_b.size_m), float(pair_b.spacing_m))
    return _clear_cached(*sorted((ga, gb)), float(need_m))


@lru_cache(maxsize=200_000)
def _clear_cached(ga: tuple, gb: tuple, need_m: float) -> bool:
    if ga[0] == "square" and gb[0] == "square":
        return _closest_cached(ga, gb) >= need_m
    pa, pb = CoilPair("x", ga[0], ga[1], ga[2], 1), CoilPair("y", gb[0], gb[1], gb[2], 1)
    if pb.shape != "round":
        pa, pb = pb, pa
    # the curves: both coils of pair a; the circles: both coils of round pair b (every combination)
    a, c = AXES.index(pa.axis), AXES.index(pb.axis)
    half_a, half_b = pa.spacing_m / 2.0, pb.spacing_m / 2.0
    signs = np.array([1.0, -1.0])

    def exact(i: int, j: int) -> float:
        return _curve_to_circle_m(pa, signs[j], pb, signs[i])

    return rings_clear(a, pa.shape, np.full(2, pa.size_m), signs * half_a, c, np.full(2, pb.size_m),
                       signs * half_b, need_m, exact)


def _closest(pa: CoilPair, pb: CoilPair) -> float:
    """Smallest distance between the +side coil of pair a and either coil of pair b (by the
    mirror symmetry of each pair that is the smallest over all four coil combinations).

    Two squares: exact, side against side. With a round coil: the exact distance to the
    circle, minimised along the other curve.
    """
    if pa.shape == "square" and pb.shape == "square":
        sa = _square_segments(pa, 1.0)
        (p1, d1), (p2, d2) = _square_segments(pb, 1.0), _square_segments(pb, -1.0)
        return _segments_distance_m(*sa, np.vstack([p1, p2]), np.vstack([d1, d2]))
    if pb.shape == "round":
        return min(_curve_to_circle_m(pa, 1.0, pb, sign) for sign in (1.0, -1.0))
    return min(_curve_to_circle_m(pb, sign, pa, 1.0) for sign in (1.0, -1.0))


def min_centreline_distance_m(pair_a: CoilPair, pair_b: CoilPair) -> float:
    """Smallest distance between the centrelines of any coil of pair a and any of pair b.

    Cached per distinct geometry (the planner asks for the same pairs many times). The turns
    play no part, and neither do the axes' names: any two different axes map onto x and y by
    a permutation of the coordinates, an isometry that maps the pairs' coils onto coils of the
    same kind, so the distance depends only on each pair's (shape, size, spacing) -- all six
    axis orders of a cube share their clearances."""
    if pair_a.axis == pair_b.axis:
        raise ValueError("the two pairs must belong to different axes")
    ga = (pair_a.shape, float(pair_a.size_m), float(pair_a.spacing_m))
    gb = (pair_b.shape, float(pair_b.size_m), float(pair_b.spacing_m))
    return _closest_cached(*sorted((ga, gb)))


@lru_cache(maxsize=200_000)
def _closest_cached(ga: tuple, gb: tuple) -> float:
    return _closest(CoilPair("x", ga[0], ga[1], ga[2], 1), CoilPair("y", gb[0], gb[1], gb[2], 1))


def pair_extent_m(pair: CoilPair, frame: FrameSpec) -> np.ndarray:
    """Half-extent (3,) of one pair's frames along cage x, y, z."""
    a = AXES.index(pair.axis)
    ext = np.full(3, pair.half_width_m + frame.depth_m / 2.0)
    ext[a] = pair.spacing_m / 2.0 + frame.width_m / 2.0
    return ext


def envelope_m(cage: CoilCage, frame: FrameSpec) -> np.ndarray:
    """Outer size (3,) of the bounding box of all frames along cage x, y, z."""
    return 2.0 * np.max([pair_extent_m(p, frame) for p in cage.pairs], axis=0)


def room_inner_m(room) -> np.ndarray:
    """The room (length x, width y, height z) less its clearance on every side."""
    return np.array([room.length_m, room.width_m, room.height_m]) - 2.0 * room.clearance_m


def check_layout(cage: CoilCage, frame: FrameSpec, room=None) -> Layout:
    """Clearances between the frames of different axes, the envelope and the fit in the room."""
    distances = {}
    pairs = cage.pairs
    for i in range(3):
        for j in range(i + 1, 3):
            distances[(pairs[i].axis, pairs[j].axis)] = min_centreline_distance_m(pairs[i], pairs[j])
    return layout_from(distances, envelope_m(cage, frame), pairs, frame, room)


def layout_from(distances: dict, envelope, parts, frame: FrameSpec, room=None) -> Layout:
    """The ``Layout`` from the centreline distances between axes ({(a, b): m}), the envelope
    (3,) and the axes' parts (pairs or coil axes: ``axis`` and ``half_width_m``)."""
    closest = min(distances, key=distances.get)
    dmin = distances[closest]
    env = np.asarray(envelope, dtype=float)
    order = tuple(p.axis for p in sorted(parts, key=lambda p: (-p.half_width_m, AXES.index(p.axis))))
    inner = None if room is None else room_inner_m(room)
    fits = True if inner is None else bool(np.all(env <= inner + 1e-12))
    return Layout(
        envelope_m=tuple(float(v) for v in env),
        min_distance_m=dmin,
        clearance_m=dmin - math.hypot(frame.width_m, frame.depth_m),
        closest_axes=closest,
        order=order,
        nests=dmin >= frame.needed_distance_m - 1e-12,
        room_inner_m=None if inner is None else tuple(float(v) for v in inner),
        fits_room=fits,
    )


def clears(pair: CoilPair, others, frame: FrameSpec) -> bool:
    """True when ``pair`` keeps the needed centreline distance from every pair in ``others``."""
    need = frame.needed_distance_m
    return all(pairs_clear(pair, o, need) for o in others)


def smallest_nesting_size_m(axis: str, shape: str, inner, frame: FrameSpec, lower_m: float,
                            spacing_per_size: float | None = None, upper_m: float = 100.0,
                            tolerance_m: float = 1e-3, spacing_inset_m: float = 0.0) -> float:
    """Smallest size (side or radius) >= lower_m of a pair on ``axis`` that clears every
    pair in ``inner``, with spacing = spacing_per_size x (size - spacing_inset_m) (default: the
    flat optimum of the size itself).

    Scans upward from ``lower_m`` on a fixed grid of ``NESTING_STEP_M`` to the first size
    that clears, then bisects between it and the grid point before; the size returned
    always clears. The fixed grid keeps the result (nearly) monotone in ``lower_m``: clearance
    is not monotone in size (a coil plane can pass another coil's edge), so coarse
    geometric steps could skip a window that a larger lower bound would find.
    Raises ValueError beyond upper_m.
    """
    ratio = spacing_per_size if spacing_per_size is not None else flat_spacing_m(shape, 1.0)

    def ok(size: float) -> bool:
        return clears(CoilPair(axis, shape, size, ratio * (size - spacing_inset_m), 1), inner, frame)

    if not inner:
        return float(lower_m)
    return first_clear_size_m(ok, lower_m, upper_m, tolerance_m,
                              f"no {shape} {axis} pair up to {upper_m:g} m clears the inner pairs")


def first_clear_size_m(ok, lower_m: float, upper_m: float, tolerance_m: float, failure: str) -> float:
    """The scan of ``smallest_nesting_size_m`` for any ``ok(size)``: the smallest size >= lower_m
    where it holds, on the fixed ``NESTING_STEP_M`` grid then by bisection; ValueError(failure)
    beyond upper_m."""
    if ok(lower_m):
        return float(lower_m)
    lo = float(lower_m)
    first = (math.floor(lo / NESTING_STEP_M) + 1) * NESTING_STEP_M
    coarse = 4 * NESTING_STEP_M
    hi = first
    while not ok(hi):  # coarse scan, every fourth grid point
        lo, hi = hi, hi + coarse
        if hi > upper_m:
            raise ValueError(failure)
    for k in (3, 2, 1):  # the grid points just below the first coarse hit, lowest first
        trial = hi - k * NESTING_STEP_M
        if trial > lo + 1e-12 and trial >= first - 1e-12 and ok(trial):
            hi = trial
            break
        if trial > lo + 1e-12:
            lo = max(lo, trial)
    return _bisect_edge(ok, good=hi, bad=lo, tolerance=tolerance_m)


def largest_nesting_size_m(axis: str, shape: str, outer, frame: FrameSpec, upper_m: float,
                           tolerance_m: float = 5e-4) -> float | None:
    """Largest size <= upper_m of a flat-spaced pair on ``axis`` that clears every pair in
    ``outer``, by bisection (clearance falls as the inner pair grows); the size returned
    always clears. None if even a pair of 5 % of upper_m does not clear."""
    ratio = flat_spacing_m(shape, 1.0)
    return largest_clear_size_m(lambda size: clears(CoilPair(axis, shape, size, ratio * size, 1), outer, frame),
                                upper_m, tolerance_m)


def largest_clear_size_m(ok, upper_m: float, tolerance_m: float = 5e-4) -> float | None:
    """Largest size <= upper_m where ``ok(size)`` (an inner coil set clears the ones outside it)
    holds, by bisection; None if it fails even at 5 % of upper_m."""
    if ok(upper_m):
        return float(upper_m)
    lo = 0.05 * upper_m
    if not ok(lo):
        return None
    return _bisect_edge(ok, good=lo, bad=float(upper_m), tolerance=tolerance_m)


def _bisect_edge(ok, good: float, bad: float, tolerance: float, rel: float = 0.0) -> float:
    """Bisect between a value where ``ok`` holds and one where it does not; return the last
    value where it holds, within ``tolerance`` of the edge (or ``rel`` of the failing end's
    size, when that is larger)."""
    while abs(bad - good) > max(tolerance, rel * abs(bad)):
        mid = 0.5 * (good + bad)
        if ok(mid):
            good = mid
        else:
            bad = mid
    return good


def too_small_problems(cage: CoilCage, frame: FrameSpec) -> list[str]:
    """The pairs whose coils are no wider than their frame's depth (no room for the frame's
    hole), in plain words; empty if none."""
    return [f"the {p.axis} pair ({p.shape}, {p.size_m:g} m) is smaller than its {frame.depth_m * 1000:g} mm frame"
            for p in cage.pairs if p.half_width_m <= frame.depth_m / 2.0]


def geometry_problems(cage: CoilCage, frame: FrameSpec, test_volume_m=None) -> list[str]:
    """What makes a cage impossible to build or to use, in plain words (empty if nothing).

    Frames of different axes that collide (centrelines closer than the frame circumcircle
    plus the gap, less 1 mm of slack for a design made elsewhere), a coil smaller than its
    frame, and a test volume that a coil passes through.
    """
    out = too_small_problems(cage, frame)
    if out:
        return out
    layout = check_layout(cage, frame)
    if layout.min_distance_m < frame.needed_distance_m - 1e-3:
        a, b = layout.closest_axes
        out.append(f"the frames of the {a} and {b} pairs collide: centrelines {layout.min_distance_m * 1000:.0f} mm "
                   f"apart, {frame.needed_distance_m * 1000:.0f} mm needed")
    if test_volume_m is not None:
        half = np.asarray(test_volume_m, dtype=float) / 2.0
        for p in cage.pairs:
            a = AXES.index(p.axis)
            u, v = (a + 1) % 3, (a + 2) % 3
            inside_axially = half[a] >= p.spacing_m / 2.0
            lateral = max(half[u], half[v]) if p.shape == "square" else math.hypot(half[u], half[v])
            if inside_axially and lateral >= p.half_width_m:
                out.append(f"the {p.axis} pair's coils pass through the "
                           f"{' x '.join(f'{2 * h:g}' for h in half)} m test volume")
    return out


def design_frames(design, layout_block: dict | None = None) -> tuple[CoilCage, FrameSpec]:
    """The frame lines and the frame cross-section of a design file's cage, from what each axis
    records: its ``frame_size_m`` when the winding's line lies in that frame's channel (else, as
    for an edited size, the frame line that carries its winding on the channel floor,
    cage.channel, else the winding line itself) and its frame width and depth (the
    largest over the axes; else the layout block's; else 40 x 40 mm). The gap is the layout
    block's, else 10 mm."""
    from cage.channel import frame_line_pair

    lay = layout_block or {}

    def number(v, default):
        return float(v) if isinstance(v, (int, float)) and not isinstance(v, bool) and v > 0 else default

    widths = [a.frame_width_m for a in design.axes if a.frame_width_m is not None]
    depths = [a.frame_depth_m for a in design.axes if a.frame_depth_m is not None]
    width = max(widths) if widths else number(lay.get("frame_width_m"), 0.04)
    depth = max(depths) if depths else number(lay.get("frame_depth_m"), 0.04)
    gap = lay.get("frame_gap_m")
    gap = float(gap) if isinstance(gap, (int, float)) and not isinstance(gap, bool) and gap >= 0 else 0.01
    pairs = []
    for a in design.axes:
        p = a.pair
        channel = (1.0 if p.shape == "square" else 0.5) * depth  # most the frame line may exceed the winding's
        if a.frame_size_m is not None and -1e-9 <= a.frame_size_m - p.size_m <= channel + 1e-9:
            pairs.append(CoilPair(p.axis, p.shape, a.frame_size_m, p.spacing_m, 1))
        elif a.wire is not None and a.frame_width_m is not None and a.frame_depth_m is not None:
            try:
                pairs.append(frame_line_pair(p, a.wire, a.frame_width_m, a.frame_depth_m))
            except Exception:  # an unknown wire: the design reader reports it
                pairs.append(p)
        else:
            pairs.append(p)
    return CoilCage(*pairs), FrameSpec(width, depth, gap)
