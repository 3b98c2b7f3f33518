"""The planner against an independent brute-force search, and axes that only null a small field.

Brute force (written here, sharing only the physics primitives with the planner, not its
search): every pair side on a fine grid, every combination of the three sides (so every
nesting order), every allowed wire, and for each wire the most turns that keep every limit
(at a fixed field the current goes as 1/N and the resistance as N, so the power I^2 R falls as
1/N: the most feasible turns are the least power; common practice). Constraints as the
planner's: the winding on the channel floor of its frame (README), its uniformity over the
test box within 99 % of the tolerance (square pairs, channels 0.5445 x the mid-channel side
apart: the flat spacing, Firester, Rev. Sci. Instrum. 37, 1264 (1966)), frames of different
axes clear (centreline distance at least the frame circumcircle plus the gap), the
field within the supply's current and voltage, the winding temperature, the turns that fit the
channel, and the largest field step asked for. The planner's total power must be within
0.5 % of the brute force's least.

The two cases are small on purpose (few turns, so one turn is several % of an axis's power,
and a field step limit that caps the turns): a planner that picks turns only at the smallest
uniform size misses the optimum here by far more than 0.5 % (measured: 5.7 % and 2.0 % more
power with the joint size-turn search switched off).
"""
from __future__ import annotations

import math

import numpy as np
import pytest

from cage.coils import AXES, CoilPair

FLAT = 0.5445  # spacing / side of a flat square pair, Firester (1966)


def make_site(*, max_step_nT, resolution_A, wires, extra_uT, field_nT, max_current_A=3.0, max_voltage_V=30.0):
    from cage.sitefile import site_from_dict

    tree = {
        "name": "brute", "date": "2026-06-01",
        "location": {"latitude_deg": 10.0, "longitude_deg": 20.0},
        "room": {"length_m": 6.0, "width_m": 6.0, "height_m": 4.0, "clearance_m": 0.3},
        "requirement": {"test_volume_m": [0.08, 0.08, 0.08], "uniformity": 0.01, "extra_field_uT": extra_uT,
                        "shape": "square", "max_field_step_nT": max_step_nT, "systems": ["pair"]},
        "coil": {"frame_width_m": 0.008, "frame_depth_m": 0.006, "frame_gap_m": 0.004, "wires": list(wires),
                 "max_winding_temperature_C": 80, "ambient_temperature_C": 22, "lead_length_m": 2.0},
        "supply": [{"axis": "any", "max_voltage_V": max_voltage_V, "max_current_A": max_current_A,
                    "resolution_A": resolution_A}],
        "measured": {"field_nT": list(field_nT)},
    }
    return site_from_dict(tree, "brute.toml")


