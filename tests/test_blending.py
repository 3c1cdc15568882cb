"""Tests for estimator/blending.py: diesel descriptions, mixing rules, highest blend levels."""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from estimator import blend_targets as bt
from estimator import blending as b
from estimator.errors import InputFileError, UnknownNameError, UsageError
from estimator.profiles.profile import Profile, oil_names
from estimator.properties.cold_flow import (
    GAS_CONSTANT_J_MOL_K,
    imahara2006,
    saturated_mole_fractions,
)
from estimator.properties.predict import estimate
from estimator.tables import load_table, species_keys

KEYS = species_keys()
N = len(KEYS)


def _fame(values: dict, *, errors: dict | None = None, mm: float = 290.0, sample="F"):
    """A FameComponent with given neat values (no saturated esters: CP by the fallback)."""
    props = b.DIESEL_PROPERTIES
    x_sat, tm, dh = saturated_mole_fractions(np.zeros((1, N)) + 100.0 / N)
    return b.FameComponent(
        samples=[sample],
        values={p: np.array([float(values[p])]) for p in props},
        errors={p: np.array([float((errors or {}).get(p, 0.0))]) for p in props},
        methods={p: np.array(["given"]) for p in props},
        in_domain={p: np.array([True]) for p in props},
        mean_molar_mass_g_mol=np.array([mm]),
        saturated_mole_fraction=np.zeros_like(x_sat),
        melting_point_C=tm, enthalpy_fusion_kJ_mol=dh,
    )


def _diesel(**over) -> b.Diesel:
    values = {"density_15C_kg_m3": 840.0, "kin_viscosity_40C_mm2_s": 2.5, "cetane_number": 52.0,
              "hhv_MJ_kg": 45.7, "lhv_MJ_kg": 42.8, "cloud_point_C": -5.0, "cfpp_C": -15.0}
    values.update(over)
    return b.Diesel("test diesel (synthetic)", values)


def _neat(**over) -> dict:
    values = {"density_15C_kg_m3": 880.0, "kin_viscosity_40C_mm2_s": 4.5, "cetane_number": 55.0,
              "hhv_MJ_kg": 40.0, "lhv_MJ_kg": 37.4, "cloud_point_C": -3.0, "cfpp_C": -10.0}
    values.update(over)
    return values


def _value(fame, diesel, prop, level, method=None):
    method = method or b.BLEND_METHODS[prop][0]
    v, e = b.blend_arrays(fame, diesel, [level], methods="all")[prop, method]
    return float(v[0, 0]), float(e[0, 0])


# ---------------------------------------------------------------- diesel descriptions
def test_builtin_diesels_table_fingerprint():
    # Regression pin of the shipped table: schema, rows, sums (values: standards.md 5 / 3.4).
    table = load_table("diesels")
    assert list(table.columns) == ["diesel", "property", "value", "unit", "source"]
    assert len(table) == 16
    assert set(table["diesel"]) == {"en590-summer", "en590-winter"}
    assert table["value"].sum() == pytest.approx(2 * (836.6 + 2.6 + 52 + 45.76 + 42.78 + 200)
                                                 + (3 - 5) + (-5 - 15))
    assert table["source"].str.startswith("TYPICAL").all()


def test_builtin_winter_diesel_carries_the_uk_supplier_winter_limits():
    # UK winter EN 590 road diesel: CFPP max -15, cloud point max -5 (standards.md 3.4 [S21]).
    d = b.load_diesel("en590-winter")
    assert (d.value("cfpp_C"), d.value("cloud_point_C")) == (-15.0, -5.0)


def test_builtin_diesel_heating_values_are_the_greet_conventional_diesel():
    # GREET: LHV 42.78, HHV 45.76 MJ/kg, 3167 g/gal (standards.md 5, VERIFIED [S42]).
    d = b.load_diesel("en590-summer")
    assert d.value("lhv_MJ_kg") == 42.78 and d.value("hhv_MJ_kg") == 45.76
    assert d.value("density_15C_kg_m3") == pytest.approx(3167 / 3.78541, abs=0.05)


