"""The planner over coil systems: per axis a pair, or a three- or four-coil system (``cage.coilsystems``).

Method (deterministic; exact field and the electrical model of every coil):

1. The pair-only planner (``cage.optimise``, channel model of the windings, nesting refinements)
   plans the cage of three pairs when pairs are allowed; its plan is the first candidate.
2. Per axis, shape and allowed system, the smallest whole-turns system meeting
   ``SYSTEM_UNIFORMITY_MARGIN`` x the tolerance over the test box (``cage.axissizing.smallest_uniform_axis``,
   bisection on the exact field). Here a coil's size is its winding centreline and its frame is
   centred on it (``cage.coillayout``).
3. Per axis option, the winding (wire and turns multiplier k over the system's whole-turns pattern,
   ``winding_for_axis``) at that smallest size gives a lower bound of the objective: power, copper
   and envelope only grow as an axis grows. Combinations of one option per axis with at least one
   axis not a pair are taken in the order of that bound; each is nested in every order of the axes
   (outermost first; only the site's order when given): the innermost axis at its uniform size,
   each axis further out at the smallest size clearing the frames of every coil inside it
   (``cage.coillayout.smallest_nesting_axis_size_m``), then the room check on the real envelope
   of every frame (``check_axes_layout``) and the windings at the nested sizes. The search stops
   when the next bound is no better than the best plan found.
4. Objective as the pair planner: least power (default), least copper, or least envelope volume;
   ties go to the pair plan, then the smaller envelope, then the order of enumeration.

Electrics: all coils of an axis in series, resistance from each coil's wire length, inductance
with the mutual inductances between the axis's coils (``cage.electrical.coil_axis_electrics``).
"""
from __future__ import annotations

import dataclasses
import itertools
import math

import numpy as np

from cage.coils import AXES
from cage.errors import InfeasibleError

# Multi-coil axes are sized for 90 % of the tolerance: the winding pack of three or four coils (each
# coil's turns spread over its channel) differs from the one-filament model by a few 1e-4 of the
# field, enough to push an axis sized at the pair planner's 99 % over the requirement.
SYSTEM_UNIFORMITY_MARGIN = 0.9
MAX_NESTINGS = 24  # combinations x orders nested at most (the bound usually stops far earlier)


def _box_key(axis: str, box) -> tuple:
    """The test box as seen from ``axis`` (its own side first): axes seeing the same box share sizes."""
    a = AXES.index(axis)
    others = tuple(sorted(float(box[i]) for i in range(3) if i != a))
    return (float(box[a]),) + others


def _centre_field_per_amp_T(ax) -> float:
    from cage.coilaxis import axis_field_T

    b = axis_field_T(ax, 1.0, np.zeros((1, 3)))
    return float(abs(np.asarray(b).reshape(-1, 3)[0, AXES.index(ax.axis)]))


