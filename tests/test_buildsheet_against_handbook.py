"""The build sheet against computations made here from the design file and handbook values.

- Wire length: each turn's path (a square of side s + 2r, or a circle of radius R + r, r the
  turn's layer offset from the centreline), turn by turn, plus the link between the coils
  (spacing + one frame depth, the allowance the build sheet states) and the design's leads.
- Copper mass: length x pi d^2 / 4 x 8.96 g/cm^3 (density of copper, CRC Handbook of
  Chemistry and Physics; the program uses IEC 60028's 8.89 g/cm^3 for annealed copper, so the
  two agree to 0.8 %). Bare diameter of AWG n: ASTM B258, 0.127 mm x 92^((36 - n)/39).
- Resistance at 20 C: length x rho / A with rho = 1/58 ohm mm^2/m (IEC 60028).
- Fuse ratings: the R10 preferred-number series (ISO 3, IEC 60127 fuse ratings).
- IEC 60085 thermal classes: 90, 105, 120, 130, 155, 180, 200, 220 degC.
- Stored energy: 1/2 L I^2 with L and I from the design file.
"""
from __future__ import annotations

import csv
import io
import json
import math

import pytest

from conftest import SITES

COPPER_DENSITY_HANDBOOK_KG_M3 = 8960.0  # CRC Handbook, copper at 20 C
IACS_RESISTIVITY_OHM_M = 1.0 / 58.0 * 1e-6  # IEC 60028


def awg_bare_m(n: int) -> float:
    return 0.127e-3 * 92.0 ** ((36 - n) / 39.0)  # ASTM B258


@pytest.fixture(scope="module")
def design_path(tmp_path_factory):
    from conftest import cli_code

    path = tmp_path_factory.mktemp("build") / "design.json"
    assert cli_code("design", SITES / "smallsat-lab.toml", "--system", "pair", "--out", path) == 0
    return path


@pytest.fixture(scope="module")
def sheet_json(design_path):
    import subprocess
    import sys

    res = subprocess.run([sys.executable, "-m", "cage", "build", str(design_path), "--json"],
                         capture_output=True, text=True, check=True)
    return json.loads(res.stdout)


def independent_coil_length_m(shape: str, size_m: float, turns: int, width_m: float, od_m: float) -> float:
    """Turn by turn: fill layers of floor(width / od) from the floor outward; path at the layer's offset."""
    per_layer = int(width_m / od_m + 1e-9)
    layers = math.ceil(turns / per_layer)
    total = 0.0
    for k in range(turns):
        j = k // per_layer
        r = (j - (layers - 1) / 2.0) * od_m
        total += 4.0 * (size_m + 2.0 * r) if shape == "square" else 2.0 * math.pi * (size_m + r)
    return total


def test_wire_length_mass_and_resistance_against_independent_sums(design_path, sheet_json):
    design = json.loads(design_path.read_text())
    for axis, d in design["axes"].items():
        b = sheet_json["axes"][axis]
        gauge = int(d["wire"].split()[1])
        bare = awg_bare_m(gauge)
        assert b["wire_bare_diameter_m"] == pytest.approx(bare, rel=1e-9)
        size = d["side_m"] if d["shape"] == "square" else d["radius_m"]
        coil = independent_coil_length_m(d["shape"], size, d["turns"], d["frame_width_m"], b["wire_outer_diameter_m"])
        link = d["spacing_m"] + d["frame_depth_m"]  # the build sheet's stated link allowance
        total = 2 * coil + link + d["lead_length_m"]
        assert b["total_wire_m"] == pytest.approx(total, rel=1e-9)
        # the winding is longer than the centreline estimate only through the part-filled outer layer
        assert abs(2 * coil - 2 * d["turns"] * 4 * size) / (2 * coil) < 0.01
        area = math.pi * bare ** 2 / 4.0
        mass = total * area * COPPER_DENSITY_HANDBOOK_KG_M3
        assert b["copper_mass_kg"] == pytest.approx(mass, rel=0.01)  # 8.89 vs 8.96 g/cm^3
        windings = sum(c["wire_length_m"] for c in b["coils"])
        assert b["resistance_20C_ohm"] == pytest.approx(windings * IACS_RESISTIVITY_OHM_M / area, rel=1e-3)
        # the design's own resistance (centreline turns) agrees within the link and the outer layer
        assert b["resistance_20C_ohm"] == pytest.approx(d["resistance_20C_ohm"], rel=0.01)


