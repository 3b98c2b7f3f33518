"""``cage build DESIGN.json``: the build sheet on the terminal, as JSON, as a CSV bill of materials."""
from __future__ import annotations

import csv
import dataclasses
import io
from pathlib import Path
from typing import List, Optional

import typer

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


def sheet_text(sheet, design_name: str) -> str:
    """A readable build sheet, one block per axis."""
    lines = [f"Build sheet for {design_name}", ""]
    for b in sheet.axes:
        lines.append(f"Axis {b.axis}: {len(b.coils)} {b.shape} coils of {b.wire} "
                     f"({b.wire_bare_diameter_m * 1e3:.3f} mm bare, {b.wire_outer_diameter_m * 1e3:.3f} mm over enamel)")
        kind = b.coils[0].size_kind
        lines.append(f"  {'coil':<6}{'plane':>9}{'frame ' + kind + ' in-out':>22}{'winding ' + kind + ' in-out':>24}"
                     f"{'turns':>7}  {'layers x per layer':<20}{'wire':>9}{'copper':>9}{'R at 20 C':>11}")
        for c in b.coils:
            layers = f"{c.layers} x {c.turns_per_layer}" + (f" ({c.last_layer_turns} in last)"
                                                          if c.last_layer_turns != c.turns_per_layer else "")
            lines.append(f"  {c.label:<6}{c.position_m:>+7.3f} m"
                         f"{c.frame_inner_size_m:>12.3f}-{c.frame_outer_size_m:.3f} m"
                         f"{c.winding_inner_size_m:>14.3f}-{c.winding_outer_size_m:.3f} m"
                         f"{c.turns:>7}  {layers:<20}{c.wire_length_m:>7.1f} m{c.copper_mass_kg:>6.2f} kg"
                         f"{c.resistance_20C_ohm:>7.3f} ohm")
        c0 = b.coils[0]
        lines.append(f"  channel {_mm(c0.channel_width_m)} along the axis x {_mm(c0.channel_depth_m)} deep, centred "
                     f"on the centreline; the winding fills {_mm(c0.pack_width_m)} x {_mm(c0.pack_depth_m)}: pack "
                     f"the channel floor up to the winding's inner {kind}")
        lines.append(f"  wire: coils and links {b.winding_wire_m:.1f} m + leads {b.lead_length_m:.1f} m = "
                     f"{b.total_wire_m:.1f} m; order {b.order_wire_m:.0f} m ({sheet.spare_fraction * 100:g} % spare); "
                     f"copper {b.copper_mass_kg:.2f} kg; coils {b.resistance_20C_ohm:.3f} ohm at 20 C")
        lines.append("  spools: " + "; ".join(
            f"{s.spool_mass_kg:g} kg = {s.length_per_spool_m:.0f} m, {s.spools_needed} needed"
            + ("" if s.holds_one_coil else " *") for s in b.spools))
        if not all(s.holds_one_coil for s in b.spools):
            lines.append("    (* one spool holds less than a coil: a splice would fall inside a winding)")
        lines.append(f"  sense: {b.connection.sense}")
        lines.append("  wiring:")
        lines += [f"    - {s}" for s in b.connection.steps]
        lines.append("  check after winding:")
        lines += [f"    - {s}" for s in b.connection.check]
        p = b.protection
        lines.append(f"  protection: fuse or breaker {p.fuse_A:g} A (design current {p.design_current_A:.3f} A); "
                     f"stored energy {p.stored_energy_J:.3g} J at full range (L {p.inductance_H * 1e3:.2f} mH)")
        lines.append(f"    {p.suppressor}")
        lines.append(f"    supply: {p.voltage_class}")
        if p.polarity_switch:
            lines.append("    polarity switch (unipolar supply):")
            lines += [f"      - {s}" for s in p.polarity_switch]
        ins = b.insulation
        if ins.hot_spot_C is not None:
            lines.append(f"  insulation: winding {ins.winding_temperature_C:.1f} C, hot spot about {ins.hot_spot_C:.0f} C "
                         f"needs IEC 60085 class {ins.class_needed}; class F wire run at class B leaves "
                         f"{ins.margin_class_B_K:.0f} K")
        f = b.frame
        lines.append(f"  a closed aluminium frame ({f.frame_wall_m * 1e3:g} mm U-channel) would be one shorted turn: "
                     f"R {f.resistance_ohm * 1e3:.2f} mohm, L {f.inductance_H * 1e6:.2f} uH, tau = L/R "
                     f"{f.time_constant_s * 1e3:.1f} ms (Grover's one-turn inductance, aluminium at 61 % IACS)")
        lines.append("")
    lines.append(f"Copper, all axes with leads: {sheet.copper_mass_kg:.1f} kg")
    return "\n".join(lines)


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


