"""Benchmark the blend curves and the least-cost mix.

Measures, on synthetic data (mixtures of the built-in typical oil profiles, with
invented prices and tonnages):

- a 100-level blend curve (B0-B100) for 1,000 FAMEs: the neat estimates, the
  vectorised mixing rules (all rules), and the wide table;
- the highest level meeting a CFPP target for those 1,000 FAMEs (grid + vectorised
  bisection);
- the whole ``fame-estimator blend`` command on 100 FAMEs (EN 590 class C and ASTM
  D7467, ``-o`` CSV), as a fresh process, against a ``python -c "import pandas"``
  process (the two run by turns): the ratio of the best wall times and of the CPU
  times (goal <= 1.5);
- the least-cost mix over 50 lots under EN 14214 with a CFPP limit (linear programme
  only), with a cloud-point limit added (per-ester linear rows), and with CFPP taken
  from the cloud point by the [S21] equation (nonlinear: linear programme + SLSQP).

Prints each timing (best of a few runs, after one warm-up run) with its throughput.

Usage: ``python scripts/bench_blend.py [--fames 1000] [--levels 100] [--lots 50]``
"""

from __future__ import annotations

import argparse
import os
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd

from estimator import blend_targets, blending, mixing
from estimator.profiles.profile import Profile, oil_names

BASE_OILS = ("rapeseed", "soybean", "palm", "sunflower-high-oleic", "used-cooking-oil",
             "beef-tallow", "camelina")


def synthetic_profiles(n: int, seed: int) -> Profile:
    """n synthetic FAMEs: random mixtures of a few built-in typical oils (invented)."""
    base = Profile.from_oils([o for o in BASE_OILS if o in oil_names()])
    rng = np.random.default_rng(seed)
    shares = rng.dirichlet(np.full(len(base), 0.5), size=n)
    w = mixing.mixed_composition(base.wt_pct, shares)
    comp = pd.DataFrame(w, columns=base.composition.columns,
                        index=[f"S{i:04d}" for i in range(n)])
    meta = pd.DataFrame({
        "price_per_t": rng.uniform(700, 1100, n).round(0),  # invented
        "available_t": rng.uniform(50, 400, n).round(0),  # invented
    }, index=comp.index)
    return Profile.from_frame(comp, metadata=meta, source="synthetic")


def best_of(fn, repeat: int = 3) -> tuple[float, object]:
    fn()  # warm-up: imports, cached tables
    times, out = [], None
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = fn()
        times.append(time.perf_counter() - t0)
    return min(times), out


#: Environment of the measured processes: bytecode caching on, as in an installed package
#: (an environment with PYTHONDONTWRITEBYTECODE would recompile the package every run
#: while pandas, installed with its bytecode, would not).
_ENV = {k: v for k, v in os.environ.items() if k != "PYTHONDONTWRITEBYTECODE"}


