"""Benchmark the whole ``fame-estimator predict FILE -o OUT`` command against reading FILE.

For each size, writes a CSV of N random profiles (sample + 10 main species), then runs
as separate processes, each timed from start to exit with its peak memory (max RSS):

* the baseline ``python -c "import pandas; pandas.read_csv(FILE)"``;
* ``python -m estimator predict FILE -o out.csv`` (reading, checking, estimating and
  writing, start-up included);
* at the XLSX size, ``predict FILE -o out.xlsx``.

It prints the ratio of each command to the baseline (goals: CSV <= 3x at 200k and 1M
rows with peak memory <= 1.5x; XLSX <= 5x at 10k rows) and the machine it ran on.
Times are the best of ``--repeat`` runs, the baseline and the command run by turns.
``--breakdown`` also times the parts in one process (start-up, read, estimate, write)
to show where the time goes;
``--pandas-writer`` times a process that reads predict's output and writes it again with
``pandas.DataFrame.to_csv``, to show what writing that much text costs with pandas.

Usage: ``python scripts/bench_predict.py [--sizes 10000,200000,1000000] [--repeat 3]``
"""

from __future__ import annotations

import argparse
import os
import platform
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd

from estimator.tables import species_keys

HERE = Path(__file__).resolve().parent
MAIN = ["C16:0", "C18:0", "C18:1", "C18:2", "C18:3", "C20:0", "C20:1", "C22:0", "C14:0", "C12:0"]


def random_profiles(n: int, seed: int = 1) -> np.ndarray:
    """``n`` random compositions over every species key (mass %, the 10 main species)."""
    rng = np.random.default_rng(seed)
    keys = species_keys()
    w = np.zeros((n, len(keys)))
    cols = [keys.index(k) for k in MAIN]
    w[:, cols] = rng.dirichlet(np.ones(len(cols)), size=n) * 100
    return w


def write_profiles(path: Path, n: int, seed: int = 2) -> None:
    """A CSV of ``n`` random profiles: sample, then the 10 main species to 4 decimals."""
    keys = species_keys()
    w = random_profiles(n, seed=seed)
    frame = pd.DataFrame(w[:, [keys.index(k) for k in MAIN]], columns=MAIN)
    frame.insert(0, "sample", [f"s{i}" for i in range(n)])
    frame.to_csv(path, index=False, float_format="%.4f")


TIME = "/usr/bin/time"


