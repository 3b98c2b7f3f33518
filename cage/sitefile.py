"""Site files: read and validate a TOML description of where a cage stands.

A site file names the place (geodetic latitude, longitude, altitude), the date, the
cage's heading in the room, and, for planning, the room, the requirement, the coil
frames, the allowed wires and the supplies. See the README for every key.

Every problem is raised as :class:`cage.errors.InputError` with one line that names the
file, the key (``room.width_m``) and what is wrong; unknown keys get the nearest valid
key suggested. Nothing here prints.
"""
from __future__ import annotations

import dataclasses
import datetime as _dt
import difflib
import math
import tomllib
from pathlib import Path
from typing import Any

from cage.errors import InputError
from cage.supplies import Supply
from cage.thermal import AMBIENT_RANGE_C

AXES = ("x", "y", "z")

# Limits on user input; outside them a value is refused. Altitudes from the deepest mine
# to the upper atmosphere; the field model is used far beyond a lab's needs.
LATITUDE_RANGE_DEG = (-90.0, 90.0)
LONGITUDE_RANGE_DEG = (-180.0, 360.0)
ALTITUDE_RANGE_M = (-1_000.0, 100_000.0)
HEADING_RANGE_DEG = (-360.0, 360.0)
ROOM_SIDE_RANGE_M = (0.1, 200.0)
MIN_TEST_VOLUME_SIDE_M = 0.001  # smaller than any probe; the planner's ratios need a real box
MIN_RESOLUTION_A = 1e-9  # no supply sets current finer than a nanoampere
TEMPERATURE_RANGE_C = (-50.0, 250.0)  # winding temperatures; room air: cage.thermal.AMBIENT_RANGE_C


from cage.coilsystems import parse_systems  # noqa: F401  (read here; lives with the systems)
from cage.site import (CoilSettings, Location, Measured, Orientation, Requirement, Room,  # noqa: F401
                       Site)


_TOP_KEYS = ("name", "date", "location", "orientation", "room", "requirement", "coil", "supply", "measured")
_TABLE_KEYS = {
    "location": ("latitude_deg", "longitude_deg", "altitude_m"),
    "orientation": ("heading_deg", "heading_reference"),
    "room": ("length_m", "width_m", "height_m", "clearance_m"),
    "requirement": ("test_volume_m", "uniformity", "extra_field_uT", "shape", "max_field_step_nT", "systems"),
    "coil": (
        "frame_width_m",
        "frame_depth_m",
        "frame_gap_m",
        "max_winding_temperature_C",
        "ambient_temperature_C",
        "wires",
        "lead_length_m",
        "axis_order",
    ),
    "supply": ("axis", "max_voltage_V", "max_current_A", "resolution_A", "bipolar", "name", "drive",
               "temperature_coefficient_ppm_per_K", "drift_ppm_per_hour", "noise_ppm"),
    "measured": ("field_nT", "note", "points_m", "fields_nT", "date"),
}


def _systems(r, req_t: dict) -> tuple[str, ...]:
    if "systems" not in req_t:
        return Requirement.systems
    return parse_systems(req_t["systems"], f"{r.where}: requirement.systems")


