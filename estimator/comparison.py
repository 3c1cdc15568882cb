"""The buyer's comparison of offered lots, as tables: shared by the CLI and the Python API.

:func:`compare_lots` estimates every lot's fuel properties, checks them against
the chosen specifications, values each lot (fuel yield, cost per tonne of fuel)
and ranks the lots by what it takes to bring their fuel to specification:

1. lots that meet every limit checked, then those too close to call (a limit
   inside the estimate's band), then those with a limit not estimated;
2. lots whose only failures a treatment fixes (oxidation stability, by an
   antioxidant dose: :data:`estimator.sourcing.FIXABLE_BY_TREATMENT`);
3. lots with a failure no treatment fixes (iodine value, linolenic ester,
   polyunsaturated esters, cetane number, cold flow for the climate class, ...).

Within the failing groups, the lot whose failures lie fewer bands beyond their
limits comes first (``bands_out`` = (estimate - limit) / stated error, signed so that
positive is on the failing side; or, when the verdict table carries a
``probability_meets`` column, the higher least probability of meeting a limit);
then, and within the other groups, the cheapest fuel (including processing and,
where needed, the antioxidant dose). Nothing here prints or draws; :mod:`estimator.report`
turns a :class:`Comparison` into files, plots and an HTML report.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
import pandas as pd

from estimator import sourcing, specs
from estimator.profiles.profile import Profile
from estimator.sourcing import FIXABLE_BY_TREATMENT, ProcessCosts

__all__ = [
    "KEY_PROPERTIES",
    "SPEC_LABELS",
    "Comparison",
    "check_profile",
    "compare_lots",
    "decision_rows",
    "long_estimates",
    "methods_used",
    "model_properties",
    "unfixable_failures",
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
SPEC_LABELS = specs.SPEC_NAMES

# an estimate outside its method's range groups with "too close to call" (listed first,
# so the inverse mapping below names group 1 "too close to call")
_GROUP_ORDER = {"meets": 0, "outside method range": 1, "too close to call": 1,
                "not estimated": 2, "fails": 3}
#: The ranking groups (``decision`` column), best first.
DECISIONS = ("meets", "too close to call", "not estimated", "fails: fixable by treatment",
             "fails: no treatment fixes it")


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
    costs: ProcessCosts = sourcing.DEFAULT_COSTS
    #: Properties whose values came from a lab model file (``--model``), with the file.
    model_properties: dict[str, str] | None = None

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
        if name.startswith("fit:"):
            rows.append({
                "property": prop, "method": name, "unit": "", "stated_error":
                "95 % prediction interval of the lab model", "provenance": "lab model",
                "fitted_domain": "the lab's training samples",
                "citation": "fitted with 'fame-estimator fit' on the lab's own samples",
                "note": "replaces the published estimate in verdicts and ranking",
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
    costs: ProcessCosts | None = None,
    models: Sequence[str] = (),
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
    pretreat, methanol_ratio, costs
        Passed to :func:`estimator.sourcing.value_lots`.
    models : sequence of path
        Model files from ``fame-estimator fit``: their properties replace the
        published estimates in the verdicts and the ranking.

    Returns
    -------
    Comparison
        ``ranked`` has one row per lot: rank, sample, supplier/feedstock when
        given, ``overall`` (worst verdict), ``decision`` (the ranking group:
        :data:`DECISIONS`), ``unfixable_failures``, ``fixable_failures`` (with the
        treatment and its assumed cost), ``bands_out``, one ``verdict_<spec>``
        summary per specification, each key property and its ``_error``, yield,
        price, ``treatment_cost_per_t_fuel``, ``cost_per_t_fuel`` (feedstock,
        processing and treatment) and ``notes``.
    """
    from estimator.refit.apply import wide_with_models

    climate_class = specs.normalise_climate_class(climate_class)
    lim = specs.limits(spec_names, climate_class)
    names = tuple(dict.fromkeys(lim["spec"])) or tuple(spec_names)
    costs = sourcing.DEFAULT_COSTS if costs is None else costs
    # Validate the lot data before the heavier estimation, so bad input fails fast.
    valuation = sourcing.value_lots(profile, pretreat=pretreat, methanol_ratio=methanol_ratio,
                                    costs=costs)
    long = long_estimates(profile, models=models)
    chosen = decision_rows(long)
    verdicts = specs.check(chosen, names, climate_class)
    summary = specs.summarise(verdicts).reindex(profile.samples)
    table = wide_with_models(long)
    ranked = pd.DataFrame({"sample": profile.samples})
    meta = profile.metadata
    for col in ("supplier", "feedstock"):
        if col in meta.columns:
            ranked[col] = meta[col].to_numpy()
    worst = (verdicts.assign(_g=verdicts["verdict"].map(_GROUP_ORDER))
             .groupby("sample")["_g"].max().reindex(profile.samples).fillna(0).astype(int))
    inverse = {v: k for k, v in _GROUP_ORDER.items()}
    ranked["overall"] = [inverse[g] for g in worst.to_numpy()]
    decisions = _decisions(verdicts, profile.samples, costs)
    for col in ("decision", "unfixable_failures", "fixable_failures", "bands_out"):
        ranked[col] = decisions[col].to_numpy()
    if "probability_meets" in decisions.columns:
        ranked["least_probability_meets"] = decisions["probability_meets"].to_numpy()
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
    ranked["feedstock_cost_per_t_fuel"] = val["feedstock_cost_per_t_fuel"].to_numpy()
    ranked["processing_cost_per_t_fuel"] = val["processing_cost_per_t_fuel"].to_numpy()
    treatment = decisions["treatment_cost_per_t_fuel"].to_numpy(dtype=float)
    ranked["treatment_cost_per_t_fuel"] = treatment
    ranked["cost_per_t_fuel"] = val["cost_per_t_fuel"].to_numpy() + treatment
    if "available_t" in meta.columns:
        ranked["available_t"] = pd.to_numeric(meta["available_t"], errors="coerce").to_numpy()
    flags = _flags(chosen)
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
    group = ranked["decision"].map({d: i for i, d in enumerate(DECISIONS)}).to_numpy()
    cost = ranked["cost_per_t_fuel"].to_numpy(dtype=float)
    failing = group >= 3
    if "least_probability_meets" in ranked.columns:
        doubt = 1.0 - ranked["least_probability_meets"].to_numpy(dtype=float)
    else:
        doubt = ranked["bands_out"].to_numpy(dtype=float)
    doubt = np.where(failing, np.nan_to_num(doubt, nan=np.inf), 0.0)
    order = np.lexsort((np.arange(len(ranked)), np.where(np.isnan(cost), np.inf, cost), doubt,
                        group))
    ranked = ranked.iloc[order].reset_index(drop=True)
    ranked.insert(0, "rank", np.arange(1, len(ranked) + 1))
    return Comparison(
        profile=profile, specs=names, climate_class=climate_class, pretreat=pretreat,
        methanol_ratio=float(methanol_ratio), ranked=ranked, verdicts=verdicts, limits=lim,
        estimates=long, valuation=valuation,
        assumptions=sourcing.assumptions(pretreat=pretreat, methanol_ratio=methanol_ratio,
                                         costs=costs),
        methods=methods_used(chosen), flags=flags, costs=costs,
        model_properties=model_properties(long),
    )


