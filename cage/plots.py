"""Figures: uniformity maps, field along the axis lines, the cage in the room, size
comparison, setpoints and sequences (cage frame, SI units; matplotlib).

Every function takes plain data (numbers, numpy arrays, the frozen dataclasses of
``cage.coils``, ``cage.layout`` and ``cage.sitefile``, dicts as parsed from our JSON files)
and returns a ``matplotlib.figure.Figure`` on its own Agg canvas: no pyplot, no global
figure state, no display, nothing printed. ``png_bytes`` renders a figure, ``save_png``
writes it atomically (``cage.atomicfile``).

Figures are laid out for an A4 page: FIG_WIDTH_IN (7.5 in) wide, fonts of 8 pt and more,
saved at DEFAULT_DPI (150 dots per inch).

Views follow the cage frame (x toward the heading, y 90 degrees clockwise from x seen from
above, z down; see the README): the top view is seen from above, so +y points down the
page; the front view is seen from the +y side and the side view from the +x side (third-angle
projection: top view above the front view, side view to its right); heights are measured up
from the floor.

Importing this module imports matplotlib (slow): import it only where a figure is made.
"""
from __future__ import annotations

import io
import math
import os
from dataclasses import replace
from pathlib import Path

import matplotlib
import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.colors import LogNorm
from matplotlib.figure import Figure
from matplotlib.lines import Line2D
from matplotlib.patches import Patch, PathPatch, Rectangle
from matplotlib.path import Path as MplPath
from matplotlib.ticker import FixedLocator, FuncFormatter, MaxNLocator, NullLocator

from cage.coils import AXES, CoilCage, check_cage
from cage.errors import InputError
from cage.escape import for_figure

__all__ = [
    "FIG_WIDTH_IN",
    "DEFAULT_DPI",
    "AXIS_COLOURS",
    "png_bytes",
    "save_png",
    "default_map_width_m",
    "relative_label",
    "axis_line_changes",
    "uniformity_maps_figure",
    "axis_lines_figure",
    "cage_in_room_figure",
    "compare_figure",
    "setpoints_figure",
    "sequence_figure",
]

FIG_WIDTH_IN = 7.5
DEFAULT_DPI = 150
AXIS_COLOURS = {"x": "#c0392b", "y": "#23864b", "z": "#1f5fbf"}

# Font sizes in points (at FIG_WIDTH_IN on paper, never below 8 pt).
_FS = {"base": 8.5, "small": 8.0, "title": 9.5, "suptitle": 10.5}
_RC = {
    "font.size": _FS["base"],
    "axes.titlesize": _FS["title"],
    "axes.labelsize": _FS["base"],
    "xtick.labelsize": _FS["small"],
    "ytick.labelsize": _FS["small"],
    "legend.fontsize": _FS["small"],
    "figure.titlesize": _FS["suptitle"],
}

# Deviation map levels: half decades from 1 ppm to 10 %.
_MAP_LEVELS = 10.0 ** np.arange(-6.0, -1.0 + 1e-9, 0.5)
_MAP_FLOOR = 1e-9


# ---------------------------------------------------------------------------------------------
# Rendering
# ---------------------------------------------------------------------------------------------


def _new_figure(width_in: float, height_in: float) -> Figure:
    fig = Figure(figsize=(width_in, height_in), layout="constrained")
    FigureCanvasAgg(fig)
    return fig


def _finish(fig: Figure) -> Figure:
    """Fix tick label sizes (ticks are made lazily at draw time, outside the rc context)."""
    for ax in fig.axes:
        ax.tick_params(labelsize=_FS["small"])
    return fig


def png_bytes(fig: Figure, dpi: int = DEFAULT_DPI) -> bytes:
    """The figure rendered as PNG (figsize x dpi pixels)."""
    if not isinstance(fig, Figure):
        raise InputError(f"expected a matplotlib Figure, got {type(fig).__name__}")
    if fig.canvas is None or not isinstance(fig.canvas, FigureCanvasAgg):
        FigureCanvasAgg(fig)
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=dpi, metadata={"Software": None})
    return buf.getvalue()


def save_png(fig: Figure, path: str | os.PathLike, dpi: int = DEFAULT_DPI) -> Path:
    """Render the figure to PNG in memory, then write it atomically to ``path``."""
    from cage.atomicfile import write_bytes

    return write_bytes(path, png_bytes(fig, dpi))


# ---------------------------------------------------------------------------------------------
# Small helpers
# ---------------------------------------------------------------------------------------------


def _three_lengths(value, what: str) -> np.ndarray:
    try:
        arr = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"{what} must be three lengths (x, y, z) in metres") from None
    if arr.shape == ():
        arr = np.full(3, float(arr))
    if arr.shape != (3,) or not np.all(np.isfinite(arr)) or np.any(arr < 0):
        raise InputError(f"{what} must be three finite, non-negative lengths (x, y, z) in metres")
    return arr


def _tolerance(value) -> float:
    try:
        tol = float(value)
    except (TypeError, ValueError):
        raise InputError(f"tolerance must be a number, got {value!r}") from None
    if not math.isfinite(tol) or not 0 < tol < 1:
        raise InputError(f"tolerance is a relative deviation between 0 and 1, got {value!r}")
    return tol


def _grid(n, what: str, minimum: int) -> int:
    if isinstance(n, bool) or not isinstance(n, (int, np.integer)) or n < minimum:
        raise InputError(f"{what} must be a whole number of at least {minimum}, got {n!r}")
    return int(n)


