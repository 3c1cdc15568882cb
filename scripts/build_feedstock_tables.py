"""Write ``estimator/tables/feedstocks.csv`` and ``feedstock_ranges.csv``.

The numbers are typed here once, with their source, from the shared research note
on specification limits and feedstock compositions (standards.md section 4). The
typical profiles are mass % of total fatty acids (fatty-acid basis); the column
``other`` is 100 minus the listed acids (odd-chain, branched, trans and minor acids
the source does not list), which the profile layer excludes and renormalises.

Usage: ``python scripts/build_feedstock_tables.py`` (rewrites both files).
"""

from __future__ import annotations

import csv
from pathlib import Path

OUT = Path(__file__).resolve().parents[1] / "estimator" / "tables"
COLS = ["C8:0", "C10:0", "C12:0", "C14:0", "C16:0", "C16:1", "C18:0", "C18:1", "C18:2",
        "C18:3", "C20:0", "C20:1", "C22:0", "C22:1", "C24:0"]

S29 = "Japan Oilseed Processors Association Table 5 (2019 data) [standards.md S29] VERIFIED"
S31 = "National Academies Press, Table 12-6 Fats and Oils [standards.md S31] VERIFIED"
S27 = "Maternal & Child Nutrition 2011 7(S2):59 Table 2 [standards.md S27] VERIFIED"

