"""Benchmark the whole ``fame-estimator report`` command on the demo scenario.

Runs ``python -m estimator report SCENARIO -o FOLDER`` as its own process (start-up,
the lab refit, comparison, blends, mix, every figure and the HTML) and prints the
best wall time and the CPU time (user + sys, children included) of ``--repeat`` runs,
with the machine's load. With ``--against REV`` the same is done for an older commit
of this repository, checked out into a temporary git worktree and run with this
environment's Python on that commit's own demo scenario and on today's, and the
ratios are printed (issue 11's goal: at most half the time of the commit it was
filed against, 0a84e1e). On a busy machine wall time grows and CPU time does not,
so both are shown.

Usage::

    .venv/bin/python scripts/bench_report.py [--repeat 2] [--against 0a84e1e]
"""

from __future__ import annotations

import argparse
import os
import resource
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def run_report(code_root: Path, scenario: Path, repeat: int) -> tuple[float, float]:
    """Best wall time and the CPU time of that run [s] of one report command."""
    best: tuple[float, float] | None = None
    env = dict(os.environ, PYTHONPATH=str(code_root))
    for _ in range(repeat):
        with tempfile.TemporaryDirectory() as tmp:
            before = resource.getrusage(resource.RUSAGE_CHILDREN)
            t0 = time.perf_counter()
            # run from the temporary folder so that the code under test is the one on
            # PYTHONPATH, not whatever the current directory holds
            subprocess.run([sys.executable, "-m", "estimator", "report", str(scenario), "-o",
                            str(Path(tmp) / "out")], check=True, cwd=tmp, env=env,
                           stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
            wall = time.perf_counter() - t0
            after = resource.getrusage(resource.RUSAGE_CHILDREN)
            cpu = (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)
        if best is None or wall < best[0]:
            best = (wall, cpu)
    assert best is not None
    return best


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=2, help="runs per command (best kept)")
    parser.add_argument("--against", default="", help="an older commit to compare with")
    args = parser.parse_args()
    scenario = ROOT / "data" / "demo" / "scenario.json"
    print(f"{os.cpu_count()} CPUs, load average {os.getloadavg()[0]:.1f} at start")
    wall, cpu = run_report(ROOT, scenario, args.repeat)
    print(f"report of the demo scenario, this tree: {wall:.1f} s wall, {cpu:.1f} s CPU")
    if args.against:
        old = Path(tempfile.mkdtemp(prefix="bench-report-"))
        try:
            subprocess.run(["git", "worktree", "add", "--detach", str(old), args.against],
                           cwd=ROOT, check=True, capture_output=True)
            old_scenario = old / "data" / "demo" / "scenario.json"
            o_wall, o_cpu = run_report(old, old_scenario, args.repeat)
            n_wall, n_cpu = run_report(ROOT, old_scenario, args.repeat)
            print(f"{args.against}'s demo scenario: {args.against} {o_wall:.1f} s wall, "
                  f"{o_cpu:.1f} s CPU; this tree {n_wall:.1f} s wall, {n_cpu:.1f} s CPU; "
                  f"ratio {n_wall / o_wall:.2f} (wall), {n_cpu / o_cpu:.2f} (CPU); "
                  "goal <= 0.5")
        finally:
            subprocess.run(["git", "worktree", "remove", "--force", str(old)], cwd=ROOT,
                           check=False, capture_output=True)
            shutil.rmtree(old, ignore_errors=True)
    print(f"load average {os.getloadavg()[0]:.1f} at the end")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
