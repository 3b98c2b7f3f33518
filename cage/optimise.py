"""The planner: choose shape, size, spacing, turns and wire for each axis of a cage.

Method (deterministic; everything is computed with the exact field engine and the
electrical model, no Taylor estimates):

1. Uniformity fixes the smallest size of each axis's pair. With the spacing at the flat
   optimum (or, with ``spacing="free"``, the spacing that minimises the deviation at each
   size), the largest relative deviation over the test box falls as the pair grows, so the
   smallest size meeting the tolerance is found by bisection on the exact field. Sizes in
   the search are frame lines; the winding sits on the channel floor inside its frame line
   (``cage.channel``), so the bisection is for the winding where it sits: the smallest frame
   line on which some winding meets the tolerance (a full channel), and the one on which
   every winding does (a thin pack); each wire and turn count is checked on its own winding.
2. Nesting: for each order of the axes (outermost first; only the site's ``axis_order`` when
   given, and then each pair is at least as wide as every pair inside it) and each allowed
   shape per axis,
   the innermost pair takes its smallest uniform size; each pair further out takes the
   smallest size that is both uniform and clears the frames of the pairs inside it
   (``cage.layout``). A smaller cage needs less power and copper for the same field, so the
   smallest nested sizes are taken first. Frame clearance is not monotone in size, so a
   slightly larger inner pair can let an outer pair shrink: for the three smallest
   candidates the two inner pairs are also tried 3-15 % above their smallest sizes
   (``INFLATIONS``), and every variant competes on the objective.
3. Windings: per axis, the field needed is |ambient component| + extra field. For each allowed
   wire, the turns range from the fewest that reach the field within the supply's current, to
   the most that fit the frame channel -- and, only when the user asks for a largest field
   step (``max_field_step_nT``), no more than keep the field step under it. Voltage at
   operating temperature and winding temperature fall as turns rise (the same ampere-turns
   through more copper), so the feasible turns are an interval found by bisection. Power at
   full range is least at the most turns; copper mass at the fewest. A larger supply only
   widens the interval, so it never gives a design with more power. The field step that
   results is reported, and the design notes a supply much larger than the axis needs.
   Sizes and turns are searched jointly: where the step limit caps the turns, each pair is
   also tried at the larger sizes where one more turn is allowed, while that turn pays
   (``axis_size_options``).
4. Objective over all candidates: least total power at full range (default), least copper
   mass, or least envelope volume ("size"); ties go to the smaller envelope, then the order
   of enumeration, so the same site always gives the same design.

When nothing is feasible, :class:`cage.errors.InfeasibleError` names the binding constraint
in numbers.
"""
from __future__ import annotations

import dataclasses
import itertools
import math
from dataclasses import dataclass, field

import numpy as np

from cage.coils import AXES, CoilCage, CoilPair, flat_spacing_m
from cage.errors import InfeasibleError, InputError
from cage.layout import FrameSpec, Layout, check_layout, pair_extent_m, room_inner_m, smallest_nesting_size_m
from cage.supplies import DriveCheck, Supply, check_drive, field_step_nT, supply_for_axis, validate_supply

OBJECTIVES = ("power", "mass", "size")
SPACINGS = ("flat", "free")
WINDING_POSITION = ("on the channel floor (the frame's inner face), layers outward, turns centred across "
                    "the channel; side_m/radius_m is the winding's mean line, frame_size_m the frame line")
LARGE_SUPPLY_FRACTION = 0.25  # full range below this share of the supply's current: say so
UNIFORMITY_GRID = 9
SIZE_PRECISION = 2e-4  # relative, bisection on the uniform size
MAX_SIZE_M = 50.0
# Sizes are found for 99 % of the tolerance: the real winding pack (a grid of filaments over
# the frame channel) differs from the one-filament model by up to a few 1e-4 of the field,
# which can move the deviation by about that much of itself.
UNIFORMITY_MARGIN = 0.99
REFINED_CANDIDATES = 3
PACK_GRID_COILS = 7  # points per test-box edge for the pack difference of three- and four-coil axes
MAX_STEP_UPS = 12  # one-more-turn sizes tried per wire and axis
INFLATIONS = ((1.03, 1.0), (1.06, 1.0), (1.1, 1.0), (1.15, 1.0), (1.0, 1.04), (1.0, 1.08), (1.06, 1.04),
              (1.1, 1.08))


@dataclass(frozen=True)
class PlanInputs:
    """Everything the planner needs, SI units, cage frame.

    needed_field_nT: per axis, |ambient component| + extra field (the full-range field).
    supplies: the channel driving x, y, z.
    """

    test_volume_m: tuple[float, float, float]
    uniformity: float
    ambient_cage_nT: tuple[float, float, float]
    extra_field_nT: tuple[float, float, float]
    shapes: tuple[str, ...]
    wires: tuple[str, ...]
    supplies: tuple[Supply, Supply, Supply]
    frame: FrameSpec
    room: object | None = None
    lead_length_m: float = 6.0
    ambient_temperature_C: float = 22.0
    max_winding_temperature_C: float = 60.0
    axis_order: tuple[str, str, str] | None = None
    spacing: str = "flat"
    minimise: str = "power"
    max_field_step_nT: float | None = None
    systems: tuple[str, ...] = ("pair",)  # coil systems allowed per axis (cage.coilsystems.SYSTEMS)

    @property
    def needed_field_nT(self) -> np.ndarray:
        return np.abs(np.array(self.ambient_cage_nT)) + np.array(self.extra_field_nT)


@dataclass(frozen=True)
class AxisPlan:
    """One axis of a planned cage at its full-range current.

    pair: the winding's pair, or None when the axis is another coil system; coil_axis: then its
    coils (``cage.coilaxis.CoilAxis``, winding centrelines; cage.systemplan)."""

    pair: CoilPair | None
    wire: str
    electrics: object  # cage.electrical.AxisElectrics at the full-range current
    supply: Supply
    drive: DriveCheck
    needed_field_nT: float
    full_current_A: float
    field_per_amp_nT: float
    field_step_nT: float
    uniformity_reached: float
    min_uniform_size_m: float  # smallest frame-line size meeting the tolerance with the thinnest pack
    frame_pair: CoilPair | None = None  # the frame line (cage.channel); pair is the winding's mean line
    coil_axis: object | None = None  # cage.coilaxis.CoilAxis when the axis is not a pair

    @property
    def axis_name(self) -> str:
        return self.pair.axis if self.pair is not None else self.coil_axis.axis

    @property
    def geometry(self):
        """The pair, or the coils of any other system (for ``electrical.electrics_of`` and the field)."""
        return self.pair if self.pair is not None else self.coil_axis


