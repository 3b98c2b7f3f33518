"""Outputs read as a person expects: help, version, places, azimuths, sizes, warnings, figures.

Expectations from the issue and common practice of the trade: latitudes as N/S and
longitudes as E/W (ISO 6709 gives the signed form for machines; people read hemispheres),
azimuths in 0-360 degrees clockwise from north, no "-0.0", one line per warning. The north
arrow is checked against the rotation of the cage frame (``cage.frames``, the README's frame
definition: +x at the heading clockwise from north, +y 90 degrees clockwise of +x seen from
above, drawn with +y down the page).
"""
from __future__ import annotations

import json
import math

import numpy as np
import pytest

from conftest import SITES


def test_help_version_and_bare_command(run_cli):
    run = run_cli()
    assert run.code == 0 and "Usage: cage" in run.out and "build" in run.out
    run = run_cli("-h")
    assert run.code == 0 and "Usage: cage" in run.out
    run = run_cli("--version")
    from cage import __version__

    assert run.code == 0 and run.out.strip() == f"cage {__version__}"
    run = run_cli("design", "--help")
    assert run.code == 0
    text = " ".join(run.out.split())
    assert "[room], [requirement], [coil], [[supply]]" in text  # not eaten as markup


@pytest.mark.parametrize("value, text", [(52.205, "52.2050 deg N"), (-33.9, "33.9000 deg S"), (0.0, "0.0000 deg"),
                                         (-0.00001, "0.0000 deg")])
def test_latitudes(value, text):
    from cage.numberformat import latitude_text

    assert latitude_text(value) == text


@pytest.mark.parametrize("value, text", [(0.119, "0.1190 deg E"), (-70.5, "70.5000 deg W"), (289.5, "70.5000 deg W"),
                                         (180.0, "180.0000 deg"), (-0.00001, "0.0000 deg")])
def test_longitudes(value, text):
    from cage.numberformat import longitude_text

    assert longitude_text(value) == text


@pytest.mark.parametrize("value, text", [(-10.0, "350.00"), (370.0, "10.00"), (359.999, "0.00"), (0.0, "0.00"),
                                         (-0.0001, "0.00")])
def test_azimuths(value, text):
    from cage.numberformat import azimuth_text

    assert azimuth_text(value) == text


def test_field_table_names_hemispheres(run_cli):
    run = run_cli("field", "--lat", "-33.9", "--lon", "-70.5", "--heading-deg", "-10", "--date", "2026-06-01")
    assert run.code == 0, run
    assert "33.9000 deg S, 70.5000 deg W" in run.out
    assert "+x at 350.00 deg true" in run.out
    assert "-0.0" not in run.out


def test_one_plain_line_per_warning():
    """Cautions keep their own word; no "warning: caution:"; each on one line."""
    import typer

    from cage.terminal import warn as _warn

    seen = []
    orig = typer.echo
    try:
        typer.echo = lambda text="", err=False, **kw: seen.append(text)
        _warn("caution: hot\nwindings")
        _warn("plain")
        _warn("warning: already")
    finally:
        typer.echo = orig
    assert seen == ["caution: hot windings", "warning: plain", "warning: already"]


def test_compare_json_sizes_are_sides_or_diameters(run_cli):
    run = run_cli("compare", SITES / "smallsat-lab.toml", "--sizes", "2.2", "--json", "--shape", "round")
    assert run.code == 0, run
    # one row per coil system at this size (every system allowed): a round cage of some system
    # fits here (no round pair does, with the site's 50 nT step limit)
    rows = [r for r in json.loads(run.out)["rows"] if r["feasible"]]
    assert rows, run.out
    row = rows[0]
    assert row["size_kind"] == "diameter"
    sizes = row["centreline_sizes_m"]
    outer = max(sizes.values())
    assert outer == pytest.approx(row["outer_size_m"], rel=1e-9)  # the same measure as the outer size


def test_compare_json_sizes_of_a_mixed_cage_follow_each_axis_shape(run_cli):
    # A cage of square and round pairs: each axis's centreline size is its side (square) or
    # diameter (round), so none is wider than the outermost axis's (the outer size), and the
    # pairs' sides and diameters match what the row's shapes say (a round pair's diameter is
    # twice the radius the planner works in). Common practice of the trade: a square coil is
    # quoted by its side, a round one by its diameter.
    run = run_cli("compare", SITES / "smallsat-lab.toml", "--sizes", "2.5", "--json", "--shape", "either",
                  "--system", "pair")
    assert run.code == 0, run
    rows = [r for r in json.loads(run.out)["rows"] if r["feasible"] and r["shape"] == "mixed"]
    assert rows, run.out  # the demo site gives a mixed cage at 2.5 m (square outside, round inside)
    for row in rows:
        assert row["size_kind"] is None
        sizes, shapes = row["centreline_sizes_m"], row["shapes"]
        assert set(shapes.values()) == {"square", "round"}
        outermost = row["order_outermost_first"][0]
        assert sizes[outermost] == pytest.approx(row["outer_size_m"], rel=1e-9)
        assert max(sizes.values()) == pytest.approx(row["outer_size_m"], rel=1e-9)


