"""Whole-process wall time of ``cage design`` on each demo site and of a 20-size ``cage compare``.

Run: python benchmarks/bench_design.py [--repeats N]

Each run is a fresh process (``sys.executable -m cage ...``), so the times include the
interpreter start, the imports, the site file, the IGRF synthesis and the planner, as a user
sees them. Targets: ``cage design`` under 3 s per site, a 20-size ``cage compare`` on the
smallsat site under 15 s. Prints the best and the median of N runs (default 3) and the
ratio best / target (below 1 meets the target).
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


def _time(args: list[str], repeats: int) -> list[float]:
    env = dict(os.environ, PYTHONPATH=str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH", ""))
    times = []
    for _ in range(repeats):
        start = time.perf_counter()
        done = subprocess.run([sys.executable, "-m", "cage", *args], cwd=ROOT, env=env,
                              stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True)
        times.append(time.perf_counter() - start)
        if done.returncode != 0:
            raise SystemExit(f"cage {' '.join(args)} failed ({done.returncode}): {done.stderr.strip()}")
    return times


def _line(label: str, times: list[float], target: float) -> str:
    best, median = min(times), statistics.median(times)
    verdict = "meets" if best < target else "MISSES"
    return (f"{label:<38} best {best:6.2f} s  median {median:6.2f} s  target {target:4.1f} s  "
            f"ratio {best / target:5.2f}  ({verdict})")


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


if __name__ == "__main__":
    main()
