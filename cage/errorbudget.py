"""The field error at the cage centre in nT, per axis and total, term by term (cage frame).

Operating point: the cage nulls the ambient field at its centre, so axis a makes B_a = -ambient_a
with current I_a = B_a / k_a (k_a its centre field per ampere, nT/A). Each term is one number per
axis, in nT: a bound for the deterministic terms (a step, a drift over a span) and one standard
deviation for the random ones (a built cage's errors). The totals are the root-sum-square of the
terms and their plain sum ("worst case": every term at its size with the same sign).

Terms, and what removes them:

* supply step: half the supply's current step times k_a (a set point rounds to the nearest
  step). Neither a calibration nor a closed loop removes it (a loop still moves in steps).
* supply temperature: temperature coefficient (ppm of full-scale current per K) x full scale x
  k_a x the room's temperature swing. A closed loop removes it.
* supply drift: drift (ppm of full scale per hour) x full scale x k_a x the span in hours.
  A closed loop removes it.
* supply noise: noise (ppm of full scale, rms) x full scale x k_a. A closed loop removes it
  below its bandwidth.
* winding temperature: under voltage drive the current is V / R and copper's resistance rises
  0.393 %/K (IEC 60028), so the field falls by B_a x 0.00393 x the winding's temperature swing;
  under current drive the regulator holds the current to its shunt's coefficient, which is
  already the supply temperature term, so this term is 0. A closed loop removes it.
* coupling constant: the built axis's field per ampere differs from the design's (its own
  component): from the Monte Carlo before calibration, from the fit's standard errors after.
  A calibration removes it to the fit's uncertainty; a closed loop removes it at the sensor.
* non-orthogonality: the other axes' fields leaking into this component (built axes are not
  exactly square to each other): Monte Carlo before, fit's standard errors after calibration.
  Calibration and closed loop as for the coupling constant.
* ambient gradient: the largest residual of this component over the test volume after nulling
  the centre, from a survey at several points (``cage.gradient``). Neither removes it (a
  uniform field cannot cancel a gradient).
* secular drift: the model's secular variation of this component x the years from the site's
  date to the valid-until date. A closed loop removes it; so does a new current table.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from cage.wires import COPPER_TEMPERATURE_COEFFICIENT_PER_K

__all__ = ["BudgetTerm", "ErrorBudget", "SupplyStability", "error_budget", "coupling_errors_nT"]


@dataclass(frozen=True)
class SupplyStability:
    """What the budget needs of one axis's supply channel.

    full_scale_A, resolution_A: range and set-point step (A); drive: "current" or "voltage"
    (the mode the channel regulates in); temperature_coefficient_ppm_per_K, drift_ppm_per_hour,
    noise_ppm: of full scale.
    """

    full_scale_A: float
    resolution_A: float
    drive: str = "current"
    temperature_coefficient_ppm_per_K: float = 100.0
    drift_ppm_per_hour: float = 10.0
    noise_ppm: float = 50.0


@dataclass(frozen=True)
class BudgetTerm:
    """One line of the budget: nT per axis (x, y, z), how the size is meant, what removes it."""

    name: str
    nT: tuple[float, float, float]
    kind: str  # "bound" or "1 sigma"
    removed_by_calibration: bool
    removed_by_closed_loop: bool
    note: str = ""

    @property
    def total_nT(self) -> float:
        """The three components together (root-sum-square over the axes)."""
        return float(math.sqrt(sum(v * v for v in self.nT)))


@dataclass(frozen=True)
class ErrorBudget:
    """The budget's terms and totals (nT). ``after_calibration`` replaces the coupling and
    orthogonality terms by the fit's uncertainty when a calibration was given, else None."""

    terms: tuple[BudgetTerm, ...]
    after_calibration: tuple[BudgetTerm, ...] | None

    @staticmethod
    def _totals(terms) -> dict:
        arr = np.array([t.nT for t in terms], dtype=float).reshape(-1, 3)
        rss = np.sqrt(np.sum(arr**2, axis=0))
        worst = np.sum(np.abs(arr), axis=0)
        return {"rss_nT": tuple(float(v) for v in rss), "worst_nT": tuple(float(v) for v in worst),
                "rss_total_nT": float(np.linalg.norm(rss)), "worst_total_nT": float(np.linalg.norm(worst))}

    def totals(self, stage: str = "as built") -> dict:
        """Per-axis and total RSS and worst case for ``stage``: "as built", "calibrated" (needs a
        calibration) or "closed loop" (the terms a closed loop does not remove)."""
        if stage == "as built":
            return self._totals(self.terms)
        if stage == "calibrated":
            return self._totals(self.after_calibration) if self.after_calibration is not None else {}
        if stage == "closed loop":
            return self._totals([t for t in self.terms if not t.removed_by_closed_loop])
        raise ValueError(f"unknown stage {stage!r}")


def coupling_errors_nT(delta_k_nT_per_A: np.ndarray, currents_A) -> tuple[np.ndarray, np.ndarray]:
    """RMS (over samples) of the coupling and cross-coupling errors at the centre, nT per axis.

    delta_k_nT_per_A: (N, 3, 3) built minus design centre field per ampere, [sample, component,
    axis]; currents_A: (3,) the operating currents. Returns (own-axis term (3,), cross term (3,)).
    """
    d = np.asarray(delta_k_nT_per_A, dtype=float)
    i = np.asarray(currents_A, dtype=float)
    contrib = d * i[None, None, :]  # [sample, component, axis]
    own = np.sqrt(np.mean(np.einsum("nkk->nk", contrib) ** 2, axis=0))
    cross_sum = contrib.sum(axis=2) - np.einsum("nkk->nk", contrib)
    cross = np.sqrt(np.mean(cross_sum**2, axis=0))
    return own, cross


