"""Write ``estimator/tables/method_bands.csv``: every registered method's evidence band.

Each band is computed by ``estimator.properties.uncertainty.computed_band`` from the
method's residuals on the validation tables (the rules are in that module's
docstring); the file records the digest of the tables the bands come from. A normal
run reads the bands from this file instead of evaluating every method on the
validation tables at start-up. ``tests/properties/test_band_table.py`` recomputes
every row and fails when the file differs: rerun this script after changing a
method, a validation table, the species table or the typical oils.

Usage: ``python scripts/build_band_table.py [--check]`` (``--check``: only report
whether the file is up to date; exit 1 when it is not).
"""

from __future__ import annotations

import argparse
import csv
import io
import sys
from pathlib import Path

from estimator.properties.methods import DEFAULTS, methods_for
from estimator.properties.uncertainty import (
    BAND_COLUMNS,
    BAND_TABLE,
    band_inputs_digest,
    band_table_rows,
    computed_band,
)

OUT = Path(__file__).resolve().parents[1] / "estimator" / "tables" / f"{BAND_TABLE}.csv"


def table_text() -> str:
    """The file's text: one row per registered method, in registry order."""
    bands = [computed_band(prop, name) for prop in DEFAULTS for name in methods_for(prop)]
    buffer = io.StringIO()
    writer = csv.DictWriter(buffer, fieldnames=BAND_COLUMNS, lineterminator="\n")
    writer.writeheader()
    writer.writerows(band_table_rows(bands, band_inputs_digest()))
    return buffer.getvalue()


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--check", action="store_true",
                        help="only check that the file is up to date")
    args = parser.parse_args()
    text = table_text()
    current = OUT.read_text(encoding="utf-8") if OUT.exists() else None
    if args.check:
        ok = current == text
        print(f"{OUT.name}: {'up to date' if ok else 'out of date, rerun without --check'}")
        return 0 if ok else 1
    if current == text:
        print(f"{OUT.name}: unchanged ({text.count(chr(10)) - 1} bands)")
        return 0
    tmp = OUT.with_suffix(".csv.tmp")
    tmp.write_text(text, encoding="utf-8")
    tmp.replace(OUT)
    print(f"wrote {OUT} ({text.count(chr(10)) - 1} bands)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
