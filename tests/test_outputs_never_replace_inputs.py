"""No output option may name one of its command's inputs.

The expectation is the README's "Outputs and safety of files": an output that names one of the
command's own inputs is refused in one line (exit 2) and the input is left byte for byte as it
was. Every command that writes files is tried with each of its output options pointed at each
kind of input it reads.
"""
from __future__ import annotations

import shutil

import pytest

from conftest import SITES, assert_one_line_error


@pytest.fixture()
def inputs(tmp_path, smallsat_design):
    site = tmp_path / "site.toml"
    shutil.copy(SITES / "smallsat-lab.toml", site)
    design = tmp_path / "design.json"
    shutil.copy(smallsat_design, design)
    return {"site": site, "design": design}


def _unchanged(run, path, before: bytes):
    assert_one_line_error(run, "is one of this command's inputs")
    assert path.read_bytes() == before


@pytest.mark.parametrize("victim", ["site", "design"])
def test_tolerance_plot_never_replaces_an_input(run_cli, inputs, victim):
    path = inputs[victim]
    before = path.read_bytes()
    run = run_cli("tolerance", inputs["design"], inputs["site"], "--samples", "20", "--spec-samples", "20",
                  "--seed", "1", "--plot", path)
    _unchanged(run, path, before)


def test_build_out_never_replaces_the_design(run_cli, inputs):
    path = inputs["design"]
    before = path.read_bytes()
    _unchanged(run_cli("build", path, "--out", path), path, before)


def test_build_figures_never_replace_the_design(run_cli, tmp_path, smallsat_design):
    # a design file that happens to carry the name of one of the connection figures
    folder = tmp_path / "figs"
    folder.mkdir()
    path = folder / "connection_x.png"
    shutil.copy(smallsat_design, path)
    before = path.read_bytes()
    _unchanged(run_cli("build", path, "--figures", folder), path, before)