def relative_label(value: float) -> str:
    """A relative deviation for people: ppm below 0.1 %, % from there (e.g. '10 ppm', '0.1 %')."""
    v = float(value)
    if v < 1e-3 * (1 - 1e-9):
        ppm = v * 1e6
        return f"{ppm:.3g} ppm"
    return f"{v * 100:.3g} %"


def _rel_unit(tolerance: float) -> tuple[str, float]:
    """Unit and scale for relative changes of the size of ``tolerance``."""
    return ("%", 100.0) if tolerance >= 1e-3 * (1 - 1e-9) else ("ppm", 1e6)


def _m(value: float) -> str:
    return f"{value:.2f}"


# ---------------------------------------------------------------------------------------------
# Uniformity maps and axis lines
# ---------------------------------------------------------------------------------------------


def default_map_width_m(cage: CoilCage, test_volume_m) -> float:
    """Full width (m) of the square region mapped around the centre by default.

    2.5 x the largest side of the test volume, but at most 1.8 x the smallest half-width of
    the three pairs (a half-width of 0.9 x the smallest coil's), so the map stays inside the
    coils where the deviation is small enough to read.
    """
    check_cage(cage)
    tv = _three_lengths(test_volume_m, "test_volume_m")
    inner = min(p.half_width_m for p in cage.pairs)
    width = 2.5 * float(tv.max()) if tv.max() > 0 else 1.8 * inner
    return float(min(width, 1.8 * inner))


_MAP_PLANES = ("xy", "yz", "zx")


def _rel_formatter():
    return FuncFormatter(lambda v, _pos: relative_label(v) if v > 0 else "0")


def uniformity_maps_figure(cage: CoilCage, test_volume_m, tolerance: float, extent_m=None,
                           n: int = 61) -> Figure:
    """3 x 3 contour maps of the relative deviation |B(p) - B(0)| / |B(0)|, each axis alone.

    Rows: the driven pair (x, y, z); columns: the mid-planes xy (z = 0), yz (x = 0) and
    zx (y = 0) through the cage centre. Filled contours on half-decade log levels from 1 ppm
    to 10 % (cage.uniformity.deviation_map, filament model, per ampere: the deviation does not
    depend on the current); the tolerance contour drawn bold in black; the test volume's
    cross-section dashed white.

    test_volume_m: box sides (x, y, z) in metres, or one number for a cube. tolerance: relative
    (0.001 = 0.1 %). extent_m: full width (m) of the square mapped in every plane (default
    ``default_map_width_m``). n: grid points along each side of a map.
    """
    from cage.uniformity import deviation_map

    check_cage(cage)
    tv = _three_lengths(test_volume_m, "test_volume_m")
    tol = _tolerance(tolerance)
    n = _grid(n, "n", 5)
    width = default_map_width_m(cage, tv) if extent_m is None else float(extent_m)
    if not math.isfinite(width) or width <= 0:
        raise InputError(f"extent_m must be a positive width in metres, got {extent_m!r}")

    cmap = matplotlib.colormaps["viridis"].with_extremes(under="#1a0b2e", over="#fff7a8")
    norm = LogNorm(vmin=_MAP_LEVELS[0], vmax=_MAP_LEVELS[-1])
    with matplotlib.rc_context(_RC):
        fig = _new_figure(FIG_WIDTH_IN, 6.9)
        axes = fig.subplots(3, 3, sharex="col", sharey="col")
        filled = None
        for r, pair in enumerate(cage.pairs):
            for c, plane in enumerate(_MAP_PLANES):
                ax = axes[r, c]
                m = deviation_map(pair, plane, size_m=(width, width), n=(n, n))
                dev = np.clip(m.deviation, _MAP_FLOOR, None)
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
                ax.set_title(f"{pair.axis} pair driven, {third} = 0", fontsize=_FS["base"])
                ax.set_ylabel(f"{plane[1]} (m)")
                if r == 2:
                    ax.set_xlabel(f"{plane[0]} (m)")
        cbar = fig.colorbar(filled, ax=axes, shrink=0.85, aspect=35, pad=0.02,
                            ticks=FixedLocator(10.0 ** np.arange(-6, 0)), format=_rel_formatter())
        cbar.ax.yaxis.set_minor_locator(NullLocator())
        cbar.ax.axhline(tol, color="black", linewidth=2.5)
        cbar.set_label("relative deviation |B(p) − B(0)| / |B(0)|  (ppm, %)")
        fig.suptitle(
            f"Field uniformity in the mid-planes, each pair driven alone\n"
            f"tolerance {relative_label(tol)} (bold black line), "
            f"test volume {_m(tv[0])} × {_m(tv[1])} × {_m(tv[2])} m (dashed white)",
            fontsize=_FS["title"])
    return _finish(fig)


_LINE_STYLES = ("-", (0, (5, 2)), (0, (1.5, 1.5)))


