"""``cage tolerance``: how well the built cage will do (build tolerances, yield, nT error budget)."""
from __future__ import annotations

import datetime as _dt
import math
import sys
from pathlib import Path
from typing import Optional

import typer

from cage.cliargs import HeadingOpt, MagneticOpt
from cage.errors import InputError

AXES = ("x", "y", "z")


def _terminal(text) -> str:
    """User text (file names) made safe for the terminal."""
    from cage.escape import for_terminal

    return for_terminal(str(text))


def _budget_json(budget) -> dict:
    def terms(ts):
        return [{"term": t.name, "nT": list(t.nT), "kind": t.kind, "note": t.note,
                 "removed_by_calibration": t.removed_by_calibration,
                 "removed_by_closed_loop": t.removed_by_closed_loop} for t in ts]

    out = {"as_built": {"terms": terms(budget.terms), **budget.totals("as built")},
           "closed_loop": budget.totals("closed loop")}
    if budget.after_calibration is not None:
        out["calibrated"] = {"terms": terms(budget.after_calibration), **budget.totals("calibrated")}
    return out


def _budget_table(budget) -> list[str]:
    lines = [f"  {'term':<22}{'x nT':>10}{'y nT':>10}{'z nT':>10}  {'kind':<8} removed by"]
    for t in budget.terms:
        by = ", ".join(w for w, yes in (("calibration", t.removed_by_calibration),
                                        ("closed loop", t.removed_by_closed_loop)) if yes) or "neither"
        lines.append(f"  {t.name:<22}" + "".join(f"{v:>10.1f}" for v in t.nT) + f"  {t.kind:<8} {by}")
    for stage in ("as built", "calibrated", "closed loop"):
        tot = budget.totals(stage)
        if not tot:
            continue
        lines.append(f"  {('total ' + stage + ' RSS'):<22}" + "".join(f"{v:>10.1f}" for v in tot["rss_nT"])
                     + f"  (all axes {tot['rss_total_nT']:.1f} nT)")
        lines.append(f"  {('total ' + stage + ' worst'):<22}" + "".join(f"{v:>10.1f}" for v in tot["worst_nT"])
                     + f"  (all axes {tot['worst_total_nT']:.1f} nT)")
    return lines


# The largest build errors (1 sigma) the analysis takes: beyond them an "error" is another cage,
# and the sampled coils would cross or turn inside out. Sizes are a share of the smallest coil
# (side or radius); angles in degrees; turns as a share of the fewest turns on a coil, at least 2.
_MAX_LENGTH_SHARE = 0.1
_MAX_ANGLE_DEG = 10.0
_MAX_TURNS_SHARE = 0.25


def _check_error_sizes(errors, systems) -> None:
    """InputError when a build error (cage.tolerance.BuildErrors, SI) is too large to be a build
    tolerance of this design's coils (the limits above), naming the option."""
    coils = [c for sys_ in systems for c in sys_.coils]
    smallest_m = min(c.size_m for c in coils)
    fewest = min(c.turns for c in coils)
    length_m = _MAX_LENGTH_SHARE * smallest_m
    turns = max(2.0, _MAX_TURNS_SHARE * fewest)
    checks = (("--position-mm", errors.position_m * 1e3, length_m * 1e3, "mm"),
              ("--size-mm", errors.size_m * 1e3, length_m * 1e3, "mm"),
              ("--tilt-deg", math.degrees(errors.tilt_rad), _MAX_ANGLE_DEG, "deg"),
              ("--orthogonality-deg", math.degrees(errors.orthogonality_rad), _MAX_ANGLE_DEG, "deg"),
              ("--turns", errors.turns, turns, "turns"))
    for option, value, limit, unit in checks:
        if value > limit * (1 + 1e-12):
            raise InputError(f"{option} {value:g} {unit} is no build tolerance for this design: at most {limit:.3g} "
                             f"{unit} (1 sigma; lengths up to a tenth of the smallest coil, {smallest_m:.3g} m, "
                             f"angles up to {_MAX_ANGLE_DEG:g} deg, turns up to a quarter of the fewest, {fewest:g})")


