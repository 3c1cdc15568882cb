"""Benchmark the descriptor layer and the whole ``predict`` run on a CSV.

Prints descriptor throughput (profiles per second) and the ratio of reading +
validating + estimating a CSV of N random profiles to plain ``pandas.read_csv``
of the same file (output writing is timed separately, since it is the same for
any tool that writes CSV).

Usage: ``python scripts/bench_predict.py [--n 1000000] [--csv-n 200000]``
"""

from __future__ import annotations

import argparse
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd

from estimator.profiles.io import read_profile
from estimator.properties.descriptors import descriptors
from estimator.tables import species_keys
from estimator.workflows import predict

MAIN = ["C16:0", "C18:0", "C18:1", "C18:2", "C18:3", "C20:0", "C20:1", "C22:0", "C14:0", "C12:0"]


def random_profiles(n: int, seed: int = 1) -> np.ndarray:
    rng = np.random.default_rng(seed)
    keys = species_keys()
    w = np.zeros((n, len(keys)))
    cols = [keys.index(k) for k in MAIN]
    w[:, cols] = rng.dirichlet(np.ones(len(cols)), size=n) * 100
    return w


def best_of(fn, repeat: int = 3) -> float:
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return min(times)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--n", type=int, default=1_000_000,
                        help="profiles for the descriptor layer")
    parser.add_argument("--csv-n", type=int, default=200_000, help="profiles in the CSV run")
    args = parser.parse_args()

    w = random_profiles(args.n)
    t = best_of(lambda: descriptors(w))
    print(f"descriptor layer: {args.n:,} profiles in {t:.3f} s = {args.n / t:,.0f} profiles/s")

    keys = species_keys()
    wc = random_profiles(args.csv_n, seed=2)
    frame = pd.DataFrame(wc[:, [keys.index(k) for k in MAIN]], columns=MAIN)
    frame.insert(0, "sample", [f"s{i}" for i in range(args.csv_n)])
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "profiles.csv"
        frame.to_csv(path, index=False, float_format="%.4f")
        t_read = best_of(lambda: pd.read_csv(path))
        result = {}

        def run() -> None:
            result["table"] = predict(read_profile(path)).wide

        t_run = best_of(run)
        profile = read_profile(path)
        t_profile = best_of(lambda: read_profile(path))
        t_estimate = best_of(lambda: predict(profile))
        out = Path(tmp) / "out.csv"
        t_write = best_of(lambda: result["table"].to_csv(out, index=False, float_format="%.6g"), 1)
    print(f"CSV of {args.csv_n:,} profiles: pandas.read_csv {t_read:.3f} s; "
          f"read + validate + predict {t_run:.3f} s; ratio {t_run / t_read:.2f}x "
          f"(aim <= 3x); writing the output CSV {t_write:.3f} s")
    print(f"  of which: read + validate {t_profile:.3f} s ({t_profile / t_read:.2f}x read_csv); "
          f"estimates, descriptors, flags {t_estimate:.3f} s "
          f"({args.csv_n / t_estimate:,.0f} profiles/s)")


if __name__ == "__main__":
    main()
