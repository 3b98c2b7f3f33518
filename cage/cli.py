"""The ``cage`` command line (typer). The only module that talks to the terminal.

Each command reads its inputs through the file readers, calls the computational core and
prints or writes the result. User errors from the core (:class:`cage.errors.CageError`)
end in one line on stderr and the error's exit code; see the README for the codes.
Heavy modules (ppigrf, scipy.optimize, matplotlib) are imported inside the commands.
"""
from __future__ import annotations

import dataclasses
import json
import math
import os
import sys
import types
from pathlib import Path
from typing import Optional

import typer

from cage.errors import EXIT_UNEXPECTED, CageError, InputError

app = typer.Typer(
    add_completion=False,
    no_args_is_help=False,  # "cage" alone: the callback prints the help and exits 0
    pretty_exceptions_enable=False,
    rich_markup_mode=None,  # help texts hold [room], [[supply]]: plain text, not markup
    context_settings={"help_option_names": ["-h", "--help"]},
    help="Plan, drive and correct three-axis magnetic coil cages.",
)


def _show_version(value: bool) -> None:
    if value:
        from cage import __version__

        typer.echo(f"cage {__version__}")
        raise typer.Exit()


@app.callback(invoke_without_command=True)
def _root(
    ctx: typer.Context,
    version: bool = typer.Option(False, "--version", callback=_show_version, is_eager=True,
                                 help="Print the program's version and exit."),
) -> None:
    """Plan, drive and correct three-axis magnetic coil cages (see the README)."""
    if ctx.invoked_subcommand is None:
        typer.echo(ctx.get_help())
        raise typer.Exit()


# ----------------------------------------------------------------------------- helpers

def _visible(text) -> str:
    """Text for the terminal: each line's control characters made visible (cage.escape)."""
    from cage.escape import for_terminal

    return "\n".join(for_terminal(line) for line in str(text).split("\n"))


def _say(text: str = "") -> None:
    typer.echo(_visible(text))


def _warn(text: str) -> None:
    """One plain line on stderr: "caution: ..." for safety cautions, else "warning: ..."."""
    line = " ".join(_visible(text or "").split())
    if not line:
        return
    for prefix in ("warning:", "caution:"):
        if line.lower().startswith(prefix):
            typer.echo(f"{prefix} {line[len(prefix):].lstrip()}", err=True)
            return
    typer.echo(f"warning: {line}", err=True)


def _dump_json(obj) -> str:
    return json.dumps(obj, indent=2, allow_nan=False) + "\n"


def _fmt(value: float, digits: int = 1) -> str:
    text = f"{value:,.{digits}f}"
    return text[1:] if text.startswith("-") and float(text.replace(",", "")) == 0.0 else text  # no "-0.0"


def _resolve_site(site_file: Optional[Path], lat: Optional[float], lon: Optional[float],
                  alt_m: Optional[float], date: Optional[str], heading_deg: Optional[float],
                  heading_magnetic: bool):
    """A Site from a file, or from flags; flags given beside a file override it."""
    import dataclasses

    from cage import sitefile

    if site_file is None:
        if lat is None or lon is None:
            raise InputError("give a site file, or both --lat and --lon (with --alt-m, --date, --heading-deg)")
        location = sitefile.check_location(lat, lon, 0.0 if alt_m is None else alt_m, "command line")
        when = sitefile.today_utc() if date is None else sitefile.parse_date(date, "--date")
        orientation = sitefile.Orientation(
            heading_deg=sitefile.check_heading(0.0 if heading_deg is None else heading_deg, "command line"),
            heading_reference="magnetic" if heading_magnetic else "true",
            stated=heading_deg is not None or heading_magnetic,
        )
        return sitefile.Site(
            name=_place_name(location.latitude_deg, location.longitude_deg), date=when, date_given=date is not None,
            location=location, orientation=orientation, room=None, requirement=sitefile.Requirement(),
            coil=sitefile.CoilSettings(), supplies=(), measured=None, source="command line")
    site = sitefile.load_site(site_file)
    if any(v is not None for v in (lat, lon, alt_m)):
        loc = site.location
        location = sitefile.check_location(loc.latitude_deg if lat is None else lat,
                                           loc.longitude_deg if lon is None else lon,
                                           loc.altitude_m if alt_m is None else alt_m, "command line")
        site = dataclasses.replace(site, location=location, measured=None)
    if date is not None:
        site = dataclasses.replace(site, date=sitefile.parse_date(date, "--date"), date_given=True)
    if heading_deg is not None or heading_magnetic:
        orientation = sitefile.Orientation(
            heading_deg=sitefile.check_heading(site.orientation.heading_deg if heading_deg is None else heading_deg,
                                               "command line"),
            heading_reference="magnetic" if heading_magnetic else site.orientation.heading_reference)
        site = dataclasses.replace(site, orientation=orientation)
    return site


def _place_name(lat_deg: float, lon_deg: float) -> str:
    """A place given by numbers, named as a person reads it: "33.9 deg S, 70.5 deg W"."""
    from cage.numberformat import latitude_text, longitude_text

    return f"{latitude_text(lat_deg, 4)}, {longitude_text(lon_deg, 4)}".replace("000 deg", " deg")


SiteArg = typer.Argument(None, help="Site file (TOML). Omit it to give the place with --lat/--lon.",
                         show_default=False)
LatOpt = typer.Option(None, "--lat", help="Geodetic latitude, degrees north.")
LonOpt = typer.Option(None, "--lon", help="Longitude, degrees east.")
AltOpt = typer.Option(None, "--alt-m", help="Altitude above the WGS84 ellipsoid, metres (default 0).")
DateOpt = typer.Option(None, "--date", help="Date YYYY-MM-DD (default: the site's, else today UTC).")
HeadingOpt = typer.Option(None, "--heading-deg", help="Azimuth of cage +x, clockwise from north, degrees.")
MagneticOpt = typer.Option(False, "--heading-magnetic", help="The heading is from magnetic north.")


# ----------------------------------------------------------------------------- field

def field_summary(site, amb, design_identity: str = "") -> dict:
    """The JSON object of ``cage field``."""
    e = amb.earth
    sv_cage = amb.sv_cage_nT_per_year
    out = {
        "model": e.model,
        "site": site.name,
        "date": e.date.isoformat(),
        "lat_deg": e.latitude_deg,
        "lon_deg": e.longitude_deg,
        "alt_m": e.altitude_m,
        "north_nT": e.north_nT,
        "east_nT": e.east_nT,
        "down_nT": e.down_nT,
        "horizontal_nT": e.horizontal_nT,
        "total_nT": e.total_nT,
        "declination_deg": e.declination_deg,
        "inclination_deg": e.inclination_deg,
        "secular_variation_nT_per_year": {"north": e.sv_north_nT_per_year, "east": e.sv_east_nT_per_year,
                                          "down": e.sv_down_nT_per_year},
        "heading_deg": amb.heading_true_deg,
        "heading_given_deg": amb.heading_deg_given,
        "heading_reference": amb.heading_reference,
        "cage_frame_nT": dict(zip("xyz", amb.model_cage_nT)),
        "secular_variation_cage_nT_per_year": dict(zip("xyz", (float(v) for v in sv_cage))),
        "extrapolated": e.extrapolated,
        "in_force": amb.source,
    }
    if amb.measured_cage_nT is not None:
        out["measured_cage_frame_nT"] = dict(zip("xyz", amb.measured_cage_nT))
        out["local_share_cage_nT"] = dict(zip("xyz", (float(v) for v in amb.local_share_cage_nT)))
        out["measured_note"] = amb.measured_note
    out["provenance"] = _field_provenance(site, amb, design_identity).as_dict()
    return out


