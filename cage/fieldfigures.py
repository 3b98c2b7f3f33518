"""Figures of the field: uniformity maps in the mid-planes and the field along the axis lines,
each axis driven alone (cage frame, SI units). Style: ``cage.figurestyle``.
"""
from __future__ import annotations

import math

import matplotlib
import numpy as np
from matplotlib.colors import LogNorm
from matplotlib.figure import Figure
from matplotlib.lines import Line2D
from matplotlib.patches import Rectangle
from matplotlib.ticker import FixedLocator, FuncFormatter, MaxNLocator, NullLocator

from cage.coilaxis import AxisCage, CoilAxis, check_axis_cage
from cage.coils import AXES, CoilCage, check_cage
from cage.errors import InputError
from cage.figurestyle import (AXIS_COLOURS, FIG_WIDTH_IN, _FS, _MAP_FLOOR, _MAP_LEVELS, _RC, _finish, _grid,
                              _m, _new_figure, _rel_unit, _three_lengths, _tolerance, box_at, grid_box,
                              relative_label)


# ---------------------------------------------------------------------------------------------
# Uniformity maps and axis lines
# ---------------------------------------------------------------------------------------------


def default_map_width_m(cage: CoilCage | AxisCage, test_volume_m) -> float:
    """Full width (m) of the square region mapped around the centre by default.

    2.5 x the largest side of the test volume, but at most 1.8 x the smallest half-width of
    the three pairs (a half-width of 0.9 x the smallest coil's), so the map stays inside the
    coils where the deviation is small enough to read.
    """
    units = cage_axes(cage)
    tv = _three_lengths(test_volume_m, "test_volume_m")
    inner = min(p.half_width_m for p in units)
    width = 2.5 * float(tv.max()) if tv.max() > 0 else 1.8 * inner
    return float(min(width, 1.8 * inner))


_MAP_PLANES = ("xy", "yz", "zx")


def cage_axes(cage):
    """The three driven units of a cage: its pairs (``CoilCage``) or its coil axes (``AxisCage``)."""
    if isinstance(cage, AxisCage):
        return check_axis_cage(cage).axes
    return check_cage(cage).pairs


def driven_name(unit) -> str:
    """"x pair" for a pair, "x axis (four, 4 coils)" for an axis of coils."""
    if isinstance(unit, CoilAxis):
        return f"{unit.axis} axis ({unit.system}, {unit.count} coils)"
    return f"{unit.axis} pair"


def _map_name(unit) -> str:
    return f"{unit.axis} axis ({unit.system})" if isinstance(unit, CoilAxis) else f"{unit.axis} pair"


def _unit_field_T(unit, points_m) -> np.ndarray:
    """Field (T) of one pair or coil axis at 1 A (cage.coils.pair_field_T, cage.coilaxis.axis_field_T)."""
    from cage.coilaxis import axis_field_T
    from cage.coils import pair_field_T

    return (axis_field_T if isinstance(unit, CoilAxis) else pair_field_T)(unit, 1.0, points_m)


def _rel_formatter():
    return FuncFormatter(lambda v, _pos: relative_label(v) if v > 0 else "0")


