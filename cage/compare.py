"""Compare cage sizes: the best cage at each outer size, and what it gives.

The outer size of a cage is the transverse extent of its outermost pair's winding
centreline: the side of a square pair, the diameter of a round one, so square and round
cages compare on one scale. At each outer size, for each allowed shape on each axis (mixed shapes when the site allows
either, as the planner) and each order of the axes (only the site's axis_order when given),
the outermost pair takes that size and each pair further in takes the largest size, no
wider than the pair outside it, that clears the frames outside it (cage.layout); the
windings are chosen as by the planner (cage.optimise.choose_winding) for the site's field
range and supplies. The best candidate by the planner's objective, preferring cages that fit the room and meet the uniformity, is reported with its
envelope, the largest uniform cube at the site's tolerance (the smallest over the three
axes, bisection on the exact field), power at full range, copper mass and whether it fits
the room; or why no candidate works.
"""
from __future__ import annotations

import itertools
import math
from dataclasses import dataclass

import numpy as np

from cage.coils import AXES, CoilCage, CoilPair, flat_spacing_m
from cage.errors import InputError
from cage.layout import check_layout, largest_nesting_size_m
from cage.planinputs import PlanInputs
from cage.winding import choose_winding

MAX_SIZES = 400


@dataclass(frozen=True)
class CompareRow:
    """The best cage at one outer size (metres), or the reason there is none.

    outer_size_m: side (square) or diameter (round) of the outermost centreline. sizes_m: each
    pair's ``CoilPair.size_m`` (side or radius); ``as_dict`` gives them as sides or diameters,
    each by its own axis's shape (``size_kind`` is None for a mixed cage).
    """

    outer_size_m: float
    feasible: bool
    reason: str = ""
    shape: str = ""  # the shape of all three pairs, or "mixed" (see shapes)
    order: tuple[str, ...] = ()
    sizes_m: tuple[float, float, float] | None = None
    envelope_m: tuple[float, float, float] | None = None
    uniform_cube_m: float | None = None
    total_power_W: float | None = None
    copper_mass_kg: float | None = None
    fits_room: bool = False
    meets_requirement: bool = False
    shapes: tuple[str, ...] = ()  # per axis x, y, z
    system: str = "pair"  # the coil system of all three axes (cage.coilsystems)

    def as_dict(self) -> dict:
        return {
            "outer_size_m": self.outer_size_m, "feasible": self.feasible, "reason": self.reason,
            "shape": self.shape, "order_outermost_first": list(self.order),
            # one measure throughout: side (square) or diameter (round), as outer_size_m
            "size_kind": "side" if self.shape == "square" else "diameter" if self.shape == "round" else None,
            # per axis by its own shape: a mixed cage has sides and diameters
            "centreline_sizes_m": None if self.sizes_m is None else dict(zip(AXES, (
                v if shape == "square" else 2.0 * v
                for v, shape in zip(self.sizes_m, self.shapes or (self.shape,) * 3)))),
            "envelope_m": None if self.envelope_m is None else list(self.envelope_m),
            "uniform_cube_m": self.uniform_cube_m, "total_power_W": self.total_power_W,
            "copper_mass_kg": self.copper_mass_kg, "fits_room": self.fits_room,
            "meets_requirement": self.meets_requirement,
            "shapes": dict(zip(AXES, self.shapes)) if self.shapes else None,
            "system": self.system,
        }


def parse_sizes(text: str) -> np.ndarray:
    """``START:STOP:STEP`` (metres, STOP included) or a comma list, into an array of sizes."""
    text = text.strip()
    try:
        if ":" in text:
            parts = [float(p) for p in text.split(":")]
            if len(parts) != 3:
                raise ValueError
            start, stop, step = parts
            if not all(math.isfinite(v) for v in parts) or step <= 0 or start <= 0 or stop < start:
                raise InputError(f"--sizes {text!r}: need 0 < START <= STOP and STEP > 0 (metres)")
            span = (stop - start) / step
            if not math.isfinite(span) or span + 1 > MAX_SIZES:
                raise InputError(f"--sizes {text!r}: more than {MAX_SIZES} sizes")
            count = int(math.floor(span + 1e-9)) + 1
            sizes = start + step * np.arange(count)
        else:
            sizes = np.array([float(p) for p in text.split(",")])
    except InputError:
        raise
    except ValueError:
        raise InputError(f"--sizes {text!r}: give START:STOP:STEP or a comma list of sizes in metres") from None
    if sizes.size == 0 or not np.all(np.isfinite(sizes)) or np.any(sizes <= 0) or np.any(sizes > 50):
        raise InputError(f"--sizes {text!r}: sizes must be positive and at most 50 m")
    if sizes.size > MAX_SIZES:
        raise InputError(f"--sizes {text!r}: {sizes.size} sizes, at most {MAX_SIZES}")
    return sizes