def test_read_diesel_json_with_errors_and_name(tmp_path):
    path = tmp_path / "d.json"
    values = dict(_diesel().values, name="depot", cfpp_C_error=1.5)
    path.write_text(json.dumps(values))
    d = b.read_diesel(path)
    assert d.name == "depot" and d.error("cfpp_C") == 1.5 and d.error("cetane_number") == 0.0
    assert d.mean_molar_mass_g_mol == 200.0  # MEMORY / common practice default


def test_read_diesel_one_row_csv(tmp_path):
    path = tmp_path / "d.csv"
    pd.DataFrame([_diesel().values]).to_csv(path, index=False)
    assert b.load_diesel(str(path)).value("density_15C_kg_m3") == 840.0


def test_diesel_missing_property_names_it_and_the_file(tmp_path):
    values = dict(_diesel().values)
    del values["cfpp_C"]
    path = tmp_path / "winter.json"
    path.write_text(json.dumps(values))
    with pytest.raises(InputFileError) as err:
        b.read_diesel(path)
    assert str(err.value) == (
        "winter.json: diesel description lacks 'cfpp_C' [°C]; it needs density_15C_kg_m3, "
        "kin_viscosity_40C_mm2_s, cetane_number, hhv_MJ_kg, lhv_MJ_kg, cloud_point_C, cfpp_C"
    )


def test_diesel_unknown_key_is_refused_with_the_valid_keys(tmp_path):
    path = tmp_path / "d.json"
    path.write_text(json.dumps(dict(_diesel().values, cfpp=-10)))
    with pytest.raises(InputFileError, match=r"^d\.json: unknown key 'cfpp'; a diesel file takes "
                                               r"density_15C_kg_m3, "):
        b.read_diesel(path)


def test_diesel_non_number_names_the_key(tmp_path):
    path = tmp_path / "d.json"
    path.write_text(json.dumps(dict(_diesel().values, cetane_number="high")))
    with pytest.raises(InputFileError) as err:
        b.read_diesel(path)
    assert str(err.value) == "d.json: key 'cetane_number': not a number: 'high'"


def test_diesel_csv_with_two_rows_is_refused(tmp_path):
    path = tmp_path / "d.csv"
    pd.DataFrame([_diesel().values, _diesel().values]).to_csv(path, index=False)
    with pytest.raises(InputFileError) as err:
        b.read_diesel(path)
    assert str(err.value) == "d.csv: a diesel CSV has one data row, found 2"


def test_unknown_diesel_name_lists_the_builtins():
    with pytest.raises(UnknownNameError) as err:
        b.load_diesel("arctic")
    assert str(err.value) == ("unknown diesel 'arctic'; use a built-in name (en590-summer, "
                              "en590-winter) or a .json/.csv file")


# ---------------------------------------------------------------- levels
def test_levels_accept_b_prefix_and_sort():
    assert b.parse_levels("B20, 5,b7").tolist() == [5.0, 7.0, 20.0]


@pytest.mark.parametrize("text, message", [
    ("0,5,120", "--levels: 120 is outside 0-100 % v/v"),
    ("-1", "--levels: -1 is outside 0-100 % v/v"),
    ("5,x", "--levels: 'x' is not a number (% v/v)"),
    (" , ", "--levels: give at least one blend level, e.g. 0,2,5,7,10,20"),
])
def test_levels_outside_range_or_not_numbers_are_refused(text, message):
    with pytest.raises(UsageError) as err:
        b.parse_levels(text)
    assert str(err.value) == message


# ---------------------------------------------------------------- mixing rules
def test_density_follows_kays_rule_by_volume():
    # Benjumea, Agudelo & Agudelo 2008, Fuel 87:2069 (correlations.md 7.3 [S27], VERIFIED):
    # Kay's rule on volume fractions. Hand arithmetic: 0.2 * 880 + 0.8 * 840 = 848.0.
    v, _ = _value(_fame(_neat()), _diesel(), "density_15C_kg_m3", 20.0)
    assert v == pytest.approx(848.0, abs=1e-9)


