"""Figures (cage.plots): structure, units in the labels, the numbers drawn, and the PNG written.

Outside references named beside each check:
- PNG layout: RFC 2083 / ISO/IEC 15948 (8-byte signature, then the IHDR chunk with width and
  height as 4-byte big-endian integers) and matplotlib.image.imread as an independent decoder.
- Field on the axis of a circular loop, B = mu0 I R^2 / (2 (R^2 + z^2)^(3/2)) (e.g. Jackson,
  Classical Electrodynamics, 3rd ed., sec. 5.5; from memory), and of a square loop of half side
  a, B = 2 mu0 I a^2 / (pi (z^2 + a^2) sqrt(z^2 + 2 a^2)) (four finite straight segments; the
  textbook result, from memory).
- Fields off the axis: magpylib (reference library, Biot-Savart of polylines).
- Lengths of frames, room and clearance: hand arithmetic from the numbers given.
"""
from __future__ import annotations

import math
import struct
import subprocess
import sys

import numpy as np
import pytest
from matplotlib.figure import Figure

from cage import plots
from cage.coils import CoilCage, CoilPair
from cage.errors import InputError
from cage.layout import FrameSpec
from cage.sitefile import Room

TV = (0.3, 0.3, 0.3)
TOL = 1e-3


@pytest.fixture(scope="module")
def cage():
    # The realistic cage of the brief: sides 2.0 / 1.9 / 1.8 m, spacing 0.5445 x side, 40 turns.
    return CoilCage(CoilPair("x", "square", 2.0, 1.089, 40),
                    CoilPair("y", "square", 1.9, 0.5445 * 1.9, 40),
                    CoilPair("z", "square", 1.8, 0.5445 * 1.8, 40))


@pytest.fixture(scope="module")
def round_cage():
    return CoilCage(CoilPair("x", "round", 1.1, 1.1, 30),
                    CoilPair("y", "round", 1.0, 1.0, 30),
                    CoilPair("z", "round", 0.9, 0.9, 30))


FRAME = FrameSpec(0.04, 0.04, 0.01)
ROOM = Room(5.2, 4.3, 3.0, 0.3)


def png_size(data: bytes) -> tuple[int, int]:
    """Width and height from the IHDR chunk (RFC 2083 sec. 3.1, 4.1.1)."""
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    length, kind = struct.unpack(">I4s", data[8:16])
    assert kind == b"IHDR" and length == 13
    return struct.unpack(">II", data[16:24])


def labels(fig: Figure) -> list[str]:
    return [t for ax in fig.axes for t in (ax.get_xlabel(), ax.get_ylabel()) if t]


# ---------------------------------------------------------------------------------------------
# PNG output
# ---------------------------------------------------------------------------------------------


def test_saved_png_has_figsize_times_dpi_pixels(tmp_path, cage):
    import matplotlib.image as mpimg

    fig = plots.sequence_figure([0.0, 1.0, 2.0], np.zeros((3, 3)), [5.0, 5.0, 5.0])
    dpi = 40
    path = plots.save_png(fig, tmp_path / "seq.png", dpi=dpi)
    data = path.read_bytes()
    w_in, h_in = fig.get_size_inches()
    assert png_size(data) == (round(w_in * dpi), round(h_in * dpi))
    img = mpimg.imread(path)  # independent decoder
    assert img.shape[:2] == (round(h_in * dpi), round(w_in * dpi))
    # No temporary file is left beside the output (cage.atomicfile writes and renames).
    assert [p.name for p in tmp_path.iterdir()] == ["seq.png"]
    # Default: A4 width, 150 dpi.
    assert w_in == pytest.approx(plots.FIG_WIDTH_IN)
    assert png_size(plots.png_bytes(fig))[0] == round(plots.FIG_WIDTH_IN * 150)


def test_save_png_into_missing_folder_is_a_user_error(tmp_path):
    fig = plots.sequence_figure([0.0, 1.0], np.zeros((2, 3)), [1.0, 1.0, 1.0])
    with pytest.raises(InputError, match="does not exist"):
        plots.save_png(fig, tmp_path / "nope" / "f.png")