@dataclass(frozen=True)
class Plan:
    axes: tuple[AxisPlan, AxisPlan, AxisPlan]
    layout: Layout
    order: tuple[str, str, str]
    minimise: str
    spacing: str
    total_power_W: float
    copper_mass_kg: float
    warnings: tuple[str, ...] = field(default_factory=tuple)
    packs: tuple = ()
    notes: tuple[str, ...] = ()  # plain statements for the summary (order given, supply larger than needed)  # cage.coils.PackDifference per axis: the real winding pack against one filament

    @property
    def cage(self) -> CoilCage:
        """The windings' mean lines: the field model."""
        return CoilCage(*(a.pair for a in self.axes))

    @property
    def frame_cage(self) -> CoilCage:
        """The frame lines the layout's frame solids are built on (cage.channel)."""
        return CoilCage(*(a.frame_pair or a.pair for a in self.axes))

    @property
    def axis_cage(self):
        """Every coil of the three axes (``cage.coilaxis.AxisCage``), pairs or not."""
        from cage.coilaxis import AxisCage, axis_from_pair

        return AxisCage(*(a.coil_axis if a.pair is None else axis_from_pair(a.pair) for a in self.axes))

    def axis(self, name: str) -> AxisPlan:
        return self.axes[AXES.index(name)]


# ----------------------------------------------------------------------------- inputs

def plan_inputs_from_site(site, ambient_cage_nT, *, shape: str | None = None, minimise: str = "power",
                          spacing: str = "flat", max_field_step_nT: float | None = None,
                          systems: str | None = None) -> PlanInputs:
    """Planner inputs from a :class:`cage.sitefile.Site` and the ambient field in force (cage frame, nT)."""
    from cage.wires import wire_from_name

    where = site.source or "site"
    if minimise not in OBJECTIVES:
        raise InputError(f"--minimise must be one of {', '.join(OBJECTIVES)}, got {minimise!r}")
    if spacing not in SPACINGS:
        raise InputError(f"--spacing must be one of {', '.join(SPACINGS)}, got {spacing!r}")
    req = site.requirement
    chosen = shape or req.shape
    if chosen not in ("square", "round", "either"):
        raise InputError(f"--shape must be square, round or either, got {chosen!r}")
    shapes = ("square", "round") if chosen == "either" else (chosen,)
    if not site.supplies:
        raise InputError(f"{where}: no [[supply]] table; the planner needs the supplies that drive the axes")
    for i, s in enumerate(site.supplies):
        validate_supply(s, f"{where}: supply[{i}] (axis {s.axis})")
    try:
        supplies = tuple(supply_for_axis(site.supplies, a) for a in AXES)
    except InputError as exc:
        raise InputError(f"{where}: {exc}") from None
    wires = []
    for name in site.coil.wires:
        try:
            wires.append(wire_from_name(name).name)
        except InputError as exc:
            raise InputError(f"{where}: coil.wires: {exc}") from None
    if max_field_step_nT is not None and not (math.isfinite(max_field_step_nT) and max_field_step_nT > 0):
        raise InputError(f"--max-field-step-nT must be a positive number, got {max_field_step_nT!r}")
    if max_field_step_nT is None:
        max_field_step_nT = getattr(req, "max_field_step_nT", None)
    if systems is None:
        chosen_systems = tuple(getattr(req, "systems", ("pair",)))
    else:
        from cage.sitefile import parse_systems

        chosen_systems = parse_systems(systems, "--system")
    coil = site.coil
    return PlanInputs(
        test_volume_m=tuple(req.test_volume_m),
        uniformity=req.uniformity,
        ambient_cage_nT=tuple(float(v) for v in ambient_cage_nT),
        extra_field_nT=tuple(1000.0 * v for v in req.extra_field_uT),
        shapes=shapes,
        wires=tuple(dict.fromkeys(wires)),
        supplies=supplies,
        frame=FrameSpec(coil.frame_width_m, coil.frame_depth_m, coil.frame_gap_m),
        room=site.room,
        lead_length_m=coil.lead_length_m,
        ambient_temperature_C=coil.ambient_temperature_C,
        max_winding_temperature_C=coil.max_winding_temperature_C,
        axis_order=coil.axis_order,
        spacing=spacing,
        minimise=minimise,
        max_field_step_nT=max_field_step_nT,
        systems=chosen_systems,
    )


# ----------------------------------------------------------------------------- uniformity

def _box_for_axis(test_volume_m) -> np.ndarray:
    return np.asarray(test_volume_m, dtype=float)


def _deviation(axis: str, shape: str, size_m: float, ratio: float, box: np.ndarray) -> float:
    from cage.uniformity import box_deviation

    pair = CoilPair(axis, shape, size_m, ratio * size_m, 1)
    return box_deviation(pair, box, n_per_edge=UNIFORMITY_GRID)


def _box_clear_size_m(axis: str, shape: str, ratio: float, box: np.ndarray) -> float:
    """Smallest size whose wires stay outside the test box (any smaller is meaningless)."""
    a = AXES.index(axis)
    half = box / 2.0
    lateral = max(half[(a + 1) % 3], half[(a + 2) % 3])
    # square: half side > lateral half-extent (the box fits through the coil aperture);
    # round: radius > the box's transverse half-diagonal.
    if shape == "square":
        need = 2.0 * lateral
    else:
        need = math.hypot(half[(a + 1) % 3], half[(a + 2) % 3])
    # The coil planes must also lie outside the box along the axis: ratio x size / 2 > half[a].
    return max(need, 2.0 * half[a] / ratio) * 1.001