def _field_provenance(site, amb, design_identity: str = "", warnings=()):
    from cage.provenance import make_provenance

    derived = {"site_file": "" if site.source == "command line" else site.source, "design": design_identity,
               "survey": site.measured.date.isoformat() if site.measured is not None else ""}
    return make_provenance(site, amb, derived_from=derived, warnings=tuple(amb.warnings) + tuple(warnings))


def field_table(site, amb) -> str:
    from cage.numberformat import azimuth_text, latitude_text, longitude_text

    e = amb.earth
    lines = [
        f"Site        {site.name}",
        f"Position    {latitude_text(e.latitude_deg)}, {longitude_text(e.longitude_deg)}, "
        f"{_fmt(e.altitude_m, 0)} m (WGS84)",
        f"Date        {e.date.isoformat()}{'' if site.date_given else ' (today, UTC)'}   model {e.model}",
        "",
        "Geographic frame (NED)         field          secular variation",
        f"  north                {_fmt(e.north_nT):>12} nT   {_fmt(e.sv_north_nT_per_year):>8} nT/yr",
        f"  east                 {_fmt(e.east_nT):>12} nT   {_fmt(e.sv_east_nT_per_year):>8} nT/yr",
        f"  down                 {_fmt(e.down_nT):>12} nT   {_fmt(e.sv_down_nT_per_year):>8} nT/yr",
        f"  horizontal           {_fmt(e.horizontal_nT):>12} nT",
        f"  total                {_fmt(e.total_nT):>12} nT",
        f"  declination          {e.declination_deg:>12.2f} deg (east positive)",
        f"  inclination          {e.inclination_deg:>12.2f} deg (down positive)",
        "",
    ]
    ref = amb.heading_reference
    head = f"Cage frame   +x at {azimuth_text(amb.heading_true_deg)} deg true"
    if ref == "magnetic":
        head += f" ({azimuth_text(amb.heading_deg_given)} deg magnetic + declination)"
    lines.append(head + ", +y 90 deg clockwise of +x, +z down")
    if amb.measured_cage_nT is None:
        for axis, v in zip("xyz", amb.model_cage_nT):
            lines.append(f"  {axis}                    {_fmt(v):>12} nT")
        lines.append("  (model field: indoors, steel can shift it by microtesla; survey and add [measured])")
    else:
        lines.append("                        measured (in force)        model    local share")
        for axis, m, v, d in zip("xyz", amb.measured_cage_nT, amb.model_cage_nT, amb.local_share_cage_nT):
            lines.append(f"  {axis}              {_fmt(m):>12} nT  {_fmt(v):>12} nT  {_fmt(d):>10} nT")
        if amb.measured_note:
            lines.append(f"  survey: {amb.measured_note}")
    return "\n".join(lines)


@app.command()
def field(
    site_file: Optional[Path] = SiteArg,
    lat: Optional[float] = LatOpt,
    lon: Optional[float] = LonOpt,
    alt_m: Optional[float] = AltOpt,
    date: Optional[str] = DateOpt,
    heading_deg: Optional[float] = HeadingOpt,
    heading_magnetic: bool = MagneticOpt,
    as_json: bool = typer.Option(False, "--json", help="Print one JSON object instead of a table."),
):
    """The local geomagnetic field (IGRF-14) in the geographic and the cage frame."""
    from cage.ambient import site_ambient

    site = _resolve_site(site_file, lat, lon, alt_m, date, heading_deg, heading_magnetic)
    amb = site_ambient(site)
    for w in amb.warnings:
        _warn(w)
    if as_json:
        typer.echo(_dump_json(field_summary(site, amb)), nl=False)
    else:
        _say(field_table(site, amb))


# ----------------------------------------------------------------------------- design

SHAPE_HELP = "Coil shape on every axis: square, round or either (default: the site's requirement.shape)."
MINIMISE_HELP = "What the planner minimises: power (at full range), mass (copper) or size (envelope volume)."
SYSTEM_HELP = ("Coil systems allowed per axis, comma-separated: pair, three, four, four-equal (default: the "
               "site's requirement.systems; pairs when not given).")

CAUTION_HOT = ("caution: windings run hot at full range; check their temperature on the built coils and "
               "keep within the enamel and frame ratings")
CAUTION_VOLTAGE = ("caution: supply voltages above about 50 V DC need touch protection; wiring and protection "
                   "must follow local electrical codes and licensed practice")


def _plan_from_site(site, shape, minimise, spacing, max_field_step_nT, system=None):
    from cage.ambient import site_ambient
    from cage.optimise import plan_cage, plan_inputs_from_site

    if site.room is None:
        raise InputError(f"{site.source}: no [room] table; the planner needs the room the cage must fit")
    amb = site_ambient(site)
    for w in amb.warnings:
        _warn(w)
    inp = plan_inputs_from_site(site, amb.in_force_cage_nT, shape=shape, minimise=minimise, spacing=spacing,
                                max_field_step_nT=max_field_step_nT, systems=system)
    return amb, inp, plan_cage(inp)


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
    lines = [f"{'axis':<{width}}{'x':>14}{'y':>14}{'z':>14}"]
    for label, get, unit in rows:
        cells = "".join(f"{get(a):>14}" for a in plan.axes)
        lines.append(f"{label:<{width}}{cells}  {unit}")
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


def _packs_of(design_obj):
    """The winding-pack differences recorded in a design's layout block, as simple records."""
    lay = design_obj.layout or {}
    keys = ("winding_pack_centre_difference", "winding_pack_box_difference", "winding_pack_uniformity")
    if not all(isinstance(lay.get(k), list) and len(lay[k]) == 3 for k in keys):
        return ()
    return tuple(types.SimpleNamespace(centre_relative=c, box_max_relative=b, box_deviation_pack=u)
                 for c, b, u in zip(*(lay[k] for k in keys)))


def _field_slew_uT_per_s(axis_plan) -> float:
    """Largest field slew the supply allows at full range: (V_max - I R) / L x field per amp."""
    from cage.electrical import field_slew_nT_per_s

    return field_slew_nT_per_s(axis_plan.electrics, axis_plan.supply.max_voltage_V,
                               axis_plan.field_per_amp_nT) / 1000.0


def _stamped_design(design_obj, site, amb, warnings):
    """The design with its provenance: it fixes the cage's true azimuth (cage.provenance)."""
    from cage.provenance import design_id, stamp_design

    return stamp_design(design_obj, _field_provenance(site, amb, design_id(design_obj), warnings))


def _check_out(out, *inputs) -> None:
    """--out must not name one of the command's own inputs (cage.outputs)."""
    from cage.outputs import refuse_overwriting_inputs

    refuse_overwriting_inputs(out, [p for p in inputs if p is not None])


