"""The connection figure's winding sense gives +axis field: checked with magpylib's exact field.

The winding path is read back from the drawn figure (the line with gid "winding-path", its
points in the direction of positive current), placed at every coil plane of the axis, and
driven at +1 A per turn in magpylib (a Polyline carries its current from vertex to vertex).
The field at the cage centre must point along +axis and equal the design's field per ampere
(the same centreline as the design's one-filament model). The sense in words is checked
against the same path: on the coil's +u side the current runs toward +v.
"""
from __future__ import annotations

import re

import numpy as np
import pytest

magpylib = pytest.importorskip("magpylib")

from conftest import SITES  # noqa: E402

AXES = ("x", "y", "z")


def _designs():
    from cage.designfile import design_from_dict

    square = {n: {"shape": "square", "side_m": s, "spacing_m": 0.5445 * s, "turns": 20, "wire": "AWG 16",
                  "frame_width_m": 0.03, "frame_depth_m": 0.03, "max_current_A": 2.0, "inductance_H": 0.01,
                  "field_per_amp_nT": 1.0}
              for n, s in (("x", 1.6), ("y", 1.8), ("z", 1.4))}
    mixed = dict(square)
    mixed["y"] = {"shape": "round", "radius_m": 0.9, "spacing_m": 0.9, "turns": 25, "wire": "AWG 16",
                  "frame_width_m": 0.03, "frame_depth_m": 0.03, "max_current_A": 2.0, "inductance_H": 0.01}
    return [design_from_dict({"format": "cage-design", "version": 1, "axes": a}, "test") for a in (square, mixed)]


@pytest.mark.parametrize("design", _designs(), ids=["square", "round-y"])
def test_drawn_winding_sense_gives_plus_axis_field(design):
    from cage.buildsheet import build_sheet, cyclic_axes
    from cage.connectionfigure import connection_figure
    from cage.coils import pair_field_T

    sheet = build_sheet(design)
    for b, a in zip(sheet.axes, design.axes):
        fig = connection_figure(b)
        lines = [ln for ax in fig.axes for ln in ax.get_lines() if ln.get_gid() == "winding-path"]
        assert len(lines) == 1
        pu, pv = (np.asarray(v, dtype=float) for v in lines[0].get_data())
        i = AXES.index(b.axis)
        u, v = cyclic_axes(b.axis)
        iu, iv = AXES.index(u), AXES.index(v)
        sources = []
        for coil in b.coils:
            verts = np.zeros((pu.size, 3))
            verts[:, i] = coil.position_m
            verts[:, iu] = pu
            verts[:, iv] = pv
            sources.append(magpylib.current.Polyline(current=float(coil.turns), vertices=verts))
        field = magpylib.Collection(*sources).getB((0.0, 0.0, 0.0))
        field = np.asarray(field, dtype=float)
        if abs(field[i]) > 1e-3:  # magpylib < 5 returned mT
            field = field * 1e-3
        assert field[i] > 0, (b.axis, field)
        assert abs(field[i]) > 100 * np.linalg.norm(np.delete(field, i)), field
        # the design's own model of the same pair, +1 A: the same field (same centreline)
        own = pair_field_T(a.pair, 1.0, np.zeros(3))
        tol = 1e-6 if b.shape == "square" else 2e-3  # the drawn circle is a 240-sided polygon
        assert field[i] == pytest.approx(own[i], rel=tol)

        # the words: "on each coil's +u side it flows toward +v"
        m = re.search(r"\+(\w) side it flows toward \+(\w)", b.connection.sense)
        assert m and m.groups() == (u, v)
        on_plus_u = np.where(pu > 0.99 * pu.max())[0]
        k = on_plus_u[0]
        assert pv[k + 1] > pv[k]  # moving toward +v there


def test_wiring_runs_start_to_finish_from_supply_plus():
    from cage.buildsheet import build_sheet

    sheet = build_sheet(_designs()[0])
    for b in sheet.axes:
        steps = b.connection.steps
        labels = [c.label for c in b.coils]
        assert steps[1].startswith(f"supply + to the start of {labels[0]}")
        assert steps[-1] == f"finish of {labels[-1]} to supply -"
        positions = [c.position_m for c in b.coils]
        assert positions == sorted(positions)


def test_four_coil_axis_wiring_and_field():
    """An axis that lists four coils (the interface of three- and four-coil systems): every coil
    is wired start to finish in order, the links add up, and the drawn sense gives +axis field."""
    from types import SimpleNamespace as NS

    from cage.buildsheet import axis_build, cyclic_axes
    from cage.coils import CoilPair
    from cage.connectionfigure import connection_figure

    side = 1.6
    coils = [NS(position_m=p * side, turns=t, size_m=side) for p, t in
             ((-0.5055, 26), (-0.1281, 11), (0.1281, 11), (0.5055, 26))]  # positions and turns: our test values
    axis = NS(pair=CoilPair("y", "square", side, 0.5445 * side, 26), wire="AWG 16", frame_width_m=0.03,
              frame_depth_m=0.03, max_current_A=2.0, lead_length_m=5.0, resistance_hot_ohm=None, inductance_H=0.01,
              field_per_amp_nT=None, winding_temperature_C=None, coil_axis=NS(axis="y", shape="square", size_m=side, coils=coils))
    b = axis_build(axis)
    assert [c.label for c in b.coils] == ["y1", "y2", "y3", "y4"]
    assert [c.turns for c in b.coils] == [26, 11, 11, 26]
    links = [c.link_length_m for c in b.coils]
    gaps = np.diff([c.position_m for c in coils])
    assert links[:3] == pytest.approx(gaps + 0.03) and links[3] == 0.0
    assert b.total_wire_m == pytest.approx(sum(c.wire_length_m for c in b.coils) + 5.0)
    assert len([s for s in b.connection.steps if s.startswith("finish of y")]) == 4
    fig = connection_figure(b)
    line = [ln for ax in fig.axes for ln in ax.get_lines() if ln.get_gid() == "winding-path"][0]
    pu, pv = (np.asarray(v, dtype=float) for v in line.get_data())
    u, v = cyclic_axes("y")
    sources = []
    for c in b.coils:
        verts = np.zeros((pu.size, 3))
        verts[:, 1] = c.position_m
        verts[:, AXES.index(u)] = pu
        verts[:, AXES.index(v)] = pv
        sources.append(magpylib.current.Polyline(current=float(c.turns), vertices=verts))
    field = np.asarray(magpylib.Collection(*sources).getB((0.0, 0.0, 0.0)), dtype=float)
    assert field[1] > 0 and abs(field[1]) > 100 * np.linalg.norm(field[[0, 2]])