def test_round_coil_wire_length_against_circumferences():
    from cage.buildsheet import build_sheet
    from cage.designfile import design_from_dict

    axes = {}
    for name, radius, turns in (("x", 0.9, 61), ("y", 0.8, 40), ("z", 0.7, 25)):
        axes[name] = {"shape": "round", "radius_m": radius, "spacing_m": radius, "turns": turns, "wire": "AWG 18",
                      "frame_width_m": 0.03, "frame_depth_m": 0.03, "lead_length_m": 4.0, "max_current_A": 2.0,
                      "inductance_H": 0.02}
    design = design_from_dict({"format": "cage-design", "version": 1, "axes": axes}, "test")
    sheet = build_sheet(design)
    for b in sheet.axes:
        d = axes[b.axis]
        coil = independent_coil_length_m("round", d["radius_m"], d["turns"], 0.03, b.wire_outer_diameter_m)
        assert b.total_wire_m == pytest.approx(2 * coil + d["spacing_m"] + 0.03 + 4.0, rel=1e-9)
        assert b.coils[0].size_kind == "diameter"
        assert b.coils[0].centreline_size_m == pytest.approx(2 * d["radius_m"])
        assert b.coils[0].frame_outer_size_m - b.coils[0].frame_inner_size_m == pytest.approx(2 * 0.03)
        area = math.pi * awg_bare_m(18) ** 2 / 4
        assert b.copper_mass_kg == pytest.approx(b.total_wire_m * area * COPPER_DENSITY_HANDBOOK_KG_M3, rel=0.01)
        # stored energy 1/2 L I^2
        assert b.protection.stored_energy_J == pytest.approx(0.5 * 0.02 * 2.0 ** 2)
        # no supply known: a suppressor that suits a bipolar supply, no polarity switch
        assert b.protection.polarity_switch == ()


def test_fuse_ratings_are_r10_values_above_the_margin():
    from cage.buildsheet import fuse_rating_A

    r10 = [1.0, 1.25, 1.6, 2.0, 2.5, 3.15, 4.0, 5.0, 6.3, 8.0]  # ISO 3 R10, IEC 60127 ratings
    allowed = sorted(v * 10.0 ** k for k in range(-2, 3) for v in r10)
    for current in (0.05, 0.8, 2.505, 2.548, 3.2, 7.9, 12.0, 40.0):
        fuse = fuse_rating_A(current)
        assert any(math.isclose(fuse, v, rel_tol=1e-9) for v in allowed), fuse
        assert fuse >= 1.25 * current  # common practice: 25 % above the design current
        below = [v for v in allowed if v < fuse]
        assert not below or below[-1] < 1.25 * current  # the smallest that does
    assert fuse_rating_A(2.505) == pytest.approx(3.15)
    assert fuse_rating_A(2.548) == pytest.approx(4.0)


@pytest.mark.parametrize("winding_C, needed, margin_B", [
    (25.0, "90 (Y)", 95.0), (85.0, "105 (A)", 35.0), (115.0, "130 (B)", 5.0), (130.0, "155 (F)", -10.0)])
def test_insulation_classes_of_iec_60085(winding_C, needed, margin_B):
    from cage.buildsheet import insulation_check

    ins = insulation_check(winding_C)
    assert ins.hot_spot_C == pytest.approx(winding_C + 10.0)  # common practice: 10 K hot-spot allowance
    assert ins.class_needed == needed
    assert ins.margin_class_B_K == pytest.approx(margin_B)