def _design_cautions(plan, inp) -> list[str]:
    out = list(plan.warnings)
    if any(a.electrics.winding_temperature_C > 50.0 for a in plan.axes):
        out.append(CAUTION_HOT)
    if any(abs(a.drive.voltage_V) > 50.0 for a in plan.axes):
        out.append(CAUTION_VOLTAGE)
    return out


@app.command()
def design(
    site_file: Path = typer.Argument(..., help="Site file (TOML) with [room], [requirement], [coil], [[supply]].",
                                     show_default=False),
    out: Path = typer.Option(..., "--out", help="Design file to write (JSON)."),
    shape: Optional[str] = typer.Option(None, "--shape", help=SHAPE_HELP),
    minimise: str = typer.Option("power", "--minimise", help=MINIMISE_HELP),
    spacing: str = typer.Option("flat", "--spacing", help="flat: each pair at its flat-field spacing; "
                                                          "free: spacing chosen for the test volume."),
    max_field_step_nT: Optional[float] = typer.Option(
        None, "--max-field-step-nT", help="Largest field step one supply current step may give (nT)."),
    system: Optional[str] = typer.Option(None, "--system", help=SYSTEM_HELP),
):
    """Size a nested three-axis cage for the site's room, test volume, field range and supplies."""
    from cage import sitefile
    from cage.designfile import save_design
    from cage.optimise import design_from_plan

    site = sitefile.load_site(site_file)
    _check_out(out, site_file)
    amb, inp, plan = _plan_from_site(site, shape, minimise, spacing, max_field_step_nT, system)
    design_obj = _stamped_design(design_from_plan(plan, inp, site, amb), site, amb, _design_cautions(plan, inp))
    save_design(out, design_obj)
    _say(f"Design for {site.name} ({amb.source} field, {amb.earth.date.isoformat()}); "
         f"cage +x at {design_obj.site['heading_note']}")
    _say(design_table(plan, inp, _packs_of(design_obj)))
    for line in _design_cautions(plan, inp):
        _warn(line)
    _say(f"Wrote {out}")


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
    max_field_step_nT: Optional[float] = typer.Option(
        None, "--max-field-step-nT", help="Largest field step one supply current step may give (nT)."),
    system: Optional[str] = typer.Option(None, "--system", help=SYSTEM_HELP),
):
    """The best cage at each outer size: envelope, uniform cube, power, copper, fit in the room."""
    from cage import sitefile
    from cage.ambient import site_ambient
    from cage.compare import compare_sizes, parse_sizes
    from cage.optimise import plan_inputs_from_site

    site = sitefile.load_site(site_file)
    _check_out(plot, site_file)
    values = parse_sizes(sizes)
    if site.room is None:
        raise InputError(f"{site.source}: no [room] table; compare needs the room the cage must fit")
    amb = site_ambient(site)
    for w in amb.warnings:
        _warn(w)
    inp = plan_inputs_from_site(site, amb.in_force_cage_nT, shape=shape, minimise=minimise,
                                max_field_step_nT=max_field_step_nT, systems=system)
    if sys.stderr.isatty() and not as_json:
        with typer.progressbar(length=len(values), label="sizes", file=sys.stderr) as bar:
            rows = compare_sizes(inp, values, progress=lambda _s: bar.update(1))
    else:
        rows = compare_sizes(inp, values)
    room_limit = None
    if site.room is not None:
        from cage.layout import room_inner_m

        room_limit = float(min(room_inner_m(site.room)))
    if plot is not None:
        from cage.atomicfile import write_bytes
        from cage.plots import compare_figure, png_bytes

        fig = compare_figure([r.as_dict() for r in rows], room_limit, inp.uniformity,
                             required_cube_m=float(max(inp.test_volume_m)))
        write_bytes(plot, png_bytes(fig))
    if as_json:
        typer.echo(_dump_json({"format": "cage-compare", "version": 1, "site": site.name,
                               "uniformity": inp.uniformity, "room_inner_min_m": room_limit,
                               "rows": [r.as_dict() for r in rows]}), nl=False)
        return
    _say(f"Cage sizes for {site.name}: test volume {' x '.join(f'{v:g}' for v in inp.test_volume_m)} m "
         f"at {inp.uniformity * 100:g} %")
    multi = any(r.system != "pair" for r in rows)
    sys_head = f" {'system':>10}" if multi else ""
    _say(f"{'outer (m)':>10}{sys_head} {'shape':>7} {'envelope x, y, z (m)':>22} {'cube (m)':>9} {'power (W)':>10} "
         f"{'copper (kg)':>12}  fits room")
    for r in rows:
        sys_cell = f" {r.system:>10}" if multi else ""
        if not r.feasible:
            _say(f"{r.outer_size_m:>10.2f}{sys_cell}  none: {r.reason}")
            continue
        env = ", ".join(f"{v:.2f}" for v in r.envelope_m)
        mark = "yes" if r.fits_room else "no"
        if r.meets_requirement:
            mark += " (meets requirement)"
        _say(f"{r.outer_size_m:>10.2f}{sys_cell} {r.shape:>7} {env:>22} {r.uniform_cube_m:>9.3f} {r.total_power_W:>10.1f} "
             f"{r.copper_mass_kg:>12.1f}  {mark}")
    if plot is not None:
        _say(f"Wrote {plot}")


# ----------------------------------------------------------------------------- setpoints

def _load_checked_design(path: Path):
    """A design file that can be built: frames that do not collide, coils around the test volume."""
    from cage.designfile import design_to_dict, load_design
    from cage.coillayout import design_geometry_problems

    design_obj = load_design(path)
    volume, _, frame, _ = _design_context(design_to_dict(design_obj))
    problems = design_geometry_problems(design_obj, frame, volume)
    if problems:
        raise InputError(f"{path}: {problems[0]}; was the design file edited?")
    return design_obj



def _design_supplies(design):
    """Supplies recorded in a design file at planning time (used when no site file gives them)."""
    from cage.supplies import Supply, validate_supply

    rec = (design.requirement or {}).get("supplies")
    if not isinstance(rec, dict):
        return None
    out = []
    for axis in "xyz":
        d = rec.get(axis)
        if not isinstance(d, dict):
            return None
        try:
            s = Supply(axis=axis, max_voltage_V=float(d["max_voltage_V"]), max_current_A=float(d["max_current_A"]),
                       resolution_A=float(d.get("resolution_A", 0.001)), bipolar=bool(d.get("bipolar", True)),
                       name=str(d.get("name", "")))
        except (KeyError, TypeError, ValueError):
            raise InputError(f"design file: requirement.supplies.{axis} is malformed") from None
        out.append(validate_supply(s, f"design file: requirement.supplies.{axis}"))
    return tuple(out)


def _number_list(value, n=3):
    try:
        out = [float(v) for v in value]
    except (TypeError, ValueError):
        return None
    return out if len(out) == n and all(v == v and abs(v) != float("inf") for v in out) else None


@dataclasses.dataclass(frozen=True)
class _Context:
    """What a current table of a design at a site is computed from."""

    amb: object
    supplies: tuple
    extra_nT: list
    ambient_C: float
    max_C: Optional[float]
    coupling: object
    ambient_nT: object
    source: str
    warnings: tuple
    provenance: object = None


