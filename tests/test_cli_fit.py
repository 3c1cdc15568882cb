"""``fame-estimator fit`` as a user meets it, and apply_models for ``predict --model``.

The lab file is the invented demo set data/demo/lab_samples.csv (synthetic
"measurements" from the laws stated in data/demo/LAB.md); the lots are the invented
demo lots data/demo/lots.csv.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from click.testing import CliRunner

from estimator.cautions import CAUTION_SHORT
from estimator.cli_fit import fit
from estimator.errors import ModelFileError, UsageError
from estimator.profiles.io import read_profile
from estimator.profiles.profile import Profile
from estimator.properties.predict import LONG_COLUMNS, estimate
from estimator.refit.apply import FIT_METHOD_PREFIX, apply_models, wide_with_models

ROOT = Path(__file__).resolve().parents[1]
LAB = ROOT / "data" / "demo" / "lab_samples.csv"
LOTS = ROOT / "data" / "demo" / "lots.csv"


def run(*args: str):
    from estimator.cli import cli

    assert cli.commands["fit"] is fit
    return CliRunner().invoke(cli, list(args))


@pytest.fixture(scope="module")
def model_path(tmp_path_factory):
    out = tmp_path_factory.mktemp("fit") / "lab_model.json"
    result = run("fit", str(LAB), "--property", "cfpp_C", "--property", "cetane_number",
                 "-o", str(out))
    assert result.exit_code == 0, result.output
    return out


def test_fit_prints_the_scores_the_choice_and_the_caution():
    result = run("fit", str(LAB), "--property", "cfpp_C")
    assert result.exit_code == 0, result.output
    out = result.output
    assert "CFPP [°C]: 25 samples, leave-one-out (seed 0)" in out  # 25 CFPP cells filled
    # readers see author-year names, not method keys
    assert "Ramos et al. 2009, recalibrated" in out and "Gaussian process on descriptors" in out
    assert "recalibrated:ramos2009" not in out and "ramos2009" not in out
    assert "mean-only baseline" in out
    assert "CFPP: Chosen: Ramos et al. 2009, recalibrated, CV RMSE 1.44" in out
    assert "cfpp_C" not in out  # the property in words, in the table too
    assert "band ± 1.44 (one standard uncertainty: the CV RMSE)" in out
    assert CAUTION_SHORT in out
    assert "cross-validating" not in out  # no progress bar when output is not a terminal


def test_fit_writes_one_model_file_and_a_report_folder_beside_it(model_path):
    doc = json.loads(model_path.read_text(encoding="utf-8"))
    assert [m["property"] for m in doc["models"]] == ["cfpp_C", "cetane_number"]
    assert doc["training"]["file"] == "lab_samples.csv" and doc["training"]["rows"] == 34
    folder = model_path.parent / "lab_model_fit_report"
    names = sorted(p.name for p in folder.iterdir())
    assert "report.html" in names and "scores.csv" in names
    assert "cfpp_C_parity.png" in names and "cetane_number_residuals.png" in names
    html = (folder / "report.html").read_text(encoding="utf-8")
    assert "<h3>CFPP</h3>" in html and "data:image/png;base64," in html
    assert "(cfpp_C)" not in html  # readers see the property's name, not its column
    scores = pd.read_csv(folder / "scores.csv")
    assert set(scores["property"]) == {"cfpp_C", "cetane_number"}
    assert scores.groupby("property")["chosen"].sum().tolist() == [1, 1]


def test_a_model_file_must_end_in_json(tmp_path):
    result = run("fit", str(LAB), "--property", "cfpp_C", "-o", str(tmp_path / "m.csv"))
    assert result.exit_code == 2
    assert result.output.endswith("-o " + str(tmp_path / "m.csv") + ": a model file must end "
                                  "in .json\n")


def test_a_missing_measured_column_is_one_line_exit_1(tmp_path):
    result = run("fit", str(LAB), "--property", "cloud_point_C")
    assert result.exit_code == 1
    assert result.output == ("fame-estimator: error: lab_samples.csv: missing column "
                             "'cloud_point_C'\n")


def test_a_non_numeric_measurement_is_one_line_exit_1(tmp_path):
    bad = tmp_path / "lab.csv"
    text = LAB.read_text(encoding="utf-8").splitlines()
    head = text[0].split(",")
    col = head.index("cetane_number")
    row = text[3].split(",")
    row[col] = "about 50"
    text[3] = ",".join(row)
    bad.write_text("\n".join(text) + "\n", encoding="utf-8")
    result = run("fit", str(bad), "--property", "cetane_number")
    assert result.exit_code == 1
    assert result.output == ("fame-estimator: error: lab.csv: row 4, column 'cetane_number': "
                             "'about 50' is not a number\n")


def test_an_unknown_property_is_a_usage_error_listing_valid_ones():
    result = run("fit", str(LAB), "--property", "cetane")
    assert result.exit_code == 2
    assert result.output.startswith("fame-estimator: error: unknown property 'cetane'; valid "
                                    "properties: cetane_number, iodine_value_gI2_100g, cfpp_C")
    assert result.output.count("\n") == 1


@pytest.mark.parametrize("args, message", [
    (("--seed", "-1"), "--seed -1: must be a whole number from 0 to 4294967295"),
    (("--seed", str(2**40)), f"--seed {2**40}: must be a whole number from 0 to 4294967295"),
    (("--tie-tolerance", "nan"), "--tie-tolerance nan: must be a number from 0 to 50 "
                                 "(per cent)"),
    (("--tie-tolerance", "-3"), "--tie-tolerance -3.0: must be a number from 0 to 50 "
                                "(per cent)"),
], ids=["negative-seed", "huge-seed", "nan-tolerance", "negative-tolerance"])
def test_a_bad_seed_or_tie_tolerance_is_one_line_exit_2(args, message):
    result = run("fit", str(LAB), "--property", "cfpp_C", *args)
    assert result.exit_code == 2
    assert result.output == f"fame-estimator: error: {message}\n"


def test_the_fit_report_shows_the_baseline_the_margin_and_the_band(model_path):
    html = (model_path.parent / "lab_model_fit_report" / "report.html").read_text(
        encoding="utf-8")
    assert "mean-only baseline" in html
    assert "at least 10 % lower" in html
    assert "one standard uncertainty" in html
    assert "ramos2009" not in html  # the author-year name instead of the method key
    assert "Ramos et al. 2009" in html


def test_predict_with_a_model_prints_the_cv_rmse_as_the_band(model_path):
    # the band of a fitted linear model is its cross-validated RMSE (one standard
    # uncertainty), the same number the fit statement prints
    doc = json.loads(model_path.read_text(encoding="utf-8"))
    for entry in doc["models"]:
        if entry["kind"] != "gp":
            rmse = next(r["rmse"] for r in entry["cv"]["scores"]
                        if r["candidate"] == entry["candidate"])
            assert entry["band"]["sd"] == pytest.approx(rmse)


def test_property_is_required():
    result = run("fit", str(LAB))
    assert result.exit_code == 2
    assert "Missing option '--property'" in result.output


def test_help_shows_examples():
    result = run("fit", "--help")
    assert result.exit_code == 0
    assert "fame-estimator fit data/demo/lab_samples.csv --property cetane_number" in result.output


# ------------------------------------------------------------ apply_models
def lots_and_coconut():
    return Profile.concat([read_profile(LOTS), Profile.from_oils(["coconut"])])


def test_apply_models_adds_a_fit_method_per_fitted_property(model_path):
    profile = lots_and_coconut()
    long = estimate(profile.wt_pct, profile.samples)
    out = apply_models(profile, [model_path], long)
    assert list(out.columns) == list(LONG_COLUMNS)
    assert len(out) == len(long) + 2 * len(profile)
    fitted = out[out["method"].astype(str).str.startswith(FIT_METHOD_PREFIX)]
    assert set(fitted["property"].astype(str)) == {"cfpp_C", "cetane_number"}
    assert all("from model file lab_model.json" in n for n in fitted["note"].astype(str))
    assert isinstance(out["method"].dtype, pd.CategoricalDtype)
    assert len(long) == len(estimate(profile.wt_pct, profile.samples))  # input untouched


def test_apply_models_values_and_intervals_are_the_model_files(model_path):
    from estimator.refit.model_file import load_models

    profile = lots_and_coconut()
    out = apply_models(profile, [model_path], estimate(profile.wt_pct, profile.samples))
    for model in load_models(model_path):
        rows = out[(out["property"] == model.property)
                   & (out["method"] == f"fit:{model.candidate}")]
        pred = model.predict(profile.wt_pct)
        np.testing.assert_array_equal(rows["value"].to_numpy(), pred.value)
        np.testing.assert_array_equal(rows["error"].to_numpy(), pred.error)
        np.testing.assert_array_equal(rows["in_domain"].to_numpy(), pred.in_domain)


def test_coconut_is_flagged_outside_the_lab_training_domain(model_path):
    # The demo lab saw C16-C18 oils and fats only (data/demo/LAB.md); coconut oil is
    # lauric (typical profile in feedstocks.csv).
    profile = lots_and_coconut()
    out = apply_models(profile, [model_path], estimate(profile.wt_pct, profile.samples))
    coco = out[(out["sample"] == "coconut") & out["method"].astype(str).str.startswith("fit:")]
    assert not coco["in_domain"].any()
    assert all("outside domain: C12:0" in n for n in coco["note"].astype(str))
    rape = out[(out["sample"] == "LOT-R1") & out["method"].astype(str).str.startswith("fit:")]
    assert rape["in_domain"].all()


def test_the_wide_table_shows_the_fitted_model_instead_of_the_default(model_path):
    profile = lots_and_coconut()
    out = apply_models(profile, [model_path], estimate(profile.wt_pct, profile.samples))
    table = wide_with_models(out)
    fitted = out[(out["property"] == "cfpp_C")
                 & out["method"].astype(str).str.startswith("fit:")]
    np.testing.assert_array_equal(table["cfpp_C"].to_numpy(), fitted["value"].to_numpy())
    assert "cfpp_C: outside fit:" in table.loc[table["sample"] == "coconut", "flags"].iloc[0]


def test_one_property_in_two_model_files_is_refused(model_path, tmp_path):
    copy = tmp_path / "again.json"
    copy.write_bytes(model_path.read_bytes())
    profile = lots_and_coconut()
    with pytest.raises(ModelFileError) as err:
        apply_models(profile, [model_path, copy], estimate(profile.wt_pct, profile.samples))
    assert str(err.value) == ("again.json: cfpp_C also has a model in lab_model.json; give "
                              "one --model file per property")


def test_a_long_table_for_other_samples_is_refused(model_path):
    profile = lots_and_coconut()
    other = Profile.from_oils(["palm"])
    with pytest.raises(UsageError, match="not for the samples of this profile"):
        apply_models(profile, [model_path], estimate(other.wt_pct, other.samples))
