"""Reference tables (estimator/tables/*.csv): the checks of scripts/validate_tables.py,
a fingerprint per table, and limits and values checked against outside sources."""

from __future__ import annotations

import copy
import csv
import importlib.util
import shutil
import sys
from pathlib import Path

import numpy as np
import pytest

from estimator.tables import composition_row, load_table, species_keys

SCRIPT = Path(__file__).resolve().parents[1] / "scripts" / "validate_tables.py"


def _load_validator():
    spec = importlib.util.spec_from_file_location("validate_tables", SCRIPT)
    module = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = module  # dataclasses look their module up here
    spec.loader.exec_module(module)
    return module


vt = _load_validator()
TABLES = {name: vt.read_table(name) for name in vt.TABLE_NAMES}


def table(name: str):
    """A private copy of a table, safe to modify."""
    return copy.deepcopy(TABLES[name])


def row_of(t, key: str) -> dict[str, str]:
    col = vt.ROW_KEY[t.name]
    return next(r for r in t.rows if r[col] == key)


# ---------------------------------------------------------- the validator's checks
@pytest.mark.parametrize("name", vt.TABLE_NAMES)
def test_table_has_the_columns_the_package_reads(name):
    assert vt.check_required(TABLES[name]) == []


SOURCE_CELLS = [
    pytest.param(name, col, id=f"{name}-{col}")
    for name in vt.TABLE_NAMES for col in vt.source_columns(TABLES[name])
]


@pytest.mark.parametrize(("name", "column"), SOURCE_CELLS)
def test_source_column_has_no_empty_cell(name, column):
    # house rule: every row has a source (style.md 5.7)
    assert vt.check_sources(TABLES[name], [column]) == []


def test_every_table_has_a_source_column():
    for name in vt.TABLE_NAMES:
        assert "source" in vt.source_columns(TABLES[name]), name


def test_species_derived_columns_match_the_build_script():
    # the build script's own check (python scripts/build_species_table.py reports 0 differences)
    assert vt.check_species_derived(TABLES["species"]) == []


def test_species_structure_and_values_are_numeric_and_keys_unique():
    t = TABLES["species"]
    assert vt.check_numeric(t, vt.SPECIES_INT, blank_ok=False, integer=True) == []
    assert vt.check_numeric(t, vt.SPECIES_FLOAT) == []
    assert vt.check_unique(t, ["key"]) == []


def test_species_check_reports_only_the_melting_source_gap():
    # everything check_species finds, apart from the known gap (see MELTING_GAP)
    problems = vt.check_species(TABLES["species"]).problems
    assert [p for p in problems if not p.startswith("species.csv: melting_source empty")] == []


@pytest.mark.parametrize("name", ["feedstocks", "feedstock_ranges", "specs", "diesels"])
def test_validator_finds_no_problem_in_table(name):
    result = dict(zip(vt.TABLE_NAMES, vt.validate(), strict=True))[name]
    assert result.problems == []


def test_feedstock_species_columns_are_species_keys():
    keys = {r["key"] for r in TABLES["species"].rows}
    assert set(vt.profile_columns(TABLES["feedstocks"])) <= keys


def test_feedstock_profiles_sum_to_100_and_safflower_is_the_reported_exception():
    problems, notes = vt.check_profile_sums(TABLES["feedstocks"])
    assert problems == []
    # Maternal & Child Nutrition 2011 Table 2 [standards.md S27]: 7 + 2 + 19 + 75 = 103
    assert notes == ["known exception: safflower sums to 103 (rounding in Maternal & Child "
                     "Nutrition 2011 Table 2 [standards.md S27])"]


@pytest.mark.parametrize("name", ["feedstocks", "feedstock_ranges"])
def test_feedstock_table_equals_what_its_build_script_writes(name):
    assert vt.check_matches_feedstock_build(name) == []


def test_range_quantities_are_species_keys_or_the_oil_iodine_value():
    keys = {r["key"] for r in TABLES["species"].rows}
    quantities = {r["quantity"] for r in TABLES["feedstock_ranges"].rows}
    assert quantities - keys == {"iodine_value_oil"}


