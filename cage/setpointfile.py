"""Writers (and one reader) for current tables: CSV, JSON and a SCPI script.

CSV: provenance as ``#`` comment lines (cage.provenance), then one row per table row, units in every column name, rounded for people (nT to 0.1,
currents to the supply's resolution, V to 0.001, W to 0.01). JSON (``cage-setpoints``,
version 1) keeps full precision. SCPI: plain text, one block per row, standard SCPI
commands for a power-supply channel (``INST:NSEL``, ``VOLT``, ``CURR``, ``OUTP``); x, y and
z are channels 1, 2 and 3. Rows outside a supply's limits are written commented out, with
the reason, never clipped to the limit.
"""
from __future__ import annotations

import csv
import io
import json
import math

from cage.coils import AXES
from cage.errors import InputError
from cage.setpoints import SetpointTable, table_to_dict

CHANNELS = {"x": 1, "y": 2, "z": 3}
SCPI_COMMANDS = ("INST:NSEL", "VOLT", "CURR", "OUTP")


def _decimals(resolution_A: float) -> int:
    """Decimals that show a multiple of the resolution exactly (1 mA -> 3, 0.5 mA -> 4)."""
    for d in range(0, 10):
        if abs(round(resolution_A, d) - resolution_A) < 1e-12:
            return d
    return 9


def _num(value, digits: int) -> str:
    if value is None:
        return ""
    if isinstance(value, bool):
        return "yes" if value else "no"
    if not math.isfinite(value):
        return "inf" if value > 0 else "-inf"
    return f"{value:.{digits}f}"


def csv_header() -> list[str]:
    cols = ["label", "target_x_nT", "target_y_nT", "target_z_nT"]
    for a in AXES:
        cols += [f"current_{a}_A", f"setpoint_{a}_A", f"rounding_error_{a}_nT", f"voltage_{a}_V", f"power_{a}_W",
                 f"current_headroom_{a}_A", f"voltage_headroom_{a}_V", f"winding_temperature_{a}_C",
                 f"polarity_switch_{a}"]
    return cols + ["total_power_W", "field_error_nT", "within_limits", "problems"]


def _provenance_comments(table: SetpointTable) -> str:
    """The table's provenance as ``#`` comment lines (cage.provenance), or ''."""
    from cage.provenance import header_lines

    prov = table.provenance_record()
    return "" if prov is None else "\n".join(header_lines(prov)) + "\n"


def table_to_csv(table: SetpointTable) -> str:
    buf = io.StringIO()
    buf.write(_provenance_comments(table))
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(csv_header())
    for r in table.rows:
        cells = [r.label] + [_num(v, 1) for v in r.target_cage_nT]
        for a, s in zip(r.axes, table.supplies):
            d = _decimals(s.resolution_A)
            cells += [_num(a.current_A, d + 1), _num(a.setpoint_A, d), _num(a.rounding_error_nT, 1),
                      _num(a.voltage_V, 3), _num(a.power_W, 2), _num(a.current_headroom_A, d),
                      _num(a.voltage_headroom_V, 3), _num(a.winding_temperature_C, 1),
                      "yes" if a.polarity_switch else "no"]
        problems = "; ".join(f"{ax}: {p}" for ax, a in zip(AXES, r.axes) for p in a.problems)
        cells += [_num(r.total_power_W, 2), _num(r.rounding_error_nT, 1), "yes" if r.within_limits else "no",
                  problems]
        w.writerow(cells)
    return buf.getvalue()


def table_to_json(table: SetpointTable) -> str:
    return json.dumps(table_to_dict(table), indent=2, allow_nan=False) + "\n"


def _voltage_limit(voltage, supply) -> float:
    if voltage is None:
        return supply.max_voltage_V
    return min(supply.max_voltage_V, 1.2 * abs(voltage) + 1.0)


def table_to_scpi(table: SetpointTable) -> str:
    lines = [
        f"# cage current table for {table.site} ({table.source} field, {table.date})",
        "# Channels: x = 1, y = 2, z = 3. Each block sets the voltage limit, then the current, then output on.",
        "# Ramp between rows; switch polarity only at zero current. Rows outside limits are commented out.",
    ]
    lines += _provenance_comments(table).splitlines()
    for r in table.rows:
        target = ", ".join(f"{a} {v:.1f} nT" for a, v in zip(AXES, r.target_cage_nT))
        lines.append("")
        lines.append(f"# row {r.label}: target {target} (cage frame)")
        prefix = ""
        if not r.within_limits:
            why = "; ".join(f"{ax}: {p}" for ax, a in zip(AXES, r.axes) for p in a.problems)
            lines.append(f"# OUTSIDE LIMITS, not sent: {why}")
            prefix = "# "
        for axis, a, s in zip(AXES, r.axes, table.supplies):
            d = _decimals(s.resolution_A)
            current = a.setpoint_A
            if not s.bipolar:
                if current < 0:
                    lines.append(f"# {axis}: polarity switch to REVERSE before this step")
                current = abs(current)
            lines.append(f"{prefix}INST:NSEL {CHANNELS[axis]}")
            lines.append(f"{prefix}VOLT {_voltage_limit(a.voltage_V, s):.3f}")
            lines.append(f"{prefix}CURR {current:.{d}f}")
            lines.append(f"{prefix}OUTP ON")
    return "\n".join(lines) + "\n"


FORMATS = {"csv": table_to_csv, "json": table_to_json, "scpi": table_to_scpi}


def render(table: SetpointTable, fmt: str) -> str:
    if fmt not in FORMATS:
        raise InputError(f"--format must be one of {', '.join(FORMATS)}, got {fmt!r}")
    return FORMATS[fmt](table)


def load_table_json(path) -> dict:
    """An earlier setpoints JSON document (for --previous), checked for its format."""
    from cage.textfile import read_json_object

    doc = read_json_object(path, "setpoints file")
    if doc.get("format") != "cage-setpoints":
        raise InputError(f"{path}: not a cage-setpoints JSON file (write one with --format json)")
    if not isinstance(doc.get("rows"), list):
        raise InputError(f"{path}: rows must be a list")
    return doc
