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
             ""]
    sp = table.supply_setpoint_A
    with np.errstate(invalid="ignore"):
        vmax = np.nanmax(np.where(np.isnan(table.voltage_V), -np.inf, np.abs(table.voltage_V)), axis=1)
    vmax = np.where(table.reachable.all(axis=1), vmax, np.nan)  # no maximum over an unreachable axis
    reverse = table.polarity_reverse
    unipolar = table.unipolar
    within = table.within_limits
    power = table.total_power_W
    fmts = [f"%.{_decimals_for(s)}f" for s in table.supplies]
    rows, flags = [], []
    for r in range(len(table)):
        t = table.target_cage_nT[r]
        rows.append([for_terminal(table.labels[r]), f"{t[0]:.1f}, {t[1]:.1f}, {t[2]:.1f}",
                     *(f % v for f, v in zip(fmts, sp[r])),
                     f"{vmax[r]:.2f}" if np.isfinite(vmax[r]) else "-",
                     f"{power[r]:.1f}" if np.isfinite(power[r]) else "-",
                     f"{table.field_error_nT[r]:.1f}"])
        flag = "ok" if within[r] else "OUTSIDE: " + for_terminal("; ".join(table.row_problems(r)))
        if unipolar.any():
            flag += " (polarity " + ", ".join(
                f"{ax} {'REVERSE' if reverse[r, j] else 'forward'}" for j, ax in enumerate("xyz") if unipolar[j]) + ")"
        flags.append(flag)
    # the usual widths, wider where a cell needs it: at least one space always parts two columns
    head = ["row", "target x, y, z (nT)", "I x (A)", "I y (A)", "I z (A)", "V max (V)", "power (W)", "rounding (nT)"]
    widths = [max([w] + [len(c) + 1 for c in col])
              for w, col in zip((10, 32, 10, 10, 10, 10, 10, 14), zip(head, *rows))]

    def line(cells, flag):
        return (f"{cells[0]:<{widths[0]}}" + "".join(f"{c:>{w}}" for c, w in zip(cells[1:], widths[1:]))
                + f"  {flag}")

    lines.append(line(head, "limits"))
    lines += [line(cells, flag) for cells, flag in zip(rows, flags)]
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
