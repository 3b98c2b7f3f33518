"""The planner: choose shape, size, spacing, turns and wire for each axis of a cage.

Method (deterministic; everything is computed with the exact field engine and the
electrical model, no Taylor estimates):

1. Uniformity fixes the smallest size of each axis's pair. With the spacing at the flat
   optimum (or, with ``spacing="free"``, the spacing that minimises the deviation at each
   size), the largest relative deviation over the test box falls as the pair grows, so the
   smallest size meeting the tolerance is found by bisection on the exact field. Sizes in
   the search are frame lines; the winding sits on the channel floor inside its frame line
   (``cage.channel``), so the bisection is for the winding where it sits: the smallest frame
   line on which some winding meets the tolerance (a full channel), and the one on which
   every winding does (a thin pack); each wire and turn count is checked on its own winding.
2. Nesting: for each order of the axes (outermost first; only the site's ``axis_order`` when
   given, and then each pair is at least as wide as every pair inside it) and each allowed
   shape per axis,
   the innermost pair takes its smallest uniform size; each pair further out takes the
   smallest size that is both uniform and clears the frames of the pairs inside it
   (``cage.layout``). A smaller cage needs less power and copper for the same field, so the
   smallest nested sizes are taken first. Frame clearance is not monotone in size, so a
   slightly larger inner pair can let an outer pair shrink: for the three smallest
   candidates the two inner pairs are also tried 3-15 % above their smallest sizes
   (``INFLATIONS``), and every variant competes on the objective.
3. Windings: per axis, the field needed is |ambient component| + extra field. For each allowed
   wire, the turns range from the fewest that reach the field within the supply's current, to
   the most that fit the frame channel -- and, only when the user asks for a largest field
   step (``max_field_step_nT``), no more than keep the field step under it. Voltage at
   operating temperature and winding temperature fall as turns rise (the same ampere-turns
   through more copper), so the feasible turns are an interval found by bisection. Power at
   full range is least at the most turns; copper mass at the fewest. A larger supply only
   widens the interval, so it never gives a design with more power. The field step that
   results is reported, and the design notes a supply much larger than the axis needs.
   Sizes and turns are searched jointly: where the step limit caps the turns, each pair is
   also tried at the larger sizes where one more turn is allowed, while that turn pays
   (``axis_size_options``).
4. Objective over all candidates: least total power at full range (default), least copper
   mass, or least envelope volume ("size"); ties go to the smaller envelope, then the order
   of enumeration, so the same site always gives the same design.

When nothing is feasible, :class:`cage.errors.InfeasibleError` names the binding constraint
in numbers.
"""
from __future__ import annotations

from cage.pairplan import (  # noqa: F401  (the planner's names, importable from cage.optimise)
    AXES, AxisPlan, CoilCage, CoilPair, INFLATIONS, LARGE_SUPPLY_FRACTION, MAX_SIZE_M, MAX_STEP_UPS,
    OBJECTIVES, PACK_GRID_COILS, Plan, PlanInputs, REFINED_CANDIDATES, SIZE_PRECISION, SPACINGS,
    UNIFORMITY_GRID, UNIFORMITY_MARGIN, WINDING_POSITION, _UNIFORM_CACHE, _WindingResult, _axis_name,
    _best_ratio, _box, _box_clear_size_m, _box_for_axis, _deviation, _field_per_amp_per_turn_T,
    _min_uniform_size, _min_uniform_size_cached, _pct, _plan_pairs, _size_name, _turns_for_step,
    _uniform_key, _wire_label, axis_size_options, centre_field_per_ampere_turn_T, check_layout,
    choose_winding, design_from_plan, fewest_feasible, finish_plan, min_uniform_size_m, pack_differences,
    pair_extent_m, plan_inputs_from_site, plan_notes, plan_warnings, room_inner_m, smallest_nesting_size_m)


def plan_cage(inp: PlanInputs) -> Plan:
    """The best cage for the inputs, or InfeasibleError naming the binding constraint. With coil
    systems other than the pair allowed (``inp.systems``), ``cage.systemplan.plan_with_systems``."""
    if tuple(inp.systems) != ("pair",):
        from cage.systemplan import plan_with_systems

        return plan_with_systems(inp)
    return _plan_pairs(inp)