def winding_for_axis(ax1, inp, uniform_size_m: float):
    """Best wire and turns for the coils ``ax1`` (a ``CoilAxis`` with its system's whole-turns
    pattern, multiplier 1) on axis ``ax1.axis``: each coil gets k x its pattern's turns.

    Returns (AxisPlan or None, reason, badness). Turns: the field needed within the supply's
    current sets the fewest k; the channel (``electrical.max_turns`` for the largest pattern
    entry) and, when asked, the field step set the most. Power is least at the most turns,
    copper at the fewest feasible (bisection: voltage and temperature fall as turns rise)."""
    from cage.axissizing import axis_deviation
    from cage.electrical import coil_axis_electrics, max_turns
    from cage.pairplan import AxisPlan, fewest_feasible
    from cage.supplies import check_drive, field_step_nT

    a = AXES.index(ax1.axis)
    supply = inp.supplies[a]
    need_T = float(inp.needed_field_nT[a]) * 1e-9
    f1 = _centre_field_per_amp_T(ax1)
    top_turns = max(int(c.turns) for c in ax1.coils)
    what = f"the {ax1.axis} axis ({ax1.shape} {ax1.system}, {ax1.size_m:.3f} m)"
    best, best_key, closest = None, None, None

    def miss(badness, text):
        nonlocal closest
        if closest is None or badness < closest[0]:
            closest = (badness, text)

    for wire in inp.wires:
        k_fit = max_turns(wire, inp.frame.width_m, inp.frame.depth_m) // top_turns
        if k_fit < 1:
            miss(math.inf, f"{what}: {top_turns} turns of {wire} do not fit the frame channel")
            continue
        k_cur = max(1, math.ceil(need_T / (f1 * supply.max_current_A) - 1e-9))
        k_hi = k_fit
        why = f"{k_fit} fit the frame channel"
        if inp.max_field_step_nT is not None:
            k_step = math.floor(inp.max_field_step_nT * 1e-9 / (f1 * supply.resolution_A) * (1 + 1e-12))
            if k_step < k_hi:
                k_hi = k_step
                why = (f"{k_step} keep the field step under {inp.max_field_step_nT:g} nT with the supply's "
                       f"{supply.resolution_A:g} A step")
        if k_cur > k_hi:
            miss(k_cur / max(k_hi, 1), f"{what} needs {need_T * 1e6:.1f} uT within the supply's "
                                       f"{supply.max_current_A:g} A: that takes at least {k_cur} x its turns pattern "
                                       f"of {wire}, while at most {why}")
            continue

        def evaluate(k):
            ax = ax1.scaled_turns(k)
            current = need_T / (f1 * k)
            el = coil_axis_electrics(ax, wire, current, lead_length_m=inp.lead_length_m,
                                     frame_width_m=inp.frame.width_m, frame_depth_m=inp.frame.depth_m,
                                     ambient_temperature_C=inp.ambient_temperature_C)
            drive = check_drive(supply, current, el.resistance_hot_ohm, el.lead_resistance_ambient_ohm)
            ok = (drive.within_limits and el.temperature_converged
                  and el.winding_temperature_C <= inp.max_winding_temperature_C)
            return ax, current, el, drive, ok, k

        chosen = evaluate(k_hi)
        if not chosen[4]:
            el, drive = chosen[2], chosen[3]
            miss(max(abs(drive.voltage_V) / supply.max_voltage_V, 1.0),
                 f"{what} needs {need_T * 1e6:.1f} uT; with {k_hi} x its turns pattern of {wire} that takes "
                 f"{chosen[1]:.4g} A at {abs(drive.voltage_V):.3g} V with the winding at "
                 f"{el.winding_temperature_C:.0f} C, beyond the supply's {supply.max_voltage_V:g} V or the "
                 f"{inp.max_winding_temperature_C:g} C limit")
            continue
        if inp.minimise == "mass":
            chosen = fewest_feasible(evaluate, k_cur - 1, k_hi, chosen)
        ax, current, el, drive, _, k = chosen
        key = (el.copper_mass_kg, drive.power_W) if inp.minimise == "mass" else (drive.power_W, el.copper_mass_kg)
        if best_key is None or key < best_key:
            fpa_nT = f1 * k * 1e9
            best_key = key
            best = AxisPlan(pair=None, coil_axis=ax, wire=wire, electrics=el, supply=supply, drive=drive,
                            needed_field_nT=need_T * 1e9, full_current_A=current, field_per_amp_nT=fpa_nT,
                            field_step_nT=field_step_nT(supply, fpa_nT),
                            uniformity_reached=axis_deviation(ax, box_m=inp.test_volume_m),
                            min_uniform_size_m=uniform_size_m)
    if best is not None:
        return best, "", 0.0
    if closest is None:
        return None, "no wires are allowed (coil.wires is empty)", math.inf
    return None, closest[1], closest[0]


def _packs_kept(best, pair_plan, inp):
    """The best plan, finished (cage.pairplan.finish_plan); but when its real winding packs miss
    the uniformity (a small coil on a wide channel: the filament model the search uses flatters
    it) and the best cage of pairs, worse by the objective, meets it with its packs, that one,
    with a note saying why."""
    from cage.pairplan import finish_plan

    done = finish_plan(best, inp)
    if pair_plan is None or best is pair_plan or _packs_meet(done, inp):
        return done
    alt = finish_plan(pair_plan, inp)
    if not _packs_meet(alt, inp):
        return done
    missed = ", ".join(f"{a} {d.box_deviation_pack * 100:.3g} %" for a, d in zip(AXES, done.packs)
                       if d.box_deviation_pack > inp.uniformity)
    return dataclasses.replace(alt, notes=alt.notes + (
        f"a cage with other coil systems would take less {inp.minimise}, but with its real winding packs it "
        f"misses the {inp.uniformity * 100:g} % asked ({missed}); this cage of pairs meets it",))


def _packs_meet(plan, inp) -> bool:
    return all(d.box_deviation_pack <= inp.uniformity for d in plan.packs)


