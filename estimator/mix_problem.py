"""The least-cost programme of :mod:`estimator.mixing`: linear programme, nonlinear
refinement and the diagnosis of an infeasible case.

:class:`MixProblem` holds the lots' compositions and costs, the limits that are
linear in the fuel-mass shares (rows ``A s <= b``) and those checked on the answer;
:func:`estimator.mixing.least_cost_mix` builds it and reads its answer.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from estimator.mixing import CHECK_RTOL, Constraint, mixed_composition

__all__ = ["MixProblem"]


class MixProblem:
    """The least-cost programme, its nonlinear refinement and its diagnosis.

    Parameters: the property model (``estimator.mixing._Model``), the lots' FAME mass %
    (n, 30), their costs per tonne of fuel, the upper bounds of the shares, the linear
    rows ``(constraint, a, b)`` and the nonlinear constraints.
    """

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
        """Each constrained property of the mix with these shares."""
        cs = self.all if constraints is None else constraints
        props = list(dict.fromkeys(c.property for c in cs))
        vals = self.model.values(props, mixed_composition(self.w, shares))
        return {p: float(v[0]) for p, v in vals.items()}

    def violation(self, c: Constraint, value: float) -> float:
        """How far ``value`` lies beyond the limit (> 0 misses; inf for NaN)."""
        if np.isnan(value):
            return np.inf
        return c.sign * (value - c.limit)

    def meets(self, c: Constraint, value: float) -> bool:
        """Whether ``value`` meets the limit, within the re-check tolerance."""
        return self.violation(c, value) <= CHECK_RTOL * max(1.0, abs(c.limit))

    def meets_all(self, shares) -> bool:
        """Whether the mix with these shares meets every limit."""
        vals = self.values(shares)
        return all(self.meets(c, vals[c.property]) for c in self.all)

    def meets_nonlinear(self, shares) -> bool:
        """Whether the mix meets every nonlinear limit."""
        vals = self.values(shares, self.nonlinear)
        return all(self.meets(c, vals[c.property]) for c in self.nonlinear)

    # -- linear programme
    def solve_lp(self, A=None, b=None, cost=None):
        """The linear programme (HiGHS): least-cost shares and a status text."""
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
        """The mix that misses the limits least (linear rows, then nonlinear)."""
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
