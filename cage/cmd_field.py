"""``cage field``: the local geomagnetic field in the geographic and the cage frame."""
from __future__ import annotations

from pathlib import Path
from typing import Optional

import typer

from cage.cliargs import AltOpt, DateOpt, HeadingOpt, LatOpt, LonOpt, MagneticOpt, SiteArg


def register(app: typer.Typer) -> None:
    """Add ``cage field`` to the application."""

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
        from cage.cliargs import resolve_site
        from cage.terminal import dump_json, say, warn

        site = resolve_site(site_file, lat, lon, alt_m, date, heading_deg, heading_magnetic)
        amb = site_ambient(site)
        for w in amb.warnings:
            warn(w)
        if as_json:
            from cage.workflow import field_summary

            typer.echo(dump_json(field_summary(site, amb)), nl=False)
        else:
            from cage.fieldtext import field_table

            say(field_table(site, amb))
