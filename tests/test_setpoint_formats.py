"""Every output format of ``cage setpoints`` parses back with an outside reader or grammar.

- CSV: read with Python's csv module (RFC 4180 dialect); every numeric column names its unit
  (``_nT``, ``_A``, ``_V``, ``_W``, ``_C``); rows are null, +x, -x, +y, -y, +z, -z, then the
  user's targets in the order of the --targets file; values agree with the JSON table to
  their printed precision.
- JSON: parsed with the json module; the documented keys are present.
- SCPI: each line is empty, a comment (``#``) or one of the commands used, in the short forms
  of the SCPI-99 standard (Vol. 2, command reference; from memory): ``INST:NSEL <1|2|3>``
  (INSTrument:NSELect), ``VOLT <NRf>`` ([SOURce:]VOLTage), ``CURR <NRf>`` ([SOURce:]CURRent),
  ``OUTP ON`` (OUTPut[:STATe] ON). Every CURR equals the row's setpoint (its size for a
  unipolar supply, which switches polarity by relay), and for rows within limits the
  voltage limit set is at least the voltage the coil needs (common practice: the compliance
  voltage must exceed I x R for the supply to hold the current).
"""
from __future__ import annotations

import csv
import io
import json
import math
import re

import pytest

from conftest import SITES, cli_code, csv_body

AXES = ("x", "y", "z")
FIXED = ["null", "+x", "-x", "+y", "-y", "+z", "-z"]
TARGETS = ("label,x_uT,y_uT,z_uT,frame\n# a comment line\n"
           "bench-a,10,-20,30,cage\nbench-b,0,55.5,0,ned\nstrong,0,0,-300,cage\n")
UNITS = ("_nT", "_A", "_V", "_W", "_C", "_s")
NUMBER = r"[+-]?\d+(?:\.\d+)?"
SCPI_COMMAND = re.compile(rf"^(INST:NSEL [123]|VOLT {NUMBER}|CURR {NUMBER}|OUTP ON|OUTP OFF|\*WAI)$")


_cli = cli_code


@pytest.fixture(scope="module")
def setup(tmp_path_factory):
    folder = tmp_path_factory.mktemp("formats")
    out = {}
    for name in ("smallsat-lab", "arctic-cal-hut"):
        path = folder / f"{name}.json"
        assert _cli("design", SITES / f"{name}.toml", "--out", path) == 0
        out[name] = path
    targets = folder / "targets.csv"
    targets.write_text(TARGETS)
    return out, targets


def _render(run_cli, design, site, targets, fmt):
    run = run_cli("setpoints", design, site, "--targets", targets, "--format", fmt)
    assert run.code == 0, run
    return run.out


@pytest.mark.parametrize("name", ["smallsat-lab", "arctic-cal-hut"])
def test_csv_parses_with_units_and_labels(run_cli, setup, name):
    designs, targets = setup
    site = SITES / f"{name}.toml"
    text = _render(run_cli, designs[name], site, targets, "csv")
    table = json.loads(_render(run_cli, designs[name], site, targets, "json"))
    rows = list(csv.DictReader(io.StringIO(csv_body(text))))
    header = list(rows[0].keys())
    assert len(set(header)) == len(header)
    for col in header:
        cells = [r[col] for r in rows if r[col] != ""]
        numeric = bool(cells) and all(_is_number(c) for c in cells)
        if numeric:
            assert col.endswith(UNITS), f"numeric column {col!r} has no unit in its name"
        else:
            # t_s and dwell_s are empty outside a sequence; polarity_* is a word
            assert col in ("label", "within_limits", "problems", "t_s", "dwell_s") or col.startswith("polarity_"), col
    # A text cell starting with + or - gets a leading apostrophe so a spreadsheet reads it as
    # text, not a formula (CSV injection guard, common practice).
    labels = [r["label"] for r in rows]
    assert labels[1:7] == ["'+x", "'-x", "'+y", "'-y", "'+z", "'-z"]
    assert [lab.removeprefix("'") for lab in labels] == FIXED + ["bench-a", "bench-b", "strong"]
    for r, j in zip(rows, table["rows"]):
        assert r["label"].removeprefix("'") == j["label"]
        assert r["within_limits"] == ("yes" if j["within_limits"] else "no")
        for k, a in enumerate(AXES):
            assert float(r[f"target_{a}_nT"]) == pytest.approx(j["target_cage_nT"][k], abs=0.051)
            assert float(r[f"setpoint_{a}_A"]) == pytest.approx(j["setpoint_A"][a], abs=1e-9)
            assert float(r[f"current_{a}_A"]) == pytest.approx(j["current_A"][a], abs=1e-3)
            assert float(r[f"voltage_{a}_V"]) == pytest.approx(j["voltage_V"][a], abs=6e-4)
        assert float(r["total_power_W"]) == pytest.approx(j["total_power_W"], abs=6e-3)


def _is_number(text: str) -> bool:
    try:
        float(text)
    except ValueError:
        return False
    return True


def test_csv_user_targets_in_cage_and_ned_frames(run_cli, setup):
    designs, targets = setup
    table = json.loads(_render(run_cli, designs["smallsat-lab"], SITES / "smallsat-lab.toml", targets, "json"))
    by_label = {r["label"]: r for r in table["rows"]}
    assert by_label["bench-a"]["target_cage_nT"] == pytest.approx([10000.0, -20000.0, 30000.0])
    assert by_label["strong"]["target_cage_nT"] == pytest.approx([0.0, 0.0, -300000.0])
    # bench-b is 55.5 uT east (NED); the smallsat cage's +x points 15 deg east of true north:
    # x = N cos 15 + E sin 15, y = -N sin 15 + E cos 15 (README frame definition).
    psi = math.radians(15.0)
    assert by_label["bench-b"]["target_cage_nT"] == pytest.approx(
        [55500.0 * math.sin(psi), 55500.0 * math.cos(psi), 0.0], abs=1e-6)