def axis_line_changes(cage: CoilCage, positions_m) -> np.ndarray:
    """B_a(s e_k) / B_a(0) - 1 for each driven axis a and line direction k (3, 3, len(s)).

    positions_m: positions s (m) along the lines through the centre. Index [a, k, :] is pair a
    driven alone, along the line in direction k. Filament model (cage.coils.pair_field_T).
    """
    from cage.coils import pair_field_T

    s = np.asarray(positions_m, dtype=float)
    out = np.empty((3, 3, s.size))
    for a, pair in enumerate(cage.pairs):
        pts = np.zeros((3 * s.size + 1, 3))
        for k in range(3):
            pts[1 + k * s.size: 1 + (k + 1) * s.size, k] = s
        b = pair_field_T(pair, 1.0, pts)[:, a]
        out[a] = (b[1:] / b[0] - 1.0).reshape(3, s.size)
    return out


def axis_lines_figure(cage: CoilCage, test_volume_m, tolerance: float, n: int = 201,
                      extent_m=None) -> Figure:
    """Relative change of each pair's own field component along the three lines through the centre.

    One panel per driven pair a: B_a(p) / B_a(0) - 1 along the x, y and z lines through the
    centre (in % or ppm), the tolerance band shaded, the test volume's half-sides marked.
    By the mirror symmetry of a pair the field on these lines is along a, so the change of
    B_a is the deviation |B(p) - B(0)| / |B(0)| with its sign.

    extent_m: full length (m) of each line (default ``default_map_width_m``); n: points per line.
    """
    check_cage(cage)
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
        axes = fig.subplots(3, 1, sharex=True)
        for a, (ax, pair) in enumerate(zip(axes, cage.pairs)):
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
            ax.set_ylabel(f"$B_{pair.axis}/B_{pair.axis}(0) - 1$ ({unit})")
            ax.set_title(f"{pair.axis} pair driven alone ({pair.shape}, "
                         f"{'side' if pair.shape == 'square' else 'radius'} {pair.size_m:.3f} m, "
                         f"spacing {pair.spacing_m:.3f} m)", fontsize=_FS["base"])
            ax.grid(True, linewidth=0.4, alpha=0.5)
        handles, labels = axes[0].get_legend_handles_labels()
        handles.append(Line2D([], [], color="0.25", linestyle=(0, (4, 3)), linewidth=0.9))
        labels.append("test volume edges" if np.allclose(tv, tv[0])
                      else "test volume edges (colour of the line)")
        fig.legend(handles, labels, loc="outside upper center", ncol=5, fontsize=_FS["small"],
                   frameon=False)
        axes[-1].set_xlabel("position along the line through the centre (m)")
    return _finish(fig)


# ---------------------------------------------------------------------------------------------
# The cage in the room
# ---------------------------------------------------------------------------------------------

_CURVE_T = np.arange(480) / 480.0  # includes t = 0, 1/4, 1/2, 3/4: the corners of a square


def _project(points_3: np.ndarray, ih: int, iv: int, height_of) -> tuple[np.ndarray, np.ndarray]:
    h = points_3[:, ih]
    v = height_of(points_3[:, iv]) if iv == 2 else points_3[:, iv]
    return h, v


def _band_patch(pair, frame, ih, iv, height_of, colour) -> PathPatch:
    """Face-on frame of one coil: the ring between the inner and outer frame edges."""
    from cage.layout import _curve_points

    if pair.shape == "square":
        outer = replace(pair, size_m=pair.size_m + frame.depth_m)
        inner = replace(pair, size_m=max(pair.size_m - frame.depth_m, 1e-9))
    else:
        outer = replace(pair, size_m=pair.size_m + frame.depth_m / 2)
        inner = replace(pair, size_m=max(pair.size_m - frame.depth_m / 2, 1e-9))
    ho, vo = _project(_curve_points(outer, _CURVE_T), ih, iv, height_of)
    hi, vi = _project(_curve_points(inner, _CURVE_T), ih, iv, height_of)
    verts = np.concatenate([np.column_stack([ho, vo]), [[ho[0], vo[0]]],
                            np.column_stack([hi[::-1], vi[::-1]]), [[hi[-1], vi[-1]]]])
    codes = np.full(len(verts), MplPath.LINETO)
    codes[0] = MplPath.MOVETO
    codes[len(ho)] = MplPath.CLOSEPOLY
    codes[len(ho) + 1] = MplPath.MOVETO
    codes[-1] = MplPath.CLOSEPOLY
    return PathPatch(MplPath(verts, codes), facecolor=colour, edgecolor=colour, alpha=0.45,
                     linewidth=0.6, gid=f"frame-{pair.axis}")


def _draw_pair(ax, pair, frame, ih, iv, height_of) -> None:
    """One pair in one orthographic view: frames as bands (face-on) or bars (edge-on)."""
    from cage.layout import _curve_points

    colour = AXIS_COLOURS[pair.axis]
    a = AXES.index(pair.axis)
    if a not in (ih, iv):
        ax.add_patch(_band_patch(pair, frame, ih, iv, height_of, colour))
    else:
        reach = pair.half_width_m + frame.depth_m / 2
        for sign in (-1.0, 1.0):
            lo_a = sign * pair.spacing_m / 2 - frame.width_m / 2
            hi_a = lo_a + frame.width_m
            if a == ih:
                h0, h1, v0, v1 = lo_a, hi_a, -reach, reach
            else:
                h0, h1, v0, v1 = -reach, reach, lo_a, hi_a
            if iv == 2:
                v0, v1 = sorted((height_of(v0), height_of(v1)))
            ax.add_patch(Rectangle((h0, v0), h1 - h0, v1 - v0, facecolor=colour, edgecolor=colour,
                                   alpha=0.45, linewidth=0.6, gid=f"frame-{pair.axis}"))
    for sign in (1.0, -1.0):
        h, v = _project(_curve_points(pair, _CURVE_T, sign), ih, iv, height_of)
        ax.plot(np.append(h, h[0]), np.append(v, v[0]), color=colour, linewidth=0.8,
                gid=f"centreline-{pair.axis}")


