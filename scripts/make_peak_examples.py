"""Make the invented GC peak tables of data/examples/ from known profiles.

Writes, into ``data/examples/`` (or the folder given as the first argument):

* ``peaks_reference.csv``: a reference run of an invented FAME standard mixture
  (``name``, ``retention_time_min``, ``area``) on an invented polar column;
* ``peaks_runs.csv``: three invented sample runs (``sample``, ``retention_time_min``,
  ``area``, ``height``, ``name``) with a solvent peak, drift of the retention scale,
  FID response (theoretical correction factors), the internal standard methyl
  nonadecanoate (C19:0), a small unidentified peak and a late non-ester peak;
* ``peaks_samples.csv``: the samples sheet (``sample``, ``sample_mass_mg``,
  ``internal_standard_mg``).

Everything is invented: the column, the lots and their profiles. The tests import
:func:`synthesise_run` to make runs from random profiles and read them back.

Noise model (our own choice, stated so nobody mistakes it for a measured one): the
sample run's retention scale is shifted by up to 0.05 min and stretched by up to 0.2 %
against the reference run, with 0.002 min jitter per peak; areas carry 0.05 %
relative noise (one integration, not the spread between injections).

Run: ``.venv/bin/python scripts/make_peak_examples.py``; it prints what it wrote.
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pandas as pd

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from estimator.profiles.gc_formulas import tcf_ackman1964  # noqa: E402
from estimator.tables import species_table  # noqa: E402

#: Equivalent chain lengths of the esters on the invented polar column (unsaturated
#: esters elute after the saturated ester of the same chain, as on cyanopropyl phases).
ECL = {
    "C6:0": 6.0, "C8:0": 8.0, "C10:0": 10.0, "C12:0": 12.0, "C14:0": 14.0, "C14:1": 14.45,
    "C15:0": 15.0, "C16:0": 16.0, "C16:1": 16.40, "C17:0": 17.0, "C17:1": 17.40,
    "C18:0": 18.0, "C18:1t": 18.22, "C18:1": 18.38, "C18:2": 18.80, "C19:0": 19.0,
    "C18:3n6": 19.22, "C18:3": 19.45, "C18:4": 19.75, "C20:0": 20.0, "C20:1": 20.36,
    "C20:2": 20.80, "C18:1OH": 21.45, "C20:4": 21.20, "C20:5": 21.70, "C22:0": 22.0,
    "C22:1": 22.36, "C22:5": 23.35, "C22:6": 23.70, "C24:0": 24.0, "C24:1": 24.36,
}
#: How the reference file names each ester (various spellings the parser reads).
REFERENCE_NAMES = {
    "C6:0": "methyl caproate", "C8:0": "C8:0", "C10:0": "methyl caprate", "C12:0": "C12:0",
    "C14:0": "methyl myristate", "C14:1": "C14:1", "C15:0": "C15:0",
    "C16:0": "methyl palmitate", "C16:1": "C16:1 n-7", "C17:0": "C17:0", "C17:1": "C17:1",
    "C18:0": "methyl stearate", "C18:1t": "C18:1 trans-9", "C18:1": "C18:1 cis-9",
    "C18:2": "methyl linoleate", "C19:0": "methyl nonadecanoate", "C18:3n6": "C18:3 n-6",
    "C18:3": "methyl linolenate", "C18:4": "C18:4", "C20:0": "C20:0", "C20:1": "C20:1",
    "C20:2": "C20:2", "C18:1OH": "methyl ricinoleate", "C20:4": "C20:4", "C20:5": "EPA",
    "C22:0": "methyl behenate", "C22:1": "methyl erucate", "C22:5": "C22:5",
    "C22:6": "DHA", "C24:0": "C24:0", "C24:1": "methyl nervonate",
}
SOLVENT_RT = (0.86, 0.95)
UNIDENTIFIED_ECL = 13.2  # an invented contaminant between C12:0 and C14:0
LATE_RT = 26.4  # an invented non-ester peak eluting after C24:1
#: Molar mass of methyl nonadecanoate, C20H40O2 (IUPAC atomic weights) [g/mol].
C19_MOLAR_MASS = 20 * 12.011 + 40 * 1.008 + 2 * 15.999


def saturated_rt(n: np.ndarray) -> np.ndarray:
    """Retention time of the saturated ester with n acid carbons on the invented column."""
    x = np.asarray(n, dtype=float) - 6.0
    return 2.10 + 1.32 * x - 0.008 * x**2


def column_rt(ecl: np.ndarray) -> np.ndarray:
    """Retention time at an ECL: linear between the bracketing saturated esters."""
    ecl = np.asarray(ecl, dtype=float)
    lo = np.floor(ecl)
    return saturated_rt(lo) + (ecl - lo) * (saturated_rt(lo + 1) - saturated_rt(lo))


def mass_factor(key: str) -> float:
    """Theoretical correction factor used to turn mass into FID area (area = mass / TCF)."""
    if key == "C19:0":
        return float(tcf_ackman1964(C19_MOLAR_MASS, 19))
    s = species_table().loc[key]
    return float(tcf_ackman1964(s["fame_molar_mass_g_mol"], s["carbons"]))


def reference_run() -> pd.DataFrame:
    """The reference run: every ester of :data:`ECL` once, equal masses, no drift."""
    keys = sorted(ECL, key=ECL.get)
    rt = column_rt(np.array([ECL[k] for k in keys]))
    area = np.array([1000.0 / mass_factor(k) for k in keys])
    return pd.DataFrame({"name": [REFERENCE_NAMES[k] for k in keys],
                         "retention_time_min": np.round(rt, 3), "area": np.round(area, 1)})


def synthesise_run(
    sample: str,
    wt_pct: dict[str, float],
    *,
    ester_content_wt_pct: float,
    sample_mass_mg: float,
    internal_standard_mg: float,
    rng: np.random.Generator,
    area_noise: float = 5e-4,
    counts_per_mg: float = 1.0e4,
) -> tuple[pd.DataFrame, dict[str, float]]:
    """One sample run from a known FAME profile (wt %, FAME basis).

    Returns the peak table and the truth: ``expected_en14103_wt_pct`` is the ester
    content EN 14103 gives on the noise-free areas (areas as measured, so it differs from
    ``ester_content_wt_pct`` by the esters' response relative to the internal standard).
    """
    keys = [k for k, v in wt_pct.items() if v > 0]
    ester_mg = sample_mass_mg * ester_content_wt_pct / 100.0
    mass = np.array([ester_mg * wt_pct[k] / 100.0 for k in keys])
    area_true = counts_per_mg * mass / np.array([mass_factor(k) for k in keys])
    is_area = counts_per_mg * internal_standard_mg / mass_factor("C19:0")
    contaminant = 0.0015 * area_true.sum()
    late = 0.004 * area_true.sum()
    ecl = np.array([ECL[k] for k in keys] + [ECL["C19:0"], UNIDENTIFIED_ECL])
    rt_ref = np.concatenate([column_rt(ecl), [LATE_RT]])
    shift, stretch = rng.uniform(-0.05, 0.05), rng.uniform(-0.002, 0.002)
    rt = rt_ref * (1.0 + stretch) + shift + rng.normal(0.0, 0.002, len(rt_ref))
    area = np.concatenate([area_true, [is_area, contaminant, late]])
    noisy = area * (1.0 + rng.normal(0.0, area_noise, len(area)))
    solvent_area = 40.0 * area.sum()
    rt = np.concatenate([np.array(SOLVENT_RT) + rng.normal(0, 0.002, 2), rt])
    noisy = np.concatenate([[solvent_area, 0.002 * solvent_area], noisy])
    order = np.argsort(rt)
    table = pd.DataFrame({
        "sample": sample, "retention_time_min": np.round(rt[order], 4),
        "area": np.round(noisy[order], 2),
        "height": np.round(noisy[order] / 2.5, 1),
    })
    window_total = area_true.sum() + is_area + contaminant  # C6:0 .. C24:1, late peak after
    truth = {
        "ester_content_wt_pct": ester_content_wt_pct,
        "expected_en14103_wt_pct": (window_total - is_area) / is_area
        * internal_standard_mg / sample_mass_mg * 100.0,
        "shift_min": shift, "stretch": stretch,
    }
    return table, truth


#: The three invented lots: FAME profiles (wt %) and ester contents (% m/m).
LOTS = {
    "RS-2041 rapeseed": ({"C16:0": 4.6, "C16:1": 0.3, "C18:0": 1.7, "C18:1": 61.0,
                          "C18:2": 19.8, "C18:3": 9.6, "C20:0": 0.6, "C20:1": 1.4,
                          "C22:0": 0.3, "C22:1": 0.5, "C24:0": 0.2}, 98.1),
    "UC-0317 used cooking oil": ({"C14:0": 0.6, "C16:0": 11.8, "C16:1": 0.4, "C18:0": 4.1,
                                  "C18:1t": 1.6, "C18:1": 44.5, "C18:2": 31.9, "C18:3": 3.1,
                                  "C20:0": 0.5, "C20:1": 0.9, "C22:0": 0.6}, 96.9),
    "TW-0815 tallow": ({"C14:0": 3.2, "C15:0": 0.6, "C16:0": 25.8, "C16:1": 3.1, "C17:0": 1.5,
                        "C17:1": 0.8, "C18:0": 19.6, "C18:1t": 2.9, "C18:1": 38.9, "C18:2": 2.6,
                        "C18:3": 0.6, "C20:0": 0.2, "C20:1": 0.2}, 95.4),
}
SAMPLE_MASS_MG = {"RS-2041 rapeseed": 251.3, "UC-0317 used cooking oil": 248.7,
                  "TW-0815 tallow": 250.2}
INTERNAL_STANDARD_MG = 50.0  # 5 mL of a 10 mg/mL methyl nonadecanoate solution


def main(outdir: Path) -> None:
    """Write the reference run, the three sample runs and the samples sheet."""
    rng = np.random.default_rng(20261202)
    outdir.mkdir(parents=True, exist_ok=True)
    reference_run().to_csv(outdir / "peaks_reference.csv", index=False)
    runs = []
    for sample, (profile, ester) in LOTS.items():
        total = sum(profile.values())
        wt = {k: 100.0 * v / total for k, v in profile.items()}
        table, truth = synthesise_run(sample, wt, ester_content_wt_pct=ester,
                                      sample_mass_mg=SAMPLE_MASS_MG[sample],
                                      internal_standard_mg=INTERNAL_STANDARD_MG, rng=rng)
        table["name"] = ""
        runs.append(table)
        print(f"{sample}: ester content {ester} % (m/m) made; EN 14103 on noise-free areas "
              f"gives {truth['expected_en14103_wt_pct']:.2f}; drift {truth['shift_min']:+.3f} "
              f"min, stretch {truth['stretch'] * 100:+.3f} %")
    pd.concat(runs).to_csv(outdir / "peaks_runs.csv", index=False)
    pd.DataFrame({"sample": list(SAMPLE_MASS_MG), "sample_mass_mg": list(SAMPLE_MASS_MG.values()),
                  "internal_standard_mg": INTERNAL_STANDARD_MG}).to_csv(
        outdir / "peaks_samples.csv", index=False)
    for name in ("peaks_reference.csv", "peaks_runs.csv", "peaks_samples.csv"):
        print(f"wrote {outdir / name}")


if __name__ == "__main__":
    main(Path(sys.argv[1]) if len(sys.argv) > 1 else ROOT / "data" / "examples")
