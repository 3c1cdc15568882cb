"""Error bands from evidence, and the uncertainty of the composition itself.

Every ``<property>_error`` the tool prints is **one standard uncertainty** (one
standard deviation, about 68 % coverage for a normal error). It combines two parts
in quadrature:

1. **The method's band** (:func:`method_band`), from evidence, in this order:

   a. a *published validation statistic* that the shared reference notes mark
      VERIFIED (:data:`VERIFIED_STATISTICS`), converted to a standard deviation:
      an average absolute deviation (AAD) times :math:`\\sqrt{\\pi/2}` (exact for
      normal errors), a maximum deviation divided by 2, an RMSE as it is;
   b. the *root mean square of the method's residuals* on the validation tables
      shipped with the package (``estimator/tables/validation_*.csv``: published
      measurements of pure esters and typical feedstock values, each with its source
      and VERIFIED/MEMORY mark), computed by this code (:func:`computed_band`), so the
      band follows any change of the method. At least :data:`MIN_RESIDUALS` usable points
      (inside the fitted domain, not an input of the method itself, see the
      ``used_by`` column) are needed. Where both (a) and (b) exist the larger holds:
      a published statistic is a floor that our own evidence can only widen. A range
      value (e.g. a trade range) is compared at its midpoint, which counts the width
      of the range against the method (conservative);
   c. without enough evidence: the largest of a published statistic marked MEMORY,
      the RMS of the few in-domain residuals there are, the RMS of the residuals
      beyond the fitted domain divided by :data:`OUT_OF_DOMAIN_FACTOR`, the band of a
      related property (:data:`BORROWED_BANDS`) and, per sample (only then
      evaluated), the standard deviation of the property's other methods or the
      method's stated fallback. The ``note`` says which applies.

   The bands of the registered methods are also shipped ready-made in
   ``estimator/tables/method_bands.csv`` (written by ``scripts/build_band_table.py``;
   a regression test recomputes every row and fails when the file differs), so a
   run reads them instead of evaluating every method on the validation tables. The
   file records a digest of the tables the bands come from
   (:data:`BAND_INPUT_TABLES`); when those tables differ, or for a method that is
   not the registered one, the band is computed as above.

   **Outside the fitted domain** the band is multiplied by
   :data:`OUT_OF_DOMAIN_FACTOR` (3) and is at least the spread of the property's
   other methods on that sample; such an estimate never "meets" a limit
   (:func:`estimator.specs.check` gives it the verdict ``outside method range``).

2. **The composition's own uncertainty** (:func:`composition_sd`): the GC area-%
   repeatability (:class:`GCRepeatability`; default 1.5 % relative of each peak,
   at least 0.05 wt %, from common practice for FAME by GC-FID, gc.md: MEMORY /
   COMMON PRACTICE) propagated to the estimate by linearisation (one-sigma finite
   differences, renormalised to 100 %) or by a seedable, vectorised Monte Carlo.
   The two agree to first order (a test shows it).
"""

from __future__ import annotations

import csv
import hashlib
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from functools import cache
from importlib.resources import files

import numpy as np
import pandas as pd

from estimator.properties.methods import DEFAULTS, Method, get_method, methods_for
from estimator.tables import composition_row, load_table, species_keys

__all__ = [
    "AAD_TO_SD",
    "BAND_COLUMNS",
    "BAND_INPUT_TABLES",
    "BAND_TABLE",
    "BORROWED_BANDS",
    "DEFAULT_GC",
    "MAX_TO_SD",
    "MIN_RESIDUALS",
    "OUT_OF_DOMAIN_FACTOR",
    "VALIDATION_TABLES",
    "VERIFIED_STATISTICS",
    "Band",
    "GCRepeatability",
    "band_inputs_digest",
    "band_table_rows",
    "composition_sd",
    "computed_band",
    "method_band",
    "parse_composition",
    "read_band_table",
    "residuals",
    "validation_table",
]