def _rect(ax, h0, h1, v0, v1, **kw) -> None:
    ax.add_patch(Rectangle((h0, v0), h1 - h0, v1 - v0, fill=False, **kw))


def cage_in_room_figure(cage: CoilCage, frame, room, test_volume_m, heading_deg: float | None = None) -> Figure:
    """The cage in the room in three orthographic views, with the sizes written out.

    Top view (x-y, seen from above, +y down the page), front view (x-height, seen from +y),
    side view (y-height, seen from +x, so +y runs to the left). Each coil's winding centreline
    (cage.layout._curve_points) is drawn thin, its frame (FrameSpec width along the axis,
    depth radially) as a band when seen face-on and as a bar when seen edge-on; the test
    volume grey; room walls thick black, the clearance line dashed. The cage stands centred
    in the room's plan, its lowest frame point at floor + clearance. Horizontal coordinates
    are measured from the cage centre, heights from the floor (from the lowest frame point
    when no room is given).

    frame: cage.layout.FrameSpec; room: cage.sitefile.Room or None; test_volume_m: box sides.
    heading_deg: true azimuth of cage +x; when given, the top view gets a north arrow and the
    heading (``_north_arrow``).
    """
    from cage.layout import FrameSpec, envelope_m, room_inner_m

    check_cage(cage)
    if not isinstance(frame, FrameSpec):
        raise InputError(f"frame must be a FrameSpec, got {type(frame).__name__}")
    tv = _three_lengths(test_volume_m, "test_volume_m")
    env = np.asarray(envelope_m(cage, frame), dtype=float)
    clearance = float(room.clearance_m) if room is not None else 0.0
    base = clearance  # height of the lowest frame point
    centre_height = base + env[2] / 2

    def height_of(z):
        return centre_height - np.asarray(z, dtype=float)

    if room is not None:
        size = np.array([room.length_m, room.width_m, room.height_m], dtype=float)
        inner = np.asarray(room_inner_m(room), dtype=float)
    else:
        size = env + 0.6
        inner = None
    margin = 0.12 * float(size.max()) / 5.0 + 0.05
    # The views show the room and, when it does not fit, the whole cage as well.
    half = np.maximum(size[:2], env[:2] + 0.2) / 2 + margin
    lim_h = {0: (-half[0], half[0]), 1: (-half[1], half[1])}
    top = max(size[2] if room is not None else 0.0, base + env[2] + 0.25)
    lim_v = (-margin, top + margin)
    span = {0: lim_h[0][1] - lim_h[0][0], 1: lim_h[1][1] - lim_h[1][0], 2: lim_v[1] - lim_v[0]}

    width_in = FIG_WIDTH_IN
    # Panel heights follow the data spans so that every view keeps one scale.
    usable_w = width_in - 1.0
    scale_in_per_m = usable_w / (span[0] + span[1])
    # The legend goes in the top-right cell, the sizes in words in a row below the views.
    info_h_in = 1.05
    height_in = float(np.clip(scale_in_per_m * (span[1] + span[2]) + 1.3, 4.5, 9.8)) + info_h_in
    legend_cols = 2 if usable_w * span[1] / (span[0] + span[1]) >= 2.6 else 1

    pairs = sorted(cage.pairs, key=lambda p: -p.half_width_m)
    views = {
        "top": (0, 1, "top view, seen from above"),
        "front": (0, 2, "front view, seen from +y"),
        "side": (1, 2, "side view, seen from +x"),
    }
    with matplotlib.rc_context(_RC):
        fig = _new_figure(width_in, height_in)
        gs = fig.add_gridspec(3, 2, width_ratios=[span[0], span[1]],
                              height_ratios=[span[1], span[2], info_h_in / scale_in_per_m])
        ax_top = fig.add_subplot(gs[0, 0])
        ax_front = fig.add_subplot(gs[1, 0], sharex=ax_top)
        ax_side = fig.add_subplot(gs[1, 1], sharey=ax_front)
        ax_legend = fig.add_subplot(gs[0, 1])
        ax_info = fig.add_subplot(gs[2, :])
        for name, ax in (("top", ax_top), ("front", ax_front), ("side", ax_side)):
            ih, iv, title = views[name]
            # Room and clearance.
            if room is not None:
                if iv == 2:
                    _rect(ax, -size[ih] / 2, size[ih] / 2, 0.0, size[2], edgecolor="black",
                          linewidth=2.2, gid="room")
                    _rect(ax, -inner[ih] / 2, inner[ih] / 2, clearance, clearance + inner[2],
                          edgecolor="0.35", linestyle="--", linewidth=1.0, gid="clearance")
                    ax.axhspan(lim_v[0], 0.0, color="0.85", zorder=0)
                else:
                    _rect(ax, -size[0] / 2, size[0] / 2, -size[1] / 2, size[1] / 2,
                          edgecolor="black", linewidth=2.2, gid="room")
                    _rect(ax, -inner[0] / 2, inner[0] / 2, -inner[1] / 2, inner[1] / 2,
                          edgecolor="0.35", linestyle="--", linewidth=1.0, gid="clearance")
            # Envelope.
            e_h = env[ih] / 2
            if iv == 2:
                v0, v1 = base, base + env[2]
            else:
                v0, v1 = -env[iv] / 2, env[iv] / 2
            _rect(ax, -e_h, e_h, v0, v1, edgecolor="0.45", linestyle=":", linewidth=1.0,
                  gid="envelope")
            # Frames, outermost pair first.
            for pair in pairs:
                _draw_pair(ax, pair, frame, ih, iv, height_of)
            # Test volume.
            t_v0, t_v1 = ((height_of(tv[2] / 2), height_of(-tv[2] / 2)) if iv == 2
                          else (-tv[iv] / 2, tv[iv] / 2))
            ax.add_patch(Rectangle((-tv[ih] / 2, t_v0), tv[ih], t_v1 - t_v0, facecolor="0.55",
                                   edgecolor="black", linewidth=0.8, alpha=0.7, gid="test_volume"))
            # Envelope dimension along the horizontal axis, written under (top: above) the cage.
            y_dim = (v1 + 0.08 * span[iv] / 2) if iv != 2 else (v1 + 0.1)
            ax.annotate("", xy=(-e_h, y_dim), xytext=(e_h, y_dim),
                        arrowprops=dict(arrowstyle="<->", color="0.25", linewidth=0.8,
                                        shrinkA=0, shrinkB=0))
            ax.text(0.0, y_dim, f"{env[ih]:.2f} m", ha="center",
                    va="top" if iv != 2 else "bottom", fontsize=_FS["small"], color="0.15",
                    bbox=dict(facecolor="white", edgecolor="none", pad=0.6, alpha=0.8))
            ax.set_xlim(*lim_h[ih])
            if iv == 2:
                ax.set_ylim(*lim_v)
            else:
                ax.set_ylim(*lim_h[iv])
            ax.set_aspect("equal", adjustable="box")
            ax.set_title(title, fontsize=_FS["base"])
            ax.set_xlabel(f"{AXES[ih]} (m)")
            ax.set_ylabel(f"{AXES[iv]} (m)" if iv != 2 else
                          ("height above floor (m)" if room is not None
                           else "height above lowest frame (m)"))
            ax.grid(True, linewidth=0.3, alpha=0.4)
        ax_top.invert_yaxis()   # seen from above: +y (clockwise from +x) points down the page
        ax_side.invert_xaxis()  # seen from +x: +y runs to the left
        ax_top.tick_params(labelbottom=True)
        # Vertical envelope dimension in the side view.
        ax_side.annotate("", xy=(-env[1] / 2 - 0.12, base), xytext=(-env[1] / 2 - 0.12, base + env[2]),
                         arrowprops=dict(arrowstyle="<->", color="0.25", linewidth=0.8,
                                         shrinkA=0, shrinkB=0))
        ax_side.text(-env[1] / 2 - 0.16, base + env[2] / 2, f"{env[2]:.2f} m", rotation=90,
                     ha="left", va="center", fontsize=_FS["small"], color="0.15",
                     bbox=dict(facecolor="white", edgecolor="none", pad=0.6, alpha=0.8))

        _legend_panel(ax_legend, cage, room, legend_cols)
        _info_panel(ax_info, cage, frame, room, env, inner, tv)
        if heading_deg is not None:
            _north_arrow(ax_top, heading_deg)
        fig.suptitle("The cage in the room", fontsize=_FS["title"])
    return _finish(fig)


