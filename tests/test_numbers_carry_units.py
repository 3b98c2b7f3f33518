"""Numbers a user can trust: every number in the tables carries its unit, tables round
sensibly, files keep full precision.

Expectations: DEVELOPERS.md ("wherever a number crosses a boundary ... its unit is in its
name"), the README ("Current tables": "every numeric column name ends in its unit"; JSON
"full precision"), and the rounding the setpoint writers state (nT to 0.1, currents to the
supply's resolution). The unit check is a pragmatic scan: each number printed in a table line
must be followed (after any list of further numbers) by a unit token on that line, or sit
under a column header that names its unit in parentheses. The CSV is read back with the
standard library's csv module and the JSON with json, independent of the program's writers.
"""
from __future__ import annotations

import csv
import io
import json
import math
import re
from decimal import Decimal

import pytest

from conftest import SITES, csv_body

SITE = SITES / "smallsat-lab.toml"
BASE = SITE.read_text(encoding="utf-8")

UNITS = {"ppm", "nT", "uT", "mT", "nT/yr", "nT/year", "deg", "m", "mm", "A", "mA", "V", "W", "ohm", "mH", "H", "ms", "s",
         "uT/A", "nT/A", "uT/s", "%", "C", "kg", "A/mm^2", "Hz", "d", "days"}
NUMBER = re.compile(r"(?<![\w.^/])[-+]?\d[\d,]*(?:\.\d+)?(?:e[-+]?\d+)?(?![\w.])")
# Names and dates that hold digits but are not quantities.
NOT_QUANTITIES = [re.compile(p) for p in (r"\d{4}-\d{2}-\d{2}", r"IGRF-\d+", r"WGS84", r"AWG \d+")]
HEADER_UNIT = re.compile(r"\(([^()]+)\)")


def _scrub(line: str, names) -> str:
    for name in names:
        line = line.replace(name, " " * len(name))
    for pattern in NOT_QUANTITIES:
        line = pattern.sub(lambda m: " " * len(m.group()), line)
    return line


def _inline_unit(line: str, end: int) -> bool:
    """After the number ending at ``end``: skip further numbers and separators, then a unit?"""
    rest = line[end:]
    while True:
        m = re.match(r"\s*(?:,|x(?=\s))?\s*", rest)
        rest = rest[m.end():]
        n = NUMBER.match(rest)
        if n is None:
            break
        rest = rest[n.end():]
    token = re.match(r"(\S+)", rest)
    return bool(token) and token.group(1).rstrip(",:;)") in UNITS


def unitless_numbers(text: str, names=()) -> list[str]:
    """Numbers in ``text`` with neither an inline unit nor a column header naming one."""
    bad = []
    header = None  # (line, [(end column of each "(unit)", unit)])
    for raw in text.splitlines():
        line = _scrub(raw, names)
        units = [(m.end(), m.group(1)) for m in HEADER_UNIT.finditer(line) if m.group(1) in UNITS]
        if len(units) >= 2 and not NUMBER.search(HEADER_UNIT.sub("", line)):
            header = units
            continue
        if not line.strip():
            header = None
            continue
        if line.lstrip().startswith("turns per coil"):
            continue  # a count; its unit, turns, is the row's name
        cells: dict = {}  # header column (its "(unit)" end) -> the numbers under it
        for m in NUMBER.finditer(line):
            if _inline_unit(line, m.end()):
                continue
            column = None if header is None else next((end for end, _ in header if end >= m.end()), None)
            if column is None:
                bad.append(f"{m.group()!r} in {raw.strip()!r}")
            else:
                cells.setdefault(column, []).append(m)
        for end, numbers in cells.items():
            # right-aligned under its header, and several numbers in one column only as a list "a, b, c"
            joined = all(re.fullmatch(r"\s*,\s*", line[a.end():b.start()]) for a, b in zip(numbers, numbers[1:]))
            if numbers[-1].end() != end or not joined:
                bad += [f"{n.group()!r} in {raw.strip()!r}" for n in numbers]
    return bad