# name, description, {species: wt %}, source
TYPICAL = [
    ("soybean", "soybean oil", {"C16:0": 10.3, "C18:0": 3.9, "C18:1": 23.7, "C18:2": 54.3,
                                "C18:3": 6.8}, S29),
    ("rapeseed", "rapeseed / canola oil, low erucic", {"C16:0": 4.1, "C18:0": 1.8, "C18:1": 64.1,
                                                      "C18:2": 19.0, "C18:3": 8.5}, S29),
    ("rapeseed-high-erucic", "rapeseed oil, high erucic", {
        "C16:0": 3.5, "C18:0": 1.0, "C18:1": 15, "C18:2": 13, "C18:3": 9, "C20:0": 0.7,
        "C20:1": 8, "C22:0": 0.5, "C22:1": 48},
     "erucic 45-52.5 VERIFIED [standards.md S30]; other acids MEMORY (low confidence)"),
    ("sunflower", "sunflower oil, regular (linoleic)", {"C16:0": 5, "C18:0": 6, "C18:1": 30,
                                                       "C18:2": 59},
     "British Pharmacopoeia profile via Wikipedia [standards.md S32] VERIFIED"),
    ("sunflower-high-oleic", "sunflower oil, high oleic", {"C16:0": 3.4, "C18:0": 3.5,
                                                          "C18:1": 83.7, "C18:2": 7.4,
                                                          "C18:3": 0.2}, S29),
    ("palm", "palm oil", {"C14:0": 1.0, "C16:0": 44.0, "C18:0": 4.5, "C18:1": 39.7, "C18:2": 9.6,
                          "C18:3": 0.2}, S29 + "; C14:0 from S27/S31"),
    ("palm-kernel", "palm kernel oil", {"C8:0": 3.3, "C10:0": 3.4, "C12:0": 48.2, "C14:0": 16.2,
                                        "C16:0": 8.4, "C18:0": 2.5, "C18:1": 15.3, "C18:2": 2.3},
     "MEMORY, within Codex CXS 210 ranges [standards.md S26]"),
    ("coconut", "coconut oil", {"C8:0": 7.0, "C10:0": 6.0, "C12:0": 47.5, "C14:0": 18.5,
                                "C16:0": 8.8, "C18:0": 2.8, "C18:1": 6.5, "C18:2": 1.8},
     "S31 VERIFIED for C12-C18 sums; C8/C10 split MEMORY within Codex [standards.md S24]"),
    ("corn", "corn (maize) oil", {"C16:0": 11.6, "C18:0": 1.7, "C18:1": 32.1, "C18:2": 52.4,
                                  "C18:3": 1.1}, S29),
    ("cottonseed", "cottonseed oil", {"C14:0": 0.8, "C16:0": 22.7, "C16:1": 0.8, "C18:0": 2.3,
                                      "C18:1": 17.0, "C18:2": 51.5, "C18:3": 0.2}, S31),
    ("peanut", "peanut (groundnut) oil", {"C16:0": 12, "C18:0": 5, "C18:1": 46, "C18:2": 31,
                                          "C20:0": 1, "C20:1": 1, "C22:0": 3, "C24:0": 1},
     "unrefined typical [standards.md S33] VERIFIED"),
    ("olive", "olive oil", {"C16:0": 11.8, "C18:0": 2.9, "C18:1": 75.4, "C18:2": 7.2,
                            "C18:3": 0.7}, S29),
    ("safflower", "safflower oil, high linoleic", {"C16:0": 7, "C18:0": 2, "C18:1": 19,
                                                  "C18:2": 75}, S27 + " (sums to 103: rounding)"),
    ("safflower-high-oleic", "safflower oil, high oleic", {"C16:0": 4.6, "C18:0": 1.7,
                                                          "C18:1": 80.8, "C18:2": 11.5,
                                                          "C18:3": 0.2}, S29),
    ("linseed", "linseed (flax) oil", {"C16:0": 6, "C18:0": 3, "C18:1": 20, "C18:2": 17,
                                       "C18:3": 53}, S27),
    ("jatropha", "jatropha curcas oil", {"C14:0": 0.1, "C16:0": 12.4, "C16:1": 0.7, "C18:0": 7.4,
                                         "C18:1": 44.6, "C18:2": 34.0, "C18:3": 0.2,
                                         "C20:0": 0.2, "C20:1": 0.1},
     "main four acids VERIFIED [standards.md S36]; minor acids MEMORY"),
    ("camelina", "camelina oil", {"C16:0": 6, "C18:0": 2.5, "C18:1": 16, "C18:2": 19,
                                  "C18:3": 35, "C20:0": 1.5, "C20:1": 14, "C22:1": 2.5},
     "point values MEMORY inside VERIFIED ranges [standards.md S38]"),
    ("beef-tallow", "beef tallow", {"C12:0": 0.9, "C14:0": 3.7, "C16:0": 24.9, "C16:1": 4.2,
                                    "C18:0": 18.9, "C18:1": 36.0, "C18:2": 3.1, "C18:3": 0.6,
                                    "C20:0": 0.3}, S31),
    ("lard", "lard (pork fat)", {"C12:0": 0.2, "C14:0": 1.3, "C16:0": 23.8, "C16:1": 2.7,
                                 "C18:0": 13.5, "C18:1": 41.2, "C18:2": 10.2, "C18:3": 1.0,
                                 "C20:0": 1.0}, S31),
    ("white-grease", "choice white grease (pork)", {"C12:0": 0.2, "C14:0": 1.9, "C16:0": 21.5,
                                                   "C16:1": 5.7, "C18:0": 14.9, "C18:1": 41.1,
                                                   "C18:2": 11.6, "C18:3": 0.4, "C20:0": 1.8},
     S31),
    ("poultry-fat", "poultry fat", {"C12:0": 0.1, "C14:0": 0.9, "C16:0": 21.6, "C16:1": 5.7,
                                    "C18:0": 6.0, "C18:1": 37.3, "C18:2": 19.5, "C18:3": 1.0,
                                    "C20:0": 1.2}, S31),
    ("used-cooking-oil", "used cooking oil / yellow grease (highly variable)", {
        "C14:0": 1.9, "C16:0": 16.2, "C16:1": 2.5, "C18:0": 10.5, "C18:1": 47.5, "C18:2": 17.5,
        "C18:3": 1.9, "C20:0": 1.0}, S31 + "; UCO varies with the frying oil"),
]