def _setpoint_context(design, site, calibration_file=None, heading_explicit: bool = False) -> _Context:
    """Supplies, temperatures, field in force and warnings for a design used at a site."""
    from cage.ambient import site_ambient
    from cage.provenance import design_id, make_provenance
    from cage.setpoints import reuse_warnings
    from cage.supplies import supply_for_axis, validate_supply

    from cage.reuse import calibration_ambient, site_for_design

    site, heading_note, warnings = site_for_design(design, site, heading_explicit)
    amb = site_ambient(site)
    warnings = list(amb.warnings) + warnings
    if site.supplies:
        for i, s in enumerate(site.supplies):
            validate_supply(s, f"{site.source}: supply[{i}] (axis {s.axis})")
        try:
            supplies = tuple(supply_for_axis(site.supplies, a) for a in "xyz")
        except InputError as exc:
            raise InputError(f"{site.source}: {exc}") from None
    else:
        supplies = _design_supplies(design)
        if supplies is None:
            raise InputError("no supplies: give a site file with [[supply]] tables (the design file records none)")
    req = design.requirement or {}
    if site.source != "command line":
        extra_nT = [1000.0 * v for v in site.requirement.extra_field_uT]
        ambient_C = site.coil.ambient_temperature_C
        max_C = site.coil.max_winding_temperature_C
    else:
        extra_nT = _number_list(req.get("extra_field_nT")) or [1000.0 * v for v in site.requirement.extra_field_uT]
        ambient_C = _number_or(req.get("ambient_temperature_C"), 22.0)
        max_C = _number_or(req.get("max_winding_temperature_C"), None)
    coupling, ambient_nT, source = None, amb.in_force_cage_nT, amb.source
    identity = design_id(design)
    derived = {"design": identity, "site_file": "" if site.source == "command line" else site.source,
               "survey": site.measured.date.isoformat() if site.measured is not None else ""}
    if calibration_file is not None:
        from cage.calibrationfile import load_calibration_record

        coupling, ambient_nT, source, notes = calibration_ambient(
            load_calibration_record(calibration_file), str(calibration_file), identity, site, amb)
        warnings += notes
        derived["calibration"] = str(calibration_file)
    warnings += reuse_warnings(design, supplies, site.room)
    prov = make_provenance(site, amb, derived_from=derived, heading_note=heading_note)
    return _Context(amb, supplies, extra_nT, ambient_C, max_C, coupling, ambient_nT, source, tuple(warnings), prov)


def _number_or(value, default):
    try:
        v = float(value)
    except (TypeError, ValueError):
        return default
    return v if math.isfinite(v) else default


def _table(design, site, ctx: _Context, targets, times=(None, None)):
    """The current table; times: (start time of each row (s), hold time (s)) of a sequence."""
    from cage.setpoints import setpoint_table

    return setpoint_table(design, ctx.ambient_nT, ctx.supplies, targets, site=site.name, date=site.date,
                          source=ctx.source, coupling_nT_per_A=ctx.coupling, ambient_temperature_C=ctx.ambient_C,
                          max_winding_temperature_C=ctx.max_C, warnings=ctx.warnings, t_s=times[0],
                          dwell_s=times[1], provenance=ctx.provenance)


def _flag_rows(table, limit: int = 10):
    """Add one warning naming the rows outside the supplies' limits."""
    import numpy as np

    from cage.escape import for_terminal

    bad = [table.labels[k] for k in np.flatnonzero(~table.within_limits)]
    if not bad:
        return table
    more = "" if len(bad) <= limit else f" and {len(bad) - limit} more"
    return dataclasses.replace(table, warnings=table.warnings + (
        f"{len(bad)} rows outside the supplies' limits (flagged, not clipped): "
        f"{', '.join(for_terminal(b) for b in bad[:limit])}{more}",))


def build_setpoints(design, site, *, targets_file=None, calibration_file=None, heading_explicit=False):
    """The standard and user rows of a design at a site (model, survey, or calibration)."""
    import numpy as np

    from cage.frames import ned_to_cage
    from cage.setpoints import standard_targets

    ctx = _setpoint_context(design, site, calibration_file, heading_explicit)
    targets = standard_targets(ctx.extra_nT)
    if targets_file is not None:
        from cage.targetfile import read_targets_csv

        for t in read_targets_csv(targets_file):
            field_nT = 1000.0 * np.array(t.field_uT)
            if t.frame == "ned":
                field_nT = ned_to_cage(field_nT, ctx.amb.heading_true_deg)
            targets.append((t.label, field_nT))
    return ctx.amb, _flag_rows(_table(design, site, ctx, targets))


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


def _infer_format(fmt: Optional[str], out: Optional[Path]) -> str:
    if fmt is not None:
        if fmt not in ("table", "csv", "json", "scpi"):
            raise InputError(f"--format must be table, csv, json or scpi, got {fmt!r}")
        return fmt
    if out is not None:
        ext = out.suffix.lower().lstrip(".")
        return ext if ext in ("csv", "json", "scpi") else "csv"
    return "table"


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


@app.command()
def setpoints(
    design_file: Path = typer.Argument(..., help="Design file (JSON) from cage design.", show_default=False),
    site_file: Optional[Path] = SiteArg,
    lat: Optional[float] = LatOpt,
    lon: Optional[float] = LonOpt,
    alt_m: Optional[float] = AltOpt,
    date: Optional[str] = DateOpt,
    heading_deg: Optional[float] = HeadingOpt,
    heading_magnetic: bool = MagneticOpt,
    targets: Optional[Path] = typer.Option(None, "--targets", help="CSV of extra targets: label,x_uT,y_uT,z_uT[,frame]."),
    fmt: Optional[str] = typer.Option(None, "--format", help="table, csv, json or scpi (default: from --out, else table)."),
    out: Optional[Path] = typer.Option(None, "--out", help="File to write (atomically) instead of printing."),
    previous: Optional[Path] = typer.Option(None, "--previous", help="An earlier setpoints JSON: show the null's drift."),
    drift_threshold_nT: float = typer.Option(10.0, "--drift-threshold-nT", help="Drift that calls for a new table (nT)."),
    calibration: Optional[Path] = typer.Option(None, "--calibration",
                                               help="Calibration file from cage calibrate: its coupling and offset."),
):
    """Signed supply currents for nulling and test fields, with voltage and power budgets."""
    from cage.atomicfile import write_text
    from cage.setpointfile import load_table_json, render

    design_obj = _load_checked_design(design_file)
    site = _resolve_site(site_file, lat, lon, alt_m, date, heading_deg, heading_magnetic)
    kind = _infer_format(fmt, out)
    old = load_table_json(previous) if previous is not None else None
    if not (drift_threshold_nT > 0 and drift_threshold_nT < 1e6):
        raise InputError(f"--drift-threshold-nT must be a positive number of nT, got {drift_threshold_nT:g}")
    _check_out(out, design_file, site_file, targets, previous, calibration)
    amb, table = build_setpoints(design_obj, site, targets_file=targets, calibration_file=calibration,
                                 heading_explicit=heading_deg is not None or heading_magnetic)
    if old is not None:
        from cage.reuse import previous_problems
        from cage.setpoints import table_to_dict

        table = dataclasses.replace(table, warnings=table.warnings + tuple(
            previous_problems(old, table_to_dict(table), f"--previous {previous}")))
    for w in table.warnings:
        _warn(w)
    text = setpoints_text(table) + "\n" if kind == "table" else render(table, kind)
    if out is not None:
        write_text(out, text)
        _say(f"Wrote {out} ({kind}, {len(table)} rows)")
    else:
        typer.echo(text, nl=False)
    if old is not None:
        from cage.setpoints import null_drift

        drift = null_drift(table, old, amb.sv_cage_nT_per_year, drift_threshold_nT)
        typer.echo(drift_text(drift), err=out is None and kind != "table")