def test_plots_module_does_not_use_pyplot():
    code = ("import sys, numpy as np; from cage import plots; "
            "plots.png_bytes(plots.sequence_figure([0, 1], np.zeros((2, 3)), [1, 1, 1]), 20); "
            "assert 'matplotlib.pyplot' not in sys.modules, 'pyplot imported'")
    subprocess.run([sys.executable, "-c", code], check=True)


# ---------------------------------------------------------------------------------------------
# Uniformity maps and axis lines
# ---------------------------------------------------------------------------------------------


def test_uniformity_maps_structure_and_units(cage):
    fig = plots.uniformity_maps_figure(cage, TV, TOL, n=15)
    assert isinstance(fig, Figure)
    assert len(fig.axes) == 10  # 3 x 3 maps and the colour bar
    maps = fig.axes[:9]
    assert all(ax.get_ylabel().endswith("(m)") for ax in maps)
    assert [ax.get_xlabel() for ax in maps[6:]] == ["x (m)", "y (m)", "z (m)"]
    cbar = fig.axes[9]
    assert "ppm" in cbar.get_ylabel() and "%" in cbar.get_ylabel()
    # Decade ticks labelled by the usual meaning of ppm (1e-6) and % (1e-2): common practice.
    fig.canvas.draw()
    ticks = [t.get_text() for t in cbar.get_yticklabels()]
    assert ticks == ["1 ppm", "10 ppm", "100 ppm", "0.1 %", "1 %", "10 %"]
    # Each map carries the test volume's cross-section: 0.3 m x 0.3 m, centred.
    for ax in maps:
        (box,) = [p for p in ax.patches if p.get_gid() == "test_volume"]
        assert box.get_width() == pytest.approx(0.3) and box.get_height() == pytest.approx(0.3)
        assert box.get_x() == pytest.approx(-0.15) and box.get_y() == pytest.approx(-0.15)


def test_uniformity_map_default_extent(cage):
    # 2.5 x the largest test side (0.75 m) is smaller than 1.8 x the smallest half-width (1.62 m).
    assert plots.default_map_width_m(cage, TV) == pytest.approx(0.75)
    assert plots.default_map_width_m(cage, (1.0, 1.0, 1.0)) == pytest.approx(1.8 * 0.9)


def test_relative_labels():
    # ppm = 1e-6, % = 1e-2 (common practice).
    assert plots.relative_label(1e-6) == "1 ppm"
    assert plots.relative_label(2.5e-4) == "250 ppm"
    assert plots.relative_label(1e-3) == "0.1 %"
    assert plots.relative_label(0.05) == "5 %"


def _closed_form_axis(pair, s):
    """Own-axis field of a pair on its axis at s, relative to the centre (formulas above)."""
    def one(z):
        if pair.shape == "round":
            r = pair.size_m
            return r * r / (r * r + z * z) ** 1.5
        a = pair.size_m / 2
        return a * a / ((z * z + a * a) * np.sqrt(z * z + 2 * a * a))

    h = pair.spacing_m / 2
    b = one(s - h) + one(s + h)
    return b / (one(-h) + one(h)) - 1.0


@pytest.mark.parametrize("which", ["cage", "round_cage"])
def test_axis_lines_match_closed_form_on_axis(which, request):
    c = request.getfixturevalue(which)
    fig = plots.axis_lines_figure(c, TV, TOL, n=41)
    assert len(fig.axes) == 3
    assert fig.axes[-1].get_xlabel().endswith("(m)")
    for ax, pair in zip(fig.axes, c.pairs):
        assert ax.get_ylabel().endswith("(%)")  # tolerance 0.1 % is shown in %
        (line,) = [ln for ln in ax.get_lines() if ln.get_gid() == f"line-{pair.axis}-{pair.axis}"]
        s = np.asarray(line.get_xdata())
        y = np.asarray(line.get_ydata()) / 100.0
        assert np.allclose(y, _closed_form_axis(pair, s), rtol=1e-9, atol=1e-12)
        # The shaded tolerance band spans -0.1 % .. +0.1 %.
        (band,) = [p for p in ax.patches if p.get_label().startswith("tolerance")]
        lo, hi = band.get_y(), band.get_y() + band.get_height()
        assert lo == pytest.approx(-0.1) and hi == pytest.approx(0.1)