def _best_ratio(axis: str, shape: str, size_m: float, box: np.ndarray) -> tuple[float, float]:
    """Spacing/size that minimises the box deviation at this size (free spacing)."""
    from scipy.optimize import minimize_scalar

    flat = flat_spacing_m(shape, 1.0)
    lo = max(0.5 * flat, 1.0001 * box[AXES.index(axis)] / size_m)
    hi = 1.6 * flat
    if lo >= hi:
        return flat, math.inf
    res = minimize_scalar(lambda r: _deviation(axis, shape, size_m, r, box), bounds=(lo, hi),
                          method="bounded", options={"xatol": 1e-4})
    return float(res.x), float(res.fun)


def min_uniform_size_m(axis: str, shape: str, test_volume_m, tolerance: float,
                       spacing: str = "flat", inset_m: float = 0.0, every: bool = True) -> tuple[float, float]:
    """Smallest pair size (side or radius, m) meeting ``tolerance`` over the test box, and the
    spacing/size ratio used. Bisection on the exact field; raises InfeasibleError beyond 50 m.

    inset_m: with a frame line of size s, the winding's mean line lies between s - inset_m (a
    thin pack on the channel floor) and s (a full channel), see cage.channel; the size returned
    is then the frame line's where every winding between those two (``every``) or the better of
    the two extremes (not ``every``: a lower bound) meets the tolerance; the spacing is
    ratio x (s - inset_m / 2)."""
    return _min_uniform_size_cached(axis, shape, tuple(float(v) for v in test_volume_m), float(tolerance),
                                    spacing, float(inset_m), bool(every))


def _uniform_key(axis: str, test_volume_m) -> tuple:
    """The test box seen from the pair's axis: along it, then the two across it (sorted: the
    square and the circle are symmetric under swapping them)."""
    a = AXES.index(axis)
    return (test_volume_m[a],) + tuple(sorted((test_volume_m[(a + 1) % 3], test_volume_m[(a + 2) % 3])))


_UNIFORM_CACHE: dict = {}


def _min_uniform_size_cached(axis, shape, test_volume_m, tolerance, spacing, inset_m, every):
    # the same bisection for every axis that sees the same box (a cube test volume: all three)
    key = (shape, _uniform_key(axis, test_volume_m), tolerance, spacing, inset_m, every)
    if key not in _UNIFORM_CACHE:
        if len(_UNIFORM_CACHE) > 4096:
            _UNIFORM_CACHE.clear()
        _UNIFORM_CACHE[key] = _min_uniform_size(axis, shape, test_volume_m, tolerance, spacing, inset_m, every)
    return _UNIFORM_CACHE[key]


def _min_uniform_size(axis, shape, test_volume_m, tolerance, spacing, inset_m, every):
    box = _box_for_axis(test_volume_m)
    flat = flat_spacing_m(shape, 1.0)
    half = inset_m / 2.0

    def dev(size: float) -> tuple[float, float]:
        mid, thin = size - half, size - inset_m
        if spacing == "free":
            ratio, _ = _best_ratio(axis, shape, mid, box)
        else:
            ratio = flat
        gap = ratio * mid  # the spacing
        if thin <= 0.0 or thin <= _box_clear_size_m(axis, shape, gap / thin, box):
            return math.inf, ratio
        if inset_m == 0.0:
            return _deviation(axis, shape, size, ratio, box), ratio
        pick = max if every else min
        return pick(_deviation(axis, shape, thin, gap / thin, box), _deviation(axis, shape, size, gap / size, box)), ratio

    lo = _box_clear_size_m(axis, shape, flat if spacing == "flat" else 0.5 * flat, box) + inset_m
    hi = lo
    d, ratio = dev(hi)
    while d > tolerance:
        lo, hi = hi, hi * 1.25
        if hi > MAX_SIZE_M:
            raise InfeasibleError(
                f"no {shape} {axis} pair up to {MAX_SIZE_M:g} m gives {_pct(tolerance)} uniformity over the "
                f"{_box(test_volume_m)} test volume")
        d, ratio = dev(hi)
    while hi - lo > SIZE_PRECISION * hi:
        mid = 0.5 * (lo + hi)
        dm, rm = dev(mid)
        if dm <= tolerance:
            hi, ratio = mid, rm
        else:
            lo = mid
    return hi, ratio


# ----------------------------------------------------------------------------- windings

@dataclass(frozen=True)
class _WindingResult:
    plan: AxisPlan | None
    reason: str
    badness: float  # how far the closest try missed (1 = at the limit)


def centre_field_per_ampere_turn_T(shape: str, size_m: float, spacing_m: float) -> float:
    """Axial field at the centre of a pair (T per ampere-turn of each coil), closed form.

    Round loop of radius R at axial distance z: B = mu0 R^2 / (2 (R^2 + z^2)^(3/2)) per
    ampere (Jackson, Classical Electrodynamics, 3rd ed., section 5.5). Square loop of half
    side h at axial distance z: B = 2 mu0 h^2 / (pi (h^2 + z^2) sqrt(2 h^2 + z^2)) per ampere
    (Biot-Savart of four straight sides; e.g. Misakian, J. Res. NIST 105, 557 (2000)). A pair:
    twice that at z = spacing / 2.
    """
    mu0 = 4e-7 * math.pi
    z = spacing_m / 2.0
    if shape == "round":
        r2 = size_m * size_m
        return 2.0 * mu0 * r2 / (2.0 * (r2 + z * z) ** 1.5)
    h2 = (size_m / 2.0) ** 2
    return 2.0 * 2.0 * mu0 * h2 / (math.pi * (h2 + z * z) * math.sqrt(2.0 * h2 + z * z))


def _field_per_amp_per_turn_T(pair: CoilPair) -> float:
    return centre_field_per_ampere_turn_T(pair.shape, pair.size_m, pair.spacing_m)


def _turns_for_step(max_step_nT: float, k1_T: float, resolution_A: float) -> int:
    """Most turns per coil that keep the field step (supply step x field per ampere) under max_step_nT."""
    return math.floor(max_step_nT * 1e-9 / (k1_T * resolution_A) * (1 + 1e-12))


