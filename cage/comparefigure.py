"""The size-comparison figure of ``cage compare``: envelope, uniform cube, power and copper
against the outer size. Style: ``cage.figurestyle``.
"""
from __future__ import annotations

import math

import matplotlib
import numpy as np
from matplotlib.figure import Figure
from matplotlib.lines import Line2D

from cage.errors import InputError
from cage.escape import for_figure
from cage.figurestyle import (FIG_WIDTH_IN, _FS, _RC, _finish, _new_figure, _tolerance, extent_in, grid_box,
                              relative_label)


# ---------------------------------------------------------------------------------------------
# Size comparison
# ---------------------------------------------------------------------------------------------


def _compare_marks(ax, size, cube, shapes, required_cube_m) -> None:
    """The required cube edge as a line, and each point's coil shape as a letter (s square, r round)."""
    if required_cube_m is not None and math.isfinite(float(required_cube_m)):
        ax.axhline(float(required_cube_m), color="#b00020", linestyle="-.", linewidth=1.1, gid="required-cube",
                   label=f"required: test volume's largest side {float(required_cube_m):.2f} m")
    for xs, ys, shape in zip(size, cube, shapes):
        if shape in ("square", "round") and np.isfinite(ys):
            ax.annotate(shape[0], xy=(xs, ys), xytext=(0, 5), textcoords="offset points", ha="center",
                        fontsize=_FS["small"], color="0.25", gid=f"shape-{shape}")
    if any(sh in ("square", "round") for sh in shapes):
        ax.plot([], [], linestyle="none", label="letters: s square, r round pairs")


def _num_or_nan(value) -> float:
    if value is None or isinstance(value, bool):
        return math.nan
    try:
        v = float(value)
    except (TypeError, ValueError):
        return math.nan
    return v if math.isfinite(v) else math.nan


SYSTEM_MARKERS = ("o", "^", "s", "D")
SYSTEM_LINESTYLES = ("-", "-.", "--", ":")


