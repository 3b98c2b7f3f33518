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
supply's limits are flagged, never clipped; an axis whose winding has no steady state (thermal
runaway, or hotter than the model's 250 C ceiling) is unreachable: its voltage, power and
temperature do not exist (NaN here, null in JSON, empty in CSV) and the row says why.
"""
from __future__ import annotations

import dataclasses
import datetime as _dt
import math
from dataclasses import dataclass

import numpy as np

from cage.coils import AXES
from cage.errors import InfeasibleError, InputError
from cage.supplies import Supply
from cage.wires import COPPER_TEMPERATURE_COEFFICIENT_PER_K, REFERENCE_TEMPERATURE_C

FIXED_LABELS = ("null", "+x", "-x", "+y", "-y", "+z", "-z")
DRIFT_THRESHOLD_NT = 10.0

# Above this the steady-temperature model is not an estimate any more: the highest common
# magnet-wire thermal classes are 220-240 C (IEC 60317 / NEMA MW 1000, common practice), so a
# winding computed hotter than this is reported as unreachable, with no temperature.
TEMPERATURE_MODEL_CEILING_C = 250.0


@dataclass(frozen=True, eq=False)
class SetpointTable:
    """A current table: one row per target field, columns per axis (x, y, z), as arrays.

    labels: (m,) row names (user text for user targets: escape before writing).
    target_cage_nT: (m, 3) target field, cage frame. current_A: (m, 3) exact solve.
    setpoint_A: (m, 3) signed current after rounding to the supply step; a unipolar supply is
    set to |setpoint_A| with its polarity switch at ``polarity_reverse``.
    rounding_error_nT: (m, 3) size of the field error rounding each axis leaves; field_error_nT:
    (m,) of all three. voltage_V, power_W, winding_temperature_C, voltage_headroom_V: (m, 3),
    NaN where the number does not exist (no wire or resistance in the design, or the axis is
    unreachable). current_headroom_A: (m, 3). reachable: (m, 3) False where the winding has
    no steady state below 250 C. axis_ok: (m, 3) inside every limit.
    problems: {row index: (x reasons, y reasons, z reasons)} for rows with a problem.
    t_s, dwell_s: (m,) start time and hold time of each row of a sequence, else None.
    """

    site: str
    date: _dt.date | None
    source: str  # "IGRF-14", "measured" or "calibration"
    ambient_cage_nT: tuple[float, float, float]
    coupling_nT_per_A: tuple[tuple[float, ...], ...]
    supplies: tuple[Supply, Supply, Supply]
    labels: tuple[str, ...]
    target_cage_nT: np.ndarray
    current_A: np.ndarray
    setpoint_A: np.ndarray
    rounding_error_nT: np.ndarray
    field_error_nT: np.ndarray
    voltage_V: np.ndarray
    power_W: np.ndarray
    winding_temperature_C: np.ndarray
    current_headroom_A: np.ndarray
    voltage_headroom_V: np.ndarray
    reachable: np.ndarray
    axis_ok: np.ndarray
    problems: dict
    t_s: np.ndarray | None = None
    dwell_s: np.ndarray | None = None
    warnings: tuple[str, ...] = ()
    provenance: object = None  # cage.provenance.Provenance, its warnings completed when written

    def provenance_record(self):
        """The provenance with every warning of the table, or None."""
        return None if self.provenance is None else self.provenance.with_warnings(self.warnings)

    def __len__(self) -> int:
        return len(self.labels)

    @property
    def within_limits(self) -> np.ndarray:
        """(m,) every axis of the row inside its limits (and reachable)."""
        return np.all(self.axis_ok, axis=1)

    @property
    def unipolar(self) -> np.ndarray:
        """(3,) True for an axis whose supply needs a polarity switch for negative currents."""
        return np.array([not s.bipolar for s in self.supplies])

    @property
    def polarity_reverse(self) -> np.ndarray:
        """(m, 3) True where a unipolar axis needs its polarity switch at REVERSE."""
        return self.unipolar[None, :] & (self.setpoint_A < 0)

    @property
    def supply_setpoint_A(self) -> np.ndarray:
        """(m, 3) the setpoint as the supply sees it: |I| on a unipolar axis, signed on a bipolar one."""
        return np.where(self.unipolar[None, :], np.abs(self.setpoint_A), self.setpoint_A)

    @property
    def total_power_W(self) -> np.ndarray:
        """(m,) sum of the three axes' power (NaN when any axis has none)."""
        return self.power_W.sum(axis=1)

    def polarity_words(self) -> np.ndarray:
        """(m, 3) "forward" / "reverse" on unipolar axes, "bipolar" on bipolar ones."""
        words = np.where(self.polarity_reverse, "reverse", "forward")
        return np.where(self.unipolar[None, :], words, "bipolar")

    def row_problems(self, k: int) -> list[str]:
        """The reasons row ``k`` is flagged, each as "axis: reason"."""
        per_axis = self.problems.get(int(k), ((), (), ()))
        return [f"{ax}: {p}" for ax, ps in zip(AXES, per_axis) for p in ps]


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
    with np.errstate(over="ignore", invalid="ignore"):
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