@pytest.mark.parametrize("heading", [0.0, 15.0, 90.0, 200.0, 315.0])
def test_north_arrow_points_north(heading):
    from cage.coils import CoilCage, CoilPair
    from cage.frames import ned_to_cage
    from cage.layout import FrameSpec
    from cage.plots import cage_in_room_figure

    cage = CoilCage(*(CoilPair(a, "square", s, 0.5445 * s, 10) for a, s in (("x", 1.6), ("y", 1.8), ("z", 1.4))))
    fig = cage_in_room_figure(cage, FrameSpec(), None, [0.2, 0.2, 0.2], heading_deg=heading)
    arrows = [t for ax in fig.axes for t in ax.texts if t.get_gid() == "north-arrow"]
    assert len(arrows) == 1
    tail = np.array(arrows[0].xyann)  # offset points from the tip: minus the direction
    page = -tail / np.linalg.norm(tail)
    north_cage = ned_to_cage([1.0, 0.0, 0.0], heading)  # (x, y) of north in the cage frame
    expected = np.array([north_cage[0], -north_cage[1]])  # +y runs down the page in the top view
    assert page == pytest.approx(expected, abs=1e-9)
    heading_text = [t.get_text() for ax in fig.axes for t in ax.texts if t.get_gid() == "heading"]
    assert heading_text and f"{heading % 360:.1f}° true" in heading_text[0]


def test_setpoint_figure_is_not_scaled_to_an_outside_row():
    from cage.plots import setpoints_figure

    def row(label, ix, ok=True):
        return {"label": label, "current_A": {"x": ix, "y": 0.5, "z": -0.5}, "power_W": {"x": ix * ix, "y": 1, "z": 1},
                "within_limits": ok, "total_power_W": ix * ix + 2}

    doc = {"site": "s", "date": "2026-12-01", "source": "IGRF-14",
           "supply_limits": {a: {"max_current_A": 5.0, "max_voltage_V": 30.0} for a in "xyz"},
           "rows": [row("null", 1.0), row("+x", 3.0), row("wild", 400.0, ok=False)]}
    fig = setpoints_figure(doc)
    ax_i = fig.axes[0]
    assert ax_i.get_ylim()[1] < 10.0  # scaled to the limit and the rows within it, not to 400 A
    marks = [ln for ax in fig.axes for ln in ax.get_lines() if ln.get_gid() == "beyond-range"]
    assert len(marks) >= 2  # the wild row's current and power, marked at the panels' edges


def test_compare_figure_shows_the_required_cube():
    from cage.plots import compare_figure

    rows = [{"outer_size_m": s, "feasible": True, "total_power_W": 100 * s, "uniform_cube_m": 0.1 * s,
             "copper_mass_kg": 10 * s, "fits_room": True, "shape": "square"} for s in (1.5, 2.0, 2.5)]
    fig = compare_figure(rows, None, 0.001, required_cube_m=0.22)
    lines = [ln for ax in fig.axes for ln in ax.get_lines() if ln.get_gid() == "required-cube"]
    assert len(lines) == 1 and lines[0].get_ydata()[0] == pytest.approx(0.22)
    letters = [t for ax in fig.axes for t in ax.texts if t.get_gid() == "shape-square"]
    assert len(letters) == 3 and all(t.get_text() == "s" for t in letters)


def test_report_sections_in_words(tmp_path):
    """Requirement and layout read in words and units; one row per supply; a valid-until date."""
    import datetime as dt

    from cage.report import build_report

    design = {"format": "cage-design", "version": 1, "axes": {},
              "requirement": {"uniformity": 0.001, "test_volume_m": [0.3, 0.3, 0.3],
                              "supplies": {a: {"name": f"amp {a}", "max_voltage_V": 30, "max_current_A": 5,
                                               "resolution_A": 0.001, "bipolar": a != "z"} for a in "xyz"}},
              "layout": {"winding_pack_centre_difference": [1.5e-5, 2e-5, 3e-5], "frame_gap_m": 0.01}}
    field = {"date": "2026-12-01", "secular_variation_cage_nT_per_year": {"x": 30.0, "y": -40.0, "z": 0.0}}
    html = build_report(field=field, design=design)
    assert "winding_pack_centre_difference" not in html and "1.48587e-05" not in html
    assert "centre field differs by" in html and "15" in html and "ppm" in html
    assert "0.100" in html and "%" in html
    for a in "xyz":
        assert f"amp {a}" in html
    assert "unipolar" in html
    # |SV| = 50 nT/year: 10 nT in 0.2 year = 73.05 days
    assert f"Valid until {(dt.date(2026, 12, 1) + dt.timedelta(days=73)).isoformat()}" in html
    assert math.isclose(10.0 / 50.0 * 365.25, 73.05)


def test_design_table_cells_stay_apart(run_cli, tmp_path):
    # Long cells (a four-coil turns pattern of hundreds of turns) must not run into each other:
    # every row of the per-axis table reads as its label, three cells and the unit, like the
    # header. Invented site: a coastal lab with a small bipolar supply and thin wire allowed.
    site = tmp_path / "site.toml"
    site.write_text('name = "Coastal lab"\ndate = 2026-06-15\n[location]\nlatitude_deg = -33.9\n'
                    'longitude_deg = 18.4\naltitude_m = 0\n[room]\nlength_m = 5.0\nwidth_m = 4.0\nheight_m = 3.0\n'
                    'clearance_m = 0.3\n[requirement]\ntest_volume_m = 0.3\nuniformity = 0.001\n'
                    'extra_field_uT = 100\nshape = "square"\n[coil]\nframe_width_m = 0.04\nframe_depth_m = 0.04\n'
                    'wires = ["AWG 14", "AWG 16", "AWG 18", "1.5 mm"]\n[[supply]]\naxis = "any"\n'
                    'max_voltage_V = 30\nmax_current_A = 5\nresolution_A = 0.001\n', encoding="utf-8")
    run = run_cli("design", site, "--out", tmp_path / "d.json")
    assert run.code == 0, run
    lines = run.out.splitlines()
    head = next(i for i, line in enumerate(lines) if line.startswith("axis "))
    turns = next(line for line in lines[head:] if line.startswith("turns per coil"))
    assert len(turns.split("turns per coil", 1)[1].split()) == 3, turns
    assert max(len(c) for c in turns.split()[3:]) >= 11  # the long patterns this site gives
