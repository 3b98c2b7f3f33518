"""Coil systems for one cage axis: the pair and published three- and four-coil systems.

Every system here is a set of coaxial coils placed symmetrically about the cage centre and
driven in series aiding, with coil positions, sizes and ampere-turns chosen so that the low
even-order axial derivatives of the field vanish at the centre (the odd ones vanish by the
symmetry). Writing the on-axis field as B(z) = B0 (1 + c2 z^2 + c4 z^4 + c6 z^6 + ...),

================  ========  =====================================================  ============
system            shape     coils (positions, sizes, ampere-turns)                 zeroed
================  ========  =====================================================  ============
pair              round     radius R at +-R/2 (Helmholtz)                          c2
pair              square    side s at +-0.27225 s (Firester, Rev. Sci. Instrum.    c2
                            37, 1264 (1966))
three             square    equal squares at 0 and +-0.4106 s, centre:outer        c2, c4
                            ampere-turns 0.5128 (Merritt, Purcell and Stroink,
                            Rev. Sci. Instrum. 54, 879 (1983))
three             round     radius R at 0, radius 0.7559 R at +-0.6547 R (all on   c2, c4
                            the sphere of radius R), ampere-turns 64:49 (Maxwell,
                            A Treatise on Electricity and Magnetism (1873), vol. 2,
                            art. 715)
four              square    equal squares at +-0.1281 s and +-0.5055 s,            c2, c4, c6
                            outer:inner ampere-turns 2.3612 (Merritt et al. 1983)
four              round     radius R at +-0.2780 R, 0.7639 R at +-0.8457 R, equal  c2, c4, c6
                            currents (Braunbek, Z. Phys. 88, 399 (1934))
four-equal        round     equal circles at +-0.2432 R and +-0.9407 R,            c2, c4, c6
                            outer:inner ampere-turns 2.2604
================  ========  =====================================================  ============

How the numbers are found (``derive_system``): the coefficients c_n are taken from the exact
on-axis field of the filaments (``cage.biot_savart`` through ``cage.coils.coil_filaments``),
sampled at Chebyshev points on a short stretch of the axis and differentiated through the
Chebyshev series; the free parameters (positions, ratios, a radius) are then found by a
root finder (scipy.optimize.root) that zeroes as many c_n as there are parameters.

Whole turns. An exact ampere-turns ratio cannot be wound; each system has a pattern of whole
turns per coil close to its ratio (Merritt's 26:11 for the four squares; Maxwell's 64:49 is
exact; Braunbek's and the pair's are 1:1), and the positions are re-found for that pattern
(``derive_for_turns``): with the ratio fixed one parameter fewer is free, so one
coefficient fewer is zeroed. The planner plans with the whole-turns system; a coil's turns
are a whole multiple of its pattern entry (``system_axis(..., multiplier=k)``).

Derivation costs about a second for all systems, so the results are tabulated in
``TABLE`` (``tests/test_coil_systems_against_published_values.py`` re-derives and compares).
Sizes: ``size_m`` is the side of the squares, or the radius of the largest round coil.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from cage.coilaxis import Coil, CoilAxis
from cage.coils import AXES, SHAPES
from cage.errors import InputError

__all__ = [
    "SYSTEMS",
    "SystemGeometry",
    "TABLE",
    "systems_for_shape",
    "system_geometry",
    "system_axis",
    "axial_coefficients",
    "derive_system",
    "derive_for_turns",
]

SYSTEMS = ("pair", "three", "four", "four-equal")

_CHEB_DEGREE = 30


@dataclass(frozen=True)
class SystemGeometry:
    """One system's coils for a unit size (side 1 for squares, largest radius 1 for circles).

    positions: coil-plane positions per unit size, ascending. sizes: each coil's side or
    radius per unit size. turns: the whole-turns pattern (per coil). weights: the exact
    ampere-turns per coil of the ideal system (relative: only their ratios count).
    ideal_positions: the positions of the ideal (exact-ratio) system. zeroed: the even orders
    of the axial field zeroed with ``turns``. source: where the system is published.
    """

    system: str
    shape: str
    positions: tuple[float, ...]
    sizes: tuple[float, ...]
    turns: tuple[int, ...]
    weights: tuple[float, ...]
    ideal_positions: tuple[float, ...]
    zeroed: tuple[int, ...]
    source: str

    @property
    def half_length(self) -> float:
        """Largest |position| per unit size."""
        return max(abs(p) for p in self.positions)


# ---------------------------------------------------------------------------------------------
# Derivation
# ---------------------------------------------------------------------------------------------


def axial_coefficients(shape: str, coils, orders=(2, 4, 6)) -> list[float]:
    """Relative Taylor coefficients c_n = B^(n)(0) / (n! B(0)) of the on-axis field (1/m^n).

    coils: (position_m, ampere-turns, size_m) of coaxial coils on the z axis (any real
    ampere-turns). The exact field (``cage.biot_savart``) is sampled at Chebyshev points on
    |z| <= h, h = 0.4 x the distance from the centre to the nearest wire (well inside the
    region where the field is analytic), and the series is differentiated at z = 0.
    """
    from numpy.polynomial import chebyshev as cheb

    from cage.coils import coil_filaments, filaments_field_T

    fil = None
    reach = math.inf
    for p, w, s in coils:
        f = coil_filaments(shape, "z", float(s), float(p), float(w))
        fil = f if fil is None else fil + f
        reach = min(reach, math.hypot(p, s / 2.0 if shape == "square" else s))
    h = 0.4 * reach
    n = _CHEB_DEGREE
    t = np.cos(np.pi * (np.arange(n + 1) + 0.5) / (n + 1))
    pts = np.zeros((t.size, 3))
    pts[:, 2] = h * t
    b = filaments_field_T(fil, pts)[:, 2]
    c = cheb.chebfit(t, b, n)
    b0 = cheb.chebval(0.0, c)
    return [float(cheb.chebval(0.0, cheb.chebder(c, k)) / h ** k / math.factorial(k) / b0) for k in orders]


def _layout(system: str, shape: str, x, turns=None):
    """(position, ampere-turns, size) per coil, unit size, for the free parameters x.

    With ``turns`` the ratio is fixed by the pattern and x holds positions only.
    """
    if system == "pair":
        p = x[0]
        return [(-p, 1.0, 1.0), (p, 1.0, 1.0)]
    if system == "three" and shape == "square":
        p = x[0]
        w = x[1] if turns is None else turns[1] / turns[0]
        return [(-p, 1.0, 1.0), (0.0, w, 1.0), (p, 1.0, 1.0)]
    if system == "three" and shape == "round":
        p = x[0]
        w = x[1] if turns is None else turns[1] / turns[0]
        r = math.sqrt(max(1.0 - p * p, 1e-6))  # Maxwell: the outer coils on the sphere of radius R
        return [(-p, 1.0, r), (0.0, w, 1.0), (p, 1.0, r)]
    if system == "four" and shape == "round":  # Braunbek: equal currents, smaller outer coils
        p1, p2, r = x
        return [(-p2, 1.0, r), (-p1, 1.0, 1.0), (p1, 1.0, 1.0), (p2, 1.0, r)]
    if system in ("four", "four-equal"):
        p1, p2 = x[0], x[1]
        w = x[2] if turns is None else turns[0] / turns[1]
        return [(-p2, w, 1.0), (-p1, 1.0, 1.0), (p1, 1.0, 1.0), (p2, w, 1.0)]
    raise InputError(f"no {shape} {system} system")


_STARTS = {
    ("pair", "round"): (0.5,),
    ("pair", "square"): (0.27,),
    ("three", "square"): (0.41, 0.51),
    ("three", "round"): (0.65, 1.3),
    ("four", "square"): (0.128, 0.505, 2.36),
    ("four", "round"): (0.278, 0.846, 0.764),
    ("four-equal", "round"): (0.243, 0.941, 2.26),
}
_ORDERS = {"pair": (2,), "three": (2, 4), "four": (2, 4, 6), "four-equal": (2, 4, 6)}


def _solve(fun, x0):
    from scipy.optimize import root

    res = root(fun, np.asarray(x0, dtype=float), method="hybr", options={"xtol": 1e-12})
    if not np.all(np.abs(res.fun) < 1e-5):
        raise RuntimeError(f"coil system derivation did not converge (residuals {res.fun})")
    return [float(v) for v in res.x]


def derive_system(system: str, shape: str) -> tuple[list[tuple[float, float, float]], tuple[int, ...]]:
    """The ideal system for a unit size: [(position, ampere-turns, size)] per coil, ascending
    position, and the orders zeroed. Numerical, about 0.1 s (see the module docstring)."""
    key = (system, shape)
    if key not in _STARTS:
        raise InputError(f"there is no {shape} {system} coil system")
    orders = _ORDERS[system]
    x = _solve(lambda v: axial_coefficients(shape, _layout(system, shape, v), orders), _STARTS[key])
    coils = _layout(system, shape, x)
    return coils, orders


def derive_for_turns(system: str, shape: str, turns) -> tuple[list[float], tuple[int, ...]]:
    """Positions (unit size, ascending) re-found for a whole-turns pattern, and the orders
    zeroed. The ratio is fixed by the turns, so one order fewer than the ideal system is zeroed
    (Braunbek's and the pair's equal currents need no change)."""
    key = (system, shape)
    if key not in _STARTS:
        raise InputError(f"there is no {shape} {system} coil system")
    turns = tuple(int(n) for n in turns)
    if system == "pair" or (system == "four" and shape == "round"):
        coils, orders = derive_system(system, shape)
        return [c[0] for c in coils], orders
    orders = _ORDERS[system][:-1]
    start = _STARTS[key][: len(orders)]
    x = _solve(lambda v: axial_coefficients(shape, _layout(system, shape, v, turns), orders), start)
    return [c[0] for c in _layout(system, shape, x, turns)], orders


# ---------------------------------------------------------------------------------------------
# The table (derived by derive_system / derive_for_turns; re-derived by the tests)
# ---------------------------------------------------------------------------------------------

_R_MAXWELL = math.sqrt(4.0 / 7.0)
_R_BRAUNBEK = 0.7638994

TABLE: dict[tuple[str, str], SystemGeometry] = {
    ("pair", "round"): SystemGeometry(
        "pair", "round", (-0.5, 0.5), (1.0, 1.0), (1, 1), (1.0, 1.0), (-0.5, 0.5), (2,),
        "Helmholtz pair (spacing = radius)"),
    ("pair", "square"): SystemGeometry(
        "pair", "square", (-0.2722528, 0.2722528), (1.0, 1.0), (1, 1), (1.0, 1.0),
        (-0.2722528, 0.2722528), (2,), "Firester, Rev. Sci. Instrum. 37, 1264 (1966)"),
    ("three", "square"): SystemGeometry(
        "three", "square", (-0.4105761, 0.0, 0.4105761), (1.0, 1.0, 1.0), (39, 20, 39),
        (1.0, 0.5127972, 1.0), (-0.4105580, 0.0, 0.4105580), (2,),
        "Merritt, Purcell and Stroink, Rev. Sci. Instrum. 54, 879 (1983)"),
    ("three", "round"): SystemGeometry(
        "three", "round", (-math.sqrt(3.0 / 7.0), 0.0, math.sqrt(3.0 / 7.0)), (_R_MAXWELL, 1.0, _R_MAXWELL),
        (49, 64, 49), (1.0, 64.0 / 49.0, 1.0), (-math.sqrt(3.0 / 7.0), 0.0, math.sqrt(3.0 / 7.0)), (2, 4),
        "Maxwell, A Treatise on Electricity and Magnetism (1873)"),
    ("four", "square"): SystemGeometry(
        "four", "square", (-0.5050395, -0.1279195, 0.1279195, 0.5050395), (1.0, 1.0, 1.0, 1.0),
        (26, 11, 11, 26), (2.3611990, 1.0, 1.0, 2.3611990), (-0.5054919, -0.1281065, 0.1281065, 0.5054919),
        (2, 4), "Merritt, Purcell and Stroink, Rev. Sci. Instrum. 54, 879 (1983)"),
    ("four", "round"): SystemGeometry(
        "four", "round", (-0.8456641, -0.2780281, 0.2780281, 0.8456641), (_R_BRAUNBEK, 1.0, 1.0, _R_BRAUNBEK),
        (1, 1, 1, 1), (1.0, 1.0, 1.0, 1.0), (-0.8456641, -0.2780281, 0.2780281, 0.8456641), (2, 4, 6),
        "Braunbek, Z. Phys. 88, 399 (1934)"),
    ("four-equal", "round"): SystemGeometry(
        "four-equal", "round", (-0.9405691, -0.2431197, 0.2431197, 0.9405691), (1.0, 1.0, 1.0, 1.0),
        (52, 23, 23, 52), (2.2604434, 1.0, 1.0, 2.2604434), (-0.9407329, -0.2431860, 0.2431860, 0.9407329),
        (2, 4), "equal-radius four-coil system"),
}


def systems_for_shape(shape: str) -> tuple[str, ...]:
    """The systems defined for ``shape`` ("square" or "round"), in ``SYSTEMS`` order."""
    return tuple(s for s in SYSTEMS if (s, shape) in TABLE)


def system_geometry(system: str, shape: str) -> SystemGeometry:
    """The tabulated whole-turns geometry of ``system`` for ``shape``; InputError if none."""
    if shape not in SHAPES:
        raise InputError(f"coil shape must be one of {SHAPES}, got {shape!r}")
    if (system, shape) not in TABLE:
        known = ", ".join(systems_for_shape(shape))
        raise InputError(f"there is no {shape} coil system {system!r} (known: {known})")
    return TABLE[(system, shape)]


def system_axis(axis: str, shape: str, system: str, size_m: float, multiplier: int = 1,
                spacing_per_size: float | None = None) -> CoilAxis:
    """The coils of ``system`` on cage axis ``axis`` at nominal size ``size_m`` (m).

    size_m: side of the squares, or radius of the largest round coil. multiplier: each coil
    gets multiplier x its pattern's turns. spacing_per_size: pairs only, the distance between
    the two coil planes per unit size (None: the flat optimum), for the planner's free spacing.
    """
    if axis not in AXES:
        raise InputError(f"axis must be one of {AXES}, got {axis!r}")
    g = system_geometry(system, shape)
    size = float(size_m)
    k = int(multiplier)
    if not (math.isfinite(size) and size > 0) or k < 1:
        raise InputError(f"axis {axis}: size_m must be positive and multiplier at least 1")
    positions = g.positions
    if spacing_per_size is not None:
        if system != "pair":
            raise InputError("a free spacing applies to pairs only")
        positions = (-spacing_per_size / 2.0, spacing_per_size / 2.0)
    coils = tuple(Coil(p * size, n * k, s * size) for p, n, s in zip(positions, g.turns, g.sizes))
    return CoilAxis(axis, shape, system, coils)


def _shown(value) -> str:
    """A value as a one-line message shows it (as the site reader does): repr, cut at 40 characters."""
    text = repr(value)
    return text if len(text) <= 40 else text[:37] + "..."


def parse_systems(value, where: str) -> tuple[str, ...]:
    """The coil systems named in ``value`` (a list of names, or one comma-separated text), checked
    against ``SYSTEMS``, in that order, without repeats; InputError naming ``where``."""
    if isinstance(value, str):
        names = [v.strip() for v in value.split(",")]
    elif isinstance(value, (list, tuple)):
        names = list(value)
    else:
        raise InputError(f"{where} must be a list of coil systems ({', '.join(SYSTEMS)}), got {_shown(value)}")
    if not names:
        raise InputError(f"{where} must name at least one coil system ({', '.join(SYSTEMS)})")
    for name in names:
        if not isinstance(name, str) or name not in SYSTEMS:
            raise InputError(f"{where}: unknown coil system {_shown(name)}; known: {', '.join(SYSTEMS)}")
    return tuple(s for s in SYSTEMS if s in names)
