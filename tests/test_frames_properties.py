"""Frame rotation properties (hypothesis), checked against the definitions of a rotation
about the down axis and of magnetic declination (heading_true = heading_mag + D)."""
from __future__ import annotations

import datetime as dt

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from cage.ambient import ambient_field
from cage.frames import cage_to_ned, ned_to_cage, ned_to_cage_matrix

vec = st.lists(st.floats(-7e4, 7e4, allow_nan=False), min_size=3, max_size=3)
heading = st.floats(-360, 360, allow_nan=False)


@given(vec, heading)
def test_rotation_keeps_magnitude_and_inverts(v, h):
    c = ned_to_cage(v, h)
    assert np.isclose(np.linalg.norm(c), np.linalg.norm(v), rtol=1e-12, atol=1e-9)
    assert np.allclose(cage_to_ned(c, h), v, atol=1e-8)
    r = ned_to_cage_matrix(h)
    assert np.isclose(np.linalg.det(r), 1.0)  # right-handed to right-handed


@given(vec)
def test_heading_zero_true_is_ned(v):
    assert np.allclose(ned_to_cage(v, 0.0), v)


def test_heading_90_points_x_east():
    # Cage +x toward east: the east component becomes x, north becomes -y.
    assert np.allclose(ned_to_cage([1.0, 0.0, 0.0], 90.0), [0.0, -1.0, 0.0], atol=1e-15)
    assert np.allclose(ned_to_cage([0.0, 1.0, 0.0], 90.0), [1.0, 0.0, 0.0], atol=1e-15)


@settings(max_examples=15, deadline=None)
@given(st.floats(-70, 70), st.floats(-180, 180), st.floats(-180, 180))
def test_magnetic_heading_shifts_by_declination(lat, lon, h):
    date = dt.date(2026, 1, 1)
    mag = ambient_field(lat, lon, 0.0, date, h, "magnetic")
    true = ambient_field(lat, lon, 0.0, date, h + mag.earth.declination_deg, "true")
    assert np.isclose(mag.heading_true_deg, h + mag.earth.declination_deg)
    assert np.allclose(mag.model_cage_nT, true.model_cage_nT, atol=1e-6)
    # With magnetic heading 0 the horizontal field lies along +x: y vanishes.
    zero = ambient_field(lat, lon, 0.0, date, 0.0, "magnetic")
    assert abs(zero.model_cage_nT[1]) < 1e-6
    assert zero.model_cage_nT[0] > 0
