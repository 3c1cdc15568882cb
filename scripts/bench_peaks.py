"""Time the whole ``fame-estimator peaks`` command on many invented runs.

Makes N invented sample runs (default 500, about 25 peaks each) with
scripts/make_peak_examples.py, then runs the installed command once as a user would,
with a samples sheet and ``-o`` to CSV, and prints the wall time and peak memory.

Run: ``.venv/bin/python scripts/bench_peaks.py [N]``.
"""

from __future__ import annotations

import importlib.util
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd

ROOT = Path(__file__).resolve().parents[1]


def main(n: int) -> None:
    """Build the inputs, run the command, print what was measured."""
    spec = importlib.util.spec_from_file_location("mpe", ROOT / "scripts" /
                                                  "make_peak_examples.py")
    mpe = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mpe)
    rng = np.random.default_rng(7)
    lots = list(mpe.LOTS.values())
    with tempfile.TemporaryDirectory(prefix="bench-peaks-") as tmp:
        folder = Path(tmp)
        mpe.reference_run().to_csv(folder / "ref.csv", index=False)
        runs = []
        for i in range(n):
            profile, ester = lots[i % len(lots)]
            total = sum(profile.values())
            table, _ = mpe.synthesise_run(
                f"run{i:05d}", {k: 100 * v / total for k, v in profile.items()},
                ester_content_wt_pct=ester, sample_mass_mg=250.0, internal_standard_mg=50.0,
                rng=rng)
            runs.append(table)
        peaks = pd.concat(runs)
        peaks.to_csv(folder / "peaks.csv", index=False)
        pd.DataFrame({"sample": [f"run{i:05d}" for i in range(n)], "sample_mass_mg": 250.0,
                      "internal_standard_mg": 50.0}).to_csv(folder / "sheet.csv", index=False)
        command = [str(Path(sys.executable).parent / "fame-estimator"), "peaks",
                   str(folder / "peaks.csv"), "--reference", str(folder / "ref.csv"),
                   "--samples", str(folder / "sheet.csv"), "-o", str(folder / "out.csv")]
        start = time.perf_counter()
        subprocess.run(command, check=True, capture_output=True)
        wall = time.perf_counter() - start
        peak_mb = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024
        print(f"peaks: {n} runs, {len(peaks)} peak rows: {wall:.2f} s wall, "
              f"{peak_mb:.0f} MB peak memory (whole command)")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 500)
