"""Whole-process wall and CPU time of ``cage design`` on each demo site and of ``cage compare``.

Run: python benchmarks/bench_design.py [--repeats N]

Each run is a fresh process (``sys.executable -m cage ...``), so the times include the
interpreter start, the imports, the site file, the IGRF synthesis and the planner, as a user
sees them. Targets: ``cage design`` under 3 s per site, a 20-size ``cage compare`` on the
smallsat site under 15 s, a 60-size one under 45 s. Prints the best and the median wall time
of N runs (default 3), the median CPU time of the child process (user + system: on a shared
machine the wall time also counts waiting), and the ratio best / target (below 1 meets it).
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
SITES = ROOT / "sites"
DESIGN_TARGET_S = 3.0
COMPARE_TARGET_S = 15.0
COMPARE_SIZES = ",".join(f"{1.2 + 0.1 * k:.1f}" for k in range(20))  # 1.2 .. 3.1 m, 20 sizes
COMPARE60_SIZES = "1.2:3.0:0.0305"  # 60 sizes
COMPARE60_TARGET_S = 45.0


def _time(args: list[str], repeats: int) -> tuple[list[float], list[float]]:
    """Wall times and CPU times (user + system of the child) of ``repeats`` runs."""
    env = dict(os.environ, PYTHONPATH=str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH", ""))
    times, cpu = [], []
    for _ in range(repeats):
        before = os.times()
        start = time.perf_counter()
        done = subprocess.run([sys.executable, "-m", "cage", *args], cwd=ROOT, env=env,
                              stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True)
        times.append(time.perf_counter() - start)
        after = os.times()
        cpu.append((after.children_user - before.children_user) + (after.children_system - before.children_system))
        if done.returncode != 0:
            raise SystemExit(f"cage {' '.join(args)} failed ({done.returncode}): {done.stderr.strip()}")
    return times, cpu


def _line(label: str, measured: tuple[list[float], list[float]], target: float) -> str:
    times, cpu = measured
    best, median = min(times), statistics.median(times)
    verdict = "meets" if best < target else "MISSES"
    return (f"{label:<38} best {best:6.2f} s  median {median:6.2f} s  cpu {statistics.median(cpu):6.2f} s  "
            f"target {target:4.1f} s  ratio {best / target:5.2f}  ({verdict})")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=3)
    opts = parser.parse_args()
    print(f"python {sys.version.split()[0]}, {os.cpu_count()} CPUs, {opts.repeats} runs each")
    with tempfile.TemporaryDirectory() as tmp:
        for site in sorted(SITES.glob("*.toml")):
            out = Path(tmp) / f"{site.stem}.json"
            times = _time(["design", str(site), "--out", str(out)], opts.repeats)
            print(_line(f"design {site.name}", times, DESIGN_TARGET_S))
        times = _time(["compare", str(SITES / "smallsat-lab.toml"), "--sizes", COMPARE_SIZES, "--json"],
                      opts.repeats)
        print(_line("compare smallsat-lab.toml, 20 sizes", times, COMPARE_TARGET_S))
        times = _time(["compare", str(SITES / "smallsat-lab.toml"), "--sizes", COMPARE60_SIZES, "--json"],
                      opts.repeats)
        print(_line("compare smallsat-lab.toml, 60 sizes", times, COMPARE60_TARGET_S))


if __name__ == "__main__":
    main()
