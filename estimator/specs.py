r"""Specification limits and the verdict of each estimate against them.

The limits live in ``estimator/tables/specs.csv``: one row per limit (a minimum or
a maximum) with its specification key (``en14214``, ``astm-d6751``, ``en590``,
``astm-d7467``), edition, test method, the mark of the number in the shared
research notes (VERIFIED or MEMORY) and the source. Climate-dependent limits
(CFPP grades A-F and arctic classes 0-4, the arctic cloud point and the arctic
density, viscosity and cetane limits of EN 590) carry a ``climate_class``; they
apply only when that class is chosen, and then replace the general limit of the
same property and bound.

Verdicts
--------
Every ``error`` is one standard uncertainty (one standard deviation). For an
estimate :math:`x` with error :math:`\sigma` against a limit :math:`L`, the
probability that the property meets the limit, under a normal error, is

.. math::

    p = \Phi\left(\frac{x - L}{\sigma}\right) \text{ (minimum)}, \qquad
    p = \Phi\left(\frac{L - x}{\sigma}\right) \text{ (maximum)},

given in the column ``probability_meets`` (1 or 0 without a band). The verdict:

* ``meets`` when :math:`p \ge 0.9` (:data:`MEETS_AT`);
* ``fails`` when :math:`p \le 0.1` (:data:`FAILS_AT`);
* ``too close to call`` in between, i.e. when the limit lies within 1.28 standard
  uncertainties of the estimate (the cut: neither outcome is 9 times likelier than
  the other);
* ``outside method range`` for an estimate outside its method's fitted domain:
  such a number must not decide as if it were inside. It is never ``meets``, and
  its ``probability_meets`` is left empty (NaN). Only where even its widened band
  (see :mod:`estimator.properties.uncertainty`) leaves ``p <= 0.1`` is it ``fails``
  (a tallow CFPP of +25 °C against a -5 °C limit fails whatever the method's range).

Properties the composition fixes exactly (linolenic acid methyl ester and the
esters with four or more double bonds, which EN 14214 limits on the GC result)
get no band: the profile *is* the measurement. A property the estimates do not
contain gets the verdict ``not estimated`` rather than silently passing.

MEMORY: the EN 14214 CFPP grade ladder is assumed equal to the EN 590 ladder
(standards.md 1.2); the EN 590 arctic class 0 cloud point (-10 degC) is from memory
(standards.md 3.4).
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Sequence
from functools import cache

import numpy as np
import pandas as pd

from estimator.errors import UnknownNameError

__all__ = [
    "EXACT_PROPERTIES",
    "composition_errors",
    "FAILS_AT",
    "MEASURED_PROPERTIES",
    "MEETS_AT",
    "PROPERTY_LABELS",
    "SPEC_NAMES",
    "VERDICTS",
    "check",
    "climate_classes",
    "probability_meets",
    "composition_estimates",
    "known_specs",
    "limits",
    "measured_estimates",
    "normalise_climate_class",
    "spec_table",
    "summarise",
]

#: The verdicts, in order of how much they worry a buyer (best first).
VERDICTS = ("meets", "too close to call", "fails", "not estimated", "outside method range")
#: ``probability_meets`` at or above which the verdict is ``meets``.
MEETS_AT = 0.9
#: ``probability_meets`` at or below which the verdict is ``fails``.
FAILS_AT = 0.1

#: How each specification is written for readers (tables, legends, the report, prose).
SPEC_NAMES = {"en14214": "EN 14214", "astm-d6751": "ASTM D6751", "en590": "EN 590",
              "astm-d7467": "ASTM D7467"}

#: Properties fixed exactly by the composition (limits on the GC result itself).
EXACT_PROPERTIES = ("linolenic_wt_pct", "pufa4_wt_pct")

#: Properties measured on the sample (read from the profile's metadata, e.g. the EN 14103
#: ester content from a GC peak table): judged only for samples that carry a value.
MEASURED_PROPERTIES = ("ester_content_wt_pct",)

#: Short names for the properties in verdict summaries, tables and plots.
PROPERTY_LABELS = {
    "cetane_number": "cetane number",
    "iodine_value_gI2_100g": "iodine value",
    "cfpp_C": "CFPP",
    "cloud_point_C": "cloud point",
    "pour_point_C": "pour point",
    "oxidation_stability_110C_h": "oxidation stability",
    "density_15C_kg_m3": "density",
    "kin_viscosity_40C_mm2_s": "viscosity",
    "linolenic_wt_pct": "linolenic ester",
    "ester_content_wt_pct": "ester content",
    "pufa4_wt_pct": "esters with ≥ 4 double bonds",
    "hhv_MJ_kg": "higher heating value",
    "lhv_MJ_kg": "lower heating value",
}

#: Columns of the table :func:`check` returns.
CHECK_COLUMNS = [
    "sample", "spec", "property", "estimate", "error", "limit", "verdict",
    "bound", "unit", "method", "in_domain", "climate_class", "edition", "mark",
    "probability_meets",
]


@cache
def spec_table() -> pd.DataFrame:
    """Every limit of ``specs.csv`` (callers must not modify the frame; copy it)."""
    from estimator.tables import load_table

    table = load_table("specs").copy()
    table["climate_class"] = table["climate_class"].astype(object).where(
        table["climate_class"].notna(), None
    )
    table["exact_from_composition"] = table["exact_from_composition"].astype(bool)
    return table


def known_specs() -> list[str]:
    """The specification keys in ``specs.csv``, in file order.

    Examples
    --------
    >>> known_specs()
    ['en14214', 'astm-d6751', 'en590', 'astm-d7467']
    """
    return list(dict.fromkeys(spec_table()["spec"]))


def climate_classes(specs: Iterable[str] | None = None) -> list[str]:
    """Climate classes that have limits (all specifications, or only those named).

    Examples
    --------
    >>> climate_classes(["en14214"])
    ['A', 'B', 'C', 'D', 'E', 'F', '0', '1', '2', '3', '4']
    """
    table = spec_table()
    if specs is not None:
        table = table[table["spec"].isin(list(specs))]
    return list(dict.fromkeys(c for c in table["climate_class"] if c is not None))


def _normalise_specs(specs: str | Sequence[str]) -> list[str]:
    names = [specs] if isinstance(specs, str) else list(specs)
    known = known_specs()
    out = []
    for name in names:
        key = str(name).strip().lower().replace("_", "-").replace(" ", "-")
        if key not in known:
            raise UnknownNameError(
                f"unknown specification {name!r}; known specifications: {', '.join(known)}"
            )
        if key not in out:
            out.append(key)
    if not out:
        raise UnknownNameError(f"no specification given; known specifications: {', '.join(known)}")
    return out


def normalise_climate_class(climate_class: str | None) -> str | None:
    """The canonical key of a climate class (``'c'``, ``'grade C'`` -> ``'C'``; ``'arctic 2'``
    -> ``'2'``); ``None`` stays ``None``. Unknown classes raise UnknownNameError listing them.
    """
    if climate_class is None:
        return None
    key = str(climate_class).strip().upper()
    for prefix in ("ARCTIC", "CLASS", "GRADE"):
        key = key.removeprefix(prefix).strip(" -")
    known = climate_classes()
    if key not in known:
        raise UnknownNameError(
            f"unknown climate class {climate_class!r}; known classes: {', '.join(known)} "
            "(A-F temperate grades, 0-4 arctic classes)"
        )
    return key


def limits(specs: str | Sequence[str], climate_class: str | None = None) -> pd.DataFrame:
    """The limits that apply for the named specifications and climate class.

    Climate-class rows replace the general row of the same spec, property and bound;
    without a class, climate-dependent limits (e.g. CFPP) are left out.

    Raises
    ------
    UnknownNameError
        For an unknown specification or climate class; the message lists the known ones.

    Examples
    --------
    >>> t = limits("en14214", climate_class="C")
    >>> float(t.loc[t["property"] == "cfpp_C", "max"].iloc[0])
    -5.0
    """
    names = _normalise_specs(specs)
    cls = normalise_climate_class(climate_class)
    table, keys = _limit_rows()
    # rows of each named spec in file order: its general rows, a class row replacing the
    # general row of the same property and bound (row picking in Python: a few hundred
    # rows, called several times per command)
    replaced = {key[:3] for key in keys if key[3] == cls} if cls is not None else set()
    rows = [i for name in names for i, key in enumerate(keys) if key[0] == name
            and ((key[3] is None and key[:3] not in replaced) or (cls is not None
                                                                  and key[3] == cls))]
    return table.take(rows).reset_index(drop=True)


@cache
def _limit_rows() -> tuple[pd.DataFrame, tuple[tuple[str, str, str, str | None], ...]]:
    """The spec table with ``bound`` and ``limit`` columns, and (spec, property, bound,
    climate class) per row (callers must not modify the frame)."""
    table = spec_table().copy()
    table["bound"] = np.where(table["min"].notna(), "min", "max")
    table["limit"] = table["min"].where(table["min"].notna(), table["max"])
    keys = tuple(zip(table["spec"], table["property"], table["bound"], table["climate_class"]))
    return table, keys


def composition_errors(wt_pct: np.ndarray) -> dict[str, np.ndarray]:
    """One standard deviation of each composition-limited property from the GC repeatability.

    The linolenic ester and polyene contents are read from the profile itself; their
    uncertainty is that of the GC areas they sum (the default GC repeatability of
    :mod:`estimator.properties.uncertainty`, propagated exactly as for every estimate).
    """
    from estimator.properties.descriptors import descriptors
    from estimator.properties.uncertainty import composition_sd

    w = np.atleast_2d(np.asarray(wt_pct, dtype=float))

    def evaluate(ww, names=None):
        desc = descriptors(ww)
        return {p: desc[p] for p in (EXACT_PROPERTIES if names is None else names)}

    return composition_sd(evaluate, w)


def composition_estimates(wt_pct: np.ndarray, samples: Sequence[str]) -> pd.DataFrame:
    """Long-format rows for the properties the composition gives directly.

    Same columns as the estimates of :mod:`estimator.properties.predict`
    (sample, property, method, value, unit, error, in_domain, note); the error is
    the GC repeatability of the composition (:func:`composition_errors`).
    """
    from estimator.properties.descriptors import descriptors

    w = np.atleast_2d(np.asarray(wt_pct, dtype=float))
    desc = descriptors(w)
    errors = composition_errors(w)
    parts = []
    for prop in EXACT_PROPERTIES:
        parts.append(pd.DataFrame({
            "sample": list(samples), "property": prop, "method": "composition",
            "value": desc[prop], "unit": "wt %", "error": errors[prop], "in_domain": True,
            "note": "from the profile itself (EN 14214 limits the GC result); error: 1 SD, "
                    "the GC repeatability of the composition",
        }))
    return pd.concat(parts, ignore_index=True)


def measured_estimates(metadata: pd.DataFrame, samples: Sequence[str]) -> pd.DataFrame:
    """Long-format rows for the measured properties a profile's metadata carries.

    A column ``ester_content_wt_pct`` (with ``ester_content_wt_pct_error``, the EN 14103
    repeatability, when present) becomes one row per sample that has a value; samples
    without one get no row, so no verdict.
    """
    parts = []
    for prop in MEASURED_PROPERTIES:
        if prop not in metadata.columns:
            continue
        value = pd.to_numeric(metadata[prop], errors="coerce").reindex(list(samples))
        err_col = f"{prop}_error"
        error = (pd.to_numeric(metadata[err_col], errors="coerce").reindex(list(samples))
                 if err_col in metadata.columns else pd.Series(np.nan, index=value.index))
        keep = value.notna().to_numpy()
        parts.append(pd.DataFrame({
            "sample": np.asarray(list(samples), dtype=object)[keep], "property": prop,
            "method": "EN 14103", "value": value.to_numpy(dtype=float)[keep], "unit": "wt %",
            "error": error.to_numpy(dtype=float)[keep], "in_domain": True,
            "note": "measured: internal-standard GC run (EN 14103)",
        }))
    columns = ["sample", "property", "method", "value", "unit", "error", "in_domain", "note"]
    return pd.concat(parts, ignore_index=True) if parts else pd.DataFrame(columns=columns)


def _as_long(estimates: pd.DataFrame) -> pd.DataFrame:
    """Accept the long estimates table or the wide view and return long rows."""
    if {"property", "value"} <= set(estimates.columns):
        long = estimates.copy()
    else:
        if "sample" not in estimates.columns:
            raise ValueError("estimates need a 'sample' column (long or wide estimates table)")
        props = [
            c for c in estimates.columns
            if c in set(spec_table()["property"]) and pd.api.types.is_numeric_dtype(estimates[c])
        ]
        parts = []
        flags = (estimates["flags"].fillna("").astype(str) if "flags" in estimates.columns
                 else pd.Series("", index=estimates.index))
        for prop in props:
            err_col = f"{prop}_error"
            parts.append(pd.DataFrame({
                "sample": estimates["sample"].astype(str).to_numpy(),
                "property": prop,
                "method": "",
                "value": estimates[prop].to_numpy(dtype=float),
                "error": (estimates[err_col].to_numpy(dtype=float)
                          if err_col in estimates.columns else np.nan),
                # the wide view names out-of-domain estimates in its flags column
                "in_domain": ~flags.str.contains(f"{prop}: outside ", regex=False).to_numpy(),
            }))
        long = pd.concat(parts, ignore_index=True) if parts else pd.DataFrame(
            columns=["sample", "property", "method", "value", "error", "in_domain"])
    for col, default in (("method", ""), ("error", np.nan), ("in_domain", True)):
        if col not in long.columns:
            long[col] = default
    for col in ("sample", "property", "method"):
        long[col] = long[col].astype(str)
    long["error"] = long["error"].astype(float)
    return long


def check(
    estimates: pd.DataFrame,
    specs: str | Sequence[str] = ("en14214", "astm-d6751"),
    climate_class: str | None = None,
) -> pd.DataFrame:
    """Verdict of every estimate against every applicable limit.

    Parameters
    ----------
    estimates : DataFrame
        The long estimates table (sample, property, method, value, unit, error,
        in_domain, note) or its wide view (sample, <property>, <property>_error ...).
        Several methods for one property give one verdict row each.
    specs : str or sequence of str
        Specification keys (see :func:`known_specs`).
    climate_class : str, optional
        A-F or 0-4; selects the CFPP (and arctic) limits. Without it those are skipped.

    Returns
    -------
    DataFrame
        One row per sample, limit and method: sample, spec, property, estimate,
        error, limit, verdict, then bound (min/max), unit, method, in_domain,
        climate_class, edition, mark, probability_meets. ``error`` (one standard
        uncertainty) of a limit read from the composition is the error given with it
        (the GC repeatability, from :func:`composition_estimates`), 0 when none is given;
        elsewhere an unknown error (NaN) gives no band.

    Examples
    --------
    >>> import pandas as pd
    >>> est = pd.DataFrame({"sample": ["a", "b", "c"], "cetane_number": [55.0, 51.5, 45.0],
    ...                     "cetane_number_error": [2.0, 2.0, 2.0]})
    >>> t = check(est, "en14214")
    >>> t.loc[t["property"] == "cetane_number", "verdict"].tolist()
    ['meets', 'too close to call', 'fails']
    >>> t.loc[t["property"] == "cetane_number", "probability_meets"].round(3).tolist()
    [0.977, 0.599, 0.0]
    >>> sorted(set(t.loc[t["property"] == "density_15C_kg_m3", "verdict"]))
    ['not estimated']
    """
    lim = limits(specs, climate_class)
    long = _as_long(estimates)
    samples = list(dict.fromkeys(long["sample"]))
    if not samples:
        return pd.DataFrame(columns=CHECK_COLUMNS)
    # One row per (sample, property, method) estimate; samples without an estimate of a
    # limited property get a NaN placeholder so the limit is reported as not estimated.
    long = long.loc[long["property"].isin(set(lim["property"])),
                    ["sample", "property", "method", "value", "error", "in_domain"]]
    present = long[["sample", "property"]].drop_duplicates()
    judged = [p for p in lim["property"].unique() if p not in MEASURED_PROPERTIES]
    wanted = pd.MultiIndex.from_product([samples, judged],
                                        names=["sample", "property"]).to_frame(index=False)
    missing = wanted.merge(present, how="left", indicator=True)
    missing = missing[missing["_merge"] == "left_only"].drop(columns="_merge")
    if len(missing):
        missing = missing.assign(method="", value=np.nan, error=np.nan, in_domain=True)
        long = pd.concat([long, missing], ignore_index=True)
    merged = long.merge(
        lim[["spec", "property", "bound", "limit", "unit", "exact_from_composition",
             "climate_class", "edition", "mark"]],
        on="property", how="inner",
    )
    value = merged["value"].to_numpy(dtype=float)
    limit = merged["limit"].to_numpy(dtype=float)
    exact = merged["exact_from_composition"].to_numpy(dtype=bool)
    given = merged["error"].to_numpy(dtype=float)
    error = np.where(exact & ~np.isfinite(given), 0.0, given)  # composition: GC repeatability
    merged["error"] = error
    is_min = merged["bound"].to_numpy() == "min"
    inside = merged["in_domain"].astype(bool).to_numpy() | exact
    # outside the method's range the estimate gives no probability (NaN, printed blank)
    merged["verdict"] = _verdicts(value, error, limit, is_min, inside)
    merged["probability_meets"] = np.where(
        merged["verdict"].to_numpy() != VERDICTS[4],
        probability_meets(value, error, limit, is_min), np.nan)
    merged = merged.rename(columns={"value": "estimate"})
    order_s = {s: i for i, s in enumerate(samples)}
    order_l = {k: i for i, k in enumerate(zip(lim["spec"], lim["property"], lim["bound"]))}
    merged["_s"] = merged["sample"].map(order_s)
    merged["_l"] = [order_l[k] for k in zip(merged["spec"], merged["property"], merged["bound"])]
    merged = merged.sort_values(["_s", "_l", "method"], kind="stable")
    return merged[CHECK_COLUMNS].reset_index(drop=True)


#: The standard normal CDF, Phi(z) = erfc(-z / sqrt 2) / 2, exact to double precision
#: without importing scipy (so 'blend' and 'check' start fast).
_ERFC = np.frompyfunc(math.erfc, 1, 1)


def _normal_cdf(z: np.ndarray) -> np.ndarray:
    z = np.asarray(z, dtype=float)
    return 0.5 * _ERFC(-np.nan_to_num(z, nan=0.0) / math.sqrt(2.0)).astype(float)


def probability_meets(value: np.ndarray, error: np.ndarray, limit: np.ndarray,
                      is_min: np.ndarray) -> np.ndarray:
    """Probability that the property meets the limit, normal error of SD ``error``.

    A zero or NaN error counts as no band (probability 1 or 0); a NaN value gives NaN.

    Examples
    --------
    >>> probability_meets(np.array([52.0]), np.array([1.0]), np.array([51.0]),
    ...                   np.array([True])).round(4)
    array([0.8413])
    """
    value = np.asarray(value, dtype=float)
    limit = np.asarray(limit, dtype=float)
    band = np.nan_to_num(np.asarray(error, dtype=float), nan=0.0)
    margin = np.where(is_min, value - limit, limit - value)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        p = np.where(band > 0, _normal_cdf(margin / np.where(band > 0, band, 1.0)),
                     (margin >= 0).astype(float))
    return np.where(np.isnan(value), np.nan, p)


def _verdicts(value: np.ndarray, error: np.ndarray, limit: np.ndarray,
              is_min: np.ndarray, in_domain: np.ndarray | None = None) -> np.ndarray:
    """Vectorised verdicts from ``probability_meets``; a NaN error counts as no band."""
    p = probability_meets(value, error, limit, is_min)
    out = np.where(p >= MEETS_AT, VERDICTS[0], np.where(p <= FAILS_AT, VERDICTS[2], VERDICTS[1]))
    if in_domain is not None:
        # outside its range an estimate may still fail on its widened band, never meet
        out = np.where(np.asarray(in_domain, dtype=bool) | (p <= FAILS_AT), out, VERDICTS[4])
    return np.where(np.isnan(np.asarray(value, dtype=float)), VERDICTS[3], out).astype(object)


def summarise(verdicts: pd.DataFrame) -> pd.DataFrame:
    """One summary cell per sample and specification, e.g. ``fails (iodine value, CFPP)``.

    The worst outcome leads: ``fails (...)``, then ``too close to call (...)``, then
    ``outside method range (...)``, then ``not estimated (...)``; a sample is ``meets``
    only when every limit is met. With
    several methods per property the worst verdict of that property counts.

    Returns
    -------
    DataFrame
        Index: samples (first-seen order); one column per specification key.

    Examples
    --------
    >>> import pandas as pd
    >>> v = pd.DataFrame({"sample": ["a", "a", "b"], "spec": "en14214",
    ...                   "property": ["iodine_value_gI2_100g", "cfpp_C", "cfpp_C"],
    ...                   "verdict": ["fails", "too close to call", "meets"]})
    >>> summarise(v)["en14214"].tolist()
    ['fails (iodine value); too close to call (CFPP)', 'meets']
    """
    samples = list(dict.fromkeys(verdicts["sample"]))
    specs = list(dict.fromkeys(verdicts["spec"]))
    # one pass over the rows (a groupby per sample and spec is slow for thousands of lots)
    worst: dict[tuple, dict[str, str]] = {}
    for sample, spec, prop, verdict in zip(verdicts["sample"], verdicts["spec"],
                                           verdicts["property"], verdicts["verdict"]):
        by_prop = worst.setdefault((sample, spec), {})
        old = by_prop.get(prop)
        by_prop[prop] = verdict if old is None else max(old, verdict, key=_severity)
    cells: dict[str, list] = {spec: [] for spec in specs}
    for spec in specs:
        for sample in samples:
            by_prop = worst.get((sample, spec))
            if by_prop is None:
                cells[spec].append(np.nan)
                continue
            parts = []
            for verdict in ("fails", "too close to call", "outside method range",
                            "not estimated"):
                props = [PROPERTY_LABELS.get(p, p) for p, v in by_prop.items() if v == verdict]
                if props:
                    parts.append(f"{verdict} ({', '.join(dict.fromkeys(props))})")
            cells[spec].append("; ".join(parts) if parts else "meets")
    return pd.DataFrame(cells, index=pd.Index(samples, name="sample"), columns=specs,
                        dtype=object)


def _severity(verdict: str) -> int:
    return {"meets": 0, "not estimated": 1, "outside method range": 2, "too close to call": 2,
            "fails": 3}[verdict]
