"""Invented element sets for the orbit tests, built here with their checksums.

No real satellite's element set is used: the satellite numbers are in the 99xxx range and
the elements are chosen for the tests.
"""
from __future__ import annotations

import math

WGS72_MU_KM3_S2 = 398600.8  # WGS72 gravity constant (Hoots & Roehrich 1980), from memory


def checksum(line68: str) -> int:
    """TLE checksum rule (Hoots & Roehrich, Spacetrack Report No. 3): digits summed, '-' = 1, mod 10."""
    return sum(int(c) if c.isdigit() else (1 if c == "-" else 0) for c in line68) % 10


def make_tle(satnum=99901, year=27, day=60.0, incl=51.6, raan=120.0, ecc=0.0005, argp=90.0, mean_anomaly=0.0,
             altitude_km=420.0, bstar="00000-0", name="TEST SAT A") -> str:
    n_rev_day = math.sqrt(WGS72_MU_KM3_S2 / (6378.137 + altitude_km) ** 3) * 86400.0 / (2.0 * math.pi)
    l1 = f"1 {satnum:05d}U 27001A   {year:02d}{day:012.8f}  .00000000  00000-0 {bstar:>8s} 0  999"
    l2 = (f"2 {satnum:05d} {incl:8.4f} {raan:8.4f} {round(ecc * 1e7):07d} {argp:8.4f} {mean_anomaly:8.4f} "
          f"{n_rev_day:11.8f}    1")
    assert len(l1) == 68 and len(l2) == 68, (len(l1), len(l2))
    return f"{name}\n{l1}{checksum(l1)}\n{l2}{checksum(l2)}\n"
