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

    def __init__(self, methods: Mapping[str, str]):
        from estimator.properties.methods import PROPERTIES, default_method, get_method
        from estimator.specs import EXACT_PROPERTIES

        self.methods = dict(methods)
        self._exact = set(EXACT_PROPERTIES)
        self._props = set(PROPERTIES)
        self._get = lambda p: get_method(p, self.methods[p]) if p in self.methods else \
            default_method(p)

    def method(self, prop: str):
        """The registry Method used for ``prop`` (None for exact composition values)."""
        if prop in self._exact:
            return None
        if prop not in self._props:
            raise UnknownNameError(f"no estimate for {prop!r}; cannot constrain the mix on it")
        return self._get(prop)

    def values(self, props: Sequence[str], w: np.ndarray) -> dict[str, np.ndarray]:
        """Each property on every row of ``w``."""
        w = np.atleast_2d(w)
        desc = descriptors(w)
        out = {}
        for prop in props:
            m = self.method(prop)
            if m is None:
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
    """Park 2008 OS = A/X + B as a linear bound on X = C18:2 + C18:3 (None if not Park)."""
    m = model.method(c.property)
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


def _lot_inputs(profile, available_column, demand_t, pretreat):
    from estimator.sourcing import value_lots

    valued = value_lots(profile, pretreat=pretreat)
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
    """
    if demand_t is not None and not (np.isfinite(demand_t) and demand_t > 0):
        raise UsageError(f"--demand-t must be a positive number of tonnes, got {demand_t:g}")
    if not constraints:
        raise UsageError("no limits to meet: give a specification or a cold-flow limit")
    model = _Model(methods or {})
    valued, cost, yields, avail, notes = _lot_inputs(profile, available_column, demand_t,
                                                     pretreat)
    w_lots = profile.wt_pct
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
    problem = _Problem(model, w_lots, cost, ub, linear, nonlinear)

    if ub.sum() < 1.0 - 1e-12:
        supply = float(np.sum(np.where(np.isinf(avail), 0, avail) * yields))
        shares = ub.copy()
        message = (f"no mix can supply {demand_t:g} t of fuel: the lots make at most "
                   f"{supply:.1f} t")
        return _finish(profile, problem, valued, shares, False, message, "none", hows, demand_t,
                       avail, notes, spec, climate_class, diagnosis=None)

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
                     avail, notes, spec, climate_class, diagnosis=diagnosis)
    if feasible and not result.constraints["meets"].all():  # pragma: no cover - safety net
        result.feasible = False
        result.message = "the mix found does not meet every limit when re-checked"
    return result


def _infeasible_message(diagnosis: pd.DataFrame, spec: str | None) -> str:
    missed = diagnosis[diagnosis["miss"] > 0]
    what = f"meets {spec}" if spec else "meets every limit"
    parts = []
    for row in missed.itertuples(index=False):
        extra = (" (no lot or mix reaches it)" if not row.reachable_alone else
                 f" (conflicts with {row.conflicts_with})" if row.conflicts_with else "")
        parts.append(f"{row.constraint} missed by {row.miss:.3g} {row.unit}{extra}")
    if not parts:
        parts = ["the solver could not reach every nonlinear limit"]
    return f"no mix of the lots {what}: least-violating mix: " + "; ".join(parts)


class _Problem:
    """The least-cost programme, its nonlinear refinement and its diagnosis."""

    def __init__(self, model, w_lots, cost, ub, linear, nonlinear):
        self.model, self.w, self.cost, self.ub = model, w_lots, cost, ub
        self.linear, self.nonlinear = linear, nonlinear
        self.n = len(w_lots)
        self.A = np.array([a for _, a, _ in linear]).reshape(len(linear), self.n)
        self.b = np.array([b for _, _, b in linear], dtype=float)
        finite = np.isfinite(self.b)
        self.A_f, self.b_f = self.A[finite], self.b[finite]
        self.impossible = bool(np.any(self.b == -np.inf))
        self.scale = float(np.mean(np.abs(cost))) or 1.0
        self.all = list(dict.fromkeys(c for c, _, _ in linear)) + list(nonlinear)

    # -- values
    def values(self, shares: np.ndarray, constraints=None) -> dict[str, float]:
        cs = self.all if constraints is None else constraints
        props = list(dict.fromkeys(c.property for c in cs))
        vals = self.model.values(props, mixed_composition(self.w, shares))
        return {p: float(v[0]) for p, v in vals.items()}

    def violation(self, c: Constraint, value: float) -> float:
        if np.isnan(value):
            return np.inf
        return c.sign * (value - c.limit)

    def meets(self, c: Constraint, value: float) -> bool:
        return self.violation(c, value) <= CHECK_RTOL * max(1.0, abs(c.limit))

    def meets_all(self, shares) -> bool:
        vals = self.values(shares)
        return all(self.meets(c, vals[c.property]) for c in self.all)

    def meets_nonlinear(self, shares) -> bool:
        vals = self.values(shares, self.nonlinear)
        return all(self.meets(c, vals[c.property]) for c in self.nonlinear)

    # -- linear programme
    def solve_lp(self, A=None, b=None, cost=None):
        from scipy.optimize import linprog

        if self.impossible and A is None:
            return None, "a limit no finite composition can meet"
        A = self.A_f if A is None else A
        b = self.b_f if b is None else b
        res = linprog(
            self.cost / self.scale if cost is None else cost,
            A_ub=A if len(A) else None, b_ub=b if len(A) else None,
            A_eq=np.ones((1, self.n)), b_eq=[1.0],
            bounds=list(zip(np.zeros(self.n), self.ub)), method="highs",
        )
        if res.status != 0:
            return None, res.message
        return np.clip(res.x, 0.0, self.ub), "optimal"

    # -- nonlinear refinement
    def _nl_vector(self, shares_batch: np.ndarray) -> np.ndarray:
        """Scaled slack of each nonlinear limit (>= 0 meets) for each row of shares."""
        props = list(dict.fromkeys(c.property for c in self.nonlinear))
        vals = self.model.values(props, mixed_composition(self.w, shares_batch))
        cols = []
        for c in self.nonlinear:
            v = vals[c.property]
            slack = -c.sign * (v - c.limit) / max(1.0, abs(c.limit))
            cols.append(np.where(np.isfinite(slack), slack, -10.0))
        return np.column_stack(cols)

    def _nl_value_jac(self, s: np.ndarray):
        """Slacks and their forward-difference Jacobian from one batched evaluation."""
        step = 1e-7
        vals = self._nl_vector(np.vstack([s, s + step * np.eye(self.n)]))
        return vals[0], ((vals[1:] - vals[0]) / step).T

    def _nl_constraint(self):
        return {"type": "ineq", "fun": lambda s: self._nl_vector(s[None, :])[0],
                "jac": lambda s: self._nl_value_jac(s)[1]}

    def refine(self, x0: np.ndarray, objective=None, keep_nonlinear: bool = True):
        """SLSQP from ``x0``: least cost under every limit (or ``objective`` under the
        linear rows only, for the least-violation search). None when nothing feasible."""
        from scipy.optimize import minimize

        cons = [{"type": "eq", "fun": lambda s: np.array([s.sum() - 1.0]),
                 "jac": lambda s: np.ones((1, self.n))}]
        if len(self.A_f):
            cons.append({"type": "ineq", "fun": lambda s: self.b_f - self.A_f @ s,
                         "jac": lambda s: -self.A_f})
        if keep_nonlinear:
            cons.append(self._nl_constraint())
        c = self.cost / self.scale
        fun = objective or (lambda s: (float(c @ s), c))
        best = None
        starts = [x0] + [np.eye(self.n)[j] for j in np.argsort(self.cost)
                         if self.ub[j] >= 1.0][:2]
        for start in starts:
            res = minimize(fun, np.clip(start, 0, self.ub), jac=True, method="SLSQP",
                           bounds=list(zip(np.zeros(self.n), self.ub)), constraints=cons,
                           options={"maxiter": 100, "ftol": 1e-9})
            s = np.clip(res.x, 0.0, self.ub)
            s = s / s.sum()
            if objective is not None:
                return s
            if self.meets_all(s) and (best is None or self.cost @ s < self.cost @ best):
                best = s
            if best is not None and start is x0:
                break
        return best

    # -- infeasibility
    def _elastic(self, rows: list[int]):
        """Least total scaled violation of the chosen linear rows."""
        from scipy.optimize import linprog

        k = len(rows)
        A = self.A[rows]
        b = self.b[rows]
        # slack measured relative to the row's own size, so rows in different units
        # (kg/m3, mole fractions, wt %) weigh alike
        scale = np.maximum(np.abs(b), np.abs(A).max(axis=1)) + 1e-12
        # variables: shares (n), slack (k); a s - t <= b, minimise sum t / scale
        A_ub = np.hstack([A, -np.eye(k)])
        cost = np.concatenate([np.zeros(self.n), 1.0 / scale])
        bounds = list(zip(np.zeros(self.n), self.ub)) + [(0, None)] * k
        res = linprog(cost, A_ub=A_ub, b_ub=b, A_eq=np.hstack([np.ones((1, self.n)),
                                                                  np.zeros((1, k))]),
                      b_eq=[1.0], bounds=bounds, method="highs")
        return res.x[: self.n], res.x[self.n:]

    def _feasible_rows(self, rows: list[int]) -> bool:
        if not rows:
            return True
        _, t = self._elastic(rows)
        return bool(np.all(t <= 1e-9 * np.maximum(1.0, np.abs(self.b[rows]))))

    def least_violation(self, shares) -> np.ndarray:
        finite = [i for i in range(len(self.linear)) if np.isfinite(self.b[i])]
        if finite:
            s, _ = self._elastic(finite)
        else:
            s = shares if shares is not None else np.ones(self.n) / self.n
        if self.nonlinear:
            def objective(x):
                slack, jac = self._nl_value_jac(x)
                viol = np.minimum(slack, 0.0)
                return float(viol @ viol), 2.0 * viol @ jac

            refined = self.refine(s, objective=objective, keep_nonlinear=False)
            if refined is not None:
                s = refined
        return s / s.sum()

    def _rows_of(self, c: Constraint) -> list[int]:
        return [i for i, (ci, _, _) in enumerate(self.linear)
                if ci is c and np.isfinite(self.b[i])]

    def diagnose(self, best: np.ndarray) -> pd.DataFrame:
        """Each limit: the least-violating mix's value and miss, reachability, conflicts."""
        from estimator.properties.methods import PROPERTIES
        from estimator.specs import EXACT_PROPERTIES

        vals = self.values(best)
        linear = list(dict.fromkeys(c for c, _, _ in self.linear))
        rows_of = {c: self._rows_of(c) for c in linear}
        impossible = {c for c, _, bound in self.linear if bound == -np.inf}
        alone = {c: c not in impossible and self._feasible_rows(rows_of[c]) for c in linear}
        rows = []
        for c in self.all:
            v = vals[c.property]
            meets = self.meets(c, v)
            partners = []
            if c in rows_of and alone[c] and not meets:
                partners = [o.label for o in linear if o is not c and alone[o]
                            and not self._feasible_rows(rows_of[c] + rows_of[o])]
            unit = "wt %" if c.property in EXACT_PROPERTIES else PROPERTIES.get(c.property, "")
            rows.append({
                "constraint": c.label, "property": c.property, "kind": c.kind,
                "limit": c.limit, "best_value": v,
                "miss": np.inf if not np.isfinite(v) else 0.0 if meets else self.violation(c, v),
                "unit": unit, "linear": c in rows_of,
                "reachable_alone": bool(alone.get(c, True)),
                "conflicts_with": ", ".join(partners),
            })
        return pd.DataFrame(rows)


