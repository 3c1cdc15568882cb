"""The peaks command, and predict/check/compare reading peak tables with --reference."""

from __future__ import annotations

import re
import shutil
from pathlib import Path

import pandas as pd
from click.testing import CliRunner

from estimator.cautions import CAUTION_SHORT
from estimator.cli import cli

ROOT = Path(__file__).resolve().parents[1]
EXAMPLES = ROOT / "data" / "examples"
RUNS = str(EXAMPLES / "peaks_runs.csv")
REF = str(EXAMPLES / "peaks_reference.csv")
SHEET = str(EXAMPLES / "peaks_samples.csv")


def run(*args: str):
    return CliRunner().invoke(cli, list(args), prog_name="fame-estimator")


def test_peaks_prints_profiles_ester_content_and_the_factors_used():
    result = run("peaks", RUNS, "--reference", REF, "--samples", SHEET)
    assert result.exit_code == 0, result.output
    out = result.output
    assert "RS-2041 rapeseed" in out and "C18:1" in out
    assert "ester content % (m/m)" in out
    assert "unidentified peak at" in out  # the invented contaminant, with its time
    assert "theoretical FID correction factors" in out
    assert out.rstrip().endswith(CAUTION_SHORT)


def test_peaks_csv_output_writes_the_table_and_the_peak_side_file(tmp_path):
    out = tmp_path / "profiles.csv"
    result = run("peaks", RUNS, "--reference", REF, "--samples", SHEET, "-o", str(out))
    assert result.exit_code == 0, result.output
    table = pd.read_csv(out)
    assert list(table.columns[:1]) == ["sample"]
    for col in ("ester_content_wt_pct", "linolenic_wt_pct", "unidentified_area_pct", "C18:1"):
        assert col in table.columns
    peaks = pd.read_csv(tmp_path / "profiles_peaks.csv")
    assert {"retention_time_min", "status", "species", "ecl"} <= set(peaks.columns)
    assert (peaks["status"] == "unidentified").sum() == 6  # 2 invented peaks x 3 runs


def test_peaks_xlsx_output_has_the_peak_and_ester_sheets(tmp_path):
    out = tmp_path / "profiles.xlsx"
    result = run("peaks", RUNS, "--reference", REF, "-o", str(out))
    assert result.exit_code == 0, result.output
    sheets = pd.read_excel(out, sheet_name=None)
    assert list(sheets) == ["table", "peaks", "ester_content"]


def test_peaks_refuses_a_side_file_that_is_an_input(tmp_path):
    runs = tmp_path / "out_peaks.csv"
    shutil.copy(RUNS, runs)
    result = run("peaks", str(runs), "--reference", REF, "-o", str(tmp_path / "out.csv"))
    assert result.exit_code == 2
    assert result.output.strip() == (
        "fame-estimator: error: out_peaks.csv is one of this command's inputs: refusing to "
        "overwrite it; choose another output file")
    assert not (tmp_path / "out.csv").exists()


def test_peaks_with_a_duplicate_reference_time_exits_1_in_one_line(tmp_path):
    ref = tmp_path / "ref.csv"
    ref.write_text("name,retention_time_min\nC16:0,14.5\nC18:1,16.9\nC18:2,16.9\n",
                   encoding="utf-8")
    result = run("peaks", RUNS, "--reference", str(ref))
    assert result.exit_code == 1
    assert result.output.strip() == (
        "fame-estimator: error: ref.csv: rows 3 and 4, column 'retention_time_min': two "
        "names ('C18:1', 'C18:2') at 16.900 min; one retention time can carry one name")


def test_check_judges_the_ester_content_of_peak_tables():
    result = run("check", RUNS, "--reference", REF, "--samples", SHEET, "--spec", "en14214")
    assert result.exit_code == 0, result.output
    # invented lots: tallow made at 95.4 % (m/m) reads 94.4 by EN 14103 -> below 96.5 by
    # more than the ~1 % (m/m) repeatability band (shared GC notes, MEMORY)
    assert "TW-0815 tallow: EN 14214 fails (ester content)" in result.output
    # the 96.9 % lot (other properties may share its too-close-to-call group)
    assert re.search(r"UC-0317 used cooking oil: .*too close to call \([^)]*ester content",
                     result.output)
    assert "its band is the method's repeatability, about 1 % (m/m)" in result.output


def test_check_without_a_samples_sheet_gives_no_ester_verdict():
    result = run("check", RUNS, "--reference", REF, "--spec", "en14214")
    assert result.exit_code == 0, result.output
    assert "ester content" not in result.output


def test_predict_reads_peak_tables_with_reference():
    result = run("predict", RUNS, "--reference", REF)
    assert result.exit_code == 0, result.output
    assert "TW-0815 tallow" in result.output and "cetane" in result.output


def test_samples_sheet_without_reference_is_a_usage_error():
    result = run("predict", RUNS, "--samples", SHEET)
    assert result.exit_code == 2
    assert result.output.strip() == (
        "fame-estimator: error: --samples needs --reference (it belongs to GC peak tables)")


def test_compare_report_shows_the_ester_content_beside_the_verdicts(tmp_path):
    result = run("compare", RUNS, "--reference", REF, "--samples", SHEET, "-o",
                 str(tmp_path / "lots"))
    assert result.exit_code == 0, result.output
    html = (tmp_path / "lots" / "report.html").read_text(encoding="utf-8")
    assert "ester content, EN 14103 [% (m/m)]" in html
    assert "fails (ester content)" in html