def test_round_frame_time_constant_against_closed_form():
    """Grover's round loop L = mu0 R (ln(8R/g) - 2) and R = rho 2 pi R / A give tau = mu0 A (ln(8R/g) - 2) / (2 pi rho)."""
    from cage.buildsheet import frame_shorted_turn

    mu0 = 4e-7 * math.pi
    radius, w, dep, t = 0.9, 0.04, 0.05, 0.003
    area = w * t + 2 * (dep - t) * t
    # Maxwell's GMD of a rectangle (Rosa and Grover 1912), written out here
    b, c = w, dep
    ln_g = (0.5 * math.log(b * b + c * c) - (b * b / (12 * c * c)) * math.log(1 + c * c / (b * b))
            - (c * c / (12 * b * b)) * math.log(1 + b * b / (c * c)) + (2 * b / (3 * c)) * math.atan(c / b)
            + (2 * c / (3 * b)) * math.atan(b / c) - 25 / 12)
    rho = 1.0 / (0.61 * 58.0) * 1e-6  # aluminium at 61 % IACS (IEC 60889), from memory
    tau = mu0 * area * (math.log(8 * radius) - ln_g - 2) / (2 * math.pi * rho)
    f = frame_shorted_turn("round", radius, w, dep, t)
    assert f.time_constant_s == pytest.approx(tau, rel=1e-3)
    assert 1e-3 < f.time_constant_s < 0.1  # milliseconds: a slow response a user would notice


def test_unipolar_supply_gets_polarity_switch_and_diode():
    from cage.buildsheet import build_sheet
    from cage.designfile import design_from_dict
    from cage.supplies import Supply

    axes = {n: {"shape": "round", "radius_m": r, "spacing_m": r, "turns": 30, "wire": "AWG 16",
                "frame_width_m": 0.03, "frame_depth_m": 0.03, "max_current_A": 3.0, "inductance_H": 0.01,
                "resistance_hot_ohm": 2.0, "lead_length_m": 2.0}
            for n, r in (("x", 0.9), ("y", 0.8), ("z", 0.7))}
    design = design_from_dict({"format": "cage-design", "version": 1, "axes": axes}, "test")
    supplies = [Supply(a, 24.0, 5.0, 0.001, False) for a in "xyz"]
    sheet = build_sheet(design, supplies)
    p = sheet.axes[0].protection
    assert p.diode_current_A == pytest.approx(3.0) and p.diode_reverse_V >= 2 * 24.0
    assert any("zero current" in line for line in p.polarity_switch)
    assert p.tvs_standoff_V is None


def test_build_cli_csv_and_json(design_path, tmp_path, run_cli, sheet_json):
    out = tmp_path / "bom.csv"
    res = run_cli("build", design_path, "--out", out, "--spool-kg", "3", "--spool-kg", "12")
    assert res.code == 0, res
    assert "warning: metal frames" in res.err
    rows = list(csv.DictReader(io.StringIO(out.read_text())))
    assert rows[0].keys() >= {"item", "axis", "coil", "quantity", "unit", "length_m", "mass_kg"}
    for axis in "xyz":
        wire = [r for r in rows if r["item"] == "magnet wire" and r["axis"] == axis]
        assert len(wire) == 1 and "kg" in wire[0]["unit"]
        assert float(wire[0]["length_m"]) == pytest.approx(sheet_json["axes"][axis]["order_wire_m"], abs=0.01)
        windings = sum(float(r["length_m"]) for r in rows if r["item"] == "winding" and r["axis"] == axis)
        total = sheet_json["axes"][axis]["total_wire_m"] - sheet_json["axes"][axis]["lead_length_m"]
        assert windings == pytest.approx(total, abs=0.02)
    res = run_cli("build", design_path, "--json", "--spool-kg", "3")
    doc = json.loads(res.out)
    assert [s["spool_mass_kg"] for s in doc["axes"]["x"]["spools"]] == [3.0]

    allowed = {"version", "turns", "layers", "turns_per_layer", "last_layer_turns", "spools_needed", "spare_fraction"}

    def walk(obj, key=""):
        if isinstance(obj, dict):
            for k, v in obj.items():
                walk(v, k)
        elif isinstance(obj, list):
            for v in obj:
                walk(v, key)
        elif isinstance(obj, (int, float)) and not isinstance(obj, bool):
            assert key in allowed or "_" in key and key.rsplit("_", 1)[1] in {
                "m", "kg", "ohm", "A", "V", "J", "H", "F", "s", "m2", "C", "K", "nT"}, key

    walk(doc)
