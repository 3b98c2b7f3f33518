"""Warnings that matter are shown on stderr, and the cautions appear where they matter.

Expectations: the README ("What the model leaves out": past IGRF-14's predictive span, 2030,
cage extrapolates and warns; "Current tables": a design used at another site warns when the
cage does not fit that room or its full-range current exceeds that site's supplies, and rows
outside a supply's limits are flagged, never clipped, and commented out in the SCPI script;
"Cautions": coil heating, supply voltages, strong fields, local electrical codes). Facts of
the trade used as thresholds are marked where they are used.
"""
from __future__ import annotations

import json
import re

import pytest

from conftest import ROOT, SITES

BASE = (SITES / "smallsat-lab.toml").read_text(encoding="utf-8")
WIRES = 'wires = ["AWG 14", "AWG 16", "AWG 18", "1.5 mm"]'


def edited(*pairs) -> str:
    text = BASE
    for old, new in pairs:
        assert old in text, old
        text = text.replace(old, new, 1)
    return text


@pytest.fixture(scope="module")
def demo_design(tmp_path_factory):
    """The demo site's design, made once through the core (as `cage design` does)."""
    from cage import sitefile
    from cage.ambient import site_ambient
    from cage.designfile import save_design
    from cage.optimise import design_from_plan, plan_cage, plan_inputs_from_site

    site = sitefile.load_site(SITES / "smallsat-lab.toml")
    amb = site_ambient(site)
    # least copper: the fewest turns, so the full-range currents are a good part of the supply's
    inp = plan_inputs_from_site(site, amb.in_force_cage_nT, minimise="mass", systems="pair")
    path = tmp_path_factory.mktemp("design") / "design.json"
    save_design(path, design_from_plan(plan_cage(inp), inp, site, amb))
    return path


def warnings_of(run) -> list[str]:
    return [line for line in run.err.splitlines() if line.strip()]


def table_cells(run, label: str) -> list[str]:
    """The value cells of one row of a design table (``cage design`` stdout)."""
    for line in run.out.splitlines():
        if line.startswith(label + "  "):
            return line[len(label):].split()
    raise AssertionError(f"no row {label!r} in {run.out}")


# ----------------------------------------------------------------------------- dates outside the model

def test_date_past_the_predictive_span_warns(run_cli):
    """IGRF-14's predictive span ends 2030-01-01 (IAGA's IGRF-14 release, from memory); README: cage warns."""
    run = run_cli("field", "--lat", "52.2", "--lon", "0.1", "--date", "2031-06-01")
    assert run.code == 0, run
    lines = warnings_of(run)
    assert len(lines) == 1 and lines[0].startswith("warning:"), run.err
    assert "2031-06-01" in lines[0] and "extrapolated" in lines[0] and "2030" in lines[0]
    # the same date in --json: the flag is there too, and the warning still goes to stderr
    run = run_cli("field", "--lat", "52.2", "--lon", "0.1", "--date", "2031-06-01", "--json")
    assert run.code == 0 and json.loads(run.out)["extrapolated"] is True
    assert "extrapolated" in run.err


def test_date_inside_the_span_does_not_warn(run_cli):
    run = run_cli("field", "--lat", "52.2", "--lon", "0.1", "--date", "2029-06-01")
    assert run.code == 0 and run.err == "", run


def test_setpoints_at_a_late_date_warn(run_cli, demo_design):
    run = run_cli("setpoints", demo_design, SITES / "smallsat-lab.toml", "--date", "2032-01-01")
    assert run.code == 0, run
    assert any("2032-01-01" in w and "extrapolated" in w for w in warnings_of(run)), run.err


def test_design_at_a_late_date_warns(run_cli, tmp_path):
    site = tmp_path / "late.toml"
    site.write_text(edited(("date = 2026-12-01", "date = 2031-03-01")), encoding="utf-8")
    run = run_cli("design", site, "--out", tmp_path / "d.json")
    assert run.code == 0, run
    assert any("2031-03-01" in w and "extrapolated" in w for w in warnings_of(run)), run.err


