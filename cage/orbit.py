"""Orbit propagation and frames: SGP4 positions in TEME, Earth-fixed and geodetic positions,
and the IGRF-14 field along the track in TEME.

Frames:
- ``teme``: the True Equator, Mean Equinox frame SGP4 works in (quasi-inertial; its z is the
  true pole of date, its x the mean equinox of date). Positions in km, velocities in km/s.
- ``ecef``: Earth-fixed (the pseudo Earth-fixed frame, PEF): TEME turned about z by the
  Greenwich mean sidereal time. Polar motion (at most about 15 m at the surface, arcseconds
  of pole) is neglected, so PEF stands in for ITRF.
- geodetic: WGS84 latitude, longitude (east positive), height above the ellipsoid.

Sources: Vallado, Crawford, Hujsak & Kelso, "Revisiting Spacetrack Report #3",
AIAA 2006-6753 (TEME and its reduction to PEF with GMST, their eqs. in sec. "Coordinate
frames"); GMST: IAU 1982 expression (Aoki et al. 1982), as in Vallado, "Fundamentals of
Astrodynamics and Applications", 4th ed., eq. 3-45; WGS84 constants: NIMA TR8350.2 (2000).
The SGP4 propagator itself is the ``sgp4`` package (Rhodes), the reference implementation
of Vallado et al. 2006.

Time: the sample times are UTC. GMST needs UT1; UT1 - UTC (within +-0.9 s, published by the
IERS) is an input (``ut1_minus_utc_s``, default 0). Left at 0 the Earth-fixed positions are
turned by up to 0.9 s of Earth rotation (about 400 m along the equator at the ground track),
a few nT of field at the orbit's field gradients.
"""
from __future__ import annotations

import datetime as _dt
import math
from dataclasses import dataclass

import numpy as np

from cage.errors import InputError

WGS84_A_KM = 6378.137
WGS84_F = 1.0 / 298.257223563
WGS84_E2 = WGS84_F * (2.0 - WGS84_F)
WGS72_MU_KM3_S2 = 398600.8  # the gravity constant SGP4 element sets are made with (WGS72)
SECONDS_PER_DAY = 86400.0
MAX_SAMPLES = 1_000_000
SGP4_EPOCH_ORIGIN = _dt.datetime(1949, 12, 31)  # sgp4init's epoch counts days from here (UT)
MIN_HEIGHT_KM = 100.0  # lowest perigee (options) or height along the span (element sets) accepted
EARTH_RADIUS_KM = 6371.0  # mean radius, for distances stated in Earth radii
# The day-side magnetopause stands near 10 Earth radii from the Earth's centre (a common figure
# of the trade, from memory; it moves with the solar wind, from about 6 to 15). Beyond it the
# field of the solar wind and of the magnetosphere's currents, which IGRF-14 (the Earth's
# internal field only) leaves out, dominates; the internal field there is a few nT.
MAGNETOPAUSE_RADIUS_KM = 10.0 * EARTH_RADIUS_KM


@dataclass(frozen=True, eq=False)
class Track:
    """An orbit sampled at times ``t_s`` (s after ``start``, UTC).

    position_teme_km, velocity_teme_km_s: (n, 3) TEME. position_ecef_km: (n, 3) Earth-fixed.
    latitude_deg, longitude_deg (-180..180), altitude_km: (n,) geodetic WGS84.
    gmst_rad: (n,) the angle that turns TEME into Earth-fixed.
    """

    start: _dt.datetime
    t_s: np.ndarray
    position_teme_km: np.ndarray
    velocity_teme_km_s: np.ndarray
    position_ecef_km: np.ndarray
    latitude_deg: np.ndarray
    longitude_deg: np.ndarray
    altitude_km: np.ndarray
    gmst_rad: np.ndarray


def sample_times_s(duration_s: float, step_s: float) -> np.ndarray:
    """0, step, 2 step, ... up to ``duration_s`` (inclusive within 1e-9 of a step)."""
    try:
        d, s = float(duration_s), float(step_s)
    except (TypeError, ValueError):
        raise InputError(f"duration and step must be numbers of seconds, got {duration_s!r}, {step_s!r}") from None
    if not (math.isfinite(d) and d > 0):
        raise InputError(f"duration must be a positive number of seconds, got {duration_s!r}")
    if not (math.isfinite(s) and s > 0):
        raise InputError(f"step must be a positive number of seconds, got {step_s!r}")
    n = int(math.floor(d / s + 1e-9)) + 1
    if n > MAX_SAMPLES:
        raise InputError(f"{d:g} s in steps of {s:g} s is {n} samples, more than {MAX_SAMPLES}")
    if n < 2:
        raise InputError(f"duration {d:g} s is shorter than one step of {s:g} s")
    return np.arange(n, dtype=float) * s


