"""Model files: identical predictions after a round trip, one-line refusals, no code run.

Lab data are synthetic: compositions around the built-in feedstock profiles and a
stated law plus noise.
"""

from __future__ import annotations

import ast
import hashlib
import json
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

import estimator
from estimator.errors import ModelFileError
from estimator.profiles.profile import Profile
from estimator.refit import model_file
from estimator.refit.crossval import fit_property
from estimator.refit.model_file import (
    FORMAT_VERSION,
    file_provenance,
    load_models,
    read_model_file,
    save_models,
)
from estimator.tables import species_keys

OILS = ("rapeseed", "soybean", "sunflower", "palm", "beef-tallow")
REFIT = "refit with 'fame-estimator fit' or restore the file"


def synthetic_lab(n=16, seed=0):
    """Synthetic: compositions around built-in profiles; cetane = 40 + 0.2 C16:0 + noise."""
    base = Profile.from_oils(OILS).wt_pct
    rng = np.random.default_rng(seed)
    w = base[rng.integers(0, len(OILS), n)] * np.exp(rng.normal(0, 0.15, (n, base.shape[1])))
    w = 100.0 * w / w.sum(axis=1, keepdims=True)
    y = 40.0 + 0.2 * w[:, species_keys().index("C16:0")] + rng.normal(0, 0.5, n)
    ids = [f"L{i}" for i in range(n)]
    return Profile.from_frame(pd.DataFrame(w, index=ids, columns=species_keys()),
                              metadata=pd.DataFrame({"cetane_number": y}, index=ids),
                              source="lab.csv")


@pytest.fixture(scope="module")
def training_file(tmp_path_factory):
    path = tmp_path_factory.mktemp("lab") / "lab.csv"
    path.write_text("invented training file for the provenance hash\n", encoding="utf-8")
    return path


def fitted(kind):
    return fit_property(synthetic_lab(), "cetane_number", kinds=(kind,)).model


def write(tmp_path, models, training_file, name="model.json"):
    return save_models(models, tmp_path / name, file_provenance(training_file, 16))


def edit(path, change, *, rechecksum=True):
    """Edit a model file as a person or a broken writer might."""
    doc = json.loads(path.read_text(encoding="utf-8"))
    change(doc)
    if rechecksum:
        body = {k: v for k, v in doc.items() if k != "checksum"}
        canon = json.dumps(body, sort_keys=True, separators=(",", ":"), ensure_ascii=True)
        doc["checksum"]["value"] = hashlib.sha256(canon.encode("ascii")).hexdigest()
    path.write_text(json.dumps(doc), encoding="utf-8")
    return path


def refused(path) -> str:
    with pytest.raises(ModelFileError) as err:
        load_models(path)
    return str(err.value)


@pytest.mark.parametrize("kind", ["published", "recalibrated", "pls", "ridge", "gp"])
def test_a_model_file_round_trips_to_identical_predictions(tmp_path, training_file, kind):
    model = fitted(kind)
    path = write(tmp_path, [model], training_file)
    (again,) = load_models(path)
    new = Profile.from_oils(["rapeseed", "soybean", "coconut", "camelina"]).wt_pct
    before, after = model.predict(new), again.predict(new)
    np.testing.assert_array_equal(before.value, after.value)
    np.testing.assert_array_equal(before.error, after.error)
    np.testing.assert_array_equal(before.in_domain, after.in_domain)
    assert again.kind == kind and again.features == model.features


def test_the_file_records_provenance_scores_and_domain(tmp_path, training_file):
    path = write(tmp_path, [fitted("ridge")], training_file)
    doc = json.loads(path.read_text(encoding="utf-8"))
    assert doc["format_version"] == FORMAT_VERSION
    assert doc["package_version"] == estimator.__version__
    # SHA-256 of the training file, by hashlib on the bytes (independent of the writer)
    assert doc["training"] == {"file": "lab.csv", "rows": 16,
                               "sha256": hashlib.sha256(training_file.read_bytes()).hexdigest()}
    entry = doc["models"][0]
    assert entry["kind"] == "ridge" and entry["property"] == "cetane_number"
    assert set(entry["params"]) == {"x_mean", "x_scale", "coef", "intercept", "alpha"}
    assert len(entry["domain"]["lower"]) == len(entry["domain"]["features"])
    assert entry["cv"]["scheme"]["name"] == "leave-one-out"
    assert entry["cv"]["scores"][0]["candidate"] == "baseline:mean"  # the yardstick first
    assert entry["candidate"] in [row["candidate"] for row in entry["cv"]["scores"]]
    assert entry["band"]["sd"] == pytest.approx(
        next(r["rmse"] for r in entry["cv"]["scores"] if r["candidate"] == entry["candidate"]))
    assert entry["band"]["meaning"].startswith("standard uncertainty (one standard deviation)")
    contents = read_model_file(path)
    assert contents.training["rows"] == 16 and contents.package_version == estimator.__version__


