"""Current tables: the signed current each axis's supply must give for a chosen field.

The field at the test-volume centre is B = B_ambient + K I, with K the cage's 3x3 coupling
matrix (nT per ampere; column j = field of axis j alone, from the exact field engine, or a
calibration's fitted matrix) and B_ambient the ambient field in the cage frame (model,
survey, or a calibration's fitted offset). For a target field T the currents are
I = K^-1 (T - B_ambient) -- the full 3x3 solve, so cross-coupling between axes is
cancelled, not ignored.

Each current is then rounded to the supply's resolution step; the field that rounding
leaves is K (I_set - I). Voltage and power are at the winding's steady operating
temperature at that current (cage.electrical), plus the leads at ambient. Rows outside a
supply's limits are flagged, never clipped.
"""
from __future__ import annotations

import dataclasses
import datetime as _dt
import math
from dataclasses import dataclass

import numpy as np

from cage.coils import AXES
from cage.errors import InfeasibleError, InputError
from cage.supplies import Supply, check_drive, rounded_setpoint_A

FIXED_LABELS = ("null", "+x", "-x", "+y", "-y", "+z", "-z")
DRIFT_THRESHOLD_NT = 10.0


@dataclass(frozen=True)
class AxisDrive:
    """One axis of one row: current, setpoint after rounding, and what the supply must give.

    voltage_V / power_W are None when the design file has neither the wire nor a resistance.
    rounding_error_nT: size of the field error that rounding this axis's current leaves.
    """

    current_A: float
    setpoint_A: float
    rounding_error_nT: float
    voltage_V: float | None
    power_W: float | None
    current_headroom_A: float
    voltage_headroom_V: float | None
    winding_temperature_C: float | None
    within_limits: bool
    polarity_switch: bool
    problems: tuple[str, ...] = ()


@dataclass(frozen=True)
class SetpointRow:
    label: str
    target_cage_nT: tuple[float, float, float]
    axes: tuple[AxisDrive, AxisDrive, AxisDrive]
    rounding_error_nT: float  # size of the whole field error left by rounding all three axes

    @property
    def total_power_W(self) -> float | None:
        powers = [a.power_W for a in self.axes]
        return None if any(p is None for p in powers) else float(sum(powers))

    @property
    def within_limits(self) -> bool:
        return all(a.within_limits for a in self.axes)

    @property
    def current_A(self) -> np.ndarray:
        return np.array([a.current_A for a in self.axes])

    @property
    def setpoint_A(self) -> np.ndarray:
        return np.array([a.setpoint_A for a in self.axes])


@dataclass(frozen=True)
class SetpointTable:
    site: str
    date: _dt.date
    source: str  # "IGRF-14", "measured" or "calibration"
    ambient_cage_nT: tuple[float, float, float]
    coupling_nT_per_A: tuple[tuple[float, ...], ...]
    supplies: tuple[Supply, Supply, Supply]
    rows: tuple[SetpointRow, ...]
    warnings: tuple[str, ...] = ()
    provenance: object = None  # cage.provenance.Provenance, its warnings completed when written

    def provenance_record(self):
        """The provenance with every warning of the table, or None."""
        return None if self.provenance is None else self.provenance.with_warnings(self.warnings)


def design_coupling_nT_per_A(design, point_m=(0.0, 0.0, 0.0)) -> np.ndarray:
    """3x3 coupling of a design at a point (cage frame), nT per ampere; column j = axis j."""
    from cage.uniformity import coupling_T_per_A

    if not design.all_pairs:
        from cage.coilaxis import axis_field_T

        p = np.asarray(point_m, dtype=float)
        return 1e9 * np.column_stack([axis_field_T(a.coil_axis, 1.0, p) for a in design.axes])
    return 1e9 * np.asarray(coupling_T_per_A(design.cage, point_m), dtype=float)


def solve_currents_A(coupling_nT_per_A, ambient_nT, target_nT) -> np.ndarray:
    """Currents (3,) or (m, 3) with ambient + K I = target; InfeasibleError if K is singular."""
    k = np.asarray(coupling_nT_per_A, dtype=float)
    if not np.all(np.isfinite(k)) or np.linalg.cond(k) > 1e12:
        raise InfeasibleError("the cage's coupling matrix is singular: its axes cannot set an arbitrary field")
    rhs = np.asarray(target_nT, dtype=float) - np.asarray(ambient_nT, dtype=float)
    return np.linalg.solve(k, rhs.T).T