#: Validation tables (``estimator/tables/<name>.csv``).
VALIDATION_TABLES = ("validation_pure_esters", "validation_feedstocks")
#: The shipped bands of the registered methods (``estimator/tables/<name>.csv``), written
#: by ``scripts/build_band_table.py``.
BAND_TABLE = "method_bands"
#: Columns of the band table, in order.
BAND_COLUMNS = ("property", "method", "kind", "absolute", "relative", "n_residuals",
                "with_fallback", "text", "inputs_digest")
#: Tables the bands are computed from (validation values, the species data the methods
#: and descriptors read, the typical oils behind ``oil:`` compositions).
BAND_INPUT_TABLES = (*VALIDATION_TABLES, "species", "feedstocks")
#: Usable residuals needed before their RMS sets a band on its own.
MIN_RESIDUALS = 3
#: Multiplier of the band outside the method's fitted domain (stated rule).
OUT_OF_DOMAIN_FACTOR = 3.0
#: Standard deviation per unit of average absolute deviation, normal errors (exact).
AAD_TO_SD = float(np.sqrt(np.pi / 2.0))
#: Standard deviation per unit of a published maximum deviation (a stated rule: the
#: maximum of a few dozen normal errors is about two standard deviations).
MAX_TO_SD = 0.5

#: Published validation statistics that the reference notes mark VERIFIED:
#: (property, method) -> where the statistic was seen.
VERIFIED_STATISTICS: Mapping[tuple[str, str], str] = {
    # correlations.md 4.3 [S11], 7.1 [S20], 7.2 [S11], 8.2 [S33][S32][S11], 9.4 [S11], 9.1 [S36]
    ("cetane_number", "ramirezverduzco2012"): "AAD 5.95 % (Ramírez-Verduzco et al. 2012)",
    ("density_15C_kg_m3", "ramirezverduzco2022"):
        "AAD 0.29 % on 696 biodiesel points (Ramírez-Verduzco 2022)",
    ("density_15C_kg_m3", "ramirezverduzco2012"): "AAD 0.11 % (Ramírez-Verduzco et al. 2012)",
    ("kin_viscosity_40C_mm2_s", "allen1999"):
        "average 3 % on natural biodiesels (Allen et al. 1999)",
    ("kin_viscosity_40C_mm2_s", "krisnangkura2006"):
        "at most 8.56 % on 8 biodiesels (Krisnangkura et al. 2006)",
    ("kin_viscosity_40C_mm2_s", "ramirezverduzco2012"):
        "AAD 2.57 % (Ramírez-Verduzco et al. 2012)",
    ("hhv_MJ_kg", "ramirezverduzco2012"): "AAD 0.21 % (Ramírez-Verduzco et al. 2012)",
    ("lhv_MJ_kg", "ramirezverduzco2012"): "AAD 0.21 % of the HHV (Ramírez-Verduzco et al. 2012)",
    ("hhv_MJ_kg", "demirbas1998"): "mean difference 0.0067 % on oils (Demirbas 1998)",
    ("lhv_MJ_kg", "demirbas1998"): "mean difference 0.0067 % on oils (Demirbas 1998)",
}

#: Words for the properties named in band texts (terminal prose shows words, not keys).
_WORDS = {"cloud_point_C": "cloud-point", "hhv_MJ_kg": "higher-heating-value"}

#: Properties without enough evidence of their own also take the evidence band of a
#: related property's default, times a factor: pour point -> cloud point x sqrt(2)
#: (the pour-point line of the same paper carries its own fit error on top); LHV ->
#: HHV x 1 (the LHV is the HHV less a fixed multiple of the hydrogen content).
BORROWED_BANDS: Mapping[str, tuple[str, float]] = {
    "pour_point_C": ("cloud_point_C", float(np.sqrt(2.0))),
    "lhv_MJ_kg": ("hhv_MJ_kg", 1.0),
}