def _bands_out(verdicts: pd.DataFrame) -> np.ndarray:
    """Per verdict row: (estimate - limit) / error, positive on the failing side.

    A limit with no band (exact composition limits, unknown error) counts +inf when
    failed, -inf when met.
    """
    value = verdicts["estimate"].to_numpy(dtype=float)
    limit = verdicts["limit"].to_numpy(dtype=float)
    error = verdicts["error"].to_numpy(dtype=float)
    sign = np.where(verdicts["bound"].to_numpy() == "max", 1.0, -1.0)
    excess = sign * (value - limit)
    with np.errstate(divide="ignore", invalid="ignore"):
        bands = np.where(np.nan_to_num(error) > 0, excess / error,
                         np.where(excess > 0, np.inf, np.where(excess < 0, -np.inf, 0.0)))
    return np.where(np.isnan(value), np.nan, bands)


def _decisions(verdicts: pd.DataFrame, samples: Sequence[str],
               costs: ProcessCosts) -> pd.DataFrame:
    """Per lot: ranking group, (un)fixable failures, bands out, treatment cost."""
    v = verdicts.assign(_bands=_bands_out(verdicts)).reset_index(drop=True)
    fixable_all = v["property"].isin(list(FIXABLE_BY_TREATMENT)).to_numpy()
    verdict_all = v["verdict"].astype(str).to_numpy()
    props_all = v["property"].astype(str).to_numpy()
    bands_all = v["_bands"].to_numpy(dtype=float)
    has_p = "probability_meets" in v.columns
    p_all = v["probability_meets"].to_numpy(dtype=float) if has_p else None
    # row positions of each lot, found once (a scan per lot is quadratic in the lots)
    where = {str(k): idx for k, idx in v.groupby("sample", sort=False).indices.items()}
    empty = np.array([], dtype=int)

    def labels(props: np.ndarray) -> str:
        return ", ".join(dict.fromkeys(specs.PROPERTY_LABELS.get(p, p) for p in props))

    rows = []
    for sample in samples:
        at = where.get(str(sample), empty)
        verdict, props, fixable = verdict_all[at], props_all[at], fixable_all[at]
        fails = verdict == "fails"
        doubtful = fails | (verdict == "too close to call")
        unfix = fails & ~fixable
        fix = fails & fixable
        treat = doubtful & fixable
        cost = costs.antioxidant_cost_per_t_fuel if treat.any() else 0.0
        treatments = dict.fromkeys(FIXABLE_BY_TREATMENT[p] for p in props[fix])
        fix_text = labels(props[fix])
        if fix_text:
            fix_text += (f" (by {', '.join(treatments)}; assumed {cost:g} per t of fuel)")
        mine = np.ones(len(at), dtype=bool)
        if unfix.any():
            decision, relevant = DECISIONS[4], unfix
        elif fix.any():
            decision, relevant = DECISIONS[3], fix
        elif (verdict == "not estimated").any():
            decision, relevant = DECISIONS[2], mine
        elif np.isin(verdict, ["too close to call", "outside method range"]).any():
            # an estimate outside its method's range never "meets"
            decision, relevant = DECISIONS[1], mine
        else:
            decision, relevant = DECISIONS[0], mine
        bands = bands_all[at][relevant]
        row = {"sample": sample, "decision": decision, "unfixable_failures": labels(props[unfix]),
               "fixable_failures": fix_text,
               "bands_out": float(np.nanmax(bands)) if np.isfinite(bands).any()
               or np.isinf(bands).any() else np.nan,
               "treatment_cost_per_t_fuel": cost}
        if has_p:
            p = p_all[at][relevant]
            row["probability_meets"] = float(np.nanmin(p)) if (~np.isnan(p)).any() else np.nan
        rows.append(row)
    return pd.DataFrame(rows)


