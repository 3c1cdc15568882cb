"""Hostile input files through the real commands: one line, the right exit status, nothing lost.

The files live in tests/data/hostile/ (small; the workbooks are written by
scripts/make_hostile_workbooks.py). Every refusal is one stderr line naming the file
(and the row and column, or the scenario key), exit status 1 for bad data and 2 for
bad usage, never "internal error", and the input's bytes are unchanged.
"""

from __future__ import annotations

import hashlib
import json
import shutil
import warnings
from pathlib import Path

import click
import numpy as np
import pytest
from click.testing import CliRunner

from estimator.cli import cli
from estimator.cliutil import ReportingCommand

ROOT = Path(__file__).resolve().parents[1]
HOSTILE = ROOT / "tests" / "data" / "hostile"
DEMO = ROOT / "data" / "demo"


def run(*args: str):
    return CliRunner().invoke(cli, [str(a) for a in args])


def digest(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def refused(result, code: int = 1) -> str:
    """The single stderr line of a refusal (asserting exit status and shape)."""
    assert result.exit_code == code, (result.exit_code, result.output)
    lines = [line for line in result.stderr.splitlines() if line.strip()]
    assert len(lines) == 1, result.stderr
    assert "internal error" not in lines[0]
    assert "Traceback" not in result.stderr
    return lines[0]


# ------------------------------------------------ point 4: scenarios stay in their folder
@pytest.mark.parametrize("name", ["scenario_parent_path.json", "scenario_absolute_path.json"])
def test_scenario_naming_a_file_outside_its_folder_is_refused(tmp_path, name):
    line = refused(run("report", HOSTILE / name, "-o", tmp_path / "out"))
    assert f"{name}: 'lots.file'" in line
    assert "outside the scenario's folder" in line and "--allow-outside" in line
    assert not (tmp_path / "out").exists()


def test_allow_outside_lets_the_scenario_read_a_file_beside_its_folder(tmp_path):
    folder = tmp_path / "plans"
    folder.mkdir()
    shutil.copy(DEMO / "lots.csv", tmp_path / "lots.csv")
    scenario = folder / "s.json"
    scenario.write_text(json.dumps({"lots": {"file": "../lots.csv", "basis": "fatty-acid"}}))
    refused(run("report", scenario, "-o", tmp_path / "out"))
    result = run("report", scenario, "-o", tmp_path / "out", "--allow-outside")
    assert result.exit_code == 0, result.output
    assert (tmp_path / "out" / "report.html").exists()


def test_a_link_leading_out_of_the_folder_is_refused_and_no_content_is_echoed(tmp_path):
    secret = tmp_path / "secret.csv"
    secret.write_text("sample,C16:0\nTOPSECRET-PASSWORD,100\n")
    folder = tmp_path / "plans"
    folder.mkdir()
    (folder / "lots.csv").symlink_to(secret)
    (folder / "s.json").write_text(json.dumps({"lots": {"file": "lots.csv"}}))
    line = refused(run("report", folder / "s.json", "-o", tmp_path / "out"))
    assert "outside the scenario's folder" in line
    assert "TOPSECRET" not in line


# ------------------------------------------------ point 5: one reading of a cell
@pytest.mark.parametrize(("name", "row", "cell"), [
    ("null_text_cell.csv", 3, "'NULL'"),
    ("json_true_cell.json", 1, "True"),
    ("json_nan_cell.json", 1, "'NaN'"),
    ("xlsx_error_cell.xlsx", 3, "'#N/A'"),
    ("xlsx_true_cell.xlsx", 2, "True"),
    ("xlsx_nan_text.xlsx", 2, "'NaN'"),
])
def test_text_boolean_and_error_cells_are_not_numbers_in_every_format(name, row, cell):
    before = digest(HOSTILE / name)
    line = refused(run("predict", HOSTILE / name))
    assert line == (f"fame-estimator: error: {name}: row {row}, column 'C16:0': {cell} is "
                    "not a number")
    assert digest(HOSTILE / name) == before


@pytest.mark.parametrize("name", ["sample_named_na.csv", "xlsx_sample_na.xlsx"])
def test_a_sample_named_NA_is_a_name(name):
    result = run("check", HOSTILE / name)
    assert result.exit_code == 0, result.output
    assert "  NA:" in result.stdout


# ------------------------------------------------ point 6: lot numbers finite, in range
@pytest.mark.parametrize(("name", "fragment"), [
    ("price_inf.csv", "row 2, column 'price_per_t' (sample 'A'): 'inf' is not a finite number"),
    ("price_true.json", "row 1, column 'price_per_t' (sample 'A'): True is not a number"),
    ("tonnage_negative.csv", "row 2, column 'available_t' (sample 'A'): -5 is outside"),
    ("ffa_huge.csv", "row 2, column 'ffa_wt_pct' (sample 'A'): 1e+308 is outside 0-100 wt %"),
])
@pytest.mark.parametrize("command", ["compare", "mix"])
def test_prices_tonnages_and_ffa_must_be_finite_and_in_range(name, fragment, command):
    line = refused(run(command, HOSTILE / name))
    assert f"{name}: {fragment}" in line


# ------------------------------------------------ point 9: crashes become one line
@pytest.mark.parametrize(("name", "fragment"), [
    ("json_huge_int.json", "row 1, column 'C16:0': 'inf' is not a finite number"),
    ("json_nested_deep.json", "JSON nested too deeply"),
    ("latin1_after_8k.csv", "row 410: byte 0xe9 is not UTF-8 text"),
])
def test_huge_integers_deep_nesting_and_a_late_latin1_byte_get_one_line(name, fragment):
    line = refused(run("predict", HOSTILE / name))
    assert f"{name}: {fragment}" in line


@pytest.mark.parametrize(("name", "fragment"), [
    ("scenario_levels_number.json", "'blend.levels' must be a list of numbers"),
    ("scenario_cfpp_text.json", "'mix.max_cfpp_C' must be a finite number, got 'abc'"),
    ("scenario_spec_number.json", "'mix.spec' must be a text, got 0"),
    ("scenario_seed_negative.json", "'lab.seed' must be a whole number"),
])
def test_wrong_typed_scenario_keys_name_the_file_and_key(tmp_path, name, fragment):
    line = refused(run("report", HOSTILE / name, "-o", tmp_path / "out"))
    assert f"{name}: {fragment}" in line


def test_a_null_scenario_key_means_the_default(tmp_path):
    result = run("report", HOSTILE / "scenario_specs_null.json", "-o", tmp_path / "out")
    assert result.exit_code == 0, result.output


@pytest.mark.parametrize("option", [("--seed", "-1"), ("--tie-tolerance", "nan")])
def test_fit_options_out_of_range_are_usage_errors(option):
    result = run("fit", DEMO / "lab_samples.csv", "--property", "cetane_number", *option)
    assert result.exit_code == 2
    assert "internal error" not in result.output


# ------------------------------------------------ point 10: names are plain text on plots
def test_a_lot_named_with_math_markup_is_drawn_as_plain_text(tmp_path):
    name = HOSTILE / "math_markup_name.csv"
    result = run("compare", name, "-o", tmp_path / "cmp")
    assert result.exit_code == 0, result.output
    assert (tmp_path / "cmp" / "plots" / "cost_per_t_fuel.png").exists()
    assert (tmp_path / "cmp" / "plots" / "cost_per_t_fuel.png").read_bytes()[:4] == b"\x89PNG"
    assert "$\\frac{$" in (tmp_path / "cmp" / "report.html").read_text(encoding="utf-8")
    result = run("blend", name, "--diesel", "en590-winter", "--plot", tmp_path / "b.png")
    assert result.exit_code == 0, result.output
    assert (tmp_path / "b.png").stat().st_size > 0


# ------------------------------------------------ point 11: warnings and encodings
def test_numpy_and_library_warnings_never_reach_the_terminal():
    @click.command(cls=ReportingCommand)
    def noisy():
        np.log(np.zeros(2))
        warnings.warn("a developer's warning", UserWarning, stacklevel=1)
        click.echo("done")

    result = CliRunner().invoke(noisy, [])
    assert result.exit_code == 0
    assert result.stdout == "done\n"
    assert result.stderr == ""


def test_utf16_without_a_byte_order_mark_gets_an_encoding_message():
    line = refused(run("predict", HOSTILE / "utf16_no_bom.csv"))
    assert "UTF-16 text without a byte-order mark; save it as UTF-8" in line


def test_utf16_with_a_byte_order_mark_is_read():
    result = run("predict", HOSTILE / "utf16_with_bom.csv")
    assert result.exit_code == 0, result.output


# ------------------------------------------------ point 12: size limit of the reader
def test_a_file_above_the_size_limit_is_refused_before_reading(monkeypatch):
    monkeypatch.setenv("FAME_ESTIMATOR_MAX_INPUT_MB", "0.005")
    line = refused(run("predict", HOSTILE / "latin1_after_8k.csv"))
    assert "latin1_after_8k.csv: 0 MB is more than the 0.005 MB" in line
    assert "FAME_ESTIMATOR_MAX_INPUT_MB" in line


def test_a_bad_size_limit_setting_is_a_usage_error(monkeypatch):
    monkeypatch.setenv("FAME_ESTIMATOR_MAX_INPUT_MB", "lots")
    line = refused(run("predict", HOSTILE / "percent_cells.csv"), code=2)
    assert "FAME_ESTIMATOR_MAX_INPUT_MB='lots'" in line


# ------------------------------------------------ issue 13: what lab files really have
@pytest.mark.parametrize("name", ["title_lines.csv", "xlsx_merged_title.xlsx"])
def test_title_lines_above_the_header_are_skipped_with_a_note(name):
    result = run("check", HOSTILE / name)
    assert result.exit_code == 0, result.output
    assert (f"note: {name}: header (species columns) found on row 4; rows 1-3 above it read "
            "as titles or notes and skipped") in result.stderr


def test_fractions_get_a_hint_and_are_read_with_fractions():
    line = refused(run("predict", HOSTILE / "fractions.csv"))
    assert "looks like fractions: multiply by 100 or pass --fractions" in line
    result = run("predict", HOSTILE / "fractions.csv", "--fractions")
    assert result.exit_code == 0, result.output


@pytest.mark.parametrize("alias", ["canola", "UCO", "tallow"])
def test_oil_names_people_type_resolve(alias):
    result = run("predict", "--oil", alias)
    assert result.exit_code == 0, result.output
