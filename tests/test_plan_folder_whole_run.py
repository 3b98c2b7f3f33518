"""A plan folder is always one whole run: `cage plan` killed at random moments (fixed seed,
bounded count) leaves either the earlier folder or the new one, never a mix; the next run
cleans the temporaries; `cage report` refuses a folder whose files disagree; `--out` never
replaces one of the command's own inputs, nor a folder holding other files.

The reference is the folder's own contents: every document names its site and model date
(provenance), and the two runs differ in both.
"""
from __future__ import annotations

import json
import os
import random
import signal
import subprocess
import sys
import time

from conftest import SITES, assert_one_line_error

OUTPUTS = {"field.json", "design.json", "setpoints.csv", "setpoints.json", "setpoints.scpi", "uniformity.png",
           "axis_lines.png", "cage_in_room.png", "setpoints.png", "report.html", "build.csv", "connection_x.png", "connection_y.png",
           "connection_z.png"}
KILLS = 4
SEED = 1913


def _site_b(tmp_path):
    text = (SITES / "smallsat-lab.toml").read_text()
    text = text.replace('name = "', 'name = "B run, ', 1).replace("date = 2026-12-01", "date = 2027-04-20", 1)
    assert "B run" in text and "2027-04-20" in text
    path = tmp_path / "site-b.toml"
    path.write_text(text)
    return path


def _run_of(folder) -> tuple[str, str]:
    """(site name, date) of a whole folder; AssertionError when it is not one whole run."""
    assert {p.name for p in folder.iterdir()} == OUTPUTS, sorted(p.name for p in folder.iterdir())
    seen = set()
    for name in ("field.json", "design.json", "setpoints.json"):
        prov = json.loads((folder / name).read_text())["provenance"]
        seen.add((prov["site"]["name"], prov["model_date"]))
    assert len(seen) == 1, seen
    site, date = seen.pop()
    for name in ("setpoints.csv", "setpoints.scpi"):
        head = (folder / name).read_text()
        assert f"# site: {site} at" in head and f"for {date}" in head, name
    assert site in (folder / "report.html").read_text()
    return site, date


def _cage(*args):
    env = dict(os.environ, MPLBACKEND="Agg")
    return subprocess.Popen([sys.executable, "-m", "cage", *map(str, args)], stdout=subprocess.DEVNULL,
                            stderr=subprocess.DEVNULL, env=env)


def test_the_check_sees_a_mixed_folder(tmp_path, run_cli):
    """The whole-run check can fail: a folder with one file from another run is caught."""
    a, b = tmp_path / "a", tmp_path / "b"
    assert run_cli("plan", SITES / "smallsat-lab.toml", "--out", a).code == 0
    assert run_cli("plan", _site_b(tmp_path), "--out", b).code == 0
    assert _run_of(a) != _run_of(b)
    (a / "setpoints.json").write_bytes((b / "setpoints.json").read_bytes())
    try:
        _run_of(a)
        raise RuntimeError("mixed folder not seen")
    except AssertionError:
        pass
    run = run_cli("report", a)  # and cage report refuses it
    assert_one_line_error(run, "different runs")


def test_killed_plan_leaves_one_whole_run(tmp_path):
    out = tmp_path / "plan"
    site_a, site_b = SITES / "smallsat-lab.toml", _site_b(tmp_path)
    start = time.monotonic()
    assert _cage("plan", site_a, "--out", out).wait(timeout=300) == 0
    full_s = time.monotonic() - start
    first = _run_of(out)
    rng = random.Random(SEED)
    runs = {first}
    for k in range(KILLS):
        site = site_b if k % 2 == 0 else site_a
        proc = _cage("plan", site, "--out", out)
        time.sleep(rng.uniform(0.3, 1.1) * full_s)
        proc.send_signal(signal.SIGKILL)
        proc.wait(timeout=60)
        runs.add(_run_of(out))  # the old run or the new one, whole
    assert runs <= {first, ("B run, " + first[0], "2027-04-20")}
    # the next run finishes and cleans what the killed runs left beside the folder
    assert _cage("plan", site_b, "--out", out).wait(timeout=300) == 0
    assert _run_of(out)[1] == "2027-04-20"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["plan", "site-b.toml"]