def _north_arrow(ax, heading_deg: float) -> None:
    """A north arrow and the heading in the top view (x to the right, +y down the page).

    Cage +x is at heading h clockwise from true north, +y 90 degrees further, so north is
    (cos h, -sin h) in (x, y); with +y down the page that is (cos h, sin h) on the page.
    """
    from cage.numberformat import azimuth_text

    h = math.radians(float(heading_deg))
    dx, dy = math.cos(h), math.sin(h)
    length = 22.0  # points
    tip = (0.9, 0.8)
    ax.annotate("", xy=tip, xycoords="axes fraction", xytext=(-length * dx, -length * dy),
                textcoords="offset points", arrowprops=dict(arrowstyle="-|>", color="black", linewidth=1.2),
                gid="north-arrow")
    ax.annotate("N", xy=tip, xycoords="axes fraction", xytext=(6 * dx, 6 * dy), textcoords="offset points",
                ha="center", va="center", fontsize=_FS["base"], fontweight="bold")
    ax.text(0.97, 0.72, f"+x heading\n{azimuth_text(heading_deg, 1)}° true", transform=ax.transAxes,
            ha="right", va="top", fontsize=_FS["small"], color="0.2", gid="heading",
            bbox=dict(facecolor="white", edgecolor="none", pad=0.6, alpha=0.8))


def _legend_panel(ax, cage, room, ncol: int) -> None:
    """The legend and the frame's directions, in an axis-less panel."""
    ax.set_axis_off()
    handles = [Patch(facecolor=AXIS_COLOURS[p.axis], alpha=0.45, edgecolor=AXIS_COLOURS[p.axis],
                     label=f"{p.axis} pair frames") for p in cage.pairs]
    handles.append(Patch(facecolor="0.55", edgecolor="black", alpha=0.7, label="test volume"))
    if room is not None:
        handles.append(Line2D([], [], color="black", linewidth=2.2, label="room walls"))
        handles.append(Line2D([], [], color="0.35", linestyle="--", linewidth=1.0, label="clearance"))
    handles.append(Line2D([], [], color="0.45", linestyle=":", linewidth=1.0, label="envelope"))
    ax.legend(handles=handles, loc="upper left", ncol=ncol, frameon=False, fontsize=_FS["small"],
              handlelength=1.6, borderaxespad=0.0)
    ax.text(0.0, 0.0, "cage frame: x toward the heading,\ny 90° clockwise from x seen from above,\n"
            "z down", transform=ax.transAxes, ha="left", va="bottom", fontsize=_FS["small"],
            color="0.25", linespacing=1.4)


