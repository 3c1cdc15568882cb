"""The check and compare commands as a user meets them (click's CliRunner, run directly)."""

from __future__ import annotations

import json
from pathlib import Path

import pandas as pd
import pytest
from click.testing import CliRunner

from estimator.cautions import CAUTION_SHORT
from estimator.cli_compare import STRICT_EXIT_CODE, check, compare

ROOT = Path(__file__).resolve().parents[1]
LOTS = ROOT / "data" / "demo" / "lots.csv"
KNOWN = "known specifications: en14214, astm-d6751, en590, astm-d7467"


def run(command, *args: str):
    return CliRunner().invoke(command, list(args), prog_name=command.name)


def _offers(tmp_path: Path, rows: list[str]) -> Path:
    """A small invented offers file (synthetic lots)."""
    path = tmp_path / "offers.csv"
    path.write_text("lot,price_per_t,ffa_wt_pct,water_wt_pct,C16:0,C18:0,C18:1,C18:2,C18:3\n"
                    + "\n".join(rows) + "\n", encoding="utf-8")
    return path


# ----------------------------------------------------------------------------- check
def test_check_prints_verdicts_and_the_caution_and_exits_0_when_samples_fail():
    result = run(check, "--oil", "soybean", "--oil", "rapeseed", "--climate-class", "C")
    assert result.exit_code == 0, result.output
    assert "fails" in result.output  # soybean's iodine value (common practice)
    assert "iodine value" in result.output and "≤ 120" in result.output
    # soybean also misses Rancimat >= 8 h with the default methods
    assert "soybean: EN 14214 fails (iodine value, oxidation stability" in result.output
    assert result.output.rstrip().endswith(CAUTION_SHORT)


def test_check_without_a_climate_class_says_cfpp_was_not_judged():
    result = run(check, "--oil", "rapeseed", "--spec", "en14214")
    assert result.exit_code == 0
    assert "CFPP not judged: give --climate-class" in result.output
    assert "CFPP" not in result.output.split("summary:")[0]


def test_check_unknown_spec_lists_the_known_ones():
    result = run(check, "--oil", "rapeseed", "--spec", "en14214", "--spec", "d6751")
    assert result.exit_code == 2
    assert result.output == f"fame-estimator: error: unknown specification 'd6751'; {KNOWN}\n"


def test_check_unknown_climate_class_lists_the_known_ones():
    result = run(check, "--oil", "rapeseed", "--climate-class", "Z")
    assert result.exit_code == 2
    assert result.output == (
        "fame-estimator: error: unknown climate class 'Z'; known classes: A, B, C, D, E, F, "
        "0, 1, 2, 3, 4 (A-F temperate grades, 0-4 arctic classes)\n")


def test_check_strict_exits_3_when_any_verdict_fails():
    # common practice: linseed methyl ester fails EN 14214's iodine value and linolenic limit
    result = run(check, "--oil", "linseed", "--spec", "en14214", "--strict")
    assert result.exit_code == STRICT_EXIT_CODE == 3
    assert "--strict:" in result.output


def test_check_strict_exits_0_when_nothing_fails():
    # common practice: high-oleic sunflower methyl ester is well inside ASTM D6751
    result = run(check, "--oil", "sunflower-high-oleic", "--spec", "astm-d6751", "--strict")
    assert result.exit_code == 0, result.output
    assert "0 of 4 verdicts fail." in result.output


@pytest.mark.parametrize("suffix", [".csv", ".xlsx", ".json"])
def test_check_writes_the_table_by_extension_with_the_caution(tmp_path, suffix):
    out = tmp_path / f"verdicts{suffix}"
    result = run(check, str(LOTS), "--basis", "fatty-acid", "--climate-class", "C", "-o",
                 str(out))
    assert result.exit_code == 0, result.output
    if suffix == ".csv":
        table = pd.read_csv(out)
        assert set(table["caution"]) == {CAUTION_SHORT}
    elif suffix == ".xlsx":
        sheets = pd.read_excel(out, sheet_name=None)
        table = sheets["table"]
        assert sheets["cautions"]["caution"].iloc[0].startswith("These are estimates")
    else:
        table = pd.DataFrame(json.loads(out.read_text(encoding="utf-8")))
        assert set(table["caution"]) == {CAUTION_SHORT}
    assert list(table.columns[:7]) == ["sample", "spec", "property", "estimate", "error",
                                       "limit", "verdict"]
    assert table["sample"].nunique() == 7
    assert set(table["verdict"]) <= {"meets", "fails", "too close to call",
                                     "outside method range"}
    outside = table["verdict"] == "outside method range"
    assert table.loc[~outside, "probability_meets"].between(0, 1).all()
    assert table.loc[outside, "probability_meets"].isna().all()
    assert CAUTION_SHORT in result.output


