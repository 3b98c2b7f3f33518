"""The planner for a cage of three coil pairs: the search over shapes, sizes and orders.

Planning layer. The method is described in ``cage.optimise`` (the planner's entry point,
``plan_cage``, which hands other coil systems to ``cage.systemplan``).
"""
from __future__ import annotations

import dataclasses
import itertools
import math

import numpy as np

from cage.coils import AXES, CoilCage, CoilPair
from cage.errors import InfeasibleError, InputError
from cage.layout import check_layout, envelope_m, pair_extent_m, room_inner_m, smallest_nesting_size_m
from cage.planinputs import (  # noqa: F401  (names kept importable from here)
    PACK_GRID_COILS, AxisPlan, INFLATIONS, LARGE_SUPPLY_FRACTION, MAX_SIZE_M, MAX_STEP_UPS, OBJECTIVES, Plan,
    PlanInputs, REFINED_CANDIDATES, SIZE_PRECISION, SPACINGS, UNIFORMITY_GRID, UNIFORMITY_MARGIN,
    WINDING_POSITION, _box, _pct, _size_name, plan_inputs_from_site)
from cage.uniformsize import (  # noqa: F401  (names kept importable from here)
    _UNIFORM_CACHE, _best_ratio, _box_clear_size_m, _box_for_axis, _deviation, _min_uniform_size,
    _min_uniform_size_cached, _uniform_key, min_uniform_size_m)
from cage.winding import (  # noqa: F401  (names kept importable from here)
    fewest_feasible, _WindingResult, _field_per_amp_per_turn_T, _turns_for_step, _wire_label,
    centre_field_per_ampere_turn_T, choose_winding)


# ----------------------------------------------------------------------------- the search

def axis_size_options(axis: str, shape: str, lower_m: float, ratio: float, inp: PlanInputs,
                      every_winding_m: float | None = None) -> tuple[float, ...]:
    """Sizes (side or radius, m) worth trying for one pair, from ``lower_m`` (its smallest uniform
    size that clears the pairs inside it) upward: ``lower_m`` itself, and the sizes where the
    field-step limit lets one more turn of an allowed wire in, for as long as that turn pays.

    The centre field per ampere-turn k (closed form) falls as the pair grows, so the turns a
    field step allows, floor(step / (k x supply step)), grow with the size; the size where n
    turns become allowed is found by bisection on the winding where it sits (cage.channel). At
    equal field the current goes as 1 / (k n) and the resistance as n x perimeter, so the power
    goes as perimeter / (k^2 n): a larger pair with one more turn pays while that falls. Sizes where the field first becomes reachable within
    the supply's current and the step limit are kept too. Only the step limit makes turns grow
    with size; without it (or for the mass and size objectives) the smallest size is best.

    This is the per-axis candidate generator: a further dimension of choice per axis (another
    coil system beside square and round pairs) plugs in here and in ``choose_winding``.

    every_winding_m: the smallest frame line on which a winding of any depth meets the
    uniformity (a thin pack sits further in, cage.channel); tried too when above lower_m.
    """
    base = (lower_m,) if every_winding_m is None or every_winding_m <= lower_m else (lower_m, every_winding_m)
    if inp.max_field_step_nT is None or inp.minimise != "power":
        return base
    from cage.channel import inset_m, pack_depth_m
    from cage.electrical import max_turns

    a = AXES.index(axis)
    supply = inp.supplies[a]
    need_T = float(inp.needed_field_nT[a]) * 1e-9
    step_T = inp.max_field_step_nT * 1e-9
    width, depth = inp.frame.width_m, inp.frame.depth_m
    inset0 = inset_m(shape, depth, 0.0)

    def k_of(f: float, wire: str, n: int) -> tuple[float, float]:
        """Winding size and centre field per ampere-turn on a frame line of size f (cage.channel)."""
        w = f - inset_m(shape, depth, pack_depth_m(wire, n, width))
        return w, centre_field_per_ampere_turn_T(shape, w, ratio * (f - inset0 / 2.0))

    def step_ok(f, wire, n):
        return k_of(f, wire, n)[1] * n * supply.resolution_A <= step_T * (1 + 1e-12)

    def cost(f, wire, n):  # power at equal field: perimeter / (k^2 n), up to a constant
        w, k = k_of(f, wire, n)
        return (4.0 * w if shape == "square" else 2.0 * math.pi * w) / (k * k * n)

    out = set(base)
    for wire in inp.wires:
        n_fit = max_turns(wire, width, depth)
        if n_fit < 1:
            continue
        n0 = min(n_fit, _turns_for_step(inp.max_field_step_nT, k_of(lower_m, wire, 1)[1], supply.resolution_A))
        while n0 < n_fit and step_ok(lower_m, wire, n0 + 1):
            n0 += 1
        while n0 >= 1 and not step_ok(lower_m, wire, n0):
            n0 -= 1
        reachable = n0 >= 1 and need_T <= k_of(lower_m, wire, n0)[1] * n0 * supply.max_current_A
        best = cost(lower_m, wire, n0) if reachable else math.inf
        for n in range(max(n0, 0) + 1, min(n_fit, max(n0, 0) + MAX_STEP_UPS) + 1):
            hi = lower_m * 1.05
            while not step_ok(hi, wire, n):
                hi *= 1.05
                if hi > MAX_SIZE_M:
                    break
            if hi > MAX_SIZE_M:
                break
            lo = lower_m
            while hi - lo > 1e-6 * hi:
                mid = 0.5 * (lo + hi)
                lo, hi = (lo, mid) if step_ok(mid, wire, n) else (mid, hi)
            if need_T > k_of(hi, wire, n)[1] * n * supply.max_current_A:
                continue  # the field is still out of reach at this size
            c = cost(hi, wire, n)
            if c >= best:
                break
            out.add(hi)
            best = c
    return tuple(sorted(out))