def test_viscosity_follows_the_arrhenius_rule_on_mass_fractions():
    # Benjumea 2008 [S27]: Arrhenius (logarithmic) rule. Hand arithmetic at B20:
    # w = 176 / 848 = 0.207547; ln nu = 0.207547 ln 4.5 + 0.792453 ln 2.5
    #   = 0.312167 + 0.726118 = 1.038285; nu = 2.8244 mm2/s.
    v, _ = _value(_fame(_neat()), _diesel(), "kin_viscosity_40C_mm2_s", 20.0)
    assert v == pytest.approx(2.8244, abs=5e-4)


def test_viscosity_mole_fraction_variant_uses_the_diesel_molar_mass():
    # Same rule on mole fractions (our arithmetic): x = (w/290) / (w/290 + (1-w)/200)
    # = 7.1568e-4 / 4.67794e-3 = 0.152991; ln nu = 0.230110 + 0.776106 = 1.006216;
    # nu = 2.7352 mm2/s.
    v, _ = _value(_fame(_neat()), _diesel(), "kin_viscosity_40C_mm2_s", 20.0, "arrhenius-mole")
    assert v == pytest.approx(2.7352, abs=5e-4)


def test_heating_value_per_kg_is_mass_weighted_and_per_litre_volume_weighted():
    # standards.md 5 blend rule (DERIVED): LHV/kg = sum w_i LHV_i; MJ/L = sum phi_i rho_i LHV_i.
    fame, diesel = _fame(_neat()), _diesel()
    lhv, _ = _value(fame, diesel, "lhv_MJ_kg", 20.0)
    per_l, _ = _value(fame, diesel, "lhv_MJ_L", 20.0)
    w = 176.0 / 848.0
    assert lhv == pytest.approx(w * 37.4 + (1 - w) * 42.8, abs=1e-12)
    assert per_l == pytest.approx((0.2 * 880 * 37.4 + 0.8 * 840 * 42.8) / 1000, abs=1e-12)


@pytest.mark.parametrize("diesel_lhv, diesel_rho, low, high", [
    (42.78, 836.6, 1.35, 1.45),  # conventional diesel: DERIVED -1.4 %
    (42.60, 846.9, 1.45, 1.55),  # low-sulphur diesel: DERIVED -1.5 %
])
def test_b20_volumetric_energy_is_about_one_and_a_half_percent_below_diesel(
        diesel_lhv, diesel_rho, low, high):
    # standards.md 5 (GREET [S42]; B100 887.9 kg/m3, 37.52 MJ/kg): B20 is 1.4-1.5 % lower per
    # volume (DERIVED); US DOE: "a 1 to 2 % difference" for B20 [S43].
    fame = _fame(_neat(density_15C_kg_m3=887.9, lhv_MJ_kg=37.52))
    diesel = _diesel(density_15C_kg_m3=diesel_rho, lhv_MJ_kg=diesel_lhv)
    b20, _ = _value(fame, diesel, "lhv_MJ_L", 20.0)
    b0, _ = _value(fame, diesel, "lhv_MJ_L", 0.0)
    drop_pct = 100 * (1 - b20 / b0)
    assert low <= drop_pct <= high
    assert 1.0 <= drop_pct <= 2.0


def test_cetane_number_is_linear_by_volume():
    # Linear by volume, labelled approximate (common practice): 0.1 * 55 + 0.9 * 52 = 52.3.
    v, _ = _value(_fame(_neat()), _diesel(), "cetane_number", 10.0)
    assert v == pytest.approx(52.3, abs=1e-12)