class _Reader:
    """Pulls typed, range-checked values out of a parsed TOML tree, naming file and key on error."""

    def __init__(self, where: str):
        self.where = where

    def fail(self, key: str, problem: str) -> InputError:
        return InputError(f"{self.where}: {key} {problem}")

    def check_keys(self, table: dict, allowed: tuple[str, ...], prefix: str) -> None:
        for key in table:
            if key not in allowed:
                hint = difflib.get_close_matches(key, allowed, n=1, cutoff=0.5)
                full = f"{prefix}{key}"
                if hint:
                    raise InputError(f"{self.where}: unknown key {full!r}; did you mean '{prefix}{hint[0]}'?")
                raise InputError(
                    f"{self.where}: unknown key {full!r}; valid keys here: {', '.join(allowed)}"
                )

    def number(self, table: dict, key: str, prefix: str, *, default=None, lo=None, hi=None,
               positive=False, nonnegative=False) -> float:
        full = f"{prefix}{key}"
        if key not in table:
            if default is None:
                raise self.fail(full, "is missing")
            return float(default)
        value = table[key]
        return self.as_number(value, full, lo=lo, hi=hi, positive=positive, nonnegative=nonnegative)

    def as_number(self, value: Any, full: str, *, lo=None, hi=None, positive=False, nonnegative=False) -> float:
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            raise self.fail(full, f"must be a number, got {_show(value)}")
        value = float(value)
        if not math.isfinite(value):
            raise self.fail(full, f"must be a finite number, got {value}")
        if positive and value <= 0:
            raise self.fail(full, f"must be greater than 0, got {value:g}")
        if nonnegative and value < 0:
            raise self.fail(full, f"must not be negative, got {value:g}")
        if lo is not None and hi is not None and not lo <= value <= hi:
            raise self.fail(full, f"must be between {lo:g} and {hi:g}, got {value!r}")
        return value

    def text(self, table: dict, key: str, prefix: str, *, default=None, choices=None) -> str:
        full = f"{prefix}{key}"
        if key not in table:
            if default is None:
                raise self.fail(full, "is missing")
            return default
        value = table[key]
        if not isinstance(value, str):
            raise self.fail(full, f"must be text, got {_show(value)}")
        if choices is not None and value not in choices:
            options = " or ".join(repr(c) for c in choices)
            raise self.fail(full, f"must be {options}, got {value!r}")
        return value

    def table(self, tree: dict, key: str, *, required: bool) -> dict | None:
        if key not in tree:
            if required:
                raise self.fail(f"[{key}]", "table is missing")
            return None
        value = tree[key]
        if not isinstance(value, dict):
            raise self.fail(key, f"must be a table [{key}], got {_show(value)}")
        self.check_keys(value, _TABLE_KEYS[key], f"{key}.")
        return value

    def triple(self, table: dict, key: str, prefix: str, *, default, allow_scalar: bool,
               positive=False, nonnegative=False, hi=None) -> tuple[float, float, float]:
        full = f"{prefix}{key}"
        if key not in table:
            return tuple(float(v) for v in default)
        value = table[key]
        if allow_scalar and not isinstance(value, (list, tuple)):
            one = self.as_number(value, full, positive=positive, nonnegative=nonnegative)
            values = (one, one, one)
        else:
            if not isinstance(value, (list, tuple)) or len(value) != 3:
                form = "a number or a list of three numbers" if allow_scalar else "a list of three numbers"
                raise self.fail(full, f"must be {form} (x, y, z), got {_show(value)}")
            values = tuple(
                self.as_number(v, f"{full}[{i}]", positive=positive, nonnegative=nonnegative)
                for i, v in enumerate(value)
            )
        if hi is not None:
            for i, v in enumerate(values):
                if v > hi:
                    raise self.fail(f"{full}[{i}]", f"must be at most {hi:g}, got {v:g}")
        return values


def _show(value: Any) -> str:
    if isinstance(value, (_dt.date, _dt.time)):  # a TOML date or time, as written in the file
        return f"{value.isoformat()} (a {'time' if isinstance(value, _dt.time) else 'date'})"
    text = repr(value)
    return text if len(text) <= 40 else text[:37] + "..."


def parse_date(value: Any, where: str) -> _dt.date:
    """A calendar date from a TOML date/datetime or an ISO string ``YYYY-MM-DD``."""
    if isinstance(value, _dt.datetime):
        return value.date()
    if isinstance(value, _dt.date):
        return value
    if isinstance(value, str):
        try:
            return _dt.date.fromisoformat(value.strip())
        except ValueError:
            raise InputError(f"{where} must be a date YYYY-MM-DD, got {value!r}") from None
    raise InputError(f"{where} must be a date YYYY-MM-DD, got {_show(value)}")


def today_utc() -> _dt.date:
    return _dt.datetime.now(_dt.timezone.utc).date()


def normalise_longitude_deg(longitude_deg: float) -> float:
    """Map a longitude in -180..360 degrees east to -180..180."""
    if -180.0 <= longitude_deg <= 180.0:
        return float(longitude_deg)
    lon = ((longitude_deg + 180.0) % 360.0) - 180.0
    if lon == -180.0 and longitude_deg > 0:
        lon = 180.0
    return lon


def check_location(latitude_deg, longitude_deg, altitude_m, where: str = "input") -> Location:
    """Validate a geodetic position given outside a site file (command-line flags)."""
    r = _Reader(where)
    lat = r.as_number(latitude_deg, "latitude_deg", lo=LATITUDE_RANGE_DEG[0], hi=LATITUDE_RANGE_DEG[1])
    lon = r.as_number(longitude_deg, "longitude_deg", lo=LONGITUDE_RANGE_DEG[0], hi=LONGITUDE_RANGE_DEG[1])
    alt = r.as_number(altitude_m, "altitude_m", lo=ALTITUDE_RANGE_M[0], hi=ALTITUDE_RANGE_M[1])
    return Location(lat, normalise_longitude_deg(lon), alt)