def test_check_bad_input_is_one_line_with_exit_1(tmp_path):
    bad = tmp_path / "bad.csv"
    bad.write_text("sample,C16:0,C18:1\na,x,90\n", encoding="utf-8")
    result = run(check, str(bad))
    assert result.exit_code == 1
    assert result.output == "fame-estimator: error: bad.csv: row 2, column 'C16:0': 'x' is " \
                            "not a number\n"


def test_check_help_shows_examples():
    result = run(check, "--help")
    assert result.exit_code == 0
    assert "Examples:" in result.output and "fame-estimator check lots.csv" in result.output


# --------------------------------------------------------------------------- compare
def test_compare_prints_the_ranked_table_without_an_output_dir():
    result = run(compare, str(LOTS), "--basis", "fatty-acid", "--climate-class", "C")
    assert result.exit_code == 0, result.output
    assert "Lots ranked" in result.output
    for lot in ("LOT-R1", "LOT-S1", "LOT-U1", "LOT-T1", "LOT-P1", "LOT-C1", "LOT-H1"):
        assert lot in result.output
    assert result.output.rstrip().endswith(CAUTION_SHORT)


def test_compare_lot_without_price_keeps_its_verdicts(tmp_path):
    offers = _offers(tmp_path, ["A,900,0.3,0.03,4,2,64,20,10",
                                "B,,0.3,0.03,4,2,64,20,10"])
    out = tmp_path / "out"
    result = run(compare, str(offers), "--climate-class", "C", "-o", str(out))
    assert result.exit_code == 0, result.output
    table = pd.read_csv(out / "comparison.csv").set_index("sample")
    assert pd.isna(table.loc["B", "cost_per_t_fuel"])
    assert table.loc["B", "verdict_en14214"] == table.loc["A", "verdict_en14214"]
    assert "no price_per_t" in table.loc["B", "notes"]
    assert list(table.index) == ["A", "B"]  # same verdicts: the priced lot first


def test_compare_ffa_out_of_range_names_the_row_and_column(tmp_path):
    offers = _offers(tmp_path, ["A,900,0.3,0.03,4,2,64,20,10",
                                "B,850,130,0.03,4,2,64,20,10"])
    result = run(compare, str(offers))
    assert result.exit_code == 1
    assert result.output == ("fame-estimator: error: offers.csv: row 3, column 'ffa_wt_pct' "
                             "(sample 'B'): 130 is outside 0-100 wt %\n")


def test_compare_writes_tables_plots_and_a_report_into_the_dir(tmp_path):
    out = tmp_path / "lots"
    result = run(compare, str(LOTS), "--basis", "fatty-acid", "--climate-class", "C",
                 "--pretreat", "acid", "--methanol-ratio", "9", "-o", str(out))
    assert result.exit_code == 0, result.output
    assert (out / "comparison.csv").exists() and (out / "comparison.xlsx").exists()
    pngs = sorted((out / "plots").glob("*.png"))
    svgs = sorted((out / "plots").glob("*.svg"))
    assert len(pngs) >= 6 and not svgs  # SVG copies only on request
    html = (out / "report.html").read_text(encoding="utf-8")
    assert html.count("data:image/png;base64,") == len(pngs)
    assessed = pd.read_excel(out / "comparison.xlsx", sheet_name="assumptions")
    ratio = assessed.set_index("assumption").loc["methanol : triglyceride molar ratio", "value"]
    assert ratio == "9 : 1"
    assert CAUTION_SHORT in result.output


def test_compare_methanol_ratio_below_stoichiometry_is_a_usage_error():
    result = run(compare, "--oil", "rapeseed", "--methanol-ratio", "2")
    assert result.exit_code == 2
    assert result.output == ("fame-estimator: error: methanol ratio must be at least 3 (the "
                             "stoichiometric 3:1), got 2\n")


def test_compare_help_shows_examples():
    result = run(compare, "--help")
    assert result.exit_code == 0
    assert "Examples:" in result.output and "--pretreat acid" in result.output


# ----------------------------------------------------------------------------- decisions
@pytest.fixture(scope="module")
def lab_model(tmp_path_factory):
    """A lab model for oxidation stability, fitted on the invented demo lab samples."""
    from estimator.cli import cli

    out = tmp_path_factory.mktemp("model") / "lab_model.json"
    result = CliRunner().invoke(cli, ["fit", str(ROOT / "data" / "demo" / "lab_samples.csv"),
                                      "--property", "oxidation_stability_110C_h", "-o",
                                      str(out)])
    assert result.exit_code == 0, result.output
    return out


def test_compare_with_o_still_prints_the_ranking_then_what_was_written(tmp_path):
    out = tmp_path / "lots"
    result = run(compare, str(LOTS), "--basis", "fatty-acid", "--climate-class", "C",
                 "-o", str(out))
    assert result.exit_code == 0, result.output
    assert "Lots ranked:" in result.stdout and "LOT-R1" in result.stdout
    assert "fails: fixable by treatment" in result.stdout
    assert f"wrote {out / 'comparison.csv'}" in result.stderr
    quiet = run(compare, str(LOTS), "--basis", "fatty-acid", "-o", str(out), "--quiet")
    assert quiet.exit_code == 0 and quiet.stdout == ""
    assert "wrote" in quiet.stderr