def test_cloud_point_of_one_saturated_ester_follows_ideal_solubility_in_the_blend():
    # Schroeder-van Laar ideal solubility (correlations.md 6.3, form MEMORY), by hand:
    # pure methyl palmitate FAME (Tm 29.6 degC, dHfus 55.0 kJ/mol from species.csv) at mole
    # fraction x in the blend: 1/T = 1/302.75 - R ln(x) / 55000.
    w = np.zeros((1, N))
    w[0, KEYS.index("C16:0")] = 100.0
    fame = b.fame_component(w, ["palmitate"])
    diesel = _diesel(cloud_point_C=-30.0)
    _, _, x = b.blend_fractions(50.0, fame.values["density_15C_kg_m3"][0], 840.0,
                                fame.mean_molar_mass_g_mol[0], 200.0)
    expected = 1.0 / (1.0 / 302.75 - GAS_CONSTANT_J_MOL_K * np.log(x) / 55000.0) - 273.15
    v, _ = _value(fame, diesel, "cloud_point_C", 50.0)
    assert v == pytest.approx(expected, abs=1e-9)


def test_diesel_wax_liquidus_is_diluted_by_the_fame():
    # Same ideal-solubility form for the diesel's wax (effective dHfus 60 kJ/mol, MEMORY):
    # a FAME without saturated esters at B20 lowers a -5 degC diesel cloud point (by hand).
    fame = _fame(_neat(cloud_point_C=-60.0))
    diesel = _diesel()
    _, _, x = b.blend_fractions(20.0, 880.0, 840.0, 290.0, 200.0)
    expected = 1.0 / (1.0 / 268.15 - GAS_CONSTANT_J_MOL_K * np.log(1 - x) / 60000.0) - 273.15
    v, _ = _value(fame, diesel, "cloud_point_C", 20.0)
    assert v == pytest.approx(expected, abs=1e-9)
    assert v < -5.0


def test_linear_cfpp_rule_never_leaves_the_range_of_its_components():
    # The default CFPP rule is linear by volume (empirical, common practice): between ends.
    fame, diesel = _fame(_neat(cfpp_C=5.0)), _diesel()
    v = b.blend_arrays(fame, diesel, np.linspace(0, 100, 41))["cfpp_C", "linear-volume"][0]
    assert (v >= -15.0 - 1e-12).all() and (v <= 5.0 + 1e-12).all()


def test_rule_error_vanishes_at_both_ends_and_peaks_at_b50():
    fame, diesel = _fame(_neat()), _diesel()
    errs = [_value(fame, diesel, "cetane_number", lv)[1] for lv in (0, 50, 100)]
    assert errs[0] == 0.0 and errs[2] == 0.0
    assert errs[1] == pytest.approx(2.0, abs=1e-12)  # RULE_ERRORS cetane 2 units at B50


# ---------------------------------------------------------------- invariants
_profiles = st.lists(st.floats(0.0, 1.0), min_size=N, max_size=N).filter(lambda v: sum(v) > 0.05)
_diesels = st.fixed_dictionaries({
    "density_15C_kg_m3": st.floats(800, 860), "kin_viscosity_40C_mm2_s": st.floats(1.3, 4.5),
    "cetane_number": st.floats(40, 60), "hhv_MJ_kg": st.floats(45, 46.5),
    "lhv_MJ_kg": st.floats(42, 43.5), "cloud_point_C": st.floats(-35, 10),
    "cfpp_C": st.floats(-45, 0),
})


@settings(max_examples=40, deadline=None)
@given(raw=_profiles, dv=_diesels)
def test_b0_and_b100_reproduce_the_diesel_and_the_neat_fame(raw, dv):
    # By definition of BXX (ASTM D6751 terminology, standards.md 5 [S48]); synthetic profiles.
    w = np.asarray(raw)[None, :] * 100.0 / sum(raw)
    fame = b.fame_component(w, ["S"])
    diesel = b.Diesel("synthetic", dv)
    neat = estimate(w, ["S"]).set_index("property")["value"]
    arrays = b.blend_arrays(fame, diesel, [0.0, 100.0], methods="all")
    for (prop, _method), (value, _err) in arrays.items():
        if prop == "lhv_MJ_L":
            b0 = dv["density_15C_kg_m3"] * dv["lhv_MJ_kg"] / 1000
            b100 = neat["density_15C_kg_m3"] * neat["lhv_MJ_kg"] / 1000
        else:
            b0, b100 = dv[prop], neat[prop]
        assert value[0, 0] == pytest.approx(b0, rel=1e-12, abs=1e-9)
        if np.isfinite(b100):
            assert value[0, 1] == pytest.approx(b100, rel=1e-12, abs=1e-9)


