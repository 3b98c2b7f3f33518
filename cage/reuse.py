"""Re-use rules: what a design, a survey or a calibration means at another site or date.

One place for the rules, so every command applies them the same way:

- Heading (:func:`cage_heading`). The heading belongs to the built cage. A design fixes the
  cage's true azimuth when it is made (a magnetic heading is turned into a true azimuth with
  that date's declination); every later use takes the true azimuth from the design. A
  heading given explicitly at use time replaces it, with a warning. A heading in a site file
  that disagrees with the design is ignored, with a warning.
- Survey (:func:`carry_survey`). A ``[measured]`` field holds at its survey date. At another
  date it is carried by the model's change between the two dates (the secular variation),
  and its age is shown.
- Calibration (:func:`calibration_plan`). B = B0 + K I: the coupling K belongs to the cage
  and holds anywhere; the offset B0 holds at its site and date only. At another date B0 is
  carried by the model's change; at another site only K is used, with the new site's model
  or survey as the ambient field. A calibration made for another design is refused.
- Earlier tables (:func:`previous_problems`): another design is an error; another site, or
  an earlier table dated after the current one, is a warning.
- Plan folders (:func:`mixed_inputs`): documents of one folder must agree on site, date and
  design.
- Dip pole (:func:`dip_pole_warning`): a magnetic heading where the horizontal field is
  below :data:`DIP_POLE_H_NT` has no usable declination.

The rules are pure functions on numbers, dates and plain dicts; the last section applies them
to a :class:`cage.sitefile.Site` and a loaded calibration (evaluating the field model). Nothing
here prints or touches the disk.
"""
from __future__ import annotations

import datetime as _dt
import math
from dataclasses import dataclass

import numpy as np

from cage.errors import InputError

#: Below this horizontal intensity (nT) a magnetic heading is warned about (declination undefined).
DIP_POLE_H_NT = 300.0
#: Headings closer than this (degrees) are the same heading.
HEADING_TOLERANCE_DEG = 0.01
#: Two positions closer than this on the ground (m) and in altitude (m) are the same site.
SAME_SITE_DISTANCE_M = 1000.0
SAME_SITE_ALTITUDE_M = 100.0
EARTH_RADIUS_M = 6_371_000.0  # mean radius (IUGG), for the same-site distance only
DAYS_PER_YEAR = 365.25


def age_years(then: _dt.date, now: _dt.date) -> float:
    """Signed years from ``then`` to ``now`` (365.25-day years)."""
    return (now - then).days / DAYS_PER_YEAR


def age_text(then: _dt.date, now: _dt.date) -> str:
    years = age_years(then, now)
    days = (now - then).days
    if abs(days) < 60:
        from cage.numberformat import count_text

        span = count_text(abs(days), "day")
    else:
        span = f"{abs(years):.1f} years"
    return span + (" old" if days >= 0 else " ahead")


def angle_difference_deg(a: float, b: float) -> float:
    """Smallest signed difference a - b, in -180..180 degrees."""
    return (float(a) - float(b) + 180.0) % 360.0 - 180.0


def ground_distance_m(lat1, lon1, lat2, lon2) -> float:
    """Great-circle distance on a sphere (haversine), metres."""
    p1, p2 = math.radians(lat1), math.radians(lat2)
    dp, dl = p2 - p1, math.radians(lon2 - lon1)
    h = math.sin(dp / 2) ** 2 + math.cos(p1) * math.cos(p2) * math.sin(dl / 2) ** 2
    return 2 * EARTH_RADIUS_M * math.asin(min(1.0, math.sqrt(h)))


def same_site(a, b) -> bool:
    """a, b: (lat_deg, lon_deg, alt_m). Same site: within 1 km on the ground and 100 m in height."""
    return (ground_distance_m(a[0], a[1], b[0], b[1]) <= SAME_SITE_DISTANCE_M
            and abs(float(a[2]) - float(b[2])) <= SAME_SITE_ALTITUDE_M)


