"""How fast a field series changes, and the latency that rate leaves for a given error.

A field changing at rate |dB/dt| (nT/s) replayed late by a delay d is off by
|dB/dt| x d (first-order Taylor term), so an error budget E allows a total latency of
E / max |dB/dt|; a supply updated at f Hz holds each value for 1/f s, which alone
costs up to max |dB/dt| / f.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from cage.errors import InputError


@dataclass(frozen=True)
class FieldRate:
    """largest_rate_nT_per_s: max over steps of |B(k+1) - B(k)| / dt (vector norm);
    at_t_s: the start time of that step; largest_component_rate_nT_per_s: (x, y, z) maxima."""

    largest_rate_nT_per_s: float
    at_t_s: float
    largest_component_rate_nT_per_s: tuple[float, float, float]


def field_rate(t_s, field_nT) -> FieldRate:
    """Finite-difference rates of an (n, 3) field series at (n,) strictly increasing times."""
    t = np.asarray(t_s, dtype=float)
    b = np.asarray(field_nT, dtype=float)
    if t.ndim != 1 or t.size < 2 or b.shape != (t.size, 3):
        raise InputError(f"a field rate needs at least 2 samples of 3 components, got {b.shape}")
    dt = np.diff(t)
    if np.any(dt <= 0):
        raise InputError("times must increase strictly")
    rate = np.diff(b, axis=0) / dt[:, None]
    norm = np.linalg.norm(rate, axis=1)
    k = int(np.argmax(norm))
    comp = np.abs(rate).max(axis=0)
    return FieldRate(float(norm[k]), float(t[k]), tuple(float(c) for c in comp))


def allowed_latency_s(rate_nT_per_s: float, error_nT: float) -> float:
    """The largest delay that keeps rate x delay within ``error_nT`` (inf for a still field)."""
    if not error_nT > 0:
        raise InputError(f"the error budget must be a positive number of nT, got {error_nT!r}")
    return float("inf") if rate_nT_per_s <= 0 else float(error_nT) / float(rate_nT_per_s)
