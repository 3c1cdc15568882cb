"""Benchmark the refit: the whole ``fit`` command at 40, 300 and 3,000 samples, then
every candidate in-process (leave-one-out, 40 samples, 4 properties).

Synthetic data (compositions drawn around built-in feedstock profiles, measurements
from stated laws plus noise). First part: for each size, a lab CSV with two measured
properties (cetane number and CFPP) is written to a temporary folder and
``fame-estimator fit LAB --property cetane_number --property cfpp_C -o model.json``
runs as its own process (start-up, reading, cross-validation, model file and fit
report with its figures); printed: wall time, the process's CPU time (user + sys: on a
busy shared machine wall time grows, CPU time does not) and peak memory, with the
machine's load average. The goal (issue: fits that scale) is 3,000 samples within
60 s on a 2-core machine. Second part: the in-process job by candidate kind, and the
same job under 5-fold x 10 repeats. Speed is measured here, never by a timed test.

Usage:  .venv/bin/python scripts/bench_fit.py [--sizes 40,300,3000] [--samples 40]
            [--repeat 1] [--threads] [--no-kinds]
        (--threads: also time the leave-one-out job with BLAS left multi-threaded;
         --no-kinds: only the whole-command part)
"""

from __future__ import annotations

import argparse
import os
import resource
import subprocess
import sys
import tempfile
import time
import warnings
from collections import defaultdict
from pathlib import Path

import numpy as np
import pandas as pd

from estimator.profiles.profile import Profile
from estimator.properties.descriptors import descriptors
from estimator.properties.ignition import bamgboye2008
from estimator.refit import candidates as cand_module
from estimator.refit import crossval
from estimator.refit.crossval import fit_properties, total_fits
from estimator.tables import species_keys

PROPERTIES = ("cetane_number", "cfpp_C", "oxidation_stability_110C_h", "iodine_value_gI2_100g")
OILS = ("rapeseed", "soybean", "sunflower", "palm", "used-cooking-oil", "beef-tallow")


def synthetic_lab(n: int, seed: int = 1) -> Profile:
    """Synthetic lab samples with four measured properties (laws as in data/demo/LAB.md)."""
    rng = np.random.default_rng(seed)
    base = Profile.from_oils(OILS).wt_pct
    w = base[rng.integers(0, len(OILS), n)] * np.exp(rng.normal(0, 0.12, (n, base.shape[1])))
    w = 100.0 * w / w.sum(axis=1, keepdims=True)
    d = descriptors(w)
    measured = pd.DataFrame({
        "cetane_number": bamgboye2008(w) + 2.0 + rng.normal(0, 1.0, n),
        "cfpp_C": 2.5 * d["lcsf_wt_pct"] - 10.0 + rng.normal(0, 1.2, n),
        "oxidation_stability_110C_h": 1.0 + 300.0 / (d["bape_wt_pct"] + 25.0)
        + rng.normal(0, 0.4, n),
        "iodine_value_gI2_100g": 1.01 * d["iodine_value_gI2_100g"] + rng.normal(0, 1.0, n),
    })
    ids = [f"B{i:03d}" for i in range(n)]
    measured.index = ids
    return Profile.from_frame(pd.DataFrame(w, index=ids, columns=species_keys()),
                              metadata=measured, source="synthetic")


COMMAND_PROPERTIES = ("cetane_number", "cfpp_C")


def write_lab_csv(n: int, path: Path) -> Path:
    """The synthetic lab set of ``n`` samples as a CSV with two measured properties."""
    profile = synthetic_lab(n)
    comp = pd.DataFrame(profile.wt_pct, columns=species_keys())
    comp = comp.loc[:, (comp > 0).any()].round(3)
    measured = profile.metadata.reset_index(drop=True)[list(COMMAND_PROPERTIES)].round(2)
    frame = pd.concat([pd.DataFrame({"sample": list(profile.samples)}), comp, measured],
                      axis=1)
    frame.to_csv(path, index=False)
    return path


def time_command(n: int, folder: Path) -> dict:
    """Run the whole fit command on ``n`` samples in its own process; wall, CPU, memory."""
    lab = write_lab_csv(n, folder / f"lab_{n}.csv")
    exe = Path(sys.executable).with_name("fame-estimator")
    cmd = [str(exe), "fit", str(lab)]
    for prop in COMMAND_PROPERTIES:
        cmd += ["--property", prop]
    cmd += ["-o", str(folder / f"model_{n}.json")]
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    t0 = time.perf_counter()
    done = subprocess.run(cmd, capture_output=True, text=True)
    wall = time.perf_counter() - t0
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    if done.returncode != 0:
        raise SystemExit(f"fit on {n} samples failed: {done.stderr.strip()}")
    cpu = (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)
    return {"n": n, "wall": wall, "cpu": cpu, "peak_mb": after.ru_maxrss / 1024.0,
            "stdout": done.stdout}