def gmst_rad(jd_ut1, fraction_ut1=0.0) -> np.ndarray:
    """Greenwich mean sidereal time (rad, 0..2 pi) at UT1 Julian dates ``jd_ut1 + fraction_ut1``.

    IAU 1982 (Aoki et al. 1982; Vallado eq. 3-45), T in Julian centuries of UT1 from J2000:
    GMST [s] = 67310.54841 + (876600 h + 8640184.812866) T + 0.093104 T^2 - 6.2e-6 T^3.
    The whole day and the fraction are kept apart for precision.
    """
    days = (np.asarray(jd_ut1, dtype=float) - 2451545.0) + np.asarray(fraction_ut1, dtype=float)
    t = days / 36525.0
    # The 876600 h T term is 86400 s per day of UT1, whole turns: only its day fraction counts.
    sec = 67310.54841 + 8640184.812866 * t + 0.093104 * t * t - 6.2e-6 * t ** 3 + np.mod(days, 1.0) * 86400.0
    sec = np.mod(sec, 86400.0)
    return sec / 86400.0 * 2.0 * math.pi


def teme_to_ecef(vectors_teme, gmst) -> np.ndarray:
    """Rotate (n, 3) TEME vectors into Earth-fixed (PEF): R3(gmst), polar motion neglected."""
    v = np.asarray(vectors_teme, dtype=float)
    c, s = np.cos(gmst), np.sin(gmst)
    return np.column_stack((c * v[:, 0] + s * v[:, 1], -s * v[:, 0] + c * v[:, 1], v[:, 2]))


def ecef_to_teme(vectors_ecef, gmst) -> np.ndarray:
    """The inverse of :func:`teme_to_ecef`."""
    v = np.asarray(vectors_ecef, dtype=float)
    c, s = np.cos(gmst), np.sin(gmst)
    return np.column_stack((c * v[:, 0] - s * v[:, 1], s * v[:, 0] + c * v[:, 1], v[:, 2]))


def ecef_to_geodetic(position_km) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """WGS84 geodetic latitude (deg), longitude (deg, -180..180) and height (km) of (n, 3) points.

    Fixed-point iteration on latitude, tan(phi) = (z + e^2 N sin phi) / p, with the height
    h = p cos phi + z sin phi - a sqrt(1 - e^2 sin^2 phi), which holds at every latitude
    including the poles (Heiskanen & Moritz, "Physical Geodesy", 1967, sec. 5-3); converges
    to below a micrometre in 6 iterations for heights under 10^5 km.
    """
    r = np.asarray(position_km, dtype=float)
    x, y, z = r[:, 0], r[:, 1], r[:, 2]
    p = np.hypot(x, y)
    lat = np.arctan2(z, p * (1.0 - WGS84_E2))
    for _ in range(8):
        s = np.sin(lat)
        n = WGS84_A_KM / np.sqrt(1.0 - WGS84_E2 * s * s)
        lat = np.arctan2(z + WGS84_E2 * n * s, p)
    s, c = np.sin(lat), np.cos(lat)
    h = p * c + z * s - WGS84_A_KM * np.sqrt(1.0 - WGS84_E2 * s * s)
    return np.degrees(lat), np.degrees(np.arctan2(y, x)), h


def ned_basis_ecef(latitude_deg, longitude_deg) -> np.ndarray:
    """(n, 3, 3): rows are the north, east, down unit vectors in Earth-fixed axes (geodetic)."""
    phi, lam = np.radians(latitude_deg), np.radians(longitude_deg)
    sp, cp, sl, cl = np.sin(phi), np.cos(phi), np.sin(lam), np.cos(lam)
    zero = np.zeros_like(phi)
    north = np.stack((-sp * cl, -sp * sl, cp), axis=-1)
    east = np.stack((-sl, cl, zero), axis=-1)
    down = np.stack((-cp * cl, -cp * sl, -sp), axis=-1)
    return np.stack((north, east, down), axis=-2)


def _julian(when: _dt.datetime) -> tuple[float, float]:
    from sgp4.api import jday

    return jday(when.year, when.month, when.day, when.hour, when.minute, when.second + when.microsecond * 1e-6)