def site_move_note(design_site: dict | None, location, place: str = "") -> str:
    """The note shown when a design is used away from where it was planned (not
    :func:`same_site`): that site, how far away it is, and that the currents come from the
    field here. Empty at the same site, or when the design records no position.

    design_site: the design's ``site`` record (``name``, ``latitude_deg``, ``longitude_deg``,
    ``altitude_m``); location: this use's (``latitude_deg``, ``longitude_deg``, ``altitude_m``);
    place: this use's site name.
    """
    from cage.escape import one_line

    try:
        then = tuple(float(design_site[k]) for k in ("latitude_deg", "longitude_deg", "altitude_m"))
    except (TypeError, KeyError, ValueError):
        return ""
    here = (float(location.latitude_deg), float(location.longitude_deg), float(location.altitude_m))
    if not all(math.isfinite(v) for v in then) or same_site(then, here):
        return ""
    km = ground_distance_m(then[0], then[1], here[0], here[1]) / 1000.0
    name = one_line(design_site.get("name") or "its site")
    where = f" at {one_line(place)}" if place else ""
    return (f"the design was planned for {name} ({then[0]:.4f}, {then[1]:.4f}, {then[2]:.0f} m); used {km:,.0f} km "
            f"away{where} ({here[2] - then[2]:+.0f} m in height): the currents are from this site's field")


# ----------------------------------------------------------------------------- heading

def dip_pole_warning(horizontal_nT: float, reference: str) -> str:
    """The warning for a magnetic heading where the horizontal field is too weak, or ''."""
    if reference == "magnetic" and horizontal_nT < DIP_POLE_H_NT:
        return (f"warning: the horizontal field here is only {horizontal_nT:.0f} nT (under {DIP_POLE_H_NT:.0f} nT, "
                f"near the dip pole): declination is undefined and a magnetic heading means nothing; "
                f"give the cage's true azimuth (heading_reference = \"true\")")
    return ""


@dataclass(frozen=True)
class HeadingChoice:
    """The true azimuth of cage +x to use, where it came from, and the warnings."""

    heading_true_deg: float
    note: str
    warnings: tuple[str, ...] = ()
    from_use_site: bool = False  # the heading given at use time was used, not the design's


def design_heading(design_site: dict | None) -> tuple[float | None, str]:
    """The true azimuth a design recorded (or None) and its note."""
    if not isinstance(design_site, dict):
        return None, ""
    value = design_site.get("heading_true_deg")
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        return None, ""
    note = design_site.get("heading_note")
    if not isinstance(note, str) or not note:
        note = f"{float(value):.2f} deg true"
        if design_site.get("heading_reference") == "magnetic":
            note += (f", fixed from {design_site.get('heading_deg')} deg magnetic when the design was made "
                     f"({design_site.get('date', 'date unknown')})")
    return float(value), note


def cage_heading(design_site: dict | None, site_heading_deg: float | None, site_reference: str,
                 explicit: bool, declination_deg: float) -> HeadingChoice:
    """The true azimuth of the built cage for a use of a design.

    design_site: the design's ``site`` object (holds ``heading_true_deg`` when the design was
    made by this tool). site_heading_deg, site_reference: the heading at use time (site file
    or command line), or None when none was stated; explicit: it was given on the command
    line to replace the design's. declination_deg: at the use date, to read a magnetic
    heading given at use time.
    """
    recorded, note = design_heading(design_site)
    if site_heading_deg is None:
        if recorded is None:
            return HeadingChoice(0.0, "0.00 deg true (none given)", (
                "warning: neither the design nor the site gives the cage's heading; taking 0 deg true",))
        return HeadingChoice(recorded, note)
    given_true = site_heading_deg + (declination_deg if site_reference == "magnetic" else 0.0)
    given_text = f"{site_heading_deg:.2f} deg {site_reference}"
    if site_reference == "magnetic":
        given_text += f" ({given_true:.2f} deg true with this date's declination {declination_deg:+.2f} deg)"
    if recorded is None:
        return HeadingChoice(given_true, given_text,
                             ("warning: the design records no true azimuth of the cage; using the heading "
                              f"{given_text} from this site",), True)
    if abs(angle_difference_deg(given_true, recorded)) <= HEADING_TOLERANCE_DEG:
        return HeadingChoice(recorded, note)
    if explicit:
        return HeadingChoice(given_true, f"{given_text}, given on the command line", (
            f"warning: using the heading {given_text} given on the command line, not the built cage's "
            f"{recorded:.2f} deg true from the design",), True)
    same_as_made = (design_site.get("heading_reference", "true") == site_reference
                    and isinstance(design_site.get("heading_deg"), (int, float))
                    and abs(angle_difference_deg(design_site["heading_deg"], site_heading_deg)) <= HEADING_TOLERANCE_DEG)
    if same_as_made:  # the same magnetic reading: the cage has not turned, the declination has
        return HeadingChoice(recorded, note)
    return HeadingChoice(recorded, note, (
        f"warning: the site's heading ({given_text}) differs from the built cage's {recorded:.2f} deg true "
        f"recorded in the design; using the design's (give --heading-deg to use another)",))