def _wire_label(inp: PlanInputs) -> str:
    return f"{inp.frame.width_m * 1000:g} x {inp.frame.depth_m * 1000:g} mm frame channel"


def fewest_feasible(evaluate, lo: int, hi: int, at_hi):
    """Bisection for the fewest turns (or turns multiplier) in (lo, hi] whose ``evaluate(n)`` is
    feasible (its item 4 true), given ``at_hi = evaluate(hi)`` feasible: voltage and temperature
    fall as turns rise, so feasibility is monotone. Returns that evaluation."""
    chosen = at_hi
    while hi - lo > 1:
        mid = (lo + hi) // 2
        trial = evaluate(mid)
        if trial[4]:
            hi, chosen = mid, trial
        else:
            lo = mid
    return chosen


def choose_winding(axis: str, geometry: CoilPair, inp: PlanInputs, min_uniform_size: float) -> _WindingResult:
    """Best wire and turns for one axis whose frame line is ``geometry`` (shape, size, spacing;
    see module docstring). The winding sits on the channel floor (``cage.channel``): its mean
    line, which the field model uses, is inside the frame line by the unfilled channel depth."""
    from cage.channel import winding_pair
    from cage.electrical import axis_electrics, max_turns
    from cage.uniformity import box_deviation

    a = AXES.index(axis)
    supply = inp.supplies[a]
    need_nT = float(inp.needed_field_nT[a])
    need_T = need_nT * 1e-9

    deviations: dict = {}

    def uniform_ok(pair: CoilPair) -> bool:
        key = (pair.size_m, pair.spacing_m)
        if key not in deviations:
            deviations[key] = box_deviation(CoilPair(axis, pair.shape, pair.size_m, pair.spacing_m, 1),
                                            inp.test_volume_m, n_per_edge=UNIFORMITY_GRID)
        return deviations[key] <= inp.uniformity * UNIFORMITY_MARGIN

    def winding(wire: str, n: int) -> tuple[CoilPair, float]:
        pair = winding_pair(geometry, wire, n, inp.frame.width_m, inp.frame.depth_m)
        return pair, _field_per_amp_per_turn_T(pair)
    best: AxisPlan | None = None
    best_key = None
    closest: tuple[float, str] | None = None

    def miss(badness: float, text: str) -> None:
        nonlocal closest
        if closest is None or badness < closest[0]:
            closest = (badness, text)

    for wire in inp.wires:
        n_fit = max_turns(wire, inp.frame.width_m, inp.frame.depth_m)
        if n_fit < 1:
            miss(math.inf, f"the {axis} axis: {wire} does not fit the {_wire_label(inp)}")
            continue
        # The pack's depth moves its mean line a little with the turns: start from the thinnest
        # pack's field per ampere-turn (the largest) and step to the exact counts.
        k1 = winding(wire, 1)[1]
        n_cur = max(1, math.ceil(need_T / (k1 * supply.max_current_A) - 1e-9))
        while n_cur <= n_fit and need_T > winding(wire, n_cur)[1] * n_cur * supply.max_current_A * (1 + 1e-12):
            n_cur += 1
        n_hi = n_fit
        if inp.max_field_step_nT is not None:
            n_res = min(n_fit, _turns_for_step(inp.max_field_step_nT, k1, supply.resolution_A))
            while n_res >= 1 and winding(wire, n_res)[1] * n_res * supply.resolution_A * 1e9 \
                    > inp.max_field_step_nT * (1 + 1e-12):
                n_res -= 1
            n_hi = min(n_fit, n_res)
        if n_cur > n_fit:
            miss(n_cur / max(n_fit, 1),
                 f"the {axis} axis needs {need_nT / 1000:.1f} uT; within the supply's "
                 f"{supply.max_current_A:g} A that takes at least {n_cur} turns of {wire} per coil "
                 f"on a {geometry.size_m:.3f} m {_size_name(geometry.shape)}, but only {n_fit} fit the "
                 f"{_wire_label(inp)}")
            continue
        if n_cur > n_hi:
            miss(1.0 + (n_cur - n_hi) / max(n_hi, 1),
                 f"the {axis} axis needs {need_nT / 1000:.1f} uT; reaching it within the supply's "
                 f"{supply.max_current_A:g} A takes {n_cur} turns of {wire}, too many to keep the field step "
                 f"under {inp.max_field_step_nT:g} nT with the supply's {supply.resolution_A:g} A step "
                 f"(at most {n_hi})")
            continue

        def evaluate(n: int):
            pair, k1n = winding(wire, n)
            current = need_T / (k1n * n)
            el = axis_electrics(pair, wire, current, lead_length_m=inp.lead_length_m,
                                frame_width_m=inp.frame.width_m, frame_depth_m=inp.frame.depth_m,
                                ambient_temperature_C=inp.ambient_temperature_C)
            drive = check_drive(supply, current, el.resistance_hot_ohm, el.lead_resistance_ambient_ohm)
            hot_ok = el.temperature_converged and el.winding_temperature_C <= inp.max_winding_temperature_C
            ok = drive.within_limits and hot_ok and uniform_ok(pair)
            return pair, current, el, drive, ok

        top = evaluate(n_hi)
        if not top[4]:
            pair_top, current, el, drive, _ = top
            if drive.within_limits and not uniform_ok(pair_top):
                dev = deviations[(pair_top.size_m, pair_top.spacing_m)]
                miss(1.0 + dev / inp.uniformity,
                     f"the {axis} axis: {n_hi} turns of {wire} on the channel floor of a {geometry.size_m:.3f} m "
                     f"{_size_name(geometry.shape)} frame wind a {pair_top.size_m:.3f} m coil, which gives "
                     f"{dev * 100:.4f} % over the test volume, more than {inp.uniformity * UNIFORMITY_MARGIN * 100:.4g} %")
                continue
            if not el.temperature_converged or el.winding_temperature_C > inp.max_winding_temperature_C:
                rise = inp.max_winding_temperature_C - inp.ambient_temperature_C
                t = el.winding_temperature_C
                badness = math.inf if not math.isfinite(t) else 1.0 + (t - inp.max_winding_temperature_C) / rise
                hot = "would run away thermally" if not math.isfinite(t) else f"would reach {t:.0f} C"
                text = (f"the {axis} axis needs {need_nT / 1000:.1f} uT; with {n_hi} turns of {wire} "
                        f"(the most allowed) at {current:.4g} A the winding {hot}, over the "
                        f"{inp.max_winding_temperature_C:g} C limit")
            else:
                badness = abs(drive.voltage_V) / supply.max_voltage_V
                text = (f"the {axis} axis needs {need_nT / 1000:.1f} uT; with {n_hi} turns of {wire} "
                        f"(the most allowed) that takes {current:.4g} A at {abs(drive.voltage_V):.3g} V "
                        f"with the winding at {el.winding_temperature_C:.0f} C, more than the supply's "
                        f"{supply.max_voltage_V:g} V")
            miss(badness, text)
            continue
        if inp.minimise == "mass":
            chosen = fewest_feasible(evaluate, n_cur - 1, n_hi, top)  # hi feasible; the fewest feasible turns
        else:
            chosen = top
        pair, current, el, drive, _ = chosen
        key = (el.copper_mass_kg, drive.power_W) if inp.minimise == "mass" else (drive.power_W, el.copper_mass_kg)
        if best_key is None or key < best_key:
            k1_nT = _field_per_amp_per_turn_T(pair) * pair.turns * 1e9
            best_key = key
            best = AxisPlan(
                pair=pair, wire=wire, electrics=el, supply=supply, drive=drive, needed_field_nT=need_nT,
                full_current_A=current, field_per_amp_nT=k1_nT, field_step_nT=field_step_nT(supply, k1_nT),
                uniformity_reached=box_deviation(pair, inp.test_volume_m, n_per_edge=UNIFORMITY_GRID),
                min_uniform_size_m=min_uniform_size, frame_pair=geometry,
            )
    if best is not None:
        return _WindingResult(best, "", 0.0)
    if not inp.wires:
        return _WindingResult(None, "no wires are allowed (coil.wires is empty)", math.inf)
    if closest is None:
        return _WindingResult(None, f"the {axis} axis: no allowed wire fits the {_wire_label(inp)}", math.inf)
    return _WindingResult(None, closest[1], closest[0])