@dataclass(frozen=True)
class GCRepeatability:
    """Repeatability of GC area % of FAME, one standard deviation per peak.

    ``relative`` of each peak's area % (default 0.015: gc.md gives 1-2 % relative
    for major FAME peaks by GC-FID, MEMORY / COMMON PRACTICE), at least
    ``floor_wt_pct`` for the minor peaks ("more for minor peaks"). Species absent
    from a profile stay absent.
    """

    relative: float = 0.015
    floor_wt_pct: float = 0.05

    def __post_init__(self) -> None:
        if not (self.relative >= 0 and self.floor_wt_pct >= 0):
            raise ValueError("GC repeatability must be non-negative")

    def sd(self, wt_pct: np.ndarray) -> np.ndarray:
        """Standard deviation of every area % [wt %], same shape as ``wt_pct``."""
        w = np.asarray(wt_pct, dtype=float)
        return np.where(w > 0, np.maximum(self.relative * w, self.floor_wt_pct), 0.0)

    @property
    def active(self) -> bool:
        """False when both parts are zero (no composition uncertainty)."""
        return self.relative > 0 or self.floor_wt_pct > 0


#: The default GC repeatability.
DEFAULT_GC = GCRepeatability()


def _renormalise(w: np.ndarray) -> np.ndarray:
    s = w.sum(axis=1, keepdims=True)
    return w * (100.0 / np.where(s > 0, s, 1.0))


#: Mixing rules recognised from the pure-ester values: name -> (g, inverse of g). A method
#: with f(w) = g^-1(sum_i w_i g(f_i) / 100) (mass-weighted mean, logarithmic mixing, ideal
#: mixing of volumes) is perturbed exactly through its pure-ester values.
_MIXING_RULES = {
    "linear": (lambda f: f, lambda y: y),
    "logarithmic": (np.log, np.exp),
    "reciprocal": (lambda f: 1.0 / f, lambda y: 1.0 / y),
}


def _mixing_rule(fp: np.ndarray, w: np.ndarray, v: np.ndarray):
    """(name, g(fp)) of the rule the values follow on these rows, or None.

    A pure-ester value that is NaN is taken, for the reciprocal rule alone, as a pole
    (1/f = 0: an induction period inverse to an oxidizability that is zero for a
    saturated ester); like every rule, that reading is kept only if it reproduces
    the values on these rows. Rows whose value is NaN are not checked: their band is
    NaN whichever way it is computed.
    """
    known = np.isfinite(v)
    if not known.all():
        w, v = w[known], v[known]
    finite = np.isfinite(fp)
    scale = max(float(np.max(np.abs(v), initial=0.0)), 1.0)
    for name, (g, ginv) in _MIXING_RULES.items():
        if name == "reciprocal" and finite.any() and (fp[finite] > 0).all():
            gp = np.divide(1.0, fp, out=np.zeros_like(fp), where=finite)
        elif not finite.all() or (name != "linear" and not (fp > 0).all()):
            continue
        else:
            gp = g(fp)
        with np.errstate(all="ignore"):
            pred = ginv(w @ gp / 100.0)
            off = np.abs(pred - v)
        if not len(v) or off.max() <= 1e-9 * scale:  # NaN never passes
            return name, gp
    return None


