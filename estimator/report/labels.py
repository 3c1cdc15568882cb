"""Words for readers: display names of methods, columns and marks, and one ± formatter.

Files (CSV, XLSX, JSON) keep the machine names (``ramirezverduzco2012``,
``cfpp_C``, ``MEMORY``); everything a person reads on the terminal or in the
HTML report goes through this module:

- :func:`method_name`: a method key as an author-year citation
  (``ramos2009`` -> *Ramos et al. 2009*);
- :func:`column_label`: a column as a readable label with its unit
  (``cfpp_C`` -> *CFPP [°C]*), spelled-out names for the composition descriptors;
- :func:`mark_text`: a provenance mark in words (``MEMORY`` -> *recalled, not yet
  checked against the paper*);
- :func:`for_readers`: free text (notes, flags, sources) with the keys, marks and
  reference-note file names above replaced;
- :func:`plus_minus`: a value with its band, to the precision the band supports
  (``18.8 ± 1.2``).
"""

from __future__ import annotations

import math
import re
from functools import cache

from estimator.specs import SPEC_NAMES

__all__ = [
    "LINEAR_FORM_WORDS",
    "RULE_WORDS",
    "and_list",
    "readable_cells",
    "candidate_name",
    "column_label",
    "for_readers",
    "format_value",
    "mark_text",
    "linear_form_words",
    "method_name",
    "model_sources",
    "plus_minus",
    "pretty_unit",
    "spec_name",
]

#: Author-year citation of each method key in the registry (and a few others).
_METHODS = {
    "krisnangkura1986": "Krisnangkura 1986",
    "bamgboye2008": "Bamgboye & Hansen 2008",
    "klopfenstein1985": "Klopfenstein 1985",
    "ramirezverduzco2012": "Ramírez-Verduzco et al. 2012",
    "ramirezverduzco2022": "Ramírez-Verduzco 2022",
    "stoichiometric": "counted double bonds (AOCS Cd 1c-85 principle)",
    "aocs_cd1c85": "AOCS Cd 1c-85 factors",
    "ramos2009": "Ramos et al. 2009",
    "from_cloud_point": "from the cloud point (thermodynamic route)",
    "imahara2006": "Imahara et al. 2006",
    "sarin2009": "Sarin et al. 2009",
    "park2008": "Park et al. 2008",
    "park2008_bape": "bis-allylic oxidizability on the scale of Park et al. 2008",
    "sarin2009_from_cloud_point": "Sarin et al. 2009 pour point from the cloud point",
    "knothe2005": "Knothe 2005 pure-ester cetane numbers",
    "knothe2002": "Knothe 2002",
    "mccormick2007": "McCormick et al. 2007",
    "allen1999": "Allen et al. 1999",
    "krisnangkura2006": "Krisnangkura et al. 2006",
    "kay1936": "Kay 1936",
    "demirbas1998": "Demirbas 1998",
    "composition": "read from the profile",
    "ideal_solubility": "ideal solubility of the saturated esters",
}

_CANDIDATES = {
    "recalibrated": "recalibrated",
    "published": "published",
    "pls": "partial least squares",
    "ridge": "ridge regression",
    "gp": "Gaussian process",
}