def _plan_pairs(inp: PlanInputs, finish: bool = True) -> Plan:
    """The best cage of three pairs (the method in the module docstring); ``finish=False``: without
    the winding-pack differences, warnings and notes (``finish_plan``)."""
    if inp.minimise not in OBJECTIVES:
        raise InputError(f"minimise must be one of {', '.join(OBJECTIVES)}, got {inp.minimise!r}")
    frame = inp.frame
    inner_room = None if inp.room is None else room_inner_m(inp.room)

    # 1. Smallest uniform size per axis and shape.
    uniform: dict[tuple[str, str], tuple[float, float]] = {}
    # Sizes here are frame lines; the winding's mean line is inside it by at most the channel
    # depth (a thin pack on the channel floor, cage.channel): the frame line is planned so that
    # even the thinnest winding meets the tolerance, at its own flat (or free) spacing.
    from cage.channel import inset_m

    inset = {shape: inset_m(shape, frame.depth_m, 0.0) for shape in inp.shapes}
    safe: dict[tuple[str, str], float] = {}
    for axis in AXES:
        for shape in inp.shapes:
            tol = inp.uniformity * UNIFORMITY_MARGIN
            uniform[(axis, shape)] = min_uniform_size_m(axis, shape, inp.test_volume_m, tol, inp.spacing,
                                                        inset[shape], every=False)
            safe[(axis, shape)] = min_uniform_size_m(axis, shape, inp.test_volume_m, tol, inp.spacing,
                                                     inset[shape], every=True)[0]

    # No smaller than the two frames can be built around the test volume (apart by a frame width,
    # wider than the frame, clear of the box; cage.coillayout.smallest_buildable_scale), the spacing
    # taken at the frame line (inset by half the channel: conservative by that much).
    from cage.coillayout import smallest_buildable_scale
    from cage.coilsystems import system_axis

    for (axis, shape), (size, ratio) in list(uniform.items()):
        unit = system_axis(axis, shape, "pair", 1.0, spacing_per_size=ratio)
        build = smallest_buildable_scale(unit, frame, inp.test_volume_m) + inset[shape] / 2.0
        uniform[(axis, shape)] = (max(size, build), ratio)
        safe[(axis, shape)] = max(safe[(axis, shape)], build)

    def frame_line(axis: str, shape: str, size: float) -> CoilPair:
        return CoilPair(axis, shape, size, uniform[(axis, shape)][1] * (size - inset[shape] / 2.0), 1)

    # A pair alone must fit the room: the plainest binding constraint.
    if inner_room is not None:
        for axis in AXES:
            misses = []
            for shape in inp.shapes:
                size, ratio = uniform[(axis, shape)]
                ext = 2.0 * pair_extent_m(frame_line(axis, shape, size), frame)
                over = ext / inner_room
                k = int(np.argmax(over))
                misses.append((over[k], shape, size, ext[k], k))
            if all(m[0] > 1.0 + 1e-12 for m in misses):
                over, shape, size, ext_k, k = min(misses)
                names = ("length", "width", "height")
                raise InfeasibleError(
                    f"a {_box(inp.test_volume_m)} test volume at {_pct(inp.uniformity)} needs a {shape} {axis} pair of "
                    f"at least {size:.2f} m {_size_name(shape)}, {ext_k:.2f} m over the frames along "
                    f"{AXES[k]}, while the room allows {inner_room[k]:.2f} m (room {names[k]} less "
                    f"{inp.room.clearance_m:g} m clearance each side)")

    orders = [inp.axis_order] if inp.axis_order else list(itertools.permutations(AXES))
    nest_cache: dict = {}
    size_options: dict = {}

    def nested_size(axis: str, shape: str, inner: tuple[CoilPair, ...], lower: float) -> float:
        # the axes' names play no part in clearances (cage.layout.min_centreline_distance_m), so
        # symmetric orders share their nesting scans
        key = (shape, uniform[(axis, shape)][1], tuple(sorted((p.shape, p.size_m, p.spacing_m) for p in inner)),
               lower)
        if key not in nest_cache:
            ratio = uniform[(axis, shape)][1]
            try:
                nest_cache[key] = smallest_nesting_size_m(axis, shape, list(inner), frame, lower,
                                                          spacing_per_size=ratio, upper_m=MAX_SIZE_M,
                                                          spacing_inset_m=inset[shape] / 2.0)
            except ValueError:
                nest_cache[key] = math.inf
        return nest_cache[key]

    def grow(order, shape_of, placed: tuple[CoilPair, ...], inflate):
        """Every nesting of the pairs, innermost first: each pair at its smallest uniform size that
        clears the pairs inside it (and, with axis_order, is at least as wide as they are), and at
        the larger sizes where one more turn pays (axis_size_options)."""
        depth = len(placed)
        if depth == 3:
            by_axis = {p.axis: p for p in placed}
            yield CoilCage(by_axis["x"], by_axis["y"], by_axis["z"])
            return
        axis = order[2 - depth]
        shape = shape_of[axis]
        size_u, ratio = uniform[(axis, shape)]
        lower = size_u * (inflate[depth] if depth < 2 else 1.0)
        if inp.axis_order and placed:
            widest = max(p.half_width_m for p in placed)
            lower = max(lower, (2.0 * widest if shape == "square" else widest) * (1.0 + 1e-9))
        size0 = nested_size(axis, shape, placed, lower)
        if not math.isfinite(size0):
            return
        options_key = (axis, shape, size0, ratio)
        if options_key not in size_options:  # the same nested size recurs across orders and shapes
            size_options[options_key] = axis_size_options(axis, shape, size0, ratio, inp, safe[(axis, shape)])
        for size in size_options[options_key]:
            if size > size0:
                size = nested_size(axis, shape, placed, size)
                if not math.isfinite(size):
                    continue
            yield from grow(order, shape_of, placed + (frame_line(axis, shape, size),), inflate)

    candidates = []
    room_misses = []
    seen = set()

    def consider(order, cage, shape_of) -> None:
        key = (tuple(order), cage)
        if key in seen:
            return
        seen.add(key)
        if inner_room is not None:  # the room first: it needs only the envelope, not the clearances
            env = envelope_m(cage, frame)
            if not np.all(env <= inner_room + 1e-12):
                room_misses.append((float(np.max(env / inner_room)), order, env))
                return
        # the exact clearances of the Layout only for the plan chosen (nesting has kept them)
        candidates.append((order, cage, envelope_m(cage, frame), shape_of))

    for order in orders:
        for shapes in itertools.product(inp.shapes, repeat=3):
            shape_of = dict(zip(order, shapes))
            for cage in grow(order, shape_of, (), (1.0, 1.0)):
                consider(order, cage, shape_of)

    # Greedy nesting is not always best: a slightly larger inner pair can let an outer pair
    # shrink. Try inflated inner pairs for the few smallest candidates.
    smallest = sorted(range(len(candidates)), key=lambda i: (float(np.prod(candidates[i][2])), i))
    for i in smallest[:REFINED_CANDIDATES]:
        order, cage0, _, shape_of = candidates[i]
        bound = [p.size_m > uniform[(p.axis, p.shape)][0] * (1 + 1e-9) for p in cage0.pairs]
        if not any(bound):
            continue  # every pair at its own uniform minimum: nothing to gain
        for inflate in INFLATIONS:
            for cage in grow(order, shape_of, (), inflate):
                consider(order, cage, shape_of)
    candidates = [c[:3] for c in candidates]

    if not candidates:
        over, order, envelope = min(room_misses, key=lambda m: m[0])
        env = " x ".join(f"{v:.2f}" for v in envelope)
        room = " x ".join(f"{v:.2f}" for v in inner_room)
        raise InfeasibleError(
            f"nesting the three pairs (outermost {order[0]}, then {order[1]}, {order[2]}) for a "
            f"{_box(inp.test_volume_m)} test volume at {_pct(inp.uniformity)} needs an envelope of {env} m "
            f"(x, y, z), while the room less its clearance allows {room} m")

    winding_cache: dict = {}
    best = None
    best_key = None
    failures = []
    for index, (order, cage, envelope) in enumerate(candidates):
        axes = []
        for pair in cage.pairs:
            key = (pair.axis, pair.shape, pair.size_m, pair.spacing_m)
            if key not in winding_cache:
                winding_cache[key] = choose_winding(pair.axis, pair, inp, uniform[(pair.axis, pair.shape)][0])
            result = winding_cache[key]
            if result.plan is None:
                failures.append((result.badness, result.reason))
                break
            axes.append(result.plan)
        if len(axes) < 3:
            continue
        power = sum(a.drive.power_W for a in axes)
        mass = sum(a.electrics.copper_mass_kg for a in axes)
        volume = float(np.prod(envelope))
        if inp.minimise == "power":
            key = (round(power, 9), round(volume, 12), index)
        elif inp.minimise == "mass":
            key = (round(mass, 9), round(volume, 12), index)
        else:
            key = (round(volume, 12), round(power, 9), index)
        if best_key is None or key < best_key:
            best_key, best = key, (order, tuple(axes), cage, power, mass)
    if best is None:
        badness, reason = min(failures, key=lambda f: f[0])
        raise InfeasibleError(reason)
    order, axes, cage, power, mass = best
    layout = check_layout(cage, frame, inp.room)
    plan = Plan(axes=axes, layout=layout, order=tuple(order) if inp.axis_order else layout.order,
                minimise=inp.minimise, spacing=inp.spacing, total_power_W=power, copper_mass_kg=mass)
    return finish_plan(plan, inp) if finish else plan


