"""The cage in the room: top, front and side views (third-angle projection), frames, test
volume, room and clearance, north arrow.

Views follow the cage frame (x toward the heading, y 90 degrees clockwise from x seen from
above, z down; see the README): the top view is seen from above, so +y points down the page;
the front view is seen from the +y side and the side view from the +x side (top view above
the front view, side view to its right); heights are measured up from the floor.
Style: ``cage.figurestyle``.
"""
from __future__ import annotations

import math
from dataclasses import replace

import matplotlib
import numpy as np
from matplotlib.figure import Figure
from matplotlib.lines import Line2D
from matplotlib.patches import Patch, PathPatch, Rectangle
from matplotlib.path import Path as MplPath

from cage.coilaxis import AxisCage, CoilAxis
from cage.coils import AXES, CoilCage, CoilPair
from cage.errors import InputError
from cage.fieldfigures import cage_axes, driven_name
from cage.figurestyle import (AXIS_COLOURS, FIG_WIDTH_IN, _FS, _RC, _finish, _new_figure, _three_lengths, box_at,
                              extent_in)


# ---------------------------------------------------------------------------------------------
# The cage in the room
# ---------------------------------------------------------------------------------------------

_CURVE_T = np.arange(480) / 480.0  # includes t = 0, 1/4, 1/2, 3/4: the corners of a square


def _project(points_3: np.ndarray, ih: int, iv: int, height_of) -> tuple[np.ndarray, np.ndarray]:
    h = points_3[:, ih]
    v = height_of(points_3[:, iv]) if iv == 2 else points_3[:, iv]
    return h, v


def _band_patch(pair, frame, ih, iv, height_of, colour, alpha: float = 0.45) -> PathPatch:
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
    return PathPatch(MplPath(verts, codes), facecolor=colour, edgecolor=colour, alpha=alpha,
                     linewidth=0.6, gid=f"frame-{pair.axis}")


def _add_band(ax, band: PathPatch) -> None:
    """Add a face-on frame band to a view without updating the view's data limits.

    The views' limits are set explicitly (``cage_in_room_figure``), so the data limits are never
    used; ``Axes.add_patch`` would walk every Bezier segment of the band's path (960 vertices)
    to update them, which costs more than drawing the band.
    """
    ax.add_artist(band)


def _edge_bar(ax, pair, plane_m: float, frame, ih, iv, height_of, colour) -> None:
    """The frame of one coil of ``pair`` seen edge-on: a bar of the frame's width centred on its
    plane (``plane_m`` along the axis), reaching the half-width plus half the frame depth."""
    a = AXES.index(pair.axis)
    reach = pair.half_width_m + frame.depth_m / 2
    lo_a = plane_m - frame.width_m / 2
    hi_a = lo_a + frame.width_m
    if a == ih:
        h0, h1, v0, v1 = lo_a, hi_a, -reach, reach
    else:
        h0, h1, v0, v1 = -reach, reach, lo_a, hi_a
    if iv == 2:
        v0, v1 = sorted((height_of(v0), height_of(v1)))
    ax.add_patch(Rectangle((h0, v0), h1 - h0, v1 - v0, facecolor=colour, edgecolor=colour,
                           alpha=0.45, linewidth=0.6, gid=f"frame-{pair.axis}"))


def _draw_pair(ax, pair, frame, ih, iv, height_of) -> None:
    """One pair in one orthographic view: frames as bands (face-on) or bars (edge-on)."""
    from cage.layout import _curve_points

    colour = AXIS_COLOURS[pair.axis]
    a = AXES.index(pair.axis)
    if a not in (ih, iv):
        _add_band(ax, _band_patch(pair, frame, ih, iv, height_of, colour))
    else:
        for sign in (-1.0, 1.0):
            _edge_bar(ax, pair, sign * pair.spacing_m / 2, frame, ih, iv, height_of, colour)
    for sign in (1.0, -1.0):
        h, v = _project(_curve_points(pair, _CURVE_T, sign), ih, iv, height_of)
        ax.plot(np.append(h, h[0]), np.append(v, v[0]), color=colour, linewidth=0.8,
                gid=f"centreline-{pair.axis}")


def _draw_coil_axis(ax, coil_axis: CoilAxis, frame, ih, iv, height_of) -> None:
    """Every coil of an axis in one orthographic view, each at its own plane ``position_m``.

    Each coil is drawn as ``_draw_pair`` draws one coil of a pair (cage.coillayout's one-coil
    form: the +side coil of a pair of spacing 2|p| and the sign of p): a band when seen
    face-on, a bar when seen edge-on, and its centreline. Face-on bands of equal coils lie on
    top of each other, so each gets the alpha that makes the stack look like one pair's band.
    """
    from cage.layout import _curve_points

    colour = AXIS_COLOURS[coil_axis.axis]
    a = AXES.index(coil_axis.axis)
    for coil in coil_axis.coils:
        pair = CoilPair(coil_axis.axis, coil_axis.shape, float(coil.size_m), 2.0 * abs(float(coil.position_m)), 1)
        sign = 1.0 if coil.position_m >= 0 else -1.0
        if a not in (ih, iv):
            same = sum(1 for c in coil_axis.coils if c.size_m == coil.size_m)
            _add_band(ax, _band_patch(pair, frame, ih, iv, height_of, colour, 1.0 - 0.55 ** (1.0 / same)))
        else:
            _edge_bar(ax, pair, float(coil.position_m), frame, ih, iv, height_of, colour)
        h, v = _project(_curve_points(pair, _CURVE_T, sign), ih, iv, height_of)
        ax.plot(np.append(h, h[0]), np.append(v, v[0]), color=colour, linewidth=0.8,
                gid=f"centreline-{coil_axis.axis}")