def rounded_setpoints_A(current_A: np.ndarray, resolution_A: float) -> np.ndarray:
    """Currents rounded to the nearest multiple of ``resolution_A`` (halves away from zero).

    The array form of :func:`cage.supplies.rounded_setpoint_A`.
    """
    with np.errstate(over="ignore", invalid="ignore"):
        steps = np.floor(np.abs(current_A) / resolution_A + 0.5)
        return np.copysign(np.round(steps * resolution_A, 12), current_A) * (steps != 0)


@dataclass(frozen=True)
class _AxisCircuit:
    """What does not depend on the current: per coil its resistance at 20 C and its cooling
    conductance h A (W/K); the leads at ambient. conductances None: no thermal model (the
    design gives the hot resistance directly, in resistances_20C_ohm)."""

    resistances_20C_ohm: tuple[float, ...]
    lead_resistance_ohm: float
    conductances_W_per_K: tuple[float, ...] | None
    ambient_temperature_C: float


def _axis_circuit(axis_design, ambient_temperature_C: float) -> _AxisCircuit | None:
    a = axis_design
    if a.wire is not None and a.frame_width_m is not None and a.frame_depth_m is not None:
        from cage.electrical import electrics_of, winding_heat_terms
        from cage.thermal import NATURAL_CONVECTION_W_PER_M2_K

        geometry = a.pair or a.coil_axis
        el = electrics_of(geometry, a.wire, 0.0,
                          lead_length_m=a.lead_length_m if a.lead_length_m is not None else 0.0,
                          frame_width_m=a.frame_width_m, frame_depth_m=a.frame_depth_m,
                          ambient_temperature_C=ambient_temperature_C)
        terms = winding_heat_terms(geometry, a.wire, a.frame_width_m, a.frame_depth_m)
        return _AxisCircuit(tuple(r for r, _ in terms), el.lead_resistance_ambient_ohm,
                            tuple(NATURAL_CONVECTION_W_PER_M2_K * area for _, area in terms), ambient_temperature_C)
    if a.resistance_hot_ohm is not None:
        return _AxisCircuit((float(a.resistance_hot_ohm),), 0.0, None, ambient_temperature_C)
    return None


@dataclass(frozen=True, eq=False)
class _AxisDriveArrays:
    voltage_V: np.ndarray  # NaN where unreachable
    power_W: np.ndarray
    winding_temperature_C: np.ndarray  # NaN where unreachable or no thermal model
    reachable: np.ndarray
    runaway: np.ndarray


