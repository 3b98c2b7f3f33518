"""``cage build DESIGN.json``: the build sheet on the terminal, as JSON, as a CSV bill of materials."""
from __future__ import annotations

from pathlib import Path
from typing import List, Optional

import typer

from cage.buildsheetfile import BOM_COLUMNS, FORMAT, VERSION, _mm, bom_csv, bom_rows, sheet_to_dict  # noqa: F401


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
        from cage.cliargs import load_checked_design as _load_checked_design
        from cage.terminal import dump_json as _dump_json, say as _say, warn as _warn
        from cage.workflow import design_supplies as _design_supplies
        from cage.errors import InputError

        from cage.cliargs import check_out

        check_out(out, design_file)
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
            for file_name in pngs:
                check_out(figures / file_name, design_file, option="--figures")
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
