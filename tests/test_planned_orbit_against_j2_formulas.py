"""Orbits from options (planned missions) against the J2 secular rates of the node and perigee.

Reference: first-order J2 secular rates (Vallado, "Fundamentals of Astrodynamics and
Applications", 4th ed., eqs. 9-41 and 9-42; also Kozai 1959):
    dOmega/dt = -3/2 n J2 (Re / p)^2 cos i,
    domega/dt =  3/4 n J2 (Re / p)^2 (4 - 5 sin^2 i),
with p = a (1 - e^2), J2 = 1.08263e-3 and Re = 6378.137 km (WGS84 values, from memory).
The sun-synchronous condition (node turning 360 deg per tropical year of 365.2422 days) is the
standard published case.
"""
from __future__ import annotations

import datetime as dt
import math

import numpy as np
import pytest

from cage import orbit

J2 = 1.08263e-3
RE_KM = 6378.137
MU_KM3_S2 = 398600.4418
START = dt.datetime(2027, 3, 1)


def _rates_deg_day(a_km, e, i_deg):
    n = math.sqrt(MU_KM3_S2 / a_km ** 3)  # rad/s
    k = n * J2 * (RE_KM / (a_km * (1 - e * e))) ** 2
    i = math.radians(i_deg)
    node = -1.5 * k * math.cos(i)
    perigee = 0.75 * k * (4 - 5 * math.sin(i) ** 2)
    return math.degrees(node) * 86400.0, math.degrees(perigee) * 86400.0


def _node_deg(track):
    h = np.cross(track.position_teme_km, track.velocity_teme_km_s)
    return np.degrees(np.unwrap(np.arctan2(h[:, 0], -h[:, 1])))  # node vector z x h = (-h_y, h_x, 0)


def _drift_deg_day(t_s, angle_deg):
    return np.polyfit(t_s / 86400.0, angle_deg, 1)[0]


def test_sun_synchronous_node_turns_a_degree_a_day():
    a = RE_KM + 700.0
    target = 360.0 / 365.2422
    cos_i = -target / (-_rates_deg_day(a, 0.0, 0.0)[0])  # node rate scales with cos i
    incl = math.degrees(math.acos(cos_i))
    assert 98.0 < incl < 98.4  # a 700 km sun-synchronous orbit is inclined about 98.2 deg (common practice)
    sat = orbit.satrec_from_elements(START, 0.001, incl, 40.0, 0.0, 0.0, altitude_km=700.0)
    t = orbit.sample_times_s(5 * 86400.0, 60.0)
    track = orbit.propagate(sat, START, t)
    assert abs(_drift_deg_day(t, _node_deg(track)) - target) < 0.02 * target


@pytest.mark.parametrize("alt_km,e,incl", [(420.0, 0.0005, 51.6), (1200.0, 0.05, 30.0)])
def test_node_and_perigee_drift(alt_km, e, incl):
    a = RE_KM + alt_km
    node_rate, perigee_rate = _rates_deg_day(a, e, incl)
    sat = orbit.satrec_from_elements(START, e, incl, 10.0, 45.0, 0.0, altitude_km=alt_km)
    t = orbit.sample_times_s(4 * 86400.0, 60.0)
    track = orbit.propagate(sat, START, t)
    assert abs(_drift_deg_day(t, _node_deg(track)) - node_rate) < 0.02 * abs(node_rate)
    if e >= 0.01:  # the perigee is well defined only for a clearly eccentric orbit
        r, v = track.position_teme_km, track.velocity_teme_km_s
        h = np.cross(r, v)
        ecc = np.cross(v, h) / MU_KM3_S2 - r / np.linalg.norm(r, axis=1)[:, None]
        node = np.column_stack((-h[:, 1], h[:, 0], np.zeros(len(t))))
        node /= np.linalg.norm(node, axis=1)[:, None]
        cosw = np.sum(node * ecc, axis=1) / np.linalg.norm(ecc, axis=1)
        sinw = np.sum(np.cross(node, ecc) * h, axis=1) / (np.linalg.norm(ecc, axis=1) * np.linalg.norm(h, axis=1))
        argp = np.degrees(np.unwrap(np.arctan2(sinw, cosw)))
        assert abs(_drift_deg_day(t, argp) - perigee_rate) < 0.05 * abs(perigee_rate)
