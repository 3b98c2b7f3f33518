"""Bad site files and flags: one plain line naming the problem and where, exit 2, no traceback.

The expectations are the site-file rules in the README (keys, ranges, types).
"""
from __future__ import annotations

import pytest

from conftest import SITES, assert_one_line_error

GOOD = """
name = "t"
date = 2026-12-01
[location]
latitude_deg = 52.1
longitude_deg = -0.5
altitude_m = 60
[orientation]
heading_deg = 15.0
heading_reference = "true"
[room]
length_m = 5.0
width_m = 4.0
height_m = 3.0
clearance_m = 0.3
[requirement]
test_volume_m = [0.3, 0.3, 0.3]
uniformity = 0.001
extra_field_uT = [100, 100, 100]
shape = "square"
[coil]
frame_width_m = 0.04
frame_depth_m = 0.04
max_winding_temperature_C = 60
ambient_temperature_C = 22
wires = ["AWG 14", "AWG 16", "1.5 mm"]
[[supply]]
axis = "any"
max_voltage_V = 30
max_current_A = 5
resolution_A = 0.001
bipolar = true
"""

# (label, text transform, fragments the one-line message must contain)
CASES = [
    ("toml syntax", lambda s: s.replace("latitude_deg = 52.1", "latitude_deg = = 52.1"), ["TOML syntax error", "line"]),
    ("unknown key suggests", lambda s: s.replace("latitude_deg = 52.1", "latitude_dge = 52.1"),
     ["location.latitude_dge", "location.latitude_deg"]),
    ("unknown top key", lambda s: s + "\n[rooom]\nlength_m = 1\n", ["rooom", "room"]),
    ("missing location table", lambda s: s.replace("[location]", "[locationx]"), ["locationx"]),
    ("missing latitude", lambda s: s.replace("latitude_deg = 52.1\n", ""), ["location.latitude_deg", "missing"]),
    ("latitude beyond 90", lambda s: s.replace("52.1", "91.0"), ["location.latitude_deg", "-90", "91"]),
    ("longitude beyond 360", lambda s: s.replace("-0.5", "400"), ["location.longitude_deg"]),
    ("altitude absurd", lambda s: s.replace("altitude_m = 60", "altitude_m = 1e7"), ["location.altitude_m"]),
    ("text latitude", lambda s: s.replace("52.1", '"north"'), ["location.latitude_deg", "number"]),
    ("nan latitude", lambda s: s.replace("52.1", "nan"), ["location.latitude_deg", "finite"]),
    ("inf room", lambda s: s.replace("length_m = 5.0", "length_m = inf"), ["room.length_m", "finite"]),
    ("negative room", lambda s: s.replace("width_m = 4.0", "width_m = -4.0"), ["room.width_m"]),
    ("impossible date", lambda s: s.replace("date = 2026-12-01", 'date = "2026-02-30"'), ["date"]),
    ("bad heading reference", lambda s: s.replace('"true"', '"grid"'), ["orientation.heading_reference", "magnetic"]),
    ("bool as number", lambda s: s.replace("uniformity = 0.001", "uniformity = true"), ["requirement.uniformity"]),
    ("uniformity zero", lambda s: s.replace("uniformity = 0.001", "uniformity = 0"), ["requirement.uniformity"]),
    ("test volume two numbers", lambda s: s.replace("[0.3, 0.3, 0.3]", "[0.3, 0.3]"), ["requirement.test_volume_m"]),
    ("test volume bigger than room", lambda s: s.replace("[0.3, 0.3, 0.3]", "[0.3, 0.3, 2.9]"),
     ["requirement.test_volume_m[2]", "room"]),
    ("negative extra field", lambda s: s.replace("[100, 100, 100]", "[100, -1, 100]"), ["requirement.extra_field_uT[1]"]),
    ("bad shape", lambda s: s.replace('shape = "square"', 'shape = "hexagon"'), ["requirement.shape"]),
    ("zero frame", lambda s: s.replace("frame_width_m = 0.04", "frame_width_m = 0"), ["coil.frame_width_m"]),
    ("winding limit below ambient", lambda s: s.replace("max_winding_temperature_C = 60", "max_winding_temperature_C = 20"),
     ["coil.max_winding_temperature_C"]),
    ("wires not list", lambda s: s.replace('wires = ["AWG 14", "AWG 16", "1.5 mm"]', "wires = 14"), ["coil.wires"]),
    ("supply zero voltage", lambda s: s.replace("max_voltage_V = 30", "max_voltage_V = 0"), ["supply[0].max_voltage_V"]),
    ("supply bad axis", lambda s: s.replace('axis = "any"', 'axis = "w"'), ["supply[0].axis"]),
    ("supply unknown key", lambda s: s.replace("bipolar = true", "bipolr = true"), ["supply[0].bipolr", "bipolar"]),
    ("clearance fills room", lambda s: s.replace("clearance_m = 0.3", "clearance_m = 2.0"), ["room.clearance_m"]),
    ("measured two values", lambda s: s + "\n[measured]\nfield_nT = [1.0, 2.0]\n", ["measured.field_nT"]),
]


@pytest.mark.parametrize("label,edit,fragments", CASES, ids=[c[0] for c in CASES])
def test_bad_site_file(tmp_path, run_cli, label, edit, fragments):
    path = tmp_path / "site.toml"
    path.write_text(edit(GOOD))
    run = run_cli("field", path)
    assert_one_line_error(run, str(path), *fragments)


def test_good_site_reads(tmp_path, run_cli):
    path = tmp_path / "site.toml"
    path.write_text(GOOD)
    run = run_cli("field", path)
    assert run.code == 0, run


def test_missing_file(tmp_path, run_cli):
    assert_one_line_error(run_cli("field", tmp_path / "nope.toml"), "nope.toml", "no such file", "site file")


def test_folder_instead_of_file(tmp_path, run_cli):
    assert_one_line_error(run_cli("field", tmp_path), "folder")


def test_binary_file(tmp_path, run_cli):
    path = tmp_path / "site.toml"
    path.write_bytes(b"\xff\xfe\x00garbage")
    assert_one_line_error(run_cli("field", path), "UTF-8")


@pytest.mark.parametrize("args,fragment", [
    (["--lat", "95", "--lon", "0"], "latitude_deg"),
    (["--lat", "45", "--lon", "500"], "longitude_deg"),
    (["--lat", "45", "--lon", "0", "--date", "1850-01-01"], "1900"),
    (["--lat", "45", "--lon", "0", "--date", "2040-01-01"], "2035"),
    (["--lat", "45", "--lon", "0", "--date", "yesterday"], "--date"),
    (["--lat", "45", "--lon", "0", "--alt-m", "-5000"], "altitude_m"),
    (["--lat", "45"], "--lon"),
])
def test_bad_flags(run_cli, args, fragment):
    assert_one_line_error(run_cli("field", *args), fragment)


def test_subprocess_has_no_traceback(tmp_path):
    # The real entry point, as a user runs it.
    import subprocess
    import sys

    path = tmp_path / "site.toml"
    path.write_text(GOOD.replace("52.1", "91"))
    proc = subprocess.run([sys.executable, "-m", "cage", "field", str(path)], capture_output=True, text=True)
    assert proc.returncode == 2
    assert "Traceback" not in proc.stderr
    assert proc.stderr.count("\n") == 1 and "latitude_deg" in proc.stderr


def test_demo_sites_read(run_cli):
    for site in sorted(SITES.glob("*.toml")):
        run = run_cli("field", site, "--json")
        assert run.code == 0, (site, run)