def step_sizes_m(ax1, inp) -> tuple[float, ...]:
    """Sizes (m) above ``ax1``'s where the field-step limit lets one more multiple of the turns
    pattern in, one per allowed wire whose channel holds more than the limit allows at
    ``ax1``'s size (empty without a step limit).

    The system scales with its size, so its centre field per ampere goes as 1 / size: k patterns
    keep the step within the limit from size x f1 k res / step_max on. At equal field the current
    goes as size / k and the resistance as k x size, so the power goes as size^3 / k: below that
    size more patterns do not fit the limit, above it the power only grows -- the smallest size
    that admits k_max + 1 patterns is the one larger size worth trying (also where the field
    first becomes reachable when even one pattern steps too coarsely at ``ax1``'s size)."""
    from cage.electrical import max_turns
    from cage.pairplan import MAX_SIZE_M

    if inp.max_field_step_nT is None:
        return ()
    supply = inp.supplies[AXES.index(ax1.axis)]
    f1 = _centre_field_per_amp_T(ax1)
    step_T = inp.max_field_step_nT * 1e-9
    top_turns = max(int(c.turns) for c in ax1.coils)
    out = set()
    for wire in inp.wires:
        k_fit = max_turns(wire, inp.frame.width_m, inp.frame.depth_m) // top_turns
        k_hi = min(k_fit, math.floor(step_T / (f1 * supply.resolution_A) * (1 + 1e-12)))
        if k_fit < 1 or k_hi >= k_fit:
            continue  # nothing fits, or the channel, not the step limit, caps the turns
        size = ax1.size_m * f1 * (k_hi + 1) * supply.resolution_A / step_T * (1 + 1e-9)
        if ax1.size_m < size <= MAX_SIZE_M:
            out.add(round(size, 9))
    return tuple(sorted(out))


def _objective(inp, power: float, mass: float, volume: float) -> tuple:
    if inp.minimise == "power":
        return (round(power, 9), round(volume, 12))
    if inp.minimise == "mass":
        return (round(mass, 9), round(volume, 12))
    return (round(volume, 12), round(power, 9))