def test_axis_lines_transverse_match_magpylib(cage):
    magpy = pytest.importorskip("magpylib")
    pair = cage.x
    fig = plots.axis_lines_figure(cage, TV, 1e-4, n=21)
    ax = fig.axes[0]
    assert ax.get_ylabel().endswith("(ppm)")  # 100 ppm tolerance is shown in ppm
    (line,) = [ln for ln in ax.get_lines() if ln.get_gid() == "line-x-y"]
    s = np.asarray(line.get_xdata())
    h, d = pair.size_m / 2, pair.spacing_m / 2
    coils = []
    for x0 in (-d, d):
        # Right-handed about +x: (y, z) = (h,-h) -> (h,h) -> (-h,h) -> (-h,-h).
        verts = [(x0, h, -h), (x0, h, h), (x0, -h, h), (x0, -h, -h), (x0, h, -h)]
        coils.append(magpy.current.Polyline(current=float(pair.turns), vertices=verts))
    pts = np.column_stack([np.zeros_like(s), s, np.zeros_like(s)])
    bx = sum(c.getB(pts) for c in coils)[:, 0]
    b0 = sum(c.getB((0.0, 0.0, 0.0)) for c in coils)[0]
    expected_ppm = (bx / b0 - 1.0) * 1e6
    assert np.allclose(np.asarray(line.get_ydata()), expected_ppm, rtol=1e-7, atol=1e-6)


# ---------------------------------------------------------------------------------------------
# The cage in the room
# ---------------------------------------------------------------------------------------------


def _patches(ax, gid):
    return [p for p in ax.patches if p.get_gid() == gid]


def _extent(patches):
    boxes = [p.get_window_extent().transformed(p.axes.transData.inverted()) for p in patches]
    return (min(b.xmin for b in boxes), max(b.xmax for b in boxes),
            min(b.ymin for b in boxes), max(b.ymax for b in boxes))


def test_cage_in_room_views(cage):
    fig = plots.cage_in_room_figure(cage, FRAME, ROOM, TV)
    assert len(fig.axes) == 5  # top, front, side, legend panel, sizes panel
    top, front, side = fig.axes[:3]
    assert (top.get_xlabel(), top.get_ylabel()) == ("x (m)", "y (m)")
    assert (front.get_xlabel(), front.get_ylabel()) == ("x (m)", "height above floor (m)")
    assert (side.get_xlabel(), side.get_ylabel()) == ("y (m)", "height above floor (m)")
    # Seen from above with z down: y is 90 deg clockwise from x, so +y points down the page
    # (README, frames); seen from +x, +y runs to the left.
    assert top.yaxis_inverted() and side.xaxis_inverted()
    fig.canvas.draw()

    # Room walls 5.2 x 4.3 m centred on the cage; clearance line 0.3 m inside (4.6 x 3.7 m).
    (room,) = _patches(top, "room")
    assert (room.get_width(), room.get_height()) == pytest.approx((5.2, 4.3))
    assert room.get_x() == pytest.approx(-2.6)
    (clear,) = _patches(top, "clearance")
    assert (clear.get_width(), clear.get_height()) == pytest.approx((4.6, 3.7))
    (room_front,) = _patches(front, "room")
    assert (room_front.get_y(), room_front.get_height()) == pytest.approx((0.0, 3.0))

    # Frames: the largest pair (x, side 2.0 m, depth 0.04 m) reaches 1.0 + 0.02 m across;
    # the x pair's planes at +-1.089/2 with a 0.04 m wide frame reach 0.5445 + 0.02 m along x,
    # but the y pair (side 1.9 m) reaches 0.95 + 0.02 m along x: the envelope is
    # 1.94 x 2.04 x 2.04 m (hand arithmetic).
    frames_front = [p for p in front.patches if str(p.get_gid()).startswith("frame-")]
    x0, x1, z0, z1 = _extent(frames_front)
    assert (x0, x1) == pytest.approx((-0.97, 0.97), abs=2e-3)
    # Lowest frame point at floor + clearance (0.3 m), top at 0.3 + 2.04 m.
    assert (z0, z1) == pytest.approx((0.3, 2.34), abs=2e-3)
    frames_top = [p for p in top.patches if str(p.get_gid()).startswith("frame-")]
    x0, x1, y0, y1 = _extent(frames_top)
    assert (y0, y1) == pytest.approx((-1.02, 1.02), abs=2e-3)
    # z pair seen face-on from above: a square band from 0.9 - 0.02 to 0.9 + 0.02 m.
    (zband,) = _patches(top, "frame-z")
    verts = zband.get_path().vertices
    half = np.max(np.abs(verts), axis=1)
    assert half.min() == pytest.approx(0.88) and half.max() == pytest.approx(0.92)
    # Test volume in the front view: 0.3 m, centred at the cage centre height 0.3 + 1.02 m.
    (tv,) = _patches(front, "test_volume")
    assert tv.get_height() == pytest.approx(0.3)
    assert tv.get_y() + 0.15 == pytest.approx(1.32)