def test_several_properties_share_one_file(tmp_path, training_file):
    lab = synthetic_lab()
    lab.metadata["cfpp_C"] = np.linspace(-10, 12, len(lab))
    models = [fit_property(lab, p, kinds=("recalibrated",)).model
              for p in ("cetane_number", "cfpp_C")]
    path = write(tmp_path, models, training_file)
    assert [m.property for m in load_models(path)] == ["cetane_number", "cfpp_C"]
    assert [m.property for m in load_models(path, ["cfpp_C"])] == ["cetane_number", "cfpp_C"]


def test_a_file_for_another_property_is_refused(tmp_path, training_file):
    path = write(tmp_path, [fitted("recalibrated")], training_file)
    with pytest.raises(ModelFileError) as err:
        load_models(path, properties=["cfpp_C"])
    assert str(err.value) == ("model.json: holds a model for cetane_number, not cfpp_C; fit "
                              "cfpp_C with 'fame-estimator fit LAB_FILE --property cfpp_C'")


def test_an_unknown_format_version_is_refused(tmp_path, training_file):
    path = write(tmp_path, [fitted("recalibrated")], training_file)
    edit(path, lambda d: d.update(format_version=3))
    assert refused(path) == (
        f"model.json: format_version 3 is not supported (fame-estimator "
        f"{estimator.__version__} reads version 2); refit with 'fame-estimator fit'"
    )


def test_a_version_1_file_with_95_percent_intervals_is_refused(tmp_path, training_file):
    # version 1 stored 95 % half-widths under "interval"; an edited one with level 5 is
    # refused too (by its version, before any number is read)
    path = write(tmp_path, [fitted("recalibrated")], training_file)

    def old_style(doc):
        doc["format_version"] = 1
        model = doc["models"][0]
        model["interval"] = {"level": 5, "source": "1.96 x CV RMSE", "half_width": 1.0}
        del model["band"]

    edit(path, old_style)
    assert refused(path) == (
        f"model.json: format_version 1 stored 95 % intervals; fame-estimator "
        f"{estimator.__version__} prints one standard uncertainty and reads version 2; "
        "refit with 'fame-estimator fit'"
    )


def test_a_missing_key_is_refused_by_its_path(tmp_path, training_file):
    path = write(tmp_path, [fitted("recalibrated")], training_file)
    edit(path, lambda d: d["models"][0]["params"].pop("slope"))
    assert refused(path) == f"model.json: missing key models[0].params.slope; {REFIT}"


def test_a_wrong_type_is_refused_by_its_path(tmp_path, training_file):
    path = write(tmp_path, [fitted("recalibrated")], training_file)
    edit(path, lambda d: d["models"][0]["params"].update(slope="1.03"))
    assert refused(path) == (
        f"model.json: models[0].params.slope must be a number, got a string; {REFIT}"
    )


def test_a_list_of_the_wrong_length_is_refused(tmp_path, training_file):
    model = fitted("ridge")
    d = len(model.features)
    path = write(tmp_path, [model], training_file)
    edit(path, lambda doc: doc["models"][0]["params"]["coef"].pop())
    assert refused(path) == (
        f"model.json: models[0].params.coef must be a list of {d} numbers, got {d - 1}; {REFIT}"
    )


def test_a_value_changed_without_rewriting_is_caught_by_the_checksum(tmp_path, training_file):
    path = write(tmp_path, [fitted("recalibrated")], training_file)
    edit(path, lambda d: d["models"][0]["params"].update(slope=1.5), rechecksum=False)
    assert refused(path) == (
        "model.json: checksum does not match the contents (the file was edited or damaged "
        "after it was written); restore the original file or refit with 'fame-estimator fit'"
    )


def test_an_unknown_model_kind_is_refused(tmp_path, training_file):
    path = write(tmp_path, [fitted("recalibrated")], training_file)
    edit(path, lambda d: d["models"][0].update(kind="pickle"))
    assert refused(path) == (
        "model.json: models[0].kind 'pickle' is not one of published, recalibrated, pls, "
        f"ridge, gp; {REFIT}"
    )