def _finish(profile, problem: _Problem, valued, shares, feasible, message, solver, hows,
            demand_t, avail, notes, spec, climate_class, diagnosis) -> MixResult:
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
    long = pd.concat([long.astype({"property": str, "method": str, "unit": str, "note": str}),
                      composition_estimates(mix[None, :], ["mix"])], ignore_index=True)
    vals = problem.values(shares)
    crow = []
    for c in problem.all:
        v = vals[c.property]
        margin = -problem.violation(c, v)
        binding = bool(np.isfinite(margin) and abs(margin) <= 1e-5 * max(1.0, abs(c.limit)))
        crow.append({
            "constraint": c.label, "property": c.property, "kind": c.kind, "limit": c.limit,
            "value": v, "margin": 0.0 if binding else margin, "binding": binding,
            "meets": problem.meets(c, v),
            "linear_form": hows.get(c.label, "nonlinear (checked, SLSQP)"),
            "source": c.source,
        })
    ctable = pd.DataFrame(crow)
    verdicts = check(long, spec, climate_class) if spec is not None else None
    targets = _target_verdicts(long, [c for c in problem.all if c.source == "user"])
    if targets is not None:
        verdicts = targets if verdicts is None else pd.concat([verdicts, targets],
                                                              ignore_index=True)
    cost = float(problem.cost @ shares)
    return MixResult(feasible=bool(feasible), message=message, lots=lots, constraints=ctable,
                     composition=composition, estimates=long, cost_per_t_fuel=cost,
                     solver=solver, verdicts=verdicts, diagnosis=diagnosis, notes=notes)


def _target_verdicts(long: pd.DataFrame, targets: Sequence[Constraint]) -> pd.DataFrame | None:
    """Verdicts of the mix against the user's own targets (--max-cfpp ...), like ``check``."""
    from estimator.properties.methods import DEFAULTS
    from estimator.specs import CHECK_COLUMNS, _verdicts

    rows = []
    for c in targets:
        est = long[(long["property"].astype(str) == c.property)
                   & (long["method"].astype(str) == DEFAULTS.get(c.property, ""))]
        if est.empty:
            continue
        r = est.iloc[0]
        rows.append({"sample": r["sample"], "spec": "target", "property": c.property,
                     "estimate": float(r["value"]), "error": float(r["error"]),
                     "limit": c.limit, "bound": c.kind, "unit": str(r["unit"]),
                     "method": str(r["method"]), "in_domain": bool(r["in_domain"]),
                     "climate_class": None, "edition": "", "mark": "user target"})
    if not rows:
        return None
    frame = pd.DataFrame(rows)
    frame["verdict"] = _verdicts(frame["estimate"].to_numpy(float), frame["error"].to_numpy(float),
                                 frame["limit"].to_numpy(float), frame["bound"].to_numpy() == "min")
    return frame[CHECK_COLUMNS]
