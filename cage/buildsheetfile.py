"""The build sheet as files: its JSON document and the CSV bill of materials. Files layer."""
from __future__ import annotations

import csv
import dataclasses
import io

FORMAT = "cage-build"
VERSION = 1

BOM_COLUMNS = ("item", "axis", "coil", "description", "quantity", "unit", "length_m", "mass_kg", "note")


def _mm(value_m: float) -> str:
    return f"{value_m * 1e3:.1f} mm"


def sheet_to_dict(sheet, design_name: str) -> dict:
    """The JSON object of ``cage build --json``: every key with a number carries its unit."""
    out = {"format": FORMAT, "version": VERSION, "design": design_name}
    out.update(dataclasses.asdict(sheet))
    out["axes"] = {b["axis"]: b for b in out["axes"]}
    return out


def bom_rows(sheet) -> list[dict]:
    """The bill of materials: one dict per row with the keys of ``BOM_COLUMNS``."""
    rows = []

    def add(item, axis, coil, description, quantity, unit, length_m=None, mass_kg=None, note=""):
        rows.append({"item": item, "axis": axis, "coil": coil, "description": description, "quantity": quantity,
                     "unit": unit, "length_m": "" if length_m is None else f"{length_m:.2f}",
                     "mass_kg": "" if mass_kg is None else f"{mass_kg:.3f}", "note": note})

    for b in sheet.axes:
        for c in b.coils:
            add("frame", b.axis, c.label,
                f"{c.shape} frame, inner {c.size_kind} {c.frame_inner_size_m:.3f} m, outer {c.size_kind} "
                f"{c.frame_outer_size_m:.3f} m, channel {_mm(c.channel_width_m)} x {_mm(c.channel_depth_m)}",
                1, "piece", note=f"coil plane at {c.position_m:+.3f} m on {b.axis}; metal frames need an insulating break")
            add("winding", b.axis, c.label, f"{c.turns} turns of {b.wire}, {c.layers} layers of {c.turns_per_layer}",
                1, "coil", c.wire_length_m, c.copper_mass_kg,
                note=f"includes link {c.link_length_m:.2f} m" if c.link_length_m else "")
        best = next((s for s in b.spools if s.holds_one_coil), b.spools[-1])
        add("magnet wire", b.axis, "", f"{b.wire} enamelled copper, class F or better", best.spools_needed,
            f"spool of {best.spool_mass_kg:g} kg", b.order_wire_m, b.order_wire_m * b.copper_mass_kg / b.total_wire_m,
            note=f"coils, links and leads {b.total_wire_m:.1f} m plus {sheet.spare_fraction * 100:g} % spare")
        p = b.protection
        add("fuse", b.axis, "", f"fuse or breaker {p.fuse_A:g} A DC", 1, "piece",
            note=f"design current {p.design_current_A:.3f} A")
        if p.diode_current_A is not None:
            add("freewheel diode", b.axis, "", f"at least {p.diode_current_A:.2f} A, {p.diode_reverse_V:.0f} V reverse",
                1, "piece", note=f"stored energy {p.stored_energy_J:.3g} J")
        else:
            add("transient suppressor", b.axis, "", f"bidirectional, stand-off above {p.tvs_standoff_V:.0f} V, "
                f"at least {p.tvs_energy_J:.3g} J", 1, "piece", note="or the RC snubber of the build sheet")
        if p.polarity_switch:
            add("polarity switch", b.axis, "", "double-pole double-throw, rated for the fuse current", 1, "piece",
                note="switch only at zero current")
    return rows


def bom_csv(sheet) -> str:
    """The bill of materials as CSV text (every cell a plain value; text cells made safe for spreadsheets)."""
    buf = io.StringIO()
    w = csv.DictWriter(buf, fieldnames=BOM_COLUMNS, lineterminator="\n")
    w.writeheader()
    for row in bom_rows(sheet):
        w.writerow({k: _cell(v) for k, v in row.items()})
    return buf.getvalue()


def _cell(value):
    """A CSV cell: text made one line and never a spreadsheet formula (cage.escape); numbers as they are."""
    from cage.escape import csv_text_cell

    return csv_text_cell(value) if isinstance(value, str) else value
