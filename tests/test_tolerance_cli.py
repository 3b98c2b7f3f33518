"""cage tolerance on the command line: JSON keys, repeatability with --seed, survey, bad input."""
import json

import numpy as np
import pytest

from conftest import SITES, assert_one_line_error


@pytest.fixture(scope="module")
def design_path(tmp_path_factory):
    from cage.cli import main

    path = tmp_path_factory.mktemp("tol") / "design.json"
    with pytest.raises(SystemExit) as exc:
        main(["design", str(SITES / "smallsat-lab.toml"), "--out", str(path)])
    assert exc.value.code == 0
    return path


@pytest.fixture(scope="module")
def survey_site(tmp_path_factory):
    # The demo site plus an invented survey at the 8 corners of a 0.6 m cube and the centre, in a
    # field with a known gradient (symmetric, traceless; nT/m).
    g = np.array([[10.0, 4.0, 0.0], [4.0, -6.0, 2.0], [0.0, 2.0, -4.0]])
    b0 = np.array([20000.0, 1000.0, 40000.0])
    pts = [[sx * 0.3, sy * 0.3, sz * 0.3] for sx in (-1, 1) for sy in (-1, 1) for sz in (-1, 1)] + [[0, 0, 0]]
    fields = [list(b0 + g @ np.array(p)) for p in pts]
    text = (SITES / "smallsat-lab.toml").read_text()
    text += ("\n[measured]\nfield_nT = [20000.0, 1000.0, 40000.0]\n"
             f"points_m = {json.dumps(pts)}\nfields_nT = {json.dumps(fields)}\n")
    path = tmp_path_factory.mktemp("tol") / "site.toml"
    path.write_text(text)
    return path, g


def test_json_is_repeatable_and_has_the_yield(run_cli, design_path, survey_site):
    site, g = survey_site
    args = ("tolerance", design_path, site, "--samples", "60", "--spec-samples", "40", "--seed", "7", "--json",
            "--tilt-deg", "0.05", "--turns", "0")
    a = run_cli(*args)
    assert a.code == 0, a
    b = run_cli(*args)
    doc = json.loads(a.out)
    assert a.out == b.out
    assert 0.0 <= doc["yield"] <= 1.0
    for axis in "xyz":
        ax = doc["axes"][axis]
        assert 0.0 <= ax["yield"] <= 1.0
        p = ax["uniformity_percentiles"]
        assert p["p5"] <= p["p50"] <= p["p95"] <= p["p99"]
        assert doc["yield"] <= ax["yield"]
    assert doc["build_errors_sigma"]["tilt_deg"] == pytest.approx(0.05)
    np.testing.assert_allclose(doc["gradient"]["gradient_nT_per_m"], g, atol=1e-6)
    names = [t["term"] for t in doc["error_budget"]["as_built"]["terms"]]
    assert "ambient gradient" in names and "secular drift" in names
    assert {t["source"] for t in doc["tolerance_spec"]["limits"]} == {
        "position", "tilt", "size", "turns", "orthogonality", "imbalance"}
    c = json.loads(run_cli(*args[:-4], "--seed", "8", "--json", "--tilt-deg", "0.05", "--turns", "0").out)
    assert c["axes"]["x"]["uniformity_percentiles"] != doc["axes"]["x"]["uniformity_percentiles"]


def test_text_and_plot(run_cli, design_path, tmp_path):
    png = tmp_path / "spread.png"
    run = run_cli("tolerance", design_path, SITES / "smallsat-lab.toml", "--samples", "40", "--spec-samples",
                  "30", "--seed", "1", "--plot", png)
    assert run.code == 0, run
    assert "Yield" in run.out and "Error budget" in run.out
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


@pytest.mark.parametrize("flag,value,fragment", [
    ("--tilt-deg", "-1", "--tilt-deg"),
    ("--samples", "1", "--samples"),
    ("--yield", "95", "--yield"),
    ("--imbalance", "2", "--imbalance"),
    ("--valid-until", "2020-01-01", "--valid-until"),
])
def test_bad_options_are_one_line_errors(run_cli, design_path, flag, value, fragment):
    run = run_cli("tolerance", design_path, SITES / "smallsat-lab.toml", "--samples", "20", "--spec-samples",
                  "20", "--seed", "1", flag, value)
    assert_one_line_error(run, fragment)


def test_calibration_shrinks_the_coupling_terms(run_cli, design_path, tmp_path):
    # A calibration of the built cage from 22 readings with 2 nT of reading noise: the fit's
    # standard errors replace the Monte Carlo's coupling and non-orthogonality terms.
    from cage.calibrate import fit_calibration, suggest_currents_A
    from cage.calibrationfile import save_calibration

    rng = np.random.default_rng(4)
    k = np.diag([12000.0, 11000.0, 13000.0]) + rng.normal(0, 20.0, (3, 3))
    b0 = np.array([18000.0, -900.0, 44000.0])
    currents = suggest_currents_A([4.0, 4.0, 4.0])
    fields = b0 + currents @ k.T + rng.normal(0, 2.0, (len(currents), 3))
    cal = tmp_path / "cal.json"
    save_calibration(cal, fit_calibration(currents, fields))
    run = run_cli("tolerance", design_path, SITES / "smallsat-lab.toml", "--samples", "60", "--spec-samples", "30",
                  "--seed", "3", "--json", "--calibration", cal)
    assert run.code == 0, run
    eb = json.loads(run.out)["error_budget"]
    before = {t["term"]: t["nT"] for t in eb["as_built"]["terms"]}
    after = {t["term"]: t["nT"] for t in eb["calibrated"]["terms"]}
    for name in ("coupling constant", "non-orthogonality"):
        assert sum(after[name]) < 0.5 * sum(before[name]), name
        assert all(v > 0 for v in after[name])
    assert after["supply step"] == before["supply step"]
    assert eb["calibrated"]["rss_total_nT"] < eb["as_built"]["rss_total_nT"]
