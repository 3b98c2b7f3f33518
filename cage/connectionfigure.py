"""The per-axis connection figure of the build sheet (matplotlib, Agg backend).

Left: one coil seen from the +axis side (u to the right, v up, +axis toward the reader), the
winding path drawn in the sense of positive current (``cage.buildsheet.winding_path_m``, the
line has gid "winding-path"; its points run in the current's direction) with arrows. Right:
the axis's coils side by side along the axis, and the series-aiding wiring from the supply's
+ through every coil, start to finish, back to the supply's -.
"""
from __future__ import annotations

import numpy as np

from cage.buildsheet import AxisBuild, cyclic_axes, winding_path_m
from cage.coils import AXES

_COLOURS = {"x": "#c0392b", "y": "#23864b", "z": "#1f5fbf"}


def connection_figure(axis: AxisBuild):
    """A small figure for one axis of the build sheet (see the module text)."""
    from matplotlib.figure import Figure

    a = axis.axis
    u, v = cyclic_axes(a)
    colour = _COLOURS.get(a, "k")
    fig = Figure(figsize=(7.5, 3.2))
    left = fig.add_axes((0.04, 0.08, 0.40, 0.80))
    right = fig.add_axes((0.52, 0.08, 0.46, 0.80))
    first = axis.coils[0]
    size_m = first.centreline_size_m if axis.shape == "square" else first.centreline_size_m / 2.0
    path = winding_path_m(a, axis.shape, size_m, first.position_m, 240)
    iu, iv = AXES.index(u), AXES.index(v)
    pu, pv = path[:, iu], path[:, iv]
    left.plot(pu, pv, color=colour, lw=2.0, gid="winding-path")
    n = len(pu)
    for k in np.linspace(0, n - 2, 8 if axis.shape == "round" else n - 1, dtype=int)[:-1]:
        k2 = min(k + 1, n - 1)
        mid = (0.5 * (pu[k] + pu[k2]), 0.5 * (pv[k] + pv[k2]))
        d = (pu[k2] - pu[k], pv[k2] - pv[k])
        left.annotate("", xy=(mid[0] + 0.05 * d[0], mid[1] + 0.05 * d[1]), xytext=mid,
                      arrowprops=dict(arrowstyle="-|>", color=colour, lw=1.5, mutation_scale=14))
    h = float(np.max(np.abs(pu)))
    left.plot([0], [0], marker="o", ms=10, mfc="white", mec="k")
    left.plot([0], [0], marker=".", ms=4, color="k")
    left.text(0.0, -0.2 * h, f"+{a} toward you", fontsize=8, ha="center", va="top")
    for tip, name in (((0.5 * h, 0.0), u), ((0.0, 0.5 * h), v)):
        left.annotate("", xy=tip, xytext=(0.0, 0.0), arrowprops=dict(arrowstyle="->", color="0.3", shrinkA=6))
        left.text(tip[0] + 0.04 * h, tip[1] + 0.04 * h, f"+{name}", fontsize=8, color="0.3")
    left.text(pu[0] + 0.05 * h, pv[0], "start\n(channel floor)", fontsize=7, va="center")
    left.set_xlim(-1.45 * h, 1.75 * h)
    left.set_ylim(-1.3 * h, 1.3 * h)
    left.set_aspect("equal")
    left.set_xticks([])
    left.set_yticks([])
    left.set_title(f"axis {a}: positive current seen from +{a}", fontsize=9, y=1.0)
    if a == "z":
        left.text(0, -1.22 * h, "(seen from above: clockwise)", fontsize=7, ha="center")

    pos = [c.position_m for c in axis.coils]
    span = max(pos) - min(pos) or 1.0
    top, bottom = 1.0, -1.0
    for k, c in enumerate(axis.coils):
        right.plot([c.position_m, c.position_m], [bottom, top], color=colour, lw=5, solid_capstyle="butt")
        lift = 0.0 if len(axis.coils) <= 2 or k % 2 == 0 else 0.5  # close coils: labels staggered
        right.text(c.position_m, top + 0.12 + lift, f"{c.label}\n{c.position_m:+.3f} m", ha="center", fontsize=7)
        right.text(c.position_m - 0.03 * span, 0.55, "S", ha="right", fontsize=7)
        right.text(c.position_m + 0.03 * span, -0.55, "F", ha="left", fontsize=7)
    xs = [min(pos) - 0.35 * span, max(pos) + 0.35 * span]
    supply_y = -1.9
    right.add_patch(_box(np.mean(pos), supply_y, 0.5 * span, 0.45))
    right.text(np.mean(pos), supply_y, "supply", ha="center", va="center", fontsize=8)
    plus_x, minus_x = np.mean(pos) - 0.2 * span, np.mean(pos) + 0.2 * span
    right.text(plus_x, supply_y + 0.3, "+", ha="center", fontsize=10, weight="bold")
    right.text(minus_x, supply_y + 0.3, "-", ha="center", fontsize=10, weight="bold")
    wire = dict(color="0.2", lw=1.0)
    right.plot([plus_x, plus_x, xs[0], xs[0], pos[0]], [supply_y + 0.22, supply_y + 0.6, supply_y + 0.6, 0.55, 0.55],
               **wire)
    for k in range(len(pos) - 1):
        mid_y = -0.55
        right.plot([pos[k], pos[k] + 0.3 * (pos[k + 1] - pos[k]), pos[k] + 0.3 * (pos[k + 1] - pos[k]), pos[k + 1]],
                   [mid_y, mid_y, 0.55, 0.55], **wire)
    right.plot([pos[-1], xs[1], xs[1], minus_x, minus_x], [-0.55, -0.55, supply_y + 0.6, supply_y + 0.6,
                                                           supply_y + 0.22], **wire)
    arrow_y = 1.5 if len(axis.coils) <= 2 else 2.1
    right.annotate(f"+{a}", xy=(xs[1] + 0.1 * span, arrow_y), xytext=(xs[0], arrow_y), fontsize=8, va="center",
                   arrowprops=dict(arrowstyle="->", color="0.3"))
    right.set_xlim(xs[0] - 0.15 * span, xs[1] + 0.25 * span)
    right.set_ylim(supply_y - 0.5, arrow_y + 0.5)
    right.set_xticks([])
    right.set_yticks([])
    right.set_title("series aiding: S = start, F = finish", fontsize=9, y=1.0)
    for ax in (left, right):
        for side in ax.spines.values():
            side.set_visible(False)
    return fig


def _box(x, y, w, h):
    from matplotlib.patches import Rectangle

    return Rectangle((x - w / 2, y - h / 2), w, h, fill=False, lw=1.0)


def connection_pngs(sheet, notes=()) -> dict[str, bytes]:
    """{"connection_x.png": PNG bytes, ...} for every axis of a ``BuildSheet``; ``notes``: what
    the design was made from, written into each PNG (``cage.figurestyle.png_bytes``)."""
    from cage.figurestyle import png_bytes

    return {f"connection_{b.axis}.png": png_bytes(connection_figure(b), notes=notes) for b in sheet.axes}
