"""The shared style of the figures: A4 width, fonts, axis colours, a new Agg figure, PNG rendering,
and the small input checks and labels every figure uses.

Every figure function (``cage.fieldfigures``, ``cage.roomfigure``, ``cage.comparefigure``,
``cage.setpointfigures``; ``cage.plots`` gathers them) takes plain data and returns a
``matplotlib.figure.Figure`` on its own Agg canvas: no pyplot, no global figure state, no
display, nothing printed. ``png_bytes`` renders a figure, ``save_png`` writes it atomically
(``cage.atomicfile``). Figures are laid out for an A4 page: FIG_WIDTH_IN (7.5 in) wide, fonts
of 8 pt and more, saved at DEFAULT_DPI (150 dots per inch).

Importing this module imports matplotlib (slow): import it only where a figure is made.
"""
from __future__ import annotations

import math
import os
from pathlib import Path

import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure
from matplotlib.ticker import Locator, MaxNLocator

from cage.errors import InputError


FIG_WIDTH_IN = 7.5

DEFAULT_DPI = 150

AXIS_COLOURS = {"x": "#c0392b", "y": "#23864b", "z": "#1f5fbf"}

# Font sizes in points (at FIG_WIDTH_IN on paper, never below 8 pt).
_FS = {"base": 8.5, "small": 8.0, "title": 9.5, "suptitle": 10.5}

# Text drawn without hinting: at 150 dpi the glyphs look the same to the eye, and with
# matplotlib 3.11's text layout each text draws in about two thirds of the time (measured:
# 200 labels, 0.32 s hinted, 0.21 s unhinted). Used while a figure is built (its texts are
# measured then) and while it is drawn (png_bytes), so both see the same glyphs.
_RENDER_RC = {"text.hinting": "none"}