def run_tolerance(design_file: Path, site_file: Path, samples: int, seed: Optional[int], errors,
                  target_yield: float, spec_samples: int, calibration_file: Optional[Path],
                  temperature_swing_K: float, hours: float, valid_until: Optional[str], show_progress: bool,
                  plot: Optional[Path] = None, heading_deg: Optional[float] = None, heading_magnetic: bool = False):
    """Everything the command computes, as a JSON-ready dict (no printing but the progress bar).
    heading_deg, heading_magnetic: the cage's azimuth given to replace the design's (as
    ``cage setpoints --heading-deg``)."""
    import numpy as np

    from cage import buildyield as tol
    from cage import tolerance
    from cage.designfile import load_design
    from cage.errorbudget import SupplyStability, error_budget
    from cage.cliargs import resolve_site
    from cage.sitefile import parse_date
    from cage.supplies import supply_for_axis, validate_supply

    # Every input is read and checked before the (long) sampling starts.
    design = load_design(design_file)
    site = resolve_site(site_file, None, None, None, None, heading_deg, heading_magnetic)
    systems = tolerance.systems_of_design(design)
    _check_error_sizes(errors, systems)
    volume = site.requirement.test_volume_m
    uniformity = site.requirement.uniformity
    until = parse_date(valid_until, "--valid-until") if valid_until else site.date + _dt.timedelta(days=365)
    years = (until - site.date).days / 365.25
    if years < 0:
        raise InputError(f"--valid-until ({until}) is before the site's date ({site.date})")
    from cage.geomag import LAST_DATE

    if valid_until and until > LAST_DATE:
        raise InputError(f"--valid-until {until} is after {LAST_DATE}, where the field model's secular variation "
                         f"can no longer be extrapolated")
    if not site.supplies:
        raise InputError(f"{_terminal(site.source)}: no [[supply]] tables; the error budget needs the supplies")
    for i, s in enumerate(site.supplies):
        validate_supply(s, f"{site.source}: supply[{i}] (axis {s.axis})")
    try:
        supplies = [supply_for_axis(site.supplies, a) for a in AXES]
    except InputError as exc:
        raise InputError(f"{site.source}: {exc}") from None
    grad_resid = grad_info = None
    if site.measured is not None and site.measured.points_m:
        from cage.gradient import fit_gradient, residual_after_null_nT

        try:
            g = fit_gradient(site.measured.points_m, site.measured.fields_nT)
        except InputError as exc:
            raise InputError(f"{site.source}: [measured] {exc}") from None
        per, worst, rms = residual_after_null_nT(g.gradient_nT_per_m, volume)
        grad_resid = per
        grad_info = {"gradient_nT_per_m": g.gradient_nT_per_m.tolist(), "centre_nT": g.centre_nT.tolist(),
                     "fit_rms_misfit_nT": g.rms_misfit_nT, "points": g.n_points,
                     "residual_max_nT": worst, "residual_rms_nT": rms,
                     "residual_max_per_axis_nT": per.tolist()}
    cal_se = cal_off = None
    if calibration_file is not None:
        from cage.calibrationfile import load_calibration

        fit = load_calibration(calibration_file)
        cal_se, cal_off = fit.coupling_stderr_nT_per_A, fit.offset_stderr_nT
    # The re-use rules of every output made from a design (the built cage's true azimuth, a
    # warning away from its site), as for the current tables; all in the provenance.
    from cage.provenance import make_provenance
    from cage.workflow import design_in_use

    site, amb, heading_note, warnings, derived = design_in_use(design, site,
                                                               heading_deg is not None or heading_magnetic)
    prov = make_provenance(site, amb, heading_note=heading_note, warnings=warnings,
                           derived_from={**derived, "calibration": str(calibration_file or "")})
    if plot is not None:
        folder = plot.parent if str(plot.parent) else Path(".")
        if not folder.is_dir():
            raise InputError(f"{plot}: output folder {folder} does not exist")
    if seed is None:
        import secrets

        seed = secrets.randbelow(2**31)

    bar = None
    if show_progress:
        bar = typer.progressbar(length=3 * samples + 6, label="built cages", file=sys.stderr)
        bar.__enter__()
    state = {"done": 0}

    def progress(done, total):
        if bar is not None:
            bar.update(done - state["done"])
            state["done"] = done

    try:
        mc = tol.monte_carlo(systems, volume, uniformity, errors, samples, seed, progress=progress)
        sens = tol.sensitivities(systems, volume, errors)
        state["done"] = 0

        def spec_progress(done, total):
            if bar is not None:
                bar.update(done - state["done"])
                state["done"] = done

        spec = tol.tolerance_spec(systems, volume, uniformity, errors, target_yield, spec_samples, seed,
                                  progress=spec_progress)
        joint = tol.joint_factor(systems, volume, uniformity, errors, target_yield, spec_samples, seed)
    finally:
        if bar is not None:
            bar.__exit__(None, None, None)

    # --- error budget at the operating point: the cage nulls the field in force at its centre.
    stab = [SupplyStability(s.max_current_A, s.resolution_A, s.drive, s.temperature_coefficient_ppm_per_K,
                            s.drift_ppm_per_hour, s.noise_ppm) for s in supplies]
    k_nT = np.array([np.linalg.norm(sp.nominal_centre_T_per_A) * 1e9 for sp in mc.axes])
    axis_field = -np.asarray(amb.in_force_cage_nT, dtype=float)
    # Monte Carlo coupling errors: [sample, component, axis] in nT/A.
    nominal = np.stack([sp.nominal_centre_T_per_A for sp in mc.axes], axis=1) * 1e9
    built = np.stack([sp.centre_T_per_A for sp in mc.axes], axis=2) * 1e9
    delta_k = built - nominal[None]
    budget = error_budget(axis_field, k_nT, stab, temperature_swing_K, hours, years,
                          amb.sv_cage_nT_per_year, delta_k, cal_se, cal_off, grad_resid)

    axes = {}
    for sp in mc.axes:
        axes[sp.axis] = {
            "yield": sp.yield_share,
            "uniformity_nominal": sp.nominal_deviation,
            "uniformity_percentiles": sp.percentiles(),
            "centre_gain_error_rms": float(np.sqrt(np.mean(sp.centre_gain_error ** 2))),
            "centre_angle_rms_deg": float(np.degrees(np.sqrt(np.mean(sp.centre_angle_rad ** 2)))),
            "centre_error_nT_rms_at_null": float(np.sqrt(np.mean(sp.centre_relative_error ** 2)))
            * abs(float(axis_field[AXES.index(sp.axis)])),
            "field_per_amp_nT": float(k_nT[AXES.index(sp.axis)]),
        }
    return {
        "format": "cage-tolerance",
        "version": 1,
        "provenance": prov.as_dict(),
        "samples": samples,
        "seed": seed,
        "build_errors_sigma": errors.in_units(),
        "requirement": {"test_volume_m": list(volume), "uniformity": uniformity},
        "yield": mc.yield_share,
        "axes": axes,
        "sensitivities": [{"source": s.source, "axis": s.axis, "unit": s.unit, "step": s.step,
                           "uniformity_per_unit": float(s.deviation_per_unit),
                           "centre_relative_per_unit": float(s.centre_per_unit),
                           "uniformity_change_at_step": float(s.deviation_at_step)} for s in sens],
        "tolerance_spec": {"target_yield": target_yield, "samples": spec_samples, "joint_factor": joint,
                           "limits": [{"source": t.source, "unit": t.unit, "largest_sigma": t.limit,
                                       "not_limiting": t.not_limiting, "yield_at_limit": t.yield_at_limit}
                                      for t in spec]},
        "error_budget": {"operating_point": "null of the field in force at the centre",
                         "axis_field_nT": axis_field.tolist(), "temperature_swing_K": temperature_swing_K,
                         "span_hours": hours, "valid_until": until.isoformat(), "years": years,
                         "supply_drive": [s.drive for s in supplies], **_budget_json(budget)},
        "gradient": grad_info,
    }, mc