CODEX = "Codex CXS 210-1999 Table 1 [standards.md S24] VERIFIED"
CODEX_MEM = "Codex CXS 210-1999 row not retrieved: MEMORY (warning only)"
# oil, {quantity: (min, max)}, source ; ND written as 0
RANGES = [
    ("soybean", {"C16:0": (8.0, 13.5), "C18:0": (2.0, 5.4), "C18:1": (17, 30),
                 "C18:2": (48.0, 59.0), "C18:3": (4.5, 11.0), "iodine_value_oil": (124, 139)},
     CODEX),
    ("rapeseed", {"C16:0": (2.5, 7.0), "C18:0": (0.8, 3.0), "C18:1": (51.0, 70.0),
                  "C18:2": (15.0, 30.0), "C18:3": (5.0, 14.0), "C22:1": (0, 2.0),
                  "iodine_value_oil": (105, 126)}, CODEX + " (low erucic rapeseed)"),
    ("sunflower-high-oleic", {"C16:0": (2.6, 5.0), "C18:0": (2.9, 6.2), "C18:1": (75, 90.7),
                              "C18:2": (2.1, 17), "iodine_value_oil": (78, 90)}, CODEX),
    ("sunflower", {"C18:1": (14.0, 43.0), "C18:2": (45.4, 74.0), "iodine_value_oil": (118, 141)},
     "Codex CXS 210 amended 2022 [standards.md S25][S40] VERIFIED"),
    ("palm", {"C14:0": (0.5, 2.0), "C16:0": (39.3, 47.5), "C18:0": (3.5, 6.0),
              "C18:1": (36.0, 44.0), "C18:2": (9.0, 12.0), "iodine_value_oil": (50.0, 55.0)},
     CODEX),
    ("palm-kernel", {"C8:0": (2.4, 6.2), "C10:0": (2.6, 5.0), "C12:0": (45.0, 55.0),
                     "C14:0": (14.0, 18.0), "C16:0": (6.5, 10.0), "C18:1": (12.0, 19.0)},
     "Codex via Nutrients 2019 11:2008 Table 4 [standards.md S26] VERIFIED"),
    ("coconut", {"C8:0": (4.6, 10.0), "C10:0": (5.0, 8.0), "C12:0": (45.1, 53.2),
                 "C14:0": (16.8, 21.0), "C16:0": (7.5, 10.2), "C18:1": (5.0, 10.0),
                 "iodine_value_oil": (6.3, 10.6)}, CODEX),
    ("corn", {"C16:0": (8.6, 16.5), "C18:1": (20.0, 42.2), "C18:2": (34.0, 65.6),
              "iodine_value_oil": (103, 135)}, CODEX),
    ("cottonseed", {"C16:0": (21.4, 26.4), "C18:1": (14.7, 21.7), "C18:2": (46.7, 58.2),
                    "iodine_value_oil": (100, 123)}, CODEX),
    ("peanut", {"C16:0": (8.0, 14.0), "C18:1": (35.0, 69), "C18:2": (12.0, 43.0),
                "iodine_value_oil": (86, 107)}, CODEX_MEM),
    ("safflower", {"C16:0": (5.3, 8.0), "C18:1": (8.4, 21.3), "C18:2": (67.8, 83.2),
                   "iodine_value_oil": (136, 148)}, CODEX_MEM),
    ("safflower-high-oleic", {"C16:0": (3.6, 6.0), "C18:1": (70.0, 83.7), "C18:2": (9.0, 19.9),
                              "iodine_value_oil": (80, 100)}, CODEX),
    ("linseed", {"C16:0": (4.0, 11.3), "C18:1": (9.8, 36.0), "C18:2": (8.3, 30.0),
                 "C18:3": (43.8, 70.0), "iodine_value_oil": (170, 211)}, CODEX),
    ("olive", {"C16:0": (7.5, 20.0), "C18:0": (0.5, 5.0), "C18:1": (55.0, 83.0),
               "C18:2": (3.5, 21.0)}, "Codex CXS 33-1981 (2013) [standards.md S28] VERIFIED"),
]


def main() -> None:
    with (OUT / "feedstocks.csv").open("w", newline="", encoding="utf-8") as fh:
        w = csv.writer(fh, lineterminator="\n")
        w.writerow(["oil", "feedstock", *COLS, "other", "basis", "source"])
        for name, desc, comp, src in TYPICAL:
            listed = round(sum(comp.values()), 4)
            other = round(max(0.0, 100.0 - listed), 4)
            w.writerow([name, desc, *[comp.get(c, "") for c in COLS], other or "",
                        "fatty-acid", src])
    with (OUT / "feedstock_ranges.csv").open("w", newline="", encoding="utf-8") as fh:
        w = csv.writer(fh, lineterminator="\n")
        w.writerow(["oil", "quantity", "min", "max", "source"])
        for name, ranges, src in RANGES:
            for q, (lo, hi) in ranges.items():
                w.writerow([name, q, lo, hi, src])
    print(f"wrote {len(TYPICAL)} typical profiles and {sum(len(r[1]) for r in RANGES)} ranges")


if __name__ == "__main__":
    main()