def _axis_drive_arrays(circuit: _AxisCircuit, current_A: np.ndarray) -> _AxisDriveArrays:
    """Voltage, power and steady winding temperature of one axis at many currents.

    The closed form of :func:`cage.thermal.steady_winding_temperature`, over an array:
    slope q = alpha I^2 R20 / G; runaway for q >= 1, else T = T_a + I^2 R(T_a) / (G (1 - q)).
    """
    i = np.asarray(current_A, dtype=float)
    i2 = i * i
    m = i.shape
    if circuit.conductances_W_per_K is None:
        r_total = np.full(m, sum(circuit.resistances_20C_ohm))
        ok = np.ones(m, dtype=bool)
        runaway = np.zeros(m, dtype=bool)
        t = np.full(m, np.nan)
    else:
        alpha = COPPER_TEMPERATURE_COEFFICIENT_PER_K
        ta = circuit.ambient_temperature_C
        runaway = np.zeros(m, dtype=bool)
        t = np.full(m, -np.inf)
        r_total = np.full(m, circuit.lead_resistance_ohm)
        for r20, g in zip(circuit.resistances_20C_ohm, circuit.conductances_W_per_K):  # each coil
            r_amb = r20 * (1.0 + alpha * (ta - REFERENCE_TEMPERATURE_C))
            with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
                slope = alpha * i2 * r20 / g
                tk = ta + i2 * r_amb / (g * (1.0 - slope))
            runaway |= ~(slope < 1.0)
            t = np.maximum(t, np.where(slope < 1.0, tk, np.inf))  # the hottest coil
            r_total = r_total + r20 * (1.0 + alpha * (tk - REFERENCE_TEMPERATURE_C))
        ok = ~runaway & (t <= TEMPERATURE_MODEL_CEILING_C)
        t = np.where(ok, t, np.nan)
    with np.errstate(over="ignore", invalid="ignore"):
        voltage = np.where(ok, i * r_total, np.nan)
        power = np.where(ok, i2 * r_total, np.nan)
    return _AxisDriveArrays(voltage, power, t, ok, runaway)


def max_drivable_current_A(axis_design, supply: Supply, ambient_temperature_C: float,
                           max_winding_temperature_C: float | None = None, points: int = 4001) -> float:
    """The largest |current| (A) up to ``supply.max_current_A`` that the supply can drive
    through the axis at its steady operating temperature: voltage within ``max_voltage_V``,
    the winding reachable and (if given) not above ``max_winding_temperature_C``.

    Checked on ``points`` evenly spaced currents from 0; the answer is the last of the run
    from zero that passes (voltage grows with current, so the run is the whole answer).
    Without electrical data in the design the current limit alone is returned.
    """
    circuit = _axis_circuit(axis_design, ambient_temperature_C)
    if circuit is None:
        return float(supply.max_current_A)
    grid = np.linspace(0.0, supply.max_current_A, points)
    drive = _axis_drive_arrays(circuit, grid)
    good = drive.reachable & (np.abs(drive.voltage_V) <= supply.max_voltage_V)
    if max_winding_temperature_C is not None and circuit.conductances_W_per_K is not None:
        good &= drive.winding_temperature_C <= max_winding_temperature_C
    bad = np.flatnonzero(~good)
    last = points - 1 if bad.size == 0 else bad[0] - 1
    return float(grid[last]) if last >= 0 else 0.0


def _as_targets(targets) -> tuple[tuple[str, ...], np.ndarray]:
    if isinstance(targets, tuple) and len(targets) == 2 and isinstance(targets[1], np.ndarray):
        labels, arr = targets
        return tuple(labels), np.asarray(arr, dtype=float).reshape(-1, 3)
    targets = list(targets)
    labels = tuple(str(lab) for lab, _ in targets)
    arr = np.array([np.asarray(t, dtype=float) for _, t in targets], dtype=float).reshape(-1, 3)
    return labels, arr