# ---------------------------------------------------------- the checks catch faults
def test_profile_sum_check_names_the_oil_and_the_sum():
    t = table("feedstocks")
    row_of(t, "soybean")["C18:2"] = "60.0"  # 54.3 -> 60.0: sum 105.7
    problems, _ = vt.check_profile_sums(t)
    assert problems == ["feedstocks.csv row 2 (soybean): species + other sum to 105.7, "
                        "not 100 +- 0.5"]


def test_safflower_exception_holds_only_for_its_documented_sum():
    t = table("feedstocks")
    row_of(t, "safflower")["C18:2"] = "72"  # now sums to 100, not the documented 103
    problems, notes = vt.check_profile_sums(t)
    assert problems == ["feedstocks.csv row 14 (safflower): sums to 100, "
                        "the known exception is 103"]
    assert notes == []


def test_feedstock_column_unknown_to_species_table_is_reported():
    t = table("feedstocks")
    t.fields[t.fields.index("C24:0")] = "C26:0"
    problems = vt.check_feedstocks(t, TABLES["species"]).problems
    assert "feedstocks.csv: columns not in species.csv: C26:0" in problems


def test_empty_source_cell_is_reported_with_its_row():
    t = table("diesels")
    t.rows[3]["source"] = " "
    assert vt.check_sources(t) == ["diesels.csv: source empty in 1 rows: row 5 (en590-summer)"]


def test_species_derived_mismatch_is_reported():
    t = table("species")
    row_of(t, "C16:0")["fame_molar_mass_g_mol"] = "270.000"
    assert vt.check_species_derived(t) == [
        "species.csv row 9 (C16:0): fame_molar_mass_g_mol is '270.000', "
        "build_species_table.py derives '270.457'"]


def test_range_with_min_above_max_and_unknown_species_is_reported():
    t = table("feedstock_ranges")
    t.rows[0]["min"], t.rows[0]["max"] = "13.5", "8.0"
    t.rows[1]["quantity"] = "C19:0"
    problems = vt.check_ranges(t, TABLES["species"], TABLES["feedstocks"]).problems
    assert "feedstock_ranges.csv row 2 (soybean): C16:0 min 13.5 > max 8" in problems
    assert ("feedstock_ranges.csv row 3 (soybean): quantity 'C19:0' is neither a species.csv "
            "key nor one of iodine_value_oil") in problems


def test_typical_profile_outside_its_own_range_is_reported():
    t = table("feedstocks")
    row_of(t, "palm")["C16:0"] = "50.0"  # Codex palm C16:0 39.3-47.5
    problems = vt.check_ranges(TABLES["feedstock_ranges"], TABLES["species"], t).problems
    assert problems == ["feedstock_ranges.csv row 24 (palm): typical palm C16:0 50 in "
                        "feedstocks.csv lies outside its range 39.3-47.5"]


def test_spec_row_with_two_bounds_or_unknown_property_or_unit_is_reported():
    t = table("specs")
    t.rows[0]["max"] = "900"
    t.rows[1]["property"] = "flash_point_C"
    t.rows[2]["unit"] = "cSt"
    t.rows[3]["min"] = "3,5"
    problems = vt.check_specs(t).problems
    assert "specs.csv row 2 (en14214): density_15C_kg_m3 has 2 bounds, expected exactly one" \
        in problems
    assert "specs.csv row 3 (en14214): unknown property 'flash_point_C'" in problems
    assert ("specs.csv row 4 (en14214): kin_viscosity_40C_mm2_s unit 'cSt', the registry says "
            "'mm2/s'") in problems
    assert "specs.csv row 5 (en14214): min '3,5' is not a number" in problems


def test_diesel_value_outside_its_band_and_swapped_heating_values_are_reported():
    t = table("diesels")
    row_of(t, "en590-summer")["value"] = "950"  # density row
    winter = [r for r in t.rows if r["diesel"] == "en590-winter"]
    hhv = next(r for r in winter if r["property"] == "hhv_MJ_kg")
    lhv = next(r for r in winter if r["property"] == "lhv_MJ_kg")
    hhv["value"], lhv["value"] = lhv["value"], hhv["value"]
    problems = vt.check_diesels(t).problems
    assert ("diesels.csv row 2 (en590-summer): density_15C_kg_m3 950 outside the plausible "
            "780-880") in problems
    assert ("diesels.csv: en590-winter HHV - LHV = -2.98 MJ/kg, outside 2.4-3.3") in problems