def _info_panel(ax, cage, frame, room, env, inner, tv) -> None:
    """The sizes in words, in two columns, in an axis-less panel."""
    ax.set_axis_off()
    left = []
    colour = "black"
    if room is not None:
        left.append(f"Room  {room.length_m:.2f} × {room.width_m:.2f} × {room.height_m:.2f} m "
                    f"(x, y, height)")
        left.append(f"Clearance  {room.clearance_m:.2f} m; usable  "
                    f"{inner[0]:.2f} × {inner[1]:.2f} × {inner[2]:.2f} m")
    left.append(f"Cage envelope  {env[0]:.2f} × {env[1]:.2f} × {env[2]:.2f} m")
    if room is not None:
        spare = (inner - env) / 2
        if np.all(spare >= -1e-12):
            left.append(f"Spare  x {spare[0]:.2f} m, y {spare[1]:.2f} m per side; "
                        f"{inner[2] - env[2]:.2f} m overhead")
        else:
            short = [f"{a} by {-2 * v:.2f} m" for a, v in zip(AXES, spare) if v < -1e-12]
            left.append("DOES NOT FIT: too large in " + ", ".join(short))
            colour = "#b00020"
    left.append(f"Test volume  {tv[0]:.2f} × {tv[1]:.2f} × {tv[2]:.2f} m")
    right = []
    for pair in cage.pairs:
        size, value = ("side", pair.size_m) if pair.shape == "square" else ("diameter", 2 * pair.size_m)
        right.append(f"{pair.axis} pair  {pair.shape}, {size} {value:.3f} m, "
                     f"spacing {pair.spacing_m:.3f} m, {pair.turns} turns")
    right.append(f"Frames  {frame.width_m * 1000:.0f} × {frame.depth_m * 1000:.0f} mm "
                 f"(along the axis × radial), gap {frame.gap_m * 1000:.0f} mm")
    ax.text(0.0, 1.0, "\n".join(left), transform=ax.transAxes, ha="left", va="top",
            fontsize=_FS["small"], color=colour, linespacing=1.5, gid="sizes")
    ax.text(0.51, 1.0, "\n".join(right), transform=ax.transAxes, ha="left", va="top",
            fontsize=_FS["small"], linespacing=1.5, gid="pairs")


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
        fig = _new_figure(FIG_WIDTH_IN, 5.6)
        ax_p, ax_c = fig.subplots(2, 1, sharex=True)
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
        fig.legend(handles, labels, loc="outside upper center", ncol=3, fontsize=_FS["small"],
                   frameon=False)
        ax_p.set_title(f"Cage sizes compared (uniformity tolerance {relative_label(tol)})",
                       fontsize=_FS["title"])
    return _finish(fig)


# ---------------------------------------------------------------------------------------------
# Setpoints and sequences
# ---------------------------------------------------------------------------------------------


def _mark_beyond(ax, x, w, values, low: float, high: float, unit: str) -> None:
    """Bars beyond the panel's range (rows outside the limits): a red triangle at the edge, the value beside it.

    The panel is scaled to the rows within limits, so one wild row does not flatten the others.
    """
    for j in range(values.shape[1]):
        for i, v in enumerate(values[:, j]):
            if low <= v <= high or v != v:  # NaN: an unreachable axis has no bar
                continue
            edge = high if v > high else low
            xi = x[i] + (j - 1) * w
            ax.plot([xi], [edge], marker="^" if v > high else "v", color="#b00020", markersize=7,
                    clip_on=False, zorder=5, gid="beyond-range")
            ax.annotate(f"{v:,.0f} {unit}" if abs(v) >= 100 else f"{v:.3g} {unit}", xy=(xi, edge), xytext=(0, -9 if v > high else 9),
                        textcoords="offset points", fontsize=_FS["small"], color="#b00020",
                        ha="center", va="top" if v > high else "bottom",
                        bbox=dict(facecolor="white", edgecolor="none", pad=0.4, alpha=0.85))


def _axis_limit(doc: dict, axis: str) -> float:
    try:
        value = float(doc["supply_limits"][axis]["max_current_A"])
    except (KeyError, TypeError, ValueError):
        raise InputError(f"setpoints: supply_limits.{axis}.max_current_A is missing or not a number") from None
    if not (math.isfinite(value) and 0 < value <= _PLOT_LIMITS["max_current_A"]):
        raise InputError(f"setpoints: supply_limits.{axis}.max_current_A must be a positive number up to "
                         f"{_PLOT_LIMITS['max_current_A']:g} A, got {value:g}")
    return value


def _bipolar(doc: dict, axis: str) -> bool:
    try:
        return bool(doc["supply_limits"][axis].get("bipolar", True))
    except (KeyError, TypeError, AttributeError):
        return True