def setpoint_table(design, ambient_cage_nT, supplies, targets, *, site: str = "", date=None, source: str = "",
                   coupling_nT_per_A=None, ambient_temperature_C: float = 22.0,
                   max_winding_temperature_C: float | None = None, warnings=(), t_s=None, dwell_s=None,
                   provenance=None) -> SetpointTable:
    """The current table for ``targets``: a list of (label, target_cage_nT (3,)), or a pair
    (labels, (m, 3) array).

    coupling_nT_per_A: defaults to the design's, at the centre. supplies: one per axis x, y, z.
    Everything is computed per axis over all rows at once: the solve, the rounding, the
    steady winding temperature (closed form of cage.thermal), voltage and power.
    """
    from cage.sequence import check_coupling_invertible

    k = design_coupling_nT_per_A(design) if coupling_nT_per_A is None else np.asarray(coupling_nT_per_A, float)
    ambient = np.asarray(ambient_cage_nT, dtype=float)
    labels, target = _as_targets(targets)
    m = len(labels)
    if not np.all(np.isfinite(k)):
        raise InfeasibleError("the cage's coupling matrix has a non-finite entry")
    check_coupling_invertible(k, 1e12)
    current = solve_currents_A(k, ambient, target) if m else np.zeros((0, 3))
    bad = np.flatnonzero(~np.all(np.isfinite(current), axis=1))
    if bad.size:
        raise InputError(f"row {labels[bad[0]]!r}: the currents for this target are not finite numbers "
                         "(target or calibration too large)")
    setpoint = np.column_stack([rounded_setpoints_A(current[:, j], s.resolution_A)
                                for j, s in enumerate(supplies)]) if m else np.zeros((0, 3))
    # Beyond about 1e300 A the step count overflows: such a current is far outside any
    # limit anyway, so it is kept unrounded (and flagged below).
    setpoint = np.where(np.isfinite(setpoint), setpoint, current)
    delta = setpoint - current
    with np.errstate(over="ignore", invalid="ignore"):
        per_axis_error = np.abs(delta) * np.linalg.norm(k, axis=0)[None, :]
        field_error = np.linalg.norm(delta @ k.T, axis=1)

    nan = np.full((m, 3), np.nan)
    voltage, power, temperature, v_head = nan.copy(), nan.copy(), nan.copy(), nan.copy()
    reachable = np.ones((m, 3), dtype=bool)
    axis_ok = np.ones((m, 3), dtype=bool)
    reasons: dict[int, list[list[str]]] = {}

    def flag(mask, j, text_of):
        for r in np.flatnonzero(mask):
            reasons.setdefault(int(r), [[], [], []])[j].append(text_of(int(r)))

    for j, (a, s) in enumerate(zip(design.axes, supplies)):
        i = setpoint[:, j]
        circuit = _axis_circuit(a, ambient_temperature_C)
        if circuit is not None:
            drive = _axis_drive_arrays(circuit, i)
            ok_t = drive.reachable
            if circuit.conductances_W_per_K is not None:
                t = drive.winding_temperature_C
                temperature[:, j] = t
                flag(drive.runaway, j, lambda r: "unreachable: winding thermal runaway (no steady temperature)")
                flag(~drive.runaway & ~ok_t, j, lambda r: f"unreachable: winding would pass "
                                                          f"{TEMPERATURE_MODEL_CEILING_C:g} C, beyond the model")
                if max_winding_temperature_C is not None:
                    hot = ok_t & (t > max_winding_temperature_C)
                    axis_ok[:, j] &= ~hot
                    flag(hot, j, lambda r: f"winding {temperature[r, j]:.0f} C over {max_winding_temperature_C:g} C")
            reachable[:, j] = ok_t
            axis_ok[:, j] &= ok_t
            voltage[:, j] = drive.voltage_V
            power[:, j] = drive.power_W
            v_head[:, j] = s.max_voltage_V - np.abs(voltage[:, j])
            over_v = v_head[:, j] < 0  # NaN compares False
            axis_ok[:, j] &= ~over_v
            flag(over_v, j, lambda r: f"|V| {abs(voltage[r, j]):.2f} V over {s.max_voltage_V:g} V")
        over_i = s.max_current_A - np.abs(i) < 0
        axis_ok[:, j] &= ~over_i
        flag(over_i, j, lambda r: f"|I| {abs(setpoint[r, j]):.3f} A over {s.max_current_A:g} A")
    return SetpointTable(
        site=site, date=date, source=source, ambient_cage_nT=tuple(float(v) for v in ambient),
        coupling_nT_per_A=tuple(tuple(float(v) for v in r) for r in k), supplies=tuple(supplies),
        labels=labels, target_cage_nT=target, current_A=current, setpoint_A=setpoint,
        rounding_error_nT=per_axis_error, field_error_nT=field_error, voltage_V=voltage, power_W=power,
        winding_temperature_C=temperature,
        current_headroom_A=np.array([s.max_current_A for s in supplies])[None, :] - np.abs(setpoint),
        voltage_headroom_V=v_head, reachable=reachable, axis_ok=axis_ok,
        problems={r: tuple(tuple(p) for p in v) for r, v in reasons.items()},
        t_s=None if t_s is None else np.asarray(t_s, dtype=float),
        dwell_s=None if dwell_s is None else np.broadcast_to(np.asarray(dwell_s, dtype=float), (m,)).copy(),
        warnings=tuple(warnings), provenance=provenance)


