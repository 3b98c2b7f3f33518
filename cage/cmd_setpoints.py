"""``cage setpoints`` (current tables), ``cage plan`` (the main job, into one folder) and
``cage report`` (report.html of a plan folder)."""
from __future__ import annotations

from cage.escape import for_terminal

import dataclasses
import json
from pathlib import Path
from typing import Optional

import typer

from cage.cliargs import (MINIMISE_HELP, SHAPE_HELP, STEP_HELP, SYSTEM_HELP, AltOpt, DateOpt, HeadingOpt, LatOpt, LonOpt,
                          MagneticOpt, SiteArg)
from cage.errors import InputError

TARGETS_HELP = "CSV of extra targets: label,x_uT,y_uT,z_uT[,frame]."


def read_targets(path: Optional[Path]) -> list:
    """User targets of --targets (cage.targetfile), or none."""
    if path is None:
        return []
    from cage.targetfile import read_targets_csv

    return list(read_targets_csv(path))


def read_calibration(path: Optional[Path]):
    """The calibration record of --calibration (cage.calibrationfile), or None."""
    if path is None:
        return None
    from cage.calibrationfile import load_calibration_record

    return load_calibration_record(path)


def _read_json(path: Path, what: str) -> Optional[dict]:
    from cage.textfile import read_json_object

    return read_json_object(path, what) if path.exists() else None


def write_report(folder: Path, field_doc, design_doc, setpoints_doc, pngs: dict) -> Path:
    """Write the report's files into an existing folder; report.html last."""
    from cage.atomicfile import write_bytes, write_text
    from cage.reportfiles import report_files

    files = report_files(field_doc, design_doc, setpoints_doc, pngs)
    for name, data in files.items():
        if name != "report.html":
            (write_text if isinstance(data, str) else write_bytes)(folder / name, data)
    return write_text(folder / "report.html", files["report.html"])


