"""The planner's inputs and results: ``PlanInputs`` (from a site), ``AxisPlan``, ``Plan``, and its settings.

Planning layer; the method is described in ``cage.optimise``.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from cage.coils import AXES, CoilCage, CoilPair
from cage.errors import InputError
from cage.layout import FrameSpec, Layout
from cage.supplies import DriveCheck, Supply, field_step_nT, supply_for_axis, validate_supply


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
        from cage.coilsystems import parse_systems

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


def _pct(tolerance: float) -> str:
    return f"{tolerance * 100:g} %"


def _box(test_volume_m) -> str:
    return " x ".join(f"{v:g}" for v in test_volume_m) + " m"


def _size_name(shape: str) -> str:
    return "side" if shape == "square" else "radius"
