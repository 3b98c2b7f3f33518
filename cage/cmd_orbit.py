"""``cage orbit``: the field a spacecraft sees along its orbit, in its body frame, as a series
CSV that ``cage sequence --series`` (or ``--orbit``) replays; and the ``--orbit`` input of
``cage sequence``.
"""
from __future__ import annotations

import datetime as _dt
import io
import math
import sys
from pathlib import Path
from typing import Optional

import typer

from cage.errors import InputError

ORBIT_COLUMNS = ("t_s", "x_nT", "y_nT", "z_nT", "lat_deg", "lon_deg", "alt_km", "total_nT")
EPOCH_WARN_DAYS = 30.0
MAX_STDIN_BYTES = 512 * 1024 * 1024


def parse_utc(text: str, what: str) -> _dt.datetime:
    """An ISO 8601 time, UTC (a trailing Z or an offset is turned into UTC); naive result."""
    from cage.escape import one_line

    raw = str(text).strip()
    s = raw[:-1] + "+00:00" if raw.endswith(("Z", "z")) else raw
    try:
        when = _dt.datetime.fromisoformat(s)
    except ValueError:
        raise InputError(f"{what} {one_line(raw)!r} is not an ISO 8601 time such as 2027-03-01T00:00:00") from None
    if when.tzinfo is not None:
        when = when.astimezone(_dt.timezone.utc).replace(tzinfo=None)
    return when


def _satrec(elements: Optional[Path], start, options: dict):
    """(satrec, name, epoch) from an element set file or from orbital element options."""
    given = {k: v for k, v in options.items() if v is not None}
    if elements is not None:
        if given:
            raise InputError(f"give an element set file or orbital elements as options, not both "
                             f"(also given: --{sorted(given)[0].replace('_', '-')})")
        from cage.elementfile import read_element_file, satrec_of

        es = read_element_file(elements)
        sat = satrec_of(es)
        epoch = _dt.datetime(1949, 12, 31) + _dt.timedelta(days=float(sat.jdsatepoch - 2433281.5 + sat.jdsatepochF))
        return sat, es.name or f"satellite {es.satellite_number}", epoch
    from cage.orbit import satrec_from_elements

    if "inclination_deg" not in given or ("altitude_km" not in given and "semi_major_axis_km" not in given):
        raise InputError("give an element set file, or the orbit as options: --altitude-km (or "
                         "--semi-major-axis-km) and --inclination-deg at least")
    epoch = parse_utc(given["epoch"], "--epoch") if "epoch" in given else start
    sat = satrec_from_elements(epoch, given.get("eccentricity", 0.0), given["inclination_deg"],
                               given.get("raan_deg", 0.0), given.get("arg_perigee_deg", 0.0),
                               given.get("mean_anomaly_deg", 0.0),
                               semi_major_axis_km=given.get("semi_major_axis_km"),
                               altitude_km=given.get("altitude_km"))
    return sat, "planned orbit", epoch


def _attitude(mode: Optional[str], spin_axis: str, spin_rate_deg_s: Optional[float], quaternions: Optional[Path]):
    from cage.attitude import MODES, Attitude
    from cage.measurements import read_quaternion_csv

    if mode is None:
        mode = "quaternions" if quaternions is not None else "nadir"
    if mode not in MODES:
        raise InputError(f"--attitude must be one of {', '.join(MODES)}, got {mode!r}")
    if mode == "quaternions":
        if quaternions is None:
            raise InputError("--attitude quaternions needs --quaternions FILE.csv (t_s,qw,qx,qy,qz or t_s,qx,qy,qz,qw)")
        return Attitude(mode=mode, table=read_quaternion_csv(quaternions))
    if quaternions is not None:
        raise InputError(f"--quaternions is used only with --attitude quaternions, not {mode}")
    if mode == "spin":
        if spin_rate_deg_s is None:
            raise InputError("--attitude spin needs --spin-rate-deg-s (and --spin-axis, default z)")
        if spin_axis not in ("x", "y", "z"):
            raise InputError(f"--spin-axis must be x, y or z, got {spin_axis!r}")
        return Attitude(mode=mode, spin_axis=spin_axis, spin_rate_deg_s=float(spin_rate_deg_s))
    if spin_rate_deg_s is not None:
        raise InputError(f"--spin-rate-deg-s is used only with --attitude spin, not {mode}")
    return Attitude(mode=mode)


