"""``cage design`` (plan a cage, write its design file) and ``cage compare`` (the best cage per outer size)."""
from __future__ import annotations

from cage.escape import for_terminal

import sys
from pathlib import Path
from typing import Optional

import typer

from cage.cliargs import MINIMISE_HELP, SHAPE_HELP, STEP_HELP, SYSTEM_HELP


def register(app: typer.Typer) -> None:
    """Add ``cage design`` and ``cage compare`` to the application."""

    @app.command()
    def design(
        site_file: Path = typer.Argument(..., help="Site file (TOML) with [room], [requirement], [coil], [[supply]].",
                                         show_default=False),
        out: Path = typer.Option(..., "--out", help="Design file to write (JSON)."),
        shape: Optional[str] = typer.Option(None, "--shape", help=SHAPE_HELP),
        minimise: str = typer.Option("power", "--minimise", help=MINIMISE_HELP),
        spacing: str = typer.Option("flat", "--spacing", help="flat: each pair at its flat-field spacing; "
                                                              "free: spacing chosen for the test volume."),
        max_field_step_nT: Optional[float] = typer.Option(None, "--max-field-step-nT", help=STEP_HELP),
        system: Optional[str] = typer.Option(None, "--system", help=SYSTEM_HELP),
    ):
        """Size a nested three-axis cage for the site's room, test volume, field range and supplies."""
        from cage import sitefile
        from cage.cliargs import check_out
        from cage.designfile import save_design
        from cage.designtext import design_table
        from cage.terminal import say, warn
        from cage.workflow import packs_of, plan_design

        site = sitefile.load_site(site_file)
        check_out(out, site_file)
        planned = plan_design(site, shape, minimise, spacing, max_field_step_nT, system)
        for w in planned.amb.warnings:
            warn(w)
        save_design(out, planned.design)
        say(f"Design for {for_terminal(site.name)} ({planned.amb.source} field, {planned.amb.earth.date.isoformat()}); "
            f"cage +x at {planned.design.site['heading_note']}")
        say(design_table(planned.plan, planned.inp, packs_of(planned.design)))
        for line in planned.cautions:
            warn(line)
        say(f"Wrote {for_terminal(out)}")

    @app.command()
    def compare(
        site_file: Path = typer.Argument(..., help="Site file (TOML).", show_default=False),
        sizes: str = typer.Option("1.2:3.0:0.1", "--sizes",
                                  help="Outer sizes START:STOP:STEP or a comma list (m): side of the outermost "
                                       "square pair, or diameter of the outermost round pair."),
        shape: Optional[str] = typer.Option(None, "--shape", help=SHAPE_HELP),
        minimise: str = typer.Option("power", "--minimise", help=MINIMISE_HELP),
        as_json: bool = typer.Option(False, "--json", help="Print one JSON object instead of a table."),
        plot: Optional[Path] = typer.Option(None, "--plot", help="Write the comparison figure (PNG)."),
        max_field_step_nT: Optional[float] = typer.Option(None, "--max-field-step-nT", help=STEP_HELP),
        system: Optional[str] = typer.Option(None, "--system", help=SYSTEM_HELP),
    ):
        """The best cage at each outer size: envelope, uniform cube, power, copper, fit in the room."""
        from cage import sitefile
        from cage.cliargs import check_out
        from cage.compare import compare_sizes, parse_sizes
        from cage.terminal import dump_json, say, warn
        from cage.workflow import compare_inputs

        site = sitefile.load_site(site_file)
        check_out(plot, site_file)
        values = parse_sizes(sizes)
        amb, inp, room_limit = compare_inputs(site, shape, minimise, max_field_step_nT, system)
        for w in amb.warnings:
            warn(w)
        if sys.stderr.isatty() and not as_json:
            with typer.progressbar(length=len(values), label="sizes", file=sys.stderr) as bar:
                rows = compare_sizes(inp, values, progress=lambda _s: bar.update(1))
        else:
            rows = compare_sizes(inp, values)
        if plot is not None:
            from cage.atomicfile import write_bytes
            from cage.comparefigure import compare_figure
            from cage.figurestyle import png_bytes

            fig = compare_figure([r.as_dict() for r in rows], room_limit, inp.uniformity,
                                 required_cube_m=float(max(inp.test_volume_m)))
            from cage.provenance import header_lines
            from cage.workflow import field_provenance

            write_bytes(plot, png_bytes(fig, notes=header_lines(field_provenance(site, amb), prefix="")))
        if as_json:
            typer.echo(dump_json({"format": "cage-compare", "version": 1, "site": site.name,
                                  "uniformity": inp.uniformity, "room_inner_min_m": room_limit,
                                  "rows": [r.as_dict() for r in rows]}), nl=False)
            return
        say(f"Cage sizes for {for_terminal(site.name)}: test volume {' x '.join(f'{v:g}' for v in inp.test_volume_m)} m "
            f"at {inp.uniformity * 100:g} %")
        multi = any(r.system != "pair" for r in rows)
        sys_head = f" {'system':>10}" if multi else ""
        say(f"{'outer (m)':>10}{sys_head} {'shape':>7} {'envelope x, y, z (m)':>22} {'cube (m)':>9} {'power (W)':>10} "
            f"{'copper (kg)':>12}  fits room")
        for r in rows:
            sys_cell = f" {r.system:>10}" if multi else ""
            if not r.feasible:
                say(f"{r.outer_size_m:>10.2f}{sys_cell}  none: {r.reason}")
                continue
            env = ", ".join(f"{v:.2f}" for v in r.envelope_m)
            mark = "yes" if r.fits_room else "no"
            if r.meets_requirement:
                mark += " (meets requirement)"
            say(f"{r.outer_size_m:>10.2f}{sys_cell} {r.shape:>7} {env:>22} {r.uniform_cube_m:>9.3f} "
                f"{r.total_power_W:>10.1f} {r.copper_mass_kg:>12.1f}  {mark}")
        if plot is not None:
            say(f"Wrote {for_terminal(plot)}")