# ----------------------------------------------------------------------------- the search

def _pct(tolerance: float) -> str:
    return f"{tolerance * 100:g} %"


def _box(test_volume_m) -> str:
    return " x ".join(f"{v:g}" for v in test_volume_m) + " m"


def _size_name(shape: str) -> str:
    return "side" if shape == "square" else "radius"


def axis_size_options(axis: str, shape: str, lower_m: float, ratio: float, inp: PlanInputs,
                      every_winding_m: float | None = None) -> tuple[float, ...]:
    """Sizes (side or radius, m) worth trying for one pair, from ``lower_m`` (its smallest uniform
    size that clears the pairs inside it) upward: ``lower_m`` itself, and the sizes where the
    field-step limit lets one more turn of an allowed wire in, for as long as that turn pays.

    The centre field per ampere-turn k (closed form) falls as the pair grows, so the turns a
    field step allows, floor(step / (k x supply step)), grow with the size; the size where n
    turns become allowed is found by bisection on the winding where it sits (cage.channel). At
    equal field the current goes as 1 / (k n) and the resistance as n x perimeter, so the power
    goes as perimeter / (k^2 n): a larger pair with one more turn pays while that falls. Sizes where the field first becomes reachable within
    the supply's current and the step limit are kept too. Only the step limit makes turns grow
    with size; without it (or for the mass and size objectives) the smallest size is best.

    This is the per-axis candidate generator: a further dimension of choice per axis (another
    coil system beside square and round pairs) plugs in here and in ``choose_winding``.

    every_winding_m: the smallest frame line on which a winding of any depth meets the
    uniformity (a thin pack sits further in, cage.channel); tried too when above lower_m.
    """
    base = (lower_m,) if every_winding_m is None or every_winding_m <= lower_m else (lower_m, every_winding_m)
    if inp.max_field_step_nT is None or inp.minimise != "power":
        return base
    from cage.channel import inset_m, pack_depth_m
    from cage.electrical import max_turns

    a = AXES.index(axis)
    supply = inp.supplies[a]
    need_T = float(inp.needed_field_nT[a]) * 1e-9
    step_T = inp.max_field_step_nT * 1e-9
    width, depth = inp.frame.width_m, inp.frame.depth_m
    inset0 = inset_m(shape, depth, 0.0)

    def k_of(f: float, wire: str, n: int) -> tuple[float, float]:
        """Winding size and centre field per ampere-turn on a frame line of size f (cage.channel)."""
        w = f - inset_m(shape, depth, pack_depth_m(wire, n, width))
        return w, centre_field_per_ampere_turn_T(shape, w, ratio * (f - inset0 / 2.0))

    def step_ok(f, wire, n):
        return k_of(f, wire, n)[1] * n * supply.resolution_A <= step_T * (1 + 1e-12)

    def cost(f, wire, n):  # power at equal field: perimeter / (k^2 n), up to a constant
        w, k = k_of(f, wire, n)
        return (4.0 * w if shape == "square" else 2.0 * math.pi * w) / (k * k * n)

    out = set(base)
    for wire in inp.wires:
        n_fit = max_turns(wire, width, depth)
        if n_fit < 1:
            continue
        n0 = min(n_fit, _turns_for_step(inp.max_field_step_nT, k_of(lower_m, wire, 1)[1], supply.resolution_A))
        while n0 < n_fit and step_ok(lower_m, wire, n0 + 1):
            n0 += 1
        while n0 >= 1 and not step_ok(lower_m, wire, n0):
            n0 -= 1
        reachable = n0 >= 1 and need_T <= k_of(lower_m, wire, n0)[1] * n0 * supply.max_current_A
        best = cost(lower_m, wire, n0) if reachable else math.inf
        for n in range(max(n0, 0) + 1, min(n_fit, max(n0, 0) + MAX_STEP_UPS) + 1):
            hi = lower_m * 1.05
            while not step_ok(hi, wire, n):
                hi *= 1.05
                if hi > MAX_SIZE_M:
                    break
            if hi > MAX_SIZE_M:
                break
            lo = lower_m
            while hi - lo > 1e-6 * hi:
                mid = 0.5 * (lo + hi)
                lo, hi = (lo, mid) if step_ok(mid, wire, n) else (mid, hi)
            if need_T > k_of(hi, wire, n)[1] * n * supply.max_current_A:
                continue  # the field is still out of reach at this size
            c = cost(hi, wire, n)
            if c >= best:
                break
            out.add(hi)
            best = c
    return tuple(sorted(out))


