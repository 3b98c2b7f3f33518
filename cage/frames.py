"""Rotations between the geographic ``ned`` frame and the ``cage`` frame.

``ned``: north, east, down at the site (geodetic).
``cage``: x horizontal toward the cage heading (true azimuth ``heading_deg``, clockwise
from true north), y horizontal 90 degrees clockwise from x seen from above, z down.
Both frames are right-handed; with heading 0 the cage frame is NED.

The rotation is about the down axis:
    x =  N cos(psi) + E sin(psi)
    y = -N sin(psi) + E cos(psi)
    z =  D
"""
from __future__ import annotations

import numpy as np


def true_heading_deg(heading_deg: float, reference: str, declination_deg: float) -> float:
    """True azimuth of cage +x: a magnetic heading adds the declination (east positive)."""
    if reference == "true":
        return float(heading_deg)
    if reference == "magnetic":
        return float(heading_deg) + float(declination_deg)
    raise ValueError(f"heading reference must be 'true' or 'magnetic', got {reference!r}")


def ned_to_cage_matrix(heading_deg: float) -> np.ndarray:
    """3x3 matrix R with v_cage = R @ v_ned, for the true heading of cage +x in degrees."""
    psi = np.radians(heading_deg)
    c, s = np.cos(psi), np.sin(psi)
    return np.array([[c, s, 0.0], [-s, c, 0.0], [0.0, 0.0, 1.0]])


def ned_to_cage(vectors_ned, heading_deg: float) -> np.ndarray:
    """Rotate vectors (3,) or (n, 3) from NED into the cage frame."""
    v = np.asarray(vectors_ned, dtype=float)
    return v @ ned_to_cage_matrix(heading_deg).T


def cage_to_ned(vectors_cage, heading_deg: float) -> np.ndarray:
    """Rotate vectors (3,) or (n, 3) from the cage frame into NED."""
    v = np.asarray(vectors_cage, dtype=float)
    return v @ ned_to_cage_matrix(heading_deg)
