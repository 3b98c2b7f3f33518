"""Every figure file says what it was made from: its PNG text ("Software", "Source"), read back with
Pillow (an independent PNG decoder), holds this tool's version (importlib.metadata) and the
provenance of the document it shows, the same record its JSON carries. The standalone plot of
`cage tolerance` and its JSON now carry a provenance, with the re-use rules of the other
commands (the design's heading, a warning away from the design's site)."""
from __future__ import annotations

import json
from importlib import metadata

import pytest
from PIL import Image

from conftest import SITES


def _png_text(path):
    with Image.open(path) as im:
        im.load()
        return dict(im.info)


@pytest.fixture(scope="module")
def plan_folder(tmp_path_factory):
    from conftest import cli_code

    folder = tmp_path_factory.mktemp("figprov") / "plan"
    assert cli_code("plan", SITES / "smallsat-lab.toml", "--out", folder) == 0
    return folder


def test_plan_figures_carry_the_design_provenance(plan_folder):
    design = json.loads((plan_folder / "design.json").read_text())
    site_name = design["provenance"]["site"]["name"]
    for name in ("uniformity.png", "cage_in_room.png", "axis_lines.png", "setpoints.png", "connection_x.png"):
        info = _png_text(plan_folder / name)
        assert info["Software"] == f"cage {metadata.version('cage')}", name
        assert f"site: {site_name} at" in info["Source"], name
        assert "IGRF-14" in info["Source"], name


def test_tolerance_json_and_plot_carry_provenance(tmp_path, run_cli, plan_folder):
    plot = tmp_path / "spread.png"
    run = run_cli("tolerance", plan_folder / "design.json", SITES / "smallsat-lab.toml", "--samples", "20",
                  "--spec-samples", "20", "--seed", "3", "--json", "--plot", plot)
    assert run.code == 0, run
    doc = json.loads(run.out)
    setpoints = json.loads((plan_folder / "setpoints.json").read_text())
    prov = doc["provenance"]
    assert prov["derived_from"]["design"] == setpoints["provenance"]["derived_from"]["design"]
    assert prov["heading_true_deg"] == setpoints["provenance"]["heading_true_deg"]
    assert f"design {prov['derived_from']['design']}" in _png_text(plot)["Source"]


def test_tolerance_elsewhere_keeps_the_design_heading_and_says_so(run_cli, plan_folder):
    run = run_cli("tolerance", plan_folder / "design.json", SITES / "equatorial-hall.toml", "--samples", "20",
                  "--spec-samples", "20", "--seed", "3", "--json")
    assert run.code == 0, run
    prov = json.loads(run.out)["provenance"]
    design = json.loads((plan_folder / "design.json").read_text())
    assert prov["heading_true_deg"] == pytest.approx(design["site"]["heading_true_deg"])
    assert any("planned for" in w for w in prov["warnings"]) and "planned for" in run.err


def test_tolerance_heading_option_replaces_the_design_heading(run_cli, plan_folder):
    run = run_cli("tolerance", plan_folder / "design.json", SITES / "smallsat-lab.toml", "--samples", "20",
                  "--spec-samples", "20", "--seed", "3", "--json", "--heading-deg", "100")
    assert run.code == 0, run
    prov = json.loads(run.out)["provenance"]
    assert prov["heading_true_deg"] == pytest.approx(100.0)
    assert any("100" in w for w in prov["warnings"])  # the replacement is said, as for the current tables