def test_an_extra_parameter_is_refused(tmp_path, training_file):
    path = write(tmp_path, [fitted("recalibrated")], training_file)
    edit(path, lambda d: d["models"][0]["params"].update(__reduce__="os.system"))
    assert refused(path) == (
        f"model.json: models[0].params.__reduce__ is not a parameter of a recalibrated model; "
        f"{REFIT}"
    )


@pytest.mark.parametrize("text, message", [
    ("not json", "model.json: not valid JSON (Expecting value at line 1); not a model file"),
    ('{"format": "fame-estimator model", "format_version": NaN}',
     "model.json: contains NaN, which a model file never holds; refit with "
     "'fame-estimator fit'"),
    ('{"format": 1, "format": 2}',
     "model.json: key 'format' appears twice; refit with 'fame-estimator fit'"),
    ("[1, 2]", "model.json: not a fame-estimator model file (top level is not an object)"),
    ('{"models": []}',
     "model.json: not a fame-estimator model file (format key is not 'fame-estimator model'); "
     "write one with 'fame-estimator fit LAB_FILE --property NAME -o model.json'"),
])
def test_malformed_files_are_refused_with_one_line(tmp_path, text, message):
    path = tmp_path / "model.json"
    path.write_text(text, encoding="utf-8")
    assert refused(path) == message


def test_a_missing_file_is_refused(tmp_path):
    assert refused(tmp_path / "model.json") == "model.json: no such model file"


def test_python_code_in_a_string_stays_a_string(tmp_path, training_file):
    marker = tmp_path / "pwned"
    code = f"__import__('os').system('touch {marker}')"
    path = write(tmp_path, [fitted("recalibrated")], training_file)
    edit(path, lambda d: d["models"][0]["cv"].update(statement=code))
    edit(path, lambda d: d["models"][0]["notes"].append(f"{{{{ {code} }}}}"))
    (model,) = load_models(path)
    new = Profile.from_oils(["rapeseed"]).wt_pct
    model.predict(new)
    assert model.cv["statement"] == code
    assert not marker.exists()


REFIT_MODULES = ["features", "candidates", "crossval", "model_file", "__init__"]


@pytest.mark.parametrize("module", REFIT_MODULES)
def test_refit_modules_import_no_serializer_and_call_no_eval(module):
    source = Path(model_file.__file__).with_name(f"{module}.py").read_text(encoding="utf-8")
    tree = ast.parse(source)
    imported = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            imported |= {a.name.split(".")[0] for a in node.names}
        elif isinstance(node, ast.ImportFrom) and node.module:
            imported.add(node.module.split(".")[0])
    assert not imported & {"pickle", "joblib", "marshal", "shelve", "dill", "cloudpickle",
                           "importlib", "yaml"}
    calls = {n.func.id for n in ast.walk(tree)
             if isinstance(n, ast.Call) and isinstance(n.func, ast.Name)}
    assert not calls & {"eval", "exec", "compile", "__import__", "getattr"}


def test_the_writer_refuses_two_models_for_one_property(tmp_path, training_file):
    model = fitted("recalibrated")
    with pytest.raises(ModelFileError, match="two models for cetane_number"):
        write(tmp_path, [model, model], training_file)


# ------------------------------------------------------- bounds and range checks
# Every edit below recomputes the checksum, so the refusal comes from the range or size
# check, not from the checksum.
@pytest.mark.parametrize("kind, change, message", [
    ("recalibrated", lambda m: m["params"].update(intercept=-1e308),
     "models[0].params.intercept must be a number within ±1e+12, got -1e+308"),
    ("recalibrated", lambda m: m["params"].update(intercept=-5e5),
     "models[0].params.intercept with the slope gives -5e+05 for an estimate of 60, "
     "outside -120 to 240 (plausible cetane_number 0 to 120, widened by its span)"),
    ("recalibrated", lambda m: m["params"].update(slope=40.0),
     "models[0].params.slope must lie between -10 and 10, got 40"),
    ("ridge", lambda m: m["params"].update(intercept=1e4),
     "models[0].params.intercept gives 1e+04 at the training mean, outside -120 to 240 "
     "(plausible cetane_number 0 to 120, widened by its span)"),
    ("ridge", lambda m: m["params"].update(alpha=-1.0),
     "models[0].params.alpha must lie between 1e-12 and 1e+06, got -1"),
    ("gp", lambda m: m["params"].update(length_scale=1e9),
     "models[0].params.length_scale must lie between 1e-12 and 10000, got 1e+09"),
    ("recalibrated", lambda m: m["band"].update(sd=5000.0),
     "models[0].band.sd must lie between 1.2e-10 and 120, got 5000"),
    ("recalibrated", lambda m: m["band"].update(gp_sd_scale=5.0),
     "models[0].band.gp_sd_scale must lie between 1 and 1, got 5"),
    ("gp", lambda m: m["band"].update(gp_sd_scale=5e3),
     "models[0].band.gp_sd_scale must lie between 0.05 and 100, got 5000"),
    ("recalibrated", lambda m: m["domain"]["lower"].__setitem__(0, 150.0),
     "models[0].domain.lower must hold numbers within ±100 only"),
    ("recalibrated", lambda m: m["domain"]["lower"].__setitem__(2, 99.0),
     "models[0].domain.lower must not exceed domain.upper"),
    ("recalibrated", lambda m: m["cv"].update(tie_tolerance=3.0),
     "models[0].cv.tie_tolerance must lie between 0 and 0.5, got 3"),
    ("recalibrated", lambda m: m.update(n_samples=10**40),
     "models[0].n_samples must be at most 10000000, got 1000000000... (41 digits)"),
], ids=["intercept-1e308", "intercept-off-scale", "slope", "ridge-intercept", "alpha",
        "length-scale", "band-sd", "scale-on-a-linear-model", "gp-scale", "domain-range",
        "domain-order", "tie-tolerance", "huge-count"])