def _row_value(row: dict, key: str, axis: str, where: str) -> float:
    try:
        value = row[key][axis]
    except (KeyError, TypeError):
        raise InputError(f"setpoints: {where}.{key}.{axis} is missing") from None
    v = _num_or_nan(value)
    if math.isnan(v):
        raise InputError(f"setpoints: {where}.{key}.{axis} must be a number, got {value!r}")
    if abs(v) > _PLOT_LIMITS[key]:
        raise InputError(f"setpoints: {where}.{key}.{axis} is {v:g}, beyond the {_PLOT_LIMITS[key]:g} a current "
                         "table can hold")
    return v


# Largest magnitudes a current table can hold (beyond them the document is damaged; figures
# would overflow): 1 MA, 1 TW.
_PLOT_LIMITS = {"current_A": 1e6, "max_current_A": 1e6, "power_W": 1e12, "total_power_W": 1e12}


def setpoints_figure(doc: dict) -> Figure:
    """Currents and power per axis for every row of a setpoints document (cage-setpoints v1).

    Top panel: grouped bars of the coil current per axis (A) for each row, with the supply's
    +-max_current_A per axis dashed; bottom: power per axis (W) with each row's total written
    above it. Rows outside the supply limits (``within_limits`` false) are hatched and their
    labels red with "(!)".
    """
    if not isinstance(doc, dict) or not isinstance(doc.get("rows"), list) or not doc["rows"]:
        raise InputError("setpoints: the document has no rows to plot")
    rows = doc["rows"]
    limits = {a: _axis_limit(doc, a) for a in AXES}
    labels, current, power, ok = [], np.zeros((len(rows), 3)), np.zeros((len(rows), 3)), []
    for i, row in enumerate(rows):
        where = f"rows[{i}]"
        if not isinstance(row, dict):
            raise InputError(f"setpoints: {where} must be an object")
        labels.append(for_figure(row.get("label", f"row {i + 1}")))
        for j, a in enumerate(AXES):
            current[i, j] = _row_value(row, "current_A", a, where)
            # null power: an unreachable axis (no steady state) or no electrical data; no bar
            value = (row.get("power_W") or {}).get(a) if isinstance(row.get("power_W"), dict) else None
            power[i, j] = math.nan if value is None else _row_value(row, "power_W", a, where)
        ok.append(bool(row.get("within_limits", True)))
    ok = np.array(ok)
    total = np.array([_num_or_nan(r.get("total_power_W")) for r in rows])
    total = np.where(np.abs(total) <= _PLOT_LIMITS["total_power_W"], total, np.nan)
    total = np.where(np.isfinite(total), total, power.sum(axis=1))

    nrow = len(rows)
    x = np.arange(nrow)
    w = 0.26
    rotate = nrow > 6 or max(len(s) for s in labels) > 10
    with matplotlib.rc_context(_RC):
        fig = _new_figure(FIG_WIDTH_IN, 6.2 if rotate else 5.6)
        ax_i, ax_p = fig.subplots(2, 1, sharex=True)
        for j, a in enumerate(AXES):
            colour = AXIS_COLOURS[a]
            hatch = ["////" if not good else "" for good in ok]
            bars = ax_i.bar(x + (j - 1) * w, current[:, j], w, color=colour, label=f"{a} current",
                            edgecolor="white", linewidth=0.4, gid=f"current-{a}")
            bars_p = ax_p.bar(x + (j - 1) * w, power[:, j], w, color=colour, label=f"{a} power",
                              edgecolor="white", linewidth=0.4, gid=f"power-{a}")
            for bar, bar_p, h in zip(bars, bars_p, hatch):
                bar.set_hatch(h)
                bar_p.set_hatch(h)
        # One dashed pair of lines per distinct limit, named by the axes that share it.
        groups: dict[float, list[str]] = {}
        for a in AXES:
            groups.setdefault(round(limits[a], 9), []).append(a)
        for value, names in groups.items():
            colour = "black" if len(names) > 1 else AXIS_COLOURS[names[0]]
            who = "supply" if len(names) == 3 else ", ".join(names)
            for sign in (-1, 1):
                ax_i.axhline(sign * value, color=colour, linestyle="--", linewidth=1.0, gid="limit",
                             label=f"{who} limit ±{value:g} A" if sign > 0 else None)
        ax_i.axhline(0.0, color="0.3", linewidth=0.6)
        shown = current[ok] if ok.any() else np.zeros((1, 3))
        top = 1.15 * max(max(limits.values()), float(np.abs(shown).max()))
        ax_i.set_ylim(-top, top)
        _mark_beyond(ax_i, x, w, current, -top, top, "A")
        ax_i.set_ylabel("coil current (A)")
        handles, labs = ax_i.get_legend_handles_labels()
        unipolar = [a for a in AXES if not _bipolar(doc, a)]
        if unipolar:
            handles.append(Line2D([], [], linestyle="none"))
            labs.append(f"{', '.join(unipolar)}: unipolar supply,\nnegative current needs\na polarity switch")
        ax_i.legend(handles, labs, loc="upper left", bbox_to_anchor=(1.01, 1.0), fontsize=_FS["small"],
                    frameon=False)
        ax_i.grid(True, axis="y", linewidth=0.4, alpha=0.5)
        ax_p.set_ylabel("power (W)")
        ax_p.grid(True, axis="y", linewidth=0.4, alpha=0.5)
        pmax = float(max(np.nanmax(power[ok] if ok.any() else power, initial=0.0), 1e-9))
        ax_p.set_ylim(0.0, 1.22 * pmax)
        _mark_beyond(ax_p, x, w, power, 0.0, 1.22 * pmax, "W")
        if nrow <= 16:
            for i in range(nrow):
                top_w = np.nanmax(power[i], initial=0.0)
                if top_w > 1.22 * pmax:
                    continue  # beyond the panel: _mark_beyond writes its value
                ax_p.text(x[i], top_w + 0.03 * pmax,
                          f"{total[i]:.1f} W" if np.isfinite(total[i]) else "unreachable", ha="center",
                          va="bottom", fontsize=_FS["small"], rotation=90 if nrow > 8 else 0)
        ax_p.legend(handles=[Patch(color=AXIS_COLOURS[a], label=f"{a} power") for a in AXES]
                    + [Patch(facecolor="white", edgecolor="0.3", hatch="////",
                             label="outside supply limits")],
                    loc="upper left", bbox_to_anchor=(1.01, 1.0), fontsize=_FS["small"], frameon=False)
        ax_p.set_xticks(x)
        ax_p.set_xticklabels([lab if good else f"{lab} (!)" for lab, good in zip(labels, ok)],
                             rotation=45 if rotate else 0, ha="right" if rotate else "center")
        for tick, good in zip(ax_p.get_xticklabels(), ok):
            if not good:
                tick.set_color("#b00020")
                tick.set_fontweight("bold")
        ax_p.set_xlim(-0.6, nrow - 0.4)
        ax_p.set_xlabel("setpoint row")
        site = for_figure(doc.get("site", ""))
        when = for_figure(doc.get("date", ""))
        source = for_figure(doc.get("source", ""))
        parts = [p for p in (site, when) if p]
        title = "Setpoints" + (": " + ", ".join(parts) if parts else "") + (f" ({source})" if source else "")
        ax_i.set_title(title, fontsize=_FS["title"])
    return _finish(fig)


