"""Figures of currents: a setpoint table per axis against the supply limits, and a sequence
against time or row. Style: ``cage.figurestyle``.
"""
from __future__ import annotations

import math

import matplotlib
import numpy as np
from matplotlib.figure import Figure
from matplotlib.lines import Line2D
from matplotlib.patches import Patch

from cage.coils import AXES
from cage.comparefigure import _num_or_nan
from cage.errors import InputError
from cage.escape import for_figure
from cage.figurestyle import AXIS_COLOURS, FIG_WIDTH_IN, _FS, _RC, _finish, _new_figure, extent_in, grid_box, wrapped


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
        height_in = 6.2 if rotate else 5.6
        fig = _new_figure(FIG_WIDTH_IN, height_in)
        gs = fig.add_gridspec(2, 1, **grid_box(fig, _SETPOINT_LEFT_IN, 2.0, 0.4, 0.6, nrows=2, hgap_in=0.14))
        ax_i = fig.add_subplot(gs[0])
        ax_p = fig.add_subplot(gs[1], sharex=ax_i)
        ax_i.tick_params(labelbottom=False)
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
        legend_i = ax_i.legend(handles, labs, loc="upper left", bbox_to_anchor=(1.01, 1.0), fontsize=_FS["small"],
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
        legend_p = ax_p.legend(handles=[Patch(color=AXIS_COLOURS[a], label=f"{a} power") for a in AXES]
                    + [Patch(facecolor="white", edgecolor="0.3", hatch="////",
                             label="outside supply limits")],
                    loc="upper left", bbox_to_anchor=(1.01, 1.0), fontsize=_FS["small"], frameon=False)
        ax_p.set_xticks(x)
        ax_p.set_xticklabels([_short(lab) if good else f"{_short(lab)} (!)" for lab, good in zip(labels, ok)],
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
        # Margins from the texts that depend on the data: the legends (right), the title
        # (wrapped to the panel's width, top), the row labels (below; turned labels also reach
        # left of the first bar).
        right_in = 0.12 + max(extent_in(fig, legend_i)[0], extent_in(fig, legend_p)[0]) + 0.06
        panel_w_in = FIG_WIDTH_IN - _SETPOINT_LEFT_IN - right_in
        title = wrapped(fig, title, _FS["title"], panel_w_in + 0.5 * right_in)
        ax_i.set_title(title, fontsize=_FS["title"])
        top_in = 0.06 + extent_in(fig, ax_i.title)[1] + 0.08  # the title's pad is 6 pt
        sizes = [extent_in(fig, tick) for tick in ax_p.get_xticklabels()]
        bottom_in = 0.08 + max(h for _, h in sizes) + 0.06 + 0.2  # tick marks and padding, labels, x label
        left_in = _SETPOINT_LEFT_IN
        for _ in range(2 if rotate else 0):  # each turned label ends at its row and reaches left from there
            panel_w_in = FIG_WIDTH_IN - left_in - right_in
            reach = max(w - (0.6 + i) / (nrow + 0.2) * panel_w_in for i, (w, _) in enumerate(sizes))
            left_in = max(_SETPOINT_LEFT_IN, reach + 0.1)
        hgap_in = 0.14
        for _ in range(2):  # the second pass: room for the power panel's texts that rise above it
            gs.update(**grid_box(fig, left_in, right_in, top_in, bottom_in, nrows=2, hgap_in=hgap_in))
            for ax in (ax_i, ax_p):  # GridSpec.update moves the axes of pyplot figures only
                ax.set_position(ax.get_subplotspec().get_position(fig))
            top_px = ax_p.get_position().y1 * height_in * fig.dpi
            rise_in = max([extent_top - top_px for extent_top in
                           (t.get_window_extent(fig.canvas.get_renderer()).y1 for t in ax_p.texts)] + [0.0]) / fig.dpi
            if rise_in <= 0.0:
                break
            hgap_in = 0.14 + rise_in
    return _finish(fig)


# Left margin of the setpoints figure (in): tick labels of up to six digits and the y label.
_SETPOINT_LEFT_IN = 0.72

# Row labels longer than this are shortened in the figure (the tables keep them whole).
_LABEL_CHARS = 40


def _short(label: str) -> str:
    return label if len(label) <= _LABEL_CHARS else label[:_LABEL_CHARS - 1].rstrip() + "…"


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
        gs = fig.add_gridspec(3, 1, **grid_box(fig, _SETPOINT_LEFT_IN, 1.6, 0.4, 0.5, nrows=3, hgap_in=0.14))
        axes = gs.subplots(sharex=True)
        legends = []
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
            legends.append(ax.legend(loc="upper left", bbox_to_anchor=(1.01, 1.0), fontsize=_FS["small"],
                                     frameon=False))
        if t.size > 1:
            axes[0].set_xlim(t[0], t[-1])
        axes[-1].set_xlabel("time (s)")
        axes[0].set_title("Sequence currents and supply limits"
                          + (f": {fail.size} step(s) the supplies cannot follow" if fail.size else ""),
                          fontsize=_FS["title"])
        # Margins: the legends (right, as measured), the title (top), tick labels and x label.
        right_in = 0.12 + max(extent_in(fig, legend)[0] for legend in legends) + 0.06
        top_in = 0.06 + extent_in(fig, axes[0].title)[1] + 0.08
        gs.update(**grid_box(fig, _SETPOINT_LEFT_IN, right_in, top_in, 0.5, nrows=3, hgap_in=0.14))
        for ax in axes:  # GridSpec.update moves the axes of pyplot figures only
            ax.set_position(ax.get_subplotspec().get_position(fig))
    return _finish(fig)