def check_heading(heading_deg, where: str = "input") -> float:
    return _Reader(where).as_number(heading_deg, "heading_deg", lo=HEADING_RANGE_DEG[0], hi=HEADING_RANGE_DEG[1])


# ----------------------------------------------------------------------------- reading

def load_site(path: str | Path) -> Site:
    """Read and validate a site file; raise InputError with one line on any problem."""
    from cage.textfile import read_text

    return site_from_text(read_text(path, "site file"), str(path))


def site_from_text(text: str, where: str = "site") -> Site:
    try:
        tree = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"{where}: TOML syntax error: {exc}") from None
    except RecursionError:
        raise InputError(f"{where}: TOML nested too deeply") from None
    except ValueError:  # Python's cap on the digits of an integer (4300 by default)
        raise InputError(f"{where}: holds a number with thousands of digits; no value here needs more "
                         f"than a few") from None
    return site_from_dict(tree, where)


def site_from_dict(tree: dict, where: str = "site") -> Site:
    r = _Reader(where)
    r.check_keys(tree, _TOP_KEYS, "")

    name = r.text(tree, "name", "", default=Path(where).stem)
    if "date" in tree:
        date = parse_date(tree["date"], f"{where}: date")
        date_given = True
    else:
        date, date_given = today_utc(), False

    loc = r.table(tree, "location", required=True)
    location = Location(
        latitude_deg=r.number(loc, "latitude_deg", "location.", lo=LATITUDE_RANGE_DEG[0], hi=LATITUDE_RANGE_DEG[1]),
        longitude_deg=normalise_longitude_deg(
            r.number(loc, "longitude_deg", "location.", lo=LONGITUDE_RANGE_DEG[0], hi=LONGITUDE_RANGE_DEG[1])
        ),
        altitude_m=r.number(loc, "altitude_m", "location.", default=0.0, lo=ALTITUDE_RANGE_M[0], hi=ALTITUDE_RANGE_M[1]),
    )

    ori = r.table(tree, "orientation", required=False) or {}
    orientation = Orientation(
        heading_deg=r.number(ori, "heading_deg", "orientation.", default=0.0,
                             lo=HEADING_RANGE_DEG[0], hi=HEADING_RANGE_DEG[1]),
        heading_reference=r.text(ori, "heading_reference", "orientation.", default="true",
                                 choices=("true", "magnetic")),
        stated=bool(ori),
    )

    room_t = r.table(tree, "room", required=False)
    room = None
    if room_t is not None:
        lo, hi = ROOM_SIDE_RANGE_M
        room = Room(
            length_m=r.number(room_t, "length_m", "room.", lo=lo, hi=hi),
            width_m=r.number(room_t, "width_m", "room.", lo=lo, hi=hi),
            height_m=r.number(room_t, "height_m", "room.", lo=lo, hi=hi),
            clearance_m=r.number(room_t, "clearance_m", "room.", default=Room.clearance_m, nonnegative=True),
        )
        for side, size in (("length_m", room.length_m), ("width_m", room.width_m), ("height_m", room.height_m)):
            if 2 * room.clearance_m >= size:
                raise r.fail("room.clearance_m", f"({room.clearance_m:g} m on each side) leaves no space in room.{side} ({size:g} m)")

    req_t = r.table(tree, "requirement", required=False) or {}
    requirement = Requirement(
        test_volume_m=r.triple(req_t, "test_volume_m", "requirement.", default=Requirement.test_volume_m,
                               allow_scalar=True, positive=True, hi=50.0),
        uniformity=r.number(req_t, "uniformity", "requirement.", default=Requirement.uniformity, lo=1e-7, hi=0.5),
        extra_field_uT=r.triple(req_t, "extra_field_uT", "requirement.", default=Requirement.extra_field_uT,
                                allow_scalar=True, nonnegative=True, hi=100_000.0),
        shape=r.text(req_t, "shape", "requirement.", default=Requirement.shape, choices=("square", "round", "either")),
        max_field_step_nT=(r.number(req_t, "max_field_step_nT", "requirement.", positive=True, lo=1e-6, hi=1e9)
                           if "max_field_step_nT" in req_t else None),
        systems=_systems(r, req_t),
    )
    for i, v in enumerate(requirement.test_volume_m):
        if v < MIN_TEST_VOLUME_SIDE_M:
            raise r.fail(f"requirement.test_volume_m[{i}]",
                         f"must be at least {MIN_TEST_VOLUME_SIDE_M:g} m (a probe's size), got {v:g}")
    if room is not None:
        inner = (room.length_m - 2 * room.clearance_m, room.width_m - 2 * room.clearance_m,
                 room.height_m - 2 * room.clearance_m)
        for i, axis in enumerate(AXES):
            if requirement.test_volume_m[i] >= inner[i]:
                raise r.fail(
                    f"requirement.test_volume_m[{i}]",
                    f"({requirement.test_volume_m[i]:g} m along {axis}) does not fit the room less its clearance "
                    f"({inner[i]:g} m)",
                )

    coil = _read_coil(r, r.table(tree, "coil", required=False) or {})
    supplies = _read_supplies(r, tree.get("supply"))

    meas_t = r.table(tree, "measured", required=False)
    measured = None
    if meas_t is not None:
        if "field_nT" not in meas_t:
            raise r.fail("measured.field_nT", "is missing")
        measured = Measured(
            field_nT=r.triple(meas_t, "field_nT", "measured.", default=None, allow_scalar=False, hi=None),
            note=r.text(meas_t, "note", "measured.", default=""),
            points_m=_read_rows(r, meas_t, "points_m"),
            fields_nT=_read_rows(r, meas_t, "fields_nT"),
            date=parse_date(meas_t["date"], f"{where}: measured.date") if "date" in meas_t else None,
        )
        if len(measured.points_m) != len(measured.fields_nT):
            raise r.fail("measured.fields_nT", f"has {len(measured.fields_nT)} readings for "
                                               f"{len(measured.points_m)} points_m")
        # survey points lie in the room around the cage: none farther from the centre than the
        # room's diagonal (100 m without a room)
        if room is not None:
            reach, limit = math.hypot(room.length_m, room.width_m, room.height_m), "the room's diagonal"
        else:
            reach, limit = 100.0, "a survey of a cage reaches"
        for i, p in enumerate(measured.points_m):
            if math.hypot(*p) > reach:
                raise r.fail(f"measured.points_m[{i}]", f"is {math.hypot(*p):g} m from the cage centre, farther "
                                                         f"than {limit} ({reach:.3g} m); points are in metres from "
                                                         f"the centre")
        if measured.points_m:  # the points are there for the gradient: refused by every command alike
            from cage.gradient import fit_gradient

            try:
                fit_gradient(measured.points_m, measured.fields_nT)
            except InputError as exc:
                raise InputError(f"{where}: [measured] points_m: {str(exc).removeprefix('survey: ')}") from None
        if math.sqrt(sum(v * v for v in measured.field_nT)) > 1e6:
            raise r.fail("measured.field_nT", "is above 1,000,000 nT (1 mT); is it in nT?")
        if measured.date is None:
            if not date_given:
                raise r.fail("measured.date", "is missing: give the day of the survey (YYYY-MM-DD), so the "
                                              "field can be carried to other dates")
            measured = dataclasses.replace(measured, date=date, date_assumed=True)

    return Site(name=name, date=date, date_given=date_given, location=location, orientation=orientation,
                room=room, requirement=requirement, coil=coil, supplies=supplies, measured=measured, source=where)