def standard_targets(extra_field_nT) -> list[tuple[str, np.ndarray]]:
    """``null`` then +x, -x, +y, -y, +z, -z at the extra field of that axis, others nulled."""
    rows = [("null", np.zeros(3))]
    for j, axis in enumerate(AXES):
        for sign in (1.0, -1.0):
            t = np.zeros(3)
            t[j] = sign * float(extra_field_nT[j])
            rows.append((f"{'+' if sign > 0 else '-'}{axis}", t))
    return rows


def _axis_drive(axis_design, supply: Supply, current: float, setpoint: float, error_nT: float,
                ambient_temperature_C: float, max_winding_temperature_C: float | None) -> AxisDrive:
    """Voltage, power and limits of one axis at one current."""
    problems = []
    voltage = power = headroom_v = temperature = None
    ok = True
    a = axis_design
    if a.wire is not None and a.frame_width_m is not None and a.frame_depth_m is not None:
        from cage.electrical import electrics_of

        el = electrics_of(a.pair or a.coil_axis, a.wire, setpoint,
                            lead_length_m=a.lead_length_m if a.lead_length_m is not None else 0.0,
                            frame_width_m=a.frame_width_m, frame_depth_m=a.frame_depth_m,
                            ambient_temperature_C=ambient_temperature_C)
        drive = check_drive(supply, setpoint, el.resistance_hot_ohm, el.lead_resistance_ambient_ohm)
        voltage, power, headroom_v = drive.voltage_V, drive.power_W, drive.voltage_headroom_V
        temperature = el.winding_temperature_C
        if not el.temperature_converged:
            problems.append("winding thermal runaway")
            ok = False
        elif max_winding_temperature_C is not None and temperature > max_winding_temperature_C:
            problems.append(f"winding {temperature:.0f} C over {max_winding_temperature_C:g} C")
            ok = False
    elif a.resistance_hot_ohm is not None:
        drive = check_drive(supply, setpoint, a.resistance_hot_ohm, 0.0)
        voltage, power, headroom_v = drive.voltage_V, drive.power_W, drive.voltage_headroom_V
    headroom_i = supply.max_current_A - abs(setpoint)
    if headroom_i < 0:
        problems.append(f"|I| {abs(setpoint):.3f} A over {supply.max_current_A:g} A")
        ok = False
    if headroom_v is not None and headroom_v < 0:
        problems.append(f"|V| {abs(voltage):.2f} V over {supply.max_voltage_V:g} V")
        ok = False
    switch = (not supply.bipolar) and setpoint < 0
    return AxisDrive(current_A=float(current), setpoint_A=float(setpoint), rounding_error_nT=float(error_nT),
                     voltage_V=voltage, power_W=power, current_headroom_A=float(headroom_i),
                     voltage_headroom_V=headroom_v, winding_temperature_C=temperature, within_limits=ok,
                     polarity_switch=switch, problems=tuple(problems))


def setpoint_table(design, ambient_cage_nT, supplies, targets, *, site: str = "", date=None, source: str = "",
                   coupling_nT_per_A=None, ambient_temperature_C: float = 22.0,
                   max_winding_temperature_C: float | None = None, warnings=(), provenance=None) -> SetpointTable:
    """The current table for ``targets`` (a list of (label, target_cage_nT (3,))).

    coupling_nT_per_A: defaults to the design's, at the centre. supplies: one per axis x, y, z.
    """
    k = design_coupling_nT_per_A(design) if coupling_nT_per_A is None else np.asarray(coupling_nT_per_A, float)
    ambient = np.asarray(ambient_cage_nT, dtype=float)
    rows = []
    for label, target in targets:
        target = np.asarray(target, dtype=float)
        current = solve_currents_A(k, ambient, target)
        setpoint = np.array([rounded_setpoint_A(s, float(i)) for s, i in zip(supplies, current)])
        delta = setpoint - current
        per_axis_error = [float(np.linalg.norm(k[:, j] * delta[j])) for j in range(3)]
        axes = tuple(_axis_drive(design.axes[j], supplies[j], float(current[j]), float(setpoint[j]),
                                 per_axis_error[j], ambient_temperature_C, max_winding_temperature_C)
                     for j in range(3))
        rows.append(SetpointRow(label=label, target_cage_nT=tuple(float(v) for v in target), axes=axes,
                                rounding_error_nT=float(np.linalg.norm(k @ delta))))
    return SetpointTable(site=site, date=date, source=source, ambient_cage_nT=tuple(float(v) for v in ambient),
                         coupling_nT_per_A=tuple(tuple(float(v) for v in r) for r in k),
                         supplies=tuple(supplies), rows=tuple(rows), warnings=tuple(warnings), provenance=provenance)