@settings(max_examples=40, deadline=None)
@given(raw=_profiles, dv=_diesels)
def test_properties_move_monotonically_with_blend_level_where_the_rule_is_monotone(raw, dv):
    # Linear and log-linear rules in phi, w or x are monotone between their ends (maths);
    # the ideal-solubility cloud point is not (it has a eutectic-like minimum), so not here.
    w = np.asarray(raw)[None, :] * 100.0 / sum(raw)
    fame = b.fame_component(w, ["S"])
    diesel = b.Diesel("synthetic", dv)
    grid = np.linspace(0, 100, 51)
    arrays = b.blend_arrays(fame, diesel, grid, methods="all")
    for key in [("density_15C_kg_m3", "kay-volume"), ("kin_viscosity_40C_mm2_s", "arrhenius-mass"),
                ("kin_viscosity_40C_mm2_s", "arrhenius-mole"), ("cetane_number", "linear-volume"),
                ("hhv_MJ_kg", "mass-weighted"), ("lhv_MJ_kg", "mass-weighted"),
                ("cfpp_C", "linear-volume"), ("cloud_point_C", "kay-volume")]:
        v = arrays[key][0][0]
        if not np.isfinite(v).all():
            continue
        step = np.diff(v)
        direction = np.sign(v[-1] - v[0])
        assert (direction * step >= -1e-9 * (1 + np.abs(v).max())).all(), key


def test_moser_2014_b1_b2_cold_flow_is_nearly_that_of_the_diesel_whatever_the_fame():
    # Moser 2014, Fuel 115:500 (from memory): at B1-B2 the blend's cloud point and CFPP are
    # nearly those of the diesel whatever the FAME. Checked over every built-in oil and both
    # built-in diesels; "nearly" taken as within 1 K (our tolerance).
    profile = Profile.from_oils(oil_names())
    fame = b.fame_component(profile.wt_pct, profile.samples)
    for name in b.diesel_names():
        diesel = b.load_diesel(name)
        wide = b.blend_wide(fame, diesel, [1.0, 2.0])
        assert (wide["cloud_point_C"] - diesel.value("cloud_point_C")).abs().max() <= 1.0
        assert (wide["cfpp_C"] - diesel.value("cfpp_C")).abs().max() <= 1.0


def test_b100_of_a_profile_equals_the_predict_default_estimate():
    profile = Profile.from_oils(["rapeseed", "palm"])
    fame = b.fame_component(profile.wt_pct, profile.samples)
    wide = b.blend_wide(fame, b.load_diesel("en590-winter"), [100.0])
    neat = estimate(profile.wt_pct, profile.samples)
    cp = neat[neat["property"] == "cloud_point_C"]["value"].to_numpy()
    assert wide["cloud_point_C"].to_numpy() == pytest.approx(cp, rel=1e-12)
    # and the thermodynamic default is imahara2006 itself (correlations.md 6.3)
    assert cp == pytest.approx(imahara2006(*saturated_mole_fractions(profile.wt_pct)))


# ---------------------------------------------------------------- tables
def test_long_table_has_the_predict_columns_plus_level():
    profile = Profile.from_oils(["soybean"])
    fame = b.fame_component(profile.wt_pct, profile.samples)
    long = b.blend_table(fame, b.load_diesel("en590-summer"), [0, 7, 20], methods="all")
    assert list(long.columns) == ["sample", "level_pct_v", "fame_wt_pct", "property", "method",
                                  "value", "unit", "error", "in_domain", "note"]
    assert len(long) == 3 * sum(len(m) for m in b.BLEND_METHODS.values())
    assert long["level_pct_v"].is_monotonic_increasing