def _size_from_outer(shape: str, outer_m: float) -> float:
    return outer_m if shape == "square" else outer_m / 2.0


def compare_sizes(inp: PlanInputs, sizes_m, progress=None) -> list[CompareRow]:
    """The best cage at each outer size and allowed coil system (``inp.systems``): pairs first,
    then each other system (``cage.systemplan.compare_system_rows``), sizes ascending within
    each; ``progress`` (callable, optional) is called once per size and system."""
    systems = tuple(getattr(inp, "systems", ("pair",)))
    rows = _compare_pairs(inp, sizes_m, progress) if "pair" in systems else []
    if any(s != "pair" for s in systems):
        from cage.coilsystems import systems_for_shape

        for system in systems:
            if system != "pair" and any(system in systems_for_shape(sh) for sh in inp.shapes):
                rows += compare_system_rows(inp, sizes_m, system, progress)
    return rows


@dataclass(frozen=True)
class _Kind:
    """How one kind of axis (pairs, or one multi-coil system) is built, nested, wound and judged, so
    that one loop (``_compare_rows``) compares every kind alike."""

    system: str
    shape_sets: object  # order -> iterable of {axis: shape}
    unit: object  # (axis, shape, size) -> the axis's pair or coil axis
    nest: object  # (axis, shape, placed, upper_m) -> largest size that clears, or None
    cage: object  # (x, y, z) -> the cage
    units: object  # cage -> its units x, y, z
    wind: object  # unit -> (AxisPlan or None, reason)
    layout: object  # cage -> Layout
    cube: object  # unit -> its largest uniform cube edge (m)


def _pair_kind(inp: PlanInputs) -> _Kind:
    """Three coil pairs, each axis any allowed shape (mixed shapes when the site allows either)."""
    from cage.uniformity import largest_uniform_cube_side_m

    def shape_sets(order):
        return (dict(zip(order, shapes)) for shapes in itertools.product(inp.shapes, repeat=3))

    def wind(pair):
        result = choose_winding(pair.axis, pair, inp, pair.size_m)
        return result.plan, result.reason

    return _Kind(
        system="pair", shape_sets=shape_sets,
        unit=lambda axis, shape, size: CoilPair(axis, shape, size, flat_spacing_m(shape, size), 1),
        nest=lambda axis, shape, placed, upper: largest_nesting_size_m(axis, shape, placed, inp.frame, upper),
        cage=CoilCage, units=lambda cage: cage.pairs, wind=wind,
        layout=lambda cage: check_layout(cage, inp.frame, inp.room),
        cube=lambda pair: largest_uniform_cube_side_m(pair, inp.uniformity))


def _system_kind(inp: PlanInputs, system: str) -> _Kind:
    """Three axes of one multi-coil ``system``, all of one shape that the system has."""
    from cage.coilaxis import AxisCage
    from cage.coillayout import check_axes_layout
    from cage.coilsystems import system_axis, systems_for_shape
    from cage.systemplan import largest_nesting_axis_size_m, largest_uniform_cube_m, winding_for_axis

    shapes = [s for s in inp.shapes if system in systems_for_shape(s)]

    def wind(ax):
        plan, why, _ = winding_for_axis(ax, inp, ax.size_m)
        return plan, why

    return _Kind(
        system=system, shape_sets=lambda order: ({axis: shape for axis in order} for shape in shapes),
        unit=lambda axis, shape, size: system_axis(axis, shape, system, size),
        nest=lambda axis, shape, placed, upper: largest_nesting_axis_size_m(axis, shape, system, placed,
                                                                           inp.frame, upper),
        cage=AxisCage, units=lambda cage: cage.axes, wind=wind,
        layout=lambda cage: check_axes_layout(cage, inp.frame, inp.room),
        cube=lambda ax: largest_uniform_cube_m(ax, inp.uniformity))


