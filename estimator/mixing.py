"""The least-cost mix of oil lots whose fuel still meets a specification.

The FAME made from a mix of lots has the mass-weighted profile of the lots' FAMEs,
so the decision variables are the *fuel-mass shares* ``s_j`` (the fraction of the
fuel's mass made from lot ``j``; they sum to 1) and the mixed composition
``s @ W`` is linear in them. The cost of a tonne of fuel is ``sum_j s_j c_j`` with
``c_j`` the lot's cost per tonne of fuel from :func:`estimator.sourcing.value_lots`
(oil price over the theoretical fuel yield). With a demand ``D`` in tonnes of fuel,
a lot offering ``A_j`` tonnes of oil bounds its share: ``s_j D <= A_j y_j`` with
``y_j`` its fuel yield per tonne of oil.

Constraints
-----------
Each limit is on the property of the *mixed* FAME, estimated by the default method
(or a chosen one). A limit goes into the linear programme
(:func:`scipy.optimize.linprog`, HiGHS) when the method is linear in composition
after a monotone transform, which is checked numerically on the lots themselves:

- identity: iodine value, linolenic ester, esters with >= 4 C=C, LCSF-based CFPP
  (Ramos 2009), mass-weighted or composition-linear cetane numbers
  (Ramirez-Verduzco 2012, Bamgboye-Hansen 2008);
- reciprocal: density by ideal mixing (specific volume is linear in mass fraction);
- logarithm: viscosity by logarithmic mixing on mass fractions;
- the Park 2008 induction period ``OS = A/X + B`` (equation MEMORY, correlations.md 5)
  is monotone in ``X = C18:2 + C18:3``, so ``OS >= L`` is the linear bound
  ``X <= A/(L - B)``;
- the ideal-solubility cloud point (Imahara 2006, the default) is the maximum of the
  saturated esters' liquidus temperatures, so ``CP <= L`` holds exactly when every
  such ester's mole fraction stays below its solubility at ``L``; mole fractions are
  ratios of linear forms in the shares, so each ester gives one linear row (no
  approximation of the model; its form and enthalpies of fusion are MEMORY /
  DERIVED, see :mod:`estimator.properties.cold_flow`).

Anything else (mole-fraction rules, the Krisnangkura SN/IV cetane form, CFPP from
the cloud point by the [S21] equation, ...) is nonlinear: it is checked on the linear
programme's answer and, if violated, the answer is refined with
:func:`scipy.optimize.minimize` (SLSQP) from that point, with the linear rows kept
as linear constraints; if that fails, a least-violation search under the linear rows
finds a mix meeting every limit first and SLSQP refines from there. Every returned
mix is re-evaluated with the full property model
(:func:`estimator.properties.predict.estimate`) and reported as meeting the limits
only if it does.

Infeasible cases are results, not exceptions: :class:`MixResult` then has
``feasible=False``, a ``diagnosis`` table (each limit, how far the least-violating
mix misses it, whether any mix can meet it alone, and which limits it conflicts
with) and a one-line ``message``.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from functools import cache
from pathlib import Path

import numpy as np
import pandas as pd

from estimator.errors import InputFileError, ProfileError, UnknownNameError, UsageError
from estimator.properties.descriptors import descriptors
from estimator.tables import species_keys

__all__ = [
    "Constraint",
    "MixResult",
    "least_cost_mix",
    "mix_constraints",
    "mixed_composition",
]

#: Relative tolerance on a limit when the full model re-checks a mix [1].
CHECK_RTOL = 1e-6
_COLD_OPTIONS = {"cfpp_C": "--max-cfpp", "cloud_point_C": "--max-cloud-point"}


@dataclass(frozen=True)
class Constraint:
    """One limit on the mixed FAME: ``value <= limit`` (``'max'``) or ``>=`` (``'min'``)."""

    property: str
    kind: str
    limit: float
    label: str
    source: str = ""
    #: The specification's own limit when ``limit`` was moved inside it by a margin.
    spec_limit: float | None = None

    @property
    def sign(self) -> float:
        """+1 for a maximum, -1 for a minimum: ``sign * (value - limit) <= 0`` meets it."""
        return 1.0 if self.kind == "max" else -1.0


def _label(prop: str, kind: str, limit: float, unit: str) -> str:
    from estimator.specs import PROPERTY_LABELS

    unit = "" if unit in ("1", "") else f" {unit}"
    return f"{PROPERTY_LABELS.get(prop, prop)} {'<=' if kind == 'max' else '>='} {limit:g}{unit}"


def mix_constraints(
    spec: str = "en14214",
    *,
    climate_class: str | None = None,
    max_cfpp_C: float | None = None,
    max_cloud_point_C: float | None = None,
) -> list[Constraint]:
    """The limits of a specification (``specs.csv``) plus optional cold-flow limits.

    Raises
    ------
    UsageError
        ``max_cfpp_C`` (or ``max_cloud_point_C``) together with a climate class that
        sets a different limit on the same property.

    Examples
    --------
    >>> [c.label for c in mix_constraints("en14214", max_cfpp_C=-10)][-1]
    'CFPP <= -10 °C'
    """
    from estimator.specs import MEASURED_PROPERTIES, limits

    table = limits(spec, climate_class)
    # a measured limit (EN 14103 ester content) is the plant's result, not the feedstock's
    table = table[~table["property"].isin(MEASURED_PROPERTIES)]
    user = {"cfpp_C": max_cfpp_C, "cloud_point_C": max_cloud_point_C}
    out = []
    for row in table.itertuples(index=False):
        given = user.get(row.property)
        if given is not None and row.bound == "max":
            if float(given) != float(row.limit):
                raise UsageError(
                    f"{_COLD_OPTIONS[row.property]} {given:g} contradicts --climate-class "
                    f"{climate_class} ({row.spec} {row.property} max {row.limit:g} °C); give one"
                )
            continue
        out.append(Constraint(row.property, row.bound, float(row.limit),
                              _label(row.property, row.bound, float(row.limit), row.unit),
                              f"{row.edition}; {row.mark}; {row.source}"))
    for prop, value in user.items():
        if value is None:
            continue
        if not np.isfinite(value):
            raise UsageError(f"{_COLD_OPTIONS[prop]}: not a finite temperature: {value}")
        out.append(Constraint(prop, "max", float(value), _label(prop, "max", float(value), "°C"),
                              "user"))
    return out


def mixed_composition(wt_pct_lots: np.ndarray, shares: np.ndarray) -> np.ndarray:
    """FAME mass % of mixes: fuel-mass shares (m, n) or (n,) times lot profiles (n, 30).

    Rows are renormalised to 100, so shares need not sum to one exactly.

    Examples
    --------
    >>> import numpy as np
    >>> w = np.zeros((2, 30)); w[0, 7] = 100; w[1, 12] = 100
    >>> mixed_composition(w, np.array([0.25, 0.75]))[[7, 12]]
    array([25., 75.])
    """
    s = np.asarray(shares, dtype=float)
    mix = s @ np.asarray(wt_pct_lots, dtype=float)
    return 100.0 * mix / mix.sum(axis=-1, keepdims=True)


# ---------------------------------------------------------------- property model
class _Model:
    """Evaluates constraint properties on compositions with the chosen methods."""

    def __init__(self, methods: Mapping[str, str], fitted: Mapping | None = None):
        from estimator.properties.methods import PROPERTIES, default_method, get_method
        from estimator.specs import EXACT_PROPERTIES

        self.methods = dict(methods)
        self.fitted = dict(fitted or {})
        self._exact = set(EXACT_PROPERTIES)
        self._props = set(PROPERTIES)
        self._get = lambda p: get_method(p, self.methods[p]) if p in self.methods else \
            default_method(p)

    def method(self, prop: str):
        """The registry Method used for ``prop`` (None for exact composition values and
        for properties a lab model gives)."""
        if prop in self._exact or prop in self.fitted:
            return None
        if prop not in self._props:
            raise UnknownNameError(f"no estimate for {prop!r}; cannot constrain the mix on it")
        return self._get(prop)

    def errors(self, props: Sequence[str], w: np.ndarray) -> dict[str, np.ndarray]:
        """The stated error of each property on every row of ``w`` (for the composition
        limits: the GC repeatability of the composition)."""
        from estimator.properties.predict import estimate

        w = np.atleast_2d(w)
        out = {p: np.asarray(self.fitted[p].predict(w).error, dtype=float)
               for p in props if p in self.fitted}
        exact = [p for p in props if p in self._exact and p not in out]
        if exact:
            from estimator.specs import composition_errors

            errs = composition_errors(w)
            out.update({p: errs[p] for p in exact})
        rest = [p for p in props if p not in out]
        if rest:
            long = estimate(w, [str(i) for i in range(len(w))],
                            methods=self.methods or "default")
            for p in rest:
                m = self.method(p)
                rows = long[(long["property"].astype(str) == p)
                            & (long["method"].astype(str) == (m.name if m else ""))]
                out[p] = (rows["error"].to_numpy(dtype=float) if len(rows) == len(w)
                          else np.zeros(len(w)))
        return out

    def values(self, props: Sequence[str], w: np.ndarray) -> dict[str, np.ndarray]:
        """Each property on every row of ``w``."""
        w = np.atleast_2d(w)
        desc = descriptors(w)
        out = {}
        for prop in props:
            m = self.method(prop)
            if prop in self.fitted:
                out[prop] = np.asarray(self.fitted[prop].predict(w).value, dtype=float)
            elif m is None:
                out[prop] = np.asarray(desc[prop], dtype=float)
            elif m.name == "imahara2006":  # same function, ester data looked up once
                out[prop] = _imahara_fast(w)
            else:
                out[prop] = np.asarray(m.evaluate(w, desc), dtype=float)
        return out


@cache
def _ester_data():
    from estimator.properties.cold_flow import saturated_ester_data
    from estimator.tables import species_column

    idx, tm, dh = saturated_ester_data()
    return idx, tm, dh, species_column("fame_molar_mass_g_mol")


def _imahara_fast(w: np.ndarray) -> np.ndarray:
    """:func:`estimator.properties.cold_flow.imahara2006` on FAME mass %, tables cached."""
    from estimator.properties.cold_flow import imahara2006

    idx, tm, dh, molar = _ester_data()
    moles = w / molar
    x = moles[:, idx] / moles.sum(axis=1, keepdims=True)
    return imahara2006(x, tm, dh)


def _park_form(model: _Model, c: Constraint):
    """Park 2008 OS = A/X + B as a linear bound on X = C18:2 + C18:3 (None if not Park).

    The bis-allylic form on Park's scale, OS = A/Y with Y = sum r_i A_i, is the same
    shape with B = 0 and the oxidizability weights r_i in place of the 0/1 row.
    """
    m = model.method(c.property)
    if m is not None and m.name == "park2008_bape":
        from estimator.properties.stability import PARK2008_BAPE_A, oxidizability_weights

        row = oxidizability_weights()
        label = "Y = bis-allylic oxidizability (on Park 2008's scale)"
        if c.limit <= 0:
            return (row, np.inf, label) if c.kind == "min" else (row, -np.inf, label)
        bound = PARK2008_BAPE_A / c.limit
        return (row, bound, label) if c.kind == "min" else (-row, -bound, label)
    if m is None or m.name != "park2008":
        return None
    from estimator.properties.stability import PARK2008_A, PARK2008_B

    keys = species_keys()
    row = np.zeros(len(keys))
    row[[keys.index("C18:2"), keys.index("C18:3")]] = 1.0
    if c.limit <= PARK2008_B:
        # OS > B for every finite X: a minimum at or below B always holds, a maximum never.
        return (row, np.inf, "X = C18:2 + C18:3 (Park 2008)") if c.kind == "min" else \
            (row, -np.inf, "X = C18:2 + C18:3 (Park 2008)")
    bound = PARK2008_A / (c.limit - PARK2008_B)
    # OS >= L  <=>  X <= A/(L-B);  OS <= L  <=>  X >= A/(L-B)
    return (row, bound, "X = C18:2 + C18:3 (Park 2008)") if c.kind == "min" else \
        (-row, -bound, "X = C18:2 + C18:3 (Park 2008)")


_TRANSFORMS = {
    "identity": (lambda v: v, +1.0),
    "reciprocal": (lambda v: 1.0 / v, -1.0),
    "logarithm": (np.log, +1.0),
}


def _cloud_point_rows(model: _Model, c: Constraint, w_lots: np.ndarray):
    r"""The ideal-solubility cloud point limit as exact linear rows (None if not that case).

    ``CP = max_i T_i <= L`` holds iff every saturated ester's mole fraction stays below
    its solubility at L, :math:`x_i \le c_i = \exp[\Delta H_i/R\,(1/T_{m,i} - 1/L)]`,
    and :math:`x_i = n_i/n` with moles :math:`n_i = \sum_j s_j W_{ji}/M_i` linear in the
    fuel-mass shares, so each ester gives the linear row :math:`n_i - c_i n \le 0`.
    """
    m = model.method(c.property)
    if m is None or m.name != "imahara2006" or c.kind != "max":
        return None
    from estimator.properties.cold_flow import GAS_CONSTANT_J_MOL_K, ZERO_CELSIUS_K

    idx, tm, dh, molar = _ester_data()
    limit_k = c.limit + ZERO_CELSIUS_K
    if limit_k <= 0:
        return None
    c_i = np.exp(dh * 1000.0 / GAS_CONSTANT_J_MOL_K * (1.0 / (tm + ZERO_CELSIUS_K)
                                                       - 1.0 / limit_k))
    moles = w_lots / molar  # (n_lots, n_species) per 100 g of each lot's FAME
    total = moles.sum(axis=1)
    active = c_i < 1.0  # an ester soluble at any mole fraction cannot cloud above L
    rows = moles[:, idx[active]].T - c_i[active, None] * total[None, :]
    return rows, np.zeros(len(rows)), "per-ester mole-fraction bounds (ideal solubility)"


def _linear_row(model: _Model, c: Constraint, w_lots: np.ndarray, rng: np.random.Generator):
    """(A, b, how) with the constraint as ``A @ s <= b`` on fuel shares, or None if nonlinear."""
    cloud = _cloud_point_rows(model, c, w_lots)
    if cloud is not None:
        return cloud
    park = _park_form(model, c)
    if park is not None:
        row, bound, how = park
        return (w_lots @ row)[None, :], np.array([bound]), how
    n = len(w_lots)
    v = model.values([c.property], w_lots)[c.property]
    if not np.isfinite(v).all():
        return None
    shares = rng.dirichlet(np.ones(n), size=6) if n > 1 else np.ones((1, 1))
    mixes = model.values([c.property], mixed_composition(w_lots, shares))[c.property]
    for name, (f, direction) in _TRANSFORMS.items():
        if name != "identity" and ((v <= 0).any() or (mixes <= 0).any() or c.limit <= 0):
            continue
        with np.errstate(all="ignore"):
            g_lots, g_mix = f(v), f(mixes)
        scale = 1.0 + np.abs(g_lots).max()
        if np.abs(shares @ g_lots - g_mix).max() <= 1e-9 * scale:
            sign = c.sign * direction
            return (sign * g_lots)[None, :], np.array([sign * float(f(c.limit))]), name
    return None


# ---------------------------------------------------------------- result
@dataclass
class MixResult:
    """Outcome of :func:`least_cost_mix`: the mix, its properties, verdicts or diagnosis."""

    feasible: bool
    message: str
    lots: pd.DataFrame
    constraints: pd.DataFrame
    composition: pd.Series
    estimates: pd.DataFrame
    cost_per_t_fuel: float
    solver: str
    verdicts: pd.DataFrame | None = None
    diagnosis: pd.DataFrame | None = None
    notes: list[str] = field(default_factory=list)
    margin_bands: float = 0.0
    #: The specification the mix is held inside (None: only the user's own limits).
    spec: str | None = None
    #: The processing costs used (None: the defaults of :mod:`estimator.sourcing`).
    costs: object = None
    #: Properties a lab model gave (``property -> how``), for the report.
    model_properties: dict[str, str] = field(default_factory=dict)


def _lot_inputs(profile, available_column, demand_t, pretreat, costs=None):
    from estimator.sourcing import value_lots

    valued = value_lots(profile, pretreat=pretreat, costs=costs)
    cost = valued["cost_per_t_fuel"].to_numpy(dtype=float)
    yields = valued["fuel_yield_t_per_t_oil"].to_numpy(dtype=float)
    rows = profile.rows.to_numpy()
    where = f"{profile.source}: " if profile.source else ""
    if np.isnan(cost).any():
        i = int(np.argmax(np.isnan(cost)))
        raise InputFileError(
            f"{where}row {rows[i]} (lot {profile.samples[i]!r}): no 'price_per_t'; the "
            "least-cost mix needs a price for every lot (or leave the lot out)"
        )
    if (yields <= 0).any():
        i = int(np.argmax(yields <= 0))
        raise ProfileError(f"{where}row {rows[i]} (lot {profile.samples[i]!r}): no fuel yield")
    notes: list[str] = []
    avail = np.full(len(cost), np.inf)
    column = available_column
    if column is None and "available_t" in profile.metadata.columns:
        column = "available_t"
    if column is not None:
        if column not in profile.metadata.columns:
            raise InputFileError(f"{where}no column {column!r} (named by --available)")
        raw = profile.metadata[column]
        vals = pd.to_numeric(raw.replace("", np.nan), errors="coerce").to_numpy(dtype=float)
        bad = raw.notna().to_numpy() & (raw.astype(str).str.strip() != "").to_numpy() & np.isnan(
            vals)
        if bad.any() or (vals < 0).any():
            i = int(np.argmax(bad | (np.nan_to_num(vals) < 0)))
            raise ProfileError(f"{where}row {rows[i]}, column {column!r} (lot "
                               f"{profile.samples[i]!r}): {raw.iloc[i]!r} is not a tonnage >= 0")
        avail = np.where(np.isnan(vals), np.inf, vals)
        if demand_t is None:
            notes.append(f"availability ({column}) applies only with a demand (--demand-t)")
        elif np.isinf(avail).any():
            notes.append(f"lots with a blank {column} are taken as unlimited")
    elif demand_t is not None:
        notes.append("no availability column (available_t, or name one with --available): "
                     "every lot is taken as unlimited")
    return valued, cost, yields, avail, notes


def _upper_bounds(avail, yields, demand_t):
    if demand_t is None:
        return np.ones(len(avail))
    return np.minimum(1.0, avail * yields / float(demand_t))


def least_cost_mix(
    profile,
    constraints: Sequence[Constraint],
    *,
    demand_t: float | None = None,
    available_column: str | None = None,
    pretreat: str = "none",
    methods: Mapping[str, str] | None = None,
    spec: str | None = None,
    climate_class: str | None = None,
    seed: int = 0,
    margin_bands: float = 0.0,
    models: Sequence[str] = (),
    costs=None,
) -> MixResult:
    """Find the cheapest fuel-mass shares of the lots whose mixed FAME meets every limit.

    Parameters
    ----------
    profile : Profile
        The lots, with metadata ``price_per_t`` (and optionally ``ffa_wt_pct``,
        ``water_wt_pct`` and an availability column in tonnes of oil).
    constraints : sequence of Constraint
        From :func:`mix_constraints`.
    demand_t : float, optional
        Tonnes of fuel wanted; turns availability into bounds and gives tonnages. [t]
    available_column : str, optional
        Metadata column with the tonnes of oil each lot offers (default
        ``available_t`` when present). [t]
    pretreat : {'none', 'acid'}
        FFA handling for the fuel yield (:func:`estimator.sourcing.value_lots`).
    methods : mapping, optional
        ``property -> method name`` overriding the default estimation methods.
    spec, climate_class : str, optional
        Specification whose verdicts (:func:`estimator.specs.check`) are attached.
    seed : int
        Seed of the random mixes used to test linearity (results do not depend on it).
    margin_bands : float
        How many stated errors ("bands") inside each limit the mix must stay: each
        limit is moved inward by ``margin_bands`` times the stated error of that
        property, taken first at the equal-share mix and then at the mix found, until
        it stops growing (exact composition limits have no band). 0 lets the mix sit
        on its limits (its verdict is then 'too close to call'). [1]
    models : sequence of path
        Lab model files (``fame-estimator fit``): their properties replace the
        published estimates in the limits and the verdicts.
    costs : ProcessCosts, optional
        Processing prices for the cost per tonne of fuel
        (:func:`estimator.sourcing.value_lots`).
    """
    if demand_t is not None and not (np.isfinite(demand_t) and demand_t > 0):
        raise UsageError(f"--demand-t must be a positive number of tonnes, got {demand_t:g}")
    if not constraints:
        raise UsageError("no limits to meet: give a specification or a cold-flow limit")
    if not (np.isfinite(margin_bands) and 0 <= margin_bands <= 10):
        raise UsageError(f"--margin must be between 0 and 10 bands, got {margin_bands:g}")
    model = _Model(methods or {}, _fitted_models(models))
    valued, cost, yields, avail, notes = _lot_inputs(profile, available_column, demand_t,
                                                     pretreat, costs)
    w_lots = profile.wt_pct
    if margin_bands <= 0:
        constraints = [c if c.spec_limit is not None else
                       Constraint(c.property, c.kind, c.limit, c.label, c.source, c.limit)
                       for c in constraints]
        result = _solve(profile, model, constraints, valued, cost, yields, avail, notes, w_lots,
                        demand_t, spec, climate_class, seed, models, margin_bands)
        result.costs = costs
        return result
    # Move each limit inside by the margin times the stated error; where that error
    # depends on the composition, take it at the mix found and solve again.
    mean_mix = mixed_composition(w_lots, np.ones(len(w_lots)) / len(w_lots))[None, :]
    errors = {p: float(np.nan_to_num(e[0])) for p, e in model.errors(
        list(dict.fromkeys(c.property for c in constraints)), mean_mix).items()}
    result = None
    for _ in range(4):
        tight = _with_margin(constraints, errors, margin_bands)
        result = _solve(profile, model, tight, valued, cost, yields, avail, notes, w_lots,
                        demand_t, spec, climate_class, seed, models, margin_bands)
        at_mix = dict(zip(result.constraints["property"], result.constraints["error"]))
        grown = {p: e for p, e in at_mix.items() if e > errors.get(p, 0.0) * (1 + 1e-6) + 1e-12}
        if not grown or not result.feasible:
            break
        errors.update(grown)
    result.costs = costs
    return result


def _solve(profile, model, constraints, valued, cost, yields, avail, notes, w_lots, demand_t,
           spec, climate_class, seed, models, margin_bands) -> MixResult:
    """One least-cost programme over fixed limits (see :func:`least_cost_mix`)."""
    ub = _upper_bounds(avail, yields, demand_t)
    rng = np.random.default_rng(seed)
    linear, nonlinear, hows = [], [], {}
    for c in constraints:
        row = _linear_row(model, c, w_lots, rng)
        if row is None:
            nonlinear.append(c)
        else:
            linear.extend((c, a, bound) for a, bound in zip(row[0], row[1]))
            hows[c.label] = row[2]
    from estimator.mix_problem import MixProblem

    problem = MixProblem(model, w_lots, cost, ub, linear, nonlinear)

    if ub.sum() < 1.0 - 1e-12:
        supply = float(np.sum(np.where(np.isinf(avail), 0, avail) * yields))
        shares = ub.copy()
        message = (f"no mix can supply {demand_t:g} t of fuel: the lots make at most "
                   f"{supply:.1f} t")
        return _finish(profile, problem, valued, shares, False, message, "none", hows, demand_t,
                       avail, notes, spec, climate_class, diagnosis=None, models=models)

    shares, _status = problem.solve_lp()
    solver = "linprog (HiGHS)"
    best = None
    if shares is not None and nonlinear and not problem.meets_nonlinear(shares):
        # Refine with SLSQP from the LP answer; if that fails, first find a mix that meets
        # every limit (least violation under the linear rows), then refine from there.
        solver = "linprog (HiGHS) + SLSQP"
        lp_answer = shares
        shares = problem.refine(lp_answer)
        if shares is None:
            best = problem.least_violation(lp_answer)
            if problem.meets_all(best):
                again = problem.refine(best)
                shares = again if again is not None and problem.cost @ again <= \
                    problem.cost @ best else best
    feasible = shares is not None and problem.meets_all(shares)
    diagnosis = None
    if not feasible:
        best = best if best is not None else problem.least_violation(shares)
        diagnosis = problem.diagnose(best)
        shares = best
        message = _infeasible_message(diagnosis, spec)
    else:
        message = f"least-cost mix found by {solver}"
    result = _finish(profile, problem, valued, shares, feasible, message, solver, hows, demand_t,
                     avail, notes, spec, climate_class, diagnosis=diagnosis, models=models)
    result.margin_bands = float(margin_bands)
    result.spec = spec
    if not feasible and margin_bands > 0 and diagnosis is not None:
        result.message = result.message.replace(
            "meets", f"stays {margin_bands:g} stated error(s) inside every limit of", 1) + (
            "; a smaller --margin may find one")
    if feasible and not result.constraints["meets"].all():  # pragma: no cover - safety net
        result.feasible = False
        result.message = "the mix found does not meet every limit when re-checked"
    return result


def _fitted_models(paths: Sequence[str]) -> dict:
    """``property -> fitted model`` from lab model files (one file per property)."""
    if not paths:
        return {}
    from estimator.errors import ModelFileError
    from estimator.refit.model_file import read_model_file

    out: dict = {}
    for path in paths:
        for model in read_model_file(path).models:
            if model.property in out:
                raise ModelFileError(f"{Path(path).name}: {model.property} also has a model in "
                                     "another file; give one --model file per property")
            out[model.property] = model
    return out


def _with_margin(constraints: Sequence[Constraint], errors: Mapping[str, float],
                 bands: float) -> list[Constraint]:
    """Each limit moved inward by ``bands`` times its property's stated error."""
    out = []
    for c in constraints:
        limit = c.limit - c.sign * bands * float(errors.get(c.property, 0.0))
        out.append(Constraint(c.property, c.kind, limit, c.label, c.source, c.limit))
    return out