# ----------------------------------------------------------------------------- figures and report

FIGURES = {
    "uniformity.png": "Uniformity maps: relative deviation in the mid-planes, each axis driven alone",
    "axis_lines.png": "Field along the lines through the centre, each axis driven alone",
    "cage_in_room.png": "The cage in the room: top, front and side views",
    "setpoints.png": "Setpoints: currents and power per axis against the supply limits",
}


def _design_context(design_doc: dict):
    """Test volume, tolerance, frame and room recorded in a design file (with defaults)."""
    from cage.layout import FrameSpec
    from cage.sitefile import Room

    req = design_doc.get("requirement") or {}
    lay = design_doc.get("layout") or {}
    site = design_doc.get("site") or {}
    volume = _number_list(req.get("test_volume_m")) or [0.3, 0.3, 0.3]
    tol = _number_or(req.get("uniformity"), 0.001)
    frame = FrameSpec(_number_or(lay.get("frame_width_m"), 0.04), _number_or(lay.get("frame_depth_m"), 0.04),
                      _number_or(lay.get("frame_gap_m"), 0.01))
    room = None
    dims = _number_list(site.get("room_m"))
    if dims is not None:
        room = Room(*dims, clearance_m=_number_or(site.get("room_clearance_m"), 0.3))
    return volume, tol, frame, room


def make_figures(design_obj, design_doc: dict, setpoints_doc: Optional[dict]) -> dict:
    """The report's figures as {file name: PNG bytes}."""
    from cage import plots

    volume, tol, frame, room = _design_context(design_doc)
    figs = {
        "uniformity.png": plots.uniformity_maps_figure(design_obj.cage, volume, tol),
        "axis_lines.png": plots.axis_lines_figure(design_obj.cage, volume, tol),
        "cage_in_room.png": plots.cage_in_room_figure(design_obj.cage, frame, room, volume,
                                                      _number_or((design_doc.get("site") or {}).get("heading_true_deg"),
                                                                 None)),
    }
    if setpoints_doc is not None:
        figs["setpoints.png"] = plots.setpoints_figure(setpoints_doc)
    return {name: plots.png_bytes(fig) for name, fig in figs.items()}


def report_html(field_doc, design_doc, setpoints_doc, pngs: dict, build_doc=None, build_pngs=None) -> str:
    """The stand-alone report.html text, with the provenance of its documents as notes."""
    from cage.report import build_report

    title = "Coil cage report"
    if isinstance(field_doc, dict) and field_doc.get("site"):
        title += f": {field_doc['site']}"
    notes = []
    for name, doc in (("field", field_doc), ("design", design_doc), ("setpoints", setpoints_doc)):
        prov = doc.get("provenance") if isinstance(doc, dict) else None
        if isinstance(prov, dict):
            from cage.provenance import header_lines

            notes += [f"{name}: {line}" for line in header_lines(prov, prefix="")]
    return build_report(field=field_doc, design=design_doc, setpoints=setpoints_doc,
                        figures={FIGURES[name]: data for name, data in pngs.items()}, title=title, notes=notes,
                        build=build_doc, build_figures=build_pngs)


def report_files(field_doc, design_doc, setpoints_doc, pngs: dict) -> dict:
    """The report's files (name -> bytes or text): figures, build sheet CSV and figures, report.html."""
    from cage.cmd_build import bom_csv, report_build

    sheet, build_doc, build_pngs = report_build(design_doc)
    html = report_html(field_doc, design_doc, setpoints_doc, pngs, build_doc, build_pngs)
    return {**pngs, **build_pngs, "build.csv": bom_csv(sheet), "report.html": html}


def write_report(folder: Path, field_doc, design_doc, setpoints_doc, pngs: dict) -> Path:
    from cage.atomicfile import write_bytes, write_text

    files = report_files(field_doc, design_doc, setpoints_doc, pngs)
    for name, data in files.items():
        if name != "report.html":
            (write_text if isinstance(data, str) else write_bytes)(folder / name, data)
    return write_text(folder / "report.html", files["report.html"])


def _read_json(path: Path, what: str) -> Optional[dict]:
    from cage.textfile import read_json_object

    return read_json_object(path, what) if path.exists() else None


@app.command()
def report(
    folder: Path = typer.Argument(..., help="A plan folder with design.json (and field.json, setpoints.json).",
                                  show_default=False),
    pdf: bool = typer.Option(False, "--pdf", help="Also print report.pdf (needs a headless Chromium)."),
):
    """Write the stand-alone report.html (figures embedded) for a plan folder."""

    if not folder.is_dir():
        raise InputError(f"{folder}: no such folder")
    design_path = folder / "design.json"
    if not design_path.exists():
        raise InputError(f"{folder}: no design.json (make one with cage design or cage plan)")
    design_obj = _load_checked_design(design_path)
    design_doc = _read_json(design_path, "a design")
    field_doc = _read_json(folder / "field.json", "a field summary")
    setpoints_doc = _read_json(folder / "setpoints.json", "a setpoints table")
    if setpoints_doc is not None and setpoints_doc.get("format") != "cage-setpoints":
        raise InputError(f"{folder / 'setpoints.json'}: not a cage-setpoints file")
    from cage.provenance import design_id
    from cage.reuse import mixed_inputs

    docs = {"design.json": {"provenance": {**(design_doc.get("provenance") or {}),
                                           "derived_from": {"design": design_id(design_obj)}}},
            "field.json": field_doc, "setpoints.json": setpoints_doc}
    problem = mixed_inputs(docs)
    if problem:
        raise InputError(f"{folder}: the files are from different runs: {problem}; run cage plan again")
    pngs = make_figures(design_obj, design_doc, setpoints_doc)
    path = write_report(folder, field_doc, design_doc, setpoints_doc, pngs)
    _say(f"Wrote {path}, build.csv, connection_x/y/z.png and {', '.join(pngs)}")
    if pdf:
        from cage.pdfexport import html_to_pdf

        _say(f"Wrote {html_to_pdf(path, folder / 'report.pdf')}")


# ----------------------------------------------------------------------------- plan