def whole_command(sizes: list[int]) -> None:
    """Print the whole-command table."""
    load = os.getloadavg()[0] if hasattr(os, "getloadavg") else float("nan")
    print(f"whole command: fame-estimator fit LAB --property cetane_number --property "
          f"cfpp_C -o model.json (with the fit report); {os.cpu_count()} CPUs, load "
          f"average {load:.1f} at start")
    print(f"  {'samples':>7s}  {'wall s':>7s}  {'CPU s':>6s}  {'peak MB':>7s}")
    with tempfile.TemporaryDirectory(prefix="bench_fit_") as tmp:
        for n in sizes:
            r = time_command(n, Path(tmp))
            print(f"  {r['n']:7d}  {r['wall']:7.1f}  {r['cpu']:6.1f}  {r['peak_mb']:7.0f}",
                  flush=True)
    load = os.getloadavg()[0] if hasattr(os, "getloadavg") else float("nan")
    print(f"  (load average {load:.1f} at the end; peak MB is the largest child process "
          "so far)")


def timed_kinds():
    """Wrap Candidate.fit to accumulate wall time per kind."""
    spent: dict[str, float] = defaultdict(float)
    counts: dict[str, int] = defaultdict(int)
    original = cand_module.Candidate.fit

    def fit(self, x, y, *, seed=0):
        t0 = time.perf_counter()
        try:
            return original(self, x, y, seed=seed)
        finally:
            spent[self.kind] += time.perf_counter() - t0
            counts[self.kind] += 1

    return original, fit, spent, counts


def blas_info() -> str:
    try:
        from threadpoolctl import threadpool_info

        info = [f"{i['internal_api']} {i.get('num_threads')} threads" for i in threadpool_info()]
        return ", ".join(info) or "no BLAS pool found"
    except ImportError:  # pragma: no cover
        return "threadpoolctl not installed"


def run(profile: Profile, scheme: str) -> tuple[float, int, dict, dict]:
    original, wrapped, spent, counts = timed_kinds()
    cand_module.Candidate.fit = wrapped
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            t0 = time.perf_counter()
            fit_properties(profile, PROPERTIES, scheme=scheme)
            wall = time.perf_counter() - t0
    finally:
        cand_module.Candidate.fit = original
    return wall, total_fits(profile, PROPERTIES, scheme=scheme), dict(spent), dict(counts)


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sizes", default="40,300,3000",
                        help="sample counts of the whole-command part (comma-separated)")
    parser.add_argument("--no-kinds", action="store_true",
                        help="only the whole-command part")
    parser.add_argument("--samples", type=int, default=40)
    parser.add_argument("--repeat", type=int, default=1, help="runs of the LOO job (best kept)")
    parser.add_argument("--threads", action="store_true",
                        help="also time leave-one-out with multi-threaded BLAS")
    args = parser.parse_args()
    sizes = [int(v) for v in args.sizes.split(",") if v.strip()]
    if sizes:
        whole_command(sizes)
    if args.no_kinds:
        return 0
    profile = synthetic_lab(args.samples)
    print(f"refit benchmark: {args.samples} synthetic samples, {len(PROPERTIES)} properties, "
          f"all candidates; {os.cpu_count()} CPUs; BLAS: {blas_info()}")
    best = None
    for _ in range(args.repeat):
        result = run(profile, "leave-one-out")
        if best is None or result[0] < best[0]:
            best = result
    wall, fits, spent, counts = best
    print(f"leave-one-out: {wall:.2f} s wall for {fits} fold fits "
          f"({fits / wall:.0f} fits/s), plus the final fits and the domain")
    for kind in cand_module.KINDS:
        if kind in counts:
            print(f"  {kind:13s} {counts[kind]:5d} fits  {spent[kind]:6.2f} s  "
                  f"{1000 * spent[kind] / counts[kind]:7.2f} ms/fit  "
                  f"{100 * spent[kind] / wall:5.1f} % of wall")
    wall_k, fits_k, _, _ = run(profile, "repeated-kfold")
    print(f"5-fold x 10 repeats: {wall_k:.2f} s wall for {fits_k} fold fits "
          f"({fits_k / wall_k:.0f} fits/s); ratio to leave-one-out {wall_k / wall:.2f}")
    if args.threads:
        import contextlib

        pinned = crossval.single_threaded_blas
        crossval.single_threaded_blas = contextlib.nullcontext
        try:
            wall_t = run(profile, "leave-one-out")[0]
        finally:
            crossval.single_threaded_blas = pinned
        print(f"leave-one-out with multi-threaded BLAS: {wall_t:.2f} s wall; "
              f"ratio to single-threaded {wall_t / wall:.2f}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
