"""The local geomagnetic main field from IGRF-14 (synthesis in cage.igrf, ppigrf's coefficient file).

Input is geodetic (WGS84) latitude and longitude in degrees, altitude in metres above
the ellipsoid, and a calendar date (taken at 00:00 UTC). Output is the field in the
``ned`` frame (north, east, down) in nT, with horizontal and total intensity,
declination and inclination, and the secular variation in nT per year.

IGRF: Alken et al., "International Geomagnetic Reference Field: the fourteenth
generation", Earth Planets Space (2025). The model is a piecewise-linear function of
time between its 5-year epochs; the last interval (2025-2030) is the predictive
secular-variation model.

Edge cases (the synthesis is ``cage.igrf``, numpy only: ppigrf itself imports pandas, about
0.3-0.4 s per process, so only its coefficient file is used):
- at latitude exactly +-90 the east component is undefined (1 / sin of the colatitude), so
  the poles are evaluated 1e-6 degrees short of the pole along the given meridian, which
  defines "north" and "east" there;
- past the last epoch the coefficients are held, so we extrapolate linearly with the last
  interval's secular variation, up to :data:`LAST_DATE`, with a warning;
- dates before 1900 are refused;
- secular variation is taken over the model interval that holds the date (the exact
  slope of the piecewise-linear model), so it stays right at the end of the span.
"""
from __future__ import annotations

import datetime as _dt
import functools
import math
from dataclasses import dataclass

import numpy as np

from cage.errors import InputError

MODEL_NAME = "IGRF-14"
FIRST_DATE = _dt.date(1900, 1, 1)
LAST_DATE = _dt.date(2035, 1, 1)
DAYS_PER_YEAR = 365.25
POLE_OFFSET_DEG = 1e-6


@dataclass(frozen=True)
class EarthField:
    """The main field at one site and date (``ned`` frame, nT)."""

    date: _dt.date
    latitude_deg: float
    longitude_deg: float
    altitude_m: float
    north_nT: float
    east_nT: float
    down_nT: float
    sv_north_nT_per_year: float
    sv_east_nT_per_year: float
    sv_down_nT_per_year: float
    model: str = MODEL_NAME
    extrapolated: bool = False
    warning: str = ""

    @property
    def ned_nT(self) -> np.ndarray:
        return np.array([self.north_nT, self.east_nT, self.down_nT])

    @property
    def sv_ned_nT_per_year(self) -> np.ndarray:
        return np.array([self.sv_north_nT_per_year, self.sv_east_nT_per_year, self.sv_down_nT_per_year])

    @property
    def horizontal_nT(self) -> float:
        return math.hypot(self.north_nT, self.east_nT)

    @property
    def total_nT(self) -> float:
        return math.sqrt(self.north_nT**2 + self.east_nT**2 + self.down_nT**2)

    @property
    def declination_deg(self) -> float:
        """Angle from true north to the horizontal field, east positive."""
        return math.degrees(math.atan2(self.east_nT, self.north_nT))

    @property
    def inclination_deg(self) -> float:
        """Dip below the horizontal, positive downward."""
        return math.degrees(math.atan2(self.down_nT, self.horizontal_nT))


@functools.lru_cache(maxsize=1)
def model_epochs() -> tuple[_dt.datetime, ...]:
    """The model's epochs (snapshot times) as naive UTC datetimes."""
    from cage.igrf import coefficients

    return coefficients()[0]


def _as_datetime(date) -> _dt.datetime:
    if isinstance(date, _dt.datetime):
        return date.replace(tzinfo=None)
    if isinstance(date, _dt.date):
        return _dt.datetime(date.year, date.month, date.day)
    raise InputError(f"date must be a calendar date, got {date!r}")


def _years(delta: _dt.timedelta) -> float:
    return delta.total_seconds() / 86400.0 / DAYS_PER_YEAR


def _igrf_ned(lat_deg: float, lon_deg: float, alt_m: float, dates: list[_dt.datetime]) -> np.ndarray:
    """(len(dates), 3) NED field at one point (cage.igrf)."""
    from cage.igrf import igrf_ned_nT

    with np.errstate(all="ignore"):
        out = igrf_ned_nT([lat_deg], [lon_deg], [alt_m], dates)[:, 0, :]
    if not np.all(np.isfinite(out)):
        raise InputError(f"the field model gave no value at latitude {lat_deg:g}, longitude {lon_deg:g}, "
                         f"altitude {alt_m:g} m")
    return out