def finish_plan(plan: Plan, inp: PlanInputs) -> Plan:
    """The plan with its winding-pack differences, warnings and notes."""
    packs = pack_differences(plan, inp)
    return dataclasses.replace(plan, packs=packs, warnings=tuple(plan_warnings(plan.axes, inp, packs)),
                               notes=tuple(plan_notes(plan, inp)))


def _axis_name(a) -> str:
    """The axis an AxisPlan-like record drives (its pair's, else its coils')."""
    pair = getattr(a, "pair", None)
    return pair.axis if pair is not None else a.coil_axis.axis


def plan_notes(plan: Plan, inp: PlanInputs) -> list[str]:
    """Plain statements about a plan: the nesting order when the site fixed it, and each axis whose
    supply is much larger than it needs, with the field resolution that results."""
    out = []
    if inp.axis_order:
        out.append(f"nesting order from the site's coil.axis_order, outermost first: {', '.join(inp.axis_order)}")
    for a in plan.axes:
        share = a.full_current_A / a.supply.max_current_A
        if share < LARGE_SUPPLY_FRACTION:
            out.append(f"axis {_axis_name(a)}: the supply is much larger than needed: full range takes "
                       f"{a.full_current_A:.3g} A of its {a.supply.max_current_A:g} A ({share:.0%}); its "
                       f"{a.supply.resolution_A:g} A step gives a field step of {a.field_step_nT:.1f} nT "
                       f"(ask for a finer one with max_field_step_nT)")
    return out


