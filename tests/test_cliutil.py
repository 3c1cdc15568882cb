"""No command overwrites one of its inputs, side files and folder contents included
(estimator/cliutil.py with estimator/files.py), and write errors are one line."""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import pytest
from click.testing import CliRunner

from estimator.cli import cli

DEMO = Path(__file__).resolve().parents[1] / "data" / "demo"  # invented demo scenario


def run(*args):
    return CliRunner().invoke(cli, [str(a) for a in args])


def _snapshot(folder: Path) -> dict[str, bytes]:
    return {str(p.relative_to(folder)): p.read_bytes() for p in folder.rglob("*") if p.is_file()}


def _refused(result, output: Path, source: Path) -> None:
    assert result.exit_code == 2, result.output
    lines = result.output.strip().splitlines()
    assert len(lines) == 1 and "internal error" not in lines[0]
    assert lines[0] == (f"fame-estimator: error: writing {output} would overwrite the input "
                        f"{source}: nothing written; choose another output name or folder")


def test_mix_side_file_that_is_the_input_is_refused(tmp_path):
    source = tmp_path / "lots_profile.csv"
    shutil.copy(DEMO / "lots.csv", source)
    before = _snapshot(tmp_path)
    result = run("mix", source, "--basis", "fatty-acid", "-o", tmp_path / "lots.csv")
    _refused(result, source, source)
    assert _snapshot(tmp_path) == before  # nothing written, the input unchanged


def test_blend_levels_side_file_that_is_the_input_is_refused(tmp_path):
    source = tmp_path / "b_levels.csv"
    shutil.copy(DEMO / "lots.csv", source)
    before = _snapshot(tmp_path)
    result = run("blend", source, "--basis", "fatty-acid", "--diesel", "en590-winter",
                 "--climate-class", "F", "--plot", tmp_path / "b.png", "-o", tmp_path / "b.csv")
    _refused(result, source, source)
    assert _snapshot(tmp_path) == before  # not even the plot


def test_compare_into_the_folder_of_its_input_named_like_an_output_is_refused(tmp_path):
    source = tmp_path / "comparison.csv"
    shutil.copy(DEMO / "lots.csv", source)
    before = _snapshot(tmp_path)
    result = run("compare", source, "--basis", "fatty-acid", "-o", tmp_path)
    _refused(result, tmp_path / "comparison.csv", source)
    assert _snapshot(tmp_path) == before


def test_compare_beside_its_input_with_another_name_writes(tmp_path):
    source = tmp_path / "lots.csv"
    shutil.copy(DEMO / "lots.csv", source)
    before = source.read_bytes()
    result = run("compare", source, "--basis", "fatty-acid", "-o", tmp_path)
    assert result.exit_code == 0, result.output
    assert source.read_bytes() == before and (tmp_path / "report.html").exists()


def test_report_refuses_a_scenario_whose_files_it_would_overwrite(tmp_path):
    shutil.copy(DEMO / "lots.csv", tmp_path / "mix.xlsx.csv")
    shutil.copy(DEMO / "lots.csv", tmp_path / "comparison.csv")
    shutil.copy(DEMO / "diesel_winter.json", tmp_path / "diesel_winter.json")
    scenario = json.loads((DEMO / "scenario.json").read_text())
    for key in ("lab", "model", "costs"):  # a scenario of lots, blend and mix only
        scenario.pop(key, None)
    scenario["lots"]["file"] = "comparison.csv"
    (tmp_path / "scenario.json").write_text(json.dumps(scenario))
    before = _snapshot(tmp_path)
    result = run("report", tmp_path / "scenario.json", "-o", tmp_path)
    assert result.exit_code == 2, result.output
    assert result.output.strip().splitlines()[-1] == (
        f"fame-estimator: error: writing {tmp_path / 'comparison.csv'} would overwrite the input "
        f"{tmp_path / 'comparison.csv'}: nothing written; choose another output name or folder")
    assert _snapshot(tmp_path) == before


def test_report_refuses_an_input_inside_its_plots_folder(tmp_path):
    (tmp_path / "plots").mkdir()
    shutil.copy(DEMO / "lots.csv", tmp_path / "plots" / "lots.csv")
    scenario = {"title": "t", "lots": {"file": "plots/lots.csv", "basis": "fatty-acid"}}
    (tmp_path / "scenario.json").write_text(json.dumps(scenario))
    before = _snapshot(tmp_path)
    result = run("report", tmp_path / "scenario.json", "-o", tmp_path)
    assert result.exit_code == 2
    assert f"writing into {tmp_path / 'plots'} would overwrite the input" in result.output
    assert _snapshot(tmp_path) == before


def test_fit_refuses_a_lab_file_inside_its_report_folder_before_fitting(tmp_path):
    folder = tmp_path / "model_fit_report"
    folder.mkdir()
    lab = folder / "lab.csv"
    shutil.copy(DEMO / "lab_samples.csv", lab)
    before = _snapshot(tmp_path)
    result = run("fit", lab, "--property", "cetane_number", "-o", tmp_path / "model.json")
    assert result.exit_code == 2
    assert f"writing into {folder} would overwrite the input {lab}" in result.output
    assert _snapshot(tmp_path) == before


@pytest.mark.parametrize("suffix", [".csv", ".xlsx"])
def test_predict_onto_its_input_through_a_link_is_refused(tmp_path, suffix):
    source = tmp_path / "lots.csv"
    shutil.copy(DEMO / "lots.csv", source)
    link = tmp_path / f"link{suffix}"
    link.symlink_to(source)
    before = _snapshot(tmp_path)
    result = run("predict", source, "--basis", "fatty-acid", "-o", link)
    _refused(result, link, source)
    assert _snapshot(tmp_path) == before


def test_an_unwritable_target_is_one_line_naming_it(tmp_path):
    source = tmp_path / "lots.csv"
    shutil.copy(DEMO / "lots.csv", source)
    blocker = tmp_path / "taken"
    blocker.write_text("a file where a folder should be\n")
    result = run("predict", source, "--basis", "fatty-acid", "-o", blocker / "out.csv")
    assert result.exit_code == 1
    lines = result.output.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("fame-estimator: error: out.csv: ")
    assert ".tmp" not in lines[0]