def best_axis_power(axis, frame_side, need_nT, inp):
    """Least power of one square pair on a frame line of this side over the wires and turns, or
    inf. The winding sits on the channel floor (README, *Where the winding sits*): its mean line
    is inside the frame line by the unfilled channel depth; the two channels are
    0.5445 x (frame side - depth / 2) apart, the planner's placing of the frames."""
    from cage.coils import pair_field_T
    from cage.electrical import axis_electrics, max_turns
    from cage.supplies import check_drive
    from cage.uniformity import box_deviation
    from cage.optimise import UNIFORMITY_MARGIN
    from cage.wires import wire_from_name

    supply = inp.supplies[AXES.index(axis)]
    width, depth = inp.frame.width_m, inp.frame.depth_m
    spacing = FLAT * (frame_side - depth / 2.0)
    best = math.inf
    for wire in inp.wires:
        od = wire_from_name(wire).outer_diameter_m
        per = int(math.floor(width / od * (1 + 1e-9)))
        n_fit = max_turns(wire, width, depth)
        for layers in range(-(-n_fit // per), 0, -1):  # deepest pack first
            side = frame_side - (depth - layers * od)
            one = CoilPair(axis, "square", side, spacing, 1)
            if box_deviation(one, inp.test_volume_m) > inp.uniformity * UNIFORMITY_MARGIN:
                continue
            k1 = float(pair_field_T(one, 1.0, np.zeros(3))[AXES.index(axis)])
            # every turn count this many layers hold, most first
            for n in range(min(n_fit, layers * per), (layers - 1) * per, -1):
                if k1 * n * supply.resolution_A * 1e9 > inp.max_field_step_nT * (1 + 1e-12):
                    continue
                current = need_nT * 1e-9 / (k1 * n)
                if current > supply.max_current_A:
                    break
                pair = CoilPair(axis, "square", side, spacing, n)
                el = axis_electrics(pair, wire, current, lead_length_m=inp.lead_length_m,
                                    frame_width_m=width, frame_depth_m=depth,
                                    ambient_temperature_C=inp.ambient_temperature_C)
                drive = check_drive(supply, current, el.resistance_hot_ohm, el.lead_resistance_ambient_ohm)
                if drive.within_limits and el.temperature_converged \
                        and el.winding_temperature_C <= inp.max_winding_temperature_C:
                    best = min(best, drive.power_W)
                    break
    return best


def brute_force_power(inp, step_m=0.001, span=1.3):
    from cage.layout import min_centreline_distance_m

    depth = inp.frame.depth_m
    lo = 0.08 * 1.001 + depth  # the test box must pass through the winding's square aperture
    grid = np.arange(lo, lo * 12.0, step_m)
    sides, powers = [], []
    for axis, need in zip(AXES, inp.needed_field_nT):
        ss, pp = [], []
        for s in grid:
            if ss and s > ss[0] * span:
                break
            p = best_axis_power(axis, s, need, inp)
            if math.isfinite(p) or ss:
                ss.append(s)
                pp.append(p)
        sides.append(np.array(ss))
        powers.append(np.array(pp))
    need = inp.frame.needed_distance_m

    def frame(axis, s):
        return CoilPair(axis, "square", s, FLAT * (s - depth / 2.0), 1)

    def clear(i, j):
        a, b = AXES[i], AXES[j]
        return np.array([[min_centreline_distance_m(frame(a, sa), frame(b, sb)) >= need - 1e-12
                          for sb in sides[j]] for sa in sides[i]])

    xy, xz, yz = clear(0, 1), clear(0, 2), clear(1, 2)
    total = powers[0][:, None, None] + powers[1][None, :, None] + powers[2][None, None, :]
    feasible = xy[:, :, None] & xz[:, None, :] & yz[None, :, :]
    return float(np.min(np.where(feasible, total, np.inf)))


CASES = {
    "polar-like, one wire": dict(max_step_nT=280.0, resolution_A=0.01, wires=("AWG 18",), extra_uT=20.0,
                                 field_nT=(8000.0, 500.0, 52000.0)),
    "mid-latitude, two wires": dict(max_step_nT=300.0, resolution_A=0.01, wires=("AWG 20", "AWG 24"),
                                    extra_uT=30.0, field_nT=(21000.0, 1200.0, 43000.0)),
}


@pytest.mark.parametrize("name", sorted(CASES))
def test_planner_within_half_a_percent_of_brute_force(name):
    from cage.optimise import plan_cage, plan_inputs_from_site

    site = make_site(**CASES[name])
    inp = plan_inputs_from_site(site, site.measured.field_nT)
    plan = plan_cage(inp)
    brute = brute_force_power(inp)
    assert math.isfinite(brute)
    assert plan.total_power_W <= brute * 1.005, (plan.total_power_W, brute)
    # and the planner's design keeps every limit the brute force kept
    for a in plan.axes:
        assert a.field_step_nT <= inp.max_field_step_nT * (1 + 1e-9)
        assert a.uniformity_reached <= inp.uniformity


@pytest.mark.parametrize("z_nT,extra_uT", [(0.0, 0.0), (820.0, 0.0), (30.0, 0.0)])
def test_null_only_axis_is_planned(z_nT, extra_uT):
    # Dip equator with no extra field: the vertical component is small or zero (0.82 uT was
    # once refused with "at most 0 turns").
    from cage.optimise import plan_cage, plan_inputs_from_site
    from cage.sitefile import site_from_dict

    tree = {
        "name": "equator", "date": "2026-06-01",
        "location": {"latitude_deg": 0.0, "longitude_deg": 0.0},
        "room": {"length_m": 6.0, "width_m": 6.0, "height_m": 4.0, "clearance_m": 0.3},
        "requirement": {"test_volume_m": [0.2, 0.2, 0.2], "uniformity": 0.002,
                        "extra_field_uT": [50.0, 50.0, extra_uT], "shape": "square", "systems": ["pair"]},
        "coil": {"wires": ["AWG 14", "AWG 18"]},
        "supply": [{"axis": "any", "max_voltage_V": 30.0, "max_current_A": 5.0, "resolution_A": 0.001}],
        "measured": {"field_nT": [30000.0, 0.0, z_nT]},
    }
    site = site_from_dict(tree, "equator.toml")
    plan = plan_cage(plan_inputs_from_site(site, site.measured.field_nT))
    z = plan.axis("z")
    assert z.pair.turns >= 1
    assert z.needed_field_nT == pytest.approx(z_nT)
    # the full-range current gives the needed field: field per ampere x current (0 for 0)
    assert z.full_current_A * z.field_per_amp_nT == pytest.approx(z_nT, abs=1e-6)
    assert z.uniformity_reached <= 0.002
