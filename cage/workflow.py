"""The workflow: from a site, a design, a calibration and targets to what the commands print and write.

Workflow layer (DEVELOPERS.md "Layers"): it takes objects already read (a ``Site``, a
``Design``, a loaded calibration record, a list of targets) and returns plain objects: the
field summary, the plan and its design, the setpoint table, a sequence's circuits, the
inputs of a report. It never touches the terminal or the disk; the commands read the files,
call these functions, then print and write. Each thing is computed once per run: the IGRF
synthesis of a position and date is memoised (:func:`cage.geomag.earth_field`), and
:func:`plan_run` hands its ambient field to the setpoint table. The rules of re-use (which
heading, which survey or calibration offset, which warnings) are those of :mod:`cage.reuse`.
"""
from __future__ import annotations

import dataclasses
import math
import types
from typing import Optional

from cage.errors import InputError

CAUTION_HOT = ("caution: windings run hot at full range; check their temperature on the built coils and "
               "keep within the enamel and frame ratings")
CAUTION_VOLTAGE = ("caution: supply voltages above about 50 V DC need touch protection; wiring and protection "
                   "must follow local electrical codes and licensed practice")


# ----------------------------------------------------------------------------- small readers of design records

def number_list(value, n=3):
    """``value`` as n finite floats, or None."""
    try:
        out = [float(v) for v in value]
    except (TypeError, ValueError):
        return None
    return out if len(out) == n and all(v == v and abs(v) != float("inf") for v in out) else None


def number_or(value, default):
    """``value`` as a finite float, or ``default``."""
    try:
        v = float(value)
    except (TypeError, ValueError):
        return default
    return v if math.isfinite(v) else default


def design_context(design_doc: dict):
    """(test volume m, tolerance, FrameSpec, Room or None) recorded in a design document (with defaults)."""
    from cage.layout import FrameSpec
    from cage.site import Room

    req = design_doc.get("requirement") or {}
    lay = design_doc.get("layout") or {}
    site = design_doc.get("site") or {}
    volume = number_list(req.get("test_volume_m")) or [0.3, 0.3, 0.3]
    tol = number_or(req.get("uniformity"), 0.001)
    frame = FrameSpec(number_or(lay.get("frame_width_m"), 0.04), number_or(lay.get("frame_depth_m"), 0.04),
                      number_or(lay.get("frame_gap_m"), 0.01))
    room = None
    dims = number_list(site.get("room_m"))
    if dims is not None:
        room = Room(*dims, clearance_m=number_or(site.get("room_clearance_m"), 0.3))
    return volume, tol, frame, room


def check_design_geometry(design_obj, where: str) -> None:
    """Refuse a design whose frames collide or whose coils do not surround the test volume."""
    from cage.coillayout import design_geometry_problems
    from cage.design import design_to_dict

    volume, _, frame, _ = design_context(design_to_dict(design_obj))
    problems = design_geometry_problems(design_obj, frame, volume)
    if problems:
        raise InputError(f"{where}: {problems[0]}; was the design file edited?")


def design_supplies(design):
    """Supplies recorded in a design at planning time (used when no site file gives them), or None."""
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


def packs_of(design_obj):
    """The winding-pack differences recorded in a design's layout block, as simple records."""
    lay = design_obj.layout or {}
    keys = ("winding_pack_centre_difference", "winding_pack_box_difference", "winding_pack_uniformity")
    if not all(isinstance(lay.get(k), list) and len(lay[k]) == 3 for k in keys):
        return ()
    return tuple(types.SimpleNamespace(centre_relative=c, box_max_relative=b, box_deviation_pack=u)
                 for c, b, u in zip(*(lay[k] for k in keys)))


# ----------------------------------------------------------------------------- field

def field_provenance(site, amb, design_identity: str = "", warnings=()):
    """The provenance record of the field at a site (cage.provenance)."""
    from cage.provenance import make_provenance

    derived = {"site_file": "" if site.source == "command line" else site.source, "design": design_identity,
               "survey": site.measured.date.isoformat() if site.measured is not None else ""}
    return make_provenance(site, amb, derived_from=derived, warnings=tuple(amb.warnings) + tuple(warnings))


def field_summary(site, amb, design_identity: str = "") -> dict:
    """The JSON object of ``cage field`` (and field.json of a plan folder)."""
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
    out["provenance"] = field_provenance(site, amb, design_identity).as_dict()
    return out


# ----------------------------------------------------------------------------- design

