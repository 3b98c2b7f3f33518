"""In-process time of the planner (``cage.workflow.plan_design``) on a demo site, cold and warm.

Run: python benchmarks/bench_plan_inprocess.py [--site sites/arctic-cal-hut.toml] [--repeats N]

Each system set is timed in a fresh child process: "cold" is the first ``plan_design`` call
after the imports and the site file (it fills the caches: IGRF coefficients, sample grids,
layout clearances), "warm" the median of the next N calls in the same process. Two system
sets: the pairs only, and pairs with the three-, four- and equal-four-coil systems (the
winding-pack check then evaluates hundreds of filaments per axis). Prints CPU
(``time.process_time``) and wall (``time.perf_counter``) times. No target: this tracks the
cost of the field kernel inside the planner.
"""
from __future__ import annotations

import argparse
import json
import os
import statistics
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent

CHILD = r"""
import json, statistics, sys, time
from cage.sitefile import load_site
from cage.workflow import plan_design
site = load_site(sys.argv[1])
systems = tuple(sys.argv[2].split(","))
repeats = int(sys.argv[3])
def once():
    c0, w0 = time.process_time(), time.perf_counter()
    plan_design(site, None, "power", "flat", None, systems)
    return time.process_time() - c0, time.perf_counter() - w0
cold = once()
warm = [once() for _ in range(repeats)]
print(json.dumps({"cold_cpu": cold[0], "cold_wall": cold[1],
                  "warm_cpu": statistics.median(w[0] for w in warm),
                  "warm_wall": statistics.median(w[1] for w in warm)}))
"""


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--site", default=str(ROOT / "sites" / "arctic-cal-hut.toml"))
    ap.add_argument("--repeats", type=int, default=5)
    args = ap.parse_args()
    env = dict(os.environ, PYTHONPATH=str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH", ""))
    for systems in ("pair", "pair,three,four,four-equal"):
        done = subprocess.run([sys.executable, "-c", CHILD, args.site, systems, str(args.repeats)],
                              cwd=ROOT, env=env, capture_output=True, text=True)
        if done.returncode != 0:
            last = (done.stderr.strip().splitlines() or ["no message"])[-1]
            print(f"systems {systems:28s} not planned: {last}")
            continue
        r = json.loads(done.stdout.strip().splitlines()[-1])
        print(f"systems {systems:28s} cold CPU {r['cold_cpu']:6.3f} s wall {r['cold_wall']:6.3f} s | "
              f"warm CPU {r['warm_cpu']:6.3f} s wall {r['warm_wall']:6.3f} s (median of {args.repeats})")


if __name__ == "__main__":
    main()