def unfixable_failures(long: pd.DataFrame, samples: Sequence[str],
                       spec: str = "en14214") -> tuple[list[str], list[str]]:
    """Per sample: the limits of ``spec`` the estimates fail that no treatment fixes, and
    those a treatment fixes (property labels joined by ', '; '' when none).

    Composition limits (linolenic ester, polyenes) are checked when ``long`` has them.
    """
    lim = specs.limits(spec)
    samples = [str(x) for x in samples]
    prop = long["property"].astype(str).to_numpy()
    # the columns once, then the rows of each limit's property by position
    values = long["value"].to_numpy(dtype=float)
    errors = long["error"].to_numpy(dtype=float)
    sample_col = long["sample"].astype(str).to_numpy()
    unfix: dict[str, list[str]] = {s: [] for s in samples}
    fix: dict[str, list[str]] = {s: [] for s in samples}
    for row in lim.itertuples(index=False):
        rows = np.flatnonzero(prop == row.property)
        if not len(rows):
            continue
        value = values[rows]
        error = 0.0 if row.exact_from_composition else errors[rows]
        error = np.broadcast_to(np.asarray(error, dtype=float), value.shape)
        verdict = specs._verdicts(value, error, np.full(value.shape, float(row.limit)),
                                  np.full(value.shape, row.bound == "min"))
        target = fix if row.property in FIXABLE_BY_TREATMENT else unfix
        label = specs.PROPERTY_LABELS.get(row.property, row.property)
        for sample in sample_col[rows][verdict == "fails"]:
            if sample in target and label not in target[sample]:
                target[sample].append(label)
    return ([", ".join(unfix[s]) for s in samples], [", ".join(fix[s]) for s in samples])