def test_the_scan_catches_a_bare_number():
    """The checker itself: it must object to a number with no unit (or it could never fail)."""
    assert unitless_numbers("  total      49,331.5") == ["'49,331.5' in 'total      49,331.5'"]
    assert unitless_numbers("  total      49,331.5 nT") == []
    assert unitless_numbers("envelope 2.1 x 2.0 x 2.2 m") == []
    assert unitless_numbers("    I (A)    V (V)\n    1.000     2.00\n\n  3.0") == ["'3.0' in '3.0'"]
    assert unitless_numbers("    I (A)    V (V)\n    1.000     2.00   7.5") == ["'7.5' in '1.000     2.00   7.5'"]
    # a column whose header lost its unit: its number falls under the next column and is refused
    assert unitless_numbers("  I x (A)    I y  I z (A)\n    1.000    2.000  3.000") == \
        ["'2.000' in '1.000    2.000  3.000'", "'3.000' in '1.000    2.000  3.000'"]
    assert unitless_numbers("  I x (A)  I z (A)\n    1.000    3.000") == []


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    from cage.cli import main

    d = tmp_path_factory.mktemp("units")
    design = d / "design.json"
    try:
        main(["design", str(SITE), "--out", str(design)])
    except SystemExit as exc:
        assert exc.code in (0, None)
    return design


def _site_name(path) -> str:
    from cage.sitefile import load_site

    return load_site(path).name


def test_field_table_numbers_carry_units(run_cli):
    for site in sorted(SITES.glob("*.toml")):
        run = run_cli("field", site)
        assert run.code == 0, run
        assert unitless_numbers(run.out, [_site_name(site)]) == [], site


def test_field_table_rounds_nT_to_a_tenth_and_json_keeps_full_precision(run_cli):
    table = run_cli("field", SITE).out
    doc = json.loads(run_cli("field", SITE, "--json").out)
    shown = {}
    for key in ("north", "east", "down", "horizontal", "total"):
        m = re.search(rf"^\s+{key}\s+(-?[\d,]+\.\d+) nT", table, flags=re.M)
        assert m, key
        text = m.group(1).replace(",", "")
        assert len(text.split(".")[1]) == 1, text  # nT to 0.1
        shown[key] = float(text)
        assert abs(doc[f"{key}_nT"] - shown[key]) <= 0.05 + 1e-9
    # full precision in JSON: not the table's rounded value (a chance match of all five is ~1e-10)
    assert any(doc[f"{k}_nT"] != shown[k] for k in shown)
    assert any(len(repr(doc[f"{k}_nT"]).split(".")[1]) > 3 for k in shown)
    # the angles: degrees to 0.01 in the table
    m = re.search(r"declination\s+(-?\d+\.\d+) deg", table)
    assert m and len(m.group(1).split(".")[1]) == 2
    assert abs(doc["declination_deg"] - float(m.group(1))) <= 0.005 + 1e-12


def test_design_table_numbers_carry_units(run_cli, tmp_path):
    run = run_cli("design", SITE, "--out", tmp_path / "d.json")
    assert run.code == 0, run
    text = "\n".join(line for line in run.out.splitlines() if not line.startswith("Wrote "))
    assert unitless_numbers(text, [_site_name(SITE)]) == []
    # every row of the per-axis table names a unit, except the rows that hold names or a count
    for line in run.out.splitlines()[2:]:
        if not line.strip() or line.startswith(("Envelope", "Closest", "Room", "Total", "Wrote")):
            break
        label = re.split(r"\s{2,}", line.strip())[0]
        if label in ("coil system", "shape", "wire", "turns per coil", "supply limits"):
            continue
        assert line.rstrip().split()[-1] in UNITS, line


def test_design_file_keeps_full_precision(run_cli, tmp_path):
    out = tmp_path / "d.json"
    run = run_cli("design", SITE, "--out", out)
    doc = json.loads(out.read_text(encoding="utf-8"))
    row = next(line for line in run.out.splitlines() if line.startswith("full-range current"))
    shown = [float(v) for v in row.split()[2:5]]
    stored = [doc["axes"][a]["max_current_A"] for a in "xyz"]
    for s, v in zip(shown, stored):
        assert abs(s - v) <= 0.0005 + 1e-12  # the table: 3 decimals
    assert any(len(repr(v).split(".")[1]) > 6 for v in stored)  # the file: full float precision


def test_setpoint_table_numbers_carry_units(run_cli, demo):
    run = run_cli("setpoints", demo, SITE)
    assert run.code == 0, run
    assert unitless_numbers(run.out, [_site_name(SITE)]) == []


def test_compare_table_numbers_carry_units(run_cli):
    run = run_cli("compare", SITE, "--sizes", "2.2,2.4")
    assert run.code == 0, run
    assert unitless_numbers(run.out, [_site_name(SITE)]) == []