def _linearised(evaluate, w, sd, base) -> dict[str, np.ndarray]:
    """One-sigma finite differences per present species, combined in quadrature.

    A method that is a mixing rule of its pure-ester values (checked here, on these
    rows: linear, logarithmic or reciprocal mass-weighted mean) is moved exactly
    through those values instead of being evaluated once more per species (all
    methods of one rule at once). The others are evaluated on the rows that hold
    the species, through ``evaluate.species_step`` when the callable has one.
    """
    n_species = w.shape[1]
    pure = evaluate(100.0 * np.eye(n_species))
    by_rule: dict[str, list[tuple[str, np.ndarray]]] = {}
    for k, v in base.items():
        rule = _mixing_rule(np.asarray(pure[k], dtype=float), w, v)
        if rule is not None:
            by_rule.setdefault(rule[0], []).append((k, rule[1]))
    # per rule: the keys, g of their pure-ester values (n_species, m), the weighted means
    # of g (m, n) and the base values (m, n); one row per method, so that every NumPy
    # loop below runs along the samples (rows of m = 1 to 6 values would cost a call
    # of the inner loop per sample). Rows whose base value is NaN get a harmless stand-in
    # (their band is NaN in the end), so every step below is finite.
    stacks = []
    for name, items in by_rule.items():
        keys = [k for k, _ in items]
        gp = np.column_stack([g for _, g in items])
        values = np.vstack([base[k] for k in keys])
        mean = np.ascontiguousarray((w @ gp / 100.0).T)
        unknown = ~np.isfinite(values)
        if unknown.any():
            stand_in = 1.0  # any mean of g with a finite, positive g^-1
            mean[unknown] = stand_in
            values[unknown] = _MIXING_RULES[name][1](stand_in)
        stacks.append((keys, name, gp, mean, values, np.zeros((len(keys), w.shape[0]))))
    ruled = {k for keys, *_ in stacks for k in keys}
    var = {k: np.zeros_like(v) for k, v in base.items() if k not in ruled}
    rest = [k for k in base if k not in ruled]
    species_step = getattr(evaluate, "species_step", None)
    total = w.sum(axis=1)
    buffer = []  # one stepped composition at a time: the memory is reused
    sd_by_species = np.ascontiguousarray(sd.T)  # each species' steps side by side in memory
    for j in np.flatnonzero((sd > 0).any(axis=0)):
        h = sd_by_species[j]
        # h more of species j, renormalised, moves each weighted mean of g to
        # mean + H (g_j - mean), with H = h / (100 + h)
        share = h / (100.0 + h)
        for _, name, gp, mean, values, acc in stacks:
            d = gp[j][:, None] - values if name == "linear" else gp[j][:, None] - mean
            d *= share
            if name == "logarithmic":
                d += mean
                np.exp(d, out=d)
            elif name == "reciprocal":
                d += mean
                np.reciprocal(d, out=d)
            if name != "linear":
                d -= values
            d *= d
            acc += d
        if not rest:
            continue
        rows = np.flatnonzero(h > 0)  # elsewhere the step is zero

        def stepped(rows=rows, j=j, h=h):
            # w with h more of species j, renormalised to 100
            if len(rows) < len(w):
                factor = 100.0 / (total[rows] + h[rows])
                step = w[rows] * factor[:, None]
                step[:, j] += h[rows] * factor
                return step
            if not buffer:
                buffer.append(np.empty_like(w))
            factor = 100.0 / (total + h)
            step = np.multiply(w, factor[:, None], out=buffer[0])
            step[:, j] += h * factor
            return step

        if species_step is not None:
            moved = species_step(j, h, rows, rest, stepped)
        else:
            moved = evaluate(stepped(), rest)
        for k in rest:
            d = np.asarray(moved[k], dtype=float) - base[k][rows]
            var[k][rows] += np.where(np.isfinite(d), d * d, 0.0)
    for keys, *_, acc in stacks:
        for i, k in enumerate(keys):
            var[k] = acc[i]
    return {k: np.where(np.isfinite(v), np.sqrt(var[k]), np.nan) for k, v in base.items()}