# ----------------------------------------------------------------------------- survey and offsets

def carry_to_date(field_cage_nT, model_then_cage_nT, model_now_cage_nT) -> np.ndarray:
    """A field known at one date carried to another by the model's change between them (cage frame, nT)."""
    return (np.asarray(field_cage_nT, dtype=float) + np.asarray(model_now_cage_nT, dtype=float)
            - np.asarray(model_then_cage_nT, dtype=float))


@dataclass(frozen=True)
class Carried:
    """A survey or offset at the use date: the field, what was added, and a note with its age."""

    field_cage_nT: tuple[float, float, float]
    change_cage_nT: tuple[float, float, float]
    note: str


def carry_survey(measured_cage_nT, survey_date: _dt.date, use_date: _dt.date,
                 model_then_cage_nT, model_now_cage_nT, what: str = "survey") -> Carried:
    """The ``[measured]`` field (or a calibration offset) of ``survey_date`` at ``use_date``."""
    if survey_date == use_date:  # exactly as surveyed
        out = np.asarray(measured_cage_nT, dtype=float)
    else:
        out = carry_to_date(measured_cage_nT, model_then_cage_nT, model_now_cage_nT)
    change = out - np.asarray(measured_cage_nT, dtype=float)
    if survey_date == use_date:
        note = f"{what} of {survey_date.isoformat()}"
    else:
        note = (f"{what} of {survey_date.isoformat()} ({age_text(survey_date, use_date)}) carried to "
                f"{use_date.isoformat()} by the model's secular variation: "
                + ", ".join(f"{a} {v:+.1f} nT" for a, v in zip("xyz", change)))
    return Carried(tuple(float(v) for v in out), tuple(float(v) for v in change), note)


# ----------------------------------------------------------------------------- calibration

@dataclass(frozen=True)
class CalibrationUse:
    """How a calibration is used here: ``offset`` "as made", "carried" or "not used"."""

    offset: str
    note: str


def calibration_plan(cal_prov: dict | None, design_identity: str, site_position, use_date: _dt.date,
                     where: str = "calibration file") -> CalibrationUse:
    """Which part of a calibration holds at this site and date; refuse another design's.

    cal_prov: the calibration's provenance (None for files written before it existed).
    site_position: (lat_deg, lon_deg, alt_m) at use.
    """
    if cal_prov is None:
        return CalibrationUse("as made", f"warning: {where} records no site, date or design (an older file); "
                                         f"its offset is used as it is, unchecked")
    made_for = (cal_prov.get("derived_from") or {}).get("design")
    if made_for and design_identity and made_for != design_identity:
        raise InputError(f"{where}: made for another design ({made_for}, this design is {design_identity}); "
                         f"calibrate this cage, or give the design it was made for")
    from cage.provenance import site_of

    site = site_of(cal_prov)
    try:
        cal_date = _dt.date.fromisoformat(str(cal_prov.get("model_date")))
    except ValueError:
        cal_date = None
    if site is None or cal_date is None:
        return CalibrationUse("as made", f"warning: {where} records no site or date; its offset is used as it is")
    if not same_site(site[1:], site_position):
        return CalibrationUse("not used", (
            f"calibration made at {site[0]} ({site[1]:.4f}, {site[2]:.4f}): at this site only its coupling K is "
            f"used, with this site's field; its offset B0 holds at its own site only"))
    if cal_date != use_date:
        return CalibrationUse("carried", "calibration offset")
    return CalibrationUse("as made", "")


