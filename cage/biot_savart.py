"""Exact Biot-Savart fields of thin filaments: straight segments (closed polygons) and circles.

Units: points and geometry in metres, currents in amperes, fields in tesla. One frame for
everything passed in (the caller's, normally ``cage``). mu0 is CODATA 2022.

The two kernels, the straight segment (Hanson and Hirshman, 2002) and the circular loop
(Simpson et al., 2001, rewritten for full precision near the axis and far away), are in
``cage.filamentkernels`` with their formulas; this module holds the sources, their input
checks, and their evaluation over points.

On or next to a filament. A point closer than ``ON_WIRE_M`` (1e-9 m) to a filament gets zero
contribution from that filament (the thin-wire field is infinite there; the other filaments
still count). A filament is a whole polygon, a whole loop, or one lone segment of
``segment_field_T``. The result is always finite, and no floating-point warning is raised.

Batches. Many sources at a few hundred points (a winding pack modelled as one filament per
turn: hundreds of coaxial loops or polygons at the planner's ~400 test points) are evaluated
together: loops with the same normal, polygons with the same vertex count and edge directions
(then those with different directions together, directions per source), as (sources x
points) arrays of at most ``BATCH_ELEMENTS`` elements, with the same kernels, the same
on-wire rule per source and results equal to the one-at-a-time path to rounding (the sum runs
over sources in another order). Few sources, or many points (a chunk of points fills a
batch alone), go one source at a time.

Memory. Points are processed in chunks of ``CHUNK_POINTS``; the working set is a few dozen
arrays of that length (or of ``BATCH_ELEMENTS``) whatever the number of points or sources, so
a million points take the (n, 3) input and output plus a few megabytes.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Sequence

import numpy as np

from cage.filamentkernels import (
    MU0_T_M_PER_A,
    ON_WIRE_M,
    _acc,
    _lin,
    _loop_core,
    _loop_local,
    _polygon_chunk,
    _polygon_setup,
    _rho_parts,
    _segment_core,
    _sumsq,
)

__all__ = [
    "MU0_T_M_PER_A",
    "ON_WIRE_M",
    "CHUNK_POINTS",
    "Polygon",
    "Loop",
    "filaments_field_T",
    "segment_field_T",
    "polygon_field_T",
    "loop_field_T",
]

CHUNK_POINTS = 16384
"""Points processed at once; bounds the working memory."""

# ---------------------------------------------------------------------------------------------
# Sources
# ---------------------------------------------------------------------------------------------


def _as_vector(value, what: str) -> np.ndarray:
    arr = np.asarray(value, dtype=float)
    if arr.shape != (3,):
        raise ValueError(f"{what} must be a 3-vector, got shape {arr.shape}")
    if not all(map(math.isfinite, arr.tolist())):  # per element: cheaper than numpy for 3 numbers
        raise ValueError(f"{what} must be finite, got {arr.tolist()}")
    return arr


def _check_current(current_A, what: str) -> float:
    value = float(current_A)
    if not math.isfinite(value):
        raise ValueError(f"{what} must be finite, got {current_A!r}")
    return value


@dataclass(frozen=True, eq=False)
class Polygon:
    """A closed polygon of straight filament segments carrying ``current_A``.

    vertices_m: (k, 3) vertices in metres, k >= 2; the last vertex joins the first. The
        current flows from vertex i to vertex i + 1. Zero-length edges are ignored.
    current_A: current in amperes (for a coil of N turns modelled as one filament, N x I).
    """

    vertices_m: np.ndarray
    current_A: float

    def __post_init__(self):
        verts = np.array(self.vertices_m, dtype=float)
        if verts.ndim != 2 or verts.shape[1] != 3 or verts.shape[0] < 2:
            raise ValueError(f"polygon vertices must be (k, 3) with k >= 2, got {verts.shape}")
        if not np.all(np.isfinite(verts)):
            raise ValueError("polygon vertices must be finite")
        verts.setflags(write=False)
        object.__setattr__(self, "vertices_m", verts)
        object.__setattr__(self, "current_A", _check_current(self.current_A, "polygon current"))

    def scaled(self, factor: float) -> "Polygon":
        """The same polygon with its current multiplied by ``factor``."""
        return Polygon(self.vertices_m, self.current_A * float(factor))


@dataclass(frozen=True, eq=False)
class Loop:
    """A circular filament: centre (m), unit normal, radius (m), current (A).

    A positive current circulates right-handed about ``normal``: the field at the centre
    points along +normal. The normal is normalised on construction.
    """

    centre_m: np.ndarray
    normal: np.ndarray
    radius_m: float
    current_A: float

    def __post_init__(self):
        centre = _as_vector(self.centre_m, "loop centre")
        normal = _as_vector(self.normal, "loop normal")
        size = float(np.linalg.norm(normal))
        if size == 0.0:
            raise ValueError("loop normal must not be zero")
        normal = normal / size
        radius = float(self.radius_m)
        if not (math.isfinite(radius) and radius > 0):
            raise ValueError(f"loop radius must be positive and finite, got {self.radius_m!r}")
        centre.setflags(write=False)
        normal.setflags(write=False)
        object.__setattr__(self, "centre_m", centre)
        object.__setattr__(self, "normal", normal)
        object.__setattr__(self, "radius_m", radius)
        object.__setattr__(self, "current_A", _check_current(self.current_A, "loop current"))

    def scaled(self, factor: float) -> "Loop":
        """The same loop with its current multiplied by ``factor``."""
        return Loop(self.centre_m, self.normal, self.radius_m, self.current_A * float(factor))


# ---------------------------------------------------------------------------------------------
# Public evaluation
# ---------------------------------------------------------------------------------------------


def _as_points(points_m) -> tuple[np.ndarray, bool]:
    pts = np.asarray(points_m, dtype=float)
    single = pts.shape == (3,)
    if single:
        pts = pts[None, :]
    if pts.ndim != 2 or pts.shape[1] != 3:
        raise ValueError(f"points must have shape (3,) or (n, 3), got {np.shape(points_m)}")
    if not np.all(np.isfinite(pts)):
        raise ValueError("points must be finite")
    return pts, single


def _chunked(pts: np.ndarray, chunk_points: int, accumulate) -> np.ndarray:
    """(n, 3) field: ``accumulate(x, y, z, bx, by, bz)`` adds into bx, by, bz for each chunk of
    points, so memory stays bounded whatever n is."""
    n = pts.shape[0]
    out = np.zeros((n, 3))
    with np.errstate(divide="ignore", invalid="ignore", over="ignore", under="ignore"):
        for s in range(0, n, chunk_points):
            e = min(n, s + chunk_points)
            x = np.ascontiguousarray(pts[s:e, 0])
            y = np.ascontiguousarray(pts[s:e, 1])
            z = np.ascontiguousarray(pts[s:e, 2])
            bx = np.zeros(e - s)
            by = np.zeros(e - s)
            bz = np.zeros(e - s)
            accumulate(x, y, z, bx, by, bz)
            out[s:e, 0] = bx
            out[s:e, 1] = by
            out[s:e, 2] = bz
    return out


def _columns(values: np.ndarray) -> list:
    """Per-source values (s, m) as m entries: one float where all s sources share the value
    (so the numeric cores skip zeros and units and keep per-point shapes), else an (s, 1)
    column broadcast against the points."""
    shared = np.all(values == values[:1], axis=0).tolist()
    first = values[0].tolist()
    return [first[i] if shared[i] else values[:, i:i + 1] for i in range(values.shape[1])]


def _polygon_batch_setup(vertices, units, lengths, currents_A):
    """Set-up of a batch of s closed polygons of k vertices, zero-length edges at the same places.

    vertices: (s, k, 3) m; units: (s, k, 3) edge unit vectors (as ``_polygon_setup``),
    lengths: (s, k) m, currents_A: (s,) A. Returns (vertex columns (k x 3), edges (k entries:
    (unit, length) or None for a zero-length edge), coef (s, 1) = mu0 I / (4 pi)); see
    ``_columns``.
    """
    s, k = lengths.shape
    cols = _columns(vertices.reshape(s, 3 * k))
    verts = [tuple(cols[3 * j:3 * j + 3]) for j in range(k)]
    unit_cols = _columns(units.reshape(s, 3 * k))
    length_cols = _columns(lengths)
    edges = [None if (isinstance(length_cols[i], float) and length_cols[i] == 0.0)
             else (tuple(unit_cols[3 * i:3 * i + 3]), length_cols[i]) for i in range(k)]
    coef = (MU0_T_M_PER_A / (4.0 * math.pi)) * currents_A[:, None]
    return verts, edges, coef


def _batch_rel(pts, v):
    """Per-point (or per source and point) offsets from a vertex given as ``_columns`` entries."""
    comps = tuple(p - c if (not isinstance(c, float) or c != 0.0) else p for p, c in zip(pts, v))
    rsq = _sumsq(comps)
    return comps, rsq, np.sqrt(rsq)


def _polygon_batch(x, y, z, setup, bx, by, bz):
    """Add the fields of a batch of polygons (``_polygon_batch_setup``) to bx, by, bz.

    The same kernel as ``_polygon_chunk`` evaluated on (s, n) arrays (per-source values
    broadcast against the points); a point within ON_WIRE_M of a polygon gets nothing from it.
    """
    verts, edges, coef = setup
    pts = (x, y, z)
    k = len(verts)
    first = _batch_rel(pts, verts[0])
    cur = first
    acc = [None, None, None]
    near_all = None
    for i in range(k):
        nxt = first if i + 1 == k else _batch_rel(pts, verts[i + 1])
        if edges[i] is not None:
            unit, length = edges[i]
            f, cross, near = _segment_core(cur[0], cur[1], cur[2], nxt[1], nxt[2], unit, length, coef)
            if near is not None:
                near_all = near if near_all is None else (near_all | near)
            for c in range(3):
                if cross[c] is None:
                    continue
                term = f * cross[c]
                acc[c] = term if acc[c] is None else acc[c] + term
        cur = nxt
    for target, a in zip((bx, by, bz), acc):
        if a is None:
            continue
        # f carries the per-source coef, so a is (s, n) even where the geometry is shared
        if near_all is not None:
            a[np.broadcast_to(near_all, a.shape)] = 0.0
        target += np.add.reduce(a, axis=0)


def _loop_batch_setup(centres, normals, radii, currents_A):
    """Set-up of a batch of s circular loops: centres (s, 3) m, normals (s, 3) unit, radii (s,) m,
    currents (s,) A. Returns (s, centre columns, normal columns, radius, coef = mu0 I / pi),
    each a float where shared by all s loops, else an (s, 1) column (``_columns``)."""
    R, coef = _columns(np.column_stack([radii, (MU0_T_M_PER_A / math.pi) * currents_A]))
    return radii.shape[0], tuple(_columns(centres)), tuple(_columns(normals)), R, coef


def _loop_batch(x, y, z, setup, bx, by, bz):
    """Add the fields of a batch of loops (``_loop_batch_setup``) to bx, by, bz: the same kernel
    as ``_loop_core`` (``_loop_local``) evaluated on (s, n) arrays; coaxial loops share their
    per-point distances from the axis."""
    s, centre, n, R, coef = setup
    X = _batch_rel((x, y, z), centre)[0]
    zl = _lin(n, X)
    rho_v, rho2 = _rho_parts(X, n, zl)
    shape = (s, x.size)
    flat = lambda v: v if isinstance(v, float) else np.broadcast_to(v, shape).ravel()  # noqa: E731
    bzl, brho_over_rho = _loop_local(flat(zl), flat(rho2), flat(R), flat(coef))
    bzl = bzl.reshape(shape)
    brho_over_rho = brho_over_rho.reshape(shape)
    comps = (bx, by, bz)
    bzl_sum = None
    brho_sum = None
    for i in range(3):
        target = comps[i]
        if isinstance(n[i], np.ndarray):
            target += np.add.reduce(n[i] * bzl, axis=0)
        elif n[i] != 0.0:
            if bzl_sum is None:
                bzl_sum = np.add.reduce(bzl, axis=0)
            _acc(target, n[i], bzl_sum)
        rv = rho_v[i]
        if rv is None:
            continue
        if rv.ndim == 1:  # the same for every loop of the batch (coaxial loops)
            if brho_sum is None:
                brho_sum = np.add.reduce(brho_over_rho, axis=0)
            target += brho_sum * rv
        else:
            target += np.add.reduce(brho_over_rho * rv, axis=0)


BATCH_ELEMENTS = 16384
"""Source-point pairs of one batched evaluation (``_polygon_batch``, ``_loop_batch``): bounds
the working memory (a few dozen arrays of this many elements) and keeps them in cache."""

BATCH_MIN_SOURCES = 2
"""Sources of one kind (loops; polygons of one vertex count) from which they are evaluated as
batches, when at least two sources fit in one batch with a chunk of points; otherwise one
at a time (``_polygon_chunk``, ``_loop_core``), which is as fast there."""


_HEAP_BLOCK = 1 << 20


def _keep_heap() -> None:
    """Ask the C allocator to keep the batches' working memory between batches.

    The batches allocate and free a few megabytes of temporaries each (dozens of arrays of
    ``BATCH_ELEMENTS`` doubles). glibc returns freed memory at the top of its heap to the
    system once it exceeds the trim threshold (128 KiB by default), so every batch would fault
    its pages in again, which costs more than the arithmetic. Freeing one block large enough
    to have been mapped on its own raises that threshold to twice the block's size (glibc's
    dynamic mmap threshold, mallopt(3)); the block is never touched. Other allocators ignore it.
    """
    block = np.empty(_HEAP_BLOCK)
    del block


def _polygon_arrays(polygons):
    """Polygons stacked by vertex count: [(vertices (s, k, 3), units (s, k, 3), lengths (s, k),
    currents (s,))], the edges as ``_polygon_setup`` gives them."""
    by_k: dict[int, list] = {}
    for p in polygons:
        by_k.setdefault(p.vertices_m.shape[0], []).append(p)
    out = []
    for items in by_k.values():
        verts = np.stack([p.vertices_m for p in items])
        edges = np.roll(verts, -1, axis=1) - verts
        lengths = np.sqrt(np.einsum("sij,sij->si", edges, edges))
        units = np.zeros_like(edges)
        ok = lengths > 0
        units[ok] = edges[ok] / lengths[ok][:, None]
        # as _polygon_setup: rounding noise of axis-aligned edges becomes exact 0 / +-1
        units[np.abs(units) < 1e-15] = 0.0
        unit_like = np.abs(np.abs(units) - 1.0) < 1e-15
        units[unit_like] = np.sign(units[unit_like])
        out.append((verts, units, lengths, np.array([p.current_A for p in items])))
    return out


def _batches(keys, pools, min_sources):
    """Split sources into batches: sources with equal ``keys`` (the same normal, or the same
    edge directions) from ``min_sources`` up; the rest pooled by ``pools`` (sources that may
    share a batch with per-source directions), a pool from ``min_sources`` up; what remains
    goes one at a time. Returns (list of index arrays, list of single indices)."""
    by_key: dict = {}
    for j, key in enumerate(keys):
        by_key.setdefault(key, []).append(j)
    batches, rest = [], {}
    for idx in by_key.values():
        if len(idx) >= min_sources:
            batches.append(np.array(idx))
        else:
            for j in idx:
                rest.setdefault(pools[j], []).append(j)
    singles = []
    for idx in rest.values():
        if len(idx) >= min_sources:
            batches.append(np.array(sorted(idx)))
        else:
            singles.extend(idx)
    return batches, singles


def _evaluate(pts: np.ndarray, polygons: Sequence[Polygon], loops: Sequence[Loop],
              chunk_points: int) -> np.ndarray:
    # Many sources at a few hundred points (the winding-pack check): batches of sources
    # evaluated together on (sources x points) arrays; many points: one source at a time.
    step = max(1, BATCH_ELEMENTS // max(1, min(pts.shape[0], chunk_points)))  # sources per batch
    batched = step >= 2
    min_sources = BATCH_MIN_SOURCES if batched else math.inf
    poly_batches, setups = [], []
    for verts, units, lengths, currents in _polygon_arrays([p for p in polygons if p.current_A != 0.0]):
        # the edge directions fix which edges have zero length (skipped), so pools are by those
        idx_b, idx_s = _batches([u.tobytes() for u in units], [(lg > 0).tobytes() for lg in lengths],
                                min_sources)
        poly_batches += [(verts[i], units[i], lengths[i], currents[i]) for i in idx_b]
        setups += [(verts[j], *_polygon_setup(verts[j], True), float(currents[j])) for j in idx_s]
    loop_list = [lp for lp in loops if lp.current_A != 0.0]
    loop_batches = []
    if len(loop_list) >= min_sources:
        centres = np.array([lp.centre_m for lp in loop_list])
        normals = np.array([lp.normal for lp in loop_list])
        radii = np.array([lp.radius_m for lp in loop_list])
        currents = np.array([lp.current_A for lp in loop_list])
        idx_b, idx_s = _batches([v.tobytes() for v in normals], [None] * len(loop_list), min_sources)
        loop_batches = [(centres[i], normals[i], radii[i], currents[i]) for i in idx_b]
        loop_list = [loop_list[j] for j in idx_s]
    if pts.shape[0] == 0 or not (setups or loop_list or poly_batches or loop_batches):
        return np.zeros((pts.shape[0], 3))
    if poly_batches or loop_batches:
        _keep_heap()

    poly_setups = [_polygon_batch_setup(verts[i:i + step], units[i:i + step], lengths[i:i + step],
                                        currents[i:i + step])
                   for verts, units, lengths, currents in poly_batches for i in range(0, len(currents), step)]
    loop_setups = [_loop_batch_setup(centres[i:i + step], normals[i:i + step], radii[i:i + step],
                                     currents[i:i + step])
                   for centres, normals, radii, currents in loop_batches for i in range(0, len(currents), step)]

    def accumulate(x, y, z, bx, by, bz):
        for setup in poly_setups:
            _polygon_batch(x, y, z, setup, bx, by, bz)
        for setup in loop_setups:
            _loop_batch(x, y, z, setup, bx, by, bz)
        for verts, units, lengths, cur in setups:
            _polygon_chunk(x, y, z, verts, units, lengths, cur, bx, by, bz)
        for lp in loop_list:
            _loop_core(x, y, z, lp.centre_m, lp.normal, lp.radius_m, lp.current_A, bx, by, bz)

    return _chunked(pts, chunk_points, accumulate)


def filaments_field_T(points_m, polygons: Sequence[Polygon] = (), loops: Sequence[Loop] = (),
                      chunk_points: int = CHUNK_POINTS) -> np.ndarray:
    """Total field (T) of closed polygons and circular loops at points (m).

    points_m: (n, 3) or (3,) in metres; the result has the same shape, in tesla.
    polygons, loops: the sources (each with its own current in amperes).
    Points within ``ON_WIRE_M`` of a filament get no contribution from that filament.
    """
    pts, single = _as_points(points_m)
    chunk = int(chunk_points)
    if chunk < 1:
        raise ValueError(f"chunk_points must be at least 1, got {chunk_points!r}")
    for p in polygons:
        if not isinstance(p, Polygon):
            raise TypeError(f"expected Polygon, got {type(p).__name__}")
    for lp in loops:
        if not isinstance(lp, Loop):
            raise TypeError(f"expected Loop, got {type(lp).__name__}")
    out = _evaluate(pts, polygons, loops, chunk)
    return out[0] if single else out


def polygon_field_T(points_m, vertices_m, current_A: float) -> np.ndarray:
    """Field (T) of one closed polygon filament (vertices (k, 3) in m, current in A)."""
    return filaments_field_T(points_m, polygons=[Polygon(vertices_m, current_A)])


def loop_field_T(points_m, centre_m, normal, radius_m: float, current_A: float) -> np.ndarray:
    """Field (T) of one circular filament loop (centre m, normal, radius m, current A)."""
    return filaments_field_T(points_m, loops=[Loop(centre_m, normal, radius_m, current_A)])


def segment_field_T(points_m, starts_m, ends_m, currents_A) -> np.ndarray:
    """Summed field (T) of independent straight segments (current from start to end).

    starts_m, ends_m: (s, 3) in metres; currents_A: (s,) or a scalar, in amperes.
    A lone segment is not a physical circuit; the sum over a closed path is.
    """
    pts, single = _as_points(points_m)
    a = np.atleast_2d(np.asarray(starts_m, dtype=float))
    b = np.atleast_2d(np.asarray(ends_m, dtype=float))
    if a.shape != b.shape or a.ndim != 2 or a.shape[1] != 3:
        raise ValueError(f"segment starts and ends must both be (s, 3), got {a.shape}, {b.shape}")
    cur = np.broadcast_to(np.asarray(currents_A, dtype=float), (a.shape[0],))
    if not (np.all(np.isfinite(a)) and np.all(np.isfinite(b)) and np.all(np.isfinite(cur))):
        raise ValueError("segment ends and currents must be finite")
    segments = []
    for k in range(a.shape[0]):
        if cur[k] != 0.0:
            verts = np.stack([a[k], b[k]])
            segments.append((verts, *_polygon_setup(verts, closed=False), float(cur[k])))

    def accumulate(x, y, z, bx, by, bz):
        for verts, units, lengths, current in segments:
            _polygon_chunk(x, y, z, verts, units, lengths, current, bx, by, bz, closed=False)

    out = _chunked(pts, CHUNK_POINTS, accumulate)
    return out[0] if single else out