def composition_sd(
    evaluate: Callable[..., Mapping[str, np.ndarray]],
    wt_pct: np.ndarray,
    gc: GCRepeatability = DEFAULT_GC,
    *,
    how: str = "linear",
    draws: int = 400,
    seed: int | None = 0,
    base: Mapping[str, np.ndarray] | None = None,
) -> dict[str, np.ndarray]:
    """Standard deviation of each estimate caused by the GC repeatability.

    Parameters
    ----------
    evaluate : callable
        ``evaluate(wt_pct, names=None) -> {name: values}`` for any number of rows;
        ``names`` (optional) restricts the names evaluated. It may carry an attribute
        ``species_step(j, h, rows, names, stepped)`` giving the values on ``rows`` of
        the composition with ``h`` [wt %] more of species ``j``, renormalised (the
        composition itself is ``stepped()``), when it knows a quicker way.
    wt_pct : ndarray, shape (n, n_species)
        FAME mass %, rows summing to 100. [wt %]
    gc : GCRepeatability
        Per-peak standard deviation model.
    how : {'linear', 'montecarlo'}
        ``'linear'``: one-sigma finite difference per present species (renormalised),
        combined in quadrature; ``'montecarlo'``: ``draws`` independent normal
        perturbations (clipped at 0, renormalised), the sample standard deviation.
    draws : int
        Monte Carlo draws.
    seed : int or None
        Seed of the Monte Carlo generator (same seed, same result).
    base : mapping, optional
        ``evaluate(wt_pct)`` when the caller has it already.

    Returns
    -------
    dict of str to ndarray, shape (n,)
        One standard deviation per name, in the unit of the estimate; NaN where
        the estimate itself is NaN.

    Examples
    --------
    >>> w = np.zeros((1, len(species_keys())))
    >>> w[0, species_keys().index("C16:0")] = 50.0; w[0, species_keys().index("C18:1")] = 50.0
    >>> f = lambda x, names=None: {"c16": x[:, species_keys().index("C16:0")]}
    >>> round(float(composition_sd(f, w)["c16"][0]), 3)   # 0.75 wt % on 50, half undone by closure
    0.53
    """
    w = np.asarray(wt_pct, dtype=float)
    base = {k: np.asarray(v, dtype=float)
            for k, v in (evaluate(w) if base is None else base).items()}
    if not gc.active or w.shape[0] == 0:
        return {k: np.where(np.isfinite(v), 0.0, np.nan) for k, v in base.items()}
    sd = gc.sd(w)
    if how == "linear":
        return _linearised(evaluate, w, sd, base)
    if how != "montecarlo":
        raise ValueError(f"how must be 'linear' or 'montecarlo', got {how!r}")
    rng = np.random.default_rng(seed)
    total = {k: np.zeros_like(v) for k, v in base.items()}
    total2 = {k: np.zeros_like(v) for k, v in base.items()}
    count = {k: np.zeros_like(v) for k, v in base.items()}
    for _ in range(int(draws)):
        drawn = _renormalise(np.clip(w + sd * rng.standard_normal(w.shape), 0.0, None))
        for k, v in evaluate(drawn).items():
            v = np.asarray(v, dtype=float) - base[k]  # centred: stable sums
            ok = np.isfinite(v)
            total[k] += np.where(ok, v, 0.0)
            total2[k] += np.where(ok, v * v, 0.0)
            count[k] += ok
    out = {}
    for k, v in base.items():
        c = np.maximum(count[k], 2.0)
        var = (total2[k] - total[k] ** 2 / c) / (c - 1.0)
        out[k] = np.where(np.isfinite(v), np.sqrt(np.maximum(var, 0.0)), np.nan)
    return out


# --- validation tables ---------------------------------------------------------


def parse_composition(text: str) -> np.ndarray:
    """FAME mass % in species order from a validation-table ``composition`` cell.

    ``ester:C18:1`` is the pure ester; ``oil:palm`` the typical profile of a
    built-in feedstock (on FAME basis, as ``predict --oil`` uses it);
    ``mix:C16:0=11;C18:1=89`` an explicit composition, renormalised to 100.

    Parameters
    ----------
    text : str
        The cell.

    Returns
    -------
    ndarray, shape (n_species,)
        FAME mass %. [wt %]

    Examples
    --------
    >>> w = parse_composition("mix:C16:0=25;C18:1=25")
    >>> float(w[species_keys().index("C18:1")])
    50.0
    """
    keys = species_keys()
    kind, _, rest = str(text).partition(":")
    w = np.zeros(len(keys))
    if kind == "ester":
        w[keys.index(rest)] = 100.0
        return w
    if kind == "oil":
        from estimator.profiles.profile import Profile

        return np.asarray(Profile.from_oils([rest]).wt_pct, dtype=float)[0]
    if kind == "mix":
        parts = [part.partition("=") for part in rest.split(";")]
        mass: dict[str, float] = {}
        for key, _, value in parts:
            mass[key.strip()] = mass.get(key.strip(), 0.0) + float(value)
        return composition_row(mass)[0]
    raise ValueError(f"composition {text!r}: expected ester:, oil: or mix:")


@cache
def validation_table() -> pd.DataFrame:
    """All validation rows, with the table name in column ``table`` (do not modify)."""
    parts = [load_table(name).assign(table=name) for name in VALIDATION_TABLES]
    table = pd.concat(parts, ignore_index=True)
    table["used_by"] = table["used_by"].fillna("").astype(str)
    return table