def test_wide_table_has_value_and_error_columns_per_property():
    profile = Profile.from_oils(["soybean", "palm"])
    fame = b.fame_component(profile.wt_pct, profile.samples)
    wide = b.blend_wide(fame, b.load_diesel("en590-summer"), [0, 20])
    for prop in b.BLEND_PROPERTIES:
        assert prop in wide and f"{prop}_error" in wide
    assert wide["sample"].tolist() == ["soybean", "soybean", "palm", "palm"]


# ---------------------------------------------------------------- targets and levels
def test_climate_class_f_sets_the_en590_cfpp_target():
    # EN 590 grade F: CFPP max -20 degC (standards.md 3.4, VERIFIED [S18]).
    (target,) = bt.blend_targets(climate_class="F", specs=())
    assert (target.property, target.kind, target.limit) == ("cfpp_C", "max", -20.0)


def test_arctic_class_2_also_sets_a_cloud_point_target():
    # EN 590 arctic class 2: CFPP max -32, cloud point max -22 (standards.md 3.4 [S19][S17]).
    got = {(t.property, t.limit) for t in bt.blend_targets(climate_class="2", specs=())}
    assert got == {("cfpp_C", -32.0), ("cloud_point_C", -22.0)}


def test_contradictory_cfpp_target_and_climate_class_are_refused():
    with pytest.raises(UsageError) as err:
        bt.blend_targets(max_cfpp_C=-10, climate_class="F")
    assert str(err.value) == ("--max-cfpp -10 contradicts --climate-class F (EN 590 cfpp_C "
                              "max -20 °C); give one")


def test_unknown_blend_specification_lists_the_valid_ones():
    with pytest.raises(UnknownNameError) as err:
        bt.blend_targets(specs=["en14214"])
    assert str(err.value) == ("unknown blend specification 'en14214'; blend specifications: "
                              "en590, astm-d7467")


def test_blend_spec_groups_carry_their_fame_content():
    # EN 590 up to 7 % V/V (standards.md 3.3 [S20]); D7467 B6-B20 (3.2 [S12]).
    targets = bt.blend_targets()
    en590 = {(t.max_level_pct_v, t.min_level_pct_v) for t in targets if t.group == "en590"}
    d7467 = {(t.max_level_pct_v, t.min_level_pct_v) for t in targets if t.group == "astm-d7467"}
    assert en590 == {(7.0, 0.0)} and d7467 == {(20.0, 6.0)}


def test_vectorised_bisection_finds_the_same_levels_as_scipy_brentq():
    # reference library: scipy.optimize.brentq on the same continuous blend curves, per FAME
    from scipy.optimize import brentq

    profile = Profile.from_oils(["rapeseed", "soybean", "palm", "beef-tallow", "coconut"])
    fame = b.fame_component(profile.wt_pct, profile.samples)
    diesel = b.load_diesel("en590-winter")
    targets = [bt.Target("cloud_point_C", "max", -3.0, "CP <= -3"),
               bt.Target("density_15C_kg_m3", "max", 845.0, "density <= 845")]
    levels = bt.highest_levels(fame, diesel, targets)
    for t in targets:
        for i, sample in enumerate(fame.samples):
            one = bt._take(fame, [i])

            def g(level, one=one, t=t):
                v = b.blend_arrays(one, diesel, [level], only=t.property)[
                    t.property, b.BLEND_METHODS[t.property][0]][0][0, 0]
                return v - t.limit

            row = levels[(levels["sample"] == sample) & (levels["target"] == t.label)].iloc[0]
            if row["how"] != "root of the blend curve":
                continue
            grid = np.linspace(0, 100, 101)
            j = int(np.argmax([g(x) > 0 for x in grid]))
            expected = brentq(g, grid[j - 1], grid[j], xtol=1e-9)
            assert row["highest_level_pct_v"] == pytest.approx(expected, abs=1e-4)


def test_the_blend_level_search_never_imports_a_root_finder():
    # regression (speed issue): the level search is NumPy only, so 'blend' starts fast
    import subprocess
    import sys

    code = ("import sys; from estimator import blend_targets as bt, blending as b; "
            "from estimator.profiles.profile import Profile; "
            "p = Profile.from_oils(['rapeseed']); f = b.fame_component(p.wt_pct, p.samples); "
            "bt.highest_levels(f, b.load_diesel('en590-winter'), bt.blend_targets()); "
            "print('scipy' in sys.modules)")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          check=True)
    assert done.stdout.strip() == "False"