def uniformity_maps_figure(cage: CoilCage | AxisCage, test_volume_m, tolerance: float, extent_m=None,
                           n: int = 61) -> Figure:
    """3 x 3 contour maps of the relative deviation |B(p) - B(0)| / |B(0)|, each axis alone.

    Rows: the driven pair (x, y, z); columns: the mid-planes xy (z = 0), yz (x = 0) and
    zx (y = 0) through the cage centre. Filled contours on half-decade log levels from 1 ppm
    to 10 % (cage.uniformity.deviation_map, filament model, per ampere: the deviation does not
    depend on the current); the tolerance contour drawn bold in black; the test volume's
    cross-section dashed white.

    test_volume_m: box sides (x, y, z) in metres, or one number for a cube. tolerance: relative
    (0.001 = 0.1 %). extent_m: full width (m) of the square mapped in every plane (default
    ``default_map_width_m``). n: grid points along each side of a map. cage: a ``CoilCage`` of
    pairs or a ``cage.coilaxis.AxisCage`` (every coil of each axis drives the field).
    """
    from cage.uniformity import deviation_map

    units = cage_axes(cage)
    tv = _three_lengths(test_volume_m, "test_volume_m")
    tol = _tolerance(tolerance)
    n = _grid(n, "n", 5)
    width = default_map_width_m(cage, tv) if extent_m is None else float(extent_m)
    if not math.isfinite(width) or width <= 0:
        raise InputError(f"extent_m must be a positive width in metres, got {extent_m!r}")

    cmap = matplotlib.colormaps["viridis"].with_extremes(under="#1a0b2e", over="#fff7a8")
    with matplotlib.rc_context(_RC):
        fig = _new_figure(FIG_WIDTH_IN, _MAPS_HEIGHT_IN)
        box = grid_box(fig, *_MAPS_MARGINS_IN, nrows=3, ncols=3, wgap_in=_MAPS_GAPS_IN[0], hgap_in=_MAPS_GAPS_IN[1])
        axes = fig.subplots(3, 3, sharex="col", sharey="col", gridspec_kw=box)
        filled = None
        for r, pair in enumerate(units):
            for c, plane in enumerate(_MAP_PLANES):
                ax = axes[r, c]
                m = deviation_map(pair, plane, size_m=(width, width), n=(n, n))
                dev = np.clip(m.deviation, _MAP_FLOOR, None)
                # A norm of its own per map: one shared norm would tell every earlier map to
                # recolour itself each time a map is added (the same levels and colours either way).
                norm = LogNorm(vmin=_MAP_LEVELS[0], vmax=_MAP_LEVELS[-1])
                filled = ax.contourf(m.u_m, m.v_m, dev, levels=_MAP_LEVELS, norm=norm, cmap=cmap,
                                     extend="both")
                if dev.min() < tol < dev.max():
                    ax.contour(m.u_m, m.v_m, dev, levels=[tol], colors="black", linewidths=2.0)
                iu, iv = AXES.index(plane[0]), AXES.index(plane[1])
                ax.add_patch(Rectangle((-tv[iu] / 2, -tv[iv] / 2), tv[iu], tv[iv], fill=False,
                                       edgecolor="white", linestyle="--", linewidth=1.2,
                                       gid="test_volume"))
                ax.set_aspect("equal")
                ax.xaxis.set_major_locator(MaxNLocator(nbins=3, symmetric=True))
                ax.yaxis.set_major_locator(MaxNLocator(nbins=5, symmetric=True))
                third = AXES[3 - iu - iv]
                # y given: the title sits on the axes' top (no tick labels there); matplotlib then
                # skips measuring every axis to place it
                ax.set_title(f"{_map_name(pair)} driven, {third} = 0", fontsize=_FS["base"], y=1.0)
                ax.set_ylabel(f"{plane[1]} (m)")
                if r == 2:
                    ax.set_xlabel(f"{plane[0]} (m)")
        # The colour bar in the right margin, 85 % of the maps' height, centred on them.
        left_in, right_in, top_in, bottom_in = _MAPS_MARGINS_IN
        maps_h = _MAPS_HEIGHT_IN - top_in - bottom_in
        cax = fig.add_axes(box_at(fig, FIG_WIDTH_IN - right_in + 0.15, bottom_in + 0.075 * maps_h, 0.15,
                                  0.85 * maps_h))
        cbar = fig.colorbar(filled, cax=cax, ticks=FixedLocator(10.0 ** np.arange(-6, 0)),
                            format=_rel_formatter())
        cbar.ax.yaxis.set_minor_locator(NullLocator())
        cbar.ax.axhline(tol, color="black", linewidth=2.5)
        cbar.set_label("relative deviation |B(p) − B(0)| / |B(0)|  (ppm, %)")
        fig.suptitle(
            f"Field uniformity in the mid-planes, each {'pair' if isinstance(cage, CoilCage) else 'axis'} "
            f"driven alone\n"
            f"tolerance {relative_label(tol)} (bold black line), "
            f"test volume {_m(tv[0])} × {_m(tv[1])} × {_m(tv[2])} m (dashed white)",
            fontsize=_FS["title"], y=1.0 - 0.08 / _MAPS_HEIGHT_IN, va="top")
    return _finish(fig)


# Uniformity maps: figure height; margins (left, right, top, bottom) and gaps (between columns,
# between rows) in inches. Left: tick labels and the y label; right: the colour bar with its
# labels; top: the two-line title and the first row's titles; between rows: the next row's
# titles; bottom: tick labels and the x labels. The cells come out nearly square, as the maps.
_MAPS_HEIGHT_IN = 6.9
_MAPS_MARGINS_IN = (0.62, 1.12, 0.72, 0.45)
_MAPS_GAPS_IN = (0.66, 0.5)

_LINE_STYLES = ("-", (0, (5, 2)), (0, (1.5, 1.5)))


def axis_line_changes(cage: CoilCage | AxisCage, positions_m) -> np.ndarray:
    """B_a(s e_k) / B_a(0) - 1 for each driven axis a and line direction k (3, 3, len(s)).

    positions_m: positions s (m) along the lines through the centre. Index [a, k, :] is pair a
    driven alone, along the line in direction k. Filament model (cage.coils.pair_field_T, or
    cage.coilaxis.axis_field_T for every coil of an axis of an ``AxisCage``).
    """
    s = np.asarray(positions_m, dtype=float)
    out = np.empty((3, 3, s.size))
    for a, pair in enumerate(cage_axes(cage)):
        pts = np.zeros((3 * s.size + 1, 3))
        for k in range(3):
            pts[1 + k * s.size: 1 + (k + 1) * s.size, k] = s
        b = _unit_field_T(pair, pts)[:, a]
        out[a] = (b[1:] / b[0] - 1.0).reshape(3, s.size)
    return out