@cache
def _validation_compositions() -> np.ndarray:
    comps = validation_table()["composition"]
    unique = list(dict.fromkeys(comps))
    # every built-in oil in one Profile (one conversion, not one per row)
    oils = [c for c in unique if str(c).startswith("oil:")]
    parsed: dict = {}
    if oils:
        from estimator.profiles.profile import Profile

        try:
            w = np.asarray(Profile.from_oils([c[4:] for c in oils]).wt_pct, dtype=float)
            parsed.update(zip(oils, w))
        except ValueError:  # two spellings of one oil: parse them one by one
            pass
    parsed.update({c: parse_composition(c) for c in unique if c not in parsed})
    out = np.vstack([parsed[c] for c in comps])
    out.setflags(write=False)
    return out


@cache
def residuals(prop: str, name: str) -> pd.DataFrame:
    """The method's estimates on its property's validation rows (do not modify).

    Columns: sample, composition, value (measured or range midpoint), estimate,
    residual (estimate - value), in_domain, used_by_method (the value is an input of
    the method, so it is no evidence for it), usable, mark, source.
    """
    from estimator.properties.descriptors import descriptors

    m = get_method(prop, name)
    table = validation_table()
    rows = np.flatnonzero(table["property"].to_numpy() == prop)
    sub = table.iloc[rows].reset_index(drop=True)
    w = np.asarray(_validation_compositions()[rows], dtype=float)
    if len(rows):
        desc = descriptors(w)
        with np.errstate(all="ignore"):
            est = m.evaluate(w, desc)
        inside = m.in_domain(w, desc)
    else:
        est, inside = np.zeros(0), np.zeros(0, dtype=bool)
    used = np.array([name in u.split("|") for u in sub["used_by"]], dtype=bool)
    value = sub["value"].to_numpy(dtype=float)
    out = pd.DataFrame({
        "sample": sub["sample"], "composition": sub["composition"], "value": value,
        "estimate": est, "residual": est - value, "in_domain": inside,
        "used_by_method": used, "mark": sub["mark"], "source": sub["source"],
    })
    out["usable"] = np.isfinite(out["residual"]) & out["in_domain"] & ~out["used_by_method"]
    return out


@dataclass(frozen=True)
class Band:
    """A method's band: ``relative`` x |value| or ``absolute``, or None (no evidence).

    ``needs_spread``: no evidence band; the standard deviation of the property's
    other methods is needed per sample.
    """

    prop: str
    method: str
    absolute: float | None
    relative: float | None
    kind: str  # 'published', 'residuals', 'published+residuals', 'weak', 'spread'
    n_residuals: int
    text: str
    #: also take the per-sample fallback (methods' spread or the stated error fallback)
    with_fallback: bool = False

    @property
    def needs_spread(self) -> bool:
        """True when the band must come from the spread of the other methods."""
        return self.absolute is None and self.relative is None

    def values(self, estimates: np.ndarray) -> np.ndarray:
        """The band per estimate, in the estimate's unit (NaN where it has none)."""
        v = np.abs(np.asarray(estimates, dtype=float))
        out = np.zeros_like(v)
        if self.relative is not None:
            out = np.fmax(out, self.relative * v)
        if self.absolute is not None:
            out = np.fmax(out, np.full_like(v, self.absolute))
        if self.needs_spread:
            out[:] = np.nan
        return out


def _published_sd(m: Method) -> tuple[float | None, float | None]:
    """(absolute, relative) standard deviation from the published statistic, if any."""
    if m.error is None:
        return None, None
    if m.error_kind == "aad_pct":
        return None, m.error / 100.0 * AAD_TO_SD
    if m.error_kind == "max_pct":
        return None, m.error / 100.0 * MAX_TO_SD
    if m.error_kind == "rmse":
        return float(m.error), None
    return None, None


def _fmt(x: float) -> str:
    return f"{x:.3g}"