def _copy_tables(tmp_path: Path) -> Path:
    for name in vt.TABLE_NAMES:
        shutil.copy(vt.TABLES / f"{name}.csv", tmp_path / f"{name}.csv")
    return tmp_path


def _fill_melting_sources(directory: Path) -> None:
    t = vt.read_table("species", directory)
    for r in t.rows:
        r["melting_source"] = r["melting_source"] or "none; test fill"
    with (directory / "species.csv").open("w", newline="", encoding="utf-8") as fh:
        w = csv.DictWriter(fh, fieldnames=t.fields, lineterminator="\n")
        w.writeheader()
        w.writerows(t.rows)


def test_validator_prints_one_line_per_table_and_exits_0_when_clean(tmp_path, capsys):
    directory = _copy_tables(tmp_path)
    _fill_melting_sources(directory)
    assert vt.main(directory) == 0
    lines = capsys.readouterr().out.splitlines()
    assert [line.split(":")[0] for line in lines] == [f"{n}.csv" for n in vt.TABLE_NAMES]
    assert lines[0] == "species.csv: 32 rows OK (build_species_table.py: 0 derived cells differ)"
    assert lines[4] == "diesels.csv: 16 rows OK"


def test_validator_exits_1_with_a_one_line_reason(tmp_path, capsys):
    directory = _copy_tables(tmp_path)
    _fill_melting_sources(directory)
    text = (directory / "diesels.csv").read_text(encoding="utf-8")
    (directory / "diesels.csv").write_text(text.replace(",836.6,", ",1836.6,", 1),
                                           encoding="utf-8")
    assert vt.main(directory) == 1
    out = capsys.readouterr().out.splitlines()
    assert out[4:6] == [
        "diesels.csv: 16 rows, 1 problem",
        "  diesels.csv row 2 (en590-summer): density_15C_kg_m3 1836.6 outside the plausible "
        "780-880",
    ]


def test_validation_row_with_unknown_species_bad_range_or_method_is_reported():
    t = table("validation_feedstocks")
    t.rows[0]["composition"] = "mix:C18:1=50;C99:0=50"
    t.rows[1]["value"] = "99"  # not the midpoint of 48.0-61.2
    t.rows[2]["used_by"] = "nosuchmethod"
    t.rows[3]["mark"] = "GUESS"
    problems = vt.check_validation(t, TABLES["species"], TABLES["feedstocks"]).problems
    assert problems == [
        "validation_feedstocks.csv row 2 (soybean FAME cetane range): unknown species 'C99:0'",
        "validation_feedstocks.csv row 3 (rapeseed FAME cetane range): value 99 is not the "
        "range midpoint 54.6",
        "validation_feedstocks.csv row 4 (coconut FAME cetane trade range): used_by "
        "'nosuchmethod' is not a cetane_number method",
        "validation_feedstocks.csv row 5 (soybean-like ester mixture density thermo): mark "
        "'GUESS' is not one of VERIFIED, MEMORY",
    ]