_RC = {
    **_RENDER_RC,
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
    """A figure on its own Agg canvas, with no layout engine.

    Each figure function places its axes itself with fixed margins in inches (``grid_box``,
    ``box_at``), measuring only the texts whose size depends on the data (``extent_in``,
    ``wrapped``): a layout engine would measure every axis at every render, which costs more
    than the drawing itself.
    """
    fig = Figure(figsize=(width_in, height_in))
    FigureCanvasAgg(fig)
    return fig


def grid_box(fig: Figure, left_in: float, right_in: float, top_in: float, bottom_in: float,
             nrows: int = 1, ncols: int = 1, wgap_in: float = 0.0, hgap_in: float = 0.0) -> dict:
    """GridSpec keywords for margins and gaps given in inches.

    left, right, top, bottom come back as figure fractions; wspace and hspace as fractions of
    the mean cell width and height (matplotlib's GridSpec convention), so that the gaps between
    cells are ``wgap_in`` and ``hgap_in`` inches.
    """
    width_in, height_in = fig.get_size_inches()
    cell_w = (width_in - left_in - right_in - (ncols - 1) * wgap_in) / ncols
    cell_h = (height_in - top_in - bottom_in - (nrows - 1) * hgap_in) / nrows
    if cell_w <= 0 or cell_h <= 0:
        raise InputError("figure too small for its margins")
    return dict(left=left_in / width_in, right=1.0 - right_in / width_in, bottom=bottom_in / height_in,
                top=1.0 - top_in / height_in, wspace=wgap_in / cell_w, hspace=hgap_in / cell_h)


def box_at(fig: Figure, left_in: float, bottom_in: float, width_in: float, height_in: float) -> tuple:
    """(left, bottom, width, height) in figure fractions of a box given in inches."""
    fw, fh = fig.get_size_inches()
    return (left_in / fw, bottom_in / fh, width_in / fw, height_in / fh)


def extent_in(fig: Figure, artist) -> tuple[float, float]:
    """(width, height) in inches of one artist as it will be drawn (texts, legends, tick labels).

    Measures that one artist only (the renderer lays out its text), not the whole figure.
    """
    box = artist.get_window_extent(fig.canvas.get_renderer())
    return float(box.width) / fig.dpi, float(box.height) / fig.dpi


def wrapped(fig: Figure, text: str, fontsize: float, width_in: float, max_lines: int = 3) -> str:
    """``text`` broken at spaces into lines no wider than ``width_in`` inches at ``fontsize`` points.

    At most ``max_lines`` lines; beyond them the text ends in an ellipsis. Text that fits is
    returned unchanged.
    """
    import textwrap

    probe = fig.text(0.0, 0.0, text, fontsize=fontsize)
    try:
        w, _ = extent_in(fig, probe)
    finally:
        probe.remove()
    if w <= width_in or not text:
        return text
    chars = max(10, int(len(text) * width_in / w * 0.95))
    lines = textwrap.wrap(text, chars, break_long_words=True, break_on_hyphens=False)
    if len(lines) > max_lines:
        lines = lines[:max_lines]
        lines[-1] = lines[-1][:max(0, chars - 1)].rstrip() + "…"
    return "\n".join(lines)


class _InViewLocator(Locator):
    """A MaxNLocator's ticks (matplotlib's default choice is one), less those outside the view.

    Such a locator also returns a tick or two beyond each end of the axis; matplotlib makes
    a tick (three lines and two texts) for each and then leaves it undrawn. Making only the
    drawn ones takes a third less time for a panel of five by three ticks (ticks are about
    60 % of the uniformity maps' drawing time). The ticks shown are the same; autoscaling
    asks the wrapped locator.
    """

    def __init__(self, base: MaxNLocator):
        self.base = base

    def set_axis(self, axis):
        super().set_axis(axis)
        self.base.set_axis(axis)

    def __call__(self):
        lo, hi = sorted(self.axis.get_view_interval())
        slack = 1e-9 * (hi - lo)
        return [v for v in self.base() if lo - slack <= v <= hi + slack]

    def tick_values(self, vmin, vmax):
        return self.base.tick_values(vmin, vmax)

    def view_limits(self, vmin, vmax):
        return self.base.view_limits(vmin, vmax)

    def nonsingular(self, v0, v1):
        return self.base.nonsingular(v0, v1)


def _finish(fig: Figure) -> Figure:
    """Fix tick label sizes (ticks are made lazily at draw time, outside the rc context) and
    make only the ticks that are drawn (``_InViewLocator``) on linear axes ticked by a MaxNLocator."""
    for ax in fig.axes:
        ax.tick_params(labelsize=_FS["small"])
        for axis in (ax.xaxis, ax.yaxis):
            locator = axis.get_major_locator()
            if isinstance(locator, MaxNLocator) and axis.get_scale() == "linear":
                axis.set_major_locator(_InViewLocator(locator))
    return fig


def png_bytes(fig: Figure, dpi: int = DEFAULT_DPI, notes=()) -> bytes:
    """The figure rendered as PNG (figsize x dpi pixels), with this tool's version as the PNG's
    "Software" text and ``notes`` (lines: what the figure was made from, e.g.
    ``cage.provenance.header_lines(..., prefix="")``) as its "Source" text."""
    if not isinstance(fig, Figure):
        raise InputError(f"expected a matplotlib Figure, got {type(fig).__name__}")
    if fig.canvas is None or not isinstance(fig.canvas, FigureCanvasAgg):
        FigureCanvasAgg(fig)
    import matplotlib

    from cage.pngfile import png_bytes as encode_png

    # Drawn at the output's dpi on the figure's own canvas (what savefig does for the time of
    # the call; a figure here is rendered once). An opaque figure is stored as RGB: the same
    # pixels, a quarter fewer bytes to compress (cage.pngfile: filter None, zlib level 1).
    fig.set_dpi(dpi)
    with matplotlib.rc_context(_RENDER_RC):
        fig.canvas.draw()
    rgba = np.asarray(fig.canvas.buffer_rgba())
    from cage.escape import one_line
    from cage.provenance import tool_version

    text = {"Software": tool_version()}
    if notes:
        text["Source"] = "\n".join(one_line(line) for line in notes)
    return encode_png(rgba[..., :3] if np.all(rgba[..., 3] == 255) else rgba, dpi=dpi, text=text)


def save_png(fig: Figure, path: str | os.PathLike, dpi: int = DEFAULT_DPI, notes=()) -> Path:
    """Render the figure to PNG in memory (``png_bytes``), then write it atomically to ``path``."""
    from cage.atomicfile import write_bytes

    return write_bytes(path, png_bytes(fig, dpi, notes))


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