#: Readable label and unit of each column people see.
_COLUMNS: dict[str, tuple[str, str]] = {
    # fuel properties
    "cetane_number": ("cetane number", ""),
    "iodine_value_gI2_100g": ("iodine value", "g I2/100 g"),
    "cfpp_C": ("CFPP", "°C"),
    "cloud_point_C": ("cloud point", "°C"),
    "pour_point_C": ("pour point", "°C"),
    "oxidation_stability_110C_h": ("oxidation stability 110 °C", "h"),
    "oxidizability_indicator_wt_pct": ("oxidizability indicator", "wt % linoleate-eq."),
    "density_15C_kg_m3": ("density 15 °C", "kg/m3"),
    "kin_viscosity_40C_mm2_s": ("viscosity 40 °C", "mm2/s"),
    "hhv_MJ_kg": ("higher heating value", "MJ/kg"),
    "lhv_MJ_kg": ("lower heating value", "MJ/kg"),
    "lhv_MJ_L": ("lower heating value", "MJ/L"),
    "linolenic_wt_pct": ("linolenic ester", "wt %"),
    "pufa4_wt_pct": ("esters with ≥ 4 double bonds", "wt %"),
    "ester_content_wt_pct": ("ester content, EN 14103", "% (m/m)"),
    # composition descriptors, spelled out
    "mean_molar_mass_g_mol": ("mean molar mass", "g/mol"),
    "saponification_value_mgKOH_g": ("saponification value", "mg KOH/g"),
    "iodine_value_oil_gI2_100g": ("iodine value of the oil", "g I2/100 g"),
    "du_ramos_wt_pct": ("degree of unsaturation (Ramos et al. 2009)", "wt %"),
    "du_bonds_wt_pct": ("degree of unsaturation, double bonds counted", "wt %"),
    "lcsf_wt_pct": ("long-chain saturated factor", "wt %"),
    "ape_wt_pct": ("allylic position equivalents", "wt %"),
    "bape_wt_pct": ("bis-allylic position equivalents", "wt %"),
    "oxidizability": ("oxidizability (linolenate = 2)", ""),
    "sfa_wt_pct": ("saturated esters", "wt %"),
    "mufa_wt_pct": ("monounsaturated esters", "wt %"),
    "pufa_wt_pct": ("polyunsaturated esters", "wt %"),
    "mean_chain_length_carbons": ("mean chain length", "carbon atoms"),
    "carbon_wt_pct": ("carbon", "wt %"),
    "hydrogen_wt_pct": ("hydrogen", "wt %"),
    "oxygen_wt_pct": ("oxygen", "wt %"),
    # lots, valuation and decisions
    "sample": ("sample", ""),
    "price_per_t": ("price", "per t oil"),
    "ffa_wt_pct": ("free fatty acids", "wt %"),
    "water_wt_pct": ("water", "wt %"),
    "available_t": ("available", "t"),
    "cost_per_t_fuel": ("cost", "per t fuel"),
    "feedstock_cost_per_t_fuel": ("feedstock cost", "per t fuel"),
    "processing_cost_per_t_fuel": ("processing cost", "per t fuel"),
    "treatment_cost_per_t_fuel": ("treatment cost", "per t fuel"),
    "methanol_cost_per_t_oil": ("methanol cost", "per t oil"),
    "catalyst_cost_per_t_oil": ("catalyst cost", "per t oil"),
    "pretreatment_cost_per_t_oil": ("acid pretreatment cost", "per t oil"),
    "glycerol_credit_per_t_oil": ("glycerol credit", "per t oil"),
    "decision": ("decision", ""),
    "fixable_failures": ("failures a treatment fixes", ""),
    "unfixable_failures": ("failures no treatment fixes", ""),
    "bands_out": ("beyond the limit", "stated errors"),
    "least_probability_meets": ("lowest probability of meeting a limit", ""),
    "headroom": ("headroom to the limit", ""),
    "headroom_bands": ("headroom", "stated errors"),
    "limit_with_margin": ("limit with the margin", ""),
    "fuel_yield_t_per_t_oil": ("fuel yield", "t/t oil"),
    "neutral_oil_t_per_t_oil": ("neutral oil", "t/t oil"),
    "fame_from_neutral_oil_t_per_t_oil": ("esters from the neutral oil", "t/t oil"),
    "fame_from_ffa_t_per_t_oil": ("esters from the free fatty acids", "t/t oil"),
    "ffa_lost_to_soap_kg_per_t_oil": ("free fatty acids lost to soap", "kg/t oil"),
    "soap_kg_per_t_oil": ("soap", "kg/t oil"),
    "koh_to_neutralise_ffa_kg_per_t_oil": ("KOH to neutralise the free fatty acids",
                                           "kg/t oil"),
    "glycerol_kg_per_t_oil": ("glycerol", "kg/t oil"),
    "methanol_charged_kg_per_t_oil": ("methanol charged", "kg/t oil"),
    "methanol_consumed_kg_per_t_oil": ("methanol consumed", "kg/t oil"),
    "water_from_esterification_kg_per_t_oil": ("water from esterification", "kg/t oil"),
    "water_removed_kg_per_t_oil": ("water removed before the reaction", "kg/t oil"),
    "water_hydrolysis_max_loss_t_per_t_oil": ("largest ester loss if the water stays in",
                                              "t/t oil"),
    "share_mass_pct": ("share of the fuel", "wt %"),
    "oil_share_mass_pct": ("share of the oil", "wt %"),
    "fuel_t": ("fuel", "t"),
    "oil_t": ("oil", "t"),
    "level_pct_v": ("blend level", "% v/v"),
    "highest_level_pct_v": ("highest blend level", "% v/v"),
    "highest_level_with_error_pct_v": ("with the error taken against it", "% v/v"),
    "probability_meets": ("probability of meeting the limit", ""),
    "in_domain": ("inside the fitted domain", ""),
}

