"""Lot valuation against stoichiometry worked by hand, and the lot data checks."""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from estimator.errors import InputFileError, ProfileError, UsageError
from estimator.profiles.profile import Profile
from estimator.sourcing import (
    COST_KEYS,
    DEFAULT_COSTS,
    ProcessCosts,
    assumptions,
    lot_inputs,
    read_costs,
    stoichiometry,
    value_lots,
)
from estimator.tables import species_keys

# Molar masses by hand from IUPAC conventional atomic weights C 12.011, H 1.008, O 15.999,
# K 39.098 (the same weights as correlations.md 1):
TRIOLEIN = 57 * 12.011 + 104 * 1.008 + 6 * 15.999  # C57H104O6 = 885.453
METHYL_OLEATE = 19 * 12.011 + 36 * 1.008 + 2 * 15.999  # C19H36O2 = 296.494
OLEIC_ACID = 18 * 12.011 + 34 * 1.008 + 2 * 15.999  # C18H34O2 = 282.468
GLYCEROL = 3 * 12.011 + 8 * 1.008 + 3 * 15.999  # C3H8O3 = 92.094
METHANOL = 12.011 + 4 * 1.008 + 15.999  # CH4O = 32.042
KOH = 39.098 + 15.999 + 1.008  # 56.105
WATER = 2 * 1.008 + 15.999  # 18.015


def _single(key: str, **meta) -> Profile:
    comp = pd.DataFrame({key: [100.0]}, index=["lot"])
    return Profile.from_frame(comp, metadata=pd.DataFrame(meta, index=["lot"]) if meta
                              else None, source="lots.csv", rows=[2])


def _wt(key: str) -> np.ndarray:
    w = np.zeros((1, len(species_keys())))
    w[0, species_keys().index(key)] = 100.0
    return w


def test_triolein_gives_three_methyl_oleates_and_one_glycerol_by_hand():
    # stoichiometry by hand: triolein 885.4 g/mol + 3 x 32.04 g methanol
    # -> 3 x 296.5 g methyl oleate + 92.09 g glycerol
    s = stoichiometry(_wt("C18:1"))
    assert s["triglyceride_molar_mass_g_mol"][0] == pytest.approx(885.4, abs=0.1)
    assert s["fame_molar_mass_g_mol"][0] == pytest.approx(296.5, abs=0.05)
    assert s["fame_t_per_t_neutral_oil"][0] == pytest.approx(3 * 296.5 / 885.4, rel=2e-4)
    assert s["glycerol_t_per_t_neutral_oil"][0] == pytest.approx(92.09 / 885.4, rel=2e-4)
    assert s["methanol_t_per_t_neutral_oil"][0] == pytest.approx(3 * 32.04 / 885.4, rel=2e-4)


def test_mass_is_conserved_oil_plus_methanol_equals_esters_plus_glycerol():
    # conservation of mass across TG + 3 MeOH -> 3 FAME + glycerol, for every library oil
    p = Profile.from_oils(["coconut", "palm", "rapeseed", "linseed", "beef-tallow"])
    s = stoichiometry(p.wt_pct)
    np.testing.assert_allclose(
        1.0 + s["methanol_t_per_t_neutral_oil"],
        s["fame_t_per_t_neutral_oil"] + s["glycerol_t_per_t_neutral_oil"], rtol=1e-12)


def test_tripalmitin_yield_by_hand():
    # tripalmitin C51H98O6 and methyl palmitate C17H34O2, atomic weights as above
    tg = 51 * 12.011 + 98 * 1.008 + 6 * 15.999
    fame = 17 * 12.011 + 34 * 1.008 + 2 * 15.999
    s = stoichiometry(_wt("C16:0"))
    assert s["fame_t_per_t_neutral_oil"][0] == pytest.approx(3 * fame / tg, rel=1e-9)


def test_free_fatty_acid_lost_to_soap_follows_the_neutralisation_arithmetic():
    # R-COOH + KOH -> R-COOK + H2O by hand, 5 wt % FFA as oleic acid, dry oil:
    # 50 kg FFA per t / 282.47 kg/kmol = 0.1770 kmol -> 9.93 kg KOH and 56.74 kg soap
    v = value_lots(_single("C18:1", price_per_t=1000.0, ffa_wt_pct=5.0, water_wt_pct=0.0))
    kmol = 50.0 / OLEIC_ACID
    assert v["koh_to_neutralise_ffa_kg_per_t_oil"].item() == pytest.approx(kmol * KOH)
    assert v["soap_kg_per_t_oil"].item() == pytest.approx(kmol * (OLEIC_ACID + KOH - WATER))
    assert v["ffa_lost_to_soap_kg_per_t_oil"].item() == pytest.approx(50.0)
    # the yield loses exactly the FFA's share of the oil
    assert v["fuel_yield_t_per_t_oil"].item() == pytest.approx(
        0.95 * 3 * METHYL_OLEATE / TRIOLEIN)