def test_highest_level_is_the_root_of_the_continuous_blend_curve():
    # Consistency (our arithmetic): the bisection level lies on the target and matches the
    # first crossing of a dense 0.001 % v/v grid; every lower level meets the target.
    fame, diesel = _fame(_neat(cfpp_C=5.0)), _diesel(cfpp_C=-24.0)
    target = bt.Target("cfpp_C", "max", -20.0, "CFPP <= -20")
    row = bt.highest_levels(fame, diesel, [target]).iloc[0]
    level = row["highest_level_pct_v"]
    assert level == pytest.approx(100 * 4.0 / 29.0, abs=1e-5)  # linear: -24 + 29 phi = -20
    dense = np.linspace(0, 100, 100001)
    v = b.blend_arrays(fame, diesel, dense, only="cfpp_C")["cfpp_C", "linear-volume"][0][0]
    assert dense[np.argmax(v > -20.0)] == pytest.approx(level, abs=2e-3)
    assert row["highest_level_with_error_pct_v"] < level  # the error taken against it


def test_highest_level_when_the_diesel_alone_misses_the_target():
    fame, diesel = _fame(_neat()), _diesel(cfpp_C=-15.0)
    row = bt.highest_levels(fame, diesel, [bt.Target("cfpp_C", "max", -20.0, "t")]).iloc[0]
    assert np.isnan(row["highest_level_pct_v"]) and row["how"] == "the diesel alone misses it"


def test_highest_level_for_a_specification_is_capped_at_its_fame_content():
    # EN 590 allows at most B7 (standards.md 3.3 [S20]) even when every limit holds beyond.
    profile = Profile.from_oils(["rapeseed"])
    fame = b.fame_component(profile.wt_pct, profile.samples)
    levels = bt.highest_levels(fame, b.load_diesel("en590-summer"), bt.blend_targets())
    en590 = levels[(levels["group"] == "en590") & (levels["property"] == "all")].iloc[0]
    assert en590["highest_level_pct_v"] == 7.0
    assert en590["how"].startswith("capped at the B7 the specification allows")


def test_summary_table_gives_the_highest_level_per_target_and_the_cautious_one():
    fame, diesel = _fame(_neat(cfpp_C=5.0)), _diesel(cfpp_C=-24.0)
    table = bt.summary_table(bt.highest_levels(
        fame, diesel, [bt.Target("cfpp_C", "max", -20.0, "CFPP <= -20 °C")]))
    assert list(table.columns) == ["sample", "CFPP <= -20 °C"]
    assert table.loc[0, "CFPP <= -20 °C"].startswith("B13.8 (B")


@pytest.mark.parametrize("oil", ["rapeseed", "soybean", "palm", "beef-tallow", "coconut"])
def test_default_blend_cloud_point_never_credits_dilution_of_the_diesel_wax(oil):
    # Moser 2014, Fuel 115:500 (from memory): at B1-B2 a blend clouds like its diesel,
    # whatever the FAME; the default rule is floored at the linear rule by volume
    # (Benjumea et al. 2008, Fuel 87:2069), so no blend reads below both components.
    from estimator.profiles.profile import Profile

    p = Profile.from_oils([oil])
    fame = b.fame_component(p.wt_pct, p.samples)
    diesel = b.load_diesel("en590-winter")
    levels = np.linspace(0, 100, 41)
    wide = b.blend_wide(fame, diesel, levels)
    cp = wide["cloud_point_C"].to_numpy()
    cp_f, cp_d = cp[-1], cp[0]
    linear = (levels / 100) * cp_f + (1 - levels / 100) * cp_d  # volume fractions
    assert (cp >= linear - 1e-9).all()
    assert (cp >= min(cp_f, cp_d) - 1e-9).all()



