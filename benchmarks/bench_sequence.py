"""Whole-process time of long setpoint sequences against ``cage field`` on the same machine.

Run: python benchmarks/bench_sequence.py [--repeats N]

Each run is a fresh process (``sys.executable -m cage ...``): interpreter start, imports, the
site file, the IGRF synthesis, the table and the CSV file, as a user sees them. Measured,
interleaved so that load on the machine hits all three alike:

- ``cage field`` on the smallsat demo site (the reference);
- ``cage sequence --series`` with a series resampled to 100,000 steps (10,000 s at 10 Hz),
  written as CSV. Target: within 3x the reference;
- ``cage sequence --sphere 10000``, written as CSV. Target: within 1.5x the reference.

Prints, per command, the median wall time and the median CPU time (user + system of the
child) of N runs (default 5), and the ratios of the medians to the reference's.
"""
from __future__ import annotations

import argparse
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
SITE = ROOT / "sites" / "smallsat-lab.toml"
SERIES_TARGET = 3.0
SPHERE_TARGET = 1.5


def _run(args: list[str]) -> tuple[float, float]:
    """(wall s, CPU s) of one fresh ``cage`` process."""
    env = dict(os.environ, PYTHONPATH=str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH", ""))
    before = os.times()
    start = time.perf_counter()
    done = subprocess.run([sys.executable, "-m", "cage", *args], cwd=ROOT, env=env,
                          stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True)
    wall = time.perf_counter() - start
    after = os.times()
    if done.returncode != 0:
        raise SystemExit(f"cage {' '.join(args)} failed ({done.returncode}): {done.stderr.strip()}")
    cpu = (after.children_user - before.children_user) + (after.children_system - before.children_system)
    return wall, cpu


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=5)
    opts = parser.parse_args()
    print(f"python {sys.version.split()[0]}, {os.cpu_count()} CPUs, {opts.repeats} runs each")
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        design = tmp / "design.json"
        _run(["design", str(SITE), "--out", str(design)])
        series = tmp / "series.csv"
        series.write_text("t_s,x_nT,y_nT,z_nT\n0,1000,2000,3000\n5000,-20000,10000,40000\n"
                          "9999.9,30000,-10000,-20000\n")
        commands = {
            "field": ["field", str(SITE)],
            "sequence --series (100,000 steps)": ["sequence", str(design), str(SITE), "--series", str(series),
                                                  "--rate-Hz", "10", "--out", str(tmp / "series_out.csv")],
            "sequence --sphere 10000": ["sequence", str(design), str(SITE), "--sphere", "10000",
                                        "--magnitude-uT", "50", "--out", str(tmp / "sphere_out.csv")],
        }
        times = {name: [] for name in commands}
        for _ in range(opts.repeats):
            for name, args in commands.items():
                times[name].append(_run(args))
    wall = {n: statistics.median(w for w, _ in t) for n, t in times.items()}
    cpu = {n: statistics.median(c for _, c in t) for n, t in times.items()}
    targets = {"sequence --series (100,000 steps)": SERIES_TARGET, "sequence --sphere 10000": SPHERE_TARGET}
    for name in commands:
        line = f"{name:<36} wall median {wall[name]:6.2f} s   CPU median {cpu[name]:6.2f} s"
        if name in targets:
            rw, rc = wall[name] / wall["field"], cpu[name] / cpu["field"]
            verdict = "meets" if rw <= targets[name] else "MISSES"
            line += f"   ratio to field: wall {rw:4.2f}, CPU {rc:4.2f}  (target {targets[name]:g}x, {verdict})"
        print(line)


if __name__ == "__main__":
    main()
