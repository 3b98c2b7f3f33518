"""The per-axis table of ``cage design`` and ``cage plan``. Command-line layer."""
from __future__ import annotations


def design_table(plan, inp, packs=()) -> str:
    """The per-axis summary of ``cage design``; ``packs``: optional winding-pack differences."""
    from cage.systemplan import axis_turns_text, outer_spacing_m

    multi = any(a.pair is None for a in plan.axes)
    rows = [("coil system", lambda a: a.geometry.system if a.pair is None else "pair", "")] if multi else []
    rows += [
        ("shape", lambda a: a.geometry.shape, ""),
        ("side (square) or diameter (round)",
         lambda a: f"{a.geometry.size_m * (1 if a.geometry.shape == 'square' else 2):.3f}", "m"),
        ("spacing" + (" (outermost coils)" if multi else ""), lambda a: f"{outer_spacing_m(a.geometry):.3f}", "m"),
        ("turns per coil", lambda a: axis_turns_text(a.geometry), ""),
        ("wire", lambda a: a.wire, ""),
        ("resistance at 20 C", lambda a: f"{a.electrics.resistance_20C_ohm:.3f}", "ohm"),
        ("resistance hot", lambda a: f"{a.electrics.resistance_hot_ohm:.3f}", "ohm"),
        ("lead resistance", lambda a: f"{a.electrics.lead_resistance_ambient_ohm:.3f}", "ohm"),
        ("inductance", lambda a: f"{a.electrics.inductance_H * 1e3:.2f}", "mH"),
        ("time constant L/R", lambda a: f"{a.electrics.time_constant_s * 1e3:.2f}", "ms"),
        ("field slew at full range", lambda a: f"{_field_slew_uT_per_s(a):.0f}", "uT/s"),
        ("field per ampere", lambda a: f"{a.field_per_amp_nT / 1000:.3f}", "uT/A"),
        ("full-range field", lambda a: f"{a.needed_field_nT / 1000:.2f}", "uT"),
        ("full-range current", lambda a: f"{a.full_current_A:.3f}", "A"),
        ("voltage at full range", lambda a: f"{abs(a.drive.voltage_V):.2f}", "V"),
        ("power at full range", lambda a: f"{a.drive.power_W:.1f}", "W"),
        ("supply limits", lambda a: f"{a.supply.max_voltage_V:g} V {a.supply.max_current_A:g} A", ""),
        ("field step", lambda a: f"{a.field_step_nT:.1f}", "nT"),
        ("uniformity reached", lambda a: f"{a.uniformity_reached * 100:.4f}", "%"),
        ("copper mass", lambda a: f"{a.electrics.copper_mass_kg:.2f}", "kg"),
        ("winding temperature", lambda a: f"{a.electrics.winding_temperature_C:.1f}", "C"),
        ("current density", lambda a: f"{a.electrics.current_density_A_per_mm2:.2f}", "A/mm^2"),
    ]
    width = max(len(r[0]) for r in rows) + 2
    table = [(label, [str(get(a)) for a in plan.axes], unit) for label, get, unit in rows]
    # 14 characters a column, wider where a cell needs it: at least two spaces part two cells
    col = max([14] + [len(c) + 2 for _, cells, _ in table for c in cells])
    lines = [f"{'axis':<{width}}{'x':>{col}}{'y':>{col}}{'z':>{col}}"]
    for label, cells, unit in table:
        lines.append(f"{label:<{width}}{''.join(f'{c:>{col}}' for c in cells)}  {unit}")
    lay = plan.layout
    env = " x ".join(f"{v:.3f}" for v in lay.envelope_m)
    lines += [
        "",
        f"Envelope (frames included)  {env} m (x, y, z); axes outermost first: {', '.join(plan.order)}",
        f"Closest frames              {lay.closest_axes[0]} and {lay.closest_axes[1]}: centrelines "
        f"{lay.min_distance_m * 1000:.1f} mm apart, {lay.clearance_m * 1000:.1f} mm free between frames",
    ]
    if lay.room_inner_m is not None:
        room = " x ".join(f"{v:.2f}" for v in lay.room_inner_m)
        lines.append(f"Room less clearance         {room} m: {'fits' if lay.fits_room else 'does NOT fit'}")
    lines.append(f"Total at full range         {plan.total_power_W:.1f} W, copper {plan.copper_mass_kg:.1f} kg "
                 f"(objective: least {plan.minimise})")
    lines += [f"Note: {n}" for n in getattr(plan, "notes", ())]
    if packs:
        centre = ", ".join(f"{a} {d.centre_relative * 1e6:.0f} ppm" for a, d in zip("xyz", packs))
        unif = ", ".join(f"{a} {d.box_deviation_pack * 100:.4f} %" for a, d in zip("xyz", packs))
        lines.append(f"Winding pack vs one filament: centre field differs by {centre}; "
                     f"uniformity with the pack {unif}")
    from cage.systemplan import build_tolerance_lines

    lines += build_tolerance_lines(plan, inp)
    return "\n".join(lines)


def _field_slew_uT_per_s(axis_plan) -> float:
    """Largest field slew the supply allows at full range: (V_max - I R) / L x field per amp."""
    from cage.electrical import field_slew_nT_per_s

    return field_slew_nT_per_s(axis_plan.electrics, axis_plan.supply.max_voltage_V,
                               axis_plan.field_per_amp_nT) / 1000.0