def _text(doc: dict, design_file: Path, site_file: Path) -> str:
    lines = [f"Built-cage tolerance: {_terminal(design_file)} at {_terminal(site_file)}",
             f"{doc['samples']} sampled cages (seed {doc['seed']}); build errors (1 sigma): "
             + ", ".join(f"{k.replace('_pct', ' %').replace('_', ' ')} {v:g}"
                         for k, v in doc["build_errors_sigma"].items()),
             f"Requirement: {100 * doc['requirement']['uniformity']:g} % over "
             + " x ".join(f"{v:g}" for v in doc["requirement"]["test_volume_m"]) + " m",
             f"Yield (all three axes meet it): {100 * doc['yield']:.1f} %", "",
             f"  {'axis':<5}{'yield':>8}{'designed':>10}{'p50':>9}{'p95':>9}{'p99':>9}"
             f"{'gain rms':>10}{'angle rms':>11}"]
    for a, d in doc["axes"].items():
        p = d["uniformity_percentiles"]
        lines.append(f"  {a:<5}{100 * d['yield']:>7.1f}%{100 * d['uniformity_nominal']:>9.4f}%"
                     f"{100 * p['p50']:>8.4f}%{100 * p['p95']:>8.4f}%{100 * p['p99']:>8.4f}%"
                     f"{100 * d['centre_gain_error_rms']:>9.3f}%{d['centre_angle_rms_deg']:>9.3f}deg")
    lines += ["", "Sensitivities (worst coil, ranked by the change at one default error):",
              f"  {'source':<15}{'axis':<6}{'step':>11}{'uniformity at step':>20}{'per unit':>12}"
              f"{'centre field per unit':>23}"]
    for s in doc["sensitivities"][:12]:
        lines.append(f"  {s['source']:<15}{s['axis']:<6}{s['step']:>6.3g} {s['unit']:<5}"
                     f"{100 * s['uniformity_change_at_step']:>17.4f} pp{100 * s['uniformity_per_unit']:>9.4f} pp"
                     f"{100 * s['centre_relative_per_unit']:>21.4f} %")
    lines.append("  (pp: percentage points of uniformity; per unit: per mm, deg, turn or % of imbalance)")
    spec = doc["tolerance_spec"]
    lines += ["", f"Tolerance specification (largest 1-sigma error per source keeping "
                  f"{100 * spec['target_yield']:g} % yield, others at the sizes above; "
                  f"{spec['samples']} cages per trial):"]
    for t in spec["limits"]:
        if t["largest_sigma"] is None:
            what = "cannot reach the yield even with no error of this kind: other sources limit"
        elif t["not_limiting"]:
            what = f"not limiting (yield holds up to {t['largest_sigma']:.3g} {t['unit']})"
        else:
            what = f"{t['largest_sigma']:.3g} {t['unit']}"
        lines.append(f"  {t['source']:<15}{what}")
    f = spec["joint_factor"]
    lines.append("  all sources together: " + (
        "no margin: even a hundredth of every size above misses the yield" if f == 0.0 else
        f"every size above times {f:.3g} keeps the yield"))
    eb = doc["error_budget"]
    lines += ["", f"Error budget at the centre (nT), nulling the field in force; {eb['temperature_swing_K']:g} K "
                  f"swing, {eb['span_hours']:g} h, valid until {eb['valid_until']}; drive "
                  + "/".join(eb["supply_drive"]) + ":"]
    return "\n".join(lines) + "\n"