def test_check_with_o_prints_the_verdict_counts_and_quiet_silences_them(tmp_path):
    out = tmp_path / "v.csv"
    result = run(check, "--oil", "soybean", "-o", str(out))
    assert result.exit_code == 0, result.output
    assert "verdicts fail." in result.stdout and "soybean: EN 14214 fails" in result.stdout
    assert "wrote" in result.stderr
    quiet = run(check, "--oil", "soybean", "-o", str(out), "-q")
    assert quiet.stdout == ""


def test_compare_costs_file_changes_the_cost_and_the_report_says_where_it_came_from(tmp_path):
    costs = tmp_path / "costs.json"
    costs.write_text(json.dumps({"methanol_price_per_t": 0, "catalyst_price_per_t": 0,
                                 "acid_pretreatment_cost_per_t_ffa": 0,
                                 "antioxidant_cost_per_t_fuel": 0,
                                 "glycerol_credit_per_t": 0}))
    out = tmp_path / "lots"
    result = run(compare, str(LOTS), "--basis", "fatty-acid", "--costs", str(costs),
                 "-o", str(out), "-q")
    assert result.exit_code == 0, result.output
    table = pd.read_csv(out / "comparison.csv").set_index("sample")
    assert (table["cost_per_t_fuel"] - table["feedstock_cost_per_t_fuel"]).abs().max() < 1e-6
    html = (out / "report.html").read_text(encoding="utf-8")
    assert "from costs.json" in html


def test_compare_bad_costs_file_is_one_line(tmp_path):
    costs = tmp_path / "costs.json"
    costs.write_text(json.dumps({"methanol": 1}))
    result = run(compare, str(LOTS), "--basis", "fatty-acid", "--costs", str(costs))
    assert result.exit_code == 1
    assert result.output.startswith("fame-estimator: error: costs.json: unknown key 'methanol'")
    assert result.output.count("\n") == 1


def test_check_and_compare_take_a_lab_model_and_say_which_properties_came_from_it(lab_model):
    result = run(check, "--oil", "beef-tallow", "--spec", "en14214", "--model", str(lab_model))
    assert result.exit_code == 0, result.output
    # readers see words: the property's name and the model in words, not their keys
    assert "From the lab's model file(s), replacing the published estimates: " \
           "oxidation stability 110 °C (lab model" in result.output
    assert "oxidation_stability_110C_h" not in result.output
    compared = run(compare, str(LOTS), "--basis", "fatty-acid", "--model", str(lab_model))
    assert compared.exit_code == 0, compared.output
    assert "oxidation stability 110 °C (lab model" in compared.output
    assert "lab_model.json" in compared.output


def test_mix_and_blend_take_a_lab_model(lab_model):
    from estimator.cli_blend import blend, mix

    mixed = run(mix, str(LOTS), "--basis", "fatty-acid", "--spec", "astm-d6751",
                "--max-cfpp", "0", "--model", str(lab_model))
    assert mixed.exit_code in (0, 1), mixed.output
    assert "oxidation stability 110 °C (lab model" in mixed.output
    blended = run(blend, "--oil", "rapeseed", "--diesel", "en590-winter",
                  "--model", str(lab_model))
    assert blended.exit_code == 0, blended.output
    assert "oxidation stability 110 °C (lab model" in blended.output


def test_compare_notes_name_methods_in_words_not_keys():
    # the demo's tallow lot lies outside the fitted domains of the CFPP and Rancimat methods
    result = run(compare, str(LOTS), "--basis", "fatty-acid", "--climate-class", "C")
    assert result.exit_code == 0, result.output
    notes = result.output.split("\nnotes:", 1)[1]
    assert "Ramos et al. 2009" in notes
    for key in ("ramos2009", "park2008_bape", "cfpp_C", "oxidation_stability_110C_h",
                "water_hydrolysis_max_loss_t_per_t_oil"):
        assert key not in notes


def test_a_lot_that_meets_a_spec_is_said_to_meet_it_on_the_properties_estimated():
    # the tool estimates some of a standard's properties, not all of them (common practice:
    # a standard lists many tests, e.g. sulfur, water, ash, that a fatty-acid profile cannot give)
    result = run(compare, str(LOTS), "--basis", "fatty-acid", "--climate-class", "C")
    assert result.exit_code == 0, result.output
    verdicts = result.output.split("\nverdicts:")[1].split("\nnotes:")[0]
    assert "ASTM D6751 meets on the properties estimated" in verdicts
    assert "D6751 meets\n" not in verdicts and "D6751 meets;" not in verdicts