def plan_cage(inp: PlanInputs) -> Plan:
    """The best cage for the inputs, or InfeasibleError naming the binding constraint. With coil
    systems other than the pair allowed (``inp.systems``), ``cage.systemplan.plan_with_systems``."""
    if tuple(inp.systems) != ("pair",):
        from cage.systemplan import plan_with_systems

        return plan_with_systems(inp)
    return _plan_pairs(inp)


def _plan_pairs(inp: PlanInputs, finish: bool = True) -> Plan:
    """The best cage of three pairs (the method in the module docstring); ``finish=False``: without
    the winding-pack differences, warnings and notes (``finish_plan``)."""
    if inp.minimise not in OBJECTIVES:
        raise InputError(f"minimise must be one of {', '.join(OBJECTIVES)}, got {inp.minimise!r}")
    frame = inp.frame
    inner_room = None if inp.room is None else room_inner_m(inp.room)

    # 1. Smallest uniform size per axis and shape.
    uniform: dict[tuple[str, str], tuple[float, float]] = {}
    # Sizes here are frame lines; the winding's mean line is inside it by at most the channel
    # depth (a thin pack on the channel floor, cage.channel): the frame line is planned so that
    # even the thinnest winding meets the tolerance, at its own flat (or free) spacing.
    from cage.channel import inset_m

    inset = {shape: inset_m(shape, frame.depth_m, 0.0) for shape in inp.shapes}
    safe: dict[tuple[str, str], float] = {}
    for axis in AXES:
        for shape in inp.shapes:
            tol = inp.uniformity * UNIFORMITY_MARGIN
            uniform[(axis, shape)] = min_uniform_size_m(axis, shape, inp.test_volume_m, tol, inp.spacing,
                                                        inset[shape], every=False)
            safe[(axis, shape)] = min_uniform_size_m(axis, shape, inp.test_volume_m, tol, inp.spacing,
                                                     inset[shape], every=True)[0]

    def frame_line(axis: str, shape: str, size: float) -> CoilPair:
        return CoilPair(axis, shape, size, uniform[(axis, shape)][1] * (size - inset[shape] / 2.0), 1)

    # A pair alone must fit the room: the plainest binding constraint.
    if inner_room is not None:
        for axis in AXES:
            misses = []
            for shape in inp.shapes:
                size, ratio = uniform[(axis, shape)]
                ext = 2.0 * pair_extent_m(frame_line(axis, shape, size), frame)
                over = ext / inner_room
                k = int(np.argmax(over))
                misses.append((over[k], shape, size, ext[k], k))
            if all(m[0] > 1.0 + 1e-12 for m in misses):
                over, shape, size, ext_k, k = min(misses)
                names = ("length", "width", "height")
                raise InfeasibleError(
                    f"a {_box(inp.test_volume_m)} test volume at {_pct(inp.uniformity)} needs a {shape} {axis} pair of "
                    f"at least {size:.2f} m {_size_name(shape)}, {ext_k:.2f} m over the frames along "
                    f"{AXES[k]}, while the room allows {inner_room[k]:.2f} m (room {names[k]} less "
                    f"{inp.room.clearance_m:g} m clearance each side)")

    orders = [inp.axis_order] if inp.axis_order else list(itertools.permutations(AXES))
    nest_cache: dict = {}

    def nested_size(axis: str, shape: str, inner: tuple[CoilPair, ...], lower: float) -> float:
        # the axes' names play no part in clearances (cage.layout.min_centreline_distance_m), so
        # symmetric orders share their nesting scans
        key = (shape, uniform[(axis, shape)][1], tuple(sorted((p.shape, p.size_m, p.spacing_m) for p in inner)),
               lower)
        if key not in nest_cache:
            ratio = uniform[(axis, shape)][1]
            try:
                nest_cache[key] = smallest_nesting_size_m(axis, shape, list(inner), frame, lower,
                                                          spacing_per_size=ratio, upper_m=MAX_SIZE_M,
                                                          spacing_inset_m=inset[shape] / 2.0)
            except ValueError:
                nest_cache[key] = math.inf
        return nest_cache[key]

    def grow(order, shape_of, placed: tuple[CoilPair, ...], inflate):
        """Every nesting of the pairs, innermost first: each pair at its smallest uniform size that
        clears the pairs inside it (and, with axis_order, is at least as wide as they are), and at
        the larger sizes where one more turn pays (axis_size_options)."""
        depth = len(placed)
        if depth == 3:
            by_axis = {p.axis: p for p in placed}
            yield CoilCage(by_axis["x"], by_axis["y"], by_axis["z"])
            return
        axis = order[2 - depth]
        shape = shape_of[axis]
        size_u, ratio = uniform[(axis, shape)]
        lower = size_u * (inflate[depth] if depth < 2 else 1.0)
        if inp.axis_order and placed:
            widest = max(p.half_width_m for p in placed)
            lower = max(lower, (2.0 * widest if shape == "square" else widest) * (1.0 + 1e-9))
        size0 = nested_size(axis, shape, placed, lower)
        if not math.isfinite(size0):
            return
        for size in axis_size_options(axis, shape, size0, ratio, inp, safe[(axis, shape)]):
            if size > size0:
                size = nested_size(axis, shape, placed, size)
                if not math.isfinite(size):
                    continue
            yield from grow(order, shape_of, placed + (frame_line(axis, shape, size),), inflate)

    candidates = []
    room_misses = []
    seen = set()

    def consider(order, cage, shape_of) -> None:
        key = (tuple(order), cage)
        if key in seen:
            return
        seen.add(key)
        layout = check_layout(cage, frame, inp.room)
        if not layout.fits_room:
            over = np.array(layout.envelope_m) / np.array(layout.room_inner_m)
            room_misses.append((float(np.max(over)), order, layout))
            return
        candidates.append((order, cage, layout, shape_of))

    for order in orders:
        for shapes in itertools.product(inp.shapes, repeat=3):
            shape_of = dict(zip(order, shapes))
            for cage in grow(order, shape_of, (), (1.0, 1.0)):
                consider(order, cage, shape_of)

    # Greedy nesting is not always best: a slightly larger inner pair can let an outer pair
    # shrink. Try inflated inner pairs for the few smallest candidates.
    smallest = sorted(range(len(candidates)), key=lambda i: (float(np.prod(candidates[i][2].envelope_m)), i))
    for i in smallest[:REFINED_CANDIDATES]:
        order, cage0, _, shape_of = candidates[i]
        bound = [p.size_m > uniform[(p.axis, p.shape)][0] * (1 + 1e-9) for p in cage0.pairs]
        if not any(bound):
            continue  # every pair at its own uniform minimum: nothing to gain
        for inflate in INFLATIONS:
            for cage in grow(order, shape_of, (), inflate):
                consider(order, cage, shape_of)
    candidates = [c[:3] for c in candidates]

    if not candidates:
        over, order, layout = min(room_misses, key=lambda m: m[0])
        env = " x ".join(f"{v:.2f}" for v in layout.envelope_m)
        room = " x ".join(f"{v:.2f}" for v in layout.room_inner_m)
        raise InfeasibleError(
            f"nesting the three pairs (outermost {order[0]}, then {order[1]}, {order[2]}) for a "
            f"{_box(inp.test_volume_m)} test volume at {_pct(inp.uniformity)} needs an envelope of {env} m "
            f"(x, y, z), while the room less its clearance allows {room} m")

    winding_cache: dict = {}
    best = None
    best_key = None
    failures = []
    for index, (order, cage, layout) in enumerate(candidates):
        axes = []
        for pair in cage.pairs:
            key = (pair.axis, pair.shape, pair.size_m, pair.spacing_m)
            if key not in winding_cache:
                winding_cache[key] = choose_winding(pair.axis, pair, inp, uniform[(pair.axis, pair.shape)][0])
            result = winding_cache[key]
            if result.plan is None:
                failures.append((result.badness, result.reason))
                break
            axes.append(result.plan)
        if len(axes) < 3:
            continue
        power = sum(a.drive.power_W for a in axes)
        mass = sum(a.electrics.copper_mass_kg for a in axes)
        volume = float(np.prod(layout.envelope_m))
        if inp.minimise == "power":
            key = (round(power, 9), round(volume, 12), index)
        elif inp.minimise == "mass":
            key = (round(mass, 9), round(volume, 12), index)
        else:
            key = (round(volume, 12), round(power, 9), index)
        if best_key is None or key < best_key:
            best_key, best = key, (order, tuple(axes), layout, power, mass)
    if best is None:
        badness, reason = min(failures, key=lambda f: f[0])
        raise InfeasibleError(reason)
    order, axes, layout, power, mass = best
    plan = Plan(axes=axes, layout=layout, order=tuple(order) if inp.axis_order else layout.order,
                minimise=inp.minimise, spacing=inp.spacing, total_power_W=power, copper_mass_kg=mass)
    return finish_plan(plan, inp) if finish else plan


