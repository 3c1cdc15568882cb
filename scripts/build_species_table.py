"""Fill or check the derived columns of ``estimator/tables/species.csv``.

The hand-kept columns (key, carbons, double_bonds, trans, hydroxyl, delta,
names, synonyms, cas, sources) are the input. The formulas, molar masses and
allylic / bis-allylic counts are derived here from the structure and the IUPAC
conventional atomic weights, so anyone can see every transformation.

Usage::

    python scripts/build_species_table.py          # check, exit 1 on mismatch
    python scripts/build_species_table.py --write  # rewrite derived columns

Atomic weights: IUPAC Commission on Isotopic Abundances and Atomic Weights,
abridged/conventional values (Prohaska et al. 2022, Pure Appl. Chem. 94:573):
C 12.011, H 1.008, O 15.999.
"""

from __future__ import annotations

import argparse
import csv
import sys
from pathlib import Path

ATOMIC_WEIGHT = {"C": 12.011, "H": 1.008, "O": 15.999}
TABLE = Path(__file__).resolve().parents[1] / "estimator" / "tables" / "species.csv"


def formulas(carbons: int, double_bonds: int, hydroxyl: int) -> tuple[dict, dict]:
    """Element counts of the fatty acid and of its methyl ester."""
    acid = {"C": carbons, "H": 2 * carbons - 2 * double_bonds, "O": 2 + hydroxyl}
    fame = {"C": carbons + 1, "H": acid["H"] + 2, "O": acid["O"]}
    return acid, fame


def formula_text(counts: dict) -> str:
    return "".join(f"{el}{counts[el]}" for el in ("C", "H", "O"))


def molar_mass(counts: dict) -> float:
    return sum(ATOMIC_WEIGHT[el] * n for el, n in counts.items())


def positions(row: dict) -> tuple[int, int]:
    """Allylic and bis-allylic CH2 positions of a methylene-interrupted chain."""
    delta = [int(p) for p in row["delta"].split(",") if p]
    if not delta:
        return 0, 0
    bis = sum(1 for a, b in zip(delta, delta[1:]) if b - a == 3)
    return 2, bis


def derived(row: dict) -> dict:
    c, d, oh = int(row["carbons"]), int(row["double_bonds"]), int(row["hydroxyl"])
    acid, fame = formulas(c, d, oh)
    allylic, bis = positions(row)
    return {
        "acid_formula": formula_text(acid),
        "fame_formula": formula_text(fame),
        "acid_molar_mass_g_mol": f"{molar_mass(acid):.3f}",
        "fame_molar_mass_g_mol": f"{molar_mass(fame):.3f}",
        "allylic_positions": str(allylic),
        "bis_allylic_positions": str(bis),
    }


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--write", action="store_true", help="rewrite derived columns")
    args = parser.parse_args()
    with TABLE.open(newline="", encoding="utf-8") as fh:
        reader = csv.DictReader(fh)
        fields = list(reader.fieldnames or [])
        rows = list(reader)
    bad = 0
    for row in rows:
        for col, value in derived(row).items():
            if row.get(col) != value:
                bad += 1
                print(f"{row['key']}: {col} is {row.get(col)!r}, derived {value!r}")
                row[col] = value
    if args.write:
        tmp = TABLE.with_suffix(".tmp")
        with tmp.open("w", newline="", encoding="utf-8") as fh:
            writer = csv.DictWriter(fh, fieldnames=fields, lineterminator="\n")
            writer.writeheader()
            writer.writerows(rows)
        tmp.replace(TABLE)
        print(f"wrote {len(rows)} rows, {bad} derived cells changed")
        return 0
    print(f"checked {len(rows)} species: {bad} derived cells differ")
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main())
