"""Options shared by several commands and what they mean: the site from a file or from flags,
the output format, --out against the command's own inputs. Command-line layer."""
from __future__ import annotations

from pathlib import Path
from typing import Optional

import typer

from cage.errors import InputError

SiteArg = typer.Argument(None, help="Site file (TOML). Omit it to give the place with --lat/--lon.",
                         show_default=False)
LatOpt = typer.Option(None, "--lat", help="Geodetic latitude, degrees north.")
LonOpt = typer.Option(None, "--lon", help="Longitude, degrees east.")
AltOpt = typer.Option(None, "--alt-m", help="Altitude above the WGS84 ellipsoid, metres (default 0).")
DateOpt = typer.Option(None, "--date", help="Date YYYY-MM-DD (default: the site's, else today UTC).")
HeadingOpt = typer.Option(None, "--heading-deg", help="Azimuth of cage +x, clockwise from north, degrees.")
MagneticOpt = typer.Option(False, "--heading-magnetic", help="The heading is from magnetic north.")

SHAPE_HELP = "Coil shape on every axis: square, round or either (default: the site's requirement.shape)."
MINIMISE_HELP = "What the planner minimises: power (at full range), mass (copper) or size (envelope volume)."
STEP_HELP = "Largest field step one supply current step may give (nT)."
SYSTEM_HELP = ("Coil systems allowed per axis, comma-separated: pair, three, four, four-equal (default: the "
               "site's requirement.systems; all of them when not given).")


def resolve_site(site_file: Optional[Path], lat: Optional[float], lon: Optional[float],
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
            name=place_name(location.latitude_deg, location.longitude_deg), date=when, date_given=date is not None,
            location=location, orientation=orientation, room=None, requirement=sitefile.Requirement(),
            coil=sitefile.CoilSettings(), supplies=(), measured=None, source="command line")
    site = sitefile.load_site(site_file)
    if heading_magnetic and heading_deg is None:
        raise InputError(f"--heading-magnetic says how to read --heading-deg: give --heading-deg too ("
                         f"{site.source} states its own heading_reference)")
    if any(v is not None for v in (lat, lon, alt_m)):
        loc = site.location
        location = sitefile.check_location(loc.latitude_deg if lat is None else lat,
                                           loc.longitude_deg if lon is None else lon,
                                           loc.altitude_m if alt_m is None else alt_m, "command line")
        if (lat is None) != (lon is None):
            given = "--lat" if lon is None else "--lon"
            raise InputError(f"{given} alone would mix with the other coordinate of {site.source}: give both "
                             f"--lat and --lon to move the site")
        name = site.name
        if lat is not None:  # another place: named for it, with the site file it borrows the rest from
            name = f"{place_name(location.latitude_deg, location.longitude_deg)} (settings of {site.name})"
        site = dataclasses.replace(site, name=name, location=location, measured=None)
    if date is not None:
        site = dataclasses.replace(site, date=sitefile.parse_date(date, "--date"), date_given=True)
    if heading_deg is not None:  # (--heading-magnetic alone beside a file is refused above)
        orientation = sitefile.Orientation(
            heading_deg=sitefile.check_heading(heading_deg, "command line"),
            # --heading-deg is true unless --heading-magnetic says otherwise (the options' help), whatever
            # the site file's own heading_reference
            heading_reference="magnetic" if heading_magnetic else "true")
        site = dataclasses.replace(site, orientation=orientation)
    return site


def place_name(lat_deg: float, lon_deg: float) -> str:
    """A place given by numbers, named as a person reads it: "33.9 deg S, 70.5 deg W"."""
    from cage.numberformat import latitude_text, longitude_text

    return f"{latitude_text(lat_deg, 4)}, {longitude_text(lon_deg, 4)}".replace("000 deg", " deg")


def check_out(out, *inputs, option: str = "--out") -> None:
    """--out (or the output option named by ``option``) must not name one of the command's own
    inputs (cage.outputs)."""
    from cage.outputs import refuse_overwriting_inputs

    refuse_overwriting_inputs(out, [p for p in inputs if p is not None], option=option)


def check_outputs_differ(**outputs) -> None:
    """No two output options name the same file: ``check_outputs_differ(out=out, plot=plot)``
    checks --out against --plot (cage.outputs)."""
    from cage.outputs import refuse_same_outputs

    refuse_same_outputs({f"--{name.replace('_', '-')}": path for name, path in outputs.items()})


def infer_format(fmt: Optional[str], out: Optional[Path]) -> str:
    """--format, else the --out file's extension (csv, json, scpi), else a table on the terminal."""
    if fmt is not None:
        if fmt not in ("table", "csv", "json", "scpi"):
            raise InputError(f"--format must be table, csv, json or scpi, got {fmt!r}")
        return fmt
    if out is not None:
        ext = out.suffix.lower().lstrip(".")
        return ext if ext in ("csv", "json", "scpi") else "csv"
    return "table"


def load_checked_design(path: Path):
    """A design file that can be built: frames that do not collide, coils around the test volume."""
    from cage.designfile import load_design
    from cage.workflow import check_design_geometry

    design_obj = load_design(path)
    check_design_geometry(design_obj, str(path))
    return design_obj
