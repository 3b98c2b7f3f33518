"""``cage calibrate``: fit the built cage from magnetometer readings, or suggest the current sets to record."""
from __future__ import annotations

from cage.escape import for_terminal

import dataclasses
import math
from pathlib import Path
from typing import Optional

import typer

from cage.errors import InputError


def register(app: typer.Typer) -> None:
    """Add ``cage calibrate`` to the application."""

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
        from cage.calibrationtext import calibration_text
        from cage.cliargs import check_out, load_checked_design
        from cage.setpoints import design_coupling_nT_per_A
        from cage.terminal import dump_json, say, warn
        from cage.workflow import calibration_tops

        check_out(out, design_file, data_file, site_file)
        design_obj = load_checked_design(design_file)
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
            tops, why = calibration_tops(design_obj, site, supplies)
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
                say(f"Wrote {for_terminal(out)} ({len(currents)} current sets, condition {design_condition_number(currents):.2f})")
            else:
                typer.echo(text, nl=False)
                warn(f"{len(currents)} current sets within 80 % of what each supply can drive at operating "
                      f"temperature ({'; '.join(why)}); condition of the fit "
                      f"{design_condition_number(currents):.2f}. Record the field at each, in the cage frame.")
            return
        from cage.calibrate import build_check, calibration_summary, check_usable, fit_calibration
        from cage.calibrationfile import save_calibration
        from cage.measurements import read_calibration_csv

        # --site and --date are checked whether or not a file is written
        prov = (readings_provenance(design_obj, site_file, date, data_file)
                if out is not None or site_file is not None or date is not None else None)
        readings = read_calibration_csv(data_file)
        fit = fit_calibration(readings.currents_A, readings.field_nT, source_file=str(data_file))
        check_usable(fit.coupling_nT_per_A, fit.offset_nT, str(data_file), "the fitted coupling", "the fitted offset")
        check = build_check(fit, design_coupling_nT_per_A(design_obj))
        summary = calibration_summary(fit, check, readings.line_numbers)
        if out is not None:
            save_calibration(out, fit, source_file=str(data_file), design=str(design_file), provenance=prov.as_dict())
            for w in prov.warnings:
                warn(w)
        for w in summary["warnings"]:
            warn(w)
        if as_json:
            typer.echo(dump_json(summary), nl=False)
        else:
            say(calibration_text(summary))
            if out is not None:
                say(f"Wrote {for_terminal(out)}; use it with: cage setpoints {for_terminal(design_file)} SITE.toml --calibration {for_terminal(out)}")


def readings_provenance(design_obj, site_file, date, data_file):
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
    from cage.workflow import calibration_provenance

    return calibration_provenance(design_obj, site, str(data_file), warnings)
