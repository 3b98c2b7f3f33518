"""Layout of the figures (fixed margins, no layout engine): nothing clipped, nothing overlapping.

Outside reference: matplotlib's own renderer, which measures every drawn text (titles, axis
labels, tick labels, legends, colour-bar labels) in pixels after ``fig.canvas.draw()``
(``Axes.get_tightbbox``, ``Artist.get_window_extent``); the bounds are the canvas, figsize x dpi.
Each figure is checked in the cases its function accepts that change the texts around the
panels: pairs and four-coil axes, square and round, cube and box test volumes, with and
without a room, long and narrow rooms, long site names, long and many row labels, rows beyond
the supply limits, several coil systems.
"""
from __future__ import annotations

import copy
import itertools

import numpy as np
import pytest

from cage import plots
from cage.coilaxis import AxisCage
from cage.coils import CoilCage, CoilPair
from cage.coilsystems import system_axis
from cage.layout import FrameSpec
from cage.sitefile import Room

FRAME = FrameSpec(0.04, 0.04, 0.01)
PAIRS = CoilCage(CoilPair("x", "square", 2.0, 1.089, 40), CoilPair("y", "square", 1.9, 0.5445 * 1.9, 40),
                 CoilPair("z", "round", 0.9, 0.9, 40))
FOUR = AxisCage(*(system_axis(a, "round", "four", s, 2) for a, s in zip("xyz", (0.82, 0.98, 0.68))))


def _boxes(fig):
    """[(name, Bbox in pixels)] of every axes with all its texts, the figure's legends and title."""
    fig.canvas.draw()
    renderer = fig.canvas.get_renderer()
    out = [(f"axes {i}", ax.get_tightbbox(renderer)) for i, ax in enumerate(fig.axes) if ax.get_visible()]
    out += [(f"figure legend {i}", leg.get_window_extent(renderer)) for i, leg in enumerate(fig.legends)]
    if fig._suptitle is not None and fig._suptitle.get_text():
        out.append(("title", fig._suptitle.get_window_extent(renderer)))
    return out


def _check(fig):
    boxes = _boxes(fig)
    width, height = fig.canvas.get_width_height()
    for name, box in boxes:  # inside the canvas (1 px for rounding)
        assert box.x0 >= -1 and box.y0 >= -1 and box.x1 <= width + 1 and box.y1 <= height + 1, (name, box)
    positions = {name: tuple(np.round(fig.axes[int(name.split()[1])].get_position().bounds, 6))
                 for name, _ in boxes if name.startswith("axes")}
    for (n1, b1), (n2, b2) in itertools.combinations(boxes, 2):
        if n1 in positions and positions.get(n1) == positions.get(n2):
            continue  # twin axes share their box by design
        overlap_w = min(b1.x1, b2.x1) - max(b1.x0, b2.x0)
        overlap_h = min(b1.y1, b2.y1) - max(b1.y0, b2.y0)
        assert overlap_w <= 1 or overlap_h <= 1, (n1, b1, n2, b2)


@pytest.mark.parametrize("cage", [PAIRS, FOUR], ids=["pairs", "four"])
def test_uniformity_maps(cage):
    _check(plots.uniformity_maps_figure(cage, 0.3, 1e-3, n=11))


@pytest.mark.parametrize("cage,volume,tol", [(PAIRS, 0.3, 1e-3), (FOUR, (0.5, 0.3, 0.2), 1e-4)],
                         ids=["pairs-cube", "four-box"])
def test_axis_lines(cage, volume, tol):
    _check(plots.axis_lines_figure(cage, volume, tol, n=21))


@pytest.mark.parametrize("cage,room,heading", [
    (PAIRS, Room(5.2, 4.3, 3.0, 0.3), 15.0),
    (FOUR, Room(6.0, 6.0, 3.6, 0.4), 10.8),
    (PAIRS, None, None),
    (PAIRS, Room(12.0, 3.0, 2.6, 0.1), 200.0),   # long: a narrow side view
    (PAIRS, Room(3.0, 9.0, 2.6, 0.1), None),     # wide: a narrow top view
    (PAIRS, Room(3.0, 2.5, 2.4, 0.3), None),     # does not fit
], ids=["pairs", "four", "no-room", "long-room", "wide-room", "no-fit"])
def test_cage_in_room(cage, room, heading):
    _check(plots.cage_in_room_figure(cage, FRAME, room, 0.3, heading))