@app.command()
def plan(
    site_file: Path = typer.Argument(..., help="Site file (TOML).", show_default=False),
    out: Path = typer.Option(..., "--out", help="Folder for field.json, design.json, setpoints.* (made if absent)."),
    shape: Optional[str] = typer.Option(None, "--shape", help=SHAPE_HELP),
    minimise: str = typer.Option("power", "--minimise", help=MINIMISE_HELP),
    targets: Optional[Path] = typer.Option(None, "--targets", help="CSV of extra targets: label,x_uT,y_uT,z_uT[,frame]."),
    max_field_step_nT: Optional[float] = typer.Option(
        None, "--max-field-step-nT", help="Largest field step one supply current step may give (nT)."),
    system: Optional[str] = typer.Option(None, "--system", help=SYSTEM_HELP),
):
    """The main job: field, design, setpoints (CSV, JSON, SCPI), figures and report, into one folder."""
    from cage import sitefile
    from cage.designfile import design_to_json
    from cage.optimise import design_from_plan
    from cage.setpointfile import render

    site = sitefile.load_site(site_file)
    from cage.outputs import check_replaceable, refuse_overwriting_inputs, write_folder

    refuse_overwriting_inputs(out, [p for p in (site_file, targets) if p is not None], folder=True)
    check_replaceable(out, ())
    amb, inp, plan_obj = _plan_from_site(site, shape, minimise, "flat", max_field_step_nT, system)
    design_obj = _stamped_design(design_from_plan(plan_obj, inp, site, amb), site, amb,
                                 _design_cautions(plan_obj, inp))
    _, table = build_setpoints(design_obj, site, targets_file=targets)
    texts = {
        "field.json": _dump_json(field_summary(site, amb, design_obj.provenance["derived_from"]["design"])),
        "design.json": design_to_json(design_obj),
        "setpoints.csv": render(table, "csv"),
        "setpoints.json": render(table, "json"),
        "setpoints.scpi": render(table, "scpi"),
    }
    design_doc = json.loads(texts["design.json"])
    setpoints_doc = json.loads(texts["setpoints.json"])
    pngs = make_figures(design_obj, design_doc, setpoints_doc)
    write_folder(out, {**texts, **report_files(json.loads(texts["field.json"]), design_doc, setpoints_doc, pngs)})
    _say(f"Plan for {site.name} ({amb.source} field, {amb.earth.date.isoformat()}) in {out}/; "
         f"cage +x at {design_obj.site['heading_note']}")
    _say(design_table(plan_obj, inp, _packs_of(design_obj)))
    _say("")
    _say(setpoints_text(table))
    for line in _design_cautions(plan_obj, inp) + list(table.warnings):
        _warn(line)
    _say("Wrote " + ", ".join(list(texts) + list(pngs) + ["connection_x/y/z.png", "build.csv", "report.html"]))


# ----------------------------------------------------------------------------- calibrate

def calibration_text(summary: dict) -> str:
    k = summary["coupling_nT_per_A"]
    lines = ["Fitted field at the sensor: B = B0 + K I (cage frame)",
             "  B0 (nT)       " + "".join(f"{v:>14,.1f}" for v in summary["offset_nT"]),
             "  K (nT/A)      " + "".join(f"{'axis ' + a:>14}" for a in "xyz")]
    for comp, row in zip("xyz", k):
        lines.append(f"    B{comp}          " + "".join(f"{v:>14,.1f}" for v in row))
    lines.append(f"  residual RMS  {summary['rms_residual_nT']:.2f} nT over kept rows "
                 f"({summary.get('n_rows', '?')} rows, {summary.get('n_outliers', 0)} flagged as outliers)")
    if summary.get("condition_number") is not None:
        lines.append(f"  condition of the fit {summary['condition_number']:.2f}")
    null = summary.get("null_current_A")
    if isinstance(null, dict) and all(null.get(a) is not None for a in "xyz"):
        lines.append("Corrected null currents: " + ", ".join(f"{a} {null[a]:+.4f} A" for a in "xyz"))
    check = summary.get("build_check")
    if isinstance(check, dict):
        scale = check.get("scale_error_percent")
        if scale:
            lines.append("Built cage against the design: scale error " +
                         ", ".join(f"{a} {scale[a]:+.2f} %" for a in "xyz"))
        non = check.get("non_orthogonality_deg")
        if isinstance(non, dict):
            lines.append("  non-orthogonality " + ", ".join(f"{k2} {v:+.3f} deg" for k2, v in non.items()))
        mis = check.get("misalignment_deg")
        if mis:
            lines.append("  misalignment from the design axes " + ", ".join(f"{a} {mis[a]:.3f} deg" for a in "xyz"))
    return "\n".join(lines)


@app.command()
def calibrate(
    design_file: Path = typer.Argument(..., help="Design file (JSON).", show_default=False),
    data_file: Path = typer.Argument(..., help="Measurements CSV (current_x_A,...,field_z_nT), or with "
                                              "--suggest the site file (TOML).", show_default=False),
    suggest: bool = typer.Option(False, "--suggest", help="Print a current set for a well-conditioned fit instead."),
    as_json: bool = typer.Option(False, "--json", help="Print one JSON object instead of a table."),
    out: Optional[Path] = typer.Option(None, "--out", help="Calibration file to write (JSON), or with --suggest "
                                                          "the current set (CSV)."),
    sensor_range_uT: float = typer.Option(100.0, "--sensor-range-uT", help="With --suggest: the magnetometer's "
                                          "full scale per axis (uT); no suggested set takes it past 90 %."),
    site_file: Optional[Path] = typer.Option(None, "--site", help="Site file of the readings (default: the "
                                                                 "design's site)."),
    date: Optional[str] = typer.Option(None, "--date", help="Day of the readings YYYY-MM-DD (default today UTC)."),
):
    """Fit the built cage from magnetometer readings: offset, coupling, corrected null currents."""
    from cage.atomicfile import write_text
    from cage.setpoints import design_coupling_nT_per_A

    _check_out(out, design_file, data_file, site_file)
    design_obj = _load_checked_design(design_file)
    if suggest:
        from cage import sitefile
        from cage.calibrate import design_condition_number, suggest_currents_A
        from cage.supplies import supply_for_axis

        site = sitefile.load_site(data_file)
        if not site.supplies:
            raise InputError(f"{data_file}: no [[supply]] table; --suggest needs the supplies' limits")
        try:
            supplies = [supply_for_axis(site.supplies, a) for a in "xyz"]
        except InputError as exc:
            raise InputError(f"{data_file}: {exc}") from None
        if not (math.isfinite(sensor_range_uT) and 0.1 <= sensor_range_uT <= 1e7):
            raise InputError(f"--sensor-range-uT must be between 0.1 and 1e7 uT, got {sensor_range_uT:g}")
        tops, why = _suggest_tops(design_obj, site, supplies)
        currents = suggest_currents_A(tops, fraction=1.0, unipolar=[not s.bipolar for s in supplies])
        from cage.ambient import site_ambient
        from cage.calibrate import sensor_range_scale

        scale = sensor_range_scale(currents, design_coupling_nT_per_A(design_obj),
                                   site_ambient(site).in_force_cage_nT, 1000.0 * sensor_range_uT)
        currents = currents * scale
        if scale < 1.0:
            why.append(f"scaled to {scale:.0%} so no set takes the sensor past 90 % of {sensor_range_uT:g} uT")
        text = "current_x_A,current_y_A,current_z_A\n" + "".join(
            ",".join(f"{v:.4f}" for v in row) + "\n" for row in currents)
        if out is not None:
            write_text(out, text)
            _say(f"Wrote {out} ({len(currents)} current sets, condition {design_condition_number(currents):.2f})")
        else:
            typer.echo(text, nl=False)
            _warn(f"{len(currents)} current sets within 80 % of what each supply can drive at operating "
                  f"temperature ({'; '.join(why)}); condition of the fit "
                  f"{design_condition_number(currents):.2f}. Record the field at each, in the cage frame.")
        return
    from cage.calibrate import build_check, calibration_summary, fit_calibration
    from cage.calibrationfile import save_calibration
    from cage.measurements import read_calibration_csv

    readings = read_calibration_csv(data_file)
    fit = fit_calibration(readings.currents_A, readings.field_nT, source_file=str(data_file))
    check = build_check(fit, design_coupling_nT_per_A(design_obj))
    summary = calibration_summary(fit, check, readings.line_numbers)
    if out is not None:
        prov = _calibration_provenance(design_obj, site_file, date, data_file)
        save_calibration(out, fit, source_file=str(data_file), design=str(design_file), provenance=prov.as_dict())
        for w in prov.warnings:
            _warn(w)
    if as_json:
        typer.echo(_dump_json(summary), nl=False)
    else:
        _say(calibration_text(summary))
        if out is not None:
            _say(f"Wrote {out}; use it with: cage setpoints {design_file} SITE.toml --calibration {out}")