def run(cmd: list[str]) -> tuple[float, float]:
    """Wall time [s] and peak resident memory [MB] of one process.

    Peak memory comes from GNU time (``%M``) when it is installed: a child forked from
    this (large) benchmark process would otherwise report this process's memory too.
    """
    use_time = os.path.exists(TIME)
    full = [TIME, "-f", "maxrss_kb=%M", *cmd] if use_time else cmd
    t0 = time.perf_counter()
    proc = subprocess.Popen(full, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    _, status, usage = os.wait4(proc.pid, 0)
    elapsed = time.perf_counter() - t0
    proc.returncode = os.waitstatus_to_exitcode(status)
    err = proc.stderr.read().decode(errors="replace")
    proc.stderr.close()
    if proc.returncode != 0:
        raise SystemExit(f"{' '.join(cmd)} failed ({proc.returncode}): {err.strip()}")
    peak_kb = usage.ru_maxrss  # Linux reports kB
    if use_time:
        peak_kb = int(err.strip().splitlines()[-1].split("=", 1)[1])
    return elapsed, peak_kb / 1024


def best(cmd: list[str], repeat: int) -> tuple[float, float]:
    """Best time and the peak memory of that run, over ``repeat`` runs."""
    return min(run(cmd) for _ in range(repeat))


def best_by_turns(cmds: list[list[str]], repeat: int) -> list[tuple[float, float]]:
    """:func:`best` of each command, the commands run by turns.

    On a shared machine whose speed drifts, a slow spell then falls on every command
    rather than on the baseline's runs or the command's alone.
    """
    runs = [[run(cmd) for cmd in cmds] for _ in range(repeat)]
    return [min(r[i] for r in runs) for i in range(len(cmds))]


def machine() -> str:
    """CPU model, cores, memory and Python/NumPy/pandas versions."""
    cpu = platform.processor() or platform.machine()
    try:
        for line in Path("/proc/cpuinfo").read_text().splitlines():
            if line.startswith("model name"):
                cpu = line.split(":", 1)[1].strip()
                break
    except OSError:
        pass
    mem = ""
    try:
        kb = int(Path("/proc/meminfo").read_text().split()[1])
        mem = f", {kb / 1024 ** 2:.0f} GB RAM"
    except (OSError, ValueError, IndexError):
        pass
    try:
        load = f" load {os.getloadavg()[0]:.1f}"
    except OSError:
        load = ""
    try:
        import pyarrow

        arrow = f", pyarrow {pyarrow.__version__}"
    except ImportError:
        arrow = ", no pyarrow"
    return (f"{cpu}, {os.cpu_count()} cores{mem},{load}; Python {platform.python_version()}, "
            f"NumPy {np.__version__}, pandas {pd.__version__}{arrow}")


def breakdown(path: Path, out: Path) -> str:
    """Times of the parts of one predict run in this process, in pieces as the command runs."""
    from estimator.files import TableWriter
    from estimator.predict_files import CHUNK_ROWS
    from estimator.profiles.io import read_profile_chunks
    from estimator.workflows import predict

    read = estimate = write = 0.0
    with TableWriter(out) as writer:
        pieces = read_profile_chunks(path, chunk_rows=CHUNK_ROWS)
        while True:
            t0 = time.perf_counter()
            part = next(pieces, None)
            t1 = time.perf_counter()
            read += t1 - t0
            if part is None:
                break
            table = predict(part).wide
            t2 = time.perf_counter()
            writer.write(table)
            write += time.perf_counter() - t2
            estimate += t2 - t1
    return (f"  in one process, in pieces of {CHUNK_ROWS:,}: read + check {read:.2f} s, "
            f"estimate {estimate:.2f} s, write CSV {write:.2f} s")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sizes", default="10000,200000,1000000",
                        help="comma-separated numbers of profiles")
    parser.add_argument("--xlsx-size", type=int, default=10_000,
                        help="profiles in the XLSX run (0: skip)")
    parser.add_argument("--repeat", type=int, default=3, help="runs per command (best taken)")
    parser.add_argument("--breakdown", action="store_true",
                        help="also time read, estimate and write in one process")
    parser.add_argument("--pandas-writer", action="store_true",
                        help="also time a process that reads predict's output table and "
                             "writes it again with pandas.DataFrame.to_csv (the cost of "
                             "writing that much text with pandas alone)")
    args = parser.parse_args()
    sizes = [int(s) for s in args.sizes.split(",") if s.strip()]
    py = sys.executable
    print(f"machine: {machine()}")
    print(f"{'rows':>9}  {'read_csv':>9}  {'predict -o csv':>15}  {'ratio':>6}  "
          f"{'peak MB (base / predict)':>25}  {'ratio':>6}")
    with tempfile.TemporaryDirectory() as tmp:
        for n in sorted(set(sizes + ([args.xlsx_size] if args.xlsx_size else []))):
            path = Path(tmp) / f"profiles_{n}.csv"
            # in a child process, so that this one stays small
            subprocess.run([py, "-c", f"import sys; sys.path.insert(0, {str(HERE)!r}); "
                            f"from bench_predict import write_profiles; "
                            f"from pathlib import Path; write_profiles(Path({str(path)!r}), {n})"],
                           check=True)
            base = [py, "-c", f"import pandas; pandas.read_csv({str(path)!r})"]
            if n in sizes:
                out = Path(tmp) / "out.csv"
                (base_t, base_m), (t, m) = best_by_turns(
                    [base, [py, "-m", "estimator", "predict", str(path), "-o", str(out)]],
                    args.repeat)
                print(f"{n:>9,}  {base_t:>8.2f}s  {t:>14.2f}s  {t / base_t:>5.1f}x  "
                      f"{base_m:>11.0f} / {m:>11.0f}  {m / base_m:>5.2f}x", flush=True)
                if args.breakdown:
                    print(breakdown(path, out), flush=True)
                if args.pandas_writer:
                    again = Path(tmp) / "again.csv"
                    size = out.stat().st_size / path.stat().st_size
                    (w_t, _), (p_t, _) = best_by_turns(
                        [[py, "-c", f"import pandas; pandas.read_csv({str(out)!r})"
                          f".to_csv({str(again)!r}, index=False)"],
                         [py, "-m", "estimator", "predict", str(path), "-o", str(out)]],
                        args.repeat)
                    print(f"  predict's output is {size:.1f}x the input's size; reading it and "
                          f"writing it again with pandas to_csv takes {w_t:.2f} s "
                          f"(predict, run by turns with it: {p_t / w_t:.2f}x that)", flush=True)
            if n == args.xlsx_size:
                out = Path(tmp) / "out.xlsx"
                (base_t, base_m), (t, m) = best_by_turns(
                    [base, [py, "-m", "estimator", "predict", str(path), "-o", str(out)]],
                    args.repeat)
                print(f"{n:>9,}  {base_t:>8.2f}s  {t:>11.2f}s xlsx  {t / base_t:>5.1f}x  "
                      f"{base_m:>11.0f} / {m:>11.0f}  {m / base_m:>5.2f}x  (goal <= 5x)",
                      flush=True)


if __name__ == "__main__":
    main()