def span_warning(date) -> str:
    """The one-line warning for a date past the model's predictive span, or ''."""
    last = model_epochs()[-1]
    when = _as_datetime(date)
    if when > last:
        return (f"warning: {when.date()} is after the end of {MODEL_NAME}'s predictive span ({last.date()}); "
                f"the field is extrapolated with the model's last secular variation and may be off by "
                f"tens to hundreds of nT")
    return ""


def earth_field(latitude_deg: float, longitude_deg: float, altitude_m: float, date) -> EarthField:
    """IGRF-14 main field at a geodetic site and date.

    latitude_deg: geodetic, -90..90. longitude_deg: east positive. altitude_m: above the
    WGS84 ellipsoid. date: datetime.date (00:00 UTC) or datetime.datetime (naive = UTC).
    Dates before 1900 or after 2035 raise InputError.

    Memoised per (position, instant): a run that needs the field at one site and date several
    times (the plan, its setpoint table, the re-use rules) synthesises it once. The result is a
    frozen record of floats, so sharing it is safe.
    """
    return _earth_field(float(latitude_deg), float(longitude_deg), float(altitude_m), _as_datetime(date))


@functools.lru_cache(maxsize=256)
def _earth_field(latitude_deg: float, longitude_deg: float, altitude_m: float, when: _dt.datetime) -> EarthField:
    day = when.date()
    if day < FIRST_DATE:
        raise InputError(f"date {day} is before {FIRST_DATE}, where {MODEL_NAME} begins")
    if day > LAST_DATE:
        raise InputError(f"date {day} is after {LAST_DATE}; {MODEL_NAME} cannot be extrapolated that far "
                         f"(its predictive span ends {model_epochs()[-1].date()})")
    if not -90.0 <= latitude_deg <= 90.0:
        raise InputError(f"latitude {latitude_deg:g} deg is outside -90..90")
    lat_eval = float(np.clip(latitude_deg, -90.0 + POLE_OFFSET_DEG, 90.0 - POLE_OFFSET_DEG))

    epochs = model_epochs()
    if when >= epochs[-1]:
        t_a, t_b = epochs[-2], epochs[-1]
        b_a, b_b = _igrf_ned(lat_eval, longitude_deg, altitude_m, [t_a, t_b])
        sv = (b_b - b_a) / _years(t_b - t_a)
        b = b_b + sv * _years(when - t_b)
    else:
        i = max(k for k in range(len(epochs) - 1) if epochs[k] <= when)
        t_a, t_b = epochs[i], epochs[i + 1]
        b, b_a, b_b = _igrf_ned(lat_eval, longitude_deg, altitude_m, [when, t_a, t_b])
        sv = (b_b - b_a) / _years(t_b - t_a)
    warning = span_warning(when)
    return EarthField(
        date=day,
        latitude_deg=float(latitude_deg),
        longitude_deg=float(longitude_deg),
        altitude_m=float(altitude_m),
        north_nT=float(b[0]),
        east_nT=float(b[1]),
        down_nT=float(b[2]),
        sv_north_nT_per_year=float(sv[0]),
        sv_east_nT_per_year=float(sv[1]),
        sv_down_nT_per_year=float(sv[2]),
        extrapolated=bool(warning),
        warning=warning,
    )


def model_cage_nT(latitude_deg: float, longitude_deg: float, altitude_m: float, date: _dt.date,
                  heading_true_deg: float) -> tuple[float, float, float]:
    """The model field at a position and date in the cage frame of a true heading (nT, cage.frames)."""
    from cage.frames import ned_to_cage

    earth = earth_field(latitude_deg, longitude_deg, altitude_m, date)
    return tuple(float(v) for v in ned_to_cage(earth.ned_nT, heading_true_deg))


TRACK_CHUNK_POINTS = 20_000