def test_koh_demand_matches_the_acid_value_conversion():
    # AOCS Ca 5a-40: FFA % (as oleic) = acid value (mg KOH/g) x 0.503 (from memory);
    # the KOH to neutralise, in kg per t, is the acid value in mg KOH/g.
    v = value_lots(_single("C18:1", ffa_wt_pct=2.0, water_wt_pct=0.0))
    acid_value = 2.0 / 0.503
    assert v["koh_to_neutralise_ffa_kg_per_t_oil"].item() == pytest.approx(acid_value, rel=2e-3)


def test_acid_pretreatment_turns_free_fatty_acid_into_fuel():
    # R-COOH + CH3OH -> R-COOCH3 + H2O by hand, 5 wt % FFA as oleic acid
    v = value_lots(_single("C18:1", ffa_wt_pct=5.0, water_wt_pct=0.0), pretreat="acid")
    kmol = 50.0 / OLEIC_ACID
    assert v["fame_from_ffa_t_per_t_oil"].item() == pytest.approx(kmol * METHYL_OLEATE / 1000)
    assert v["water_from_esterification_kg_per_t_oil"].item() == pytest.approx(kmol * WATER)
    assert v["soap_kg_per_t_oil"].item() == 0.0
    neutral_kmol = 950.0 / TRIOLEIN
    assert v["methanol_consumed_kg_per_t_oil"].item() == pytest.approx(
        (3 * neutral_kmol + kmol) * METHANOL)


def test_methanol_charged_at_six_to_one_is_twice_the_stoichiometric_demand():
    # common practice 6:1 methanol : oil; stoichiometry needs 3:1
    v = value_lots(_single("C18:1", ffa_wt_pct=0.0, water_wt_pct=0.0), methanol_ratio=6.0)
    assert v["methanol_charged_kg_per_t_oil"].item() == pytest.approx(
        2 * v["methanol_consumed_kg_per_t_oil"].item())
    assert v["methanol_consumed_kg_per_t_oil"].item() == pytest.approx(
        1000 * 3 * METHANOL / TRIOLEIN)


def test_water_yields_no_fuel_and_its_worst_case_loss_is_one_ester_per_molecule():
    # by hand: 0.4 wt % water -> 4 kg/t removed; if it hydrolysed instead, each mole of
    # water costs one ester: 4 / 18.015 x 296.49 kg
    v = value_lots(_single("C18:1", ffa_wt_pct=0.0, water_wt_pct=0.4))
    assert v["fuel_yield_t_per_t_oil"].item() == pytest.approx(
        0.996 * 3 * METHYL_OLEATE / TRIOLEIN)
    assert v["water_hydrolysis_max_loss_t_per_t_oil"].item() == pytest.approx(
        4.0 / WATER * METHYL_OLEATE / 1000)
    assert "water 0.4 wt % above 0.06" in v["valuation_note"].item()


def test_feedstock_cost_per_tonne_of_fuel_is_price_over_yield():
    v = value_lots(_single("C18:1", price_per_t=900.0, ffa_wt_pct=1.0, water_wt_pct=0.0))
    assert v["feedstock_cost_per_t_fuel"].item() == pytest.approx(
        900.0 / v["fuel_yield_t_per_t_oil"].item())


def test_with_every_processing_cost_zero_the_cost_is_the_feedstock_cost_alone():
    v = value_lots(_single("C18:1", price_per_t=900.0, ffa_wt_pct=8.5, water_wt_pct=0.0),
                   pretreat="acid", costs=ProcessCosts.zero())
    assert v["cost_per_t_fuel"].item() == pytest.approx(900.0 / v["fuel_yield_t_per_t_oil"].item())


# Triolein worked by hand (stoichiometry, see TRIOLEIN above): per tonne of oil
# 1000/885.453 kmol TG; at 6:1 the charge is 6 x that x 32.042 kg methanol, of which 3 x
# is consumed; with 90 % of the excess recovered, methanol bought = consumed + 10 % excess.
def test_methanol_cost_counts_the_unrecovered_excess_by_hand():
    costs = ProcessCosts(methanol_price_per_t=500.0, methanol_recovered_pct=90.0,
                         catalyst_price_per_t=0, catalyst_wt_pct_of_oil=0,
                         acid_pretreatment_cost_per_t_ffa=0, glycerol_credit_per_t=0)
    v = value_lots(_single("C18:1", price_per_t=900.0), costs=costs)
    kmol = 1000.0 / TRIOLEIN
    bought_t = (3 * kmol + 0.1 * 3 * kmol) * METHANOL / 1000.0
    assert v["methanol_cost_per_t_oil"].item() == pytest.approx(500.0 * bought_t, rel=1e-4)