def orbit_csv(result) -> str:
    """The series CSV: t_s,x_nT,y_nT,z_nT (body frame), then lat_deg,lon_deg,alt_km,total_nT
    (``cage orbit`` ends it with its ``provenance_lines`` as ``#`` lines)."""
    import numpy as np

    tr = result.track
    table = np.column_stack((tr.t_s, result.body_nT, tr.latitude_deg, tr.longitude_deg, tr.altitude_km,
                             result.total_nT))
    buf = io.StringIO()
    buf.write(",".join(ORBIT_COLUMNS) + "\n")
    np.savetxt(buf, table, delimiter=",", fmt=["%.6f", "%.3f", "%.3f", "%.3f", "%.6f", "%.6f", "%.4f", "%.3f"])
    return buf.getvalue()


def summary_lines(name: str, epoch, start, result, attitude) -> list[str]:
    from cage.escape import for_terminal
    from cage.fieldrate import field_rate

    tr = result.track
    rate = field_rate(tr.t_s, result.body_nT)
    step = tr.t_s[1] - tr.t_s[0]
    return [
        f"Orbit field for {for_terminal(name)} (elements epoch {epoch:%Y-%m-%d %H:%M:%S} UTC)",
        f"  span: {start:%Y-%m-%dT%H:%M:%S} UTC + {tr.t_s[-1]:g} s in {tr.t_s.size} steps of {step:g} s; "
        f"attitude {attitude.describe()}",
        f"  |B|: {result.total_nT.min() / 1000:.2f} to {result.total_nT.max() / 1000:.2f} uT (IGRF-14)",
        f"  height: {tr.altitude_km.min():.1f} to {tr.altitude_km.max():.1f} km above WGS84; "
        f"latitude {tr.latitude_deg.min():.1f} to {tr.latitude_deg.max():.1f} deg",
        f"  largest body-frame rate: {rate.largest_rate_nT_per_s:.1f} nT/s at t = {rate.at_t_s:g} s "
        f"(x {rate.largest_component_rate_nT_per_s[0]:.1f}, y {rate.largest_component_rate_nT_per_s[1]:.1f}, "
        f"z {rate.largest_component_rate_nT_per_s[2]:.1f} nT/s)",
    ]