def register(app: typer.Typer) -> None:
    """Add ``cage setpoints``, ``cage report`` and ``cage plan`` to the application."""

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
        targets: Optional[Path] = typer.Option(None, "--targets", help=TARGETS_HELP),
        fmt: Optional[str] = typer.Option(None, "--format",
                                          help="table, csv, json or scpi (default: from --out, else table)."),
        out: Optional[Path] = typer.Option(None, "--out", help="File to write (atomically) instead of printing."),
        previous: Optional[Path] = typer.Option(None, "--previous",
                                                help="An earlier setpoints JSON: show the null's drift."),
        drift_threshold_nT: float = typer.Option(10.0, "--drift-threshold-nT",
                                                 help="Drift that calls for a new table (nT)."),
        calibration: Optional[Path] = typer.Option(None, "--calibration",
                                                   help="Calibration file from cage calibrate: its coupling and offset."),
    ):
        """Signed supply currents for nulling and test fields, with voltage and power budgets."""
        from cage.cliargs import check_out, infer_format, load_checked_design, resolve_site
        from cage.setpointfile import load_table_json, render
        from cage.setpointtext import drift_text, setpoints_text
        from cage.terminal import emit_table, warn
        from cage.workflow import build_setpoints

        design_obj = load_checked_design(design_file)
        site = resolve_site(site_file, lat, lon, alt_m, date, heading_deg, heading_magnetic)
        kind = infer_format(fmt, out)
        old = load_table_json(previous) if previous is not None else None
        if not (drift_threshold_nT > 0 and drift_threshold_nT < 1e6):
            raise InputError(f"--drift-threshold-nT must be a positive number of nT, got {drift_threshold_nT:g}")
        check_out(out, design_file, site_file, targets, previous, calibration)
        amb, table = build_setpoints(design_obj, site, targets=read_targets(targets),
                                     calibration=read_calibration(calibration),
                                     calibration_name="" if calibration is None else str(calibration),
                                     heading_explicit=heading_deg is not None or heading_magnetic)
        if old is not None:
            from cage.reuse import previous_problems
            from cage.setpoints import table_to_dict

            table = dataclasses.replace(table, warnings=table.warnings + tuple(
                previous_problems(old, table_to_dict(table), f"--previous {previous}")))
        for w in table.warnings:
            warn(w)
        text = setpoints_text(table) + "\n" if kind == "table" else render(table, kind)
        emit_table(out, text, kind, len(table))
        if old is not None:
            from cage.setpoints import null_drift

            drift = null_drift(table, old, amb.sv_cage_nT_per_year, drift_threshold_nT)
            typer.echo(drift_text(drift), err=out is None and kind != "table")

    @app.command()
    def report(
        folder: Path = typer.Argument(..., help="A plan folder with design.json (and field.json, setpoints.json).",
                                      show_default=False),
        pdf: bool = typer.Option(False, "--pdf", help="Also print report.pdf (needs a headless Chromium)."),
    ):
        """Write the stand-alone report.html (figures embedded) for a plan folder."""
        from cage.cliargs import load_checked_design
        from cage.terminal import say
        from cage.workflow import report_consistency

        if not folder.is_dir():
            raise InputError(f"{folder}: no such folder")
        design_path = folder / "design.json"
        if not design_path.exists():
            raise InputError(f"{folder}: no design.json (make one with cage design or cage plan)")
        design_obj = load_checked_design(design_path)
        design_doc = _read_json(design_path, "a design")
        field_doc = _read_json(folder / "field.json", "a field summary")
        setpoints_doc = _read_json(folder / "setpoints.json", "a setpoints table")
        if setpoints_doc is not None and setpoints_doc.get("format") != "cage-setpoints":
            raise InputError(f"{folder / 'setpoints.json'}: not a cage-setpoints file")
        problem = report_consistency(design_obj, design_doc, field_doc, setpoints_doc)
        if problem:
            raise InputError(f"{folder}: the files are from different runs: {problem}; run cage plan again")
        from cage.reportfiles import make_figures

        pngs = make_figures(design_obj, design_doc, setpoints_doc)
        path = write_report(folder, field_doc, design_doc, setpoints_doc, pngs)
        say(f"Wrote {for_terminal(path)}, build.csv, connection_x/y/z.png and {', '.join(pngs)}")
        if pdf:
            from cage.pdfexport import html_to_pdf

            say(f"Wrote {html_to_pdf(path, folder / 'report.pdf')}")

    @app.command()
    def plan(
        site_file: Path = typer.Argument(..., help="Site file (TOML).", show_default=False),
        out: Path = typer.Option(..., "--out",
                                 help="Folder for field.json, design.json, setpoints.* (made if absent)."),
        shape: Optional[str] = typer.Option(None, "--shape", help=SHAPE_HELP),
        minimise: str = typer.Option("power", "--minimise", help=MINIMISE_HELP),
        targets: Optional[Path] = typer.Option(None, "--targets", help=TARGETS_HELP),
        max_field_step_nT: Optional[float] = typer.Option(None, "--max-field-step-nT", help=STEP_HELP),
        system: Optional[str] = typer.Option(None, "--system", help=SYSTEM_HELP),
    ):
        """The main job: field, design, setpoints (CSV, JSON, SCPI), figures and report, into one folder."""
        from cage import sitefile
        from cage.designfile import design_to_json
        from cage.designtext import design_table
        from cage.outputs import check_replaceable, refuse_overwriting_inputs, write_folder
        from cage.reportfiles import make_figures, report_files
        from cage.setpointfile import render
        from cage.setpointtext import setpoints_text
        from cage.terminal import dump_json, say, warn
        from cage.workflow import packs_of, plan_run

        site = sitefile.load_site(site_file)
        refuse_overwriting_inputs(out, [p for p in (site_file, targets) if p is not None], folder=True)
        check_replaceable(out, ())
        user_targets = read_targets(targets) if targets is not None else ()
        run = plan_run(site, shape, minimise, max_field_step_nT, user_targets, system)
        planned, table = run.planned, run.table
        for w in planned.amb.warnings:
            warn(w)
        texts = {
            "field.json": dump_json(run.field_doc),
            "design.json": design_to_json(planned.design),
            "setpoints.csv": render(table, "csv"),
            "setpoints.json": render(table, "json"),
            "setpoints.scpi": render(table, "scpi"),
        }
        design_doc = json.loads(texts["design.json"])
        setpoints_doc = json.loads(texts["setpoints.json"])
        pngs = make_figures(planned.design, design_doc, setpoints_doc)
        write_folder(out, {**texts, **report_files(json.loads(texts["field.json"]), design_doc, setpoints_doc, pngs)})
        say(f"Plan for {for_terminal(site.name)} ({planned.amb.source} field, {planned.amb.earth.date.isoformat()}) in {for_terminal(out)}/; "
            f"cage +x at {planned.design.site['heading_note']}")
        say(design_table(planned.plan, planned.inp, packs_of(planned.design)))
        say("")
        say(setpoints_text(table))
        for line in run.warnings:
            warn(line)
        say("Wrote " + ", ".join(list(texts) + list(pngs) + ["connection_x/y/z.png", "build.csv", "report.html"]))