def compare_figure(rows, room_limit_m: float | None, tolerance: float,
                   required_cube_m: float | None = None) -> Figure:
    """Total power, copper mass and uniform cube edge against the cage's outer size.

    rows: dicts with outer_size_m (float), feasible (bool), total_power_W, uniform_cube_m,
    copper_mass_kg (float or None), fits_room (bool). Top panel: power (W, left axis) and
    copper mass (kg, right axis); bottom: edge of the largest cube within ``tolerance`` (m).
    Infeasible sizes are red crosses along the bottom of each panel; sizes that do not fit the
    room have hollow markers; the room limit (m) is a dashed line, the sizes beyond it shaded.
    """
    tol = _tolerance(tolerance)
    if not rows:
        raise InputError("compare: no sizes to plot")
    try:
        data = sorted(rows, key=lambda r: float(r["outer_size_m"]))
    except (KeyError, TypeError, ValueError):
        raise InputError("compare: every row needs a numeric outer_size_m") from None
    size = np.array([float(r["outer_size_m"]) for r in data])
    feasible = np.array([bool(r.get("feasible", False)) for r in data])
    fits = np.array([bool(r.get("fits_room", True)) for r in data])
    power = np.array([_num_or_nan(r.get("total_power_W")) for r in data])
    cube = np.array([_num_or_nan(r.get("uniform_cube_m")) for r in data])
    mass = np.array([_num_or_nan(r.get("copper_mass_kg")) for r in data])
    limit = None if room_limit_m is None else float(room_limit_m)
    # rows of several coil systems (cage.compare: "system"): one line per system, told apart by
    # marker and line style
    system_of = np.array([for_figure(str(r.get("system") or "pair")) for r in data])
    systems = list(dict.fromkeys(system_of))
    several = len(systems) > 1

    with matplotlib.rc_context(_RC):
        height_in = 5.6
        fig = _new_figure(FIG_WIDTH_IN, height_in)
        # Margins (in): tick labels and y labels left and right (the mass axis on the right),
        # the legend row and the title on top (as measured, below), tick labels and x label.
        gs = fig.add_gridspec(2, 1, **grid_box(fig, 0.72, 0.72, 1.0, 0.5, nrows=2, hgap_in=0.14))
        ax_p, ax_c = gs.subplots(sharex=True)
        ax_m = ax_p.twinx()
        lo, hi = float(size.min()), float(size.max())
        pad = 0.06 * (hi - lo) if hi > lo else 0.1 * max(hi, 0.1)
        xlim = (lo - pad, max(hi, limit if limit is not None else hi) + pad)

        def series(ax, values, colour, marker, label, linestyle="-"):
            for k, system in enumerate(systems):
                ok = feasible & np.isfinite(values) & (system_of == system)
                mk = marker if not several else SYSTEM_MARKERS[k % len(SYSTEM_MARKERS)]
                ls = linestyle if not several else SYSTEM_LINESTYLES[k % len(SYSTEM_LINESTYLES)]
                ax.plot(size[ok], values[ok], color=colour, linestyle=ls, linewidth=1.2,
                        label=f"{label}, {system}" if several else label, zorder=2, gid=f"compare-{system}")
                inside, outside = ok & fits, ok & ~fits
                ax.plot(size[inside], values[inside], linestyle="none", marker=mk, color=colour,
                        markersize=5, zorder=3)
                ax.plot(size[outside], values[outside], linestyle="none", marker=mk,
                        markerfacecolor="white", markeredgecolor=colour, markersize=5, zorder=3)

        series(ax_p, power, "#1f5fbf", "o", "total power (W)")
        series(ax_m, mass, "#8a5a00", "s", "copper mass (kg)", linestyle="--")
        series(ax_c, cube, "#23864b", "o", "uniform cube edge (m)")
        _compare_marks(ax_c, size, cube, [str(r.get("shape") or "") for r in data], required_cube_m)
        for ax in (ax_p, ax_c):
            bad = ~feasible
            if bad.any():
                ax.plot(size[bad], np.full(bad.sum(), 0.04), transform=ax.get_xaxis_transform(),
                        linestyle="none", marker="x", color="#b00020", markersize=7,
                        markeredgewidth=1.6, label="infeasible size", zorder=4, clip_on=False)
            if limit is not None:
                ax.axvline(limit, color="black", linestyle="--", linewidth=1.1,
                           label=f"room limit {limit:.2f} m")
                ax.axvspan(limit, xlim[1] + abs(xlim[1]) + 1.0, color="0.9", zorder=0)
            ax.grid(True, linewidth=0.4, alpha=0.5)
        ax_p.set_xlim(*xlim)
        ax_p.set_ylabel("total power (W)", color="#1f5fbf")
        ax_m.set_ylabel("copper mass (kg)", color="#8a5a00")
        ax_c.set_ylabel(f"uniform cube edge at {relative_label(tol)} (m)")
        ax_c.set_xlabel("outer size of the cage (m)")
        for ax in (ax_p, ax_m, ax_c):
            finite = [v for line in ax.get_lines() for v in np.asarray(line.get_ydata(), float)
                      if line.get_transform() == ax.transData and np.isfinite(v)]
            if finite:
                ax.set_ylim(0.0, 1.15 * max(finite) if max(finite) > 0 else 1.0)
        handles, labels = [], []
        for ax in (ax_p, ax_m, ax_c):
            for h, lab in zip(*ax.get_legend_handles_labels()):
                if lab not in labels:
                    handles.append(h)
                    labels.append(lab)
        if (feasible & ~fits).any():
            handles.append(Line2D([], [], linestyle="none", marker="o", markerfacecolor="white",
                                  markeredgecolor="0.3", markersize=5))
            labels.append("does not fit the room")
        legend = fig.legend(handles, labels, loc="upper center", bbox_to_anchor=(0.5, 1.0 - 0.04 / height_in),
                            ncol=3, fontsize=_FS["small"], frameon=False)
        ax_p.set_title(f"Cage sizes compared (uniformity tolerance {relative_label(tol)})",
                       fontsize=_FS["title"])
        top_in = 0.04 + extent_in(fig, legend)[1] + 0.04 + extent_in(fig, ax_p.title)[1] + 0.08
        gs.update(**grid_box(fig, 0.72, 0.72, top_in, 0.5, nrows=2, hgap_in=0.14))
        for ax in (ax_p, ax_c):  # GridSpec.update moves the axes of pyplot figures only
            ax.set_position(ax.get_subplotspec().get_position(fig))
        ax_m.set_position(ax_p.get_position())
    return _finish(fig)