def _infeasible_message(diagnosis: pd.DataFrame, spec: str | None) -> str:
    from estimator.comparison import SPEC_LABELS

    missed = diagnosis[diagnosis["miss"] > 0]
    what = f"meets {SPEC_LABELS.get(spec, spec)}" if spec else "meets every limit"
    parts = []
    for row in missed.itertuples(index=False):
        extra = (" (no lot or mix reaches it)" if not row.reachable_alone else
                 f" (conflicts with {row.conflicts_with})" if row.conflicts_with else "")
        parts.append(f"{row.constraint} missed by {row.miss:.3g} {row.unit}{extra}")
    if not parts:
        parts = ["the solver could not reach every nonlinear limit"]
    return f"no mix of the lots {what}: least-violating mix: " + "; ".join(parts)


def _finish(profile, problem, valued, shares, feasible, message, solver, hows,
            demand_t, avail, notes, spec, climate_class, diagnosis, models=()) -> MixResult:
    from types import SimpleNamespace

    from estimator.comparison import decision_rows, model_properties
    from estimator.properties.predict import estimate
    from estimator.specs import check, composition_estimates

    shares = np.clip(np.asarray(shares, dtype=float), 0.0, None)
    shares = shares / shares.sum() if shares.sum() > 0 else shares
    shares = np.where(shares < 1e-9, 0.0, shares)
    shares = shares / shares.sum() if shares.sum() > 0 else shares
    yields = valued["fuel_yield_t_per_t_oil"].to_numpy(dtype=float)
    oil_per_fuel = shares / yields
    lots = pd.DataFrame({
        "lot": profile.samples,
        "share_mass_pct": 100.0 * shares,
        "oil_share_mass_pct": 100.0 * oil_per_fuel / oil_per_fuel.sum(),
        "fuel_yield_t_per_t_oil": yields,
        "price_per_t": valued["price_per_t"].to_numpy(dtype=float),
        "cost_per_t_fuel": problem.cost,
    })
    if demand_t is not None:
        lots["fuel_t"] = shares * demand_t
        lots["oil_t"] = oil_per_fuel * demand_t
        lots["available_t"] = avail
        lots["at_availability_limit"] = (shares > 0) & (shares >= problem.ub - 1e-9) & (
            problem.ub < 1.0)
    lots["valuation_note"] = valued["valuation_note"].to_numpy()
    mix = mixed_composition(problem.w, shares)
    composition = pd.Series(mix, index=list(species_keys()), name="mix_wt_pct")
    long = estimate(mix[None, :], ["mix"], methods=problem.model.methods or "default")
    if models:
        from estimator.refit.apply import apply_models

        long = apply_models(SimpleNamespace(wt_pct=mix[None, :], samples=["mix"]), list(models),
                            long)
    long = pd.concat([long.astype({"property": str, "method": str, "unit": str, "note": str}),
                      composition_estimates(mix[None, :], ["mix"])], ignore_index=True)
    long_decide = decision_rows(long)
    decides = long_decide.assign(_ok=long_decide["in_domain"].astype(bool))
    in_domain = decides.groupby(decides["property"].astype(str))["_ok"].all().to_dict()
    vals = problem.values(shares)
    errs = problem.model.errors(list(dict.fromkeys(c.property for c in problem.all)),
                                mix[None, :])
    crow = []
    for c in problem.all:
        v = vals[c.property]
        margin = -problem.violation(c, v)
        binding = bool(np.isfinite(margin) and abs(margin) <= 1e-5 * max(1.0, abs(c.limit)))
        spec_limit = c.limit if c.spec_limit is None else c.spec_limit
        headroom = -c.sign * (v - spec_limit)
        err = float(np.nan_to_num(errs.get(c.property, [0.0])[0]))
        with np.errstate(divide="ignore", invalid="ignore"):
            bands = headroom / err if err > 0 else (np.inf if headroom >= -1e-9 else -np.inf)
        crow.append({
            "constraint": c.label, "property": c.property, "kind": c.kind,
            "limit": spec_limit, "limit_with_margin": c.limit,
            "value": v, "error": err, "headroom": headroom, "headroom_bands": bands,
            "margin": 0.0 if binding else margin, "binding": binding,
            "meets": problem.meets(c, v),
            # False: the estimate lies outside its method's range and cannot decide the limit
            "in_domain": bool(in_domain.get(c.property, True)),
            "linear_form": hows.get(c.label, "nonlinear (checked, SLSQP)"),
            "source": c.source,
        })
    ctable = pd.DataFrame(crow)
    verdicts = check(long_decide, spec, climate_class) if spec is not None else None
    targets = _target_verdicts(long_decide, [c for c in problem.all if c.source == "user"])
    if targets is not None:
        verdicts = targets if verdicts is None else pd.concat([verdicts, targets],
                                                              ignore_index=True)
    cost = float(problem.cost @ shares)
    return MixResult(feasible=bool(feasible), message=message, lots=lots, constraints=ctable,
                     composition=composition, estimates=long, cost_per_t_fuel=cost,
                     solver=solver, verdicts=verdicts, diagnosis=diagnosis, notes=notes,
                     model_properties=model_properties(long))


