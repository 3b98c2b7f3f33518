"""`cage orbit` and `cage sequence` never write over their own inputs, nor one output over the
other, checked against the files themselves: SHA-256 of their bytes by hashlib (FIPS 180-4)
before and after the refused run.

Invented element sets only (tests/orbit_helpers.py).
"""
from __future__ import annotations

import hashlib
import shutil

import pytest

from conftest import ROOT, SITES, assert_one_line_error
from orbit_helpers import make_tle

START = "2027-03-01T00:00:00"
SPAN = ("--start", START, "--duration-s", "60", "--step-s", "10")


def _sha(path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


@pytest.fixture()
def inputs(tmp_path):
    tle = tmp_path / "sat.tle"
    tle.write_text(make_tle(name="TEST SAT O"))
    quats = tmp_path / "quats.csv"
    shutil.copy(ROOT / "examples" / "demo-tumble-quaternions.csv", quats)
    return tle, quats


@pytest.mark.parametrize("option", ["--out", "--plot"])
def test_orbit_refuses_to_write_over_the_element_set(run_cli, inputs, option):
    tle, _ = inputs
    before = _sha(tle)
    run = run_cli("orbit", tle, *SPAN, option, tle)
    assert_one_line_error(run, option, "sat.tle", "inputs")
    assert _sha(tle) == before


@pytest.mark.parametrize("option", ["--out", "--plot"])
def test_orbit_refuses_to_write_over_the_quaternion_table(run_cli, inputs, option):
    tle, quats = inputs
    before = _sha(quats)
    run = run_cli("orbit", tle, *SPAN, "--attitude", "quaternions", "--quaternions", quats, option, quats)
    assert_one_line_error(run, option, "quats.csv", "inputs")
    assert _sha(quats) == before


def test_orbit_refuses_one_file_for_both_outputs(run_cli, inputs, tmp_path):
    tle, _ = inputs
    both = tmp_path / "o.csv"
    run = run_cli("orbit", tle, *SPAN, "--out", both, "--plot", tmp_path / "." / "o.csv")
    assert_one_line_error(run, "--out", "--plot", "same file")
    assert not both.exists()


def test_sequence_names_plot_and_refuses_one_file_for_both_outputs(run_cli, smallsat_design, tmp_path):
    site = tmp_path / "site.toml"
    shutil.copy(SITES / "smallsat-lab.toml", site)
    before = _sha(site)
    run = run_cli("sequence", smallsat_design, site, "--sphere", "6", "--magnitude-uT", "50", "--plot", site)
    assert_one_line_error(run, "--plot", "site.toml", "inputs")
    assert "--out" not in run.err
    assert _sha(site) == before
    both = tmp_path / "seq.csv"
    run = run_cli("sequence", smallsat_design, site, "--sphere", "6", "--magnitude-uT", "50", "--out", both,
                  "--plot", both)
    assert_one_line_error(run, "--out", "--plot", "same file")
    assert not both.exists()