def pack_differences(plan: Plan, inp: PlanInputs):
    """Per axis, how the field of the real winding pack (one filament per turn, on the wire's
    grid in the frame channel) differs from the N-turns-as-one-filament model the planner
    uses: at the centre and over the test volume (cage.coils.PackDifference)."""
    from cage.axissizing import axis_pack_difference
    from cage.coils import FilamentPack, pack_vs_filament_difference
    from cage.wires import wire_from_name

    out = []
    for a in plan.axes:
        pack = FilamentPack(wire_from_name(a.wire).outer_diameter_m, inp.frame.width_m)
        if a.pair is None:
            out.append(axis_pack_difference(a.coil_axis, pack, inp.test_volume_m, n_per_edge=PACK_GRID_COILS))
        else:
            out.append(pack_vs_filament_difference(a.pair, pack, inp.test_volume_m))
    return tuple(out)


def plan_warnings(axes, inp: PlanInputs, packs=()) -> list[str]:
    """Cautions worth showing for a plan: hot windings, high current density, polarity
    switches, and a winding pack whose uniformity misses the tolerance."""
    out = []
    for a, d in zip(axes, packs):
        if d.box_deviation_pack > inp.uniformity:
            out.append(f"axis {_axis_name(a)}: with the real winding pack the uniformity is "
                       f"{d.box_deviation_pack * 100:.4f} %, over the {inp.uniformity * 100:g} % asked")
    for a in axes:
        el = a.electrics
        if el.current_density_high:
            out.append(f"axis {_axis_name(a)}: current density {el.current_density_A_per_mm2:.1f} A/mm^2 at full range "
                       f"is above the common air-cooled limit of about 3 A/mm^2")
        if el.winding_temperature_C > inp.max_winding_temperature_C - 5.0:
            out.append(f"axis {_axis_name(a)}: the winding reaches {el.winding_temperature_C:.0f} C at full range, "
                       f"close to the {inp.max_winding_temperature_C:g} C limit; check it on the built coil")
        if abs(a.drive.voltage_V) > 50.0:
            out.append(f"axis {_axis_name(a)}: {abs(a.drive.voltage_V):.0f} V at full range; above about 50 V DC "
                       f"touch protection is required by most electrical codes")
    from cage.supplies import coarse_supply_warning

    for a in axes:
        coarse = coarse_supply_warning(_axis_name(a), getattr(a.supply, "resolution_A", None),
                                       getattr(a, "full_current_A", None), getattr(a, "field_per_amp_nT", None))
        if coarse:
            out.append(coarse)
    unipolar = [_axis_name(a) for a in axes if not a.supply.bipolar]
    if unipolar:
        out.append(f"axis {', '.join(unipolar)}: unipolar supply; negative currents need a polarity switch "
                   f"(switch only at zero current: the coil's stored energy arcs otherwise)")
    return out