def _line_title(pair) -> str:
    size = 'side' if pair.shape == 'square' else 'radius'
    if isinstance(pair, CoilAxis):
        planes = sorted({round(abs(c.position_m), 3) for c in pair.coils})
        return (f"{driven_name(pair)} driven alone ({pair.shape}, {size} up to {pair.size_m:.3f} m, "
                f"coil planes at ±{', ±'.join(f'{p:.3f}' for p in planes)} m)").replace("±0.000", "0.000")
    return (f"{pair.axis} pair driven alone ({pair.shape}, {size} {pair.size_m:.3f} m, "
            f"spacing {pair.spacing_m:.3f} m)")


def axis_lines_figure(cage: CoilCage | AxisCage, test_volume_m, tolerance: float, n: int = 201,
                      extent_m=None) -> Figure:
    """Relative change of each pair's own field component along the three lines through the centre.

    One panel per driven pair a: B_a(p) / B_a(0) - 1 along the x, y and z lines through the
    centre (in % or ppm), the tolerance band shaded, the test volume's half-sides marked.
    By the mirror symmetry of a pair the field on these lines is along a, so the change of
    B_a is the deviation |B(p) - B(0)| / |B(0)| with its sign.

    extent_m: full length (m) of each line (default ``default_map_width_m``); n: points per line.
    cage: a ``CoilCage`` of pairs or a ``cage.coilaxis.AxisCage`` (its axes coaxial and mirror
    symmetric, so the same holds).
    """
    units = cage_axes(cage)
    tv = _three_lengths(test_volume_m, "test_volume_m")
    tol = _tolerance(tolerance)
    n = _grid(n, "n", 3)
    width = default_map_width_m(cage, tv) if extent_m is None else float(extent_m)
    if not math.isfinite(width) or width <= 0:
        raise InputError(f"extent_m must be a positive length in metres, got {extent_m!r}")
    s = np.linspace(-width / 2, width / 2, n)
    change = axis_line_changes(cage, s)
    unit, scale = _rel_unit(tol)

    with matplotlib.rc_context(_RC):
        fig = _new_figure(FIG_WIDTH_IN, 7.2)
        # Margins in inches: the y labels and tick labels left; the legend row and the first
        # title on top; each next panel's title between panels; tick labels and x label below.
        axes = fig.subplots(3, 1, sharex=True,
                            gridspec_kw=grid_box(fig, 0.78, 0.1, 0.56, 0.48, nrows=3, hgap_in=0.3))
        for a, (ax, pair) in enumerate(zip(axes, units)):
            ax.axhspan(-tol * scale, tol * scale, color="0.88", zorder=0,
                       label=f"tolerance ±{relative_label(tol)}")
            ax.axhline(0.0, color="0.5", linewidth=0.6, zorder=1)
            cube = bool(np.allclose(tv, tv[0]))
            inside_max = 0.0
            for k, line_axis in enumerate(AXES):
                colour = AXIS_COLOURS[line_axis]
                ax.plot(s, change[a, k] * scale, color=colour, linewidth=1.6,
                        linestyle=_LINE_STYLES[k], label=f"along {line_axis}",
                        gid=f"line-{pair.axis}-{line_axis}")
                half = tv[k] / 2
                if not cube or k == 0:
                    for sign in (-1, 1):
                        ax.axvline(sign * half, color="0.25" if cube else colour,
                                   linestyle=(0, (4, 3)), linewidth=0.9, alpha=0.8)
                inside = np.abs(s) <= half + 1e-12
                if inside.any():
                    inside_max = max(inside_max, float(np.abs(change[a, k][inside]).max()))
            # Centre the view on the tolerance band, the curves clipped at +-4 x tolerance
            # (or at what the test volume reaches, when that is more).
            reach = max(4.0 * tol, 1.25 * inside_max)
            seen = np.clip(change[a], -reach, reach)
            ax.set_ylim(min(-1.5 * tol, float(seen.min()) * 1.05) * scale,
                        max(1.5 * tol, float(seen.max()) * 1.05) * scale)
            ax.set_xlim(s[0], s[-1])
            # plain text, no mathtext: its parser costs about 0.1 s to build in each process
            ax.set_ylabel(f"B{pair.axis} / B{pair.axis}(0) \u2212 1 ({unit})")
            ax.set_title(_line_title(pair), fontsize=_FS["base"], y=1.0)  # y given: no auto placement
            ax.grid(True, linewidth=0.4, alpha=0.5)
        handles, labels = axes[0].get_legend_handles_labels()
        handles.append(Line2D([], [], color="0.25", linestyle=(0, (4, 3)), linewidth=0.9))
        labels.append("test volume edges" if np.allclose(tv, tv[0])
                      else "test volume edges (colour of the line)")
        fig.legend(handles, labels, loc="upper center", bbox_to_anchor=(0.5, 1.0), ncol=5,
                   fontsize=_FS["small"], frameon=False)
        axes[-1].set_xlabel("position along the line through the centre (m)")
    return _finish(fig)