def _finite_or_none(value):
    v = float(value)
    return v if math.isfinite(v) else None


def table_to_dict(table: SetpointTable) -> dict:
    """The JSON document (``cage-setpoints``, version 1); full precision; ``null`` for numbers
    that do not exist (no electrical data, or an unreachable axis)."""
    def per_axis(arr):
        return {ax: _finite_or_none(v) for ax, v in zip(AXES, arr)}

    within = table.within_limits
    total = table.total_power_W
    polarity = table.polarity_words()
    reverse = table.polarity_reverse
    supply_sp = table.supply_setpoint_A
    rows = []
    for r in range(len(table)):
        reasons = table.problems.get(r, ((), (), ()))
        rows.append({
            "label": table.labels[r],
            "t_s": None if table.t_s is None else float(table.t_s[r]),
            "dwell_s": None if table.dwell_s is None else float(table.dwell_s[r]),
            "target_cage_nT": [float(v) for v in table.target_cage_nT[r]],
            "current_A": per_axis(table.current_A[r]),
            "setpoint_A": per_axis(table.setpoint_A[r]),
            "supply_setpoint_A": per_axis(supply_sp[r]),
            "polarity": dict(zip(AXES, (str(p) for p in polarity[r]))),
            "rounding_error_nT": per_axis(table.rounding_error_nT[r]),
            "voltage_V": per_axis(table.voltage_V[r]),
            "power_W": per_axis(table.power_W[r]),
            "current_headroom_A": per_axis(table.current_headroom_A[r]),
            "voltage_headroom_V": per_axis(table.voltage_headroom_V[r]),
            "winding_temperature_C": per_axis(table.winding_temperature_C[r]),
            "polarity_switch": dict(zip(AXES, (bool(v) for v in reverse[r]))),
            "reachable": dict(zip(AXES, (bool(v) for v in table.reachable[r]))),
            "problems": {ax: list(p) for ax, p in zip(AXES, reasons)},
            "total_power_W": _finite_or_none(total[r]),
            "field_error_nT": _finite_or_none(table.field_error_nT[r]),
            "within_limits": bool(within[r]),
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
    axis_ok = table.axis_ok.copy()
    problems = {r: [list(p) for p in v] for r, v in table.problems.items()}
    for k in check.failing_steps:
        for j in range(3):
            if check.voltage_over_limit[k, j]:
                axis_ok[k, j] = False
                problems.setdefault(k, [[], [], []])[j].append(
                    f"slew needs {check.required_voltage_V[k, j]:.1f} V over {table.supplies[j].max_voltage_V:g} V "
                    f"(L/R {check.time_constant_s[j] * 1000:.1f} ms)")
    return dataclasses.replace(table, axis_ok=axis_ok,
                               problems={r: tuple(tuple(p) for p in v) for r, v in problems.items()})


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
    if "null" not in now.labels:
        raise InputError("this table has no null row to compare")
    new_i = now.current_A[now.labels.index("null")]
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
        from cage.supplies import coarse_supply_warning

        coarse = coarse_supply_warning(axis, s.resolution_A, a.max_current_A, a.field_per_amp_nT)
        if coarse:
            out.append(coarse)
    return out

