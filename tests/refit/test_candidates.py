"""Candidate models: fitted parameters predict exactly what scikit-learn's fitted models do.

All data here are synthetic (random features and a stated linear law plus noise).
"""

from __future__ import annotations

import warnings

import numpy as np
import pytest

from estimator.refit.candidates import (
    KINDS,
    Candidate,
    candidates_for,
    predict_params,
    sklearn_estimator,
)
from estimator.refit.features import FEATURE_SETS


def synthetic(n=30, d=5, seed=1):
    """Synthetic features and y = 3 + x @ beta + N(0, 0.3)."""
    rng = np.random.default_rng(seed)
    x = rng.normal(10.0, 3.0, (n, d))
    beta = np.linspace(-1.0, 1.5, d)
    y = 3.0 + x @ beta + rng.normal(0.0, 0.3, n)
    return x, y


def test_candidates_come_in_complexity_order_published_first():
    names = [c.name for c in candidates_for("cetane_number", ["a2000", "b2001"])]
    assert names == [
        "published:a2000", "published:b2001", "recalibrated:a2000", "recalibrated:b2001",
        "pls:descriptors", "pls:composition", "ridge:descriptors", "ridge:composition",
        "gp:descriptors",
    ]
    ranks = [c.complexity for c in candidates_for("cetane_number", ["a2000", "b2001"])]
    assert ranks == [0, 0, 1, 1, 2, 3, 4, 5, 6]
    assert KINDS == ("published", "recalibrated", "pls", "ridge", "gp")


def test_candidate_features_are_the_named_feature_sets():
    cands = {c.name: c for c in candidates_for("cfpp_C", ["ramos2009"])}
    assert cands["ridge:composition"].features == FEATURE_SETS["composition"]
    assert cands["gp:descriptors"].features == FEATURE_SETS["descriptors"]
    assert cands["recalibrated:ramos2009"].features == ("estimate:cfpp_C:ramos2009",)


def test_recalibration_equals_numpy_least_squares():
    # numpy.polyfit (degree 1) as the independent least-squares reference.
    x, y = synthetic(d=1)
    params, _ = Candidate("recalibrated:m", "recalibrated", ("f",), 1).fit(x, y)
    slope, intercept = np.polyfit(x[:, 0], y, 1)
    assert params["slope"] == pytest.approx(slope, rel=1e-10)
    assert params["intercept"] == pytest.approx(intercept, rel=1e-10)


def test_published_candidate_predicts_the_estimate_unchanged():
    x, y = synthetic(d=1)
    cand = Candidate("published:m", "published", ("f",), 0)
    params, _ = cand.fit(x, y)
    assert params == {}
    np.testing.assert_array_equal(cand.predict(params, x), x[:, 0])


@pytest.mark.parametrize("kind", ["ridge", "pls"])
def test_linear_parameters_reproduce_scikit_learn_predictions(kind):
    # scikit-learn's own fitted estimator on the same data is the reference.
    x, y = synthetic()
    params, _ = Candidate(kind, kind, tuple("abcde"), 2).fit(x, y)
    model = sklearn_estimator(kind, n_samples=len(y), n_features=x.shape[1]).fit(x, y)
    x_new = synthetic(n=12, seed=7)[0]
    np.testing.assert_allclose(predict_params(kind, params, x_new)[0],
                               np.ravel(model.predict(x_new)), rtol=1e-10, atol=1e-10)


def test_ridge_alpha_is_chosen_by_inner_cross_validation():
    from sklearn.linear_model import RidgeCV
    from sklearn.preprocessing import StandardScaler

    # RidgeCV's efficient leave-one-out on the standardized features, run here directly.
    x, y = synthetic(seed=3)
    params, _ = Candidate("ridge", "ridge", tuple("abcde"), 4).fit(x, y)
    from estimator.refit.candidates import RIDGE_ALPHAS

    z = StandardScaler().fit_transform(x)
    assert params["alpha"] == RidgeCV(alphas=RIDGE_ALPHAS).fit(z, y).alpha_


def test_gaussian_process_mean_and_sd_reproduce_scikit_learn():
    # GaussianProcessRegressor.predict(return_std=True) on standardized data is the
    # reference; the sd is that of a new measurement (noise included).
    x, y = synthetic(n=25, d=3)
    params, _ = Candidate("gp", "gp", tuple("abc"), 6).fit(x, y, seed=0)
    model = sklearn_estimator("gp", seed=0)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        model.fit(x, y)
    x_new = synthetic(n=9, d=3, seed=5)[0]
    mean, half = predict_params("gp", params, x_new)
    np.testing.assert_allclose(mean, model.predict(x_new), rtol=1e-8)
    scaler, gpr = model.regressor_[0], model.regressor_[1]
    _, sd = gpr.predict(scaler.transform(x_new), return_std=True)
    np.testing.assert_allclose(half, sd * model.transformer_.scale_[0], rtol=1e-7)