def _compare_pairs(inp: PlanInputs, sizes_m, progress=None) -> list[CompareRow]:
    """The best cage of pairs at each outer size."""
    return _compare_rows(inp, sizes_m, _pair_kind(inp), progress)


def compare_system_rows(inp, sizes_m, system: str, progress=None) -> list:
    """``compare_sizes`` for cages whose three axes are all ``system`` (three- or
    four-coil): at each outer size (side of the outermost squares, or diameter of the outermost
    largest circle) each order of the axes and each shape the system has, the outermost axis takes
    that size and each axis further in the largest size no wider than the one outside it that
    clears every coil outside it; windings by ``winding_for_axis``; the best by the objective,
    preferring cages that fit the room and meet the uniformity. Rows carry ``system``."""
    return _compare_rows(inp, sizes_m, _system_kind(inp, system), progress)


def _compare_rows(inp: PlanInputs, sizes_m, kind: _Kind, progress=None) -> list[CompareRow]:
    """The search of the module docstring for one kind of axis: at each outer size, each order and
    each allowed set of shapes, the outermost axis at that size and each further in at the largest
    size that nests; the best by (fits the room, meets the uniformity, objective)."""
    orders = [inp.axis_order] if inp.axis_order else list(itertools.permutations(AXES))
    windings: dict = {}
    rows = []
    for outer in sizes_m:
        outer = float(outer)
        best = None
        reason = ""
        for order in orders:
            for shape_of in kind.shape_sets(order):
                placed = [kind.unit(order[0], shape_of[order[0]], _size_from_outer(shape_of[order[0]], outer))]
                for axis in order[1:]:
                    shape = shape_of[axis]
                    size = kind.nest(axis, shape, placed, _size_from_outer(shape, 2.0 * placed[-1].half_width_m))
                    if size is None:
                        break
                    placed.append(kind.unit(axis, shape, size))
                if len(placed) < 3:
                    reason = f"the frames do not nest at {outer:g} m"
                    continue
                by_axis = {p.axis: p for p in placed}
                cage = kind.cage(by_axis["x"], by_axis["y"], by_axis["z"])
                axes = []
                for unit in kind.units(cage):
                    if unit not in windings:
                        windings[unit] = kind.wind(unit)
                    plan, why = windings[unit]
                    if plan is None:
                        reason = why
                        break
                    axes.append(plan)
                if len(axes) < 3:
                    continue
                layout = kind.layout(cage)
                power = sum(a.drive.power_W for a in axes)
                mass = sum(a.electrics.copper_mass_kg for a in axes)
                score = {"power": power, "mass": mass, "size": float(np.prod(layout.envelope_m))}[inp.minimise]
                meets = all(a.uniformity_reached <= inp.uniformity for a in axes) and layout.fits_room
                key = (not layout.fits_room, not meets, score)
                if best is None or key < best[0]:
                    best = (key, order, cage, axes, layout, power, mass, meets)
        if best is None:
            if not reason and kind.system != "pair" and not any(True for _ in kind.shape_sets(AXES)):
                reason = f"no {kind.system} system for the allowed shapes"
            rows.append(CompareRow(outer_size_m=outer, feasible=False, reason=reason or "no candidate",
                                   system=kind.system))
        else:
            _, order, cage, axes, layout, power, mass, meets = best
            units = kind.units(cage)
            shapes = tuple(u.shape for u in units)
            rows.append(CompareRow(
                outer_size_m=outer, feasible=True, shape=shapes[0] if len(set(shapes)) == 1 else "mixed",
                order=tuple(order), shapes=shapes, sizes_m=tuple(u.size_m for u in units),
                envelope_m=layout.envelope_m, uniform_cube_m=min(kind.cube(u) for u in units),
                total_power_W=power, copper_mass_kg=mass, fits_room=layout.fits_room, meets_requirement=meets,
                system=kind.system))
        if progress is not None:
            progress(outer)
    return rows
