"""What an orbit series and a replayed sequence say they were made from, checked against the files
themselves: SHA-256 of their bytes by hashlib (FIPS 180-4), the libraries' versions from
importlib.metadata, and numpy's CSV reader (which skips the ``#`` lines as comments).

Invented element sets only (tests/orbit_helpers.py).
"""
from __future__ import annotations

import hashlib
import io
import json
from importlib import metadata

import numpy as np
import pytest

from conftest import SITES
from orbit_helpers import make_tle

START = "2027-03-01T00:00:00"


def _sha(data: bytes) -> str:
    return "sha256:" + hashlib.sha256(data).hexdigest()[:16]


@pytest.fixture(scope="module")
def design_path(smallsat_design):
    return smallsat_design


def test_series_ends_with_what_it_was_made_from(tmp_path, run_cli):
    tle = tmp_path / "sat.tle"
    tle.write_text(make_tle(name="TEST SAT P"))
    out = tmp_path / "o.csv"
    run = run_cli("orbit", tle, "--start", START, "--duration-s", "120", "--step-s", "10", "--out", out)
    assert run.code == 0, run
    lines = out.read_text().splitlines()
    notes = [line for line in lines if line.startswith("#")]
    assert notes and lines[-len(notes):] == notes  # the notes close the file, after the data
    text = "\n".join(notes)
    assert f"from sat.tle {_sha(tle.read_bytes())}" in text
    assert "TEST SAT P" in text and "elements epoch 2027-03-01T00:00:00 UTC" in text
    assert f"{START} UTC + 120 s in steps of 10 s" in text
    assert f"ppigrf {metadata.version('ppigrf')}" in text and f"sgp4 {metadata.version('sgp4')}" in text
    data = np.loadtxt(out, delimiter=",", skiprows=1)  # '#' lines are comments to numpy
    assert data.shape == (13, 8)


def test_options_orbit_names_its_options(tmp_path, run_cli):
    out = tmp_path / "p.csv"
    run = run_cli("orbit", "--altitude-km", "500", "--inclination-deg", "45", "--start", START,
                  "--duration-s", "60", "--out", out)
    assert run.code == 0, run
    text = out.read_text()
    assert "# orbit: planned orbit;" in text
    assert "from the options --altitude-km 500.0, --inclination-deg 45.0" in text


def test_hostile_title_stays_inside_one_comment_line(tmp_path, run_cli):
    tle = tmp_path / "evil.tle"
    tle.write_text(make_tle(name="=HYPERLINK(\"x\") \x1b[2J EVIL"))
    out = tmp_path / "e.csv"
    assert run_cli("orbit", tle, "--start", START, "--duration-s", "30", "--step-s", "10", "--out", out).code == 0
    text = out.read_text()
    assert "\x1b" not in text
    for line in text.splitlines():
        assert line.startswith("#") or line[:1].isdigit() or line.startswith("t_s,"), line


def test_replayed_series_is_named_by_content(tmp_path, run_cli, design_path, monkeypatch):
    tle = tmp_path / "sat.tle"
    tle.write_text(make_tle(name="TEST SAT Q"))
    series = tmp_path / "o.csv"
    assert run_cli("orbit", tle, "--start", START, "--duration-s", "60", "--step-s", "10", "--out", series).code == 0
    site = SITES / "smallsat-lab.toml"
    run = run_cli("sequence", design_path, site, "--orbit", series, "--rate-Hz", "1", "--format", "json")
    assert run.code == 0, run
    derived = json.loads(run.out)["provenance"]["derived_from"]
    assert derived["series"] == f"o.csv {_sha(series.read_bytes())}"
    # The same file changed under the same name: a different identity.
    series.write_text(series.read_text().replace("TEST SAT Q", "TEST SAT R"))
    run = run_cli("sequence", design_path, site, "--series", series, "--rate-Hz", "1", "--format", "csv")
    assert run.code == 0, run
    assert f"series o.csv {_sha(series.read_bytes())}" in run.out
    assert _sha(series.read_bytes()) != derived["series"].split()[-1]
    # Through a pipe: the bytes read from stdin.
    piped = run_cli("orbit", tle, "--start", START, "--duration-s", "60", "--step-s", "10")
    assert piped.code == 0, piped
    monkeypatch.setattr("sys.stdin", io.StringIO(piped.out))
    run = run_cli("sequence", design_path, site, "--orbit", "-", "--rate-Hz", "1", "--format", "json")
    assert run.code == 0, run
    assert json.loads(run.out)["provenance"]["derived_from"]["series"] == f"stdin {_sha(piped.out.encode())}"


def test_sphere_sequence_has_no_series_entry(run_cli, design_path):
    run = run_cli("sequence", design_path, SITES / "smallsat-lab.toml", "--sphere", "6", "--magnitude-uT", "50",
                  "--format", "json")
    assert run.code == 0, run
    assert "series" not in json.loads(run.out)["provenance"]["derived_from"]