@cache
def method_band(prop: str, name: str) -> Band:
    """The evidence band of one method (rules in the module docstring).

    The shipped band (:data:`BAND_TABLE`) of a registered method while the tables it
    comes from are unchanged; otherwise :func:`computed_band`. Both are equal (a
    regression test recomputes the shipped table).

    Examples
    --------
    >>> b = method_band("density_15C_kg_m3", "ramirezverduzco2022")
    >>> b.kind in ("published", "published+residuals")
    True
    """
    m = get_method(prop, name)
    if methods_for(prop).get(name) is m:  # the registered method, not a stand-in
        shipped = _shipped_bands().get((prop, name))
        if shipped is not None:
            return shipped
    return computed_band(prop, name)


def computed_band(prop: str, name: str) -> Band:
    """The evidence band of one method computed from its validation residuals.

    Not cached itself (the residuals are); :func:`method_band` is the cached entry.

    Examples
    --------
    >>> computed_band("density_15C_kg_m3", "ramirezverduzco2022") == method_band(
    ...     "density_15C_kg_m3", "ramirezverduzco2022")
    True
    """
    m = get_method(prop, name)
    res = residuals(prop, name)
    usable = res.loc[res["usable"], "residual"].to_numpy(dtype=float)
    n = len(usable)
    rms = float(np.sqrt(np.mean(usable**2))) if n else None
    absolute, relative = _published_sd(m)
    verified = VERIFIED_STATISTICS.get((prop, name))
    if verified is not None and (absolute is not None or relative is not None):
        text = f"published {verified}"
        if n >= MIN_RESIDUALS:
            ref = float(np.median(np.abs(res.loc[res["usable"], "value"])))
            published_at_ref = absolute if absolute is not None else relative * ref
            if rms > published_at_ref:
                return Band(prop, name, rms, None, "published+residuals", n,
                            f"RMS {_fmt(rms)} of {n} validation residuals, wider than the "
                            f"{text}")
        return Band(prop, name, absolute, relative, "published", n, f"{text}, as 1 SD")
    if n >= MIN_RESIDUALS:
        return Band(prop, name, rms, None, "residuals", n,
                    f"RMS {_fmt(rms)} of {n} validation residuals")
    # weak evidence: the larger of a recalled statistic, the few in-domain residuals and
    # the out-of-domain residuals divided by the widening factor; never below the fallback
    outside = res.loc[~res["in_domain"] & ~res["used_by_method"]
                      & np.isfinite(res["residual"]), "residual"].to_numpy(dtype=float)
    parts, candidates = [], []
    if absolute is not None or relative is not None:
        kind = {"aad_pct": "AAD %", "max_pct": "maximum %", "rmse": "RMSE"}.get(
            m.error_kind, m.error_kind)
        parts.append(f"a recalled published {kind} {m.error:g}")
        if absolute is not None:
            candidates.append(absolute)
    if rms is not None:
        parts.append(f"RMS {_fmt(rms)} of {n} validation residual(s)")
        candidates.append(rms)
    if len(outside):
        scaled = float(np.sqrt(np.mean(outside**2))) / OUT_OF_DOMAIN_FACTOR
        parts.append(f"RMS of {len(outside)} residual(s) beyond the domain / "
                     f"{OUT_OF_DOMAIN_FACTOR:g} = {_fmt(scaled)}")
        candidates.append(scaled)
    borrowed = False
    if prop in BORROWED_BANDS:
        other, factor = BORROWED_BANDS[prop]
        b = computed_band(other, DEFAULTS[other])
        if b.absolute is not None:
            parts.append(f"the {_WORDS.get(other, other)} band x {factor:.2f}")
            candidates.append(b.absolute * factor)
            borrowed = True
    fallback = "" if borrowed else ", ".join(
        [*(["the std of the property's methods"] if len(methods_for(prop)) >= 2 else []),
         *(["the method's own stated fallback error"] if m.error_fallback is not None else [])])
    if fallback:
        parts.append(fallback)
    if not candidates and relative is None:
        return Band(prop, name, None, None, "spread", 0,
                    "no evidence: " + (fallback or "none published and no second method"))
    return Band(prop, name, max(candidates) if candidates else None, relative, "weak", n,
                "too little evidence: the largest of " + ", ".join(parts),
                with_fallback=bool(fallback))


# --- the shipped band table ------------------------------------------------------