# ----------------------------------------------------------------------------- a design at another site

def _setpoints_json(run_cli, design, site, tmp_path, name="t.json"):
    out = tmp_path / name
    run = run_cli("setpoints", design, site, "--format", "json", "--out", out)
    assert run.code == 0, run
    return run, json.loads(out.read_text(encoding="utf-8"))


def test_weaker_supply_warns_and_flags_rows_without_clipping(run_cli, demo_design, tmp_path):
    site = tmp_path / "weak.toml"
    site.write_text(edited(("max_current_A = 5", "max_current_A = 2")), encoding="utf-8")
    run, doc = _setpoints_json(run_cli, demo_design, site, tmp_path)
    lines = warnings_of(run)
    design = json.loads(demo_design.read_text(encoding="utf-8"))
    for axis in "xyz":
        full = design["axes"][axis]["max_current_A"]
        assert full > 2.0  # the premise: the design needs more than the weaker supply gives
        assert any(f"axis {axis}" in w and f"{full:.3f} A" in w and "2 A" in w for w in lines), run.err
    assert any("outside the supplies' limits" in w for w in lines), run.err
    # flagged, never clipped (README "Current tables"): a row asking more than 2 A keeps its current
    over = [r for r in doc["rows"] if any(abs(r["setpoint_A"][a]) > 2.0 for a in "xyz")]
    assert over, "no row beyond the weaker supply: the check below would be empty"
    for r in over:
        assert r["within_limits"] is False
        assert any("over 2 A" in p for a in "xyz" for p in r["problems"][a])
    for r in doc["rows"]:
        if all(abs(r["setpoint_A"][a]) <= 2.0 for a in "xyz") and r["within_limits"]:
            assert not any(r["problems"][a] for a in "xyz")
    # the readable table marks the same rows, the SCPI script comments them out
    table = run_cli("setpoints", demo_design, site)
    for r in over:
        row = next(line for line in table.out.splitlines() if line.startswith(r["label"] + " "))
        assert "OUTSIDE" in row
    scpi = run_cli("setpoints", demo_design, site, "--format", "scpi").out
    for r in over:
        block = scpi.split(f"# row {r['label']}:", 1)[1].split("\n\n", 1)[0]
        assert "# OUTSIDE LIMITS" in block
        assert not any(line.startswith("CURR") for line in block.splitlines())


def test_winding_hotter_than_the_site_allows_is_flagged(run_cli, demo_design, tmp_path):
    site = tmp_path / "cool.toml"
    site.write_text(edited(("max_winding_temperature_C = 60", "max_winding_temperature_C = 24")), encoding="utf-8")
    run, doc = _setpoints_json(run_cli, demo_design, site, tmp_path)
    hot = [r for r in doc["rows"] if any((r["winding_temperature_C"][a] or 0) > 24.0 for a in "xyz")]
    assert hot, "no row warmer than 24 C: the premise of the test failed"
    for r in hot:
        assert r["within_limits"] is False
        assert any("over 24 C" in p for a in "xyz" for p in r["problems"][a])
    assert any("outside the supplies' limits" in w for w in warnings_of(run)), run.err
    # the same design at its own site (60 C limit): no row is flagged
    run, own = _setpoints_json(run_cli, demo_design, SITES / "smallsat-lab.toml", tmp_path, "own.json")
    assert all(r["within_limits"] for r in own["rows"]) and run.err == "", run.err


SMALL_ROOM = (("length_m = 5.2", "length_m = 2.0"), ("width_m = 4.3", "width_m = 2.0"),
              ("height_m = 3.0", "height_m = 2.0"), ("clearance_m = 0.3", "clearance_m = 0.1"))