def orbit(
    elements: Optional[Path] = typer.Argument(None, help="Two-line element set file (optional title line).",
                                               show_default=False),
    start: str = typer.Option(..., "--start", help="Start time, ISO 8601 UTC (2027-03-01T00:00:00).",
                              show_default=False),
    duration_s: float = typer.Option(..., "--duration-s", help="Length of the series (s).", show_default=False),
    step_s: float = typer.Option(1.0, "--step-s", help="Time step (s)."),
    attitude: Optional[str] = typer.Option(None, "--attitude", help="nadir (default), inertial, spin or "
                                                                     "quaternions."),
    spin_axis: str = typer.Option("z", "--spin-axis", help="Body axis of the spin: x, y or z."),
    spin_rate_deg_s: Optional[float] = typer.Option(None, "--spin-rate-deg-s", help="Spin rate (deg/s)."),
    quaternions: Optional[Path] = typer.Option(None, "--quaternions", help="Attitude CSV: t_s,qw,qx,qy,qz "
                                               "(scalar first) or t_s,qx,qy,qz,qw (scalar last), body in TEME."),
    altitude_km: Optional[float] = typer.Option(None, "--altitude-km", help="Semi-major axis minus the "
                                                "equatorial radius (km), instead of an element set."),
    semi_major_axis_km: Optional[float] = typer.Option(None, "--semi-major-axis-km", help="Semi-major axis (km)."),
    eccentricity: Optional[float] = typer.Option(None, "--eccentricity", help="Eccentricity (default 0)."),
    inclination_deg: Optional[float] = typer.Option(None, "--inclination-deg", help="Inclination (deg)."),
    raan_deg: Optional[float] = typer.Option(None, "--raan-deg", help="Right ascension of the ascending node "
                                             "(deg, default 0)."),
    arg_perigee_deg: Optional[float] = typer.Option(None, "--arg-perigee-deg", help="Argument of perigee "
                                                    "(deg, default 0)."),
    mean_anomaly_deg: Optional[float] = typer.Option(None, "--mean-anomaly-deg", help="Mean anomaly at the "
                                                     "epoch (deg, default 0)."),
    epoch: Optional[str] = typer.Option(None, "--epoch", help="Epoch of the elements, ISO 8601 UTC "
                                        "(default: the start)."),
    ut1_utc_s: float = typer.Option(0.0, "--ut1-utc-s", help="UT1 - UTC (s, from IERS Bulletin A) for the "
                                    "Earth's rotation angle."),
    out: Optional[Path] = typer.Option(None, "--out", help="Series CSV to write; without it the CSV goes to "
                                       "stdout (for a pipe) and the summary to stderr."),
    plot: Optional[Path] = typer.Option(None, "--plot", help="Figure (PNG): body field and |B| against time, "
                                        "and the ground track coloured by |B|."),
):
    """The field a spacecraft sees along its orbit (SGP4, IGRF-14), in its body frame."""
    from cage.atomicfile import write_bytes, write_text
    from cage.cliargs import check_out, check_outputs_differ
    from cage.orbit import orbit_field, outer_field_warning, sample_times_s

    check_out(out, elements, quaternions)
    check_out(plot, elements, quaternions, option="--plot")
    check_outputs_differ(out=out, plot=plot)
    when = parse_utc(start, "--start")
    options = dict(altitude_km=altitude_km, semi_major_axis_km=semi_major_axis_km, eccentricity=eccentricity,
                   inclination_deg=inclination_deg, raan_deg=raan_deg, arg_perigee_deg=arg_perigee_deg,
                   mean_anomaly_deg=mean_anomaly_deg, epoch=epoch)
    for key, value in options.items():
        if isinstance(value, float) and not math.isfinite(value):
            raise InputError(f"--{key.replace('_', '-')} must be a finite number, got {value}")
    att = _attitude(attitude, spin_axis, spin_rate_deg_s, quaternions)
    sat, name, epoch_time = _satrec(elements, when, options)
    t = sample_times_s(duration_s, step_s)
    result = orbit_field(sat, when, t, att, ut1_utc_s, elements_file=str(elements) if elements is not None else "")
    to_stderr = out is None
    warnings = [w for w in (result.warning, outer_field_warning(result.track)) if w]
    days = abs((when - epoch_time).total_seconds()) / 86400.0
    if days > EPOCH_WARN_DAYS:
        warnings.append(f"warning: the start is {days:.0f} days from the elements' epoch; SGP4 positions "
                        f"drift by kilometres a day away from the epoch")
    for w in warnings:
        typer.echo(w, err=True)
    source = series_identity(elements) if elements is not None else "the options " + ", ".join(
        f"--{k.replace('_', '-')} {v}" for k, v in options.items() if v is not None)
    notes = provenance_lines(name, epoch_time, when, duration_s, step_s, att, source, ut1_utc_s, warnings)
    text = orbit_csv(result) + "".join(f"# {line}\n" for line in notes)
    if plot is not None:
        from cage.escape import for_figure
        from cage.orbitplots import orbit_figure
        from cage.figurestyle import png_bytes

        fig = orbit_figure(t, result.body_nT, result.track.latitude_deg, result.track.longitude_deg,
                           title=for_figure(f"{name}, from {when:%Y-%m-%d %H:%M} UTC"),
                           attitude=for_figure(att.describe()))
        write_bytes(plot, png_bytes(fig, notes=notes))
    if out is not None:
        write_text(out, text)
    else:
        typer.echo(text, nl=False)
    for line in summary_lines(name, epoch_time, when, result, att):
        typer.echo(line, err=to_stderr)
    from cage.escape import for_terminal

    if out is not None:
        shown = for_terminal(out)
        typer.echo(f"Wrote {shown}; replay it with: cage sequence DESIGN.json SITE.toml --orbit {shown}",
                   err=to_stderr)
    if plot is not None:
        typer.echo(f"Wrote {for_terminal(plot)}", err=to_stderr)


def read_orbit_series(path: Path):
    """The series of a ``cage orbit`` CSV for ``cage sequence --orbit``; ``-`` reads it from stdin.

    Returns (a :class:`cage.measurements.FieldSeries` in the cage frame (the body frame is the
    frame the sensor on the bench is aligned with), the file's identity for the sequence's
    provenance, ``cage.provenance.file_identity``).
    """
    import tempfile

    from cage.measurements import read_field_series_csv

    if str(path) != "-":
        series = read_field_series_csv(path, frame="cage")
        return series, series_identity(path)
    data = _stdin_bytes(MAX_STDIN_BYTES + 1)
    if len(data) > MAX_STDIN_BYTES:
        raise InputError(f"stdin: more than {MAX_STDIN_BYTES} bytes of orbit series")
    with tempfile.TemporaryDirectory(prefix="cage-orbit-") as folder:
        tmp = Path(folder) / "series.csv"
        tmp.write_bytes(data)  # as read: the file reader decodes and reports as for a path
        try:
            series = read_field_series_csv(tmp, frame="cage")
        except InputError as exc:
            raise InputError(str(exc).replace(str(tmp), "stdin")) from None
    from cage.provenance import file_identity

    return series, file_identity("stdin", data)


