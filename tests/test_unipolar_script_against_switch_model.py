"""A unipolar SCPI script walked line by line by a simulated supply-and-switch bench.

The model: three channels, each with a selected flag, an output state (ON/OFF), a current
setpoint (>= 0: a unipolar supply sources one sign only) and a polarity relay between the
supply and the coil pair (FORWARD or REVERSE). The coil current is +setpoint (FORWARD) or
-setpoint (REVERSE) while the output is on, else 0. A technician follows the script: every
non-comment line is sent, and a comment "set the channel N polarity switch to X now" is
done by hand at that point.

Checked against the bench rules (common practice: a relay opened or closed under current
arcs, and the coil's stored energy L I^2 / 2 drives that arc):
- the relay is operated only with its channel's output OFF and setpoint 0;
- at the end of every row that is sent, the coil current of each axis has the sign and size
  of the table's signed setpoint (the field's sign is right on every row);
- at the end the outputs are off and every relay is back at FORWARD.
"""
from __future__ import annotations

import json
import re

import pytest

from conftest import SITES, cli_code

SWITCH = re.compile(r"# ([xyz]): .*set the channel ([123]) polarity switch (?:back )?to (FORWARD|REVERSE) now")
ROW = re.compile(r"# row (\S+?)(?: at t = \S+ s)?: target")


class Bench:
    def __init__(self):
        self.selected = None
        self.output = {1: False, 2: False, 3: False}
        self.setpoint = {1: 0.0, 2: 0.0, 3: 0.0}
        self.relay = {1: "FORWARD", 2: "FORWARD", 3: "FORWARD"}
        self.switch_count = 0

    def coil_current(self, ch: int) -> float:
        if not self.output[ch]:
            return 0.0
        return self.setpoint[ch] * (1.0 if self.relay[ch] == "FORWARD" else -1.0)

    def send(self, line: str) -> None:
        word, _, value = line.partition(" ")
        if word == "INST:NSEL":
            self.selected = int(value)
        elif word == "CURR":
            assert self.selected is not None
            current = float(value)
            assert current >= 0.0, f"negative current on a unipolar supply: {line}"
            self.setpoint[self.selected] = current
        elif word == "OUTP":
            self.output[self.selected] = value == "ON"
        elif word in ("VOLT", "*WAI"):
            pass
        else:
            raise AssertionError(f"unknown command {line!r}")

    def operate_switch(self, ch: int, position: str) -> None:
        # the rule under test: never under current, never with the output on
        assert not self.output[ch], f"channel {ch} switched with its output on"
        assert self.setpoint[ch] == 0.0, f"channel {ch} switched at {self.setpoint[ch]} A"
        assert self.relay[ch] != position, f"channel {ch}: needless switch to {position}"
        self.relay[ch] = position
        self.switch_count += 1


def walk(script: str, rows: dict) -> Bench:
    """Run the script on the bench; after each sent row compare the coil currents."""
    bench = Bench()
    label = None

    def close_row():
        if label is not None and rows[label]["within_limits"]:
            for ch, a in zip((1, 2, 3), "xyz"):
                want = rows[label]["setpoint_A"][a]
                assert bench.coil_current(ch) == pytest.approx(want, abs=1e-12), (label, a)

    for line in script.split("\n"):
        m = ROW.match(line)
        if m or line.startswith("# end"):
            close_row()
            label = m.group(1) if m else None
            continue
        m = SWITCH.match(line)
        if m:
            bench.operate_switch(int(m.group(2)), m.group(3))
            continue
        if line and not line.startswith("#"):
            bench.send(line)
    return bench


TARGETS = "label,x_uT,y_uT,z_uT\n" + "".join(
    f"step-{k},{s * 30},{-s * 20},{(-1) ** (k // 2) * 25}\n"
    for k, s in enumerate([1, -1, -1, 1, 0, 1, -1, 1, 1, -1])) + "far,-2000,-2000,-2000\nafter-far,20,20,20\n"


@pytest.fixture(scope="module")
def arctic(tmp_path_factory):
    folder = tmp_path_factory.mktemp("unipolar")
    design = folder / "design.json"
    assert cli_code("design", SITES / "arctic-cal-hut.toml", "--out", design) == 0
    targets = folder / "targets.csv"
    targets.write_text(TARGETS)
    return design, targets, folder