def _process_time(cmd: list[str]) -> tuple[float, float]:
    """Wall time and CPU time (user + system) of one fresh process."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    t0 = time.perf_counter()
    subprocess.run(cmd, check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
                   env=_ENV)
    wall = time.perf_counter() - t0
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    return wall, after.ru_utime - before.ru_utime + after.ru_stime - before.ru_stime


def _process_times(cmds: list[list[str]], repeat: int) -> list[tuple[float, float]]:
    """Best wall time and best CPU time of ``repeat`` fresh processes of each command.

    The commands take turns (one run of each, ``repeat`` times), so that a burst of
    load on a shared machine falls on all of them rather than on one.
    """
    runs: list[list[tuple[float, float]]] = [[] for _ in cmds]
    for _ in range(repeat):
        for cmd, times in zip(cmds, runs, strict=True):
            times.append(_process_time(cmd))
    return [(min(w for w, _ in times), min(c for _, c in times)) for times in runs]


def whole_blend_command(n_fames: int = 100, repeat: int = 5) -> None:
    """The whole ``blend`` command on ``n_fames`` FAMEs against importing pandas."""
    profile = synthetic_profiles(n_fames, seed=3)
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "fames.csv"
        frame = profile.composition.copy()
        frame.index.name = "sample"
        frame.to_csv(path)
        cmd = [sys.executable, "-m", "estimator", "blend", str(path), "--diesel", "en590-winter",
               "--climate-class", "C", "-o", str(Path(tmp) / "blend.csv"), "--quiet"]
        # warm the file caches and write the package's bytecode, as an install does
        subprocess.run(cmd, check=True, capture_output=True, env=_ENV)
        (wall, cpu), (base_wall, base_cpu) = _process_times(
            [cmd, [sys.executable, "-c", "import pandas"]], repeat)
    print(f"whole 'blend' command, {n_fames} FAMEs (EN 590 class C + ASTM D7467, -o CSV), "
          f"best of {repeat}: {wall:.2f} s wall, {cpu:.2f} s CPU; 'import pandas' process "
          f"{base_wall:.2f} s wall, {base_cpu:.2f} s CPU; ratio {wall / base_wall:.2f} (wall), "
          f"{cpu / base_cpu:.2f} (CPU); goal <= 1.5")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--fames", type=int, default=1000)
    parser.add_argument("--levels", type=int, default=100)
    parser.add_argument("--lots", type=int, default=50)
    parser.add_argument("--command-fames", type=int, default=100,
                        help="FAMEs in the whole-command measurement")
    parser.add_argument("--only-command", action="store_true",
                        help="only the whole-command measurement")
    args = parser.parse_args()
    whole_blend_command(args.command_fames)
    if args.only_command:
        return

    profiles = synthetic_profiles(args.fames, seed=1)
    diesel = blending.load_diesel("en590-winter")
    levels = np.linspace(0.0, 100.0, args.levels)
    n_values = args.fames * args.levels

    t_neat, fame = best_of(lambda: blending.fame_component(profiles.wt_pct, profiles.samples))
    t_rules, _ = best_of(lambda: blending.blend_arrays(fame, diesel, levels, methods="all"))
    t_wide, wide = best_of(lambda: blending.blend_wide(fame, diesel, levels))
    total = t_neat + t_rules + t_wide
    print(f"blend curve, {args.fames} FAMEs x {args.levels} levels ({n_values:,} blends):")
    print(f"  neat-FAME estimates      {t_neat * 1e3:8.1f} ms")
    print(f"  mixing rules (all)       {t_rules * 1e3:8.1f} ms  "
          f"({n_values / t_rules / 1e6:.2f} M blends/s)")
    print(f"  wide table ({len(wide):,} rows) {t_wide * 1e3:8.1f} ms")
    print(f"  total                    {total * 1e3:8.1f} ms  "
          f"({n_values / total / 1e6:.2f} M blends/s)")

    target = [blend_targets.Target("cfpp_C", "max", -12.0, "CFPP <= -12 °C")]
    t_root, levels_found = best_of(lambda: blend_targets.highest_levels(fame, diesel, target),
                                   repeat=1)
    roots = int((levels_found["how"] == "root of the blend curve").sum())
    print(f"highest level meeting CFPP <= -12 °C for {args.fames} FAMEs (grid + {roots} "
          f"bisections): {t_root * 1e3:.1f} ms ({args.fames / t_root:,.0f} FAMEs/s)")

    lots = synthetic_profiles(args.lots, seed=2)
    linear = mixing.mix_constraints("en14214", max_cfpp_C=0.0)
    cloud = mixing.mix_constraints("en14214", max_cfpp_C=0.0, max_cloud_point_C=5.0)
    nonlinear = mixing.mix_constraints("en14214", max_cfpp_C=4.0)
    t_lp, res_lp = best_of(lambda: mixing.least_cost_mix(lots, linear, demand_t=2000.0))
    t_cp, res_cp = best_of(lambda: mixing.least_cost_mix(lots, cloud, demand_t=2000.0))
    override = {"cfpp_C": "from_cloud_point"}  # CFPP = 1.0191 CP - 2.9: nonlinear as written
    t_nl, res_nl = best_of(lambda: mixing.least_cost_mix(lots, nonlinear, demand_t=2000.0,
                                                         methods=override))
    for label, t, res in (
        ("EN 14214 + CFPP <= 0 °C (linear programme)", t_lp, res_lp),
        ("+ cloud point <= 5 °C (per-ester linear rows)", t_cp, res_cp),
        ("CFPP from the cloud point <= 4 °C (LP + SLSQP)", t_nl, res_nl),
    ):
        print(f"least-cost mix over {args.lots} lots, {label}: {t * 1e3:.1f} ms, "
              f"feasible={res.feasible}, solver={res.solver}, cost {res.cost_per_t_fuel:.1f}/t")
    print(f"ratio nonlinear (SLSQP) / linear mix time: {t_nl / t_lp:.1f}")


if __name__ == "__main__":
    main()
