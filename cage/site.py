"""A site: where and when a cage stands, its room, requirement, coil settings, supplies and survey.

Physics layer: frozen dataclasses only (SI units, names carry them). Reading and validating
a site TOML file is ``cage.sitefile``.
"""
from __future__ import annotations

import datetime as _dt
from dataclasses import dataclass

from cage.supplies import Supply


@dataclass(frozen=True)
class Location:
    """Geodetic position (WGS84): degrees north, degrees east in -180..180, metres above the ellipsoid."""

    latitude_deg: float
    longitude_deg: float
    altitude_m: float


@dataclass(frozen=True)
class Orientation:
    """Azimuth of the cage's +x axis, clockwise from north, as given (true or magnetic)."""

    heading_deg: float = 0.0
    heading_reference: str = "true"
    stated: bool = True  # False when the site gives no heading (0 deg true assumed)


@dataclass(frozen=True)
class Room:
    """The room the cage must fit: length along cage x, width along cage y, height."""

    length_m: float
    width_m: float
    height_m: float
    clearance_m: float = 0.3


@dataclass(frozen=True)
class Requirement:
    """What the cage must deliver.

    test_volume_m: box (x, y, z) centred in the cage.
    uniformity: largest allowed |B(p) - B(0)| / |B(0)| over the box, each axis driven alone.
    extra_field_uT: field each axis must add beyond nulling its ambient component, both signs.
    shape: "square", "round" or "either".
    systems: the coil systems the planner may use per axis (``cage.coilsystems.SYSTEMS``); all of
        them when not given (``systems = ["pair"]`` keeps to pairs).
    max_field_step_nT: largest field step one supply current step may give (a constraint on
        the planner only when given; otherwise the step that results is reported).
    """

    test_volume_m: tuple[float, float, float] = (0.3, 0.3, 0.3)
    uniformity: float = 0.001
    extra_field_uT: tuple[float, float, float] = (100.0, 100.0, 100.0)
    shape: str = "either"
    max_field_step_nT: float | None = None
    # Every coil system unless the site or --system narrows the choice: cage.coilsystems.SYSTEMS,
    # written out so that reading a site does not import the coil geometry.
    systems: tuple[str, ...] = ("pair", "three", "four", "four-equal")


@dataclass(frozen=True)
class CoilSettings:
    """Coil frames, winding limits and allowed wires (shared by all three axes)."""

    frame_width_m: float = 0.04
    frame_depth_m: float = 0.04
    frame_gap_m: float = 0.01
    max_winding_temperature_C: float = 60.0
    ambient_temperature_C: float = 22.0
    wires: tuple[str, ...] = ("AWG 14", "AWG 16", "AWG 18")
    lead_length_m: float = 6.0
    axis_order: tuple[str, str, str] | None = None


@dataclass(frozen=True)
class Measured:
    """A survey inside the room: the field at the cage centre in the cage frame (nT), and
    optionally readings at several points (``points_m`` from the cage centre, m, and
    ``fields_nT``, both cage frame) for the gradient over the test volume (``cage.gradient``).

    date: the day of the survey (``measured.date``). Older files without it take the site's
    ``date`` with ``date_assumed`` set (the user is warned); with neither, the file is refused.
    """

    field_nT: tuple[float, float, float]
    note: str = ""
    points_m: tuple[tuple[float, float, float], ...] = ()
    fields_nT: tuple[tuple[float, float, float], ...] = ()
    date: _dt.date | None = None
    date_assumed: bool = False


@dataclass(frozen=True)
class Site:
    """A validated site file."""

    name: str
    date: _dt.date
    date_given: bool
    location: Location
    orientation: Orientation
    room: Room | None
    requirement: Requirement
    coil: CoilSettings
    supplies: tuple[Supply, ...]
    measured: Measured | None
    source: str = ""


# ----------------------------------------------------------------------------- schema