def check_profile(
    profile: Profile,
    spec_names: Sequence[str] = ("en14214", "astm-d6751"),
    climate_class: str | None = None,
    models: Sequence[str] = (),
) -> pd.DataFrame:
    """The ``check`` job: default estimates (or a lab model's, with ``models``) plus the
    exact composition limits, checked.

    Returns the table of :func:`estimator.specs.check`.
    """
    specs.limits(spec_names, climate_class)  # unknown names fail before any work
    long = decision_rows(long_estimates(profile, models=models))
    return specs.check(long, spec_names, climate_class)


def long_estimates(profile, samples: Sequence[str] | None = None, *,
                   models: Sequence[str] = ()) -> pd.DataFrame:
    """Default-method estimates of every property plus the exact composition rows.

    ``profile`` is a Profile, or an array of FAME mass % with ``samples``. The long
    table of :func:`estimator.properties.predict.estimate` (text columns as plain
    strings), with the rows of each lab model file in ``models`` added (method
    ``fit:<candidate>``, see :func:`estimator.refit.apply.apply_models`),
    ``linolenic_wt_pct`` and ``pufa4_wt_pct`` appended, and a Profile's measured
    values (EN 14103 ester content) when given.
    """
    from types import SimpleNamespace

    from estimator.properties.predict import estimate

    samples_given = samples
    if samples is None:
        w, samples = profile.wt_pct, list(profile.samples)
    else:
        w, samples = np.atleast_2d(np.asarray(profile, dtype=float)), list(samples)
    predicted = estimate(w, samples)
    if models:
        from estimator.refit.apply import apply_models

        predicted = apply_models(SimpleNamespace(wt_pct=w, samples=samples), list(models),
                                 predicted)
    exact = specs.composition_estimates(w, samples)
    predicted = predicted.astype({"property": str, "method": str, "unit": str, "note": str})
    parts = [predicted, exact]
    if samples_given is None:
        measured = specs.measured_estimates(profile.metadata, samples)
        if len(measured):
            parts.append(measured)
    return pd.concat(parts, ignore_index=True)


def decision_rows(long: pd.DataFrame) -> pd.DataFrame:
    """The rows that decide: for a property with a lab model (``fit:`` method), only the
    model's rows; every other property as estimated."""
    method = long["method"].astype(str)
    prop = long["property"].astype(str)
    fitted = set(prop[method.str.startswith("fit:")])
    if not fitted:
        return long
    keep = ~prop.isin(fitted) | method.str.startswith("fit:")
    return long[keep.to_numpy()].reset_index(drop=True)


def model_properties(long: pd.DataFrame) -> dict[str, str]:
    """``property -> 'model <candidate> from <file>'`` for properties a lab model gave."""
    fitted = long[long["method"].astype(str).str.startswith("fit:")]
    out = {}
    for prop, method, note in zip(fitted["property"].astype(str), fitted["method"].astype(str),
                                  fitted["note"].astype(str)):
        if prop not in out:
            where = note.split("from model file ", 1)[-1].split(" ", 1)[0] if \
                "from model file " in note else "a model file"
            out[prop] = f"lab model {method.removeprefix('fit:')} from {where}"
    return out