def register(app: typer.Typer) -> None:
    @app.command()
    def tolerance(
        design_file: Path = typer.Argument(..., help="Design JSON file."),
        site_file: Path = typer.Argument(..., help="Site TOML file (requirement, supplies, survey)."),
        samples: int = typer.Option(1000, "--samples", help="Built cages to sample."),
        seed: Optional[int] = typer.Option(None, "--seed", help="Random seed (repeatable results)."),
        as_json: bool = typer.Option(False, "--json", help="Write JSON on stdout."),
        plot: Optional[Path] = typer.Option(None, "--plot", help="Write a PNG of the uniformity spread."),
        position_mm: float = typer.Option(2.0, "--position-mm", help="Coil plane position error, 1 sigma (mm)."),
        tilt_deg: float = typer.Option(0.2, "--tilt-deg", help="Coil tilt, 1 sigma about each in-plane axis (deg)."),
        size_mm: float = typer.Option(2.0, "--size-mm", help="Side or radius error, 1 sigma (mm)."),
        turns: float = typer.Option(0.3, "--turns", help="Turn count error, 1 sigma (turns; rounded to whole)."),
        orthogonality_deg: float = typer.Option(0.1, "--orthogonality-deg",
                                                help="Axis non-orthogonality, 1 sigma (deg)."),
        imbalance: float = typer.Option(0.001, "--imbalance",
                                        help="Ampere-turn imbalance between coils, 1 sigma (fraction: 0.001 = 0.1 %)."),
        target_yield: float = typer.Option(0.95, "--yield", help="Yield the tolerance specification keeps (0..1)."),
        spec_samples: int = typer.Option(300, "--spec-samples", help="Cages per trial of the tolerance search."),
        calibration: Optional[Path] = typer.Option(None, "--calibration",
                                                   help="Calibration JSON: budget after calibration."),
        temperature_swing_K: float = typer.Option(2.0, "--temperature-swing-K",
                                                  help="Room and winding temperature swing (K)."),
        hours: float = typer.Option(8.0, "--hours", help="Time between current tables or calibrations (h)."),
        valid_until: Optional[str] = typer.Option(None, "--valid-until",
                                                  help="Date the current table must hold to (default: a year "
                                                       "after the site's date)."),
            heading_deg: Optional[float] = HeadingOpt,
        heading_magnetic: bool = MagneticOpt,
    ) -> None:
        """How well the built cage will do: Monte Carlo yield, sensitivities, tolerances, nT budget."""
        import json

        from cage.tolerance import BuildErrors

        from cage.cliargs import check_out

        check_out(plot, design_file, site_file, calibration, option="--plot")
        if seed is not None and not 0 <= seed < 2**32:
            raise InputError(f"--seed must be a whole number from 0 to {2**32 - 1}, got {seed}")
        if samples < 2 or samples > 1_000_000:
            raise InputError(f"--samples must be between 2 and 1,000,000, got {samples}")
        if spec_samples < 20 or spec_samples > 100_000:
            raise InputError(f"--spec-samples must be between 20 and 100,000, got {spec_samples}")
        if not (0.0 < target_yield < 1.0):
            raise InputError(f"--yield must be between 0 and 1 (0.95 for 95 %), got {target_yield:g}")
        for name, v in (("--temperature-swing-K", temperature_swing_K), ("--hours", hours)):
            if not math.isfinite(v) or v < 0:
                raise InputError(f"{name} must be a finite number of at least 0, got {v:g}")
        sizes = {"--position-mm": position_mm, "--tilt-deg": tilt_deg, "--size-mm": size_mm, "--turns": turns,
                 "--orthogonality-deg": orthogonality_deg, "--imbalance": imbalance}
        for name, v in sizes.items():
            if not math.isfinite(v) or v < 0:
                raise InputError(f"{name} must be a finite number of at least 0, got {v:g}")
        if imbalance >= 0.5:
            raise InputError(f"--imbalance is a fraction (0.001 = 0.1 %), got {imbalance:g}")
        errors = BuildErrors(position_mm * 1e-3, math.radians(tilt_deg), size_mm * 1e-3, float(turns),
                             math.radians(orthogonality_deg), float(imbalance))
        doc, mc = run_tolerance(design_file, site_file, samples, seed, errors, target_yield, spec_samples,
                                calibration, temperature_swing_K, hours, valid_until,
                                show_progress=sys.stderr.isatty(), plot=plot, heading_deg=heading_deg,
                                heading_magnetic=heading_magnetic)
        if plot is not None:
            from cage.atomicfile import write_bytes
            from cage.figurestyle import png_bytes
            from cage.tolerance_plots import uniformity_spread_figure

            from cage.provenance import header_lines

            write_bytes(plot, png_bytes(uniformity_spread_figure(mc), notes=header_lines(doc["provenance"], prefix="")))
        from cage.terminal import warn

        for w in doc["provenance"]["warnings"]:
            warn(w)
        if as_json:
            typer.echo(json.dumps(doc, indent=2, allow_nan=False))
        else:
            from cage.errorbudget import BudgetTerm, ErrorBudget

            def rebuild(ts):
                return tuple(BudgetTerm(t["term"], tuple(t["nT"]), t["kind"], t["removed_by_calibration"],
                                        t["removed_by_closed_loop"], t["note"]) for t in ts)

            eb = doc["error_budget"]
            budget = ErrorBudget(rebuild(eb["as_built"]["terms"]),
                                 rebuild(eb["calibrated"]["terms"]) if "calibrated" in eb else None)
            text = _text(doc, design_file, site_file) + "\n".join(_budget_table(budget)) + "\n"
            if doc["gradient"] is not None:
                g = doc["gradient"]
                text += (f"\nSurvey at {g['points']} points: residual after nulling the centre, largest "
                         f"{g['residual_max_nT']:.1f} nT, rms {g['residual_rms_nT']:.1f} nT over the test volume "
                         f"(fit misfit {g['fit_rms_misfit_nT']:.1f} nT rms).\n")
            text += ("\nA calibration (cage calibrate) removes the coupling and non-orthogonality terms down to "
                     "its fit's uncertainty;\na closed loop on a sensor at the centre removes every term marked so "
                     "there, not the gradient\nover the volume nor the supply's step.\n")
            typer.echo(text, nl=False)
            if plot is not None:
                typer.echo(f"Wrote {_terminal(plot)}")