# ---------------------------------------------------------------- FAME standard of a blend spec
def _spec_row(fame, diesel, spec):
    levels = bt.highest_levels(fame, diesel, bt.blend_targets(specs=[spec]))
    return levels[(levels["group"] == spec) & (levels["property"] == "all")].iloc[0]


def _with(fame, standard, limits):
    from dataclasses import replace

    return replace(fame, conformity={standard: (b.FameConformity(standard, limits),)})


def test_a_fame_not_checked_against_its_standard_gets_no_specification_level():
    # EN 590: FAME component shall meet EN 14214 (from the standard's scope, EN 590:2022,
    # standards.md 3.3 [S20]): a FAME nobody checked cannot be admitted
    row = _spec_row(_fame(_neat()), _diesel(), "en590")
    assert np.isnan(row["highest_level_pct_v"]) and np.isnan(row["highest_level_with_error_pct_v"])
    assert row["reason"] == "FAME not checked against the FAME standard EN 590 requires"


def test_a_fame_outside_its_methods_range_on_a_d6751_limit_gets_no_d7467_level():
    # ASTM D7467: the B100 blend stock shall meet ASTM D6751 (from the standard's scope, as
    # reported in standards.md 2 [S8][S14]); an estimate outside its method's range cannot
    # show that it does
    fame = _with(_fame(_neat()), "astm-d6751", (("cetane_number", "outside method range"),))
    row = _spec_row(fame, _diesel(), "astm-d7467")
    assert np.isnan(row["highest_level_pct_v"])
    assert row["reason"] == ("FAME not judged on ASTM D6751 (cetane number: outside the fitted "
                             "range of the method)")


def test_a_limit_too_close_to_call_keeps_the_level_but_not_the_cautious_one():
    # our rule: the cautious level takes the stated error against the FAME's standard too
    fame = _with(_fame(_neat()), "en14214", (("cetane_number", "too close to call"),))
    row = _spec_row(fame, _diesel(), "en590")
    assert row["highest_level_pct_v"] == 7.0  # EN 590 allows up to B7 (standards.md 3.3)
    assert np.isnan(row["highest_level_with_error_pct_v"])
    assert row["reason"] == "cetane number too close to call on EN 14214"
    cell = bt.summary_table(bt.highest_levels(fame, _diesel(), bt.blend_targets(
        specs=["en590"]))).loc[0, "EN 590"]
    assert cell == "B7.0 (none): cetane number too close to call on EN 14214"


def test_b100_cfpp_failing_the_climate_class_is_listed_but_not_counted():
    # EN 590 grade F sets the blend's CFPP <= -20 °C (standards.md 3.4); the neat FAME's own
    # EN 14214 CFPP is replaced by it for a blend, and the output says so beside the level
    fame = _with(_fame(_neat(cfpp_C=-10.0)), "en14214", (("cfpp_C", "fails"),))
    levels = bt.highest_levels(fame, _diesel(cfpp_C=-24.0),
                               bt.blend_targets(climate_class="F", specs=["en590"]))
    row = levels[(levels["group"] == "en590") & (levels["property"] == "all")].iloc[0]
    assert row["highest_level_pct_v"] == 7.0
    assert row["reason"] == ("B100 CFPP fails EN 14214 (not counted: the blend's CFPP is "
                             "checked instead)")


def test_fame_component_checks_the_climate_class_cfpp_of_en14214_only_when_given():
    # rapeseed FAME: CFPP about -10 °C (common practice), so it fails EN 14214 arctic class 4
    # (-44 °C, standards.md 1.2, assumed equal to EN 590's) but is not judged without a class
    profile = Profile.from_oils(["rapeseed"])
    plain = b.fame_component(profile.wt_pct, profile.samples)
    graded = b.fame_component(profile.wt_pct, profile.samples, climate_class="4")
    assert "cfpp_C" not in dict(plain.conformity["en14214"][0].limits)
    assert dict(graded.conformity["en14214"][0].limits)["cfpp_C"] == "fails"
    assert "cfpp_C" not in dict(graded.conformity["astm-d6751"][0].limits)  # no CFPP limit