def finish_plan(plan: Plan, inp: PlanInputs) -> Plan:
    """The plan with its winding-pack differences, warnings and notes."""
    packs = pack_differences(plan, inp)
    return dataclasses.replace(plan, packs=packs, warnings=tuple(plan_warnings(plan.axes, inp, packs)),
                               notes=tuple(plan_notes(plan, inp)))


def _axis_name(a) -> str:
    """The axis an AxisPlan-like record drives (its pair's, else its coils')."""
    pair = getattr(a, "pair", None)
    return pair.axis if pair is not None else a.coil_axis.axis


def plan_notes(plan: Plan, inp: PlanInputs) -> list[str]:
    """Plain statements about a plan: the nesting order when the site fixed it, and each axis whose
    supply is much larger than it needs, with the field resolution that results."""
    out = []
    if inp.axis_order:
        out.append(f"nesting order from the site's coil.axis_order, outermost first: {', '.join(inp.axis_order)}")
    for a in plan.axes:
        share = a.full_current_A / a.supply.max_current_A
        if share < LARGE_SUPPLY_FRACTION:
            out.append(f"axis {_axis_name(a)}: the supply is much larger than needed: full range takes "
                       f"{a.full_current_A:.3g} A of its {a.supply.max_current_A:g} A ({share:.0%}); its "
                       f"{a.supply.resolution_A:g} A step gives a field step of {a.field_step_nT:.1f} nT "
                       f"(ask for a finer one with max_field_step_nT)")
    return out


def pack_differences(plan: Plan, inp: PlanInputs):
    """Per axis, how the field of the real winding pack (one filament per turn, on the wire's
    grid in the frame channel) differs from the N-turns-as-one-filament model the planner
    uses: at the centre and over the test volume (cage.coils.PackDifference)."""
    from cage.axissizing import axis_pack_difference
    from cage.coils import FilamentPack, pack_vs_filament_difference
    from cage.wires import wire_from_name

    out = []
    for a in plan.axes:
        pack = FilamentPack(wire_from_name(a.wire).outer_diameter_m, inp.frame.width_m)
        if a.pair is None:
            out.append(axis_pack_difference(a.coil_axis, pack, inp.test_volume_m, n_per_edge=PACK_GRID_COILS))
        else:
            out.append(pack_vs_filament_difference(a.pair, pack, inp.test_volume_m))
    return tuple(out)