def _rect(ax, h0, h1, v0, v1, **kw) -> None:
    ax.add_patch(Rectangle((h0, v0), h1 - h0, v1 - v0, fill=False, **kw))


def cage_in_room_figure(cage: CoilCage | AxisCage, frame, room, test_volume_m, heading_deg: float | None = None) -> Figure:
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
    heading (``_north_arrow``). cage: a ``CoilCage`` of pairs, or a ``cage.coilaxis.AxisCage``
    whose every coil is drawn at its own plane (``_draw_coil_axis``; envelope from
    ``cage.coillayout.axes_envelope_m``).
    """
    from cage.coillayout import axes_envelope_m
    from cage.layout import FrameSpec, envelope_m, room_inner_m

    units = cage_axes(cage)
    if not isinstance(frame, FrameSpec):
        raise InputError(f"frame must be a FrameSpec, got {type(frame).__name__}")
    tv = _three_lengths(test_volume_m, "test_volume_m")
    env = np.asarray(axes_envelope_m(cage, frame) if isinstance(cage, AxisCage) else envelope_m(cage, frame),
                     dtype=float)
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
    # The views are placed with fixed margins in inches (_ROOM_MARGINS_IN), at one scale
    # (inches per metre) for all three, so that every view keeps the same scale. The legend goes
    # in the top-right cell, the sizes in words in a row below the views.
    left_in, right_in, wgap_in, top_in, gap1_in, gap2_in, bottom_in = _ROOM_MARGINS_IN
    info_h_in = 1.05
    usable_w = width_in - left_in - right_in - wgap_in
    overhead_h = top_in + gap1_in + gap2_in + bottom_in + info_h_in

    pairs = sorted(units, key=lambda p: -p.half_width_m)
    views = {
        "top": (0, 1, "top view, seen from above"),
        "front": (0, 2, "front view, seen from +y"),
        "side": (1, 2, "side view, seen from +x"),
    }
    with matplotlib.rc_context(_RC):
        fig = _new_figure(width_in, 4.5 + info_h_in)  # the height is set below
        # Top, front and side views, the legend panel and the sizes panel, placed below once the
        # legend is measured: its size (need_w, need_h) sets the least size of the top-right cell.
        whole = (0.0, 0.0, 1.0, 1.0)
        ax_top = fig.add_axes(whole)
        ax_front = fig.add_axes(whole, sharex=ax_top)
        ax_side = fig.add_axes(whole, sharey=ax_front)
        ax_legend = fig.add_axes(whole)
        scale_w = usable_w / (span[0] + span[1])
        need_w, need_h = _legend_panel(ax_legend, units, room, usable_w - scale_w * span[0])
        if scale_w * span[1] < need_w:  # a narrow side view: the views get smaller, the legend fits
            scale_w = min(scale_w, (usable_w - need_w) / span[0])
        # Panel heights follow the data spans so that every view keeps one scale.
        height_in = float(np.clip(max(scale_w * span[1], need_h) + scale_w * span[2] + overhead_h - info_h_in,
                                  4.5, 9.8)) + info_h_in
        fig.set_size_inches(width_in, height_in)
        usable_h = height_in - overhead_h
        scale_in_per_m = min(scale_w, usable_h / (span[1] + span[2]))
        if max(scale_in_per_m * span[1], need_h) + scale_in_per_m * span[2] > usable_h and usable_h > need_h:
            scale_in_per_m = min(scale_in_per_m, (usable_h - need_h) / span[2])
        w0, w1 = scale_in_per_m * span[0], scale_in_per_m * span[1]
        h0, h1 = scale_in_per_m * span[1], scale_in_per_m * span[2]
        col1_w, row0_h = max(w1, need_w), max(h0, need_h)
        x0 = left_in + (usable_w - w0 - col1_w) / 2  # the views centred across the width
        x1 = x0 + w0 + wgap_in
        y1 = bottom_in + info_h_in + gap2_in + (usable_h - row0_h - h1) / 2  # front and side views
        y0 = y1 + h1 + gap1_in  # top view (at the top of its row) and legend
        ax_legend.set_position(box_at(fig, x1, y0, col1_w, row0_h))
        ax_top.set_position(box_at(fig, x0, y0 + row0_h - h0, w0, h0))
        ax_front.set_position(box_at(fig, x0, y1, w0, h1))
        ax_side.set_position(box_at(fig, x1, y1, w1, h1))
        ax_info = fig.add_axes(box_at(fig, 0.45, bottom_in, width_in - 0.45 - 0.05, info_h_in))
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
                if isinstance(pair, CoilAxis):
                    _draw_coil_axis(ax, pair, frame, ih, iv, height_of)
                else:
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
            ax.set_title(title, fontsize=_FS["base"], y=1.0)  # y given: no auto placement (costly)
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

        _info_panel(ax_info, units, frame, room, env, inner, tv)
        if heading_deg is not None:
            _north_arrow(ax_top, heading_deg)
        fig.suptitle("The cage in the room", fontsize=_FS["title"], y=1.0 - 0.06 / height_in, va="top")
    return _finish(fig)


# Margins of the cage-in-room figure in inches: left (tick labels and y label), right, between
# the two columns (the side view's y label), top (the title and the first views' titles),
# between the rows of views (the top view's x label and the front view's title), between the
# views and the sizes in words, bottom.
_ROOM_MARGINS_IN = (0.62, 0.1, 0.64, 0.52, 0.66, 0.45, 0.05)


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


def _legend_panel(ax, units, room, width_in: float) -> tuple[float, float]:
    """The legend and the frame's directions, in an axis-less panel; (width, height) it needs, in inches.

    Two legend columns when they fit in ``width_in`` inches, else one.
    """
    ax.set_axis_off()
    handles = [Patch(facecolor=AXIS_COLOURS[p.axis], alpha=0.45, edgecolor=AXIS_COLOURS[p.axis],
                     label=f"{driven_name(p)} frames") for p in units]
    handles.append(Patch(facecolor="0.55", edgecolor="black", alpha=0.7, label="test volume"))
    if room is not None:
        handles.append(Line2D([], [], color="black", linewidth=2.2, label="room walls"))
        handles.append(Line2D([], [], color="0.35", linestyle="--", linewidth=1.0, label="clearance"))
    handles.append(Line2D([], [], color="0.45", linestyle=":", linewidth=1.0, label="envelope"))
    fig = ax.figure
    legend = ax.legend(handles=handles, loc="upper left", ncol=2, frameon=False, fontsize=_FS["small"],
                       handlelength=1.6, borderaxespad=0.0)
    legend_w, legend_h = extent_in(fig, legend)
    if legend_w > width_in:  # too wide for two columns
        legend = ax.legend(handles=handles, loc="upper left", ncol=1, frameon=False, fontsize=_FS["small"],
                           handlelength=1.6, borderaxespad=0.0)
        legend_w, legend_h = extent_in(fig, legend)
    note = ax.text(0.0, 0.0, "cage frame: x toward the heading,\ny 90° clockwise from x seen from above,\n"
                   "z down", transform=ax.transAxes, ha="left", va="bottom", fontsize=_FS["small"],
                   color="0.25", linespacing=1.4)
    note_w, note_h = extent_in(fig, note)
    return max(legend_w, note_w) + 0.05, legend_h + 0.15 + note_h


def _info_panel(ax, units, frame, room, env, inner, tv) -> None:
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
    for pair in units:
        if isinstance(pair, CoilAxis):
            size, value = ("side", pair.size_m) if pair.shape == "square" else ("Ø", 2 * pair.size_m)
            planes = sorted({round(abs(float(c.position_m)), 2) for c in pair.coils})
            at = " ".join(f"±{p:.2f}" if p > 0 else "0" for p in planes)
            right.append(f"{pair.axis} {pair.system}  {pair.shape}, {size} ≤{value:.2f} m, at {at} m, "
                         f"{pair.total_turns} turns")
            continue
        size, value = ("side", pair.size_m) if pair.shape == "square" else ("diameter", 2 * pair.size_m)
        right.append(f"{pair.axis} pair  {pair.shape}, {size} {value:.3f} m, "
                     f"spacing {pair.spacing_m:.3f} m, {pair.turns} turns")
    right.append(f"Frames  {frame.width_m * 1000:.0f} × {frame.depth_m * 1000:.0f} mm "
                 f"(along the axis × radial), gap {frame.gap_m * 1000:.0f} mm")
    ax.text(0.0, 1.0, "\n".join(left), transform=ax.transAxes, ha="left", va="top",
            fontsize=_FS["small"], color=colour, linespacing=1.5, gid="sizes")
    pairs = ax.text(0.51, 1.0, "\n".join(right), transform=ax.transAxes, ha="left", va="top",
                    fontsize=_FS["small"], linespacing=1.5, gid="pairs")
    # Long lines (large sizes, many turns): the right column starts further left, so that it ends
    # inside the figure.
    panel_w_in = ax.get_position().width * ax.figure.get_size_inches()[0]
    pairs.set_x(min(0.51, 1.0 - extent_in(ax.figure, pairs)[0] / panel_w_in))