def _stdin_bytes(limit: int) -> bytes:
    """At most ``limit`` bytes of stdin, undecoded (a text stream without a byte buffer gives
    back the bytes its decoder kept as surrogates)."""
    buffer = getattr(sys.stdin, "buffer", None)
    if buffer is not None:
        return buffer.read(limit)
    return sys.stdin.read(limit).encode("utf-8", "surrogateescape")[:limit]


def series_identity(path: Path) -> str:
    """``cage.provenance.file_identity`` of a series file already read and checked."""
    from cage.provenance import file_identity

    try:
        return file_identity(Path(path).name, Path(path).read_bytes())
    except OSError as exc:
        raise InputError(f"{path}: cannot read it again ({exc.strerror or exc})") from None


def provenance_lines(name: str, epoch, start, duration_s: float, step_s: float, attitude, source: str,
                     ut1_utc_s: float, warnings=()) -> list[str]:
    """What an orbit series was computed from (the element set or the options, the span, the
    attitude, the models and their libraries, this tool) and the warnings in force, as lines:
    the series CSV ends with them as ``#`` lines (readers of the series skip those), its figure
    carries them as PNG text. Every text from a file or the command line is made one safe line
    (``cage.escape.one_line``)."""
    from importlib import metadata

    from cage.escape import one_line
    from cage.provenance import model_library, tool_version

    try:
        sgp4 = f"sgp4 {metadata.version('sgp4')}"
    except metadata.PackageNotFoundError:  # pragma: no cover - sgp4 is a dependency
        sgp4 = "sgp4 (version unknown)"
    lines = [
        f"orbit: {one_line(name)}; elements epoch {epoch:%Y-%m-%dT%H:%M:%S} UTC; from {one_line(source)}",
        f"span: {start:%Y-%m-%dT%H:%M:%S} UTC + {duration_s:g} s in steps of {step_s:g} s; UT1 - UTC {ut1_utc_s:g} s",
        f"attitude: {one_line(attitude.describe())}; x_nT, y_nT, z_nT in the body frame",
        f"model: IGRF-14 ({model_library()}); propagation: SGP4 ({sgp4}); written by {tool_version()}",
    ]
    lines += [one_line(w) if w.startswith("warning") else f"warning: {one_line(w)}" for w in warnings]
    return lines


def rate_lines(t_s, field_nT, rate_Hz: float, error_nT: float) -> list[str]:
    """The sequence summary's lines on the field rate and the latency it allows."""
    from cage.fieldrate import allowed_latency_s, field_rate

    rate = field_rate(t_s, field_nT)
    latency = allowed_latency_s(rate.largest_rate_nT_per_s, error_nT)
    hold_nT = rate.largest_rate_nT_per_s / rate_Hz
    hold_s = 1.0 / rate_Hz
    if math.isinf(latency):
        lag = "any time (the field stands still)"
    else:
        left = latency - hold_s
        rest = (f", leaving {left * 1000:.3g} ms for the rest of the loop" if left >= 0
                else ", more than the whole budget")
        lag = (f"{latency * 1000:.3g} ms (rate x delay); holding each value for {hold_s * 1000:g} ms at "
               f"{rate_Hz:g} Hz uses that much of it (up to {hold_nT:.2f} nT of lag){rest}")
    lines = [f"Largest field rate needed: {rate.largest_rate_nT_per_s:.1f} nT/s (at t = {rate.at_t_s:g} s)",
             f"For a {error_nT:g} nT error the whole loop may lag at most {lag}"]
    if not math.isinf(latency) and 1.0 / rate_Hz > latency:
        lines.append(f"warning: at {rate_Hz:g} Hz the hold alone exceeds the {error_nT:g} nT error budget; "
                     f"update at {rate.largest_rate_nT_per_s / error_nT:.3g} Hz or more")
    return lines


def register(app: typer.Typer) -> None:
    """Add ``cage orbit`` to the command line."""
    app.command(name="orbit")(orbit)