def propagate(satrec, start: _dt.datetime, t_s, ut1_minus_utc_s: float = 0.0) -> Track:
    """SGP4 positions at ``start`` (UTC) + ``t_s`` seconds, and their Earth-fixed and geodetic forms.

    satrec: an ``sgp4.api.Satrec``. Raises InputError naming the first sample where SGP4
    fails (decay, eccentricity out of range).
    """
    from sgp4.api import SGP4_ERRORS

    if not -1.0 <= ut1_minus_utc_s <= 1.0:
        raise InputError(f"UT1 - UTC must be within -1..1 s, got {ut1_minus_utc_s:g}")
    t = np.asarray(t_s, dtype=float)
    jd0, fr0 = _julian(start)
    jd = np.full(t.shape, jd0)
    fr = fr0 + t / SECONDS_PER_DAY
    whole = np.floor(fr)
    jd, fr = jd + whole, fr - whole
    err, r, v = satrec.sgp4_array(jd, fr)
    bad = np.flatnonzero(err)
    if bad.size:
        k = int(bad[0])
        raise InputError(f"SGP4 cannot propagate the orbit to t = {t[k]:g} s "
                         f"({SGP4_ERRORS.get(int(err[k]), int(err[k]))})")
    if not np.all(np.isfinite(r)):
        raise InputError("SGP4 gave no position for part of the span")
    theta = gmst_rad(jd, fr + ut1_minus_utc_s / SECONDS_PER_DAY)
    ecef = teme_to_ecef(r, theta)
    lat, lon, alt = ecef_to_geodetic(ecef)
    if np.any(alt < 0.0):
        k = int(np.flatnonzero(alt < 0.0)[0])
        raise InputError(f"the orbit is below the ground at t = {t[k]:g} s (height {alt[k]:.1f} km)")
    return Track(start=start, t_s=t, position_teme_km=np.asarray(r), velocity_teme_km_s=np.asarray(v),
                 position_ecef_km=ecef, latitude_deg=lat, longitude_deg=lon, altitude_km=alt, gmst_rad=theta)


def satrec_from_elements(epoch: _dt.datetime, eccentricity: float, inclination_deg: float, raan_deg: float,
                         arg_perigee_deg: float, mean_anomaly_deg: float, *, semi_major_axis_km=None,
                         altitude_km=None, satellite_number: int = 99999):
    """An sgp4 ``Satrec`` from mean orbital elements, for a planned mission (no drag: B* = 0).

    Give the size as ``semi_major_axis_km`` or as ``altitude_km`` (semi-major axis minus the
    WGS84 equatorial radius). The mean motion is n = sqrt(mu / a^3) with mu of WGS72, the
    constants SGP4 is run with; SGP4 then adds the J2-J4 secular and periodic terms (Hoots &
    Roehrich 1980), so this is Keplerian motion with the Earth's oblateness. The elements are
    taken as SGP4 mean elements, not osculating ones.
    """
    from sgp4.api import SGP4_ERRORS, WGS72, Satrec

    if (semi_major_axis_km is None) == (altitude_km is None):
        raise InputError("give the orbit's size as exactly one of altitude (km) or semi-major axis (km)")
    a = float(semi_major_axis_km) if semi_major_axis_km is not None else WGS84_A_KM + float(altitude_km)
    e = float(eccentricity)
    checks = ((math.isfinite(a) and a > 0, f"semi-major axis must be positive, got {a:g} km"),
              (math.isfinite(e) and 0.0 <= e < 1.0, f"eccentricity must be within 0..1, got {e:g}"),
              (0.0 <= inclination_deg <= 180.0, f"inclination must be within 0..180 deg, got {inclination_deg:g}"))
    for ok, message in checks:
        if not ok:
            raise InputError(message)
    for value, what in ((raan_deg, "RAAN"), (arg_perigee_deg, "argument of perigee"),
                        (mean_anomaly_deg, "mean anomaly")):
        if not math.isfinite(value):
            raise InputError(f"{what} must be a finite angle in degrees, got {value!r}")
    perigee_km = a * (1.0 - e) - WGS84_A_KM
    if perigee_km < MIN_HEIGHT_KM:
        raise InputError(f"perigee height {perigee_km:.1f} km is below {MIN_HEIGHT_KM:g} km: the orbit would "
                         f"decay at once")
    n_rad_min = math.sqrt(WGS72_MU_KM3_S2 / a ** 3) * 60.0
    epoch_days = (epoch - SGP4_EPOCH_ORIGIN).total_seconds() / SECONDS_PER_DAY
    sat = Satrec()
    sat.sgp4init(WGS72, "i", satellite_number, epoch_days, 0.0, 0.0, 0.0, e,
                 math.radians(arg_perigee_deg % 360.0), math.radians(inclination_deg),
                 math.radians(mean_anomaly_deg % 360.0), n_rad_min, math.radians(raan_deg % 360.0))
    if sat.error:
        raise InputError(f"the orbital elements cannot be propagated ({SGP4_ERRORS.get(sat.error, sat.error)})")
    return sat