@dataclasses.dataclass(frozen=True)
class PlannedDesign:
    """A planned cage: the ambient field it was planned for, the planner's inputs and result, the
    stamped design, and the warnings and cautions to show (in order)."""

    amb: object
    inp: object
    plan: object
    design: object
    cautions: tuple


def design_cautions(plan) -> list[str]:
    """The planner's warnings, then the safety cautions a plan calls for (heat, touch voltage)."""
    out = list(plan.warnings)
    if any(a.electrics.winding_temperature_C > 50.0 for a in plan.axes):
        out.append(CAUTION_HOT)
    if any(abs(a.drive.voltage_V) > 50.0 for a in plan.axes):
        out.append(CAUTION_VOLTAGE)
    return out


def plan_design(site, shape=None, minimise="power", spacing="flat", max_field_step_nT=None,
                system=None) -> PlannedDesign:
    """Plan the cage for a site's room, requirement and supplies; the design carries its provenance."""
    from cage.ambient import site_ambient
    from cage.optimise import design_from_plan, plan_cage, plan_inputs_from_site
    from cage.provenance import design_id, stamp_design

    if site.room is None:
        raise InputError(f"{site.source}: no [room] table; the planner needs the room the cage must fit")
    amb = site_ambient(site)
    inp = plan_inputs_from_site(site, amb.in_force_cage_nT, shape=shape, minimise=minimise, spacing=spacing,
                                max_field_step_nT=max_field_step_nT, systems=system)
    plan = plan_cage(inp)
    cautions = design_cautions(plan)
    design_obj = design_from_plan(plan, inp, site, amb)
    design_obj = stamp_design(design_obj, field_provenance(site, amb, design_id(design_obj), cautions))
    return PlannedDesign(amb, inp, plan, design_obj, tuple(cautions))


def compare_inputs(site, shape=None, minimise="power", max_field_step_nT=None, system=None):
    """(ambient, planner inputs, room's smallest inner side m) for comparing outer sizes at a site."""
    from cage.ambient import site_ambient
    from cage.layout import room_inner_m
    from cage.optimise import plan_inputs_from_site

    if site.room is None:
        raise InputError(f"{site.source}: no [room] table; compare needs the room the cage must fit")
    amb = site_ambient(site)
    inp = plan_inputs_from_site(site, amb.in_force_cage_nT, shape=shape, minimise=minimise,
                                max_field_step_nT=max_field_step_nT, systems=system)
    return amb, inp, float(min(room_inner_m(site.room)))


# ----------------------------------------------------------------------------- setpoints

@dataclasses.dataclass(frozen=True)
class SetpointContext:
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


def design_in_use(design, site, heading_explicit: bool = False):
    """The re-use rules every output made from a design follows (cage.reuse), in one place:
    (the site turned to the built cage's true azimuth, its ambient field, the heading note,
    the warnings -- the ambient field's, the heading's, a note when used away from the design's
    site --, and the provenance's ``derived_from``: the design's identity, the site file, the
    survey's date)."""
    from cage.ambient import site_ambient
    from cage.provenance import design_id
    from cage.reuse import site_for_design, site_move_note

    site, heading_note, warnings = site_for_design(design, site, heading_explicit)
    amb = site_ambient(site)
    warnings = list(amb.warnings) + warnings
    moved = site_move_note(design.site, site.location, site.name)
    if moved:
        warnings.append(moved)
    derived = {"design": design_id(design), "site_file": "" if site.source == "command line" else site.source,
               "survey": site.measured.date.isoformat() if site.measured is not None else ""}
    return site, amb, heading_note, warnings, derived