def test_a_higher_methanol_ratio_costs_more():
    lot = _single("C18:1", price_per_t=900.0)
    low = value_lots(lot, methanol_ratio=6.0)["cost_per_t_fuel"].item()
    high = value_lots(lot, methanol_ratio=12.0)["cost_per_t_fuel"].item()
    assert high > low


def test_acid_pretreatment_is_charged_per_tonne_of_ffa_converted():
    # 8.5 wt % FFA (a high-FFA tallow, common practice) at 200 per t FFA: 17 per t of oil
    costs = ProcessCosts(acid_pretreatment_cost_per_t_ffa=200.0)
    lot = _single("C16:0", price_per_t=760.0, ffa_wt_pct=8.5, water_wt_pct=0.0)
    v = value_lots(lot, pretreat="acid", costs=costs)
    assert v["pretreatment_cost_per_t_oil"].item() == pytest.approx(17.0)
    free = value_lots(lot, pretreat="acid", costs=ProcessCosts(
        acid_pretreatment_cost_per_t_ffa=0.0))
    assert v["cost_per_t_fuel"].item() - free["cost_per_t_fuel"].item() == pytest.approx(
        17.0 / v["fuel_yield_t_per_t_oil"].item())
    base = value_lots(lot, pretreat="none", costs=costs)
    assert base["pretreatment_cost_per_t_oil"].item() == 0.0


def test_glycerol_credit_lowers_the_cost_by_its_value_over_the_yield():
    lot = _single("C18:1", price_per_t=900.0)
    no_credit = value_lots(lot, costs=ProcessCosts(glycerol_credit_per_t=0.0))
    credit = value_lots(lot, costs=ProcessCosts(glycerol_credit_per_t=300.0))
    # one glycerol (92.094 g/mol) per triolein (885.453 g/mol): stoichiometry by hand
    glycerol_t = GLYCEROL / TRIOLEIN
    assert no_credit["cost_per_t_fuel"].item() - credit["cost_per_t_fuel"].item() == \
        pytest.approx(300.0 * glycerol_t / credit["fuel_yield_t_per_t_oil"].item(), rel=1e-4)


def test_catalyst_cost_adds_what_the_ffa_neutralises_to_the_dose():
    costs = ProcessCosts(catalyst_price_per_t=1000.0, catalyst_wt_pct_of_oil=1.0)
    v = value_lots(_single("C18:1", price_per_t=900.0, ffa_wt_pct=1.0, water_wt_pct=0.0),
                   costs=costs)
    koh_t = 10.0 / OLEIC_ACID * KOH / 1000.0  # 1 % FFA neutralised, by hand
    assert v["catalyst_cost_per_t_oil"].item() == pytest.approx(1000.0 * (0.01 + koh_t))


def test_costs_file_keys_override_defaults_and_the_assumptions_say_which(tmp_path):
    path = tmp_path / "costs.json"
    path.write_text(json.dumps({"_comment": "ours", "methanol_price_per_t": 520,
                                "glycerol_credit_per_t": 0}))
    costs = read_costs(path)
    assert costs.methanol_price_per_t == 520.0 and costs.glycerol_credit_per_t == 0.0
    assert costs.catalyst_price_per_t == DEFAULT_COSTS.catalyst_price_per_t
    rows = assumptions(costs=costs).set_index("assumption")
    methanol = [r for r in rows.index if r == COST_KEYS["methanol_price_per_t"][0]][0]
    catalyst = COST_KEYS["catalyst_price_per_t"][0]
    assert rows.loc[methanol, "basis"] == "from costs.json"
    assert rows.loc[catalyst, "basis"].startswith("default; assumption")


def test_every_cost_key_is_documented_in_the_readme():
    readme = (Path(__file__).resolve().parents[1] / "README.md").read_text(encoding="utf-8")
    for key in COST_KEYS:
        assert f"`{key}`" in readme


