"""The command line as a user meets it: output, files written, and one-line errors."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pandas as pd
import pytest
from click.testing import CliRunner

from estimator.cli import cli

ROOT = Path(__file__).resolve().parents[1]
LOTS = ROOT / "data" / "demo" / "lots.csv"


def run(*args: str):
    return CliRunner().invoke(cli, list(args))


def _table_lines(output: str) -> list[str]:
    return output.split("\nflags:")[0].split("\nnotes:")[0].splitlines()


def test_predict_prints_one_row_per_sample_with_units_in_the_headers():
    result = CliRunner().invoke(cli, ["predict", "--oil", "rapeseed", "--oil", "soybean"],
                                env={"COLUMNS": "200"})
    assert result.exit_code == 0, result.output
    lines = _table_lines(result.output)
    rows = [line for line in lines if line.startswith(("rapeseed", "soybean"))]
    assert [r.split()[0] for r in rows] == ["rapeseed", "soybean"]  # one row each
    assert "CFPP [°C]" in result.output and "[g I₂/100 g]" in result.output
    assert " ± " in rows[0]  # every default estimate shows its error
    for machine in ("iodine_value_gI2_100g", "cfpp_C", "lcsf_wt_pct", "bape_wt_pct"):
        assert machine not in result.output
    assert "long-chain saturated factor" not in result.output  # descriptors on request


def test_predict_descriptors_adds_spelled_out_descriptor_columns():
    from estimator.cli import _wide_for_terminal
    from estimator.profiles.profile import Profile
    from estimator.workflows import predict

    result = CliRunner().invoke(cli, ["predict", "--oil", "rapeseed", "--descriptors"],
                                env={"COLUMNS": "100"})
    assert result.exit_code == 0, result.output
    assert "long-chain" in result.output and "bis-allylic" in result.output
    wide = predict(Profile.from_oils(["rapeseed"])).wide
    shown = list(_wide_for_terminal(wide, descriptors=True).columns)
    for name in ("long-chain saturated factor [wt %]",
                 "bis-allylic position equivalents [wt %]",
                 "allylic position equivalents [wt %]", "saponification value [mg KOH/g]"):
        assert name in shown, name
    assert not [c for c in shown if "_" in c]
    assert "bape_wt_pct" in wide.columns  # files keep the machine names


def test_predict_wraps_the_table_to_a_narrow_terminal():
    result = CliRunner().invoke(cli, ["predict", "--oil", "rapeseed", "--oil", "soybean"],
                                env={"COLUMNS": "60"})
    assert result.exit_code == 0, result.output
    lines = _table_lines(result.output)
    assert max(len(line) for line in lines) <= 60
    assert sum(line.startswith("rapeseed") for line in lines) >= 3  # continued in blocks


@pytest.mark.parametrize("suffix", [".csv", ".xlsx", ".json"])
def test_predict_writes_the_table_by_extension(tmp_path, suffix):
    out = tmp_path / f"est{suffix}"
    result = run("predict", str(LOTS), "-o", str(out))
    assert result.exit_code == 0, result.output
    if suffix == ".csv":
        table = pd.read_csv(out)
    elif suffix == ".xlsx":
        table = pd.read_excel(out)
    else:
        table = pd.DataFrame(json.loads(out.read_text()))
    assert list(table.columns[:3]) == ["sample", "cetane_number", "cetane_number_error"]
    assert {"iodine_value_gI2_100g", "cfpp_C", "mean_molar_mass_g_mol", "flags",
            "notes"} <= set(table.columns)
    assert len(table) == 7


def test_bad_data_exits_1_with_one_line_on_stderr(tmp_path):
    bad = tmp_path / "bad.csv"
    bad.write_text("sample,C16:0,C18:1\na,x,90\n")
    result = CliRunner().invoke(cli, ["predict", str(bad)])
    assert result.exit_code == 1
    assert result.output == (
        "fame-estimator: error: bad.csv: row 2, column 'C16:0': 'x' is not a number\n"
    )


def test_unknown_species_column_lists_close_matches(tmp_path):
    bad = tmp_path / "bad.csv"
    bad.write_text("sample,C16:0,C19:0\na,50,50\n")
    result = run("predict", str(bad))
    assert result.exit_code == 1
    assert result.output == (
        "fame-estimator: error: bad.csv: column 'C19:0': unknown species 'C19:0'; "
        "close matches: C18:0, C20:0\n"
    )
    assert result.output.count("\n") == 1


def test_unknown_oil_is_a_usage_error():
    result = run("predict", "--oil", "soyabean")
    assert result.exit_code == 2
    assert result.output == (
        "fame-estimator: error: unknown oil 'soyabean'; close matches: soybean; "
        "'fame-estimator oils' lists the built-in oils\n"
    )


def test_predict_without_input_is_a_usage_error():
    result = run("predict")
    assert result.exit_code == 2
    assert result.output == (
        "fame-estimator: error: give at least one INPUT file or --oil NAME (see --help)\n"
    )


def test_unwritable_output_suffix_is_a_usage_error(tmp_path):
    result = run("predict", "--oil", "palm", "-o", str(tmp_path / "x.txt"))
    assert result.exit_code == 2
    assert result.output == (
        "fame-estimator: error: cannot write 'x.txt': use an output file ending in "
        ".csv, .tsv, .xlsx, .json\n"
    )


def test_oils_lists_the_library():
    result = run("oils")
    assert result.exit_code == 0
    assert "linseed" in result.output and "C18:3" in result.output


def test_python_dash_m_runs_the_cli():
    done = subprocess.run([sys.executable, "-m", "estimator", "--version"], capture_output=True,
                          text=True, check=True)
    assert "fame-estimator" in done.stdout


def test_cli_start_does_not_import_matplotlib_or_sklearn():
    code = ("import sys; import estimator.cli; "
            "print(any(m.split('.')[0] in ('matplotlib', 'sklearn') for m in sys.modules))")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert done.stdout.strip() == "False"


def test_predict_methods_all_writes_the_long_table(tmp_path):
    out = tmp_path / "long.csv"
    result = run("predict", "--oil", "rapeseed", "--oil", "palm", "--methods", "all",
                 "--temperatures", "0,20,60", "-o", str(out))
    assert result.exit_code == 0, result.output
    long = pd.read_csv(out)
    assert list(long.columns) == ["sample", "property", "method", "value", "unit", "error",
                                  "in_domain", "note"]
    assert {"density_0C_kg_m3", "kin_viscosity_60C_mm2_s"} <= set(long["property"])
    assert long.groupby("property")["method"].nunique()["cetane_number"] >= 3


def test_every_method_estimate_is_one_line_with_its_property_and_method_at_any_width():
    # at 100 columns the method names do not fit beside the estimates; a reader must not
    # match two blocks of rows by position
    result = CliRunner().invoke(cli, ["predict", "--oil", "palm", "--methods", "all"],
                                env={"COLUMNS": "100"})
    assert result.exit_code == 0, result.output
    rows = [line for line in _table_lines(result.output) if line.startswith("palm ")]
    assert len(rows) >= 20  # every (property, method) pair once, no second block
    park = [r for r in rows if "oxidation stability" in r]
    assert any(r.rstrip().endswith("Park et al. 2008") and " h " in r for r in park)
    assert any("bis-allylic oxidizability on the scale of Park et al. 2008" in r for r in park)


def test_bad_temperature_list_is_a_usage_error():
    result = run("predict", "--oil", "palm", "--temperatures", "0,warm")
    assert result.exit_code == 2
    assert "'0,warm' is not a comma-separated list of numbers" in result.output


def test_methods_lists_citations_and_marks_the_default():
    result = run("methods", "--property", "cfpp_C")
    assert result.exit_code == 0
    assert "* Ramos et al. 2009 [ramos2009]" in result.output
    assert "Bioresour" in result.output or "Bioresource" in result.output
    # marks in words, no reference-note names (issue 13)
    assert "recalled, not yet checked against the paper" in result.output
    assert "MEMORY" not in result.output and "correlations.md" not in result.output


def test_methods_says_what_the_plus_minus_is_and_names_each_bands_evidence():
    result = run("methods", "--property", "kin_viscosity_40C_mm2_s")
    assert result.exit_code == 0, result.output
    assert "Every ± printed is one standard uncertainty (one standard deviation)" in result.output
    # Allen et al. 1999, Fuel 78:1319: average 3 % on natural biodiesels (VERIFIED [S33])
    assert "band (1 SD): published average 3 % on natural biodiesels (Allen et al. 1999)" \
        in result.output


def test_methods_unknown_property_lists_known_ones():
    result = run("methods", "--property", "smoke_point")
    assert result.exit_code == 2
    assert result.output.startswith("fame-estimator: error: unknown property 'smoke_point'; "
                                    "known: cetane_number, ")


def test_predict_with_a_model_file_replaces_the_fitted_property(tmp_path):
    # synthetic: the invented demo lab set (data/demo/LAB.md states its generating laws)
    lab = ROOT / "data" / "demo" / "lab_samples.csv"
    model = tmp_path / "m.json"
    fitted = run("fit", str(lab), "--property", "cfpp_C", "--no-report", "-o", str(model))
    assert fitted.exit_code == 0, fitted.output
    out = tmp_path / "p.csv"
    result = run("predict", "--oil", "rapeseed", "--model", str(model), "-o", str(out))
    assert result.exit_code == 0, result.output
    table = pd.read_csv(out)
    cols = list(table.columns)
    assert cols[cols.index("cfpp_C") + 1] == "cfpp_C_error"  # in its place, with its band
    default = run("predict", "--oil", "rapeseed", "-o", str(tmp_path / "d.csv"))
    assert default.exit_code == 0
    plain = pd.read_csv(tmp_path / "d.csv")
    # the lab law is 2.5 x LCSF - 10 against Ramos 2009's 3.1417 x LCSF - 16.477 (LAB.md):
    # the recalibration beats the published method, and its value differs
    assert table.loc[0, "cfpp_C"] != pytest.approx(plain.loc[0, "cfpp_C"], abs=0.5)
    shown = run("predict", "--oil", "rapeseed", "--model", str(model))
    assert "From the fitted model file(s): CFPP." in shown.output


def test_an_output_that_is_an_input_is_refused(tmp_path):
    lots = tmp_path / "lots.csv"
    lots.write_bytes(LOTS.read_bytes())
    before = lots.read_bytes()
    result = run("predict", str(lots), "-o", str(lots))
    assert result.exit_code == 2
    assert result.output == (
        f"fame-estimator: error: writing {lots} would overwrite the input {lots}: nothing "
        "written; choose another output name or folder\n"
    )
    assert lots.read_bytes() == before
