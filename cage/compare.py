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
from cage.optimise import PlanInputs, choose_winding

MAX_SIZES = 400


@dataclass(frozen=True)
class CompareRow:
    """The best cage at one outer size (metres), or the reason there is none.

    outer_size_m: side (square) or diameter (round) of the outermost centreline. sizes_m: each
    pair's ``CoilPair.size_m`` (side or radius); ``as_dict`` gives them as sides or diameters.
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
            "centreline_sizes_m": None if self.sizes_m is None else dict(zip(AXES, (
                v if self.shape == "square" else 2.0 * v for v in self.sizes_m))),
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
        from cage.systemplan import compare_system_rows

        for system in systems:
            if system != "pair" and any(system in systems_for_shape(sh) for sh in inp.shapes):
                rows += compare_system_rows(inp, sizes_m, system, progress)
    return rows


def _compare_pairs(inp: PlanInputs, sizes_m, progress=None) -> list[CompareRow]:
    """The best cage of pairs at each outer size."""
    from cage.uniformity import largest_uniform_cube_side_m

    rows = []
    orders = [inp.axis_order] if inp.axis_order else list(itertools.permutations(AXES))
    windings: dict = {}
    for outer in sizes_m:
        outer = float(outer)
        best = None
        reason = ""
        for order in orders:
            for shapes in itertools.product(inp.shapes, repeat=3):
                shape_of = dict(zip(order, shapes))
                top = _size_from_outer(shape_of[order[0]], outer)
                placed = [CoilPair(order[0], shape_of[order[0]], top, flat_spacing_m(shape_of[order[0]], top), 1)]
                for axis in order[1:]:
                    shape = shape_of[axis]
                    upper = _size_from_outer(shape, 2.0 * placed[-1].half_width_m)
                    size = largest_nesting_size_m(axis, shape, placed, inp.frame, upper)
                    if size is None:
                        break
                    placed.append(CoilPair(axis, shape, size, flat_spacing_m(shape, size), 1))
                if len(placed) < 3:
                    reason = f"the frames do not nest at {outer:g} m"
                    continue
                by_axis = {p.axis: p for p in placed}
                cage = CoilCage(by_axis["x"], by_axis["y"], by_axis["z"])
                axes = []
                for pair in cage.pairs:
                    if pair not in windings:
                        windings[pair] = choose_winding(pair.axis, pair, inp, pair.size_m)
                    result = windings[pair]
                    if result.plan is None:
                        reason = result.reason
                        break
                    axes.append(result.plan)
                if len(axes) < 3:
                    continue
                layout = check_layout(cage, inp.frame, inp.room)
                power = sum(a.drive.power_W for a in axes)
                mass = sum(a.electrics.copper_mass_kg for a in axes)
                volume = float(np.prod(layout.envelope_m))
                score = {"power": power, "mass": mass, "size": volume}[inp.minimise]
                meets = all(a.uniformity_reached <= inp.uniformity for a in axes) and layout.fits_room
                key = (not layout.fits_room, not meets, score)
                if best is None or key < best[0]:
                    label = shapes[0] if len(set(shapes)) == 1 else "mixed"
                    best = (key, label, order, cage, axes, layout, power, mass)
        if best is None:
            rows.append(CompareRow(outer_size_m=outer, feasible=False, reason=reason or "no candidate"))
        else:
            _, shape, order, cage, axes, layout, power, mass = best
            cube = min(largest_uniform_cube_side_m(p, inp.uniformity) for p in cage.pairs)
            meets = all(a.uniformity_reached <= inp.uniformity for a in axes)
            rows.append(CompareRow(
                outer_size_m=outer, feasible=True, shape=shape, order=tuple(order),
                shapes=tuple(p.shape for p in cage.pairs),
                sizes_m=tuple(p.size_m for p in cage.pairs), envelope_m=layout.envelope_m,
                uniform_cube_m=cube, total_power_W=power, copper_mass_kg=mass, fits_room=layout.fits_room,
                meets_requirement=meets and layout.fits_room,
            ))
        if progress is not None:
            progress(outer)
    return rows
