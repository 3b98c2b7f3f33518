"""CPU and wall time of the commands users run, each in a fresh process, against its target.

Run: python benchmarks/bench_commands.py [--repeat N] [--quick]

Each command runs as the ``cage`` script beside this Python (else ``python -m cage``) in a new process (start-up and imports included,
as a user sees them), N times (default 3), in rounds of every command once; the CPU time is that of the child process (user +
system, from ``resource.getrusage(RUSAGE_CHILDREN)``), the wall time from ``time.perf_counter``.
Prints the medians and the target of each (issue 15): ``cage --help`` under 0.15 s,
``cage field`` under 0.4 s, ``cage plan`` on each demo site under 3 s of CPU. The other
commands (design, compare, setpoints, sequence) have no target and are printed for tracking.
On a loaded machine the wall time says more about the load than about the program; the CPU
time is the number to compare. A fixed workload with no cage in it runs in the same rounds;
each command's CPU is also printed as a multiple of it, comparable between runs at different
times. --quick: one run each, fewer compare sizes.

Before timing, the package's modules are compiled to bytecode once (``compileall``), as
``pip install`` does for an installed package: with PYTHONDONTWRITEBYTECODE set (as on the
development machines here) an editable checkout would otherwise be compiled again by every
command, about 0.15 s each, which no installed copy pays. One untimed ``cage plan`` first
lets matplotlib build its font cache, once per machine, outside the timings.
"""
from __future__ import annotations

import argparse
import os
import resource
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
SITES = sorted((ROOT / "sites").glob("*.toml"))


SCRIPT = Path(sys.executable).parent / "cage"
COMMAND = [str(SCRIPT)] if SCRIPT.exists() else [sys.executable, "-m", "cage"]


# A fixed workload with no cage in it (interpreter, numpy import, a pure-Python loop, small
# array arithmetic), timed in the same rounds: the machine's speed at the time, so that runs at
# different times can be compared by the ratio to it.
REFERENCE = [sys.executable, "-c",
             "import numpy as np\n"
             "s = sum(i * i for i in range(1_500_000))\n"
             "a = np.arange(200_000.0)\n"
             "for _ in range(200): a = np.sqrt(a * a + 1.0)\n"]


def run_once(args: list[str], command: list[str] | None = None) -> tuple[float, float]:
    """(CPU s, wall s) of one ``cage args`` (or ``command + args``) in a fresh process."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    t0 = time.perf_counter()
    done = subprocess.run([*(COMMAND if command is None else command), *args], cwd=ROOT, capture_output=True,
                          text=True, env={**os.environ, "PYTHONPATH": str(ROOT)})
    wall = time.perf_counter() - t0
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    if done.returncode != 0:
        raise SystemExit(f"cage {' '.join(args)} failed ({done.returncode}): {done.stderr.strip()}")
    return (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime), wall


def report(label: str, runs: list[tuple[float, float]], reference_s: float, target: str = "",
           cpu_limit_s: float | None = None, wall_limit_s: float | None = None) -> None:
    cpu = statistics.median(r[0] for r in runs)
    wall = statistics.median(r[1] for r in runs)
    verdict = ""
    if cpu_limit_s is not None:
        verdict = "met" if cpu < cpu_limit_s else "NOT met"
    elif wall_limit_s is not None:
        verdict = ("met" if wall < wall_limit_s else "NOT met (wall)") + \
                  (", CPU " + ("met" if cpu < wall_limit_s else "not met"))
    print(f"{label:<40} CPU {cpu:6.2f} s (least {min(r[0] for r in runs):5.2f}, {cpu / reference_s:5.2f} x ref.)   "
          f"wall {wall:6.2f} s   (median of {len(runs)})" + (f"   target {target}: {verdict}" if target else ""),
          flush=True)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--quick", action="store_true")
    opts = ap.parse_args()
    n = 1 if opts.quick else opts.repeat
    import compileall

    compileall.compile_dir(ROOT / "cage", quiet=1)
    with tempfile.TemporaryDirectory() as tmp:
        run_once(["plan", str(SITES[0].relative_to(ROOT)), "--out", f"{tmp}/warm-up"])
    print(f"{' '.join(COMMAND)}; python {sys.version.split()[0]}, {os.cpu_count()} CPUs, load average "
          f"{', '.join(f'{v:.1f}' for v in os.getloadavg())}")
    site = str(SITES[0].relative_to(ROOT))
    with tempfile.TemporaryDirectory() as tmp:
        design = f"{tmp}/plan-{SITES[0].stem}/design.json"
        sizes = "1.4:2.6:0.4" if opts.quick else "1.2:3.0:0.1"
        # (label, args, report keywords); the commands after the plans read the first plan's design
        jobs = [("cage --help", ["--help"], dict(target="0.15 s", wall_limit_s=0.15)),
                (f"cage field {site}", ["field", site], dict(target="0.4 s", wall_limit_s=0.4))]
        for s in SITES:
            rel = str(s.relative_to(ROOT))
            jobs.append((f"cage plan {rel}", ["plan", rel, "--out", f"{tmp}/plan-{s.stem}"],
                         dict(target="3 s CPU", cpu_limit_s=3.0)))
        jobs += [("cage design", ["design", site, "--out", f"{tmp}/design.json"], {}),
                 (f"cage compare --sizes {sizes}", ["compare", site, "--sizes", sizes], {}),
                 ("cage setpoints (table)", ["setpoints", design, site], {}),
                 ("cage sequence --sphere 1000", ["sequence", design, site, "--sphere", "1000", "--magnitude-uT",
                                                  "60", "--format", "csv"], {})]
        # Round by round, every command once per round: a slow spell of the machine then falls on
        # every command alike instead of on one command's runs.
        runs: dict[str, list] = {label: [] for label, _, _ in jobs}
        reference = []
        for _ in range(n):
            reference.append(run_once([], REFERENCE)[0])
            for label, args, _ in jobs:
                runs[label].append(run_once(args))
    reference_s = statistics.median(reference)
    print(f"reference workload (no cage: numpy import, a Python loop, array arithmetic): CPU {reference_s:.2f} s "
          f"(least {min(reference):.2f}); 0.33-0.39 s on this VM in December 2026")
    for label, _, keywords in jobs:
        report(label, runs[label], reference_s, **keywords)


if __name__ == "__main__":
    main()