def _read_coil(r: _Reader, t: dict) -> CoilSettings:
    d = CoilSettings()
    p = "coil."
    wires = d.wires
    if "wires" in t:
        value = t["wires"]
        if isinstance(value, str):
            value = [value]
        if not isinstance(value, list) or not value or not all(isinstance(w, str) for w in value):
            raise r.fail("coil.wires", f"must be a list of wire names such as [\"AWG 14\", \"1.5 mm\"], got {_show(value)}")
        from cage.wires import wire_from_name

        for i, name in enumerate(value):  # every command reads the same file: an unknown wire is refused by all
            try:
                wire_from_name(name)
            except InputError as exc:
                raise r.fail(f"coil.wires[{i}]", str(exc)) from None
        wires = tuple(value)
    axis_order = None
    if "axis_order" in t:
        value = t["axis_order"]
        if not isinstance(value, list) or sorted(str(v) for v in value) != list(AXES):
            raise r.fail("coil.axis_order", f"must list x, y and z once each, outermost first, got {_show(value)}")
        axis_order = tuple(value)
    coil = CoilSettings(
        frame_width_m=r.number(t, "frame_width_m", p, default=d.frame_width_m, positive=True, hi=1.0, lo=0.0),
        frame_depth_m=r.number(t, "frame_depth_m", p, default=d.frame_depth_m, positive=True, hi=1.0, lo=0.0),
        frame_gap_m=r.number(t, "frame_gap_m", p, default=d.frame_gap_m, nonnegative=True, hi=1.0, lo=0.0),
        max_winding_temperature_C=r.number(t, "max_winding_temperature_C", p, default=d.max_winding_temperature_C,
                                           lo=TEMPERATURE_RANGE_C[0], hi=TEMPERATURE_RANGE_C[1]),
        ambient_temperature_C=r.number(t, "ambient_temperature_C", p, default=d.ambient_temperature_C,
                                       lo=AMBIENT_RANGE_C[0], hi=AMBIENT_RANGE_C[1]),
        wires=wires,
        lead_length_m=r.number(t, "lead_length_m", p, default=d.lead_length_m, nonnegative=True, lo=0.0, hi=10_000.0),
        axis_order=axis_order,
    )
    if coil.max_winding_temperature_C <= coil.ambient_temperature_C:
        raise r.fail("coil.max_winding_temperature_C",
                     f"({coil.max_winding_temperature_C:g} C) must be above coil.ambient_temperature_C "
                     f"({coil.ambient_temperature_C:g} C)")
    return coil