def test_unipolar_script_never_switches_under_current_and_sets_the_right_sign(run_cli, arctic):
    design, targets, folder = arctic
    site = SITES / "arctic-cal-hut.toml"
    script = folder / "table.scpi"
    assert run_cli("setpoints", design, site, "--targets", targets, "--out", script).code == 0
    doc = json.loads(run_cli("setpoints", design, site, "--targets", targets, "--format", "json").out)
    assert all(not lim["bipolar"] for lim in doc["supply_limits"].values())
    rows = {r["label"]: r for r in doc["rows"]}
    sent = [r for r in doc["rows"] if r["within_limits"]]
    assert not rows["far"]["within_limits"]  # commented out: it must not ask for a switch either
    # the table really asks for both signs on every axis, so switches must happen
    for a in "xyz":
        signs = {r["setpoint_A"][a] > 0 for r in sent if r["setpoint_A"][a] != 0}
        assert signs == {True, False}, a
    bench = walk(script.read_text(), rows)
    assert bench.switch_count >= 6
    assert all(not on for on in bench.output.values())
    assert all(v == 0.0 for v in bench.setpoint.values())
    assert all(pos == "FORWARD" for pos in bench.relay.values())
    # the tables say the same polarity as the script
    for r in doc["rows"]:
        for a in "xyz":
            sp = r["setpoint_A"][a]
            assert r["supply_setpoint_A"][a] == pytest.approx(abs(sp))
            assert r["polarity"][a] == ("reverse" if sp < 0 else "forward")


def test_the_model_catches_a_switch_under_current():
    # the walker is not a rubber stamp: a script that switches with the output on fails
    bad = ("# row a: target\nINST:NSEL 1\nVOLT 5.000\nCURR 1.000\nOUTP ON\n"
           "# x: output is off at zero current: set the channel 1 polarity switch to REVERSE now\n")
    with pytest.raises(AssertionError, match="switched with its output on"):
        walk(bad, {"a": {"within_limits": True, "setpoint_A": {"x": 1.0, "y": 0.0, "z": 0.0}}})


def test_a_sequence_script_carries_waits(run_cli, arctic, tmp_path):
    design, _, folder = arctic
    out = tmp_path / "sphere.scpi"
    run = run_cli("sequence", design, SITES / "arctic-cal-hut.toml", "--sphere", "12", "--magnitude-uT", "40",
                  "--dwell-s", "2.5", "--out", out)
    assert run.code == 0, run
    text = out.read_text()
    assert text.count("# wait 2.500 s\n*WAI\n") == 12
    doc = json.loads(run_cli("sequence", design, SITES / "arctic-cal-hut.toml", "--sphere", "12",
                             "--magnitude-uT", "40", "--dwell-s", "2.5", "--format", "json").out)
    assert [r["t_s"] for r in doc["rows"]] == pytest.approx([2.5 * k for k in range(12)])
    assert all(r["dwell_s"] == 2.5 for r in doc["rows"])
    walk(text, {r["label"]: r for r in doc["rows"]})


def test_a_timed_replay_warns_of_each_unipolar_sign_change(run_cli, arctic, tmp_path):
    # The arctic hut's x and y supplies are unipolar. A replayed series whose x field swings
    # through the ambient makes the x current change sign; each change is a switch thrown by
    # hand (the bench model above), which a timed replay cannot wait for: the count in the
    # warning is the count of sign changes of the table's own signed x setpoints.
    import math

    design, _, _ = arctic
    series = tmp_path / "swing.csv"
    series.write_text("t_s,x_nT,y_nT,z_nT\n" + "".join(
        f"{t},{30000 * math.cos(t / 100):.1f},100.0,45000.0\n" for t in range(0, 600, 10)), encoding="utf-8")
    args = ("sequence", design, SITES / "arctic-cal-hut.toml", "--series", series, "--rate-Hz", "1")
    run = run_cli(*args, "--format", "json")
    assert run.code == 0, run
    xs = [r["setpoint_A"]["x"] for r in json.loads(run.out)["rows"]]
    flips = sum(1 for a, b in zip(xs, xs[1:]) if (a < 0) != (b < 0))
    assert flips >= 1
    text = f"axis x: unipolar supply, and the current changes sign {flips} time"
    assert text in run.err
    assert text in " ".join(json.loads(run.out)["provenance"]["warnings"])
