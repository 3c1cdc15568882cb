"""Generate the INVENTED demo lab data set data/demo/lab_samples.csv (fixed seed).

Nothing here is a real measurement. The "lab" (Brackwater Pilot Plant QC lab), its
sample ids and suppliers are invented. Profiles are drawn around typical feedstock
profiles; the "measurements" follow the stated laws below plus Gaussian noise, so a
refit can be checked against a known truth. LAB.md documents the same laws.
The laws reuse project correlations whose coefficients are MEMORY in
shared/reference/correlations.md (Bamgboye & Hansen 2008, 4.2; the Ramos 2009 LCSF
weights, 6.1); for an invented data set that only fixes the shape of the truth.

Usage:  .venv/bin/python scripts/make_demo_lab_data.py [--check]
        (--check: regenerate in memory and compare with the committed file)
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

import numpy as np
import pandas as pd

from estimator.profiles.profile import Profile
from estimator.properties.descriptors import descriptors
from estimator.properties.ignition import bamgboye2008

ROOT = Path(__file__).resolve().parents[1]
OUT = ROOT / "data" / "demo" / "lab_samples.csv"
SEED = 20240611

SPECIES = ("C14:0", "C16:0", "C16:1", "C18:0", "C18:1", "C18:2", "C18:3",
           "C20:0", "C20:1", "C22:0", "C22:1")

# Centres: the built-in typical profiles (fame-estimator oils; mass % of fatty acids),
# rounded, with the minor C20-C22 esters a GC report lists added (invented values).
CENTRES = {
    "rapeseed": {"C16:0": 4.3, "C18:0": 1.7, "C18:1": 62.5, "C18:2": 19.5, "C18:3": 9.0,
                 "C20:0": 0.6, "C20:1": 1.3, "C22:0": 0.3, "C22:1": 0.2},
    "soybean": {"C16:0": 10.5, "C18:0": 4.0, "C18:1": 23.5, "C18:2": 53.5, "C18:3": 7.0,
                "C20:0": 0.4, "C20:1": 0.2, "C22:0": 0.4},
    "sunflower": {"C16:0": 6.0, "C18:0": 4.5, "C18:1": 27.0, "C18:2": 60.5, "C18:3": 0.3,
                  "C20:0": 0.3, "C20:1": 0.2, "C22:0": 0.7},
    "palm": {"C14:0": 1.0, "C16:0": 43.5, "C18:0": 4.5, "C18:1": 39.5, "C18:2": 10.0,
             "C18:3": 0.3, "C20:0": 0.4},
    "used cooking oil": {"C14:0": 0.8, "C16:0": 14.0, "C16:1": 0.6, "C18:0": 4.8,
                         "C18:1": 52.0, "C18:2": 22.5, "C18:3": 4.0, "C20:0": 0.5,
                         "C20:1": 0.8},
    "beef tallow": {"C14:0": 3.5, "C16:0": 25.5, "C16:1": 3.5, "C18:0": 19.5, "C18:1": 40.5,
                    "C18:2": 3.5, "C18:3": 0.7, "C20:0": 0.3},
}
# How many samples of each feedstock the invented lab received.
COUNTS = {"rapeseed": 9, "soybean": 7, "sunflower": 4, "palm": 4, "used cooking oil": 7,
          "beef tallow": 3}
SUPPLIERS = {
    "rapeseed": ("Eastmoor Crushing", "Kettle Lane Oils"),
    "soybean": ("Prairie Bean Co-op",),
    "sunflower": ("Sunridge Agro",),
    "palm": ("Tanjung Refiners",),
    "used cooking oil": ("Harbour Street Recyclers", "Citygrease Collect"),
    "beef tallow": ("Valley Renderers",),
}
SPREAD = 0.12  # lognormal spread of each ester around its centre [1]

# The invented laws of the "measurements" (LAB.md states the same):
CETANE_OFFSET = 2.0       # lab cetane = Bamgboye & Hansen 2008 + 2.0 + N(0, 1.0)
CETANE_NOISE = 1.0
CFPP_SLOPE = 2.5          # lab CFPP = 2.5 LCSF - 10.0 + N(0, 1.2), reported to 1 degC
CFPP_INTERCEPT = -10.0
CFPP_NOISE = 1.2
OS_BASE_H = 1.0           # Rancimat IP = 1.0 + 300 / (BAPE + 25) + N(0, 0.4) h
OS_SCALE_H = 300.0
OS_SHIFT = 25.0
OS_NOISE_H = 0.4
IV_FACTOR = 1.01          # titrated IV = 1.01 x calculated IV + N(0, 1.0)
IV_NOISE = 1.0
# Samples whose CFPP (every 4th from the 2nd) or oxidation stability (three) the lab
# did not measure: blank cells.
NO_OS = (5, 17, 29)


def make() -> pd.DataFrame:
    rng = np.random.default_rng(SEED)
    rows = []
    k = 0
    for feed, count in COUNTS.items():
        centre = CENTRES[feed]
        for j in range(count):
            k += 1
            values = {s: centre.get(s, 0.0) * float(np.exp(rng.normal(0.0, SPREAD)))
                      for s in SPECIES}
            total = sum(values.values())
            comp = {s: round(100.0 * v / total, 2) for s, v in values.items()}
            supplier = SUPPLIERS[feed][j % len(SUPPLIERS[feed])]
            rows.append({"sample": f"BPP-{k:03d}", "feedstock": feed, "supplier": supplier,
                         **comp})
    table = pd.DataFrame(rows)
    comp = table[list(SPECIES)].copy()
    comp.index = table["sample"]
    profile = Profile.from_frame(comp, source="generated")  # renormalised as the reader does
    w = profile.wt_pct
    d = descriptors(w)
    n = len(table)
    cetane = bamgboye2008(w) + CETANE_OFFSET + rng.normal(0.0, CETANE_NOISE, n)
    cfpp = CFPP_SLOPE * d["lcsf_wt_pct"] + CFPP_INTERCEPT + rng.normal(0.0, CFPP_NOISE, n)
    os_h = OS_BASE_H + OS_SCALE_H / (d["bape_wt_pct"] + OS_SHIFT) + rng.normal(0, OS_NOISE_H, n)
    iv = IV_FACTOR * d["iodine_value_gI2_100g"] + rng.normal(0.0, IV_NOISE, n)
    table["cetane_number"] = np.round(cetane, 1)
    cfpp_col = pd.Series([f"{v:.0f}" for v in np.round(cfpp, 0) + 0.0], dtype=object)
    cfpp_col.iloc[1::4] = ""  # not measured
    table["cfpp_C"] = cfpp_col
    os_col = pd.Series(np.round(np.maximum(os_h, 0.2), 1), dtype=object)
    os_col.iloc[list(NO_OS)] = ""
    table["oxidation_stability_110C_h"] = os_col
    table["iodine_value_gI2_100g"] = np.round(iv, 1)
    for s in SPECIES:  # a GC report leaves undetected esters blank
        table[s] = table[s].map(lambda v: "" if v == 0 else f"{v:.2f}")
    return table


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--check", action="store_true", help="compare with the committed file")
    args = parser.parse_args()
    table = make()
    text = table.to_csv(index=False, lineterminator="\n")
    if args.check:
        same = OUT.read_text(encoding="utf-8") == text
        print(f"{OUT.relative_to(ROOT)}: {'matches' if same else 'DIFFERS FROM'} the generator "
              f"(seed {SEED}, {len(table)} samples)")
        return 0 if same else 1
    OUT.write_text(text, encoding="utf-8")
    print(f"wrote {OUT.relative_to(ROOT)}: {len(table)} invented samples, seed {SEED}; "
          f"measured counts: cetane {table['cetane_number'].ne('').sum()}, "
          f"CFPP {(table['cfpp_C'] != '').sum()}, "
          f"oxidation stability {(table['oxidation_stability_110C_h'] != '').sum()}, "
          f"iodine value {len(table)}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
