"""The ambient field a cage must work against, in the cage frame.

Combines the site (position, date, heading) with the IGRF-14 main field, and a survey
reading (``[measured]``) when the site has one: the measured field is then the one in
force, and its difference from the model is the local (building, crustal) share.
"""
from __future__ import annotations

import datetime as _dt
from dataclasses import dataclass

import numpy as np

from cage.frames import ned_to_cage, true_heading_deg
from cage.geomag import EarthField, earth_field, model_cage_nT  # noqa: F401  (model_cage_nT: its old home)


@dataclass(frozen=True)
class Ambient:
    """The field at the cage centre.

    earth: the model field (NED).
    heading_true_deg: true azimuth of cage +x used for the rotation.
    model_cage_nT: the model field in the cage frame.
    measured_cage_nT: the survey reading in the cage frame, or None.
    """

    earth: EarthField
    heading_deg_given: float
    heading_reference: str
    heading_true_deg: float
    model_cage_nT: tuple[float, float, float]
    measured_cage_nT: tuple[float, float, float] | None = None
    measured_note: str = ""
    notes: tuple[str, ...] = ()  # re-use warnings (survey age, dip pole), one line each

    @property
    def warnings(self) -> tuple[str, ...]:
        """Every warning about this field: the model's span, then the re-use notes."""
        return tuple(w for w in (self.earth.warning,) + self.notes if w)

    @property
    def source(self) -> str:
        return "measured" if self.measured_cage_nT is not None else self.earth.model

    @property
    def in_force_cage_nT(self) -> np.ndarray:
        """The field the cage works against: measured when surveyed, else the model."""
        if self.measured_cage_nT is not None:
            return np.array(self.measured_cage_nT, dtype=float)
        return np.array(self.model_cage_nT, dtype=float)

    @property
    def local_share_cage_nT(self) -> np.ndarray | None:
        """Measured minus model (the building's and crust's share), or None."""
        if self.measured_cage_nT is None:
            return None
        return np.array(self.measured_cage_nT) - np.array(self.model_cage_nT)

    @property
    def sv_cage_nT_per_year(self) -> np.ndarray:
        """Secular variation of the model field, in the cage frame."""
        return ned_to_cage(self.earth.sv_ned_nT_per_year, self.heading_true_deg)


def ambient_field(latitude_deg: float, longitude_deg: float, altitude_m: float, date: _dt.date,
                  heading_deg: float = 0.0, heading_reference: str = "true",
                  measured_cage_nT=None, measured_note: str = "") -> Ambient:
    """Model field at the site rotated into the cage frame, with an optional survey reading."""
    earth = earth_field(latitude_deg, longitude_deg, altitude_m, date)
    from cage.reuse import dip_pole_warning

    heading_true = true_heading_deg(heading_deg, heading_reference, earth.declination_deg)
    cage_nT = ned_to_cage(earth.ned_nT, heading_true)
    measured = None if measured_cage_nT is None else tuple(float(v) for v in measured_cage_nT)
    notes = (dip_pole_warning(earth.horizontal_nT, heading_reference),)
    return Ambient(earth=earth, heading_deg_given=float(heading_deg), heading_reference=heading_reference,
                   heading_true_deg=heading_true, model_cage_nT=tuple(float(v) for v in cage_nT),
                   measured_cage_nT=measured, measured_note=measured_note, notes=tuple(n for n in notes if n))


def site_ambient(site) -> Ambient:
    """Ambient field for a :class:`cage.sitefile.Site`.

    A survey (``[measured]``) made on another day than the site's date is carried to that
    date by the model's change between the two days, in the cage frame (cage.reuse).
    """
    import dataclasses

    loc, ori = site.location, site.orientation
    amb = ambient_field(loc.latitude_deg, loc.longitude_deg, loc.altitude_m, site.date,
                        ori.heading_deg, ori.heading_reference)
    m = site.measured
    if m is None:
        return amb
    from cage.reuse import carry_survey

    notes = list(amb.notes)
    if m.date_assumed:
        notes.append(f"warning: {site.source}: [measured] has no date; taking the site's date "
                     f"{m.date.isoformat()} as the survey's (add measured.date)")
    then = amb.model_cage_nT if m.date == site.date else survey_model_cage_nT(site, amb.heading_true_deg)
    carried = carry_survey(m.field_nT, m.date, site.date, then, amb.model_cage_nT)
    if m.date != site.date:
        notes.append(carried.note)
    note = "; ".join(t for t in (m.note, carried.note) if t)
    odd = survey_mismatch_warning(carried.field_cage_nT, amb.model_cage_nT, site.source)
    if odd:
        notes.append(odd)
    return dataclasses.replace(amb, measured_cage_nT=carried.field_cage_nT, measured_note=note, notes=tuple(notes))


# A building's steel and the ground shift the local field by a few microtesla, a tenth of the
# Earth's field or so (common practice of the trade); a survey off by more than half of it is
# more likely a mistake of units or axes, or a shielded room.
SURVEY_MISMATCH_SHARE = 0.5


def survey_mismatch_warning(measured_cage_nT, model_cage_nT, where: str) -> str:
    """A warning when a survey differs from the model field by more than SURVEY_MISMATCH_SHARE of
    the model's magnitude (both cage frame, nT); '' otherwise."""
    measured = np.asarray(measured_cage_nT, dtype=float)
    model = np.asarray(model_cage_nT, dtype=float)
    diff = float(np.linalg.norm(measured - model))
    size = float(np.linalg.norm(model))
    if diff <= SURVEY_MISMATCH_SHARE * size:
        return ""
    return (f"warning: {where}: [measured] field_nT differs from the model field by {diff:,.0f} nT, "
            f"{100.0 * diff / size:.0f} % of its {size:,.0f} nT; a building shifts the field by a few "
            f"microtesla: check the survey's units (nT) and axes (cage frame), unless the room is shielded")


def survey_model_cage_nT(site, heading_true_deg: float) -> tuple[float, float, float]:
    """The model field on the survey's day at the site, in the cage frame (nT)."""
    loc = site.location
    return model_cage_nT(loc.latitude_deg, loc.longitude_deg, loc.altitude_m, site.measured.date, heading_true_deg)