def check_height(track: Track, where: str) -> None:
    """InputError naming ``where`` (the element set's file) when the track's geodetic height
    comes below MIN_HEIGHT_KM anywhere in the span: the orbit has decayed, or would at once."""
    k = int(np.argmin(track.altitude_km))
    low_km = float(track.altitude_km[k])
    if low_km < MIN_HEIGHT_KM:
        when = track.start + _dt.timedelta(seconds=float(track.t_s[k]))
        raise InputError(f"{where}: the orbit's height falls to {low_km:.1f} km at t = {track.t_s[k]:g} s "
                         f"({when:%Y-%m-%dT%H:%M:%S} UTC), below {MIN_HEIGHT_KM:g} km: the orbit has decayed or "
                         f"would decay at once")


def outer_field_warning(track: Track) -> str:
    """'' or a warning when the track goes farther than MAGNETOPAUSE_RADIUS_KM from the Earth's
    centre, where IGRF-14 (an internal-field model) no longer describes the field."""
    r_km = np.linalg.norm(track.position_ecef_km, axis=1)
    k = int(np.argmax(r_km))
    if not r_km[k] > MAGNETOPAUSE_RADIUS_KM:
        return ""
    return (f"warning: the orbit reaches {r_km[k]:,.0f} km from the Earth's centre ({r_km[k] / EARTH_RADIUS_KM:.1f} "
            f"Earth radii) at t = {track.t_s[k]:g} s; beyond about {MAGNETOPAUSE_RADIUS_KM:,.0f} km (10 Earth radii, "
            f"the day-side magnetopause) external sources dominate and IGRF-14, the Earth's internal field only, "
            f"does not describe the field there")


def field_teme_nT(track: Track) -> tuple[np.ndarray, np.ndarray, str]:
    """IGRF-14 field along the track: ((n, 3) TEME nT, (n, 3) NED nT, span warning or '')."""
    from cage.geomag import field_ned_along_track

    ned, warning = field_ned_along_track(track.latitude_deg, track.longitude_deg, track.altitude_km * 1000.0,
                                         track.start, track.t_s)
    basis = ned_basis_ecef(track.latitude_deg, track.longitude_deg)  # rows n, e, d in ECEF
    ecef = np.einsum("ni,nij->nj", ned, basis)
    return ecef_to_teme(ecef, track.gmst_rad), ned, warning


@dataclass(frozen=True, eq=False)
class OrbitField:
    """The field a spacecraft sees along its track.

    body_nT: (n, 3) in the body frame of the attitude; teme_nT: (n, 3) the same field in
    TEME; total_nT: (n,) |B|; warning: the model's span warning or ''.
    """

    track: Track
    body_nT: np.ndarray
    teme_nT: np.ndarray
    total_nT: np.ndarray
    warning: str


def orbit_field(satrec, start: _dt.datetime, t_s, attitude, ut1_minus_utc_s: float = 0.0,
                elements_file: str = "") -> OrbitField:
    """Propagate, evaluate IGRF-14 along the track and turn the field into the body frame.

    attitude: a :class:`cage.attitude.Attitude`. elements_file: the element set's file, if
    the orbit comes from one; a track below MIN_HEIGHT_KM is then refused naming it
    (:func:`check_height`), before the field is evaluated.
    """
    from cage.attitude import attitude_matrices, body_field_nT

    track = propagate(satrec, start, t_s, ut1_minus_utc_s)
    if elements_file:
        check_height(track, elements_file)
    teme, _, warning = field_teme_nT(track)
    m = attitude_matrices(attitude, track.t_s, track.position_teme_km, track.velocity_teme_km_s)
    body = body_field_nT(m, teme)
    return OrbitField(track=track, body_nT=body, teme_nT=teme, total_nT=np.linalg.norm(teme, axis=1),
                      warning=warning)
