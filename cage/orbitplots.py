"""The orbit figure: body-frame field components and |B| against time, and the ground track
coloured by |B|. Same look as :mod:`cage.plots` (its Agg canvas, fonts and axis colours).
"""
from __future__ import annotations

import numpy as np

from cage.errors import InputError


def _track_segments(lon_deg: np.ndarray) -> list[slice]:
    """Pieces of a ground track between jumps across the +-180 deg meridian."""
    jumps = np.flatnonzero(np.abs(np.diff(lon_deg)) > 180.0) + 1
    edges = [0, *jumps.tolist(), lon_deg.size]
    return [slice(a, b) for a, b in zip(edges[:-1], edges[1:]) if b > a]


def orbit_figure(t_s, body_nT, latitude_deg, longitude_deg, title: str = "", attitude: str = ""):
    """Figure: top, x, y, z body field and |B| (uT) against time (min if the span is over
    2 h, else s); bottom, the sub-satellite track (longitude, latitude) coloured by |B|.

    title and attitude must already be escaped for a figure by the caller.
    """
    import matplotlib

    from cage.figurestyle import AXIS_COLOURS, FIG_WIDTH_IN, _RC, _finish, _new_figure, box_at, extent_in, wrapped

    t = np.asarray(t_s, dtype=float)
    b = np.asarray(body_nT, dtype=float)
    lat = np.asarray(latitude_deg, dtype=float)
    lon = np.asarray(longitude_deg, dtype=float)
    if t.ndim != 1 or t.size < 2 or b.shape != (t.size, 3) or lat.shape != t.shape or lon.shape != t.shape:
        raise InputError("orbit figure: times, fields (n, 3) and track (n,) must match, with n >= 2")
    if not (np.all(np.isfinite(t)) and np.all(np.isfinite(b)) and np.all(np.isfinite(lat))
            and np.all(np.isfinite(lon))):
        raise InputError("orbit figure: every value must be finite")
    total_uT = np.linalg.norm(b, axis=1) / 1000.0
    minutes = t[-1] - t[0] > 7200.0
    x = t / 60.0 if minutes else t
    with matplotlib.rc_context(_RC):
        height_in = 7.2
        fig = _new_figure(FIG_WIDTH_IN, height_in)
        # Fixed places in inches: the map (2:1, equal degrees) along the bottom with its colour
        # bar right of it; the time series above, its legend in the right margin; the titles
        # (the figure's title wrapped to the width, measured) on top.
        left_in, map_right_in, bottom_in = 0.72, 1.05, 0.5
        map_w = FIG_WIDTH_IN - left_in - map_right_in
        map_h = map_w / 2.0
        sup_h = 0.0
        if title:
            sup = fig.suptitle(wrapped(fig, title, _RC["figure.titlesize"], FIG_WIDTH_IN - 0.3),
                               y=1.0 - 0.06 / height_in, va="top")
            sup_h = extent_in(fig, sup)[1] + 0.06
        top_h = height_in - 0.08 - sup_h - 0.32 - 0.5 - 0.3 - map_h - bottom_in
        top = fig.add_axes(box_at(fig, left_in, bottom_in + map_h + 0.3 + 0.5, FIG_WIDTH_IN - left_in - 1.2, top_h))
        bottom = fig.add_axes(box_at(fig, left_in, bottom_in, map_w, map_h))
        for j, a in enumerate("xyz"):
            top.plot(x, b[:, j] / 1000.0, color=AXIS_COLOURS[a], linewidth=1.0, label=f"{a} (body)",
                     gid=f"field-{a}")
        top.plot(x, total_uT, color="black", linewidth=1.3, label="|B|", gid="field-total")
        top.axhline(0.0, color="0.6", linewidth=0.6)
        top.set_xlabel("time from start (min)" if minutes else "time from start (s)")
        top.set_ylabel("field (µT)")
        top.set_xlim(x[0], x[-1])
        top.grid(True, linewidth=0.4, alpha=0.5)
        top.legend(loc="upper left", bbox_to_anchor=(1.01, 1.0))
        top.set_title(f"Field in the body frame{' (' + attitude + ')' if attitude else ''}")

        norm = matplotlib.colors.Normalize(vmin=float(total_uT.min()), vmax=float(total_uT.max()))
        for seg in _track_segments(lon):
            bottom.plot(lon[seg], lat[seg], color="0.75", linewidth=0.5, zorder=1)
        step = max(1, t.size // 20000)  # at most about 20,000 dots drawn
        sc = bottom.scatter(lon[::step], lat[::step], c=total_uT[::step], s=3, cmap="viridis", norm=norm,
                            linewidths=0, zorder=2, gid="ground-track")
        bottom.set_xlim(-180, 180)
        bottom.set_ylim(-90, 90)
        bottom.set_xticks(np.arange(-180, 181, 60))
        bottom.set_yticks(np.arange(-90, 91, 30))
        bottom.set_aspect("equal")
        bottom.set_xlabel("longitude (deg, east positive)")
        bottom.set_ylabel("geodetic latitude (deg)")
        bottom.grid(True, linewidth=0.4, alpha=0.5)
        bottom.set_title("Ground track coloured by |B|")
        cax = fig.add_axes(box_at(fig, left_in + map_w + 0.15, bottom_in + 0.075 * map_h, 0.15, 0.85 * map_h))
        bar = fig.colorbar(sc, cax=cax)
        bar.set_label("|B| (µT)")
    return _finish(fig)