def band_inputs_digest() -> str:
    """Digest of the tables the bands are computed from (:data:`BAND_INPUT_TABLES`).

    The first 16 hex digits of the SHA-256 of their bytes; the band table records it,
    and a different digest means the shipped bands may be out of date.
    """
    digest = hashlib.sha256()
    for name in BAND_INPUT_TABLES:
        data = files("estimator.tables").joinpath(f"{name}.csv").read_bytes()
        digest.update(f"{name}.csv {len(data)}\n".encode())
        digest.update(data)
    return digest.hexdigest()[:16]


def _number_text(x: float | None) -> str:
    return "" if x is None else repr(float(x))  # repr: the float back exactly


def band_table_rows(bands: Sequence[Band], digest: str) -> list[dict[str, str]]:
    """The rows of the band table (:data:`BAND_COLUMNS`, text cells) for ``bands``."""
    return [{
        "property": b.prop, "method": b.method, "kind": b.kind,
        "absolute": _number_text(b.absolute), "relative": _number_text(b.relative),
        "n_residuals": str(b.n_residuals), "with_fallback": str(b.with_fallback).lower(),
        "text": b.text, "inputs_digest": digest,
    } for b in bands]


def _band_from_row(row: Mapping[str, str]) -> Band:
    def number(cell: str) -> float | None:
        return float(cell) if cell else None

    return Band(row["property"], row["method"], number(row["absolute"]),
                number(row["relative"]), row["kind"], int(row["n_residuals"]), row["text"],
                with_fallback=row["with_fallback"] == "true")


def read_band_table() -> tuple[dict[tuple[str, str], Band], set[str]]:
    """The shipped bands by (property, method), and the input digests the rows record.

    An absent file reads as no bands.
    """
    try:
        with files("estimator.tables").joinpath(f"{BAND_TABLE}.csv").open(
                "r", encoding="utf-8", newline="") as fh:
            rows = list(csv.DictReader(fh))
    except FileNotFoundError:
        return {}, set()
    bands = {(r["property"], r["method"]): _band_from_row(r) for r in rows}
    return bands, {r["inputs_digest"] for r in rows}


@cache
def _shipped_bands() -> Mapping[tuple[str, str], Band]:
    """The shipped bands, or none when the tables they come from have changed."""
    bands, digests = read_band_table()
    if digests != {band_inputs_digest()}:
        return {}
    return bands


def band_rows() -> pd.DataFrame:
    """Every registered method's band as one row (for ``methods`` and the scripts)."""
    rows = []
    for prop in DEFAULTS:
        for name in methods_for(prop):
            b = method_band(prop, name)
            rows.append({"property": prop, "method": name, "band_kind": b.kind,
                         "band_abs": b.absolute, "band_rel": b.relative,
                         "n_validation": b.n_residuals, "band_evidence": b.text})
    return pd.DataFrame(rows)


def spread_of_methods(prop: str, w: np.ndarray, desc: Mapping[str, np.ndarray],
                      temperature_C: float | None = None,
                      names: Sequence[str] | None = None,
                      known: Mapping[str, np.ndarray] | None = None) -> np.ndarray:
    """Population std over the property's methods (finite values; NaN below two).

    ``known`` holds values the caller has already computed, by method name.
    """
    known = known or {}
    ms = [m for m in methods_for(prop).values() if names is None or m.name in names]
    with np.errstate(all="ignore"):
        columns = [np.asarray(known[m.name], dtype=float) if m.name in known
                   else m.evaluate(w, desc, temperature_C) for m in ms]
        # method by method (few methods, many samples): sums in the order of the methods
        oks = [np.isfinite(c) for c in columns]
        count = np.sum(oks, axis=0)
        safe = np.maximum(count, 1)
        total = np.zeros(len(count))
        for c, ok in zip(columns, oks, strict=True):
            total += np.where(ok, c, 0.0)
        mean = total / safe
        square = np.zeros(len(count))
        for c, ok in zip(columns, oks, strict=True):
            square += np.where(ok, (c - mean) ** 2, 0.0)
        var = square / safe
    return np.where(count >= 2, np.sqrt(var), np.nan)