def test_cage_in_room_without_room_and_round(round_cage):
    fig = plots.cage_in_room_figure(round_cage, FRAME, None, TV)
    front = fig.axes[1]
    assert front.get_ylabel() == "height above lowest frame (m)"
    assert not _patches(front, "room")
    frames = [p for p in front.patches if str(p.get_gid()).startswith("frame-")]
    fig.canvas.draw()
    _, _, z0, z1 = _extent(frames)
    # Round x pair radius 1.1 m, frame depth 0.04 m: 2 x 1.12 m tall (hand arithmetic).
    assert (z0, z1) == pytest.approx((0.0, 2.24), abs=2e-3)


def test_cage_in_room_says_when_it_does_not_fit(cage):
    fig = plots.cage_in_room_figure(cage, FRAME, Room(3.0, 2.5, 2.4, 0.3), TV)
    texts = " ".join(t.get_text() for ax in fig.axes for t in ax.texts)
    # Usable 2.4 x 1.9 x 1.8 m against an envelope of 1.94 x 2.04 x 2.04 m.
    assert "DOES NOT FIT" in texts and "y by 0.14 m" in texts and "z by 0.24 m" in texts


# ---------------------------------------------------------------------------------------------
# Compare, setpoints, sequences
# ---------------------------------------------------------------------------------------------


def _compare_rows():
    rows = []
    for s in (1.0, 1.5, 2.0, 2.5, 3.0, 3.5):
        ok = s >= 1.5
        rows.append({"outer_size_m": s, "feasible": ok, "total_power_W": 100 / s if ok else None,
                     "uniform_cube_m": 0.17 * s if ok else None,
                     "copper_mass_kg": 5 * s * s if ok else None, "fits_room": s <= 3.0})
    return rows


def test_compare_figure():
    fig = plots.compare_figure(_compare_rows(), 3.1, TOL)
    assert len(fig.axes) == 3  # power, copper mass (twin), uniform cube
    ax_p, ax_c, ax_m = fig.axes
    assert "(W)" in ax_p.get_ylabel() and "(kg)" in ax_m.get_ylabel() and "(m)" in ax_c.get_ylabel()
    assert "0.1 %" in ax_c.get_ylabel()
    assert ax_c.get_xlabel() == "outer size of the cage (m)"
    crosses = [ln for ln in ax_p.get_lines() if ln.get_label() == "infeasible size"]
    assert len(crosses) == 1 and list(crosses[0].get_xdata()) == [1.0]
    limit = [ln for ln in ax_c.get_lines() if ln.get_label().startswith("room limit")]
    assert list(limit[0].get_xdata()) == [3.1, 3.1]
    power = [ln for ln in ax_p.get_lines() if ln.get_label() == "total power (W)"][0]
    assert np.allclose(power.get_ydata(), [100 / s for s in (1.5, 2.0, 2.5, 3.0, 3.5)])


def test_compare_without_room_and_empty():
    fig = plots.compare_figure(_compare_rows(), None, TOL)
    assert not [ln for ax in fig.axes for ln in ax.get_lines() if ln.get_label().startswith("room")]
    with pytest.raises(InputError):
        plots.compare_figure([], None, TOL)