def table_to_dict(table: SetpointTable) -> dict:
    """The JSON document (``cage-setpoints``, version 1); full precision."""
    def per_axis(values):
        return dict(zip(AXES, values))

    rows = []
    for r in table.rows:
        rows.append({
            "label": r.label,
            "target_cage_nT": list(r.target_cage_nT),
            "current_A": per_axis(a.current_A for a in r.axes),
            "setpoint_A": per_axis(a.setpoint_A for a in r.axes),
            "rounding_error_nT": per_axis(a.rounding_error_nT for a in r.axes),
            "voltage_V": per_axis(a.voltage_V for a in r.axes),
            "power_W": per_axis(a.power_W for a in r.axes),
            "current_headroom_A": per_axis(a.current_headroom_A for a in r.axes),
            "voltage_headroom_V": per_axis(a.voltage_headroom_V for a in r.axes),
            "winding_temperature_C": per_axis(a.winding_temperature_C for a in r.axes),
            "polarity_switch": per_axis(a.polarity_switch for a in r.axes),
            "problems": per_axis(list(a.problems) for a in r.axes),
            "total_power_W": r.total_power_W,
            "field_error_nT": r.rounding_error_nT,
            "within_limits": r.within_limits,
        })
    return {
        "format": "cage-setpoints",
        "version": 1,
        "site": table.site,
        "date": table.date.isoformat() if table.date is not None else None,
        "source": table.source,
        "ambient_cage_nT": list(table.ambient_cage_nT),
        "coupling_nT_per_A": [list(r) for r in table.coupling_nT_per_A],
        "supply_limits": {ax: {"name": s.name, "max_current_A": s.max_current_A, "max_voltage_V": s.max_voltage_V,
                               "resolution_A": s.resolution_A, "bipolar": s.bipolar}
                          for ax, s in zip(AXES, table.supplies)},
        "rows": rows,
        "warnings": list(table.warnings),
        **({} if table.provenance is None else {"provenance": table.provenance_record().as_dict()}),
    }


def flag_slew(table: SetpointTable, check) -> SetpointTable:
    """The table with the steps a :class:`cage.sequence.SlewCheck` found unreachable flagged
    (the axis's row entry marked outside limits, with the voltage the step needs)."""
    rows = list(table.rows)
    for k in check.failing_steps:
        axes = list(rows[k].axes)
        for j in range(3):
            if check.voltage_over_limit[k, j]:
                axes[j] = dataclasses.replace(axes[j], within_limits=False, problems=axes[j].problems + (
                    f"slew needs {check.required_voltage_V[k, j]:.1f} V over {table.supplies[j].max_voltage_V:g} V "
                    f"(L/R {check.time_constant_s[j] * 1000:.1f} ms)",))
        rows[k] = dataclasses.replace(rows[k], axes=tuple(axes))
    return dataclasses.replace(table, rows=tuple(rows))


# ----------------------------------------------------------------------------- drift

@dataclass(frozen=True)
class Drift:
    """How the null currents moved against an earlier table, and when to regenerate.

    change_A: null current now minus then, per axis. days_until_threshold_per_axis: days for
    the ambient field along each axis to move by the threshold at the model's secular
    variation; days_until_threshold: the same for the size of the vector change (inf if the
    field does not change).
    """

    previous_date: _dt.date | None
    change_A: tuple[float, float, float]
    change_field_nT: tuple[float, float, float]
    sv_cage_nT_per_year: tuple[float, float, float]
    threshold_nT: float
    days_until_threshold: float
    days_until_threshold_per_axis: tuple[float, float, float]