def plan_with_systems(inp):
    """The best cage for ``inp`` over the coil systems ``inp.systems`` (``cage.optimise.Plan``;
    axes not pairs carry ``coil_axis``), or InfeasibleError naming the closest miss."""
    from cage.axissizing import smallest_uniform_axis
    from cage.coilaxis import AxisCage
    from cage.coillayout import (axes_envelope_m, axis_extent_m, check_axes_layout, smallest_buildable_scale,
                                 smallest_nesting_axis_size_m)
    from cage.layout import room_inner_m
    from cage.coilsystems import system_axis, systems_for_shape
    from cage.pairplan import MAX_SIZE_M, Plan, _plan_pairs

    frame = inp.frame
    box = np.asarray(inp.test_volume_m, dtype=float)
    best, best_key = None, None
    errors = []
    pair_error = pair_plan = None
    if "pair" in inp.systems:
        try:
            pair_plan = _plan_pairs(inp, finish=False)
            best = pair_plan
            best_key = _objective(inp, pair_plan.total_power_W, pair_plan.copper_mass_kg,
                                  float(np.prod(pair_plan.layout.envelope_m)))
        except InfeasibleError as exc:
            pair_error = (1.0, str(exc))
            errors.append(pair_error)

    # Per axis, the options (shape, system) and their smallest uniform axis.
    tol = inp.uniformity * SYSTEM_UNIFORMITY_MARGIN
    sizing_cache: dict = {}
    options: dict[str, list] = {}
    for axis in AXES:
        options[axis] = []
        for shape in inp.shapes:
            for system in systems_for_shape(shape):
                if system not in inp.systems:
                    continue
                key = (shape, system, _box_key(axis, box))
                if key not in sizing_cache:
                    try:
                        size = smallest_uniform_axis(axis, shape, system, tol, box_m=box).size_m
                        # and no smaller than its frames can be built around the test volume
                        buildable = smallest_buildable_scale(system_axis(axis, shape, system, 1.0), frame, box)
                        sizing_cache[key] = max(size, buildable)
                    except InfeasibleError as exc:
                        errors.append((math.inf, str(exc)))
                        sizing_cache[key] = None
                if sizing_cache[key] is not None:
                    options[axis].append((shape, system, sizing_cache[key]))

    winding_cache: dict = {}

    def winding(axis, shape, system, size, uniform_size):
        key = (axis, shape, system, round(size, 12))
        if key not in winding_cache:
            winding_cache[key] = winding_for_axis(system_axis(axis, shape, system, size), inp, uniform_size)
        return winding_cache[key]

    def sizes_from(axis, shape, system, size):
        """The size itself and the larger ones where the step limit admits one more pattern."""
        return (size,) + step_sizes_m(system_axis(axis, shape, system, size), inp)

    bound_cache: dict = {}

    def option_bound(axis, option):
        """(least power, least copper) of one axis option over its size choices from its uniform
        size, or the reason none is feasible (power and copper only grow from there, see
        step_sizes_m)."""
        shape, system, size_u = option
        key = (axis, option)
        if key not in bound_cache:
            plans = [winding(axis, shape, system, size, size_u) for size in sizes_from(axis, shape, system, size_u)]
            ok = [p[0] for p in plans if p[0] is not None]
            if ok:
                bound_cache[key] = (min(p.drive.power_W for p in ok), min(p.electrics.copper_mass_kg for p in ok))
            else:
                bound_cache[key] = min(plans, key=lambda p: p[2])
        return bound_cache[key]

    # Lower bound of the objective per combination, each axis at its best size from its own
    # uniform size on.
    combos = []
    for index, combo in enumerate(itertools.product(*(options[a] for a in AXES))):
        if all(o[1] == "pair" for o in combo):
            continue  # the pair planner's cage
        bounds = [option_bound(a, o) for a, o in zip(AXES, combo)]
        failed = [b for b in bounds if b[0] is None]
        if failed:
            errors.extend((f[2], f[1]) for f in failed)
            continue
        ext = np.max([axis_extent_m(system_axis(a, o[0], o[1], o[2]), frame) for a, o in zip(AXES, combo)], axis=0)
        bound = _objective(inp, sum(b[0] for b in bounds), sum(b[1] for b in bounds), float(np.prod(2.0 * ext)))
        combos.append((bound, index, combo))
    combos.sort(key=lambda c: (c[0], c[1]))

    orders = [inp.axis_order] if inp.axis_order else list(itertools.permutations(AXES))
    nest_cache: dict = {}
    room_misses = []
    inner_room = None if inp.room is None else room_inner_m(inp.room)
    nestings = 0
    for bound, _, combo in combos:
        if best_key is not None and bound >= best_key:
            break
        if nestings >= MAX_NESTINGS:
            break
        option_of = dict(zip(AXES, combo))

        def nested(axis, placed, lower):
            shape, system, _ = option_of[axis]
            key = (axis, shape, system, lower, placed)
            if key not in nest_cache:
                try:
                    nest_cache[key] = smallest_nesting_axis_size_m(axis, shape, system, placed, frame,
                                                                   lower, upper_m=MAX_SIZE_M)
                except ValueError:
                    nest_cache[key] = None
            return nest_cache[key]

        def grow(order, placed):
            """Every nesting, innermost first: each axis at its smallest size that clears the axes
            inside it, and at the larger sizes where the step limit admits one more pattern."""
            if len(placed) == 3:
                yield placed
                return
            axis = order[2 - len(placed)]
            shape, system, size_u = option_of[axis]
            lower = size_u
            if inp.axis_order and placed:
                widest = max(p.half_width_m for p in placed)
                lower = max(lower, (2.0 * widest if shape == "square" else widest) * (1.0 + 1e-9))
            size0 = nested(axis, placed, lower)
            if size0 is None:
                return
            seen = set()
            for size in sizes_from(axis, shape, system, size0):
                if size > size0:
                    size = nested(axis, placed, size)
                    if size is None or size in seen:
                        continue
                seen.add(size)
                yield from grow(order, placed + (system_axis(axis, shape, system, size),))

        for order, placed in ((o, p) for o in orders for p in grow(o, ())):
            nestings += 1
            by_axis = {p.axis: p for p in placed}
            cage1 = AxisCage(by_axis["x"], by_axis["y"], by_axis["z"])
            # the room first (the envelope alone); the exact clearances only for a new best
            env = axes_envelope_m(cage1, frame)
            if inner_room is not None and not np.all(env <= inner_room + 1e-12):
                room_misses.append((float(np.max(env / inner_room)), order, env, combo))
                continue
            plans = []
            for ax in cage1.axes:
                shape, system, size_u = option_of[ax.axis]
                p = winding(ax.axis, shape, system, ax.size_m, size_u)
                if p[0] is None:
                    errors.append((p[2], p[1]))
                    break
                if p[0].uniformity_reached > tol:
                    break
                plans.append(p[0])
            if len(plans) < 3:
                continue
            power = sum(p.drive.power_W for p in plans)
            mass = sum(p.electrics.copper_mass_kg for p in plans)
            key = _objective(inp, power, mass, float(np.prod(env)))
            if best_key is None or key < best_key:
                best_key = key
                layout = check_axes_layout(cage1, frame, inp.room)
                best = Plan(axes=tuple(plans), layout=layout,
                            order=tuple(order) if inp.axis_order else layout.order,
                            minimise=inp.minimise, spacing=inp.spacing, total_power_W=power, copper_mass_kg=mass)
    if best is None:
        if room_misses:
            over, order, envelope, combo = min(room_misses, key=lambda m: m[0])
            env = " x ".join(f"{v:.2f}" for v in envelope)
            room = " x ".join(f"{v:.2f}" for v in inner_room)
            kinds = ", ".join(f"{a} {o[0]} {o[1]}" for a, o in zip(AXES, combo))
            errors.append((over, f"the smallest nesting of the allowed coil systems ({kinds}; outermost "
                                 f"{order[0]}) for a {' x '.join(f'{v:g}' for v in box)} m test volume at "
                                 f"{inp.uniformity * 100:g} % needs an envelope of {env} m (x, y, z), while the "
                                 f"room less its clearance allows {room} m"))
        if not errors:
            raise InfeasibleError(f"no coil system among {', '.join(inp.systems)} meets the requirement")
        closest = min(errors, key=lambda e: e[0])
        others = [e for e in errors if e is not pair_error]
        if closest is pair_error and others:
            # the pairs' miss alone would hide what stops the other systems: name both
            other = min(others, key=lambda e: e[0])[1]
            raise InfeasibleError(f"pairs: {closest[1]}; with the other allowed coil systems: {other}")
        raise InfeasibleError(closest[1])
    return _packs_kept(best, pair_plan, inp)