def sheet_for_design(design_obj):
    """The build sheet of a design with the supplies it records (none: suits either kind)."""
    from cage.buildsheet import build_sheet
    from cage.cli import _design_supplies

    return build_sheet(design_obj, _design_supplies(design_obj))


def report_build(design_doc: dict, name: str = "design.json"):
    """(sheet, its JSON document, connection PNGs) for the report of a plan folder."""
    from cage.connectionfigure import connection_pngs
    from cage.designfile import design_from_dict

    sheet = sheet_for_design(design_from_dict(design_doc, name))
    return sheet, sheet_to_dict(sheet, name), connection_pngs(sheet)


def register(app: typer.Typer) -> None:
    """Add ``cage build`` to the application."""

    @app.command()
    def build(
        design_file: Path = typer.Argument(..., help="Design file (JSON) from cage design or cage plan.",
                                           show_default=False),
        as_json: bool = typer.Option(False, "--json", help="Print one JSON object instead of the sheet."),
        out: Optional[Path] = typer.Option(None, "--out", help="Write the bill of materials (CSV)."),
        spool_kg: Optional[List[float]] = typer.Option(None, "--spool-kg",
                                                       help="A spool mass to plan with (kg); repeat for more "
                                                            "(default 1, 2, 5, 10, 20)."),
        spare: float = typer.Option(5.0, "--spare-percent", help="Wire ordered beyond the total (%)."),
        frame_wall_mm: float = typer.Option(3.0, "--frame-wall-mm",
                                            help="Wall of the aluminium channel in the shorted-turn warning (mm)."),
        figures: Optional[Path] = typer.Option(None, "--figures", help="Folder for the connection figures (PNG)."),
    ):
        """The build sheet: frames, windings, wire and spools, connection, protection (see the README)."""
        from cage.atomicfile import write_bytes, write_text
        from cage.buildsheet import STANDARD_SPOOL_MASSES_KG, build_sheet
        from cage.cli import _design_supplies, _dump_json, _load_checked_design, _say, _warn
        from cage.errors import InputError

        design_obj = _load_checked_design(design_file)
        name = _shown_name(design_file)
        masses = tuple(spool_kg) if spool_kg else STANDARD_SPOOL_MASSES_KG
        if not all(0.0 < m <= 1000.0 for m in masses):  # NaN fails too
            raise InputError(f"--spool-kg must be a spool mass above 0 and at most 1000 kg, got "
                             f"{', '.join(f'{m:g}' for m in masses)}")
        if not (0.0 <= spare <= 100.0):
            raise InputError(f"--spare-percent must be between 0 and 100, got {spare:g}")
        if not (0.0 < frame_wall_mm < 100.0):
            raise InputError(f"--frame-wall-mm must be above 0 and below 100 mm, got {frame_wall_mm:g}")
        try:
            sheet = build_sheet(design_obj, _design_supplies(design_obj), spool_masses_kg=masses,
                                spare_fraction=spare / 100.0, frame_wall_m=frame_wall_mm / 1000.0)
        except InputError as exc:
            raise InputError(f"{name}: {exc}") from None
        pngs = {}
        if figures is not None:
            from cage.connectionfigure import connection_pngs

            pngs = connection_pngs(sheet)
            try:
                figures.mkdir(parents=True, exist_ok=True)
            except OSError as exc:
                raise InputError(f"{_shown_name(figures)}: cannot make the folder ({exc.strerror})") from None
        if out is not None:
            write_text(out, bom_csv(sheet))
        written = []
        if pngs:
            for file_name, data in pngs.items():
                written.append(_shown_name(write_bytes(figures / file_name, data)))
        if as_json:
            typer.echo(_dump_json(sheet_to_dict(sheet, name)), nl=False)
        else:
            _say(sheet_text(sheet, name))
        for line in sheet.warnings:
            _warn(line)
        if out is not None:
            typer.echo(f"Wrote {_shown_name(out)}", err=as_json)
        if written:
            typer.echo("Wrote " + ", ".join(written), err=as_json)


def _shown_name(path: Path) -> str:
    """A file name fit for one terminal line (cage.escape)."""
    from cage.escape import for_terminal

    return for_terminal(path)