def _read_supplies(r: _Reader, value: Any) -> tuple[Supply, ...]:
    if value is None:
        return ()
    if isinstance(value, dict):
        value = [value]
    if not isinstance(value, list) or not all(isinstance(v, dict) for v in value):
        raise r.fail("supply", "must be one or more [[supply]] tables")
    supplies = []
    seen = set()
    for i, t in enumerate(value):
        p = f"supply[{i}]."
        r.check_keys(t, _TABLE_KEYS["supply"], p)
        axis = r.text(t, "axis", p, default="any", choices=("x", "y", "z", "any"))
        if axis in seen:
            raise r.fail(f"{p}axis", f"{axis!r} is given by more than one [[supply]] table")
        seen.add(axis)
        bipolar = t.get("bipolar", True)
        if not isinstance(bipolar, bool):
            raise r.fail(f"{p}bipolar", f"must be true or false, got {_show(bipolar)}")
        supply = Supply(
            axis=axis,
            max_voltage_V=r.number(t, "max_voltage_V", p, positive=True, lo=0.0, hi=10_000.0),
            max_current_A=r.number(t, "max_current_A", p, positive=True, lo=0.0, hi=10_000.0),
            resolution_A=r.number(t, "resolution_A", p, default=0.001, positive=True, lo=MIN_RESOLUTION_A, hi=100.0),
            bipolar=bipolar,
            name=r.text(t, "name", p, default=""),
            drive=r.text(t, "drive", p, default="current", choices=("current", "voltage")),
            temperature_coefficient_ppm_per_K=r.number(t, "temperature_coefficient_ppm_per_K", p, default=100.0,
                                                       nonnegative=True, lo=0.0, hi=1e5),
            drift_ppm_per_hour=r.number(t, "drift_ppm_per_hour", p, default=10.0, nonnegative=True, lo=0.0, hi=1e5),
            noise_ppm=r.number(t, "noise_ppm", p, default=50.0, nonnegative=True, lo=0.0, hi=1e5),
        )
        if supply.resolution_A > supply.max_current_A:
            raise r.fail(f"{p}resolution_A", f"({supply.resolution_A:g} A) is larger than max_current_A "
                                             f"({supply.max_current_A:g} A)")
        supplies.append(supply)
    return tuple(supplies)


def _read_rows(r: _Reader, t: dict, key: str) -> tuple[tuple[float, float, float], ...]:
    """An optional list of [x, y, z] rows (survey points or readings)."""
    value = t.get(key, [])
    if not isinstance(value, list) or not all(isinstance(v, list) and len(v) == 3 for v in value):
        raise r.fail(f"measured.{key}", f"must be a list of [x, y, z] lists, got {_show(value)}")
    return tuple(tuple(r.as_number(c, f"measured.{key}[{i}][{j}]") for j, c in enumerate(v))
                 for i, v in enumerate(value))
