"""Check every method's band against the validation tables, and print what was measured.

For each property and registered method, on the validation rows its band is built
from (inside the method's fitted domain, not an input of the method itself: the
``usable`` rows of :func:`estimator.properties.uncertainty.residuals`):

- ``n``: the number of those rows;
- ``bias``: mean of estimate - value; ``mae``: mean absolute error;
- ``band``: the median ``error`` that ``predict`` prints for those rows, i.e. one
  standard uncertainty: the method's evidence band (with its per-sample fallback
  where the evidence is weak) combined with the GC repeatability of the composition;
- ``within_1``, ``within_2``: the share of rows whose residual lies within 1 and 2
  of the printed bands (a well-calibrated band has about 68 % and 95 %);
- ``method_band``: the evidence band alone (``methods`` prints it), ``kind``: where
  it comes from (published, residuals, published+residuals, weak, spread);
- ``loo_1``, ``loo_2``: the same shares with each point's band rebuilt without that
  point (leave one out), for bands that are the RMS of these very residuals; a
  published band is out of sample already; 'weak' bands have too few points (NaN);
- ``beyond``: the validation rows outside the fitted domain (not counted above; there
  ``predict`` widens the band and no verdict "meets").

With few rows the shares are coarse (1 of 2 rows is 50 %), and a band built from
the RMS of the same residuals covers them by construction: read the shares with ``n``.

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
from estimator.properties.predict import estimate
from estimator.properties.uncertainty import (
    _validation_compositions,
    method_band,
    residuals,
    validation_table,
)


def printed_errors() -> pd.DataFrame:
    """``predict``'s printed error for every validation row and every method.

    One row per validation-table row and method of that row's property, with the
    columns ``row`` (position in :func:`validation_table`), ``method`` and ``error``.
    """
    table = validation_table()
    w = np.asarray(_validation_compositions(), dtype=float)
    comps = table["composition"].to_numpy()
    unique = list(dict.fromkeys(comps))
    first = np.array([np.flatnonzero(comps == c)[0] for c in unique])
    long = estimate(w[first], [str(i) for i in range(len(unique))], methods="all")
    long = long[long["property"].isin(set(table["property"]))]
    index = {c: i for i, c in enumerate(unique)}
    out = []
    for row, (comp, prop) in enumerate(zip(comps, table["property"])):
        sel = long[(long["sample"] == str(index[comp])) & (long["property"] == prop)]
        out.append(pd.DataFrame({"row": row, "method": sel["method"].astype(str).to_numpy(),
                                 "error": sel["error"].to_numpy(dtype=float)}))
    return pd.concat(out, ignore_index=True)


def _leave_one_out(b, r: np.ndarray, printed: np.ndarray, estimates: np.ndarray) -> np.ndarray:
    """The printed band of each point had the point itself not been evidence.

    A band that is the RMS of the same residuals covers them partly by construction;
    here each point's method band is rebuilt from the other points' residuals (RMS of
    n - 1, floored by the published statistic where the band has one) and recombined
    with that point's GC part. A published band is already independent of the points.
    NaN where the band is 'weak' or 'spread' (too few points to leave one out).
    """
    n = len(r)
    if b.kind == "published":
        return printed
    if b.kind not in ("residuals", "published+residuals") or n < 3:
        return np.full(n, np.nan)
    own = b.values(estimates)
    gc_sq = np.clip(printed**2 - own**2, 0.0, None)
    rms_without = np.sqrt((np.sum(r**2) - r**2) / (n - 1))
    floor = np.zeros(n)
    if b.kind == "published+residuals":
        from estimator.properties.methods import get_method
        from estimator.properties.uncertainty import _published_sd

        absolute, relative = _published_sd(get_method(b.prop, b.method))
        floor = np.full(n, absolute) if absolute is not None else relative * np.abs(estimates)
    return np.sqrt(gc_sq + np.fmax(rms_without, floor) ** 2)


def summary(defaults_only: bool = False) -> pd.DataFrame:
    """One row per property and method: n, bias, MAE, printed band and coverage."""
    table = validation_table()
    errors = printed_errors().set_index(["row", "method"])["error"]
    rows = []
    for prop in DEFAULTS:
        prop_rows = np.flatnonzero(table["property"].to_numpy() == prop)
        for name in methods_for(prop):
            if defaults_only and name != DEFAULTS[prop]:
                continue
            res = residuals(prop, name)  # same order as prop_rows
            usable = res["usable"].to_numpy()
            r = res.loc[usable, "residual"].to_numpy(dtype=float)
            band = np.array([errors.get((int(i), name), np.nan) for i in prop_rows[usable]])
            beyond = int((~res["in_domain"] & ~res["used_by_method"]
                          & np.isfinite(res["residual"])).sum())
            n = len(r)
            b = method_band(prop, name)
            evidence = (f"{b.absolute:.3g}" if b.absolute is not None else "") + (
                f"{' or ' if b.absolute is not None else ''}{100 * b.relative:.2g} %"
                if b.relative is not None else "")
            loo = _leave_one_out(b, r, band, res.loc[usable, "estimate"].to_numpy(dtype=float))
            rows.append({
                "property": prop, "method": name, "default": name == DEFAULTS[prop],
                "n": n, "bias": float(np.mean(r)) if n else np.nan,
                "mae": float(np.mean(np.abs(r))) if n else np.nan,
                "band": float(np.median(band)) if n else np.nan,
                "within_1": float(np.mean(np.abs(r) <= band)) if n else np.nan,
                "within_2": float(np.mean(np.abs(r) <= 2 * band)) if n else np.nan,
                "loo_1": float(np.mean(np.abs(r) <= loo)) if n and np.isfinite(loo).all()
                else np.nan,
                "loo_2": float(np.mean(np.abs(r) <= 2 * loo)) if n and np.isfinite(loo).all()
                else np.nan,
                "method_band": evidence or "spread", "kind": b.kind, "beyond": beyond,
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
        groups = [("default methods", used[used["default"]])]
        if "--defaults" not in argv:
            groups.insert(0, ("all methods", used))
        for label, sub in groups:
            if len(sub):
                w = sub["n"].to_numpy(dtype=float)
                one = float(np.average(sub["within_1"], weights=w))
                two = float(np.average(sub["within_2"], weights=w))
                print(f"\n{label}: {int(w.sum())} validation points; "
                      f"{one:.0%} within 1 printed band, {two:.0%} within 2 "
                      "(aim: about 68 % and 95 %)")
                held = sub[np.isfinite(sub["loo_1"])]
                if len(held):
                    wl = held["n"].to_numpy(dtype=float)
                    print(f"  leave one out, on the {int(wl.sum())} points of methods with "
                          f"enough of them: "
                          f"{float(np.average(held['loo_1'], weights=wl)):.0%} within 1 band, "
                          f"{float(np.average(held['loo_2'], weights=wl)):.0%} within 2")
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