# ---------------------------------------------------------- fingerprints
FINGERPRINTS = {
    # name: (rows, columns, {numeric column: sum})
    "species": (32, [
        "key", "carbons", "double_bonds", "trans", "hydroxyl", "delta", "common_name",
        "systematic_name", "fame_name", "cas", "synonyms", "acid_formula", "fame_formula",
        "acid_molar_mass_g_mol", "fame_molar_mass_g_mol", "allylic_positions",
        "bis_allylic_positions", "source", "cetane_number", "cetane_source", "melting_point_C",
        "melting_source", "enthalpy_fusion_kJ_mol", "fusion_source", "kin_viscosity_40C_mm2_s",
        "viscosity_source", "hhv_MJ_kg", "hhv_source"],
        {"carbons": 561.0, "double_bonds": 47.0, "trans": 1.0, "hydroxyl": 1.0,
         "acid_molar_mass_g_mol": 8814.33, "fame_molar_mass_g_mol": 9263.194,
         "allylic_positions": 40.0, "bis_allylic_positions": 25.0, "cetane_number": 774.8,
         "melting_point_C": 152.6, "enthalpy_fusion_kJ_mol": 616.2,
         "kin_viscosity_40C_mm2_s": 62.68, "hhv_MJ_kg": 584.062}),
    "feedstocks": (22, [
        "oil", "feedstock", "C8:0", "C10:0", "C12:0", "C14:0", "C16:0", "C16:1", "C18:0",
        "C18:1", "C18:2", "C18:3", "C20:0", "C20:1", "C22:0", "C22:1", "C24:0", "other",
        "basis", "source"],
        {"C8:0": 10.3, "C10:0": 9.4, "C12:0": 97.1, "C14:0": 46.3, "C16:0": 289.6,
         "C16:1": 22.3, "C18:0": 118.3, "C18:1": 832.0, "C18:2": 526.9, "C18:3": 120.0,
         "C20:0": 8.7, "C20:1": 23.1, "C22:0": 3.5, "C22:1": 50.5, "C24:0": 1.0,
         "other": 44.0}),
    "feedstock_ranges": (69, ["oil", "quantity", "min", "max", "source"],
                         {"min": 2203.8, "max": 3058.5}),
    "specs": (74, ["spec", "property", "climate_class", "min", "max", "unit",
                   "exact_from_composition", "edition", "test_method", "mark", "source"],
              {"min": 6232.9, "max": 5607.6}),
    "diesels": (16, ["diesel", "property", "value", "unit", "source"], {"value": 2337.48}),
    "validation_pure_esters": (67, vt.VALIDATION_COLUMNS,
                               {"value": 6499.1, "range_low": 0.0, "range_high": 0.2}),
    "validation_feedstocks": (19, vt.VALIDATION_COLUMNS,
                              {"value": 2135.224, "range_low": 1123.3, "range_high": 1369.8,
                               "used_by": 0.0}),
}


@pytest.mark.parametrize("name", vt.TABLE_NAMES)
def test_table_fingerprint_rows_schema_and_column_sums(name):
    # regression pin (fingerprint), not validation: a deliberate table edit updates these
    rows, columns, sums = FINGERPRINTS[name]
    t = load_table(name)
    assert len(t) == rows
    assert list(t.columns) == columns
    numeric = t.select_dtypes("number")
    assert sorted(numeric.columns) == sorted(sums)
    got = numeric.sum().to_dict()
    for col, expected in sums.items():
        assert got[col] == pytest.approx(expected, rel=1e-9), col


# ---------------------------------------------------------- against outside sources
def spec_limit(spec: str, prop: str, bound: str, climate_class: str = "") -> float:
    rows = [r for r in TABLES["specs"].rows
            if (r["spec"], r["property"], r["climate_class"]) == (spec, prop, climate_class)
            and r[bound].strip()]
    assert len(rows) == 1, (spec, prop, bound, climate_class)
    return float(rows[0][bound])


EN14214 = "EN 14214:2012+A2:2019 via standards.md 1.1, VERIFIED"


@pytest.mark.parametrize(("prop", "bound", "value", "source"), [
    ("density_15C_kg_m3", "min", 860.0, EN14214),
    ("density_15C_kg_m3", "max", 900.0, EN14214),
    ("kin_viscosity_40C_mm2_s", "min", 3.50, EN14214),
    ("kin_viscosity_40C_mm2_s", "max", 5.00, EN14214),
    ("iodine_value_gI2_100g", "max", 120.0, EN14214),
    ("linolenic_wt_pct", "max", 12.0, EN14214),
    ("ester_content_wt_pct", "min", 96.5, EN14214),
    ("oxidation_stability_110C_h", "min", 8.0, EN14214),
])
def test_specs_csv_en14214_limit_matches_the_standard(prop, bound, value, source):
    # EN 14214:2012+A2:2019 via standards.md 1.1, VERIFIED [S1][S2][S3]
    assert spec_limit("en14214", prop, bound) == value, source