def _setpoints_doc():
    lim = {a: {"max_current_A": 5.0, "max_voltage_V": 30.0, "bipolar": a != "z"} for a in "xyz"}
    rows = []
    for label, cur, ok in (("null", (0.9, -0.05, -2.4), True), ("+100 uT z", (0.9, -0.05, 5.6), False)):
        c = dict(zip("xyz", cur))
        rows.append({"label": label, "target_cage_nT": [0, 0, 0], "current_A": c, "setpoint_A": c,
                     "voltage_V": {a: 3.0 * v for a, v in c.items()},
                     "power_W": {a: 3.0 * v * v for a, v in c.items()},
                     "total_power_W": sum(3.0 * v * v for v in cur), "within_limits": ok})
    return {"format": "cage-setpoints", "version": 1, "site": "lab", "date": "2026-12-01",
            "source": "IGRF-14", "ambient_cage_nT": [19000, -1200, 44000], "supply_limits": lim,
            "rows": rows}


def test_setpoints_figure():
    doc = _setpoints_doc()
    fig = plots.setpoints_figure(doc)
    assert len(fig.axes) == 2
    ax_i, ax_p = fig.axes
    assert ax_i.get_ylabel() == "coil current (A)" and ax_p.get_ylabel() == "power (W)"
    for j, a in enumerate("xyz"):
        bars = [p for p in ax_i.patches if p.get_gid() == f"current-{a}"] or \
            [b for c in ax_i.containers for b in c if c.get_label() == f"{a} current"]
        heights = [b.get_height() for b in bars]
        assert heights == pytest.approx([r["current_A"][a] for r in doc["rows"]])
    limits = sorted(ln.get_ydata()[0] for ln in ax_i.get_lines() if ln.get_gid() == "limit")
    assert limits == [-5.0, 5.0]
    fig.canvas.draw()
    ticks = ax_p.get_xticklabels()
    assert ticks[1].get_text().endswith("(!)") and ticks[1].get_color() != ticks[0].get_color()


def test_setpoints_figure_refuses_broken_rows():
    doc = _setpoints_doc()
    del doc["rows"][0]["current_A"]["y"]
    with pytest.raises(InputError, match=r"rows\[0\].current_A.y"):
        plots.setpoints_figure(doc)


def test_sequence_figure():
    t = np.linspace(0.0, 10.0, 11)
    cur = np.column_stack([np.linspace(-6, 6, 11), np.zeros(11), np.ones(11)])
    fig = plots.sequence_figure(t, cur, [5.0, 4.0, 3.0], failing_steps=[0, 10])
    assert len(fig.axes) == 3
    assert [ax.get_ylabel() for ax in fig.axes] == ["x current (A)", "y current (A)", "z current (A)"]
    assert fig.axes[-1].get_xlabel() == "time (s)"
    for ax, lim in zip(fig.axes, (5.0, 4.0, 3.0)):
        ys = sorted(ln.get_ydata()[0] for ln in ax.get_lines() if ln.get_gid() == "limit")
        assert ys == [-lim, lim]
    marks = [ln for ln in fig.axes[0].get_lines() if ln.get_marker() == "o"]
    assert list(marks[0].get_xdata()) == [0.0, 10.0] and list(marks[0].get_ydata()) == [-6.0, 6.0]
    with pytest.raises(InputError, match="failing_steps"):
        plots.sequence_figure(t, cur, [5.0, 4.0, 3.0], failing_steps=[11])
    with pytest.raises(InputError, match="shape"):
        plots.sequence_figure(t, cur[:, :2], [5.0, 4.0, 3.0])


def test_fonts_are_at_least_8_points(cage):
    # Readable at A4 width: no text below 8 pt (common practice for printed figures).
    for fig in (plots.setpoints_figure(_setpoints_doc()),
                plots.cage_in_room_figure(cage, FRAME, ROOM, TV),
                plots.compare_figure(_compare_rows(), 3.1, TOL)):
        fig.canvas.draw()
        sizes = [t.get_fontsize() for t in fig.findobj(lambda a: hasattr(a, "get_fontsize"))
                 if hasattr(t, "get_text") and t.get_text()]
        assert sizes and min(sizes) >= 8.0
        assert math.isclose(fig.get_size_inches()[0], plots.FIG_WIDTH_IN)