# ----------------------------------------------------------------------------- earlier tables, folders

def _date(value):
    try:
        return _dt.date.fromisoformat(str(value))
    except ValueError:
        return None


def previous_problems(previous_doc: dict, current: dict, where: str = "--previous") -> list[str]:
    """Warnings for comparing an earlier table with this one; InputError for another design.

    Both are ``cage-setpoints`` documents (``current`` as it will be written).
    """
    from cage.provenance import provenance_of, site_of

    old, new = provenance_of(previous_doc), provenance_of(current) or {}
    out = []
    if old is None:
        out.append(f"warning: {where} records no design or position (an older file); compared by site name only")
        if previous_doc.get("site") != current.get("site"):
            out.append(f"warning: {where} is for site {previous_doc.get('site')!r}, this table for "
                       f"{current.get('site')!r}")
    else:
        a = (old.get("derived_from") or {}).get("design")
        b = (new.get("derived_from") or {}).get("design")
        if a and b and a != b:
            raise InputError(f"{where}: the earlier table is for another design ({a}, this one is {b}); "
                             f"a drift between two cages means nothing")
        s_old, s_new = site_of(old), site_of(new)
        if s_old and s_new and not same_site(s_old[1:], s_new[1:]):
            km = ground_distance_m(s_old[1], s_old[2], s_new[1], s_new[2]) / 1000.0
            out.append(f"warning: {where} is for another site ({s_old[0]}, {km:.0f} km away); the change shown "
                       f"is between sites, not drift")
    d_old, d_new = _date(previous_doc.get("date")), _date(current.get("date"))
    if d_old and d_new and d_old > d_new:
        out.append(f"warning: {where} is dated {d_old.isoformat()}, after this table's {d_new.isoformat()}")
    return out


def mixed_inputs(docs: dict) -> str:
    """'' when the documents of one folder agree on site, date and design, else the problem.

    docs: name -> parsed document (None when absent). Documents made before provenance
    existed are compared on what they have.
    """
    from cage.provenance import provenance_of, site_of

    seen_site, seen_date, seen_design = {}, {}, {}
    for name, doc in docs.items():
        if doc is None:
            continue
        prov = provenance_of(doc)
        if prov is not None:
            s = site_of(prov)
            if s:
                seen_site[name] = s
            if prov.get("model_date"):
                seen_date[name] = str(prov["model_date"])
            d = (prov.get("derived_from") or {}).get("design")
            if d:
                seen_design[name] = d
        elif isinstance(doc.get("date"), str):
            seen_date[name] = doc["date"]
    sites = list(seen_site.items())
    for name, s in sites[1:]:
        if not same_site(sites[0][1][1:], s[1:]) or sites[0][1][0] != s[0]:
            return f"{sites[0][0]} is for site {sites[0][1][0]!r} but {name} for {s[0]!r}"
    dates = list(seen_date.items())
    for name, d in dates[1:]:
        if d != dates[0][1]:
            return f"{dates[0][0]} is for {dates[0][1]} but {name} for {d}"
    designs = list(seen_design.items())
    for name, d in designs[1:]:
        if d != designs[0][1]:
            return f"{designs[0][0]} is for design {designs[0][1]} but {name} for {d}"
    return ""


_SUPPLY_KEYS = ("max_current_A", "max_voltage_V", "resolution_A", "bipolar")