def outer_spacing_m(geometry) -> float:
    """Distance between the outermost coil planes of a pair (its spacing) or any coil axis (m)."""
    if hasattr(geometry, "spacing_m"):
        return float(geometry.spacing_m)
    return float(geometry.coils[-1].position_m - geometry.coils[0].position_m)


def axis_turns_text(geometry) -> str:
    """Turns per coil: one number for a pair, else every coil's along the axis ("26/11/11/26")."""
    if hasattr(geometry, "turns"):
        return f"{geometry.turns}"
    return "/".join(str(int(c.turns)) for c in geometry.coils)


def build_tolerance_lines(plan, inp) -> list[str]:
    """The design summary's build tolerances: per axis, the largest single-coil position error and
    tilt that keep the requirement over the test volume (exact field,
    ``cage.axissizing.axis_sensitivity``), so a workshop can judge a pair against a four-coil system."""
    from cage.axissizing import sensitivity_summary_lines

    lines = sensitivity_summary_lines(plan.axis_cage.axes, inp.uniformity, box_m=inp.test_volume_m)
    return ["Build tolerances (one coil at a time; survey the built cage):"] + [f"  {line}" for line in lines]


# --------------------------------------------------------------------------- compare by system

def largest_nesting_axis_size_m(axis: str, shape: str, system: str, outer, frame, upper_m: float,
                                tolerance_m: float = 5e-4) -> float | None:
    """Largest nominal size <= upper_m of ``system`` on ``axis`` whose every coil clears every coil
    of the axes in ``outer`` (``cage.coillayout.axis_clears``), by bisection as
    ``cage.layout.largest_nesting_size_m``; None if even 5 % of upper_m does not clear."""
    from cage.coillayout import axis_clears
    from cage.coilsystems import system_axis
    from cage.layout import largest_clear_size_m

    return largest_clear_size_m(lambda size: axis_clears(system_axis(axis, shape, system, size), outer, frame),
                                upper_m, tolerance_m)


def largest_uniform_cube_m(ax, tolerance: float, rel_precision: float = 1e-4) -> float:
    """Side (m) of the largest centred cube over which the axis ``ax`` (any coils) keeps
    ``tolerance`` (exact field, ``cage.axissizing.axis_deviation``), within the coils' clear
    volume (``wires_clear_volume``): bisection on the side."""
    from cage.axissizing import axis_deviation, wires_clear_volume

    def ok(side: float) -> bool:
        box = (side, side, side)
        return wires_clear_volume(ax, box_m=box) and axis_deviation(ax, box_m=box) <= tolerance

    lo, hi = 0.0, 2.0 * ax.half_width_m
    while hi - lo > rel_precision * hi:
        mid = 0.5 * (lo + hi)
        lo, hi = (mid, hi) if ok(mid) else (lo, mid)
    return lo