#: Unit suffixes of machine column names, longest first, for columns not listed above.
_SUFFIXES = (
    ("_t_per_t_oil", "t/t oil"), ("_kg_per_t_oil", "kg/t oil"), ("_per_t_fuel", "per t fuel"),
    ("_gI2_100g", "g I2/100 g"), ("_mgKOH_g", "mg KOH/g"), ("_kg_m3", "kg/m3"),
    ("_mm2_s", "mm2/s"), ("_MJ_kg", "MJ/kg"), ("_MJ_L", "MJ/L"), ("_g_mol", "g/mol"),
    ("_wt_pct", "wt %"), ("_pct_v", "% v/v"), ("_pct", "%"), ("_C", "°C"), ("_h", "h"),
    ("_t", "t"),
)

_TEMPERATURE_COLUMN = re.compile(r"^(density|kin_viscosity)_(-?\d+(?:\.\d+)?)C_(kg_m3|mm2_s)$")

_UNITS = {"1": "", "kg/m3": "kg/m³", "mm2/s": "mm²/s", "g I2/100 g": "g I₂/100 g",
          "degC": "°C", "dimensionless": ""}

_SPECS = {**SPEC_NAMES, "target": "your target"}


def pretty_unit(unit: str) -> str:
    """A unit as printed for readers: superscripts, subscripts; ``1`` prints as nothing.

    Examples
    --------
    >>> pretty_unit("kg/m3"), pretty_unit("1")
    ('kg/m³', '')
    """
    return _UNITS.get(unit, unit)


def method_name(key: str) -> str:
    """A method key as readers see it: an author-year citation or a plain description.

    Examples
    --------
    >>> method_name("ramirezverduzco2012")
    'Ramírez-Verduzco et al. 2012'
    >>> method_name("fit:ridge")
    "the lab's model (ridge regression)"
    """
    key = str(key)
    if key.startswith("fit:"):
        kind = key[4:].split(":")[0].split("_")[0]
        return f"the lab's model ({_CANDIDATES.get(kind, kind.replace('_', ' '))})"
    if key in _METHODS:
        return _METHODS[key]
    match = re.fullmatch(r"([a-z]+)(\d{4})", key)
    if match:
        return f"{match.group(1).capitalize()} {match.group(2)}"
    return key.replace("_", " ")


def candidate_name(candidate: str) -> str:
    """A refit candidate (``recalibrated:bamgboye2008``, ``gp:descriptors``) in words.

    Examples
    --------
    >>> candidate_name("recalibrated:bamgboye2008")
    'Bamgboye & Hansen 2008, recalibrated to the lab'
    >>> candidate_name("gp:descriptors")
    'Gaussian process on the descriptors'
    >>> candidate_name("published:knothe2005")
    "Knothe 2005 pure-ester cetane numbers as published, with the lab's band"
    """
    kind, _, rest = str(candidate).partition(":")
    if kind == "recalibrated":
        return f"{method_name(rest)}, recalibrated to the lab"
    if kind == "published":
        return f"{method_name(rest)} as published, with the lab's band"
    names = {"gp": "Gaussian process", "ridge": "ridge regression",
             "pls": "partial least squares", "pls1": "partial least squares",
             "pls2": "partial least squares"}
    what = names.get(kind, kind.replace("_", " "))
    return f"{what} on the {rest.replace('_', ' ')}" if rest else what