@pytest.mark.parametrize(("prop", "bound", "value"), [
    ("cetane_number", "min", 47.0),  # ASTM D6751 via standards.md 2, VERIFIED [S7][S35]
    ("kin_viscosity_40C_mm2_s", "min", 1.9),  # ASTM D6751 via standards.md 2, VERIFIED [S7][S35]
    ("kin_viscosity_40C_mm2_s", "max", 6.0),  # ASTM D6751 via standards.md 2, VERIFIED [S7][S35]
])
def test_specs_csv_astm_d6751_limit_matches_the_standard(prop, bound, value):
    assert spec_limit("astm-d6751", prop, bound) == value


def test_specs_csv_en590_cfpp_grades_a_to_f_run_plus5_to_minus20():
    # EN 590 temperate grades via standards.md 3.4, VERIFIED [S18]
    ladder = {g: spec_limit("en590", "cfpp_C", "max", g) for g in "ABCDEF"}
    assert ladder == {"A": 5.0, "B": 0.0, "C": -5.0, "D": -10.0, "E": -15.0, "F": -20.0}


def diesel_values(prop: str) -> dict[str, float]:
    return {r["diesel"]: float(r["value"]) for r in TABLES["diesels"].rows
            if r["property"] == prop}


def test_diesels_csv_lhv_is_in_the_greet_diesel_range():
    # GREET conventional / low-S diesel LHV 42.78 / 42.60 MJ/kg, standards.md 5, VERIFIED [S42]
    lhv = diesel_values("lhv_MJ_kg")
    assert lhv
    assert all(42.60 <= v <= 42.80 for v in lhv.values()), lhv


def test_diesels_csv_hhv_is_in_the_greet_diesel_range():
    # GREET conventional / low-S diesel HHV 45.76 / 45.56 MJ/kg, standards.md 5, VERIFIED [S42]
    hhv = diesel_values("hhv_MJ_kg")
    assert hhv
    assert all(45.56 <= v <= 45.76 for v in hhv.values()), hhv


def test_diesels_csv_density_is_greet_grams_per_gallon_over_litres_per_gallon():
    # GREET 3167 g/gal (standards.md 5, VERIFIED [S42]) / 3.78541 L per US gallon (NIST SP 811);
    # the table prints 0.1 kg/m3, hence abs=0.05
    for value in diesel_values("density_15C_kg_m3").values():
        assert value == pytest.approx(3167 / 3.78541, abs=0.05)


@pytest.mark.parametrize(("prop", "lo", "hi"), [
    ("density_15C_kg_m3", 820.0, 845.0),  # EN 590 via standards.md 3.3, VERIFIED [S15][S16]
    ("kin_viscosity_40C_mm2_s", 2.00, 4.50),  # EN 590 via standards.md 3.3, VERIFIED [S15b][S16]
    ("cetane_number", 51.0, np.inf),  # EN 590 via standards.md 3.3, VERIFIED [S15][S16]
])
def test_diesels_csv_en590_diesels_meet_en590_general_limits(prop, lo, hi):
    values = diesel_values(prop)
    assert set(values) == {"en590-summer", "en590-winter"}
    assert all(lo <= v <= hi for v in values.values()), values


def test_diesels_csv_seasonal_cold_flow_matches_the_uk_supplier_spec():
    # UK EN 590 road diesel, one supplier: summer CFPP -5 / CP +3, winter CFPP -15 / CP -5 degC
    # (standards.md 3.4, VERIFIED [S21])
    assert diesel_values("cfpp_C") == {"en590-summer": -5.0, "en590-winter": -15.0}
    assert diesel_values("cloud_point_C") == {"en590-summer": 3.0, "en590-winter": -5.0}


def test_composition_row_renormalises_to_100_and_refuses_an_empty_mass():
    w = composition_row({"C16:0": 2.0, "C18:1": 6.0})
    assert w.shape == (1, len(species_keys()))
    assert w.sum() == pytest.approx(100.0)
    assert w[0, species_keys().index("C16:0")] == pytest.approx(25.0)
    with pytest.raises(ValueError, match="positive total"):
        composition_row({"C16:0": 0.0})
