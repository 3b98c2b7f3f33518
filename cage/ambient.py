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
from cage.geomag import EarthField, earth_field


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
    heading_true = true_heading_deg(heading_deg, heading_reference, earth.declination_deg)
    cage_nT = ned_to_cage(earth.ned_nT, heading_true)
    measured = None if measured_cage_nT is None else tuple(float(v) for v in measured_cage_nT)
    return Ambient(earth=earth, heading_deg_given=float(heading_deg), heading_reference=heading_reference,
                   heading_true_deg=heading_true, model_cage_nT=tuple(float(v) for v in cage_nT),
                   measured_cage_nT=measured, measured_note=measured_note)


def site_ambient(site) -> Ambient:
    """Ambient field for a :class:`cage.sitefile.Site`."""
    loc, ori = site.location, site.orientation
    measured = site.measured.field_nT if site.measured is not None else None
    note = site.measured.note if site.measured is not None else ""
    return ambient_field(loc.latitude_deg, loc.longitude_deg, loc.altitude_m, site.date,
                         ori.heading_deg, ori.heading_reference, measured, note)