def _target_verdicts(long: pd.DataFrame, targets: Sequence[Constraint]) -> pd.DataFrame | None:
    """Verdicts of the mix against the user's own targets (--max-cfpp ...), like ``check``."""
    from estimator.properties.methods import DEFAULTS
    from estimator.specs import CHECK_COLUMNS, _verdicts, probability_meets

    rows = []
    for c in targets:
        method = long["method"].astype(str)
        mine = long["property"].astype(str) == c.property
        fitted = mine & method.str.startswith("fit:")
        est = long[fitted] if fitted.any() else long[mine & (method == DEFAULTS.get(c.property,
                                                                                     ""))]
        if est.empty:
            continue
        r = est.iloc[0]
        rows.append({"sample": r["sample"], "spec": "target", "property": c.property,
                     "estimate": float(r["value"]), "error": float(r["error"]),
                     "limit": c.limit if c.spec_limit is None else c.spec_limit,
                     "bound": c.kind, "unit": str(r["unit"]),
                     "method": str(r["method"]), "in_domain": bool(r["in_domain"]),
                     "climate_class": None, "edition": "", "mark": "user target"})
    if not rows:
        return None
    frame = pd.DataFrame(rows)
    args = (frame["estimate"].to_numpy(float), frame["error"].to_numpy(float),
            frame["limit"].to_numpy(float), frame["bound"].to_numpy() == "min")
    inside = frame["in_domain"].to_numpy(bool)
    frame["verdict"] = _verdicts(*args, inside)
    frame["probability_meets"] = np.where(inside, probability_meets(*args), np.nan)
    return frame[CHECK_COLUMNS]
