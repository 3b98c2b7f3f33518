"""Calibration of a built cage from magnetometer readings: the fit B = B0 + K I.

One reading is the field B (nT, three components, cage frame: the sensor's axes aligned
with the cage axes) at the sensor with the axis currents I (A, x, y, z) applied. The model
is linear (coils in air, no iron nearby):

    B = B0 + K I

with B0 (3,) the field at zero current (ambient + building + sensor offset), in nT, and
K (3 x 3) the coupling, in nT/A, row = field component, column = cage axis. Twelve unknowns,
three equations per reading, so at least 4 distinct current sets whose augmented matrix
[1, I] has rank 4; 7 or more are recommended so that bad readings can be told apart.

Pure module: arrays in, frozen dataclasses out. The CSV reader is
:func:`cage.measurements.read_calibration_csv`, the JSON file is :mod:`cage.calibrationfile`.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from cage.errors import InfeasibleError, InputError
from cage.sequence import AXES, _per_axis, _whole_number, currents_for_fields_A

MIN_CURRENT_SETS = 4
RECOMMENDED_CURRENT_SETS = 7
LOSSES = ("soft_l1", "huber", "cauchy", "arctan", "linear")
# 1.4826 = 1 / Phi^-1(3/4): the MAD of a normal sample times this estimates its sigma
# (Rousseeuw & Croux, J. Am. Stat. Assoc. 88, 1273 (1993)).
MAD_TO_SIGMA = 1.482602218505602
# What a usable calibration holds (outside: a damaged file or a failed fit): coupling entries
# 1e-3 nT/A .. 1 T/A, offset within 10 mT (the Earth's field is below 0.07 mT; a lab's magnets
# add less than 10 mT), and a coupling that can be inverted for the currents.
MIN_COUPLING_NT_PER_A = 1e-3
MAX_COUPLING_NT_PER_A = 1e9
MAX_OFFSET_NT = 1e7
MAX_CONDITION = 1e10


def _frozen(a) -> np.ndarray:
    arr = np.array(a, dtype=float)
    arr.setflags(write=False)
    return arr


@dataclass(frozen=True, eq=False)
class CalibrationFit:
    """The fitted model B = B0 + K I of a built cage (cage frame, nT and A).

    coupling_nT_per_A: K, (3, 3), row = field component x, y, z; column = axis x, y, z.
    offset_nT: B0, (3,), the field at the sensor with zero current.
    rms_residual_nT: sqrt(mean |B_fit - B|^2) over the rows kept (inliers), |.| the
        3-component norm of a row's residual.
    rms_residual_all_nT: the same over every row, outliers included.
    n_rows: readings used in the fit (all rows of the file).
    n_outliers, outlier_rows: rows left out as bad readings (0-based data-row indices).
    condition_number: 2-norm condition number of the design matrix [1, Ix, Iy, Iz] of the
        inlier rows after scaling each column to unit length, so it does not depend on the
        current unit (van der Sluis, Numer. Math. 14, 14 (1969), from memory: unit columns
        are within a factor sqrt(4) = 2 of the best column scaling).
    noise_sigma_nT: robust estimate of the reading noise per field component, from the
        median absolute deviation of the residuals of the robust fit (0 if no redundancy).
    coupling_stderr_nT_per_A, offset_stderr_nT: standard errors of K and B0 from the
        final least-squares fit on the inliers (NaN when there are no spare rows).
    residual_nT: (n_rows, 3) B_fit - B per row (empty when loaded from a file).
    source_file: where the readings came from (free text, may be empty).
    """

    coupling_nT_per_A: np.ndarray
    offset_nT: np.ndarray
    rms_residual_nT: float
    rms_residual_all_nT: float
    n_rows: int
    n_outliers: int
    outlier_rows: tuple[int, ...]
    condition_number: float
    noise_sigma_nT: float = float("nan")
    coupling_stderr_nT_per_A: np.ndarray = field(default_factory=lambda: _frozen(np.full((3, 3), np.nan)))
    offset_stderr_nT: np.ndarray = field(default_factory=lambda: _frozen(np.full(3, np.nan)))
    residual_nT: np.ndarray = field(default_factory=lambda: _frozen(np.zeros((0, 3))))
    source_file: str = ""

    def __post_init__(self):
        for name in ("coupling_nT_per_A", "offset_nT", "coupling_stderr_nT_per_A",
                     "offset_stderr_nT", "residual_nT"):
            object.__setattr__(self, name, _frozen(getattr(self, name)))
        object.__setattr__(self, "outlier_rows", tuple(int(k) for k in self.outlier_rows))

    @property
    def null_current_A(self) -> np.ndarray:
        """Currents (A, x, y, z) that cancel the field at the sensor: K I = -B0."""
        return currents_for_field_A(self, np.zeros(3))

    def predict_nT(self, currents_A) -> np.ndarray:
        """B0 + K I for currents (3,) or (m, 3) in A; nT, cage frame."""
        i = np.asarray(currents_A, dtype=float)
        return self.offset_nT + i @ self.coupling_nT_per_A.T


@dataclass(frozen=True, eq=False)
class BuildCheck:
    """The fitted coupling against the design's (both nT/A, columns = axes x, y, z).

    scale_error_percent: (3,) 100 (|K_j| / |D_j| - 1) for column j (fitted K, design D).
    non_orthogonality_deg: {"xy", "yz", "zx"}: the angle between two fitted columns minus
        90 degrees (positive: the axes lean toward each other).
    misalignment_deg: (3,) the angle between fitted column j and design column j; near
        180 degrees means that axis is wired with reversed polarity.
    """

    scale_error_percent: np.ndarray
    non_orthogonality_deg: dict
    misalignment_deg: np.ndarray

    def __post_init__(self):
        object.__setattr__(self, "scale_error_percent", _frozen(self.scale_error_percent))
        object.__setattr__(self, "misalignment_deg", _frozen(self.misalignment_deg))
        object.__setattr__(self, "non_orthogonality_deg",
                           {k: float(v) for k, v in self.non_orthogonality_deg.items()})


def _where(where: str) -> str:
    return f"{where}: " if where else ""


def check_current_set(currents_A, where: str = "") -> None:
    """Raise InputError unless the current sets can determine B0 and K.

    Needs at least 4 distinct rows and an augmented matrix [1, I] of rank 4, i.e. the
    centred currents I - mean(I) of rank 3. When they fall short the message says which
    combination never changes (for example "the z current never changes"). ``where``
    (a file name) starts the message.
    """
    i = np.asarray(currents_A, dtype=float)
    pre = _where(where)
    if i.ndim != 2 or i.shape[1] != 3:
        raise InputError(f"{pre}currents must have shape (n, 3) in A, got {i.shape}")
    if not np.all(np.isfinite(i)):
        raise InputError(f"{pre}currents must all be finite")
    n_rows = i.shape[0]
    n_sets = int(np.unique(i, axis=0).shape[0]) if n_rows else 0
    if n_sets < MIN_CURRENT_SETS:
        raise InputError(
            f"{pre}{n_sets} distinct current set{'s' if n_sets != 1 else ''} in {n_rows} "
            f"row{'s' if n_rows != 1 else ''}; the fit of 12 unknowns needs at least "
            f"{MIN_CURRENT_SETS}, and {RECOMMENDED_CURRENT_SETS} or more are recommended"
        )
    mean = i.mean(axis=0)
    c = i - mean
    _, s, vt = np.linalg.svd(c, full_matrices=False)
    scale = np.abs(i).max()
    if s[0] <= 1e-12 * scale:
        raise InputError(f"{pre}the currents are the same in every row; the axes cannot be separated")
    deficient = s <= 1e-9 * s[0]
    if not deficient.any():
        return
    rank = int((~deficient).sum())
    if rank == 1:
        d = vt[0] / np.abs(vt[0]).max()
        moving = [a for a, v in zip(AXES, d) if abs(v) > 1e-6]
        if len(moving) == 1:
            still = [a for a in AXES if a not in moving]
            detail = f"only the {moving[0]} current changes; the {still[0]} and {still[1]} currents never change"
        else:
            ratio = ":".join(f"{v:.3g}" for v in d)
            detail = f"the currents only change together, in the fixed ratio x:y:z = {ratio}"
        raise InputError(f"{pre}the current sets cannot separate the axes: {detail}; vary each axis on its own")
    nvec = vt[-1] / np.abs(vt[-1]).max()
    involved = [j for j in range(3) if abs(nvec[j]) > 1e-6]
    if len(involved) == 1:
        j = involved[0]
        detail = f"the {AXES[j]} current never changes (always {mean[j]:.6g} A)"
    else:
        nvec = nvec / nvec[involved[0]]  # first coefficient 1: "x - y", "x + 2*y - z"
        terms = []
        for j in involved:
            mag = abs(nvec[j])
            term = AXES[j] if abs(mag - 1) < 1e-9 else f"{mag:.3g}*{AXES[j]}"
            terms.append(term if not terms else f"{'+' if nvec[j] > 0 else '-'} {term}")
        names = ", ".join(AXES[j] for j in involved[:-1]) + f" and {AXES[involved[-1]]}"
        detail = f"the {names} currents always keep {' '.join(terms)} constant"
    raise InputError(f"{pre}the current sets cannot separate the axes: {detail}; add rows that vary it")


def check_usable(coupling_nT_per_A, offset_nT, where: str = "", coupling_name: str = "coupling_nT_per_A",
                 offset_name: str = "offset_nT") -> None:
    """Raise InputError unless a coupling K (3 x 3, nT/A, finite) and offset B0 (3,), nT, can
    make setpoints: the one rule for the calibration file's reader and for ``cage calibrate``
    before it writes one.

    Refused: an entry of K beyond 1 T/A, K below 1e-3 nT/A everywhere, a component of B0
    beyond 10 mT, or K singular (condition number above MAX_CONDITION); the last names the
    axis that adds no field or the axes whose fields are not independent. ``where`` (a file
    name) starts the message, ``coupling_name`` and ``offset_name`` name the two.
    """
    k = np.asarray(coupling_nT_per_A, dtype=float)
    b0 = np.asarray(offset_nT, dtype=float)
    pre = _where(where)
    if np.any(np.abs(k) > MAX_COUPLING_NT_PER_A):
        raise InputError(f"{pre}{coupling_name} has an entry beyond {MAX_COUPLING_NT_PER_A:g} nT/A (1 T/A)")
    if np.max(np.abs(k)) < MIN_COUPLING_NT_PER_A:
        raise InputError(f"{pre}{coupling_name} is below {MIN_COUPLING_NT_PER_A:g} nT/A everywhere; "
                         "no coil cage is that weak (the field does not change with the currents)")
    if np.any(np.abs(b0) > MAX_OFFSET_NT):
        raise InputError(f"{pre}{offset_name} has a component beyond {MAX_OFFSET_NT:g} nT (10 mT)")
    _, s, vt = np.linalg.svd(k)
    if s[-1] > s[0] / MAX_CONDITION:
        return
    cond = s[0] / s[-1] if s[-1] > 0 else math.inf
    null = vt[-1] / np.abs(vt[-1]).max()  # currents that make (almost) no field
    involved = [AXES[j] for j in range(3) if abs(null[j]) > 1e-3]
    if len(involved) == 1:
        detail = f"axis {involved[0]} adds no field (a dead coil, an open circuit or its supply not connected?)"
    elif len(involved) == 2:
        detail = f"axes {involved[0]} and {involved[1]} drive the field along the same line"
    else:
        detail = "axes x, y and z drive the field in one plane only"
    raise InputError(f"{pre}{coupling_name} is singular (condition number {cond:.3g}): {detail}; "
                     "it cannot give null currents")


def reversed_axes_warnings(coupling_nT_per_A, design_coupling_nT_per_A) -> list[str]:
    """One warning per axis whose field (column of K, nT/A) points more than 90 degrees from
    its nominal direction (the design's column): the coil or its supply is wired backwards.
    Only a warning: the currents computed from K are right either way. Raises InputError as
    :func:`build_check` does."""
    return _reversed_warnings(build_check(coupling_nT_per_A, design_coupling_nT_per_A).misalignment_deg)


# A column of K known to worse than this share of itself (its standard error's norm over the
# column's norm) does not fix the axis's null current: the fit is mostly the readings' noise.
MAX_RELATIVE_STDERR = 0.1


def uncertain_axes_warnings(coupling_nT_per_A, coupling_stderr_nT_per_A) -> list[str]:
    """One warning per axis whose fitted field per ampere (column of K, nT/A) has a standard
    error (the least-squares fit's, same shape) above MAX_RELATIVE_STDERR of its own size: its
    current varied too little for the readings' noise. None without spare rows (NaN errors)."""
    k = np.asarray(coupling_nT_per_A, dtype=float)
    se = np.asarray(coupling_stderr_nT_per_A, dtype=float)
    out = []
    for j, axis in enumerate(AXES):
        size, err = float(np.linalg.norm(k[:, j])), float(np.linalg.norm(se[:, j]))
        if math.isfinite(err) and size > 0 and err > MAX_RELATIVE_STDERR * size:
            out.append(f"axis {axis}: the fitted field per ampere is uncertain by {100.0 * err / size:.0f} % of itself "
                       f"(its current varied too little for the readings' noise); vary it more and measure again")
    return out


def _reversed_warnings(misalignment_deg) -> list[str]:
    return [f"axis {axis} drives the field against its nominal direction ({angle:.0f} deg): "
            "the coil or its supply is wired backwards?"
            for axis, angle in zip(AXES, misalignment_deg) if angle > 90.0]


def _design_matrix(currents_A: np.ndarray) -> np.ndarray:
    return np.column_stack((np.ones(currents_A.shape[0]), currents_A))


def _equilibrated_condition(a: np.ndarray) -> float:
    norms = np.linalg.norm(a, axis=0)
    norms[norms == 0] = 1.0
    return float(np.linalg.cond(a / norms))


def design_condition_number(currents_A) -> float:
    """Condition number of the fit's design matrix [1, Ix, Iy, Iz] for these currents (A),
    columns scaled to unit length (see :class:`CalibrationFit`). Lower is better; a set
    that cannot separate the axes gives a very large number or inf."""
    i = np.asarray(currents_A, dtype=float)
    if i.ndim != 2 or i.shape[1] != 3 or i.shape[0] < 1:
        raise InputError(f"currents must have shape (n, 3) in A, got {i.shape}")
    return _equilibrated_condition(_design_matrix(i))


def _mad_sigma(residual: np.ndarray) -> float:
    r = residual.ravel()
    return float(MAD_TO_SIGMA * np.median(np.abs(r - np.median(r))))


def fit_calibration(
    currents_A,
    field_nT,
    *,
    source_file: str = "",
    loss: str = "soft_l1",
    outlier_threshold: float = 5.0,
    noise_floor_nT: float = 0.1,
) -> CalibrationFit:
    """Fit B = B0 + K I to readings; robust to a few bad ones.

    currents_A: (n, 3) applied currents, A, columns x, y, z.
    field_nT: (n, 3) sensor readings, nT, cage frame.
    source_file: recorded in the result and used to start error messages.
    loss: robust loss of scipy.optimize.least_squares ("soft_l1", "huber", "cauchy",
        "arctan"); "linear" skips the robust pass (outliers are then flagged from the
        ordinary fit's residuals).
    outlier_threshold: a row is an outlier when the norm of its residual exceeds this many
        robust sigmas (per-component sigma; for Gaussian noise the norm follows a chi
        distribution with 3 degrees of freedom, P(norm > 5 sigma) ~ 1.5e-5).
    noise_floor_nT: lower bound of the robust sigma (keeps the loss scale sensible on
        noise-free data), nT.

    Method:
      1. ordinary linear least squares (numpy.linalg.lstsq) on all rows;
      2. robust sigma = 1.4826 * MAD of its residuals (floored at noise_floor_nT);
      3. scipy.optimize.least_squares with the robust loss, f_scale = that sigma,
         started from step 1; sigma re-estimated from its residuals, and a second pass
         with the new scale;
      4. rows whose residual norm exceeds outlier_threshold * sigma are outliers;
      5. final ordinary least squares on the remaining rows (the "reweighted least
         squares" of Rousseeuw & Leroy, Robust Regression and Outlier Detection, 1987),
         which gives the estimate, its standard errors and the reported residuals. If the
         remaining rows cannot determine the fit, the robust estimate of step 3 is kept.
      Outlier detection needs at least 3 spare rows (n >= 7); with fewer rows step 1 is
      the answer and no row is flagged.

    Raises InputError for mis-shaped or non-finite input or current sets that cannot
    determine the fit (see :func:`check_current_set`).
    """
    pre = _where(source_file)
    i = np.asarray(currents_A, dtype=float)
    b = np.asarray(field_nT, dtype=float)
    if i.ndim != 2 or i.shape[1] != 3:
        raise InputError(f"{pre}currents must have shape (n, 3) in A, got {i.shape}")
    if b.shape != i.shape:
        raise InputError(f"{pre}readings must have shape {i.shape} to match the currents, got {b.shape}")
    if not np.all(np.isfinite(b)):
        raise InputError(f"{pre}field readings must all be finite")
    if loss not in LOSSES:
        raise InputError(f"{pre}unknown loss {loss!r}; expected one of {', '.join(LOSSES)}")
    if not (math.isfinite(outlier_threshold) and outlier_threshold > 0):
        raise InputError(f"{pre}outlier threshold must be a positive number of sigmas")
    if not (math.isfinite(noise_floor_nT) and noise_floor_nT > 0):
        raise InputError(f"{pre}noise floor must be a positive number of nT")
    check_current_set(i, source_file)

    n = i.shape[0]
    a = _design_matrix(i)
    x_ols, *_ = np.linalg.lstsq(a, b, rcond=None)
    x_fit = x_ols
    outliers = np.zeros(n, dtype=bool)
    sigma = 0.0
    if n >= MIN_CURRENT_SETS + 3:
        sigma = _mad_sigma(a @ x_ols - b)
        if loss != "linear":
            from scipy.optimize import least_squares

            jac = np.kron(a, np.eye(3))

            def resid(p):
                return (a @ p.reshape(4, 3) - b).ravel()

            start = x_ols
            for _ in range(2):
                scale = max(sigma, noise_floor_nT)
                sol = least_squares(resid, start.ravel(), jac=lambda p: jac, loss=loss,
                                    f_scale=scale, method="trf", x_scale="jac")
                start = sol.x.reshape(4, 3)
                sigma = _mad_sigma(a @ start - b)
            x_fit = start
        scale = max(sigma, noise_floor_nT)
        norms = np.linalg.norm(a @ x_fit - b, axis=1)
        outliers = norms > outlier_threshold * scale
        if outliers.any():
            keep = ~outliers
            try:
                check_current_set(i[keep])
            except InputError:
                pass  # the inliers alone cannot determine the fit: keep the robust estimate
            else:
                x_fit, *_ = np.linalg.lstsq(a[keep], b[keep], rcond=None)
        else:
            x_fit = x_ols

    keep = ~outliers
    residual = a @ x_fit - b
    n_in = int(keep.sum())
    rms_in = float(np.sqrt(np.mean(np.sum(residual[keep] ** 2, axis=1))))
    rms_all = float(np.sqrt(np.mean(np.sum(residual ** 2, axis=1))))
    a_in = a[keep]
    dof = n_in - 4
    if dof > 0 and np.linalg.matrix_rank(a_in) == 4:
        var = np.sum(residual[keep] ** 2, axis=0) / dof  # per field component
        inv = np.linalg.inv(a_in.T @ a_in)
        se = np.sqrt(np.outer(np.diag(inv), var))  # (4, 3), same layout as x_fit
    else:
        se = np.full((4, 3), np.nan)
    return CalibrationFit(
        coupling_nT_per_A=x_fit[1:].T,
        offset_nT=x_fit[0],
        rms_residual_nT=rms_in,
        rms_residual_all_nT=rms_all,
        n_rows=n,
        n_outliers=int(outliers.sum()),
        outlier_rows=tuple(int(k) for k in np.flatnonzero(outliers)),
        condition_number=_equilibrated_condition(a_in),
        noise_sigma_nT=float(sigma),
        coupling_stderr_nT_per_A=se[1:].T,
        offset_stderr_nT=se[0],
        residual_nT=residual,
        source_file=str(source_file),
    )


def currents_for_field_A(fit: CalibrationFit, target_nT) -> np.ndarray:
    """Currents (A, x, y, z) that make ``target_nT`` at the sensor by the fit: K I = target - B0.

    target_nT: (3,) or (m, 3) in nT, cage frame; zeros gives the corrected null currents.
    Raises InfeasibleError when the fitted K is singular (for example a dead coil).
    """
    return currents_for_fields_A(fit.coupling_nT_per_A, fit.offset_nT, target_nT)


def _angle_deg(u: np.ndarray, v: np.ndarray) -> float:
    # atan2(|u x v|, u . v): accurate for small and near-180-degree angles, where acos of
    # the normalised dot product loses digits (common practice).
    return float(np.degrees(np.arctan2(np.linalg.norm(np.cross(u, v)), np.dot(u, v))))


def build_check(fit_or_coupling, design_coupling_nT_per_A) -> BuildCheck:
    """Compare a fitted coupling (a CalibrationFit or a 3 x 3 array, nT/A) with the design's.

    design_coupling_nT_per_A: (3, 3) the coupling the model predicts at the sensor's
    position, nT/A, same layout (row = field component, column = axis).
    Raises InputError for mis-shaped or non-finite matrices or a zero column.
    """
    k = np.asarray(getattr(fit_or_coupling, "coupling_nT_per_A", fit_or_coupling), dtype=float)
    d = np.asarray(design_coupling_nT_per_A, dtype=float)
    pre = _where(getattr(fit_or_coupling, "source_file", ""))
    for name, m in ((f"{pre}fitted coupling", k), ("design coupling", d)):
        if m.shape != (3, 3):
            raise InputError(f"{name} must be 3 x 3 (nT/A), got shape {m.shape}")
        if not np.all(np.isfinite(m)):
            raise InputError(f"{name} has a non-finite entry")
        zero = [AXES[j] for j in range(3) if not np.linalg.norm(m[:, j]) > 0]
        if zero:
            raise InputError(f"{name} has a zero column for axis {zero[0]}")
    kn = np.linalg.norm(k, axis=0)
    dn = np.linalg.norm(d, axis=0)
    scale = 100.0 * (kn / dn - 1.0)
    pairs = {"xy": (0, 1), "yz": (1, 2), "zx": (2, 0)}
    non_orth = {name: _angle_deg(k[:, p], k[:, q]) - 90.0 for name, (p, q) in pairs.items()}
    mis = np.array([_angle_deg(k[:, j], d[:, j]) for j in range(3)])
    return BuildCheck(scale_error_percent=scale, non_orthogonality_deg=non_orth, misalignment_deg=mis)


def _json_number(v):
    v = float(v)
    return v if math.isfinite(v) else None


def calibration_summary(fit: CalibrationFit, build_check: BuildCheck | None = None,
                        line_numbers=None) -> dict:
    """A JSON-ready dict of the fit (NaN becomes None).

    Keys: coupling_nT_per_A (3 rows), offset_nT (3), null_current_A {"x","y","z"} (None,
    with null_current_note, when K is singular), rms_residual_nT, rms_residual_all_nT,
    noise_sigma_nT, n_rows, n_outliers, outlier_rows (0-based), outlier_lines (file line
    numbers, when ``line_numbers`` — one per data row, as the CSV reader gives — is
    passed), condition_number, coupling_stderr_nT_per_A, offset_stderr_nT, source_file,
    build_check (None or {scale_error_percent {x,y,z}, non_orthogonality_deg {xy,yz,zx},
    misalignment_deg {x,y,z}}), warnings (an axis wired backwards, see
    :func:`reversed_axes_warnings`).
    """
    from cage.errors import InfeasibleError

    out: dict = {
        "coupling_nT_per_A": [[_json_number(v) for v in row] for row in fit.coupling_nT_per_A],
        "offset_nT": [_json_number(v) for v in fit.offset_nT],
    }
    try:
        null = fit.null_current_A
    except InfeasibleError as exc:
        out["null_current_A"] = None
        out["null_current_note"] = str(exc)
    else:
        out["null_current_A"] = {a: float(v) for a, v in zip(AXES, null)}
    out.update({
        "rms_residual_nT": _json_number(fit.rms_residual_nT),
        "rms_residual_all_nT": _json_number(fit.rms_residual_all_nT),
        "noise_sigma_nT": _json_number(fit.noise_sigma_nT),
        "n_rows": int(fit.n_rows),
        "n_outliers": int(fit.n_outliers),
        "outlier_rows": list(fit.outlier_rows),
    })
    if line_numbers is not None:
        lines = list(line_numbers)
        out["outlier_lines"] = [int(lines[k]) for k in fit.outlier_rows if k < len(lines)]
    out.update({
        "condition_number": _json_number(fit.condition_number),
        "coupling_stderr_nT_per_A": [[_json_number(v) for v in row] for row in fit.coupling_stderr_nT_per_A],
        "offset_stderr_nT": [_json_number(v) for v in fit.offset_stderr_nT],
        "source_file": fit.source_file,
    })
    uncertain = uncertain_axes_warnings(fit.coupling_nT_per_A, fit.coupling_stderr_nT_per_A)
    if build_check is None:
        out["build_check"] = None
        out["warnings"] = uncertain
    else:
        out["warnings"] = uncertain + _reversed_warnings(build_check.misalignment_deg)
        out["build_check"] = {
            "scale_error_percent": {a: float(v) for a, v in zip(AXES, build_check.scale_error_percent)},
            "non_orthogonality_deg": dict(build_check.non_orthogonality_deg),
            "misalignment_deg": {a: float(v) for a, v in zip(AXES, build_check.misalignment_deg)},
        }
    return out


def suggest_currents_A(max_current_A, n_levels: int = 2, fraction: float = 0.8,
                       unipolar=False) -> np.ndarray:
    """A current table for calibration runs, in the order to step through; (m, 3) in A.

    max_current_A: a number or (3,) per-axis supply limit, A (> 0).
    n_levels: amplitudes per axis on its own: fraction * max * k / n_levels, k = 1..n_levels.
    fraction: the largest current as a fraction of the limit (0 < fraction <= 1).
    unipolar: a bool or (3,) bools; a unipolar axis only gets currents >= 0.

    Order: zero; then each axis alone (x, y, z) at +level and -level for rising levels
    (unipolar: +level only); then the 8 corners with all three axes on at once, visited in
    Gray-code order so only one axis changes per step (bipolar axis: -/+ full amplitude;
    unipolar axis: half / full amplitude); and zero again, which shows drift of the offset.
    With the defaults, bipolar: 22 rows. Each axis alone from zero makes [1, I] full rank
    for any flags.
    """
    imax = _per_axis(max_current_A, "max current (A)", positive=True)
    levels = _whole_number(n_levels, "number of levels")
    if not 1 <= levels <= 100:
        raise InputError(f"number of levels must be between 1 and 100, got {levels}")
    try:
        frac = float(fraction)
    except (TypeError, ValueError):
        raise InputError(f"fraction of the max current must be a number, got {fraction!r}") from None
    if not (0 < frac <= 1):
        raise InputError(f"fraction of the max current must be in (0, 1], got {fraction!r}")
    uni = np.broadcast_to(np.asarray(unipolar, dtype=bool), (3,))
    top = frac * imax
    rows = [np.zeros(3)]
    for j in range(3):
        for k in range(1, levels + 1):
            amp = top[j] * k / levels
            signs = (1.0,) if uni[j] else (1.0, -1.0)
            for sgn in signs:
                r = np.zeros(3)
                r[j] = sgn * amp
                rows.append(r)
    low = np.where(uni, 0.5 * top, -top)
    for g in range(8):
        code = g ^ (g >> 1)  # Gray code: one bit flips per step
        bits = np.array([(code >> j) & 1 for j in range(3)], dtype=bool)
        rows.append(np.where(bits, top, low))
    rows.append(np.zeros(3))
    return np.array(rows)


def sensor_range_scale(currents_A, coupling_nT_per_A, ambient_nT, sensor_range_nT: float,
                       margin: float = 0.9) -> float:
    """The largest factor s in (0, 1] such that every current set times s keeps each sensor
    axis within ``margin`` x ``sensor_range_nT``: |B0 + K (s I)| <= margin x range, per
    component, for every row.

    currents_A: (m, 3); coupling_nT_per_A: K (3, 3), cage frame, column = axis (the design's);
    ambient_nT: B0 (3,), the field with no current (cage frame); sensor_range_nT: the
    magnetometer's full scale per axis. Each component is affine in s, so the bound is
    exact. Raises InfeasibleError when the ambient field alone is beyond the range.
    """
    i = np.asarray(currents_A, dtype=float)
    k = np.asarray(coupling_nT_per_A, dtype=float)
    b0 = np.asarray(ambient_nT, dtype=float)
    limit = margin * float(sensor_range_nT)
    if np.any(np.abs(b0) > limit):
        worst = int(np.argmax(np.abs(b0)))
        raise InfeasibleError(
            f"the ambient field alone ({'xyz'[worst]} {b0[worst]:.0f} nT) is beyond {margin:.0%} of the sensor "
            f"range {sensor_range_nT / 1000:g} uT: give a larger --sensor-range-uT")
    slope = i @ k.T  # (m, 3) field change per unit s
    with np.errstate(divide="ignore", invalid="ignore"):
        up = np.where(slope > 0, (limit - b0) / slope, np.inf)
        down = np.where(slope < 0, (limit + b0) / -slope, np.inf)
    return float(min(1.0, up.min(initial=np.inf), down.min(initial=np.inf)))
