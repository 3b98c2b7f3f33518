"""Figures and the report of three- and four-coil designs (design file version 2): `cage plan
--system three|four` writes the whole folder with every figure in the report; the room figure
draws one frame per coil at its own plane; the axis-line figure's field along the lines through
the centre equals the field of the design file's coils computed independently with magpylib.

Reference: magpylib 6.x ``magpylib.current.Circle`` (round coils) and ``magpylib.current.Polyline``
(square coils), Biot-Savart of filaments, built from design.json alone
(``_mag_axis`` of test_system_planner_against_magpylib.py).
"""
from __future__ import annotations

import json
from html.parser import HTMLParser

import numpy as np
import pytest

from conftest import SITES

magpy = pytest.importorskip("magpylib")

from test_system_planner_against_magpylib import _mag_axis  # noqa: E402

AXES = ("x", "y", "z")
FIGURES = ("uniformity.png", "axis_lines.png", "cage_in_room.png", "setpoints.png",
           "connection_x.png", "connection_y.png", "connection_z.png")
PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"  # PNG specification (ISO/IEC 15948), file signature


class _Images(HTMLParser):
    def __init__(self):
        super().__init__()
        self.srcs = []

    def handle_starttag(self, tag, attrs):
        if tag == "img":
            self.srcs.append(dict(attrs).get("src", ""))


@pytest.fixture(scope="module")
def planned(tmp_path_factory):
    """{system: plan folder} of the equatorial demo site planned with --system three and four."""
    from cage.cli import main

    out = {}
    for system in ("three", "four"):
        folder = tmp_path_factory.mktemp(system) / "plan"
        try:
            main(["plan", "--system", system, str(SITES / "equatorial-hall.toml"), "--out", str(folder)])
        except SystemExit as exc:
            assert not exc.code, f"cage plan --system {system} exited {exc.code}"
        out[system] = folder
    return out


def _design(folder):
    from cage.designfile import design_from_dict

    doc = json.loads((folder / "design.json").read_text())
    return doc, design_from_dict(doc, "design.json")


@pytest.mark.parametrize("system", ["three", "four"])
def test_plan_writes_every_figure_and_the_report_shows_them(planned, system):
    folder = planned[system]
    doc, design = _design(folder)
    assert doc["version"] == 2
    counts = {"three": 3, "four": 4}[system]
    assert all(doc["axes"][a]["system"] == system and len(doc["axes"][a]["coils"]) == counts for a in AXES)
    for name in ("field.json", "design.json", "setpoints.csv", "setpoints.json", "setpoints.scpi", "build.csv",
                 "report.html") + FIGURES:
        assert (folder / name).is_file(), name
    for name in FIGURES:
        assert (folder / name).read_bytes()[:8] == PNG_SIGNATURE, name
    parser = _Images()
    parser.feed((folder / "report.html").read_text())
    # Every figure is embedded as PNG data (the report is one self-contained file).
    assert len(parser.srcs) >= len(FIGURES)
    assert all(src.startswith("data:image/png;base64,") for src in parser.srcs)


def test_report_command_on_a_four_coil_folder(planned, run_cli):
    folder = planned["four"]
    before = (folder / "report.html").read_text()
    run = run_cli("report", folder)
    assert run.code == 0, run
    assert (folder / "report.html").read_text().count("data:image/png;base64,") == before.count("data:image/png;base64,")


def test_room_figure_draws_one_frame_per_coil_at_its_plane(planned):
    from cage import plots
    from cage.workflow import design_context

    doc, design = _design(planned["four"])
    volume, _, frame, room = design_context(doc)
    fig = plots.cage_in_room_figure(design.axis_cage, frame, room, volume, 30.0)
    top, front, side = fig.axes[:3]
    views = {"top": (top, 0, 1), "front": (front, 0, 2), "side": (side, 1, 2)}
    for view, (ax, ih, iv) in views.items():
        for a, axis in enumerate(design.axis_cage.axes):
            frames = [p for p in ax.patches if p.get_gid() == f"frame-{axis.axis}"]
            assert len(frames) == axis.count == 4, (view, axis.axis)
            if a == ih:  # seen edge-on along the page's horizontal: one bar per coil plane
                centres = sorted(p.get_x() + p.get_width() / 2 for p in frames)
                assert np.allclose(centres, [c.position_m for c in axis.coils], atol=1e-9)
                assert np.allclose([p.get_width() for p in frames], frame.width_m)
    plt_text = [t.get_text() for t in fig.axes[-1].texts if t.get_gid() == "pairs"][0]
    assert "x four" in plt_text and "y four" in plt_text and "z four" in plt_text


@pytest.mark.parametrize("system", ["three", "four"])
def test_axis_lines_match_magpylib_from_the_design_file(planned, system):
    from cage import plots

    doc, design = _design(planned[system])
    tol = doc["requirement"]["uniformity"]
    fig = plots.axis_lines_figure(design.axis_cage, doc["requirement"]["test_volume_m"], tol, n=31)
    for a, (ax, name) in enumerate(zip(fig.axes, AXES)):
        scale = {"(%)": 100.0, "(ppm)": 1e6}[ax.get_ylabel().split()[-1]]
        sources = _mag_axis(name, doc["axes"][name])  # built from design.json alone
        b0 = sources.getB((0.0, 0.0, 0.0))[a]
        for k, line_axis in enumerate(AXES):
            (line,) = [ln for ln in ax.get_lines() if ln.get_gid() == f"line-{name}-{line_axis}"]
            s = np.asarray(line.get_xdata())
            pts = np.zeros((s.size, 3))
            pts[:, k] = s
            expected = (sources.getB(pts)[:, a] / b0 - 1.0) * scale
            got = np.asarray(line.get_ydata())
            assert np.abs(got).max() > 0  # the field does change along the line
            assert np.allclose(got, expected, rtol=1e-7, atol=1e-9 * scale), (name, line_axis)


def test_uniformity_maps_of_a_four_coil_design(planned):
    from cage import plots

    doc, design = _design(planned["four"])
    fig = plots.uniformity_maps_figure(design.axis_cage, doc["requirement"]["test_volume_m"],
                                       doc["requirement"]["uniformity"], n=11)
    titles = [ax.get_title() for ax in fig.axes[:9]]
    assert titles[0] == "x axis (four) driven, z = 0" and titles[8] == "z axis (four) driven, y = 0"