def test_absurd_numbers_are_refused_by_range_checks(tmp_path, training_file, kind, change,
                                                    message):
    path = write(tmp_path, [fitted(kind)], training_file)
    edit(path, lambda d: change(d["models"][0]))
    assert refused(path) == f"model.json: {message}; {REFIT}"


def test_a_gaussian_process_with_too_many_training_rows_is_refused(tmp_path, training_file):
    from estimator.refit.limits import MAX_GP_TRAINING_ROWS

    path = write(tmp_path, [fitted("gp")], training_file)

    def grow(doc):
        params = doc["models"][0]["params"]
        rows = params["x_train"]
        params["x_train"] = (rows * (MAX_GP_TRAINING_ROWS // len(rows) + 1))
        params["y_train"] = params["y_train"] * (MAX_GP_TRAINING_ROWS // len(rows) + 1)

    edit(path, grow)
    n = len(json.loads(path.read_text(encoding="utf-8"))["models"][0]["params"]["x_train"])
    assert refused(path) == (f"model.json: models[0].params.x_train holds {n} rows, at most "
                             f"{MAX_GP_TRAINING_ROWS} allowed; {REFIT}")


def test_too_many_features_are_refused(tmp_path, training_file):
    path = write(tmp_path, [fitted("ridge")], training_file)
    edit(path, lambda d: d["models"][0].update(features=["C16:0"] * 65))
    assert refused(path) == ("model.json: models[0].features holds 65 entries, at most 64 "
                             f"allowed; {REFIT}")


def test_what_fit_writes_stays_within_what_the_reader_accepts():
    # regression test: the writer's caps against the reader's bounds
    from estimator.refit import limits
    from estimator.refit.candidates import GP_MAX_TRAIN
    from estimator.refit.features import FEATURE_SETS, MAX_DOMAIN_POINTS

    assert GP_MAX_TRAIN <= limits.MAX_GP_TRAINING_ROWS
    assert MAX_DOMAIN_POINTS <= limits.MAX_DOMAIN_ROWS
    assert max(len(f) for f in FEATURE_SETS.values()) <= limits.MAX_FEATURES


@pytest.mark.parametrize("text, message", [
    ("[" * 100_000 + "]" * 100_000,
     "model.json: nested deeper than a model file ever is; not a model file"),
    ('{"format": "fame-estimator model", "format_version": ' + "9" * 5000 + "}",
     "model.json: holds a number too long to be a model-file number; not a model file"),
], ids=["deep-nesting", "huge-integer"])
def test_hostile_json_gets_one_line(tmp_path, text, message):
    path = tmp_path / "model.json"
    path.write_text(text, encoding="utf-8")
    assert refused(path) == message


def test_a_gp_model_file_predicts_in_bounded_blocks(tmp_path, training_file, monkeypatch):
    # the block size changes memory, not the numbers (regression test)
    from estimator.refit import candidates

    model = fitted("gp")
    new = Profile.from_oils(["rapeseed", "soybean", "palm", "sunflower", "coconut"]).wt_pct
    whole = model.predict(new)
    monkeypatch.setattr(candidates, "GP_BLOCK_ENTRIES", 1)
    blocked = model.predict(new)
    np.testing.assert_allclose(blocked.value, whole.value, rtol=1e-12)
    np.testing.assert_allclose(blocked.error, whole.error, rtol=1e-12)