def _suggest_tops(design_obj, site, supplies):
    """Per axis: the largest calibration current, 80 % of what the supply can drive through
    the winding at its operating temperature (voltage, not only the current limit)."""
    from cage.setpoints import max_drivable_current_A

    tops, why = [], []
    for axis, a, s in zip("xyz", design_obj.axes, supplies):
        drivable = max_drivable_current_A(a, s, site.coil.ambient_temperature_C, site.coil.max_winding_temperature_C)
        if drivable <= 0.0:
            raise InputError(f"axis {axis}: the supply cannot drive any current through this winding")
        tops.append(0.8 * drivable)
        why.append(f"{axis} up to {0.8 * drivable:.3f} A" + ("" if drivable >= s.max_current_A
                                                             else " (voltage-limited)"))
    return tops, why


def _calibration_provenance(design_obj, site_file, date, data_file):
    """Where and when a calibration's offset holds: the readings' site and day, the design's azimuth."""
    from cage import sitefile

    if site_file is not None:
        site = sitefile.load_site(site_file)
    else:
        rec = design_obj.site or {}
        try:
            location = sitefile.check_location(rec["latitude_deg"], rec["longitude_deg"], rec.get("altitude_m", 0.0),
                                               "design file: site")
        except (KeyError, TypeError):
            raise InputError("the design records no site position; give --site SITE.toml for the readings") from None
        site = sitefile.Site(name=str(rec.get("name", "")), date=sitefile.today_utc(), date_given=False,
                             location=location, orientation=sitefile.Orientation(stated=False), room=None,
                             requirement=sitefile.Requirement(), coil=sitefile.CoilSettings(), supplies=(),
                             measured=None, source=str(rec.get("file", "design file")))
    warnings = []
    if date is not None:
        site = dataclasses.replace(site, date=sitefile.parse_date(date, "--date"))
    else:
        site = dataclasses.replace(site, date=sitefile.today_utc())
        warnings.append(f"the calibration is dated today ({site.date.isoformat()}); give --date for the day of "
                        f"the readings")
    from cage.reuse import site_for_design

    site, heading_note, more = site_for_design(design_obj, site, False)
    from cage.ambient import site_ambient
    from cage.provenance import design_id, make_provenance

    site = dataclasses.replace(site, measured=None)
    amb = site_ambient(site)
    return make_provenance(site, amb, derived_from={"design": design_id(design_obj), "readings": str(data_file)},
                           warnings=tuple(amb.warnings) + tuple(more) + tuple(warnings), heading_note=heading_note)


# ----------------------------------------------------------------------------- sequence

def _axis_circuits(design_obj, supplies, ambient_C, where: str = "design file"):
    """Per axis: circuit resistance at full-range temperature (winding + leads) and inductance."""
    import numpy as np

    from cage.electrical import electrics_of

    r, ind = [], []
    for a, s in zip(design_obj.axes, supplies):
        if a.inductance_H is None:
            raise InputError(f"{where}: axes.{a.name}.inductance_H is missing; a sequence needs it "
                             f"(make the design with cage design)")
        if a.wire is not None and a.frame_width_m is not None and a.frame_depth_m is not None:
            el = electrics_of(a.pair or a.coil_axis, a.wire, a.max_current_A or s.max_current_A,
                                lead_length_m=a.lead_length_m or 0.0, frame_width_m=a.frame_width_m,
                                frame_depth_m=a.frame_depth_m, ambient_temperature_C=ambient_C)
            r.append(el.circuit_resistance_ohm)
        elif a.resistance_hot_ohm is not None:
            r.append(a.resistance_hot_ohm)
        else:
            raise InputError(f"{where}: axes.{a.name} has neither wire nor resistance_hot_ohm")
        ind.append(a.inductance_H)
    return np.array(r), np.array(ind)


# Most rows a sequence table holds (README "Input limits"): each row keeps some 40 numbers.
MAX_SEQUENCE_STEPS = 1_000_000