@pytest.mark.parametrize("content, message", [
    ({"methanol_price": 5}, "costs.json: unknown key 'methanol_price'; a costs file takes "),
    ({"methanol_price_per_t": -1}, "costs.json: key 'methanol_price_per_t': '-1' is not a "
                                   "number >= 0"),
    ({"methanol_price_per_t": True}, "costs.json: key 'methanol_price_per_t': 'True' is not"),
    ({"methanol_price_per_t": "cheap"}, "costs.json: key 'methanol_price_per_t': 'cheap' is not"),
    ({"methanol_recovered_pct": 120}, "costs.json: key 'methanol_recovered_pct': 120 is above"),
    ([1, 2], "costs.json: expected one JSON object"),
])
def test_bad_costs_files_get_one_line(tmp_path, content, message):
    path = tmp_path / "costs.json"
    path.write_text(json.dumps(content))
    with pytest.raises(InputFileError) as info:
        read_costs(path)
    assert str(info.value).startswith(message)


def test_a_lot_without_a_price_gets_no_cost_and_says_so():
    v = value_lots(_single("C18:1", ffa_wt_pct=1.0, water_wt_pct=0.0))
    assert np.isnan(v["cost_per_t_fuel"].item())
    assert np.isfinite(v["fuel_yield_t_per_t_oil"].item())
    assert v["valuation_note"].item().startswith(
        "no price_per_t: cost per tonne of fuel not computed")


@settings(max_examples=60, deadline=None)
@given(low=st.floats(0, 40), extra=st.floats(0.01, 40))
def test_more_free_fatty_acid_never_raises_the_base_catalysed_yield(low, extra):
    # synthetic lots: same oil, two FFA contents
    p = Profile.from_frame(
        pd.DataFrame({"C18:1": [60.0, 60.0], "C16:0": [40.0, 40.0]}, index=["a", "b"]),
        metadata=pd.DataFrame({"ffa_wt_pct": [low, low + extra]}, index=["a", "b"]))
    base = value_lots(p)["fuel_yield_t_per_t_oil"].to_numpy()
    acid = value_lots(p, pretreat="acid")["fuel_yield_t_per_t_oil"].to_numpy()
    assert base[1] < base[0]
    assert (acid >= base).all()


# ------------------------------------------------------------------ bad lot data
@pytest.mark.parametrize("column,cell,message", [
    ("ffa_wt_pct", 120.0,
     "lots.csv: row 2, column 'ffa_wt_pct' (sample 'lot'): 120 is outside 0-100 wt %"),
    ("water_wt_pct", -1.0,
     "lots.csv: row 2, column 'water_wt_pct' (sample 'lot'): -1 is outside 0-100 wt %"),
    ("ffa_wt_pct", "high",
     "lots.csv: row 2, column 'ffa_wt_pct' (sample 'lot'): 'high' is not a number"),
    ("price_per_t", -5.0,
     "lots.csv: row 2, column 'price_per_t' (sample 'lot'): -5 is negative; a price cannot be"),
])
def test_bad_lot_data_names_file_row_and_column(column, cell, message):
    with pytest.raises(ProfileError) as info:
        value_lots(_single("C18:1", **{column: [cell]}))
    assert str(info.value) == message


def test_ffa_and_water_together_cannot_exceed_the_whole_oil():
    with pytest.raises(ProfileError, match="'ffa_wt_pct' \\+ 'water_wt_pct'.*110 wt %"):
        lot_inputs(_single("C18:1", ffa_wt_pct=60.0, water_wt_pct=50.0))


def test_missing_ffa_and_water_are_taken_as_zero_with_a_note():
    v = value_lots(Profile.from_oils(["rapeseed"]))
    assert "ffa_wt_pct not given: taken as 0" in v["valuation_note"].item()
    assert v["neutral_oil_t_per_t_oil"].item() == 1.0


@pytest.mark.parametrize("kwargs,message", [
    ({"methanol_ratio": 2.5},
     "methanol ratio must be at least 3 (the stoichiometric 3:1), got 2.5"),
    ({"pretreat": "enzyme"}, "pretreat must be one of none, acid, got 'enzyme'"),
])
def test_bad_options_are_usage_errors(kwargs, message):
    with pytest.raises(UsageError) as info:
        value_lots(Profile.from_oils(["rapeseed"]), **kwargs)
    assert str(info.value) == message


def test_assumptions_table_states_every_assumption_with_a_basis():
    a = assumptions(pretreat="acid", methanol_ratio=9)
    assert list(a.columns) == ["assumption", "value", "basis"]
    assert (a["basis"].str.len() > 0).all() and (a["value"].str.len() > 0).all()
    row = a.set_index("assumption")
    assert row.loc["methanol : triglyceride molar ratio", "value"] == "9 : 1"
    assert "esterified" in row.loc["FFA handling", "value"]
    assert row.loc["FFA limit for base catalysis alone", "basis"].startswith("MEMORY")
