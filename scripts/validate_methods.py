"""Check every method's band against the validation tables, and print what was measured.

For each property and registered method: the number of usable validation points
(inside the method's fitted domain and not an input of the method itself), the bias
(mean of estimate - value), the mean absolute error, the band (one standard
uncertainty, as ``predict`` prints it, without the GC part) and the share of points
whose residual lies within 1 and within 2 bands. A well-calibrated band has about
68 % within 1 and 95 % within 2. The ``kind`` column says where the band comes from
(published, residuals, published+residuals, weak, spread).

Usage::

    .venv/bin/python scripts/validate_methods.py            # every method
    .venv/bin/python scripts/validate_methods.py --defaults # default methods only
    .venv/bin/python scripts/validate_methods.py --points   # also list every point

The validation tables are ``estimator/tables/validation_*.csv``; their sources and
VERIFIED/MEMORY marks are in the tables and in ``estimator/tables/README.md``.
"""

from __future__ import annotations

import sys

import numpy as np
import pandas as pd

from estimator.properties.methods import DEFAULTS, methods_for
from estimator.properties.uncertainty import method_band, residuals


def summary(defaults_only: bool = False) -> pd.DataFrame:
    """One row per property and method: n, bias, MAE, band and coverage."""
    rows = []
    for prop in DEFAULTS:
        for name in methods_for(prop):
            if defaults_only and name != DEFAULTS[prop]:
                continue
            res = residuals(prop, name)
            use = res[res["usable"]]
            band = method_band(prop, name).values(use["estimate"].to_numpy(dtype=float))
            r = use["residual"].to_numpy(dtype=float)
            n = len(r)
            rows.append({
                "property": prop, "method": name, "default": name == DEFAULTS[prop],
                "n": n, "bias": float(np.mean(r)) if n else np.nan,
                "mae": float(np.mean(np.abs(r))) if n else np.nan,
                "band_median": float(np.median(band)) if n else np.nan,
                "within_1_band": float(np.mean(np.abs(r) <= band)) if n else np.nan,
                "within_2_bands": float(np.mean(np.abs(r) <= 2 * band)) if n else np.nan,
                "kind": method_band(prop, name).kind,
            })
    return pd.DataFrame(rows)


def main(argv: list[str] | None = None) -> int:
    """Print the summary (and the points with ``--points``); exit 0."""
    argv = sys.argv[1:] if argv is None else argv
    table = summary("--defaults" in argv)
    with pd.option_context("display.width", 200, "display.max_rows", 500,
                           "display.float_format", lambda x: f"{x:.3g}"):
        print(table.to_string(index=False))
        used = table[table["n"] > 0]
        weights = used["n"].to_numpy(dtype=float)
        for label, sub, w in (("all methods", used, weights),
                              ("default methods", used[used["default"]],
                               used.loc[used["default"], "n"].to_numpy(dtype=float))):
            if len(sub):
                one = float(np.average(sub["within_1_band"], weights=w))
                two = float(np.average(sub["within_2_bands"], weights=w))
                print(f"\n{label}: {int(w.sum())} validation points; "
                      f"{one:.0%} within 1 band, {two:.0%} within 2 bands "
                      "(aim: about 68 % and 95 %)")
        if "--points" in argv:
            for prop in DEFAULTS:
                res = residuals(prop, DEFAULTS[prop])
                if len(res):
                    print(f"\n{prop} / {DEFAULTS[prop]}")
                    print(res[["sample", "value", "estimate", "residual", "in_domain",
                               "used_by_method", "mark"]].to_string(index=False))
    return 0


if __name__ == "__main__":
    sys.exit(main())