def error_budget(axis_field_nT, field_per_amp_nT, supplies, temperature_swing_K: float,
                 span_hours: float, years: float, sv_nT_per_year,
                 delta_k_nT_per_A=None, calibration_stderr_nT_per_A=None,
                 calibration_offset_stderr_nT=None, gradient_residual_nT=None) -> ErrorBudget:
    """The nT budget at the centre (see the module docstring for each term).

    axis_field_nT: (3,) field each axis makes at the operating point (nT); field_per_amp_nT: (3,)
    k_a (nT/A); supplies: three ``SupplyStability``; temperature_swing_K: room (and winding)
    temperature swing (K); span_hours: time between current tables or calibrations (h); years:
    site date to valid-until (years); sv_nT_per_year: (3,) secular variation, cage frame;
    delta_k_nT_per_A: (N, 3, 3) Monte Carlo coupling errors or None; calibration_*: a fit's
    standard errors (3, 3) and (3,) or None; gradient_residual_nT: (3,) or None.
    """
    b = np.abs(np.asarray(axis_field_nT, dtype=float))
    k = np.abs(np.asarray(field_per_amp_nT, dtype=float))
    currents = np.asarray(axis_field_nT, dtype=float) / k
    fs = np.array([s.full_scale_A for s in supplies])

    def t3(v):
        return tuple(float(x) for x in np.broadcast_to(v, (3,)))

    terms = [
        BudgetTerm("supply step", t3(np.array([s.resolution_A for s in supplies]) * k / 2.0), "bound",
                   False, False, "half a current step"),
        BudgetTerm("supply temperature", t3(np.array([s.temperature_coefficient_ppm_per_K for s in supplies])
                                            * 1e-6 * fs * k * temperature_swing_K), "bound", False, True,
                   f"over a {temperature_swing_K:g} K swing"),
        BudgetTerm("supply drift", t3(np.array([s.drift_ppm_per_hour for s in supplies]) * 1e-6 * fs * k
                                      * span_hours), "bound", False, True, f"over {span_hours:g} h"),
        BudgetTerm("supply noise", t3(np.array([s.noise_ppm for s in supplies]) * 1e-6 * fs * k), "1 sigma",
                   False, True, "removed by a closed loop below its bandwidth"),
        BudgetTerm("winding temperature",
                   t3([b[a] * COPPER_TEMPERATURE_COEFFICIENT_PER_K * temperature_swing_K
                       if supplies[a].drive == "voltage" else 0.0 for a in range(3)]), "bound", False, True,
                   "voltage drive: copper 0.393 %/K; current drive: in the supply's coefficient"),
    ]
    own = cross = None
    if delta_k_nT_per_A is not None:
        own, cross = coupling_errors_nT(delta_k_nT_per_A, currents)
        terms.append(BudgetTerm("coupling constant", t3(own), "1 sigma", True, True, "build errors, Monte Carlo"))
        terms.append(BudgetTerm("non-orthogonality", t3(cross), "1 sigma", True, True, "build errors, Monte Carlo"))
    if gradient_residual_nT is not None:
        terms.append(BudgetTerm("ambient gradient", t3(gradient_residual_nT), "bound", False, False,
                                "largest residual over the test volume after nulling the centre"))
    terms.append(BudgetTerm("secular drift", t3(np.abs(np.asarray(sv_nT_per_year, float)) * years), "bound",
                            False, True, f"over {years:.2f} years"))
    after = None
    if calibration_stderr_nT_per_A is not None:
        se = np.nan_to_num(np.asarray(calibration_stderr_nT_per_A, dtype=float), nan=0.0)
        contrib = se * np.abs(currents)[None, :]
        own_c = np.abs(np.diag(contrib))
        cross_c = np.sqrt(np.sum(contrib**2, axis=1) - own_c**2)
        off = np.zeros(3) if calibration_offset_stderr_nT is None else \
            np.nan_to_num(np.asarray(calibration_offset_stderr_nT, dtype=float), nan=0.0)
        after = []
        for t in terms:
            if t.name == "coupling constant":
                after.append(BudgetTerm(t.name, t3(np.sqrt(own_c**2 + off**2)), "1 sigma", True, True,
                                        "calibration fit's standard errors (with the offset's)"))
            elif t.name == "non-orthogonality":
                after.append(BudgetTerm(t.name, t3(cross_c), "1 sigma", True, True,
                                        "calibration fit's standard errors"))
            else:
                after.append(t)
        if delta_k_nT_per_A is None:
            after.append(BudgetTerm("coupling constant", t3(np.sqrt(own_c**2 + off**2)), "1 sigma", True, True,
                                    "calibration fit's standard errors (with the offset's)"))
            after.append(BudgetTerm("non-orthogonality", t3(cross_c), "1 sigma", True, True,
                                    "calibration fit's standard errors"))
        after = tuple(after)
    return ErrorBudget(tuple(terms), after)