def test_cage_that_does_not_fit_the_room_warns(run_cli, demo_design, tmp_path):
    site = tmp_path / "small.toml"
    site.write_text(edited(*SMALL_ROOM), encoding="utf-8")
    envelope = json.loads(demo_design.read_text(encoding="utf-8"))["envelope_m"]
    assert max(envelope) > 1.8  # the premise: the demo cage is bigger than 2.0 m less 2 x 0.1 m
    run = run_cli("setpoints", demo_design, site)
    assert run.code == 0, run
    fit = [w for w in warnings_of(run) if "does not fit" in w]
    assert len(fit) == 1 and "1.80 x 1.80 x 1.80 m" in fit[0], run.err
    # at its own site the cage fits and nothing is said
    own = run_cli("setpoints", demo_design, SITES / "smallsat-lab.toml")
    assert "does not fit" not in own.err


def test_room_check_uses_the_pairs_not_only_the_recorded_envelope(run_cli, demo_design, tmp_path):
    site = tmp_path / "small.toml"
    site.write_text(edited(*SMALL_ROOM), encoding="utf-8")
    obj = json.loads(demo_design.read_text(encoding="utf-8"))
    obj.pop("envelope_m")
    bare = tmp_path / "no-envelope.json"
    bare.write_text(json.dumps(obj), encoding="utf-8")
    run = run_cli("setpoints", bare, site)
    assert run.code == 0 and "does not fit" in run.err, run


# ----------------------------------------------------------------------------- planner warnings and cautions

def _design(run_cli, tmp_path, *pairs):
    # least copper: the fewest turns that reach the field, so high currents (the least-power
    # design fills the channel and runs cool)
    site = tmp_path / "site.toml"
    # and no field-step limit, which would ask for more turns and so less current
    site.write_text(edited(*pairs, ("max_field_step_nT = 50", "")), encoding="utf-8")
    run = run_cli("design", site, "--system", "pair", "--out", tmp_path / "d.json", "--minimise", "mass")
    assert run.code == 0, run
    return run


THIN_WIRE = ((WIRES, 'wires = ["AWG 22"]'), ("max_winding_temperature_C = 60", "max_winding_temperature_C = 200"),
             ("max_current_A = 5", "max_current_A = 2.5"), ("max_voltage_V = 30", "max_voltage_V = 1000"))


def test_high_current_density_is_warned(run_cli, tmp_path):
    """Common practice: about 3 A/mm^2 is the limit for air-cooled windings; above it cage warns."""
    run = _design(run_cli, tmp_path, *THIN_WIRE)
    density = [float(v) for v in table_cells(run, "current density")[:3]]
    assert max(density) > 3.0, density  # the premise: AWG 22 (0.33 mm^2) at >= 1.25 A
    lines = warnings_of(run)
    for axis, j in zip("xyz", density):
        said = [w for w in lines if f"axis {axis}: current density" in w]
        assert bool(said) == (j > 3.0), (axis, j, run.err)
    # copper area of AWG 22 from ASTM B258 (d = 0.127 mm x 92^((36 - 22) / 39)), against the printed density
    d_mm = 0.127 * 92 ** ((36 - 22) / 39)
    area = 3.141592653589793 * d_mm ** 2 / 4
    currents = [float(v) for v in table_cells(run, "full-range current")[:3]]
    for i, j in zip(currents, density):
        assert j == pytest.approx(i / area, abs=0.01)


def test_demo_design_has_no_density_or_caution_lines(run_cli, tmp_path):
    """The control case: cool, low-voltage windings print no cautions (so the checks above can fail)."""
    run = run_cli("design", SITES / "smallsat-lab.toml", "--out", tmp_path / "d.json")
    assert run.code == 0, run
    assert max(float(v) for v in table_cells(run, "current density")[:3]) < 3.0
    assert "current density" not in run.err and "caution" not in run.err


def test_high_voltage_gives_the_voltage_caution(run_cli, tmp_path):
    run = _design(run_cli, tmp_path, *THIN_WIRE)
    volts = [float(v) for v in table_cells(run, "voltage at full range")[:3]]
    assert max(volts) > 50.0, volts  # the premise
    cautions = [w for w in warnings_of(run) if "caution" in w]
    assert any("50 V" in w and "electrical codes" in w for w in cautions), run.err