def _decimals(text: str) -> int:
    return len(text.split(".")[1]) if "." in text else 0


@pytest.mark.parametrize("resolution, decimals", [("0.001", 3), ("0.0005", 4), ("0.01", 2), ("0.1", 1)])
def test_setpoint_currents_round_to_the_supply_resolution(run_cli, demo, tmp_path, resolution, decimals):
    site = tmp_path / "site.toml"
    site.write_text(BASE.replace("resolution_A = 0.001", f"resolution_A = {resolution}"), encoding="utf-8")
    table = run_cli("setpoints", demo, site)
    assert table.code == 0, table
    out = tmp_path / "t.json"
    assert run_cli("setpoints", demo, site, "--format", "json", "--out", out).code == 0
    doc = json.loads(out.read_text(encoding="utf-8"))
    step = Decimal(resolution)
    lines = {line.split()[0]: line for line in table.out.splitlines() if line[:1] in "n+-" and "," in line}
    assert len(lines) == len(doc["rows"]) == 7
    for row in doc["rows"]:
        cells = re.findall(r"-?\d+\.\d+", lines[row["label"]].split(",")[-1])[1:4]  # I x, I y, I z
        for a, cell in zip("xyz", cells):
            assert _decimals(cell) == decimals, (row["label"], cell)
            sp = row["setpoint_A"][a]
            assert float(cell) == pytest.approx(sp, abs=1e-12)  # the table shows the setpoint itself
            assert Decimal(repr(sp)).quantize(step) == Decimal(cell)  # a whole number of steps
            # the unrounded current is kept in JSON, within half a step of the setpoint
            assert abs(row["current_A"][a] - sp) <= float(step) / 2 + 1e-12
        # the rounding error the table shows, nT to 0.1
        shown = lines[row["label"]].split()[-2]
        assert _decimals(shown) == 1 and abs(float(shown) - row["field_error_nT"]) <= 0.05 + 1e-9
    # JSON keeps the unrounded currents: at least one differs from its setpoint
    assert any(r["current_A"][a] != r["setpoint_A"][a] for r in doc["rows"] for a in "xyz")


def test_setpoint_csv_columns_end_in_their_units(run_cli, demo):
    """README: every numeric column name ends in its unit (read back with the csv module)."""
    run = run_cli("setpoints", demo, SITE, "--format", "csv")
    rows = list(csv.DictReader(io.StringIO(csv_body(run.out))))
    assert rows
    unit_suffix = re.compile(r"_(A|V|W|nT|uT|C|ohm|s|m)$")
    numeric = set()
    for col in rows[0]:
        values = [r[col] for r in rows if r[col] != ""]
        try:
            [float(v) for v in values]
        except ValueError:
            continue
        if values:
            numeric.add(col)
    assert {"setpoint_x_A", "voltage_z_V", "rounding_error_y_nT", "total_power_W"} <= numeric
    for col in numeric:
        assert unit_suffix.search(col), col
    # the CSV rounds for people: nT to 0.1, setpoints to the resolution (1 mA for the demo supply)
    for r in rows:
        for a in "xyz":
            assert _decimals(r[f"setpoint_{a}_A"]) == 3
            assert _decimals(r[f"rounding_error_{a}_nT"]) == 1
        assert _decimals(r["target_x_nT"]) == 1


def test_setpoint_json_keeps_full_precision_of_targets_and_field(run_cli, demo, tmp_path):
    """A user target of 12.3456 uT: the table rounds it for reading, the JSON keeps every digit."""
    targets = tmp_path / "t.csv"
    targets.write_text("label,x_uT,y_uT,z_uT\nfine,12.3456,-0.0012,7\n", encoding="utf-8")
    out = tmp_path / "t.json"
    assert run_cli("setpoints", demo, SITE, "--targets", targets, "--format", "json", "--out", out).code == 0
    doc = json.loads(out.read_text(encoding="utf-8"))
    row = next(r for r in doc["rows"] if r["label"] == "fine")
    assert row["target_cage_nT"][0] == pytest.approx(12345.6, abs=1e-9)
    assert row["target_cage_nT"][1] == pytest.approx(-1.2, abs=1e-12)
    assert all(math.isfinite(v) for v in doc["ambient_cage_nT"])
    assert any(len(repr(v).split(".")[1]) > 2 for v in doc["ambient_cage_nT"])