def sequence_figure(t_s, currents_A, max_current_A, failing_steps=()) -> Figure:
    """Currents of a sequence against time, one panel per axis, with the supply limits.

    t_s: (m,) times (s); currents_A: (m, 3) currents (A) for x, y, z, each held until the
    next time (drawn as steps); max_current_A: (3,) limits (A), dashed at +-limit;
    failing_steps: indices into t_s of steps the supplies cannot follow, marked by red lines
    and dots.
    """
    t = np.asarray(t_s, dtype=float)
    cur = np.asarray(currents_A, dtype=float)
    lim = np.asarray(max_current_A, dtype=float)
    if t.ndim != 1 or t.size < 1:
        raise InputError(f"t_s must be a 1-d array of times, got shape {t.shape}")
    if cur.shape != (t.size, 3):
        raise InputError(f"currents_A must have shape ({t.size}, 3) to match t_s, got {cur.shape}")
    if lim.shape == ():
        lim = np.full(3, float(lim))
    if lim.shape != (3,) or not np.all(np.isfinite(lim)) or np.any(lim <= 0):
        raise InputError("max_current_A must be three positive currents (x, y, z) in amperes")
    if not (np.all(np.isfinite(t)) and np.all(np.isfinite(cur))):
        raise InputError("t_s and currents_A must be finite")
    fail = np.unique(np.asarray(list(failing_steps), dtype=int)) if len(failing_steps) else np.zeros(0, int)
    if fail.size and (fail.min() < 0 or fail.max() >= t.size):
        raise InputError(f"failing_steps must be indices between 0 and {t.size - 1}")

    with matplotlib.rc_context(_RC):
        fig = _new_figure(FIG_WIDTH_IN, 5.8)
        axes = fig.subplots(3, 1, sharex=True)
        for j, (ax, a) in enumerate(zip(axes, AXES)):
            colour = AXIS_COLOURS[a]
            if fail.size:
                ax.vlines(t[fail], 0, 1, transform=ax.get_xaxis_transform(), color="#b00020",
                          alpha=0.35, linewidth=1.0, zorder=1,
                          label=f"failing step ({fail.size})" if j == 0 else None)
                ax.plot(t[fail], cur[fail, j], linestyle="none", marker="o", markersize=3.5,
                        color="#b00020", zorder=4)
            ax.plot(t, cur[:, j], drawstyle="steps-post", color=colour, linewidth=1.2,
                    label=f"{a} current", zorder=3, gid=f"current-{a}")
            for sign in (-1, 1):
                ax.axhline(sign * lim[j], color="black", linestyle="--", linewidth=0.9,
                           label=f"limit ±{lim[j]:g} A" if sign > 0 else None, gid="limit")
            top = 1.15 * max(lim[j], float(np.abs(cur[:, j]).max()))
            ax.set_ylim(-top, top)
            ax.set_ylabel(f"{a} current (A)")
            ax.grid(True, linewidth=0.4, alpha=0.5)
            ax.legend(loc="upper left", bbox_to_anchor=(1.01, 1.0), fontsize=_FS["small"],
                      frameon=False)
        if t.size > 1:
            axes[0].set_xlim(t[0], t[-1])
        axes[-1].set_xlabel("time (s)")
        axes[0].set_title("Sequence currents and supply limits"
                          + (f": {fail.size} step(s) the supplies cannot follow" if fail.size else ""),
                          fontsize=_FS["title"])
    return _finish(fig)
