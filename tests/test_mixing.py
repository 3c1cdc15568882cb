"""Tests for estimator/mixing.py: the least-cost mix of lots under a specification.

Lots are built from the built-in typical profiles with synthetic prices and tonnages
(invented for the tests), or read from the invented demo scenario.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from estimator import mixing as m
from estimator.errors import InputFileError, UsageError
from estimator.profiles.io import read_profile
from estimator.profiles.profile import Profile
from estimator.properties.predict import estimate
from estimator.specs import composition_estimates
from estimator.tables import species_keys

DEMO = Path(__file__).resolve().parents[1] / "data" / "demo" / "lots.csv"


def _lots(oils, prices, available=None) -> Profile:
    """Synthetic lots: built-in typical profiles with invented prices (and tonnages)."""
    base = Profile.from_oils(oils)
    meta = pd.DataFrame({"price_per_t": prices}, index=base.composition.index)
    if available is not None:
        meta["available_t"] = available
    return Profile.from_frame(base.composition, metadata=meta, source="synthetic lots")


def _full_model_values(w: np.ndarray, props) -> pd.DataFrame:
    """Every constraint property by the default methods of the full model (rows: mixes)."""
    ids = [f"m{i}" for i in range(len(w))]
    long = pd.concat([estimate(w, ids).astype({"property": str}),
                      composition_estimates(w, ids)], ignore_index=True)
    table = long.pivot(index="sample", columns="property", values="value").reindex(ids)
    return table[list(dict.fromkeys(props))]


def _meets(values: pd.DataFrame, constraints, rtol=1e-6) -> np.ndarray:
    ok = np.ones(len(values), dtype=bool)
    for c in constraints:
        v = values[c.property].to_numpy()
        ok &= c.sign * (v - c.limit) <= rtol * max(1.0, abs(c.limit))
    return ok


def _simplex_grid(step: float) -> np.ndarray:
    k = int(round(1 / step))
    pts = [(i, j, k - i - j) for i in range(k + 1) for j in range(k + 1 - i)]
    return np.array(pts, dtype=float) / k


THREE = (["rapeseed", "palm", "soybean"], [985.0, 870.0, 940.0])

#: The linear forms these tests exercise the linear programme with (regression setting:
#: the published defaults for CFPP, pour point and Rancimat are nonlinear in composition).
LINEAR_DEFAULTS = {"oxidation_stability_110C_h": "park2008", "pour_point_C": "sarin2009"}


@pytest.fixture(autouse=True)
def _linear_defaults(monkeypatch):
    from estimator.properties import methods

    for prop, name in LINEAR_DEFAULTS.items():
        monkeypatch.setitem(methods.DEFAULTS, prop, name)


def test_linprog_mix_equals_a_brute_force_grid_search_on_three_lots():
    # Independent check (our arithmetic): every point of a 0.5 % simplex grid evaluated with
    # the full property model; the LP optimum is no dearer than the best feasible grid point
    # and within the grid's resolution of it.
    lots = _lots(*THREE)
    cons = m.mix_constraints("en14214", max_cfpp_C=-5)
    result = m.least_cost_mix(lots, cons)
    assert result.feasible and result.solver == "linprog (HiGHS)"
    grid = _simplex_grid(0.005)
    mixes = m.mixed_composition(lots.wt_pct, grid)
    ok = _meets(_full_model_values(mixes, [c.property for c in cons]), cons)
    assert ok.any()
    costs = grid @ result.lots["cost_per_t_fuel"].to_numpy()
    best_grid = costs[ok].min()
    assert result.cost_per_t_fuel <= best_grid + 1e-9
    assert best_grid - result.cost_per_t_fuel < 1.0
    best_shares = grid[ok][np.argmin(costs[ok])]
    assert np.abs(best_shares - result.lots["share_mass_pct"].to_numpy() / 100).max() < 0.02


def test_brute_force_agrees_with_availability_bounds_and_a_demand():
    # Synthetic tonnages: 2000 t rapeseed, 400 t palm (binding), 2000 t soybean oil; 1000 t fuel.
    lots = _lots(*THREE, available=[2000.0, 400.0, 2000.0])
    cons = m.mix_constraints("en14214", max_cfpp_C=-5)
    result = m.least_cost_mix(lots, cons, demand_t=1000.0)
    assert result.feasible
    fuel_per_oil = result.lots["fuel_yield_t_per_t_oil"].to_numpy()
    cap = np.minimum(1.0, np.array([2000.0, 400.0, 2000.0]) * fuel_per_oil / 1000.0)
    grid = _simplex_grid(0.005)
    grid = grid[(grid <= cap + 1e-12).all(axis=1)]
    ok = _meets(_full_model_values(m.mixed_composition(lots.wt_pct, grid),
                                   [c.property for c in cons]), cons)
    costs = grid @ result.lots["cost_per_t_fuel"].to_numpy()
    assert result.cost_per_t_fuel <= costs[ok].min() + 1e-9
    assert costs[ok].min() - result.cost_per_t_fuel < 1.0
    shares = result.lots["share_mass_pct"].to_numpy() / 100
    assert (shares <= cap + 1e-9).all()
    assert result.lots["at_availability_limit"].tolist() == [False, True, False]
    # tonnages: fuel_t = share x demand; oil_t = fuel_t / yield (stoichiometry of sourcing.py)
    assert result.lots["fuel_t"].sum() == pytest.approx(1000.0)
    assert result.lots["oil_t"].to_numpy() == pytest.approx(
        result.lots["fuel_t"].to_numpy() / fuel_per_oil)


@pytest.mark.parametrize("options", [
    {"max_cfpp_C": -5},
    {"max_cfpp_C": -5, "max_cloud_point_C": 0.0},
    {"climate_class": "B"},
    {"max_cfpp_C": 0, "max_cloud_point_C": 3.0},
])
def test_every_returned_mix_meets_every_limit_in_the_full_property_model(options):
    # The invented demo lots; the answer is re-evaluated with estimate() from scratch.
    lots = read_profile(DEMO, basis="fatty-acid")
    cons = m.mix_constraints("en14214", **options)
    result = m.least_cost_mix(lots, cons, spec="en14214", climate_class=options.get(
        "climate_class"))
    assert result.feasible, result.message
    w = result.composition.reindex(list(species_keys())).to_numpy()[None, :]
    values = _full_model_values(w, [c.property for c in cons])
    assert _meets(values, cons).all()
    assert result.constraints["meets"].all()


def test_ideal_solubility_cloud_point_limit_is_met_exactly_by_the_linear_programme():
    # CP = max_i T_i <= L  <=>  x_i <= exp(dH_i/R (1/Tm_i - 1/L)) for every saturated ester
    # (Schroeder-van Laar, correlations.md 6.3), and x_i is a ratio of linear forms in the
    # shares: linear rows. Checked against random search over 20,000 synthetic mixes.
    lots = read_profile(DEMO, basis="fatty-acid")
    cons = m.mix_constraints("en14214", max_cfpp_C=-5, max_cloud_point_C=0.0)
    result = m.least_cost_mix(lots, cons)
    assert result.feasible and result.solver == "linprog (HiGHS)"
    cp_row = result.constraints.set_index("property").loc["cloud_point_C"]
    assert cp_row["linear_form"] == "per-ester mole-fraction bounds (ideal solubility)"
    assert cp_row["value"] == pytest.approx(0.0, abs=1e-6)  # binding
    rng = np.random.default_rng(7)
    shares = rng.dirichlet(np.full(len(lots), 0.4), size=20000)
    ok = _meets(_full_model_values(m.mixed_composition(lots.wt_pct, shares),
                                   [c.property for c in cons]), cons)
    costs = shares @ result.lots["cost_per_t_fuel"].to_numpy()
    assert ok.any() and result.cost_per_t_fuel <= costs[ok].min() + 1e-9
    relaxed = m.least_cost_mix(lots, m.mix_constraints("en14214", max_cfpp_C=-5))
    assert result.cost_per_t_fuel >= relaxed.cost_per_t_fuel - 1e-9  # a tighter limit costs


@pytest.mark.parametrize("cfpp_limit", [-4.0, -5.0])
def test_slsqp_refinement_reaches_the_optimum_of_the_exact_linear_reformulation(cfpp_limit):
    # CFPP by the [S21] equation on the ideal-solubility CP, 1.0191 CP - 2.9 (correlations.md
    # 6.2), is nonlinear as written, so it is refined by SLSQP; CFPP <= L is exactly
    # CP <= (L + 2.9) / 1.0191, whose linear programme gives the reference optimum.
    lots = read_profile(DEMO, basis="fatty-acid")
    result = m.least_cost_mix(lots, m.mix_constraints("en14214", max_cfpp_C=cfpp_limit),
                              methods={"cfpp_C": "from_cloud_point"})
    assert result.feasible and result.solver == "linprog (HiGHS) + SLSQP"
    exact = m.least_cost_mix(lots, m.mix_constraints("en14214") + [m.Constraint(
        "cloud_point_C", "max", (cfpp_limit + 2.9) / 1.0191, "equivalent cloud point")])
    assert exact.solver == "linprog (HiGHS)"
    assert result.cost_per_t_fuel == pytest.approx(exact.cost_per_t_fuel, rel=1e-6)
    row = result.constraints.set_index("property").loc["cfpp_C"]
    assert row["linear_form"] == "nonlinear (checked, SLSQP)" and row["meets"]


def test_linear_forms_are_detected_for_each_kind_of_limit():
    lots = read_profile(DEMO, basis="fatty-acid")
    cons = m.mix_constraints("en14214", max_cfpp_C=-5, max_cloud_point_C=5.0)
    forms = m.least_cost_mix(lots, cons, methods={"cetane_number": "krisnangkura1986"}
                             ).constraints.set_index("constraint")["linear_form"]
    assert forms["density >= 860 kg/m3"] == "reciprocal"  # ideal mixing: 1/rho linear in w
    assert forms["viscosity <= 5 mm2/s"] == "logarithm"  # log mixing on mass fractions
    assert forms["iodine value <= 120 g I2/100 g"] == "identity"
    assert forms["oxidation stability >= 8 h"] == "X = C18:2 + C18:3 (Park 2008)"
    assert forms["cloud point <= 5 °C"] == "per-ester mole-fraction bounds (ideal solubility)"
    assert forms["cetane number >= 51"] == "nonlinear (checked, SLSQP)"  # 5458 / SN


def test_a_nonlinear_method_override_moves_its_limit_out_of_the_linear_programme():
    # Krisnangkura 1986 CN = 46.3 + 5458/SN - 0.225 IV is nonlinear in composition (5458/SN).
    lots = _lots(*THREE)
    result = m.least_cost_mix(lots, m.mix_constraints("en14214", max_cfpp_C=-5),
                              methods={"cetane_number": "krisnangkura1986"})
    row = result.constraints.set_index("property").loc["cetane_number"]
    assert row["linear_form"] == "nonlinear (checked, SLSQP)" and row["meets"]


def test_park_bound_is_the_linoleic_plus_linolenic_limit():
    # Park 2008 OS = 117.9295/X + 2.5905 (correlations.md 5, MEMORY): OS >= 8 h <=> X <= 21.80.
    lots = read_profile(DEMO, basis="fatty-acid")
    result = m.least_cost_mix(lots, m.mix_constraints("en14214", max_cfpp_C=-5))
    comp = result.composition
    x = comp["C18:2"] + comp["C18:3"]
    assert x <= 117.9295 / (8.0 - 2.5905) + 1e-6
    assert x == pytest.approx(21.8009, abs=2e-3)  # binding in the demo (our arithmetic)


def test_infeasible_limit_is_reported_with_how_far_the_best_mix_misses_it():
    lots = read_profile(DEMO, basis="fatty-acid")
    result = m.least_cost_mix(lots, m.mix_constraints("en14214", max_cfpp_C=-30), spec="en14214")
    assert not result.feasible
    row = result.diagnosis.set_index("property").loc["cfpp_C"]
    assert not row["reachable_alone"] and row["miss"] > 0
    # the best any lot reaches is rapeseed-like LCSF: CFPP -30 is out of reach of Ramos 2009
    assert result.message.startswith(
        "no mix of the lots meets EN 14214: least-violating mix: CFPP <= -30 °C missed by ")
    assert result.message.endswith("°C (no lot or mix reaches it)")


def test_conflicting_limits_are_named_in_the_diagnosis():
    # Rapeseed + palm (synthetic prices): OS >= 8 h needs palm, CFPP <= -10 needs rapeseed;
    # each alone can be met, not both.
    lots = _lots(["rapeseed", "palm"], [985.0, 870.0])
    result = m.least_cost_mix(lots, m.mix_constraints("en14214", max_cfpp_C=-10))
    assert not result.feasible
    d = result.diagnosis.set_index("constraint")
    assert d.loc["CFPP <= -10 °C", "reachable_alone"]
    conflicts = " ".join(d["conflicts_with"])
    assert "oxidation stability >= 8 h" in conflicts or "CFPP <= -10 °C" in conflicts
    assert "conflicts with" in result.message


def test_demand_beyond_the_lots_supply_is_reported():
    lots = _lots(*THREE, available=[100.0, 100.0, 100.0])
    result = m.least_cost_mix(lots, m.mix_constraints("en14214"), demand_t=1000.0)
    assert not result.feasible
    assert result.message.startswith("no mix can supply 1000 t of fuel: the lots make at most ")


def test_a_demand_without_an_availability_column_says_every_lot_is_unlimited():
    # a missing column must not silently change the answer: the buyer is told
    result = m.least_cost_mix(_lots(*THREE), m.mix_constraints("en14214"), demand_t=1000.0)
    assert any("no availability column" in n and "unlimited" in n for n in result.notes)
    without_demand = m.least_cost_mix(_lots(*THREE), m.mix_constraints("en14214"))
    assert not any("availability" in n for n in without_demand.notes)


def test_lot_without_a_price_is_refused_with_its_row():
    base = Profile.from_oils(["rapeseed", "palm"])
    meta = pd.DataFrame({"price_per_t": [900.0, np.nan]}, index=base.composition.index)
    lots = Profile.from_frame(base.composition, metadata=meta, source="offers.csv", rows=[2, 3])
    with pytest.raises(InputFileError) as err:
        m.least_cost_mix(lots, m.mix_constraints("en14214"))
    assert str(err.value) == ("offers.csv: row 3 (lot 'palm'): no 'price_per_t'; the least-cost "
                              "mix needs a price for every lot (or leave the lot out)")


def test_missing_availability_column_is_named():
    lots = _lots(*THREE)
    with pytest.raises(InputFileError) as err:
        m.least_cost_mix(lots, m.mix_constraints("en14214"), demand_t=10.0,
                         available_column="stock_t")
    assert str(err.value) == "synthetic lots: no column 'stock_t' (named by --available)"


def test_contradictory_cfpp_and_climate_class_are_refused():
    with pytest.raises(UsageError) as err:
        m.mix_constraints("en14214", climate_class="C", max_cfpp_C=-10)
    assert str(err.value) == ("--max-cfpp -10 contradicts --climate-class C (en14214 cfpp_C "
                              "max -5 °C); give one")


def test_non_positive_demand_is_refused():
    with pytest.raises(UsageError, match=r"^--demand-t must be a positive number of tonnes"):
        m.least_cost_mix(_lots(*THREE), m.mix_constraints("en14214"), demand_t=0.0)


def test_mixed_composition_is_the_mass_weighted_profile():
    # Mass balance (our arithmetic): 30 % rapeseed + 70 % palm FAME by mass.
    lots = _lots(["rapeseed", "palm"], [1.0, 1.0])
    mix = m.mixed_composition(lots.wt_pct, np.array([0.3, 0.7]))
    assert mix == pytest.approx(0.3 * lots.wt_pct[0] + 0.7 * lots.wt_pct[1])
    assert mix.sum() == pytest.approx(100.0)


def test_mix_verdicts_include_the_users_own_targets():
    # a target the mix meets exactly (binding) lies inside the CFPP error band, so the
    # verdict must say too close to call, not stay silent (common practice: a limit met
    # only on the estimate is not met with confidence)
    from estimator.profiles.io import read_profile

    lots = read_profile(DEMO, basis="fatty-acid")
    constraints = m.mix_constraints("en14214", max_cfpp_C=-5.0)
    result = m.least_cost_mix(lots, constraints, spec="en14214", available_column="available_t")
    target = result.verdicts[result.verdicts["spec"] == "target"]
    assert list(target["property"]) == ["cfpp_C"]
    assert target["verdict"].iloc[0] == "too close to call"