@pytest.mark.parametrize("name", ["smallsat-lab", "arctic-cal-hut"])
def test_json_has_the_documented_keys(run_cli, setup, name):
    designs, targets = setup
    table = json.loads(_render(run_cli, designs[name], SITES / f"{name}.toml", targets, "json"))
    for key in ("format", "version", "site", "date", "source", "ambient_cage_nT", "rows"):
        assert key in table, key
    assert table["format"] == "cage-setpoints" and table["version"] == 1
    assert len(table["ambient_cage_nT"]) == 3
    assert [r["label"] for r in table["rows"]] == FIXED + ["bench-a", "bench-b", "strong"]
    for r in table["rows"]:
        for key in ("label", "target_cage_nT", "current_A", "setpoint_A", "voltage_V", "power_W", "total_power_W",
                    "within_limits"):
            assert key in r, (r["label"], key)
        for key in ("current_A", "setpoint_A", "voltage_V", "power_W"):
            assert set(r[key]) == set(AXES)
        assert isinstance(r["within_limits"], bool)
        assert r["total_power_W"] == pytest.approx(sum(r["power_W"].values()))


def _scpi_blocks(text: str) -> dict:
    """{row label: {channel: {"VOLT": v, "CURR": c, "OUTP": on, "sent": bool}}}, checking the grammar."""
    blocks, label, channel = {}, None, None
    for line in text.splitlines():
        if not line.strip():
            continue
        m = re.match(r"^# row (\S+): target", line)
        if m:
            label, channel = m[1], None
            blocks[label] = {}
            continue
        if line.startswith("# end"):
            label = None
            continue
        sent = not line.startswith("#")
        body = line if sent else line[1:].strip()
        if not SCPI_COMMAND.match(body):
            assert not sent, f"not a SCPI command of the grammar: {line!r}"
            continue  # a plain comment
        if label is None:
            continue  # the preamble and the closing block: every channel off at zero
        word, _, value = body.partition(" ")
        if word == "INST:NSEL":
            channel = int(value)
            blocks[label][channel] = {"sent": sent}
        else:
            assert channel is not None, line
            assert blocks[label][channel]["sent"] == sent, line
            blocks[label][channel][word] = value
    return blocks


@pytest.mark.parametrize("name", ["smallsat-lab", "arctic-cal-hut"])
def test_scpi_grammar_and_currents(run_cli, setup, name):
    designs, targets = setup
    site = SITES / f"{name}.toml"
    text = _render(run_cli, designs[name], site, targets, "scpi")
    table = json.loads(_render(run_cli, designs[name], site, targets, "json"))
    blocks = _scpi_blocks(text)
    assert list(blocks) == [r["label"] for r in table["rows"]]
    assert not table["rows"][-1]["within_limits"]  # "strong" (-300 uT on z) is out of reach: commented out
    assert "# OUTSIDE LIMITS" in text
    for r in table["rows"]:
        block = blocks[r["label"]]
        assert sorted(block) == [1, 2, 3]  # x, y, z are channels 1, 2, 3
        for ch, a in zip((1, 2, 3), AXES):
            cmd = block[ch]
            assert set(cmd) == {"sent", "VOLT", "CURR", "OUTP"}
            assert cmd["sent"] == r["within_limits"]
            supply = table["supply_limits"][a]
            want = r["setpoint_A"][a] if supply["bipolar"] else abs(r["setpoint_A"][a])
            assert float(cmd["CURR"]) == pytest.approx(want, abs=1e-12)
            if not supply["bipolar"]:
                assert float(cmd["CURR"]) >= 0.0
            volt = float(cmd["VOLT"])
            assert 0.0 < volt <= supply["max_voltage_V"] + 1e-9
            if r["within_limits"]:
                assert volt >= abs(r["voltage_V"][a]) - 5e-4
    if name == "arctic-cal-hut":  # unipolar: negative rows need the polarity relay, said in a comment
        assert "polarity switch" in text
        assert any(v < 0 for r in table["rows"] for v in r["setpoint_A"].values())


def test_scpi_grammar_rejects_what_it_should():
    # The grammar is not a catch-all.
    for bad in ("CURR", "CURR 1,5", "VOLT abc", "INST:NSEL 4", "OUTP OFFX", "*WAIT", "SOUR:CURR 1.0", "curr 1.0"):
        assert not SCPI_COMMAND.match(bad), bad
    for good in ("CURR -0.298", "VOLT 30.000", "INST:NSEL 2", "OUTP ON"):
        assert SCPI_COMMAND.match(good), good


def test_out_file_formats_from_extension(run_cli, setup, tmp_path):
    designs, targets = setup
    for ext in ("csv", "json", "scpi"):
        out = tmp_path / f"table.{ext}"
        run = run_cli("setpoints", designs["smallsat-lab"], SITES / "smallsat-lab.toml", "--out", out)
        assert run.code == 0, run
        text = out.read_text()
        if ext == "json":
            assert json.loads(text)["format"] == "cage-setpoints"
        elif ext == "csv":
            assert list(csv.reader(io.StringIO(csv_body(text))))[0][0] == "label"
        else:
            assert _scpi_blocks(text)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["table.csv", "table.json", "table.scpi"]