def _check_span(first: _dt.datetime, last: _dt.datetime) -> None:
    if first.date() < FIRST_DATE:
        raise InputError(f"date {first.date()} is before {FIRST_DATE}, where {MODEL_NAME} begins")
    if last.date() > LAST_DATE:
        raise InputError(f"date {last.date()} is after {LAST_DATE}; {MODEL_NAME} cannot be extrapolated that far "
                         f"(its predictive span ends {model_epochs()[-1].date()})")


def _ned_at_epochs(lat_deg, lon_deg, alt_m, epochs: list[_dt.datetime]) -> np.ndarray:
    """(len(epochs), n, 3) NED field at n points for each epoch, in chunks to bound memory."""
    from cage.igrf import igrf_ned_nT

    lat = np.clip(np.asarray(lat_deg, dtype=float), -90.0 + POLE_OFFSET_DEG, 90.0 - POLE_OFFSET_DEG)
    lon = np.broadcast_to(np.asarray(lon_deg, dtype=float), lat.shape)
    alt = np.broadcast_to(np.asarray(alt_m, dtype=float), lat.shape)
    out = np.empty((len(epochs), lat.size, 3))
    for s in range(0, lat.size, TRACK_CHUNK_POINTS):
        sl = slice(s, s + TRACK_CHUNK_POINTS)
        with np.errstate(all="ignore"):
            out[:, sl, :] = igrf_ned_nT(lat.ravel()[sl], lon.ravel()[sl], alt.ravel()[sl], epochs)
    if not np.all(np.isfinite(out)):
        k = int(np.flatnonzero(~np.all(np.isfinite(out), axis=(0, 2)))[0])
        raise InputError(f"the field model gave no value at latitude {lat[k]:g}, longitude {lon[k]:g}, "
                         f"altitude {alt_m[k] if np.ndim(alt_m) else alt_m:g} m")
    return out


def field_ned_along_track(latitude_deg, longitude_deg, altitude_m, start, t_s) -> tuple[np.ndarray, str]:
    """IGRF-14 NED field (nT) at n points each at its own time: a moving observer's track.

    latitude_deg, longitude_deg (east positive), altitude_m (above WGS84): (n,) geodetic
    positions; start: datetime (naive = UTC) of t = 0; t_s: (n,) seconds after ``start``.
    Returns ((n, 3) north, east, down in nT, the span warning or '').

    Vectorised over time exactly: the model is linear in its coefficients, which are
    piecewise linear in time between epochs (and extrapolated linearly with the last
    interval's secular variation past the last epoch, as :func:`earth_field` does), so the
    field at each point is evaluated at the bounding epochs only (ppigrf, chunked) and
    interpolated to the point's own time. Same dates refused and warned about as
    :func:`earth_field`.
    """
    lat = np.asarray(latitude_deg, dtype=float).ravel()
    lon = np.asarray(longitude_deg, dtype=float).ravel()
    alt = np.broadcast_to(np.asarray(altitude_m, dtype=float), lat.shape).ravel()
    t = np.asarray(t_s, dtype=float).ravel()
    if not (lat.shape == lon.shape == t.shape):
        raise InputError(f"track arrays must have one length, got {lat.size}, {lon.size}, {t.size}")
    if np.any(np.abs(lat) > 90.0) or not np.all(np.isfinite(lat) & np.isfinite(lon) & np.isfinite(alt)):
        raise InputError("track positions must be finite with latitudes within -90..90")
    when0 = _as_datetime(start)
    if t.size == 0:
        return np.zeros((0, 3)), ""
    first = when0 + _dt.timedelta(seconds=float(t.min()))
    last = when0 + _dt.timedelta(seconds=float(t.max()))
    _check_span(first, last)
    epochs = list(model_epochs())
    # Seconds of every epoch from start; each sample's interval index (the last one extends).
    ep_s = np.array([(e - when0).total_seconds() for e in epochs])
    idx = np.clip(np.searchsorted(ep_s, t, side="right") - 1, 0, len(epochs) - 2)
    out = np.empty((t.size, 3))
    for i in np.unique(idx):
        sel = idx == i
        pair = _ned_at_epochs(lat[sel], lon[sel], alt[sel], [epochs[i], epochs[i + 1]])
        frac = ((t[sel] - ep_s[i]) / (ep_s[i + 1] - ep_s[i]))[:, None]
        out[sel] = pair[0] + (pair[1] - pair[0]) * frac
    return out, span_warning(last)
