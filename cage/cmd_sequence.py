"""``cage sequence``: setpoint tables for a sphere of field directions or a replayed time series."""
from __future__ import annotations

import math
from pathlib import Path
from typing import Optional

import typer

from cage.errors import InputError

# Most rows a sequence table holds (README "Input limits"): each row keeps some 40 numbers.
MAX_SEQUENCE_STEPS = 1_000_000


def register(app: typer.Typer) -> None:
    """Add ``cage sequence`` to the application."""

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
        from cage.cliargs import check_out, check_outputs_differ, infer_format, load_checked_design
        from cage.cmd_setpoints import read_calibration
        from cage.setpointfile import render
        from cage.setpointtext import setpoints_text
        from cage.terminal import emit_table, visible, warn
        from cage.workflow import sequence_table, setpoint_context

        if (sphere is not None) + (series is not None) + (orbit is not None) != 1:
            raise InputError("give exactly one of --sphere N (with --magnitude-uT), --series FILE.csv or --orbit FILE.csv")
        design_obj = load_checked_design(design_file)
        site = sitefile.load_site(site_file)
        kind = infer_format(fmt, out)
        check_out(out, design_file, site_file, series, orbit, calibration)
        check_out(plot, design_file, site_file, series, orbit, calibration, option="--plot")
        check_outputs_differ(out=out, plot=plot)
        ctx = setpoint_context(design_obj, site, read_calibration(calibration),
                               "" if calibration is None else str(calibration))
        from cage.frames import ned_to_cage

        dt = None
        identity = ""  # the replayed series file, for the provenance
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
                data, identity = read_orbit_series(orbit)
                summary = rate_lines(data.t_s, data.field_nT, rate_Hz, latency_error_nT)
            else:
                from cage.cmd_orbit import series_identity

                data = read_field_series_csv(series, frame=series_frame)
                identity = series_identity(series)
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
        table = sequence_table(design_obj, site, ctx, targets, times, rate_Hz if dt is not None else None,
                               str(design_file),
                               [w for w in summary if w.startswith("warning")] if orbit is not None else (),
                               series_identity=identity)
        warnings = table.warnings
        for w in warnings:
            warn(w)
        text = setpoints_text(table) + "\n" if kind == "table" else render(table, kind)
        if plot is not None:
            from cage.atomicfile import write_bytes
            from cage.figurestyle import png_bytes
            from cage.provenance import header_lines
            from cage.setpointfigures import sequence_figure

            steps = np.arange(len(table)) / rate_Hz if dt is not None else np.arange(len(table), dtype=float)
            failing = np.flatnonzero(~table.within_limits).tolist()
            fig = sequence_figure(steps, table.setpoint_A,
                                  [s.max_current_A for s in table.supplies], failing)
            if dt is None:
                for ax in fig.axes:
                    if ax.get_xlabel():
                        ax.set_xlabel("direction number (row)")
            prov = table.provenance_record()
            write_bytes(plot, png_bytes(fig, notes=header_lines(prov, prefix="") if prov is not None else ()))
        emit_table(out, text, kind, len(table))
        if orbit is not None:
            for line in summary:
                if not line.startswith("warning"):
                    typer.echo(line, err=out is None and kind != "table")
        if plot is not None:
            # With a machine format on stdout, keep stdout clean: say it on stderr.
            typer.echo(visible(f"Wrote {plot}"), err=out is None and kind != "table")