# ----------------------------------------------------------------------------- design file

def design_from_plan(plan: Plan, inp: PlanInputs, site=None, ambient=None):
    """The :class:`cage.designfile.Design` of a plan, with the requirement and layout it was made for."""
    from cage.design import AxisDesign, Design

    axes = []
    for a in plan.axes:
        el = a.electrics
        axes.append(AxisDesign(
            pair=a.pair, coil_axis=a.coil_axis, wire=a.wire,
            resistance_20C_ohm=el.resistance_20C_ohm,
            resistance_hot_ohm=el.resistance_hot_ohm,
            inductance_H=el.inductance_H,
            time_constant_s=el.time_constant_s if el.time_constant_s > 0 else None,
            copper_mass_kg=el.copper_mass_kg,
            field_per_amp_nT=a.field_per_amp_nT,
            max_current_A=a.full_current_A,
            winding_temperature_C=el.winding_temperature_C if el.winding_temperature_C > 0 else None,
            current_density_A_per_mm2=el.current_density_A_per_mm2,
            lead_length_m=inp.lead_length_m if inp.lead_length_m > 0 else None,
            frame_width_m=inp.frame.width_m,
            frame_depth_m=inp.frame.depth_m,
            frame_size_m=(a.frame_pair or a.pair or a.coil_axis).size_m,
        ))
    lay = plan.layout
    site_obj = None
    if site is not None:
        loc, ori = site.location, site.orientation
        site_obj = {
            "name": site.name, "file": site.source, "date": site.date.isoformat(),
            "latitude_deg": loc.latitude_deg, "longitude_deg": loc.longitude_deg, "altitude_m": loc.altitude_m,
            "heading_deg": ori.heading_deg, "heading_reference": ori.heading_reference,
        }
        if ambient is not None:
            site_obj["heading_true_deg"] = ambient.heading_true_deg
            site_obj["ambient_cage_nT"] = [float(v) for v in ambient.in_force_cage_nT]
            site_obj["ambient_source"] = ambient.source
        if site.room is not None:
            r = site.room
            site_obj["room_m"] = [r.length_m, r.width_m, r.height_m]
            site_obj["room_clearance_m"] = r.clearance_m
    requirement = {
        "test_volume_m": list(inp.test_volume_m),
        "uniformity": inp.uniformity,
        "extra_field_nT": list(inp.extra_field_nT),
        "needed_field_nT": [float(v) for v in inp.needed_field_nT],
        "shapes": list(inp.shapes),
        "wires": list(inp.wires),
        "minimise": inp.minimise,
        "spacing": inp.spacing,
        "max_winding_temperature_C": inp.max_winding_temperature_C,
        "ambient_temperature_C": inp.ambient_temperature_C,
        "supplies": {ax: {"name": s.name, "max_voltage_V": s.max_voltage_V, "max_current_A": s.max_current_A,
                          "resolution_A": s.resolution_A, "bipolar": s.bipolar}
                     for ax, s in zip(AXES, inp.supplies)},
    }
    if inp.max_field_step_nT is not None:
        requirement["max_field_step_nT"] = inp.max_field_step_nT
    if tuple(inp.systems) != ("pair",):
        requirement["systems"] = list(inp.systems)
    packs = plan.packs or pack_differences(plan, inp)
    layout = {
        "order_outermost_first": list(plan.order),
        "min_centreline_distance_m": lay.min_distance_m,
        "frame_clearance_m": lay.clearance_m,
        "closest_axes": list(lay.closest_axes),
        "frame_width_m": inp.frame.width_m,
        "frame_depth_m": inp.frame.depth_m,
        "frame_gap_m": inp.frame.gap_m,
        "winding_position": WINDING_POSITION,
        "fits_room": lay.fits_room,
        "total_power_W": plan.total_power_W,
        "copper_mass_kg": plan.copper_mass_kg,
        "uniformity_reached": [a.uniformity_reached for a in plan.axes],
        "full_range_voltage_V": [abs(a.drive.voltage_V) for a in plan.axes],
        "full_range_power_W": [a.drive.power_W for a in plan.axes],
        "field_step_nT": [a.field_step_nT for a in plan.axes],
        "winding_pack_centre_difference": [d.centre_relative for d in packs],
        "winding_pack_box_difference": [d.box_max_relative for d in packs],
        "winding_pack_uniformity": [d.box_deviation_pack for d in packs],
    }
    if lay.room_inner_m is not None:
        layout["room_inner_m"] = list(lay.room_inner_m)
    return Design(axes=tuple(axes), site=site_obj, requirement=requirement, layout=layout,
                  envelope_m=list(lay.envelope_m),
                  notes="Planned by cage. Filament model of the windings; survey the built cage before use.")