def days_until_drift(sv_cage_nT_per_year, threshold_nT: float = DRIFT_THRESHOLD_NT) -> float:
    """Days until the model's secular variation (nT/year, cage frame) moves the null by threshold_nT.

    |dB/dt| t = threshold, with the year as 365.25 days; infinite without secular variation.
    """
    rate = float(np.linalg.norm(np.asarray(sv_cage_nT_per_year, dtype=float)))
    return math.inf if rate == 0 else threshold_nT / rate * 365.25


def valid_until(date: _dt.date, sv_cage_nT_per_year, threshold_nT: float = DRIFT_THRESHOLD_NT) -> _dt.date | None:
    """The date by which the null drifts by threshold_nT from ``date``; None when it never does."""
    days = days_until_drift(sv_cage_nT_per_year, threshold_nT)
    if not math.isfinite(days) or days > 365.25 * 100:
        return None
    return date + _dt.timedelta(days=int(days))


def null_drift(now: SetpointTable, previous: dict, sv_cage_nT_per_year, threshold_nT: float = DRIFT_THRESHOLD_NT
               ) -> Drift:
    """Compare the null row of ``now`` with the null row of a previous table's JSON document."""
    try:
        old = next(r for r in previous["rows"] if r["label"] == "null")
        old_i = np.array([float(old["current_A"][a]) for a in AXES])
    except (KeyError, StopIteration, TypeError, ValueError):
        raise InputError("the previous table has no null row with current_A for x, y, z") from None
    new_i = next(r for r in now.rows if r.label == "null").current_A
    k = np.asarray(now.coupling_nT_per_A)
    change = new_i - old_i
    sv = np.asarray(sv_cage_nT_per_year, dtype=float)
    days = days_until_drift(sv, threshold_nT)
    per_axis = tuple(math.inf if v == 0 else threshold_nT / abs(v) * 365.25 for v in sv)
    prev_date = None
    if isinstance(previous.get("date"), str):
        try:
            prev_date = _dt.date.fromisoformat(previous["date"])
        except ValueError:
            prev_date = None
    return Drift(previous_date=prev_date, change_A=tuple(float(v) for v in change),
                 change_field_nT=tuple(float(v) for v in k @ change), sv_cage_nT_per_year=tuple(float(v) for v in sv),
                 threshold_nT=threshold_nT, days_until_threshold=days, days_until_threshold_per_axis=per_axis)


# ----------------------------------------------------------------------------- re-use checks

def reuse_warnings(design, supplies, room=None) -> list[str]:
    """Warnings when a design is used with another site's room or supplies."""
    out = []
    if room is not None:
        from cage.layout import FrameSpec, room_inner_m

        inner = room_inner_m(room)
        # The envelope from the pairs themselves (frames as recorded, else none), and the
        # recorded one if larger: an edited design file cannot hide its size.
        width = max((a.frame_width_m or 0.0) for a in design.axes)
        depth = max((a.frame_depth_m or 0.0) for a in design.axes)
        from cage.coillayout import design_envelope_m

        env = design_envelope_m(design, FrameSpec(width, depth, 0.0))
        recorded = np.asarray(design.envelope_m if design.envelope_m is not None else [], dtype=float)
        if recorded.shape == (3,):
            env = np.maximum(env, recorded)
        if np.any(env > inner + 1e-9):
            out.append("the cage (envelope " + " x ".join(f"{v:.2f}" for v in env) + " m) does not fit this site's "
                       "room less clearance (" + " x ".join(f"{v:.2f}" for v in inner) + " m)")
    for axis, a, s in zip(AXES, design.axes, supplies):
        if a.max_current_A is not None and a.max_current_A > s.max_current_A:
            out.append(f"axis {axis}: the design's full-range current {a.max_current_A:.3f} A is more than this "
                       f"supply's {s.max_current_A:g} A")
    return out
