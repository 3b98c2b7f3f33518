"""The ``cage`` command line (typer). The only module that talks to the terminal.

Each command reads its inputs through the file readers, calls the computational core and
prints or writes the result. User errors from the core (:class:`cage.errors.CageError`)
end in one line on stderr and the error's exit code; see the README for the codes.
Heavy modules (ppigrf, scipy.optimize, matplotlib) are imported inside the commands.
"""
from __future__ import annotations

import json
import os
import sys
from pathlib import Path
from typing import Optional

import typer

from cage.errors import EXIT_UNEXPECTED, CageError, InputError

app = typer.Typer(
    add_completion=False,
    no_args_is_help=True,
    pretty_exceptions_enable=False,
    help="Plan, drive and correct three-axis magnetic coil cages.",
)


@app.callback()
def _root() -> None:
    """Plan, drive and correct three-axis magnetic coil cages (see the README)."""


# ----------------------------------------------------------------------------- helpers

def _say(text: str = "") -> None:
    typer.echo(text)


def _warn(text: str) -> None:
    if text:
        typer.echo(text if text.startswith("warning") else f"warning: {text}", err=True)


def _dump_json(obj) -> str:
    return json.dumps(obj, indent=2, allow_nan=False) + "\n"


def _fmt(value: float, digits: int = 1) -> str:
    return f"{value:,.{digits}f}"


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
        )
        return sitefile.Site(
            name=f"{location.latitude_deg:g}, {location.longitude_deg:g}", date=when, date_given=date is not None,
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
            heading_deg=sitefile.check_heading(site.orientation.heading_deg if heading_deg is None else heading_deg),
            heading_reference="magnetic" if heading_magnetic else site.orientation.heading_reference)
        site = dataclasses.replace(site, orientation=orientation)
    return site


SiteArg = typer.Argument(None, help="Site file (TOML). Omit it to give the place with --lat/--lon.",
                         show_default=False)
LatOpt = typer.Option(None, "--lat", help="Geodetic latitude, degrees north.")
LonOpt = typer.Option(None, "--lon", help="Longitude, degrees east.")
AltOpt = typer.Option(None, "--alt-m", help="Altitude above the WGS84 ellipsoid, metres (default 0).")
DateOpt = typer.Option(None, "--date", help="Date YYYY-MM-DD (default: the site's, else today UTC).")
HeadingOpt = typer.Option(None, "--heading-deg", help="Azimuth of cage +x, clockwise from north, degrees.")
MagneticOpt = typer.Option(False, "--heading-magnetic", help="The heading is from magnetic north.")


# ----------------------------------------------------------------------------- field

def field_summary(site, amb) -> dict:
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
    return out


def field_table(site, amb) -> str:
    e = amb.earth
    lines = [
        f"Site        {site.name}",
        f"Position    {e.latitude_deg:.4f} deg N, {e.longitude_deg:.4f} deg E, {e.altitude_m:.0f} m (WGS84)",
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
    head = f"Cage frame   +x at {amb.heading_true_deg:.2f} deg true"
    if ref == "magnetic":
        head += f" ({amb.heading_deg_given:.2f} deg magnetic + declination)"
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
    _warn(amb.earth.warning)
    if as_json:
        typer.echo(_dump_json(field_summary(site, amb)), nl=False)
    else:
        _say(field_table(site, amb))


# ----------------------------------------------------------------------------- entry point

def main(argv: Optional[list[str]] = None) -> None:
    """Run the command line; user errors end in one line on stderr and a non-zero exit."""
    try:
        app(args=argv, prog_name="cage")
    except CageError as exc:
        typer.echo(f"cage: {exc}", err=True)
        sys.exit(exc.exit_code)
    except KeyboardInterrupt:
        typer.echo("cage: interrupted", err=True)
        sys.exit(130)
    except BrokenPipeError:
        sys.exit(0)
    except Exception as exc:  # an unexpected failure: one line, the traceback only on request
        if os.environ.get("CAGE_DEBUG"):
            raise
        typer.echo(f"cage: unexpected failure ({type(exc).__name__}: {exc}); set CAGE_DEBUG=1 for details",
                   err=True)
        sys.exit(EXIT_UNEXPECTED)