def test_gaussian_process_sd_widens_away_from_the_training_samples():
    x, y = synthetic(n=25, d=3)
    params, _ = Candidate("gp", "gp", tuple("abc"), 6).fit(x, y, seed=0)
    near = x[:1]
    far = x[:1] + 40.0
    assert predict_params("gp", params, far)[1][0] > predict_params("gp", params, near)[1][0]


def test_unknown_kind_is_refused():
    with pytest.raises(ValueError, match="unknown candidate kind 'tree'"):
        predict_params("tree", {}, np.zeros((1, 1)))


# ------------------------------------------------- a Gaussian process on many samples
def test_a_large_gaussian_process_tunes_on_a_subset_and_keeps_at_most_gp_max_train(
        monkeypatch):
    # Limits made small so the large-set path runs on 40 samples. The kernel must be
    # what scikit-learn's GaussianProcessRegressor finds on the tuning subset (the
    # reference), standardized on all training samples; the process keeps 25 of them.
    from sklearn.gaussian_process import GaussianProcessRegressor

    from estimator.refit import candidates

    monkeypatch.setattr(candidates, "GP_TUNE_MAX", 15)
    monkeypatch.setattr(candidates, "GP_MAX_TRAIN", 25)
    x, y = synthetic(n=40, d=3, seed=4)
    params, _ = Candidate("gp", "gp", tuple("abc"), 6).fit(x, y, seed=3)
    assert len(params["x_train"]) == 25 and len(params["y_train"]) == 25
    z = (x - x.mean(axis=0)) / x.std(axis=0)
    stored = np.asarray(params["x_train"])
    # every stored row is one of the training samples (standardized on all 40)
    assert all(np.isclose(z, row).all(axis=1).any() for row in stored)
    tune = np.sort(np.random.default_rng(3).permutation(40)[:15])  # regression: the subset
    t = (y - y.mean()) / y.std()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        ref = GaussianProcessRegressor(kernel=candidates._gp_kernel(), alpha=1e-10,
                                       random_state=3).fit(z[tune], t[tune])
    assert params["length_scale"] == pytest.approx(ref.kernel_.k1.k2.length_scale, rel=1e-9)
    assert params["noise_level"] == pytest.approx(ref.kernel_.k2.noise_level, rel=1e-9)
    mean, sd = predict_params("gp", params, x[:5])
    assert np.all(np.isfinite(mean)) and np.all(sd > 0)


def test_a_large_lab_set_notes_how_its_gaussian_process_was_fitted(monkeypatch):
    from estimator.refit import candidates, crossval

    for module in (candidates, crossval):
        monkeypatch.setattr(module, "GP_TUNE_MAX", 15)
        monkeypatch.setattr(module, "GP_MAX_TRAIN", 25)
    import pandas as pd

    from estimator.profiles.profile import Profile
    from estimator.tables import species_keys

    # Synthetic: built-in profiles with lognormal noise; cetane = 45 + 0.25 C16:0 + noise
    rng = np.random.default_rng(6)
    base = Profile.from_oils(["rapeseed", "soybean", "palm", "beef-tallow"]).wt_pct
    w = base[rng.integers(0, 4, 40)] * np.exp(rng.normal(0, 0.15, (40, base.shape[1])))
    w = 100.0 * w / w.sum(axis=1, keepdims=True)
    y = 45.0 + 0.25 * w[:, species_keys().index("C16:0")] + rng.normal(0, 0.5, 40)
    ids = [f"S{i:02d}" for i in range(40)]
    profile = Profile.from_frame(pd.DataFrame(w, index=ids, columns=species_keys()),
                                 metadata=pd.DataFrame({"cetane_number": y}, index=ids),
                                 source="lab.csv")
    fit = crossval.fit_property(profile, "cetane_number", kinds=("gp",))
    assert fit.notes == (
        "Gaussian process on 40 samples (more than 15): in every fold, and for the model "
        "file, its kernel is tuned on a seeded random 15 of the training samples and the "
        "process is conditioned on a seeded random 25 (at most 25); scores stay held-out.",
    )
    assert len(fit.model.params["x_train"]) == 25
    assert fit.notes[0] in fit.model.notes