def setpoint_context(design, site, calibration=None, calibration_name: str = "",
                     heading_explicit: bool = False) -> SetpointContext:
    """Supplies, temperatures, field in force and warnings for a design used at a site.

    calibration: a loaded calibration record (cage.calibrationfile) or None; calibration_name
    names it in warnings and provenance.
    """
    from cage.provenance import make_provenance
    from cage.reuse import calibration_ambient
    from cage.setpoints import reuse_warnings
    from cage.supplies import supply_for_axis, validate_supply

    site, amb, heading_note, warnings, derived = design_in_use(design, site, heading_explicit)
    if site.supplies:
        for i, s in enumerate(site.supplies):
            validate_supply(s, f"{site.source}: supply[{i}] (axis {s.axis})")
        try:
            supplies = tuple(supply_for_axis(site.supplies, a) for a in "xyz")
        except InputError as exc:
            raise InputError(f"{site.source}: {exc}") from None
    else:
        supplies = design_supplies(design)
        if supplies is None:
            raise InputError("no supplies: give a site file with [[supply]] tables (the design file records none)")
    req = design.requirement or {}
    if site.source != "command line":
        extra_nT = [1000.0 * v for v in site.requirement.extra_field_uT]
        ambient_C = site.coil.ambient_temperature_C
        max_C = site.coil.max_winding_temperature_C
    else:
        extra_nT = number_list(req.get("extra_field_nT")) or [1000.0 * v for v in site.requirement.extra_field_uT]
        ambient_C = number_or(req.get("ambient_temperature_C"), 22.0)
        max_C = number_or(req.get("max_winding_temperature_C"), None)
    coupling, ambient_nT, source = None, amb.in_force_cage_nT, amb.source
    if calibration is not None:
        coupling, ambient_nT, source, notes = calibration_ambient(calibration, calibration_name, derived["design"],
                                                                  site, amb)
        warnings += notes
        from cage.calibrate import reversed_axes_warnings, uncertain_axes_warnings
        from cage.setpoints import design_coupling_nT_per_A

        stderr = getattr(calibration, "fit", calibration).coupling_stderr_nT_per_A
        warnings += [f"{calibration_name or 'calibration'}: {w}"
                     for w in uncertain_axes_warnings(coupling, stderr)
                     + reversed_axes_warnings(coupling, design_coupling_nT_per_A(design))]
        derived["calibration"] = calibration_name
    warnings += reuse_warnings(design, supplies, site.room)
    prov = make_provenance(site, amb, derived_from=derived, heading_note=heading_note)
    return SetpointContext(amb, supplies, extra_nT, ambient_C, max_C, coupling, ambient_nT, source, tuple(warnings),
                           prov)


def table_of(design, site, ctx: SetpointContext, targets, times=(None, None)):
    """The current table; times: (start time of each row (s), hold time (s)) of a sequence."""
    from cage.setpoints import setpoint_table

    return setpoint_table(design, ctx.ambient_nT, ctx.supplies, targets, site=site.name, date=site.date,
                          source=ctx.source, coupling_nT_per_A=ctx.coupling, ambient_temperature_C=ctx.ambient_C,
                          max_winding_temperature_C=ctx.max_C, warnings=ctx.warnings, t_s=times[0],
                          dwell_s=times[1], provenance=ctx.provenance)


def flag_rows(table, limit: int = 10):
    """Add one warning naming the rows outside the supplies' limits."""
    import numpy as np

    from cage.escape import for_terminal
    from cage.numberformat import count_text

    bad = [table.labels[k] for k in np.flatnonzero(~table.within_limits)]
    if not bad:
        return table
    more = "" if len(bad) <= limit else f" and {len(bad) - limit} more"
    return dataclasses.replace(table, warnings=table.warnings + (
        f"{count_text(len(bad), 'row')} outside the supplies' limits (flagged, not clipped): "
        f"{', '.join(for_terminal(b) for b in bad[:limit])}{more}",))


def build_setpoints(design, site, *, targets=(), calibration=None, calibration_name: str = "",
                    heading_explicit: bool = False):
    """(ambient, table): the standard and user rows of a design at a site (model, survey, or calibration).

    targets: user targets as read by cage.targetfile (label, field_uT, frame ``cage`` or ``ned``).
    """
    import numpy as np

    from cage.frames import ned_to_cage
    from cage.setpoints import standard_targets

    ctx = setpoint_context(design, site, calibration, calibration_name, heading_explicit)
    rows = standard_targets(ctx.extra_nT)
    for t in targets:
        field_nT = 1000.0 * np.array(t.field_uT)
        if t.frame == "ned":
            field_nT = ned_to_cage(field_nT, ctx.amb.heading_true_deg)
        rows.append((t.label, field_nT))
    return ctx.amb, flag_rows(table_of(design, site, ctx, rows))


@dataclasses.dataclass(frozen=True)
class PlanRun:
    """Everything ``cage plan`` prints and writes, each computed once."""

    planned: PlannedDesign
    table: object
    field_doc: dict

    @property
    def warnings(self) -> list[str]:
        return list(self.planned.cautions) + list(self.table.warnings)