def plan_warnings(axes, inp: PlanInputs, packs=()) -> list[str]:
    """Cautions worth showing for a plan: hot windings, high current density, polarity
    switches, and a winding pack whose uniformity misses the tolerance."""
    out = []
    for a, d in zip(axes, packs):
        if d.box_deviation_pack > inp.uniformity:
            out.append(f"axis {_axis_name(a)}: with the real winding pack the uniformity is "
                       f"{d.box_deviation_pack * 100:.4f} %, over the {inp.uniformity * 100:g} % asked")
    for a in axes:
        el = a.electrics
        if el.current_density_high:
            out.append(f"axis {_axis_name(a)}: current density {el.current_density_A_per_mm2:.1f} A/mm^2 at full range "
                       f"is above the common air-cooled limit of about 3 A/mm^2")
        if el.winding_temperature_C > inp.max_winding_temperature_C - 5.0:
            out.append(f"axis {_axis_name(a)}: the winding reaches {el.winding_temperature_C:.0f} C at full range, "
                       f"close to the {inp.max_winding_temperature_C:g} C limit; check it on the built coil")
        if abs(a.drive.voltage_V) > 50.0:
            out.append(f"axis {_axis_name(a)}: {abs(a.drive.voltage_V):.0f} V at full range; above about 50 V DC "
                       f"touch protection is required by most electrical codes")
    unipolar = [_axis_name(a) for a in axes if not a.supply.bipolar]
    if unipolar:
        out.append(f"axis {', '.join(unipolar)}: unipolar supply; negative currents need a polarity switch "
                   f"(switch only at zero current: the coil's stored energy arcs otherwise)")
    return out


# ----------------------------------------------------------------------------- design file

def design_from_plan(plan: Plan, inp: PlanInputs, site=None, ambient=None):
    """The :class:`cage.designfile.Design` of a plan, with the requirement and layout it was made for."""
    from cage.designfile import AxisDesign, Design

    axes = []
    for a in plan.axes:
        el = a.electrics
        axes.append(AxisDesign(
            pair=a.pair, coil_axis=a.coil_axis, wire=a.wire,
            resistance_20C_ohm=el.resistance_20C_ohm,
            resistance_hot_ohm=el.resistance_hot_ohm,
            inductance_H=el.inductance_H,
            time_constant_s=el.time_constant_s if el.time_constant_s > 0 else None,
            copper_mass_kg=el.copper_mass_kg,
            field_per_amp_nT=a.field_per_amp_nT,
            max_current_A=a.full_current_A,
            winding_temperature_C=el.winding_temperature_C if el.winding_temperature_C > 0 else None,
            current_density_A_per_mm2=el.current_density_A_per_mm2,
            lead_length_m=inp.lead_length_m if inp.lead_length_m > 0 else None,
            frame_width_m=inp.frame.width_m,
            frame_depth_m=inp.frame.depth_m,
            frame_size_m=(a.frame_pair or a.pair or a.coil_axis).size_m,
        ))
    lay = plan.layout
    site_obj = None
    if site is not None:
        loc, ori = site.location, site.orientation
        site_obj = {
            "name": site.name, "file": site.source, "date": site.date.isoformat(),
            "latitude_deg": loc.latitude_deg, "longitude_deg": loc.longitude_deg, "altitude_m": loc.altitude_m,
            "heading_deg": ori.heading_deg, "heading_reference": ori.heading_reference,
        }
        if ambient is not None:
            site_obj["heading_true_deg"] = ambient.heading_true_deg
            site_obj["ambient_cage_nT"] = [float(v) for v in ambient.in_force_cage_nT]
            site_obj["ambient_source"] = ambient.source
        if site.room is not None:
            r = site.room
            site_obj["room_m"] = [r.length_m, r.width_m, r.height_m]
            site_obj["room_clearance_m"] = r.clearance_m
    requirement = {
        "test_volume_m": list(inp.test_volume_m),
        "uniformity": inp.uniformity,
        "extra_field_nT": list(inp.extra_field_nT),
        "needed_field_nT": [float(v) for v in inp.needed_field_nT],
        "shapes": list(inp.shapes),
        "wires": list(inp.wires),
        "minimise": inp.minimise,
        "spacing": inp.spacing,
        "max_winding_temperature_C": inp.max_winding_temperature_C,
        "ambient_temperature_C": inp.ambient_temperature_C,
        "supplies": {ax: {"name": s.name, "max_voltage_V": s.max_voltage_V, "max_current_A": s.max_current_A,
                          "resolution_A": s.resolution_A, "bipolar": s.bipolar}
                     for ax, s in zip(AXES, inp.supplies)},
    }
    if inp.max_field_step_nT is not None:
        requirement["max_field_step_nT"] = inp.max_field_step_nT
    if tuple(inp.systems) != ("pair",):
        requirement["systems"] = list(inp.systems)
    packs = plan.packs or pack_differences(plan, inp)
    layout = {
        "order_outermost_first": list(plan.order),
        "min_centreline_distance_m": lay.min_distance_m,
        "frame_clearance_m": lay.clearance_m,
        "closest_axes": list(lay.closest_axes),
        "frame_width_m": inp.frame.width_m,
        "frame_depth_m": inp.frame.depth_m,
        "frame_gap_m": inp.frame.gap_m,
        "winding_position": WINDING_POSITION,
        "fits_room": lay.fits_room,
        "total_power_W": plan.total_power_W,
        "copper_mass_kg": plan.copper_mass_kg,
        "uniformity_reached": [a.uniformity_reached for a in plan.axes],
        "full_range_voltage_V": [abs(a.drive.voltage_V) for a in plan.axes],
        "full_range_power_W": [a.drive.power_W for a in plan.axes],
        "field_step_nT": [a.field_step_nT for a in plan.axes],
        "winding_pack_centre_difference": [d.centre_relative for d in packs],
        "winding_pack_box_difference": [d.box_max_relative for d in packs],
        "winding_pack_uniformity": [d.box_deviation_pack for d in packs],
    }
    if lay.room_inner_m is not None:
        layout["room_inner_m"] = list(lay.room_inner_m)
    return Design(axes=tuple(axes), site=site_obj, requirement=requirement, layout=layout,
                  envelope_m=list(lay.envelope_m),
                  notes="Planned by cage. Filament model of the windings; survey the built cage before use.")
