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

import io
import math
import os
from pathlib import Path

import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure

from cage.errors import InputError


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