def supply_mismatch(design_doc, setpoints_doc) -> str:
    """'' when the supplies a design records (``requirement.supplies``) are the ones a current
    table was made for (its ``supply_limits``), else the first difference; '' when either
    does not say. The design's identity is its coils (cage.provenance.design_id), so a design
    with the same coils and other supplies is told apart here."""
    rec = ((design_doc or {}).get("requirement") or {}).get("supplies") if isinstance(design_doc, dict) else None
    used = (setpoints_doc or {}).get("supply_limits") if isinstance(setpoints_doc, dict) else None
    if not isinstance(rec, dict) or not isinstance(used, dict):
        return ""
    for axis in ("x", "y", "z"):
        a, b = rec.get(axis), used.get(axis)
        if not isinstance(a, dict) or not isinstance(b, dict):
            continue
        for key in _SUPPLY_KEYS:
            if key in a and key in b and a[key] != b[key]:
                return (f"design.json records the {axis} supply's {key} as {a[key]!r} but setpoints.json "
                        f"was made for {b[key]!r}")
    return ""


# ----------------------------------------------------------------------------- applying the rules

def site_for_design(design, site, heading_explicit: bool):
    """(site, heading note, warnings): the site turned to the built cage's true azimuth.

    Applies :func:`cage_heading` to a :class:`cage.sitefile.Site` used with ``design``; the
    returned site has a true heading, so every later rotation uses the built cage's frame.
    heading_explicit: the heading was given on the command line to replace the design's.
    """
    import dataclasses

    from cage.site import Orientation

    ori, loc = site.orientation, site.location
    stated = ori.heading_deg if (ori.stated or heading_explicit) else None
    decl = horizontal = 0.0
    if ori.heading_reference == "magnetic":
        from cage.geomag import earth_field

        e = earth_field(loc.latitude_deg, loc.longitude_deg, loc.altitude_m, site.date)
        decl, horizontal = e.declination_deg, e.horizontal_nT
    choice = cage_heading(design.site, stated, ori.heading_reference, heading_explicit, decl)
    warnings = list(choice.warnings)
    if choice.from_use_site:
        warnings.append(dip_pole_warning(horizontal, ori.heading_reference))
    site = dataclasses.replace(site, orientation=Orientation(choice.heading_true_deg, "true"))
    return site, choice.note, [w for w in warnings if w]


def calibration_ambient(record, where, design_identity, site, amb):
    """(coupling nT/A (3, 3), ambient nT (3,) cage frame, source, notes) of a calibration used here.

    Applies :func:`calibration_plan` to a loaded :class:`cage.calibrationfile.CalibrationRecord`
    at ``site`` (already turned by :func:`site_for_design`) with its ambient field ``amb``: the
    offset as made, carried to this date by the model's change at the calibration's position
    and azimuth, or not used (this site's field in force, the calibration's coupling only).
    """
    import datetime as dt

    from cage.geomag import model_cage_nT

    fit, prov = record.fit, record.provenance
    loc = site.location
    use = calibration_plan(prov, design_identity, (loc.latitude_deg, loc.longitude_deg, loc.altitude_m), site.date,
                           where)
    if use.offset == "not used":
        return fit.coupling_nT_per_A, amb.in_force_cage_nT, f"{amb.source} + calibration coupling", [use.note]
    if use.offset == "as made":
        return fit.coupling_nT_per_A, fit.offset_nT, "calibration", [use.note] if use.note else []
    from cage.provenance import site_of

    _, lat, lon, alt = site_of(prov)
    heading = prov.get("heading_true_deg")
    heading = amb.heading_true_deg if not isinstance(heading, (int, float)) else float(heading)
    then_date = dt.date.fromisoformat(str(prov["model_date"]))
    carried = carry_survey(fit.offset_nT, then_date, site.date, model_cage_nT(lat, lon, alt, then_date, heading),
                           model_cage_nT(lat, lon, alt, site.date, heading), what=use.note)
    return fit.coupling_nT_per_A, carried.field_cage_nT, "calibration", [carried.note]