#: Each mixing rule in words, for readers (the report's table of blend methods;
#: the keys are those of :data:`estimator.blending.BLEND_METHODS`).
RULE_WORDS = {
    "kay-volume": "linear by volume fraction (Kay 1936)",
    "arrhenius-mass": "logarithmic by mass fraction (Arrhenius)",
    "arrhenius-mole": "logarithmic by mole fraction (Arrhenius)",
    "linear-volume": "linear by volume fraction",
    "mass-weighted": "linear by mass fraction",
    "volume-weighted": "linear by volume fraction",
    "liquidus-or-linear": "higher of the esters' ideal-solubility liquidus and the linear rule",
    "ideal-solubility": "ideal solubility of the saturated esters and the diesel's wax",
    "cloud-gap": "blend cloud point less the volume-weighted cloud point-CFPP gap (ours)",
}


#: How a limit enters the least-cost mix, in words (the keys are the ``linear_form``
#: cells of :func:`estimator.mixing.least_cost_mix`'s limits table).
LINEAR_FORM_WORDS = {
    "identity": "linear in the shares",
    "reciprocal": "linear by ideal mixing of volumes",
    "logarithm": "linear by logarithmic mixing",
    "X = C18:2 + C18:3 (Park 2008)": "a bound on linoleic plus linolenic ester "
                                     "(Park et al. 2008)",
    "Y = bis-allylic oxidizability (on Park 2008's scale)": "a bound on the bis-allylic "
                                                            "oxidizability (Park et al. 2008)",
    "per-ester mole-fraction bounds (ideal solubility)": "a bound on each saturated ester "
                                                         "(ideal solubility)",
    "nonlinear (checked, SLSQP)": "nonlinear: checked on the answer, refined by SLSQP",
}


def linear_form_words(key: str) -> str:
    """How a limit enters the least-cost mix, in words.

    Examples
    --------
    >>> linear_form_words("logarithm")
    'linear by logarithmic mixing'
    """
    return LINEAR_FORM_WORDS.get(str(key), for_readers(str(key)))


def model_sources(model_properties) -> str:
    """The properties a lab model gave and which model, in words, ``;``-separated.

    ``model_properties`` maps a property to ``'lab model <candidate> from <file>'``
    (:func:`estimator.comparison.model_properties`).

    Examples
    --------
    >>> model_sources({"cfpp_C": "lab model recalibrated:ramos2009 from lab.json"})
    'CFPP (lab model Ramos et al. 2009, recalibrated to the lab from lab.json)'
    """
    return "; ".join(f"{column_label(p, unit=False)} ({for_readers(how)})"
                     for p, how in dict(model_properties or {}).items())


def and_list(names) -> str:
    """Names joined for a sentence: ``a``, ``a and b``, ``a, b and c``.

    Examples
    --------
    >>> and_list(["cetane number", "CFPP", "viscosity 40 °C"])
    'cetane number, CFPP and viscosity 40 °C'
    """
    names = [str(n) for n in names]
    return ", ".join(names[:-1]) + " and " + names[-1] if len(names) > 1 else "".join(names)


def spec_name(key: str) -> str:
    """A specification key as printed (``en14214`` -> *EN 14214*)."""
    return _SPECS.get(str(key), str(key))


