"""Current tables and drift against an earlier table, as text for the terminal. Command-line layer."""
from __future__ import annotations


def setpoints_text(table) -> str:
    """A readable table of the setpoints (rounded; the files keep full precision).

    The currents are the setpoints as each supply sees them (non-negative on a unipolar
    channel, whose polarity is in the limits column); user text is escaped for the terminal.
    """
    import numpy as np

    from cage.escape import for_terminal

    lines = [f"Current table for {for_terminal(table.site)} ({table.source} field, {table.date})",
             "ambient (cage frame): " + ", ".join(f"{a} {v:,.1f} nT" for a, v in zip("xyz", table.ambient_cage_nT)),
             "",
             f"{'row':<10}{'target x, y, z (nT)':>32}{'I x (A)':>10}{'I y (A)':>10}{'I z (A)':>10}"
             f"{'V max (V)':>10}{'power (W)':>10}{'rounding (nT)':>14}  limits"]
    sp = table.supply_setpoint_A
    with np.errstate(invalid="ignore"):
        vmax = np.nanmax(np.where(np.isnan(table.voltage_V), -np.inf, np.abs(table.voltage_V)), axis=1)
    vmax = np.where(table.reachable.all(axis=1), vmax, np.nan)  # no maximum over an unreachable axis
    reverse = table.polarity_reverse
    unipolar = table.unipolar
    within = table.within_limits
    power = table.total_power_W
    fmts = [f"%10.{_decimals_for(s)}f" for s in table.supplies]
    for r in range(len(table)):
        t = table.target_cage_nT[r]
        target = f"{t[0]:.1f}, {t[1]:.1f}, {t[2]:.1f}"
        cur = "".join(f % v for f, v in zip(fmts, sp[r]))
        v = f"{vmax[r]:>10.2f}" if np.isfinite(vmax[r]) else f"{'-':>10}"
        pw = f"{power[r]:>10.1f}" if np.isfinite(power[r]) else f"{'-':>10}"
        flag = "ok" if within[r] else "OUTSIDE: " + for_terminal("; ".join(table.row_problems(r)))
        if unipolar.any():
            flag += " (polarity " + ", ".join(
                f"{ax} {'REVERSE' if reverse[r, j] else 'forward'}" for j, ax in enumerate("xyz") if unipolar[j]) + ")"
        lines.append(f"{for_terminal(table.labels[r]):<10}{target:>32}{cur}{v}{pw}{table.field_error_nT[r]:>14.1f}"
                     f"  {flag}")
    return "\n".join(lines)


def _decimals_for(supply) -> int:
    from cage.setpointfile import _decimals

    return _decimals(supply.resolution_A)


def drift_text(drift) -> str:
    lines = ["Null currents against the previous table" +
             (f" ({drift.previous_date})" if drift.previous_date else "") + ":"]
    for a, di, df in zip("xyz", drift.change_A, drift.change_field_nT):
        lines.append(f"  {a}: {di * 1000:+.3f} mA  (field {df:+.1f} nT)")
    sv = ", ".join(f"{a} {v:+.1f}" for a, v in zip("xyz", drift.sv_cage_nT_per_year))
    lines.append(f"Secular variation (cage frame): {sv} nT/year")
    days = drift.days_until_threshold
    when = "never (no secular variation)" if days == float("inf") else f"in about {days:.0f} days"
    lines.append(f"The null drifts by {drift.threshold_nT:g} nT {when}; per axis: " + ", ".join(
        f"{a} {'never' if d == float('inf') else f'{d:.0f} d'}" for a, d in zip("xyz", drift.days_until_threshold_per_axis)))
    return "\n".join(lines)
