"""All figures in one place (the names of each figure module, kept importable as ``cage.plots``).

Figures: uniformity maps and axis lines (``cage.fieldfigures``), the cage in the room
(``cage.roomfigure``), size comparison (``cage.comparefigure``), setpoints and sequences
(``cage.setpointfigures``); shared style, rendering and helpers in ``cage.figurestyle``.
Importing this module imports matplotlib (slow): import it only where a figure is made.
"""
from __future__ import annotations

from cage.figurestyle import (  # noqa: F401
    AXIS_COLOURS, DEFAULT_DPI, FIG_WIDTH_IN, _FS, _MAP_FLOOR, _MAP_LEVELS, _RC, _finish, _grid, _m,
    _new_figure, _rel_unit, _three_lengths, _tolerance, png_bytes, relative_label, save_png)
from cage.fieldfigures import (  # noqa: F401
    _LINE_STYLES, _MAP_PLANES, _rel_formatter, axis_line_changes, axis_lines_figure, default_map_width_m,
    uniformity_maps_figure)
from cage.roomfigure import (  # noqa: F401
    _CURVE_T, _band_patch, _draw_pair, _info_panel, _legend_panel, _north_arrow, _project, _rect,
    cage_in_room_figure)
from cage.comparefigure import (  # noqa: F401
    SYSTEM_LINESTYLES, SYSTEM_MARKERS, _compare_marks, _num_or_nan, compare_figure)
from cage.setpointfigures import (  # noqa: F401
    _PLOT_LIMITS, _axis_limit, _bipolar, _mark_beyond, _row_value, sequence_figure, setpoints_figure)

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