@app.command()
def sequence(
    design_file: Path = typer.Argument(..., help="Design file (JSON).", show_default=False),
    site_file: Path = typer.Argument(..., help="Site file (TOML).", show_default=False),
    sphere: Optional[int] = typer.Option(None, "--sphere", help="N field directions spread evenly over the sphere."),
    magnitude_uT: Optional[float] = typer.Option(None, "--magnitude-uT", help="Field magnitude for --sphere (uT)."),
    series: Optional[Path] = typer.Option(None, "--series", help="Time series CSV t_s,x_nT,y_nT,z_nT[,frame]."),
    series_frame: Optional[str] = typer.Option(None, "--series-frame", help="cage or ned, for a series without a "
                                                                            "frame column (default cage)."),
    rate_Hz: float = typer.Option(10.0, "--rate-Hz", help="Supply update rate the series is resampled to (Hz)."),
    fmt: Optional[str] = typer.Option(None, "--format", help="table, csv, json or scpi (default: from --out, else table)."),
    out: Optional[Path] = typer.Option(None, "--out", help="File to write (atomically) instead of printing."),
    calibration: Optional[Path] = typer.Option(None, "--calibration", help="Calibration file from cage calibrate."),
    plot: Optional[Path] = typer.Option(None, "--plot", help="Write the currents against time or row (PNG)."),
    dwell_s: float = typer.Option(1.0, "--dwell-s", help="Hold time of each --sphere direction (s); a series "
                                                         "holds each row 1 / --rate-Hz."),
    orbit: Optional[Path] = typer.Option(None, "--orbit", help="Orbit series CSV from cage orbit (body frame "
                                         "= cage frame), or - to read it from a pipe."),
    latency_error_nT: float = typer.Option(10.0, "--latency-error-nT", help="With --orbit: the field error "
                                           "(nT) the latency summary is worked out for."),
):
    """Setpoint tables for a sphere of field directions or a replayed time series of fields."""
    import numpy as np

    from cage import sitefile
    from cage.atomicfile import write_text
    from cage.setpointfile import render

    if (sphere is not None) + (series is not None) + (orbit is not None) != 1:
        raise InputError("give exactly one of --sphere N (with --magnitude-uT), --series FILE.csv or --orbit FILE.csv")
    design_obj = _load_checked_design(design_file)
    site = sitefile.load_site(site_file)
    kind = _infer_format(fmt, out)
    _check_out(out, design_file, site_file, series, orbit, calibration)
    _check_out(plot, design_file, site_file, series, orbit, calibration)
    ctx = _setpoint_context(design_obj, site, calibration)
    from cage.frames import ned_to_cage

    dt = None
    if sphere is not None:
        from cage.sequence import fibonacci_sphere

        if magnitude_uT is None or not (0 < magnitude_uT <= 100_000):
            raise InputError("--sphere needs --magnitude-uT, a positive field in microtesla (at most 100000)")
        if not 1 <= sphere <= 100_000:
            raise InputError(f"--sphere must be a number of directions from 1 to 100000, got {sphere}")
        if not (math.isfinite(dwell_s) and 0.001 <= dwell_s <= 86_400):
            raise InputError(f"--dwell-s must be between 0.001 and 86400 seconds, got {dwell_s:g}")
        dirs = fibonacci_sphere(sphere)
        width = len(str(len(dirs)))
        targets = ([f"dir-{i + 1:0{width}d}" for i in range(len(dirs))], 1000.0 * magnitude_uT * dirs)
        times = (np.arange(len(dirs)) * dwell_s, dwell_s)
    else:
        from cage.measurements import read_field_series_csv
        from cage.sequence import resample_series

        if not (0 < rate_Hz <= 100_000):
            raise InputError(f"--rate-Hz must be a positive rate up to 100000 Hz, got {rate_Hz:g}")
        if series_frame is not None and series_frame not in ("cage", "ned"):
            raise InputError(f"--series-frame must be cage or ned, got {series_frame!r}")
        if orbit is not None:
            from cage.cmd_orbit import rate_lines, read_orbit_series

            if series_frame not in (None, "cage"):
                raise InputError("an orbit series is in the body frame, which is the cage frame; drop --series-frame")
            data = read_orbit_series(orbit)
            summary = rate_lines(data.t_s, data.field_nT, rate_Hz, latency_error_nT)
        else:
            data = read_field_series_csv(series, frame=series_frame)
        steps = (float(data.t_s[-1]) - float(data.t_s[0])) * rate_Hz + 1
        if steps > MAX_SEQUENCE_STEPS:
            raise InputError(f"{orbit or series}: {data.t_s[-1] - data.t_s[0]:g} s at {rate_Hz:g} Hz gives "
                             f"{steps:,.0f} steps, more than {MAX_SEQUENCE_STEPS:,}; lower --rate-Hz or split the series")
        t, field_nT = resample_series(data.t_s, data.field_nT, rate_Hz)
        if data.frame == "ned":
            field_nT = ned_to_cage(field_nT, ctx.amb.heading_true_deg)
        targets = ([f"t={tk:.3f}s" for tk in t.tolist()], np.asarray(field_nT, dtype=float))
        dt = 1.0 / rate_Hz
        times = (t - t[0], dt)
    table = _table(design_obj, site, ctx, targets, times)
    warnings = list(table.warnings)
    if dt is not None:
        from cage.sequence import check_slew
        from cage.setpoints import flag_slew

        r_ohm, l_H = _axis_circuits(design_obj, table.supplies, site.coil.ambient_temperature_C, str(design_file))
        currents = table.setpoint_A
        check = check_slew(currents, dt, r_ohm, l_H, [s.max_voltage_V for s in table.supplies],
                           [s.max_current_A for s in table.supplies])
        table = flag_slew(table, check)
        if check.failing_steps:
            shown = ", ".join(table.labels[k] for k in check.failing_steps[:10])
            more = "" if len(check.failing_steps) <= 10 else f" and {len(check.failing_steps) - 10} more"
            warnings.append(f"{len(check.failing_steps)} of {len(table)} steps cannot be followed at "
                            f"{rate_Hz:g} Hz: {shown}{more}")
    if orbit is not None:
        warnings += [w for w in summary if w.startswith("warning")]
    table = dataclasses.replace(table, warnings=tuple(warnings))
    if dt is None:
        table = _flag_rows(table)
    warnings = table.warnings
    for w in warnings:
        _warn(w)
    text = setpoints_text(table) + "\n" if kind == "table" else render(table, kind)
    if plot is not None:
        from cage.atomicfile import write_bytes
        from cage.plots import png_bytes, sequence_figure

        steps = np.arange(len(table)) / rate_Hz if dt is not None else np.arange(len(table), dtype=float)
        failing = np.flatnonzero(~table.within_limits).tolist()
        fig = sequence_figure(steps, table.setpoint_A,
                              [s.max_current_A for s in table.supplies], failing)
        if dt is None:
            for ax in fig.axes:
                if ax.get_xlabel():
                    ax.set_xlabel("direction number (row)")
        write_bytes(plot, png_bytes(fig))
    if out is not None:
        write_text(out, text)
        _say(f"Wrote {out} ({kind}, {len(table)} rows)")
    else:
        typer.echo(text, nl=False)
    if orbit is not None:
        for line in summary:
            if not line.startswith("warning"):
                typer.echo(line, err=out is None and kind != "table")
    if plot is not None:
        # With a machine format on stdout, keep stdout clean: say it on stderr.
        typer.echo(_visible(f"Wrote {plot}"), err=out is None and kind != "table")


# ----------------------------------------------------------------------------- commands in their own modules

from cage import cmd_build as _cmd_build  # noqa: E402

_cmd_build.register(app)

from cage import cmd_orbit as _cmd_orbit  # noqa: E402
from cage import cmd_tolerance as _cmd_tolerance  # noqa: E402

_cmd_tolerance.register(app)
_cmd_orbit.register(app)


# ----------------------------------------------------------------------------- entry point

def main(argv: Optional[list[str]] = None) -> None:
    """Run the command line; user errors end in one line on stderr and a non-zero exit."""
    try:
        from cage.outputs import trailing_slash_problem

        problem = trailing_slash_problem(sys.argv[1:] if argv is None else argv)
        if problem:
            raise InputError(problem)
        app(args=argv, prog_name="cage")
    except CageError as exc:
        typer.echo(f"cage: {_visible(exc)}".replace("\n", " "), err=True)
        sys.exit(exc.exit_code)
    except KeyboardInterrupt:
        typer.echo("cage: interrupted", err=True)
        sys.exit(130)
    except BrokenPipeError:
        sys.exit(0)
    except Exception as exc:  # an unexpected failure: one line, the traceback only on request
        if os.environ.get("CAGE_DEBUG"):
            raise
        typer.echo(f"cage: unexpected failure ({type(exc).__name__}: {_visible(exc)}); set CAGE_DEBUG=1 for details",
                   err=True)
        sys.exit(EXIT_UNEXPECTED)