def plan_run(site, shape=None, minimise="power", max_field_step_nT=None, targets=(), system=None) -> PlanRun:
    """Field, design and setpoint table of a site: the main job, in one pass."""
    from cage.provenance import design_id

    planned = plan_design(site, shape, minimise, "flat", max_field_step_nT, system)
    _, table = build_setpoints(planned.design, site, targets=targets)
    field_doc = field_summary(site, planned.amb, design_id(planned.design))
    return PlanRun(planned, table, field_doc)


# ----------------------------------------------------------------------------- report

def report_consistency(design_obj, design_doc: dict, field_doc, setpoints_doc) -> str:
    """'' when a plan folder's documents come from one run, else what differs (cage.reuse)."""
    from cage.provenance import design_id
    from cage.reuse import mixed_inputs, supply_mismatch

    docs = {"design.json": {"provenance": {**(design_doc.get("provenance") or {}),
                                           "derived_from": {"design": design_id(design_obj)}}},
            "field.json": field_doc, "setpoints.json": setpoints_doc}
    return mixed_inputs(docs) or supply_mismatch(design_doc, setpoints_doc)


def sheet_for_design(design_obj):
    """The build sheet of a design with the supplies it records (none: suits either kind)."""
    from cage.buildsheet import build_sheet

    return build_sheet(design_obj, design_supplies(design_obj))


# ----------------------------------------------------------------------------- calibration

def calibration_tops(design_obj, site, supplies):
    """(tops A, reasons): per axis the largest calibration current, 80 % of what the supply can drive
    through the winding at its operating temperature (voltage, not only the current limit)."""
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


def calibration_provenance(design_obj, site, readings_name: str, warnings=()):
    """Where and when a calibration's offset holds: the readings' site and day (``site``, already
    dated), turned to the design's azimuth (cage.reuse), with the model field there (no survey)."""
    from cage.ambient import site_ambient
    from cage.provenance import design_id, make_provenance
    from cage.reuse import site_for_design

    site, heading_note, more = site_for_design(design_obj, site, False)
    site = dataclasses.replace(site, measured=None)
    amb = site_ambient(site)
    return make_provenance(site, amb, derived_from={"design": design_id(design_obj), "readings": readings_name},
                           warnings=tuple(amb.warnings) + tuple(more) + tuple(warnings), heading_note=heading_note)


# ----------------------------------------------------------------------------- sequence

def axis_circuits(design_obj, supplies, ambient_C, where: str = "design file"):
    """Per axis: circuit resistance at full-range temperature (winding + leads, ohm) and inductance (H)."""
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


def sequence_table(design_obj, site, ctx: SetpointContext, targets, times, rate_Hz: Optional[float] = None,
                   where: str = "design file", extra_warnings=(), series_identity: str = ""):
    """The setpoint table of a sequence.

    Directions of a sphere (``rate_Hz`` None): every row flagged against the supplies' limits.
    A time series replayed at ``rate_Hz``: each step checked against what the supplies can
    follow through the axis's L and R (cage.sequence.check_slew), failing steps flagged and
    named in one warning. extra_warnings (e.g. an orbit's rate summary) follow the table's own.
    series_identity: the replayed series file (``cage.provenance.file_identity``), written into
    the table's provenance as ``derived_from["series"]``.
    """
    if series_identity:
        from cage.provenance import with_derived

        ctx = dataclasses.replace(ctx, provenance=with_derived(ctx.provenance, series=series_identity))
    table = table_of(design_obj, site, ctx, targets, times)
    warnings = list(table.warnings)
    if rate_Hz is not None:
        from cage.sequence import check_slew, polarity_flip_warnings
        from cage.setpoints import flag_slew

        r_ohm, l_H = axis_circuits(design_obj, table.supplies, site.coil.ambient_temperature_C, where)
        check = check_slew(table.setpoint_A, 1.0 / rate_Hz, r_ohm, l_H, [s.max_voltage_V for s in table.supplies],
                           [s.max_current_A for s in table.supplies])
        table = flag_slew(table, check)
        if check.failing_steps:
            shown = ", ".join(table.labels[k] for k in check.failing_steps[:10])
            more = "" if len(check.failing_steps) <= 10 else f" and {len(check.failing_steps) - 10} more"
            warnings.append(f"{len(check.failing_steps)} of {len(table)} steps cannot be followed at "
                            f"{rate_Hz:g} Hz: {shown}{more}")
        warnings += polarity_flip_warnings(table, 1.0 / rate_Hz)
    warnings += list(extra_warnings)
    table = dataclasses.replace(table, warnings=tuple(warnings))
    return flag_rows(table) if rate_Hz is None else table
