"""Lot valuation: what a tonne of an offered oil yields in fuel, and what that fuel costs.

The stoichiometry is exact and takes the molar masses from the profile:

* the neutral oil is the triglyceride of the profile's acids, one glycerol per three
  acyl chains; transesterification gives three methyl esters and one glycerol per
  triglyceride, consuming three methanol
  (TG + 3 CH3OH -> 3 FAME + C3H8O3);
* free fatty acid (FFA) under base catalysis is neutralised by the catalyst to soap
  and lost (R-COOH + KOH -> R-COOK + H2O); with acid pretreatment it is esterified
  to FAME (R-COOH + CH3OH -> R-COOCH3 + H2O);
* water yields no fuel; the yield assumes the oil is dried before the base step,
  and the most the water could cost if it were not (each molecule hydrolysing one
  ester bond into FFA, then soap) is reported beside it.

Cost per tonne of fuel is what a tonne of oil costs to buy and process, divided
by the fuel yield (t fuel per t oil):

.. math::

    c = \frac{p + c_{MeOH} + c_{cat} + c_{pre} - c_{gly}}{y}

with the oil price :math:`p`, the methanol bought (consumed plus the unrecovered
part of the excess charged, so the methanol ratio changes the cost), the base
catalyst (its dose plus what the FFA neutralises), the acid pretreatment (per
tonne of FFA converted) and the glycerol credit, each per tonne of oil. The prices
and uses come from a costs file (:func:`read_costs`, JSON, keys in
:data:`COST_KEYS`); without one, the defaults of :data:`DEFAULT_COSTS` apply and
are stated as assumptions. ``feedstock_cost_per_t_fuel`` keeps the oil price over
the yield alone. An antioxidant dose (per tonne of fuel) is added by the
comparison to lots whose oxidation stability needs it.

The yields are theoretical (complete conversion, no handling losses); plants
recover less. Every assumption is a row of :func:`assumptions`, which the outputs
show.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from pathlib import Path

import numpy as np
import pandas as pd

from estimator.errors import InputFileError, ProfileError, UsageError
from estimator.properties.descriptors import (
    MOLAR_MASS_GLYCEROL,
    MOLAR_MASS_KOH,
    MOLAR_MASS_METHANOL,
    MOLAR_MASS_WATER,
    basis_molar_mass,
)

__all__ = [
    "COST_KEYS",
    "DEFAULT_COSTS",
    "DEFAULT_METHANOL_RATIO",
    "FIXABLE_BY_TREATMENT",
    "ProcessCosts",
    "FFA_BASE_LIMIT_WT_PCT",
    "PRETREATMENTS",
    "WATER_BASE_LIMIT_WT_PCT",
    "assumptions",
    "lot_inputs",
    "read_costs",
    "stoichiometry",
    "value_lots",
]

#: Methanol : triglyceride molar ratio charged to the reactor (common practice 6:1).
DEFAULT_METHANOL_RATIO = 6.0
#: How FFA is handled: lost to soap under base catalysis, or esterified first with acid.
PRETREATMENTS = ("none", "acid")
#: FFA above which base catalysis alone is unsuitable [wt %]. MEMORY: Ma, Clements &
#: Hanna 1998 (beef tallow), as cited by Ma & Hanna 1999, Bioresour. Technol. 70:1-15.
FFA_BASE_LIMIT_WT_PCT = 0.5
#: Water above which base catalysis loses ester to soap [wt %]. MEMORY, same source.
WATER_BASE_LIMIT_WT_PCT = 0.06

#: Largest price per tonne taken as a price: beyond it a unit or decimal slip [currency/t].
#: Wide enough for currencies with small units. # common practice
MAX_PRICE_PER_T = 1e9
#: Largest tonnage of one lot taken as a tonnage [t]. # common practice
MAX_TONNAGE_T = 1e9
#: The costs file's keys: (meaning [unit], default, basis of the default). Prices are in
#: the currency of the lots' ``price_per_t``. The defaults are round illustrative
#: numbers, not market data: give your own in a costs file.
COST_KEYS = {
    "methanol_price_per_t": (
        "price of methanol [currency/t]", 400.0,
        "assumption: a round illustrative price; replace with your own"),
    "methanol_recovered_pct": (
        "share of the excess methanol charged that is recovered and reused [%]", 90.0,
        "assumption (common practice: the excess is distilled off and recycled, with losses)"),
    "catalyst_price_per_t": (
        "price of the base catalyst (KOH) [currency/t]", 1000.0,
        "assumption: a round illustrative price; replace with your own"),
    "catalyst_wt_pct_of_oil": (
        "base catalyst dose on top of what the FFA neutralises [wt % of the oil]", 1.0,
        "common practice: about 1 wt % KOH on refined oil"),
    "acid_pretreatment_cost_per_t_ffa": (
        "acid pretreatment cost per tonne of FFA converted (acid catalyst, methanol excess, "
        "drying, energy) [currency/t FFA]", 150.0,
        "assumption: a round illustrative number; replace with your plant's"),
    "antioxidant_cost_per_t_fuel": (
        "antioxidant dose that brings oxidation stability to the limit [currency/t fuel]",
        15.0, "assumption: a round illustrative number; replace with your supplier's"),
    "glycerol_credit_per_t": (
        "value of the crude glycerol by-product [currency/t glycerol]", 150.0,
        "assumption: a round illustrative price; replace with your own"),
}

#: Failures a buyer can fix by treating the fuel: property -> treatment.
FIXABLE_BY_TREATMENT = {"oxidation_stability_110C_h": "antioxidant dose"}


@dataclass(frozen=True)
class ProcessCosts:
    """Prices and uses of the processing inputs (see :data:`COST_KEYS`)."""

    methanol_price_per_t: float = COST_KEYS["methanol_price_per_t"][1]
    methanol_recovered_pct: float = COST_KEYS["methanol_recovered_pct"][1]
    catalyst_price_per_t: float = COST_KEYS["catalyst_price_per_t"][1]
    catalyst_wt_pct_of_oil: float = COST_KEYS["catalyst_wt_pct_of_oil"][1]
    acid_pretreatment_cost_per_t_ffa: float = COST_KEYS["acid_pretreatment_cost_per_t_ffa"][1]
    antioxidant_cost_per_t_fuel: float = COST_KEYS["antioxidant_cost_per_t_fuel"][1]
    glycerol_credit_per_t: float = COST_KEYS["glycerol_credit_per_t"][1]
    #: Keys the costs file gave (the rest are defaults); ``"defaults"`` without a file.
    source: str = "defaults"
    given: tuple[str, ...] = ()

    @classmethod
    def zero(cls) -> ProcessCosts:
        """Every processing cost and credit zero: the feedstock cost alone."""
        return cls(**{k: 0.0 for k in COST_KEYS}, source="zero", given=tuple(COST_KEYS))


#: The costs used when no costs file is given.
DEFAULT_COSTS = ProcessCosts()


def read_costs(path: str | Path) -> ProcessCosts:
    """Read a costs file: one JSON object with any of the keys of :data:`COST_KEYS`.

    Keys left out keep their default (and the report says so). Every value is a
    finite number >= 0; percentages at most 100; unknown keys are refused with the
    known ones.

    Examples
    --------
    >>> import json, pathlib, tempfile
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "costs.json"
    >>> _ = p.write_text(json.dumps({"methanol_price_per_t": 520}))
    >>> c = read_costs(p)
    >>> c.methanol_price_per_t, c.given
    (520.0, ('methanol_price_per_t',))
    """
    path = Path(path)
    label = path.name
    if not path.is_file():
        raise InputFileError(f"{label}: no such file")
    from estimator.files import read_json_object

    raw = read_json_object(path, "cost key: number")
    raw = {k: v for k, v in raw.items() if not str(k).startswith("_")}  # "_comment" keys
    unknown = [k for k in raw if k not in COST_KEYS]
    if unknown:
        raise InputFileError(f"{label}: unknown key {str(unknown[0])[:40]!r}; a costs file "
                             f"takes {', '.join(COST_KEYS)} (keys starting with _ are comments)")
    values = {}
    for key, val in raw.items():
        ok = isinstance(val, (int, float)) and not isinstance(val, bool)
        num = float(val) if ok and abs(val) < 1e300 else math.nan
        if not (ok and math.isfinite(num) and num >= 0):
            raise InputFileError(f"{label}: key {key!r}: {str(val)[:40]!r} is not a number >= 0")
        if key.endswith("_pct") and num > 100:
            raise InputFileError(f"{label}: key {key!r}: {num:g} is above 100 %")
        values[key] = num
    return replace(DEFAULT_COSTS, **values, source=label, given=tuple(values))


#: Metadata columns the valuation reads, with what each is.
LOT_COLUMNS = {
    "price_per_t": "price of the oil per tonne [currency/t]",
    "ffa_wt_pct": "free fatty acid content of the oil [wt %]",
    "water_wt_pct": "water content of the oil [wt %]",
}


def stoichiometry(wt_pct: np.ndarray) -> dict[str, np.ndarray]:
    """Theoretical transesterification of the neutral oil whose acids make up ``wt_pct``.

    .. math::

        \\mathrm{TG} + 3\\,\\mathrm{CH_3OH} \\rightarrow 3\\,\\mathrm{FAME} + \\mathrm{C_3H_8O_3}

    The oil carries the profile's acyl chains in the same mole proportions as the
    esters; :math:`\\bar M_{TG} = 3 \\sum_i x_i M_i^{oil}` with :math:`M_i^{oil}` one third
    of the simple triglyceride.

    Parameters
    ----------
    wt_pct : ndarray, shape (n, n_species)
        FAME mass %, species-table order. [wt %]

    Returns
    -------
    dict of str to ndarray, shape (n,)
        ``fame_molar_mass_g_mol``, ``acid_molar_mass_g_mol`` and
        ``triglyceride_molar_mass_g_mol`` (number averages) [g/mol];
        ``fame_t_per_t_neutral_oil``, ``glycerol_t_per_t_neutral_oil`` and
        ``methanol_t_per_t_neutral_oil`` (stoichiometric 3:1) [t/t].

    Examples
    --------
    Triolein (885.4 g/mol) gives 3 x 296.5 g methyl oleate and 92.09 g glycerol for
    3 x 32.04 g methanol:

    >>> import numpy as np
    >>> from estimator.tables import species_keys
    >>> w = np.zeros((1, len(species_keys()))); w[0, species_keys().index("C18:1")] = 100
    >>> s = stoichiometry(w)
    >>> round(float(s["triglyceride_molar_mass_g_mol"][0]), 2)  # handbooks: 885.4
    885.45
    >>> round(float(s["fame_t_per_t_neutral_oil"][0]), 4)  # 889.5 / 885.4
    1.0046
    """
    w = np.asarray(wt_pct, dtype=float)
    moles = w / basis_molar_mass("fame")
    x = moles / moles.sum(axis=1, keepdims=True)
    m_fame = x @ basis_molar_mass("fame")
    m_acid = x @ basis_molar_mass("fatty-acid")
    m_tg = 3.0 * (x @ basis_molar_mass("oil"))
    return {
        "fame_molar_mass_g_mol": m_fame,
        "acid_molar_mass_g_mol": m_acid,
        "triglyceride_molar_mass_g_mol": m_tg,
        "fame_t_per_t_neutral_oil": 3.0 * m_fame / m_tg,
        "glycerol_t_per_t_neutral_oil": MOLAR_MASS_GLYCEROL / m_tg,
        "methanol_t_per_t_neutral_oil": 3.0 * MOLAR_MASS_METHANOL / m_tg,
    }


def lot_inputs(profile) -> pd.DataFrame:
    """The price, FFA and water of each lot as numbers, checked.

    Missing columns or empty cells become NaN (a missing FFA or water content is
    taken as 0 by :func:`value_lots`, with a note).

    Raises
    ------
    ProfileError
        A cell that is not a finite number (text, a boolean, ``inf``), an FFA or
        water content outside 0-100 wt %, FFA + water above 100 wt %, a price
        outside 0-:data:`MAX_PRICE_PER_T` or an ``available_t`` outside
        0-:data:`MAX_TONNAGE_T`; the message names the file, row and column.
    """
    from estimator.profiles.io import parse_numbers

    meta = profile.metadata
    rows = profile.rows.to_numpy()
    source = f"{profile.source}: " if profile.source else ""
    out = pd.DataFrame(index=pd.Index(profile.samples, name="sample"))
    for col in (*LOT_COLUMNS, "available_t"):
        if col not in meta.columns:
            if col in LOT_COLUMNS:
                out[col] = np.nan
            continue
        raw = meta[col]
        values, problem = parse_numbers(raw)
        bad = problem != None  # noqa: E711 (element-wise on an object array)
        if bad.any():
            i = int(np.argmax(bad))
            cell = raw.iloc[i]
            if problem[i] == "not finite":
                shown, what = f"'{str(cell).strip()}'", "is not a finite number"
            else:
                shown = repr(cell) if isinstance(cell, str) else str(cell)
                what = "is not a number"
            raise ProfileError(
                f"{source}row {rows[i]}, column {col!r} (sample {profile.samples[i]!r}): "
                f"{shown[:40]} {what}"
            )
        if col == "price_per_t":
            wrong = values < 0
            what = "is negative; a price cannot be"
            if not wrong.any() and (values > MAX_PRICE_PER_T).any():
                wrong = values > MAX_PRICE_PER_T
                what = f"is more than {MAX_PRICE_PER_T:.0e} per tonne: a unit or decimal slip?"
        elif col == "available_t":
            wrong = (values < 0) | (values > MAX_TONNAGE_T)
            what = f"is outside 0-{MAX_TONNAGE_T:.0e} t"
        else:
            wrong = (values < 0) | (values > 100)
            what = "is outside 0-100 wt %"
        if col == "available_t":
            if wrong.any():
                i = int(np.argmax(wrong))
                raise ProfileError(
                    f"{source}row {rows[i]}, column {col!r} (sample {profile.samples[i]!r}): "
                    f"{values[i]:g} {what}"
                )
            continue
        if wrong.any():
            i = int(np.argmax(wrong))
            raise ProfileError(
                f"{source}row {rows[i]}, column {col!r} (sample {profile.samples[i]!r}): "
                f"{values[i]:g} {what}"
            )
        out[col] = values
    total = np.nan_to_num(out["ffa_wt_pct"].to_numpy()) + np.nan_to_num(
        out["water_wt_pct"].to_numpy())
    if (total > 100).any():
        i = int(np.argmax(total > 100))
        raise ProfileError(
            f"{source}row {rows[i]}, columns 'ffa_wt_pct' + 'water_wt_pct' "
            f"(sample {profile.samples[i]!r}): {total[i]:g} wt % is more than the whole oil"
        )
    return out


def _check_options(pretreat: str, methanol_ratio: float) -> None:
    if pretreat not in PRETREATMENTS:
        raise UsageError(f"pretreat must be one of {', '.join(PRETREATMENTS)}, got {pretreat!r}")
    if not (np.isfinite(methanol_ratio) and methanol_ratio >= 3.0):
        raise UsageError(
            f"methanol ratio must be at least 3 (the stoichiometric 3:1), got {methanol_ratio:g}"
        )


def value_lots(
    profile, *, pretreat: str = "none", methanol_ratio: float = DEFAULT_METHANOL_RATIO,
    costs: ProcessCosts | None = None,
) -> pd.DataFrame:
    """Fuel yield, by-products, reagents and cost per tonne of fuel for each lot.

    Parameters
    ----------
    profile : Profile
        Lots with metadata ``price_per_t``, ``ffa_wt_pct`` and ``water_wt_pct``
        (any may be missing).
    pretreat : {'none', 'acid'}
        ``none``: base catalysis; FFA is neutralised to soap and lost. ``acid``: FFA
        is esterified to FAME before the base step.
    methanol_ratio : float
        Methanol : triglyceride molar ratio charged (>= 3). [mol/mol]
    costs : ProcessCosts, optional
        Prices and uses of methanol, catalyst, pretreatment and glycerol (default
        :data:`DEFAULT_COSTS`; :meth:`ProcessCosts.zero` gives the feedstock cost alone).

    Returns
    -------
    DataFrame
        One row per lot (``sample`` first); yields in t per t of oil as offered,
        side streams in kg per t of oil, the processing costs per t of oil
        (``methanol_cost_per_t_oil``, ``catalyst_cost_per_t_oil``,
        ``pretreatment_cost_per_t_oil``, ``glycerol_credit_per_t_oil``),
        ``processing_cost_per_t_fuel`` (those net of the credit, over the yield),
        ``feedstock_cost_per_t_fuel`` (oil price over yield) and ``cost_per_t_fuel``
        (their sum; NaN without a price), in the price's currency, and
        ``valuation_note``.

    Examples
    --------
    >>> from estimator.profiles.profile import Profile
    >>> v = value_lots(Profile.from_oils(["rapeseed"]))
    >>> round(float(v["fuel_yield_t_per_t_oil"].iloc[0]), 3)
    1.004
    >>> v["valuation_note"].iloc[0].split("; ")
    ['no price_per_t: cost per tonne of fuel not computed', 'ffa_wt_pct not given: taken as 0',
     'water_wt_pct not given: taken as 0']
    """
    _check_options(pretreat, float(methanol_ratio))
    costs = DEFAULT_COSTS if costs is None else costs
    inputs = lot_inputs(profile)
    s = stoichiometry(profile.wt_pct)
    price = inputs["price_per_t"].to_numpy(dtype=float)
    ffa_given = inputs["ffa_wt_pct"].to_numpy(dtype=float)
    water_given = inputs["water_wt_pct"].to_numpy(dtype=float)
    ffa = np.nan_to_num(ffa_given) / 100.0
    water = np.nan_to_num(water_given) / 100.0
    neutral = 1.0 - ffa - water
    m_acid, m_fame = s["acid_molar_mass_g_mol"], s["fame_molar_mass_g_mol"]
    m_tg = s["triglyceride_molar_mass_g_mol"]
    ffa_kmol = 1000.0 * ffa / m_acid  # per t of oil
    fame_neutral = neutral * s["fame_t_per_t_neutral_oil"]
    acid = pretreat == "acid"
    fame_ffa = ffa * m_fame / m_acid if acid else np.zeros_like(ffa)
    fuel = fame_neutral + fame_ffa
    tg_kmol = 1000.0 * neutral / m_tg
    zero = np.zeros_like(ffa)
    table = pd.DataFrame({
        "sample": profile.samples,
        "price_per_t": price,
        "ffa_wt_pct": ffa_given,
        "water_wt_pct": water_given,
        "pretreat": pretreat,
        "neutral_oil_t_per_t_oil": neutral,
        "fame_from_neutral_oil_t_per_t_oil": fame_neutral,
        "fame_from_ffa_t_per_t_oil": fame_ffa,
        "fuel_yield_t_per_t_oil": fuel,
        "ffa_lost_to_soap_kg_per_t_oil": zero if acid else 1000.0 * ffa,
        "soap_kg_per_t_oil": zero if acid else ffa_kmol * (m_acid + MOLAR_MASS_KOH -
                                                            MOLAR_MASS_WATER),
        "koh_to_neutralise_ffa_kg_per_t_oil": zero if acid else ffa_kmol * MOLAR_MASS_KOH,
        "glycerol_kg_per_t_oil": tg_kmol * MOLAR_MASS_GLYCEROL,
        "methanol_charged_kg_per_t_oil": (tg_kmol * methanol_ratio
                                          + (ffa_kmol if acid else 0.0)) * MOLAR_MASS_METHANOL,
        "methanol_consumed_kg_per_t_oil": (3.0 * tg_kmol + (ffa_kmol if acid else 0.0))
        * MOLAR_MASS_METHANOL,
        "water_from_esterification_kg_per_t_oil": ffa_kmol * MOLAR_MASS_WATER if acid else zero,
        "water_removed_kg_per_t_oil": 1000.0 * water,
        "water_hydrolysis_max_loss_t_per_t_oil": water / MOLAR_MASS_WATER * m_fame,
    })
    charged = table["methanol_charged_kg_per_t_oil"].to_numpy() / 1000.0
    consumed = table["methanol_consumed_kg_per_t_oil"].to_numpy() / 1000.0
    lost = (charged - consumed) * (1.0 - costs.methanol_recovered_pct / 100.0)
    catalyst = (costs.catalyst_wt_pct_of_oil / 100.0
                + table["koh_to_neutralise_ffa_kg_per_t_oil"].to_numpy() / 1000.0)
    table["methanol_cost_per_t_oil"] = (consumed + lost) * costs.methanol_price_per_t
    table["catalyst_cost_per_t_oil"] = catalyst * costs.catalyst_price_per_t
    table["pretreatment_cost_per_t_oil"] = (ffa * costs.acid_pretreatment_cost_per_t_ffa
                                            if acid else zero)
    table["glycerol_credit_per_t_oil"] = (table["glycerol_kg_per_t_oil"].to_numpy() / 1000.0
                                          * costs.glycerol_credit_per_t)
    processing = (table["methanol_cost_per_t_oil"] + table["catalyst_cost_per_t_oil"]
                  + table["pretreatment_cost_per_t_oil"] - table["glycerol_credit_per_t_oil"])
    table["processing_cost_per_t_fuel"] = processing.to_numpy() / fuel
    table["feedstock_cost_per_t_fuel"] = price / fuel
    table["cost_per_t_fuel"] = table["feedstock_cost_per_t_fuel"] + table[
        "processing_cost_per_t_fuel"]
    table["valuation_note"] = _notes(price, ffa_given, water_given, acid)
    return table


def _notes(price, ffa, water, acid: bool) -> list[str]:
    notes = []
    for p, f, w in zip(price, ffa, water):
        parts = []
        if np.isnan(p):
            parts.append("no price_per_t: cost per tonne of fuel not computed")
        if np.isnan(f):
            parts.append("ffa_wt_pct not given: taken as 0")
        elif f > FFA_BASE_LIMIT_WT_PCT and not acid:
            parts.append(
                f"FFA {f:g} wt % above {FFA_BASE_LIMIT_WT_PCT:g}: lost to soap under base "
                "catalysis and hinders separation; consider acid pretreatment"
            )
        elif f > 0 and acid:
            parts.append("esterification water must be removed before the base step")
        if np.isnan(w):
            parts.append("water_wt_pct not given: taken as 0")
        elif w > WATER_BASE_LIMIT_WT_PCT:
            parts.append(
                f"water {w:g} wt % above {WATER_BASE_LIMIT_WT_PCT:g}: dry the oil first or lose "
                "ester to soap (see water_hydrolysis_max_loss_t_per_t_oil)"
            )
        notes.append("; ".join(parts))
    return notes


def assumptions(
    *, pretreat: str = "none", methanol_ratio: float = DEFAULT_METHANOL_RATIO,
    costs: ProcessCosts | None = None,
) -> pd.DataFrame:
    """Every assumption of the valuation as a row: ``assumption``, ``value``, ``basis``.

    Each cost of :data:`COST_KEYS` is a row: the value used, and whether it came from
    the costs file or is the stated default.

    Examples
    --------
    >>> assumptions().loc[0, "assumption"]
    'neutral oil composition'
    """
    _check_options(pretreat, float(methanol_ratio))
    acid = pretreat == "acid"
    rows = [
        ("neutral oil composition",
         "triglyceride of the profile's acids (mole proportions of the esters)",
         "stoichiometry; unsaponifiables, phospholipids, mono- and diglycerides ignored"),
        ("reaction", "TG + 3 CH3OH -> 3 FAME + glycerol", "stoichiometry"),
        ("conversion", "complete (theoretical yield); no handling or washing losses",
         "upper bound; plants recover less"),
        ("molar masses", "IUPAC conventional atomic weights C 12.011, H 1.008, O 15.999, "
         "K 39.098", "estimator.properties.descriptors"),
        ("methanol : triglyceride molar ratio", f"{methanol_ratio:g} : 1",
         "common practice 6 : 1 for base catalysis; excess above 3 : 1 is recovered"),
        ("catalyst", "KOH (base catalysis)", "common practice; NaOH behaves alike"),
        ("FFA molar mass", "mean acid of the profile", "FFA taken to share the oil's acids"),
        ("FFA handling",
         "esterified to FAME with methanol before the base step (acid pretreatment)" if acid
         else "neutralised by the catalyst to potassium soap and lost from the yield",
         "stoichiometry: R-COOH + CH3OH -> R-COOCH3 + H2O" if acid
         else "stoichiometry: R-COOH + KOH -> R-COOK + H2O"),
        ("methanol for FFA esterification",
         "stoichiometric 1 : 1 with the FFA counted" if acid else "none (no esterification)",
         "the larger excess used in practice is recovered and not counted"),
        ("FFA limit for base catalysis alone", f"{FFA_BASE_LIMIT_WT_PCT:g} wt %",
         "MEMORY: Ma, Clements & Hanna 1998, cited in Ma & Hanna 1999, Bioresour. Technol. "
         "70:1-15"),
        ("water", "removed before the reaction: its mass yields no fuel",
         "the largest loss if not removed (one ester per water molecule) is reported "
         "separately"),
        ("water limit for base catalysis", f"{WATER_BASE_LIMIT_WT_PCT:g} wt %",
         "MEMORY: same source as the FFA limit"),
        ("missing FFA or water", "taken as 0, with a note on the lot",
         "the yield is then an upper bound"),
        ("cost per tonne of fuel",
         "(oil price + methanol + catalyst + acid pretreatment - glycerol credit, each per "
         "t of oil) / fuel yield [t/t oil]; plus the antioxidant dose for lots that need it",
         "energy, labour and capital are not counted"),
        ("methanol bought", "consumed + (1 - recovered share) x excess charged",
         "a higher methanol ratio charges more excess, so it costs more"),
        ("missing price", "cost left empty (NaN), with a note on the lot",
         "properties and verdicts are still given"),
    ]
    costs = DEFAULT_COSTS if costs is None else costs
    for key, (meaning, _default, basis) in COST_KEYS.items():
        given = key in costs.given
        # the costs-file key itself is listed in the README and the docstring above
        rows.append((meaning, f"{getattr(costs, key):g}",
                     f"from {costs.source}" if given else f"default; {basis}"))
    return pd.DataFrame(rows, columns=["assumption", "value", "basis"])
