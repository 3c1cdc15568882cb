"""The buyer's comparison of offered lots, as tables: shared by the CLI and the Python API.

:func:`compare_lots` estimates every lot's fuel properties, checks them against
the chosen specifications, values each lot (fuel yield, cost per tonne of fuel)
and ranks the lots: lots whose fuel meets every specification checked come
first, then those too close to call, then those that fail; within each group the
cheapest fuel first. Nothing here prints or draws; :mod:`estimator.report`
turns a :class:`Comparison` into files, plots and an HTML report.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
import pandas as pd

from estimator import sourcing, specs
from estimator.profiles.profile import Profile

__all__ = [
    "KEY_PROPERTIES",
    "SPEC_LABELS",
    "Comparison",
    "check_profile",
    "compare_lots",
    "long_estimates",
    "methods_used",
]

#: The properties shown per lot in the ranked table, in this order.
KEY_PROPERTIES = (
    "cetane_number",
    "iodine_value_gI2_100g",
    "cfpp_C",
    "cloud_point_C",
    "oxidation_stability_110C_h",
    "density_15C_kg_m3",
    "kin_viscosity_40C_mm2_s",
    "linolenic_wt_pct",
    "pufa4_wt_pct",
)

#: How the specifications are written in tables, legends and the report.
SPEC_LABELS = {
    "en14214": "EN 14214",
    "astm-d6751": "ASTM D6751",
    "en590": "EN 590",
    "astm-d7467": "ASTM D7467",
}

_GROUP_ORDER = {"meets": 0, "too close to call": 1, "not estimated": 2, "fails": 3}


@dataclass(frozen=True)
class Comparison:
    """Everything the comparison computed, as tables (see :func:`compare_lots`)."""

    profile: Profile
    specs: tuple[str, ...]
    climate_class: str | None
    pretreat: str
    methanol_ratio: float
    ranked: pd.DataFrame
    verdicts: pd.DataFrame
    limits: pd.DataFrame
    estimates: pd.DataFrame
    valuation: pd.DataFrame
    assumptions: pd.DataFrame
    methods: pd.DataFrame
    flags: pd.DataFrame

    @property
    def lots(self) -> list[str]:
        """Lot ids in ranked order."""
        return list(self.ranked["sample"])


def methods_used(estimates: pd.DataFrame) -> pd.DataFrame:
    """One row per (property, method) in the estimates, with unit, error and citation."""
    from estimator.properties.methods import get_method

    pairs = estimates[["property", "method"]].astype(str).drop_duplicates()
    rows = []
    for prop, name in zip(pairs["property"], pairs["method"]):
        if name == "composition":
            rows.append({
                "property": prop, "method": name, "unit": "wt %", "stated_error": "exact",
                "provenance": "VERIFIED",
                "fitted_domain": "any profile (the GC result itself)",
                "citation": "EN 14214:2012+A2:2019 limits the GC result (EN 14103 / EN 15779)",
                "note": "read from the profile, no correlation",
            })
            continue
        if prop in specs.MEASURED_PROPERTIES:
            rows.append({
                "property": prop, "method": name, "unit": "wt %",
                "stated_error": "method repeatability", "provenance": "MEMORY",
                "fitted_domain": "measured on the sample",
                "citation": "EN 14103 (internal-standard GC), limit EN 14214:2012+A2:2019",
                "note": "measured, no correlation; band: repeatability about 1 % (m/m)",
            })
            continue
        m = get_method(prop, name)
        stated = "none published" if m.error is None else f"{m.error_kind} {m.error:g}"
        rows.append({
            "property": prop, "method": name, "unit": m.unit, "stated_error": stated,
            "provenance": m.provenance, "fitted_domain": m.domain.text(),
            "citation": m.citation, "note": m.error_note or m.note,
        })
    return pd.DataFrame(rows)


def _flags(estimates: pd.DataFrame) -> pd.DataFrame:
    from estimator.properties.predict import DOMAIN_MARK

    out = estimates.loc[~estimates["in_domain"].astype(bool),
                        ["sample", "property", "method", "note"]].copy()
    out = out.astype(str)
    out["reason"] = [n.split(DOMAIN_MARK, 1)[-1] if DOMAIN_MARK in n else "outside domain"
                     for n in out["note"]]
    return out.drop(columns="note").reset_index(drop=True)


def compare_lots(
    profile: Profile,
    *,
    spec_names: Sequence[str] = ("en14214", "astm-d6751"),
    climate_class: str | None = None,
    pretreat: str = "none",
    methanol_ratio: float = sourcing.DEFAULT_METHANOL_RATIO,
) -> Comparison:
    """Estimate, check, value and rank the lots of a profile.

    Parameters
    ----------
    profile : Profile
        One sample per lot; metadata ``price_per_t``, ``ffa_wt_pct``,
        ``water_wt_pct`` (and optionally ``supplier``, ``feedstock``,
        ``available_t``) are used when present.
    spec_names : sequence of str
        Specification keys (:func:`estimator.specs.known_specs`).
    climate_class : str, optional
        CFPP grade A-F or arctic class 0-4; without it CFPP is not judged.
    pretreat, methanol_ratio
        Passed to :func:`estimator.sourcing.value_lots`.

    Returns
    -------
    Comparison
        ``ranked`` has one row per lot: rank, sample, supplier/feedstock when
        given, ``overall`` (worst verdict), one ``verdict_<spec>`` summary per
        specification, each key property and its ``_error``, yield, price,
        ``cost_per_t_fuel`` and ``notes``.
    """
    from estimator.properties.predict import wide

    climate_class = specs.normalise_climate_class(climate_class)
    lim = specs.limits(spec_names, climate_class)
    names = tuple(dict.fromkeys(lim["spec"])) or tuple(spec_names)
    # Validate the lot data before the heavier estimation, so bad input fails fast.
    valuation = sourcing.value_lots(profile, pretreat=pretreat, methanol_ratio=methanol_ratio)
    long = long_estimates(profile)
    verdicts = specs.check(long, names, climate_class)
    summary = specs.summarise(verdicts).reindex(profile.samples)
    table = wide(long)
    ranked = pd.DataFrame({"sample": profile.samples})
    meta = profile.metadata
    for col in ("supplier", "feedstock"):
        if col in meta.columns:
            ranked[col] = meta[col].to_numpy()
    worst = (verdicts.assign(_g=verdicts["verdict"].map(_GROUP_ORDER))
             .groupby("sample")["_g"].max().reindex(profile.samples).fillna(0).astype(int))
    inverse = {v: k for k, v in _GROUP_ORDER.items()}
    ranked["overall"] = [inverse[g] for g in worst.to_numpy()]
    with_class = specs.limits(names, "C")
    cold_limited = set(with_class.loc[with_class["property"] == "cfpp_C", "spec"])
    for spec in names:
        text = summary[spec].to_numpy() if spec in summary else np.full(len(summary), "meets")
        if climate_class is None and spec in cold_limited:
            # a spec whose CFPP limit depends on the climate class was checked without it
            text = np.array([f"{t}; CFPP not judged (no climate class)" for t in text],
                            dtype=object)
        ranked[f"verdict_{spec}"] = text
    table = table.set_index("sample").reindex(profile.samples)
    for prop in (*KEY_PROPERTIES, *specs.MEASURED_PROPERTIES):  # measured: only if given
        if prop in table.columns:
            ranked[prop] = table[prop].to_numpy(dtype=float)
            ranked[f"{prop}_error"] = table[f"{prop}_error"].to_numpy(dtype=float)
    val = valuation.set_index("sample")
    ranked["fuel_yield_t_per_t_oil"] = val["fuel_yield_t_per_t_oil"].to_numpy()
    ranked["price_per_t"] = val["price_per_t"].to_numpy()
    ranked["cost_per_t_fuel"] = val["cost_per_t_fuel"].to_numpy()
    if "available_t" in meta.columns:
        ranked["available_t"] = pd.to_numeric(meta["available_t"], errors="coerce").to_numpy()
    flags = _flags(long)
    key_flags = flags[flags["property"].isin(KEY_PROPERTIES)]
    flag_text = (key_flags.assign(t=key_flags["property"] + " (" + key_flags["method"] + ")")
                 .groupby("sample")["t"].agg(", ".join))
    notes = []
    for sample, vnote in zip(profile.samples, val["valuation_note"]):
        parts = [vnote] if vnote else []
        if sample in flag_text.index:
            parts.append(f"outside the fitted domain: {flag_text[sample]}")
        if profile.notes.get(sample):
            parts.append(str(profile.notes[sample]))
        notes.append("; ".join(parts))
    ranked["notes"] = notes
    group = ranked["overall"].map(_GROUP_ORDER).to_numpy()
    cost = ranked["cost_per_t_fuel"].to_numpy(dtype=float)
    order = np.lexsort((np.arange(len(ranked)), np.where(np.isnan(cost), np.inf, cost), group))
    ranked = ranked.iloc[order].reset_index(drop=True)
    ranked.insert(0, "rank", np.arange(1, len(ranked) + 1))
    return Comparison(
        profile=profile, specs=names, climate_class=climate_class, pretreat=pretreat,
        methanol_ratio=float(methanol_ratio), ranked=ranked, verdicts=verdicts, limits=lim,
        estimates=long, valuation=valuation,
        assumptions=sourcing.assumptions(pretreat=pretreat, methanol_ratio=methanol_ratio),
        methods=methods_used(long), flags=flags,
    )


def check_profile(
    profile: Profile,
    spec_names: Sequence[str] = ("en14214", "astm-d6751"),
    climate_class: str | None = None,
) -> pd.DataFrame:
    """The ``check`` job: default estimates plus the exact composition limits, checked.

    Returns the table of :func:`estimator.specs.check`.
    """
    specs.limits(spec_names, climate_class)  # unknown names fail before any work
    return specs.check(long_estimates(profile), spec_names, climate_class)


def long_estimates(profile: Profile) -> pd.DataFrame:
    """Default-method estimates of every property plus the exact composition rows.

    The long table of :func:`estimator.properties.predict.estimate` (text columns as
    plain strings) with ``linolenic_wt_pct`` and ``pufa4_wt_pct`` appended.
    """
    from estimator.properties.predict import estimate

    predicted = estimate(profile.wt_pct, profile.samples)
    exact = specs.composition_estimates(profile.wt_pct, profile.samples)
    predicted = predicted.astype({"property": str, "method": str, "unit": str, "note": str})
    measured = specs.measured_estimates(profile.metadata, profile.samples)
    return pd.concat([predicted, exact, *([measured] if len(measured) else [])],
                     ignore_index=True)
