"""Benchmark the whole ``compare -o`` command on many invented lots: time and peak memory.

Writes a lots file of N invented lots (the demo lots with their compositions and
prices jittered), runs ``fame-estimator compare LOTS -o DIR`` in a child process,
and prints the wall time, the child's peak resident memory and the size of what it
wrote. Also, with ``--predict-mb``, checks that ``predict`` refuses a CSV above the
reader's size limit with one line (the file is made by repeating invented lots).

Usage: ``python scripts/bench_compare.py [--lots 2000 20000] [--predict-mb 0]``
"""

from __future__ import annotations

import argparse
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "data" / "demo" / "lots.csv"


def invented_lots(n: int, seed: int = 7) -> pd.DataFrame:
    """N lots resampled from the demo lots, compositions and prices jittered."""
    rng = np.random.default_rng(seed)
    base = pd.read_csv(DEMO)
    pick = base.iloc[rng.integers(0, len(base), n)].reset_index(drop=True)
    species = [c for c in base.columns if ":" in c]
    comp = pick[species].fillna(0.0).to_numpy(dtype=float)
    comp = comp * rng.uniform(0.9, 1.1, comp.shape)
    comp = comp / comp.sum(axis=1, keepdims=True) * 99.0
    pick[species] = np.round(comp, 2)
    pick["other"] = 1.0
    pick["price_per_t"] = np.round(pick["price_per_t"] * rng.uniform(0.9, 1.1, n), 0)
    pick["lot"] = [f"LOT-{i:05d}" for i in range(n)]
    return pick


def run(args: list[str]) -> tuple[float, float, float, int, str]:
    """Wall time [s], CPU time [s], peak RSS of the child [MB], exit status, last stderr line.

    On a shared machine the CPU time (user + system) is the steadier number.
    """
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    t0 = time.perf_counter()
    proc = subprocess.run([sys.executable, "-m", "estimator", *args], capture_output=True,
                          text=True)
    wall = time.perf_counter() - t0
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    cpu = (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)
    last = (proc.stderr.strip().splitlines() or [""])[-1]
    return wall, cpu, max(after.ru_maxrss, before.ru_maxrss) / 1024.0, proc.returncode, last


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--lots", type=int, nargs="+", default=[2000, 20000])
    parser.add_argument("--predict-mb", type=float, default=0.0,
                        help="also try predict on a CSV of about this size [MB]")
    args = parser.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        for n in args.lots:
            lots = tmp / f"lots_{n}.csv"
            invented_lots(n).to_csv(lots, index=False)
            out = tmp / f"out_{n}"
            wall, cpu, peak, code, last = run(["compare", str(lots), "--basis", "fatty-acid",
                                               "-o", str(out)])
            size = sum(p.stat().st_size for p in out.rglob("*") if p.is_file()) / 1e6
            print(f"compare -o, {n:,} lots: {wall:.1f} s wall, {cpu:.1f} s CPU, "
                  f"peak RSS {peak:,.0f} MB "
                  f"(largest child so far), wrote {size:.1f} MB, exit {code}")
            if code:
                print(f"  stderr: {last}")
        if args.predict_mb:
            big = tmp / "big.csv"
            block = invented_lots(20000).to_csv(index=False)
            head, body = block.split("\n", 1)
            with big.open("w") as fh:
                fh.write(head + "\n")
                while fh.tell() < args.predict_mb * 1e6:
                    fh.write(body)
            wall, cpu, peak, code, last = run(["predict", str(big), "-o", str(tmp / "p.csv")])
            print(f"predict on {big.stat().st_size / 1e6:,.0f} MB: {wall:.1f} s, exit {code}: "
                  f"{last}")


if __name__ == "__main__":
    main()