def test_hot_winding_gives_the_heating_caution(run_cli, tmp_path):
    """A small frame channel and AWG 16 near 5 A: the winding runs well above 50 C (but under 48 V)."""
    run = _design(run_cli, tmp_path, (WIRES, 'wires = ["AWG 16"]'),
                  ("max_winding_temperature_C = 60", "max_winding_temperature_C = 100"),
                  ("frame_width_m = 0.04", "frame_width_m = 0.012"), ("frame_depth_m = 0.04", "frame_depth_m = 0.012"),
                  ("max_voltage_V = 30", "max_voltage_V = 48"), ("max_current_A = 5", "max_current_A = 10"))
    temps = [float(v) for v in table_cells(run, "winding temperature")[:3]]
    volts = [float(v) for v in table_cells(run, "voltage at full range")[:3]]
    assert max(temps) > 50.0 and max(volts) < 50.0, (temps, volts)
    cautions = [w for w in warnings_of(run) if w.startswith("caution: ")]  # one plain prefix per line
    assert any("hot" in w and "temperature" in w for w in cautions), run.err
    assert not any("50 V" in w for w in cautions), run.err


def test_plan_warnings_directly():
    """cage.optimise.plan_warnings on constructed axes: each threshold on both sides."""
    from types import SimpleNamespace as NS

    from cage.optimise import plan_warnings

    inp = NS(max_winding_temperature_C=60.0)

    def axis(name, density, temp, volts, bipolar=True):
        return NS(pair=NS(axis=name), supply=NS(bipolar=bipolar), drive=NS(voltage_V=volts),
                  electrics=NS(current_density_A_per_mm2=density, current_density_high=density > 3.0,
                               winding_temperature_C=temp))

    quiet = plan_warnings([axis("x", 2.9, 54.0, 49.0)], inp)
    assert quiet == []
    loud = plan_warnings([axis("y", 3.5, 57.0, -60.0, bipolar=False)], inp)
    text = " | ".join(loud)
    assert "axis y: current density 3.5 A/mm^2" in text
    assert "57 C" in text and "60 C limit" in text
    assert "60 V" in text  # the size of a negative voltage
    assert "unipolar" in text and "polarity switch" in text


# ----------------------------------------------------------------------------- sequences

def test_sphere_beyond_the_supplies_warns(run_cli, demo_design):
    run = run_cli("sequence", demo_design, SITES / "smallsat-lab.toml", "--sphere", "6", "--magnitude-uT", "400")
    assert run.code == 0, run
    assert any("outside the supplies' limits" in w for w in warnings_of(run)), run.err
    assert "OUTSIDE" in run.out


# ----------------------------------------------------------------------------- the README's cautions

def test_readme_has_the_cautions():
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    assert "## Cautions" in text
    section = text.split("## Cautions", 1)[1].split("\n## ", 1)[0]
    for topic in ("Coil heating", "Supply voltages", "Strong fields", "electrical codes", "pacemakers",
                  "snubber", "emergency stop"):
        assert topic in section, topic
    # the extrapolation past the predictive span is documented where the model's limits are
    assert re.search(r"predictive span \(2030\)", text)


def test_winding_pack_uniformity_warning_both_sides():
    # The warning names an axis whose real winding pack misses the tolerance, and only then.
    from types import SimpleNamespace

    from cage.optimise import plan_warnings

    axis = SimpleNamespace(pair=SimpleNamespace(axis="z"), supply=SimpleNamespace(bipolar=True),
                           electrics=SimpleNamespace(current_density_high=False, winding_temperature_C=25.0,
                                                     current_density_A_per_mm2=1.0),
                           drive=SimpleNamespace(voltage_V=10.0))
    inp = SimpleNamespace(uniformity=0.001, max_winding_temperature_C=60.0)
    over = plan_warnings([axis], inp, [SimpleNamespace(box_deviation_pack=0.00101)])
    under = plan_warnings([axis], inp, [SimpleNamespace(box_deviation_pack=0.00099)])
    assert any("winding pack" in w and "axis z" in w for w in over)
    assert not any("winding pack" in w for w in under)