def _setpoints_doc(rows: int = 2, long_text: bool = False):
    lim = {a: {"max_current_A": 5.0, "max_voltage_V": 30.0, "bipolar": a != "z"} for a in "xyz"}
    out = []
    for i in range(rows):
        cur = (0.9, -0.05, -2.4) if i % 2 == 0 else (0.9, -0.05, 5.6)
        c = dict(zip("xyz", cur))
        label = (f"target row number {i} with a longish label" if long_text and i % 3 else f"r{i}")
        out.append({"label": label, "current_A": c, "setpoint_A": c,
                    "power_W": {a: 3.0 * v * v for a, v in c.items()},
                    "total_power_W": sum(3.0 * v * v for v in cur), "within_limits": i % 2 == 0})
    if long_text:
        out[0]["label"] = "a first label long enough to reach past the left edge of the figure"
        out[min(3, rows - 1)]["current_A"]["z"] = 150.0
    site = ("A very long site name for the magnetic calibration facility of the northern research campus, "
            "building 7, basement room B-113 ($5 lab)") if long_text else "lab"
    return {"format": "cage-setpoints", "version": 1, "site": site, "date": "2026-12-01",
            "source": "IGRF-14", "supply_limits": lim, "rows": out}


@pytest.mark.parametrize("rows,long_text", [(2, False), (7, False), (14, True)],
                         ids=["two-rows", "seven-rows", "long-texts"])
def test_setpoints(rows, long_text):
    _check(plots.setpoints_figure(_setpoints_doc(rows, long_text)))


def test_sequence():
    t = np.linspace(0.0, 600.0, 200)
    cur = np.column_stack([4 * np.sin(t / 50), 6 * np.cos(t / 70), 2 * np.sin(t / 20)])
    _check(plots.sequence_figure(t, cur, [5.0, 5.0, 8.0], failing_steps=[10, 50]))


def test_compare_of_several_systems():
    rows = []
    for s in (1.0, 1.5, 2.0, 2.5, 3.0, 3.5):
        ok = s >= 1.5
        rows.append({"outer_size_m": s, "feasible": ok, "total_power_W": 100 / s if ok else None,
                     "uniform_cube_m": 0.17 * s if ok else None, "shape": "square",
                     "copper_mass_kg": 5 * s * s if ok else None, "fits_room": s <= 3.0})
    four = copy.deepcopy(rows)
    for r in four:
        r.update(system="four", shape="round")
    _check(plots.compare_figure(rows + four, 3.1, 1e-3, required_cube_m=0.4))


def test_orbit_with_a_long_title():
    from cage.orbitplots import orbit_figure

    t = np.arange(0.0, 6000.0, 10.0)
    b = np.column_stack([20000 * np.sin(t / 500), 15000 * np.cos(t / 400), 30000 * np.sin(t / 700) + 10000])
    _check(orbit_figure(t, b, 50 * np.sin(t / 900), (t / 20) % 360 - 180,
                        title="DEMO-SAT 1, an invented satellite with a rather long name for a title, "
                              "from 2027-03-15 12:00 UTC", attitude="nadir"))


def test_tolerance_spread():
    from types import SimpleNamespace

    from cage.tolerance_plots import uniformity_spread_figure

    rng = np.random.default_rng(1)
    axes = [SimpleNamespace(axis=a, deviation=rng.uniform(5e-4, 3e-3, 40), nominal_deviation=7e-4,
                            yield_share=0.25) for a in "xyz"]
    _check(uniformity_spread_figure(SimpleNamespace(uniformity=1e-3, axes=axes, samples=40, yield_share=0.05)))
    # The count axis counts whole cages: 20 samples in 39 bins give a few per bin, where a free
    # locator ticks at halves and quarters.
    few = [SimpleNamespace(axis=a, deviation=rng.uniform(5e-4, 3e-3, 20), nominal_deviation=7e-4,
                           yield_share=0.25) for a in "xyz"]
    fig = uniformity_spread_figure(SimpleNamespace(uniformity=1e-3, axes=few, samples=20, yield_share=0.05))
    counts = [t for t in fig.axes[0].get_yticks() if 0 <= t <= fig.axes[0].get_ylim()[1]]
    assert len(counts) >= 2 and all(float(t).is_integer() for t in counts), counts