def column_label(column: str, *, unit: bool = True) -> str:
    """A machine column name as a readable label, with its unit in brackets.

    Examples
    --------
    >>> column_label("cfpp_C")
    'CFPP [°C]'
    >>> column_label("bape_wt_pct")
    'bis-allylic position equivalents [wt %]'
    >>> column_label("density_40C_kg_m3", unit=False)
    'density 40 °C'
    """
    column = str(column)
    if column.endswith("_error") and column[:-6] in _COLUMNS:
        name, u = _COLUMNS[column[:-6]]
        name = f"± {name}"
    elif column in _COLUMNS:
        name, u = _COLUMNS[column]
    elif (match := _TEMPERATURE_COLUMN.match(column)):
        what = "density" if match.group(1) == "density" else "viscosity"
        name, u = f"{what} {match.group(2)} °C", match.group(3).replace("_", "/")
    else:
        name, u = column, ""
        for suffix, suffix_unit in _SUFFIXES:
            if column.endswith(suffix) and len(column) > len(suffix):
                name, u = column[: -len(suffix)], suffix_unit
                break
        name = name.replace("_", " ")
    u = pretty_unit(u)
    return f"{name} [{u}]" if unit and u else name


_MARKS = {
    "MEMORY": "recalled, not yet checked against the paper",
    "VERIFIED": "checked against the source",
    "DERIVED": "derived from checked sources",
}


def mark_text(mark: str, *, source: str = "paper") -> str:
    """A provenance mark in words; ``source`` names what a recalled number awaits.

    Examples
    --------
    >>> mark_text("MEMORY")
    'recalled, not yet checked against the paper'
    >>> mark_text("MEMORY", source="standard")
    'recalled, not yet checked against the standard'
    """
    text = _MARKS.get(str(mark).strip().upper(), str(mark))
    return text.replace("the paper", f"the {source}")


@cache
def _word_pattern() -> re.Pattern:
    # only names no English sentence uses: an underscore or a digit in them
    keys = sorted((k for k in {*_METHODS, *_COLUMNS} if re.search(r"[_\d]", k)),
                  key=len, reverse=True)
    return re.compile(r"(?<![\w:])(" + "|".join(re.escape(k) for k in keys) + r")(?![\w])")


_CANDIDATE = re.compile(r"(?<![\w:])(?:recalibrated|published|gp|ridge|pls\d?):[A-Za-z]\w*")
#: A lab model's method key, ``fit:<candidate>`` (as the estimate tables carry it).
_FIT_CANDIDATE = re.compile(r"(?<![\w:])fit:((?:recalibrated|published|gp|ridge|pls\d?)"
                            r":[A-Za-z]\w*)")
_NOTE_FILES = re.compile(r"\b(?:shared/reference/)?(?:correlations|standards|gc|reference_libs)"
                         r"\.md(?:\s+[\d.]+(?:\s*\([\d.]+\))?)?:?\s*")
_SOURCE_TAGS = re.compile(r"\s*(?:\[S\d+\])+")
_MARK_WORDS = (
    (re.compile(r"\(from memory\)|\(pages from memory\)"), "(recalled)"),
    (re.compile(r"\((?:VERIFIED)\)"), "(checked)"),
    (re.compile(r"\bmostly MEMORY\b"), "mostly recalled"),
    (re.compile(r"\bMEMORY\b"), "recalled, not yet checked"),
    (re.compile(r"\bVERIFIED\b"), "checked"),
    (re.compile(r"\bDERIVED\b"), "derived"),
)


def for_readers(text: str) -> str:
    """Free text with method keys, column names, marks and note-file names in words.

    Examples
    --------
    >>> for_readers("cfpp_C: outside ramos2009 domain (LCSF > 7 wt %)")
    'CFPP: outside the fitted domain of Ramos et al. 2009 (LCSF > 7 wt %)'
    >>> for_readers("outside the fitted domain: cetane_number (fit:gp:descriptors)")
    'outside the fitted domain: cetane number (lab model Gaussian process on the descriptors)'
    >>> for_readers("EN 14214:2012; EN 116; standards.md 1.2: grade ladder [S1][S2]")
    'EN 14214:2012; EN 116; grade ladder'
    """
    text = str(text)
    text = _FIT_CANDIDATE.sub(lambda m: "lab model " + candidate_name(m.group(1)), text)
    text = _CANDIDATE.sub(lambda m: candidate_name(m.group(0)), text)
    text = text.replace(">=", "≥").replace("<=", "≤")
    text = _NOTE_FILES.sub("", text)
    text = _SOURCE_TAGS.sub("", text)
    for pattern, words in _MARK_WORDS:
        text = pattern.sub(words, text)

    def word(match: re.Match) -> str:
        key = match.group(1)
        return _METHODS[key] if key in _METHODS else column_label(key, unit=False)

    text = _word_pattern().sub(word, text)
    text = re.sub(r"\boutside (?!the )(.+?) domain\b", r"outside the fitted domain of \1", text)
    text = re.sub(r"\s*\(\d+(?:\.\d+)+\)", "", text)  # section numbers of the notes
    text = re.sub(r"\(\s*[,;]\s*", "(", text)
    text = re.sub(r"\(\s*\)", "", text)
    text = re.sub(r"\s+([;,.])", r"\1", text)
    return re.sub(r"[ \t]{2,}", " ", text).strip().rstrip(";").strip()