def test_out_never_replaces_an_input(tmp_path, run_cli):
    folder = tmp_path / "lab"
    folder.mkdir()
    site = folder / "site.toml"
    site.write_text((SITES / "smallsat-lab.toml").read_text())
    run = run_cli("plan", site, "--out", folder)
    assert_one_line_error(run, "holds", "an input of this command")
    assert site.read_text() == (SITES / "smallsat-lab.toml").read_text()
    (folder / "notes.txt").write_text("mine")
    run = run_cli("plan", SITES / "smallsat-lab.toml", "--out", folder)
    assert_one_line_error(run, "notes.txt", "not a plan output")
    run = run_cli("design", site, "--out", site)
    assert_one_line_error(run, "is one of this command's inputs")


def test_trailing_slash_means_a_folder(tmp_path, run_cli):
    run = run_cli("design", SITES / "smallsat-lab.toml", "--out", f"{tmp_path}/design/")
    assert_one_line_error(run, "ends with a slash", "names a folder")
    assert list(tmp_path.iterdir()) == []


def _dead_pid() -> int:
    """A process id that no process has now (a child that has ended)."""
    proc = subprocess.Popen([sys.executable, "-c", "pass"])
    proc.wait()
    return proc.pid


def test_next_run_cleans_what_a_killed_run_left(tmp_path):
    from cage.atomicfile import write_text
    from cage.outputs import clean_stale, write_folder

    pid = _dead_pid()
    target = tmp_path / "plan"
    write_folder(target, {"design.json": "{}\n"})
    stale_new = tmp_path / f".plan.cage-new-{pid}-0a0b"
    stale_new.mkdir()
    (stale_new / "field.json").write_text("half")
    write_folder(target, {"design.json": "{\"run\": 2}\n"})
    assert sorted(p.name for p in tmp_path.iterdir()) == ["plan"]
    assert (target / "design.json").read_text() == "{\"run\": 2}\n"
    # a kill between the two renames of the fallback swap: the next run puts the earlier folder back
    aside = tmp_path / f".plan.cage-old-{pid}-0c0d"
    os.rename(target, aside)
    clean_stale(target)
    assert (target / "design.json").read_text() == "{\"run\": 2}\n" and not aside.exists()
    # a single file's temporary of a dead process goes at the next write of that file
    (tmp_path / f".t.csv.{pid}-abc.tmp").write_text("half")
    (tmp_path / f".t.csv.{os.getpid()}-abc.tmp").write_text("ours, running")
    write_text(tmp_path / "t.csv", "x\n")
    assert sorted(p.name for p in tmp_path.iterdir()) == [f".t.csv.{os.getpid()}-abc.tmp", "plan", "t.csv"]


def test_report_sees_a_design_with_other_supplies(tmp_path, run_cli):
    """The design's identity is its coils; a design.json with the same coils but other supplies
    than the current table was made for (a unipolar supply turned bipolar) is caught too: the
    table's polarity switching would not match the hardware the report describes."""
    import json

    folder = tmp_path / "plan"
    assert run_cli("plan", SITES / "smallsat-lab.toml", "--out", folder).code == 0
    assert run_cli("report", folder).code == 0
    doc = json.loads((folder / "design.json").read_text())
    doc["requirement"]["supplies"]["y"]["bipolar"] = not doc["requirement"]["supplies"]["y"]["bipolar"]
    (folder / "design.json").write_text(json.dumps(doc, indent=2))
    run = run_cli("report", folder)
    assert_one_line_error(run, "different runs", "y supply", "bipolar")