def readable_cells(values):
    """A pandas Series with every text cell passed through :func:`for_readers`."""
    return values.map(lambda v: for_readers(v) if isinstance(v, str) else v)


# ------------------------------------------------------------------ numbers
def _rounded_error(error: float) -> tuple[float, int]:
    """The error rounded as the Particle Data Group does, and the decimals to show.

    Its three leading digits 100-354 keep two significant figures, 355-949 one, and
    950-999 round up to 1000 with two (PDG, Review of Particle Physics, Introduction
    5.3). Decimals are never negative: a large error still prints whole numbers.
    """
    exponent = int(math.floor(math.log10(error)))
    lead = int(round(error / 10 ** (exponent - 2)))  # three leading digits
    if lead >= 1000:  # rounding crossed into the next decade
        exponent, lead = exponent + 1, 100
    if lead <= 354:
        figures = 2
    elif lead <= 949:
        figures = 1
    else:
        exponent, figures = exponent + 1, 2
    decimals = figures - 1 - exponent
    return round(error, decimals), max(0, decimals)


def _plain(value: float, decimals: int) -> str:
    text = f"{value:.{decimals}f}"
    return text[1:] if text.startswith("-") and float(text) == 0 else text


def format_value(value: float, digits: int = 4, *, missing: str = "–") -> str:
    """A number without a band: ``digits`` significant figures, whole numbers above that.

    Examples
    --------
    >>> format_value(18.83444699852902), format_value(1234.6), format_value(0.0)
    ('18.83', '1235', '0')
    """
    try:
        v = float(value)
    except (TypeError, ValueError):
        return str(value)
    if math.isnan(v):
        return missing
    if v == 0:
        return "0"
    mag = abs(v)
    if math.isinf(v):
        return "∞" if v > 0 else "-∞"
    if mag < 10 ** -(digits):
        return f"{v:.{max(digits - 1, 0)}e}"
    decimals = max(0, digits - 1 - int(math.floor(math.log10(mag))))
    return _plain(v, decimals)


def plus_minus(value: float, error: float | None = None, *, missing: str = "–",
               digits: int = 4) -> str:
    """``value ± error`` to the precision the band supports: the error rounded to
    one or two significant figures (the Particle Data Group rule) and the value to
    the same decimal place.

    Without a positive finite error the value is shown to ``digits`` significant
    figures; a missing value prints as ``missing``.

    Examples
    --------
    >>> plus_minus(18.83444699852902, 1.2345)
    '18.8 ± 1.2'
    >>> plus_minus(7.2012, 0.4031), plus_minus(876.14, 2.6), plus_minus(61.52, 3.7)
    ('7.2 ± 0.4', '876.1 ± 2.6', '62 ± 4')
    >>> plus_minus(0.2, 0.0), plus_minus(float("nan"), 1.0), plus_minus(45.68, 0.0043)
    ('0.2', '–', '45.680 ± 0.004')
    """
    try:
        v = float(value)
    except (TypeError, ValueError):
        return str(value)
    if math.isnan(v):
        return missing
    e = float("nan") if error is None else float(error)
    if not (math.isfinite(e) and e > 0):
        return format_value(v, digits, missing=missing)
    e, decimals = _rounded_error(e)
    return f"{_plain(v, decimals)} ± {e:.{decimals}f}"
