"""Refit features by name, and the training domain that flags unfamiliar samples.

Compositions are the built-in typical feedstock profiles (estimator/tables/feedstocks.csv,
each row with its source) and synthetic perturbations of them.
"""

from __future__ import annotations

import numpy as np
import pytest

from estimator.profiles.profile import Profile
from estimator.properties.descriptors import descriptors
from estimator.properties.methods import get_method
from estimator.refit.features import (
    DOMAIN_FEATURES,
    DOMAIN_PERCENTILE,
    FEATURE_SETS,
    MAIN_SPECIES,
    OTHER_SPECIES,
    TrainingDomain,
    compute_features,
    estimate_feature,
    feature_unit,
    parse_estimate_feature,
)
from estimator.tables import species_keys


def perturbed(oils, per_oil=6, spread=0.1, seed=0):
    """Synthetic lab-like samples: built-in profiles with lognormal noise, renormalised."""
    base = Profile.from_oils(oils).wt_pct
    rng = np.random.default_rng(seed)
    rows = np.repeat(base, per_oil, axis=0) * np.exp(rng.normal(0, spread, (len(oils) * per_oil,
                                                                            base.shape[1])))
    return 100.0 * rows / rows.sum(axis=1, keepdims=True)


def test_species_and_other_species_features_are_the_mass_percentages():
    w = Profile.from_oils(["soybean", "coconut"]).wt_pct
    x = compute_features(w, FEATURE_SETS["composition"])
    keys = species_keys()
    for j, name in enumerate(MAIN_SPECIES):
        np.testing.assert_array_equal(x[:, j], w[:, keys.index(name)])
    # coconut's C8:0 and C10:0 are outside the main species: they are the lumped rest
    rest = x[:, FEATURE_SETS["composition"].index(OTHER_SPECIES)]
    main = w[:, [keys.index(k) for k in MAIN_SPECIES]].sum(axis=1)
    np.testing.assert_allclose(rest, 100.0 - main, atol=1e-9)
    assert rest[1] > 10.0  # coconut oil is rich in C8:0/C10:0 (Codex CXS 210 via feedstocks.csv)


def test_descriptor_features_equal_the_descriptor_module():
    w = Profile.from_oils(["rapeseed", "palm", "beef-tallow"]).wt_pct
    x = compute_features(w, FEATURE_SETS["descriptors"])
    d = descriptors(w)
    for j, name in enumerate(FEATURE_SETS["descriptors"]):
        np.testing.assert_array_equal(x[:, j], d[name])


def test_estimate_features_are_the_registry_methods_values():
    w = Profile.from_oils(["rapeseed", "palm"]).wt_pct
    name = estimate_feature("cfpp_C", "ramos2009")
    assert parse_estimate_feature(name) == ("cfpp_C", "ramos2009")
    expected = get_method("cfpp_C", "ramos2009").evaluate(w, descriptors(w))
    np.testing.assert_array_equal(compute_features(w, [name])[:, 0], expected)


def test_unknown_feature_name_is_refused():
    w = Profile.from_oils(["rapeseed"]).wt_pct
    with pytest.raises(KeyError, match="unknown feature 'C19:0'"):
        compute_features(w, ["C19:0"])


def test_feature_units_come_from_species_and_descriptor_tables():
    assert feature_unit("C18:1") == "wt %"
    assert feature_unit("lcsf_wt_pct") == "wt %"
    assert feature_unit("saponification_value_mgKOH_g") == "mg KOH/g"


def test_training_samples_lie_inside_their_own_domain():
    w = perturbed(["rapeseed", "soybean", "sunflower"])
    dom = TrainingDomain.from_training(w)
    assert dom.features == DOMAIN_FEATURES
    assert dom.contains(w).all()
    assert np.all(dom.distance(w) == 0.0)


def test_threshold_is_the_95th_percentile_of_leave_one_out_nearest_distances():
    from sklearn.neighbors import NearestNeighbors

    # scikit-learn's nearest-neighbour search on the standardized domain features is
    # the independent reference for the leave-one-out distances.
    w = perturbed(["rapeseed", "soybean", "palm"], seed=4)
    dom = TrainingDomain.from_training(w)
    x = compute_features(w, DOMAIN_FEATURES)
    z = (x - x.mean(axis=0)) / np.maximum(x.std(axis=0), 1.0)
    dist, _ = NearestNeighbors(n_neighbors=2).fit(z).kneighbors(z)
    assert dom.threshold == pytest.approx(np.percentile(dist[:, 1], DOMAIN_PERCENTILE),
                                          rel=1e-12)


def test_a_sample_far_outside_the_training_compositions_is_out_of_domain():
    # Synthetic training set of C16-C18 oils; coconut oil (lauric) and high-erucic
    # rapeseed (C22:1), typical profiles of feedstocks.csv, lie far outside it.
    w = perturbed(["rapeseed", "soybean", "sunflower", "palm"])
    dom = TrainingDomain.from_training(w)
    new = Profile.from_oils(["coconut", "rapeseed-high-erucic", "rapeseed"]).wt_pct
    inside = dom.contains(new)
    assert inside.tolist() == [False, False, True]
    reasons = dom.reasons(new)
    assert reasons[0].startswith("C12:0 ")
    assert reasons[0].split("; ")[0] == "C12:0 48.1 wt % outside the lab range 0-1 wt %"
    assert "standardized units from the nearest training sample" in reasons[0]
    assert "C22:1" in reasons[1]
    assert reasons[2] == ""


def test_a_blend_between_two_training_feedstocks_within_reach_stays_in_domain():
    # 50/50 rapeseed-soybean lies between samples the lab has seen (bounds hold) but
    # may sit far from any one of them: the distance rule decides, and says why.
    w = perturbed(["rapeseed", "soybean"], per_oil=10)
    dom = TrainingDomain.from_training(w)
    mid = 0.5 * (w[:1] + w[10:11])
    assert dom.within_bounds(mid).all()
    assert bool(dom.contains(mid)[0]) == bool(dom.distance(mid)[0] <= dom.threshold)


def test_domain_round_trips_through_plain_data():
    w = perturbed(["rapeseed", "palm"])
    dom = TrainingDomain.from_training(w)
    again = TrainingDomain.from_dict(dom.to_dict())
    new = Profile.from_oils(["coconut", "soybean", "rapeseed"]).wt_pct
    np.testing.assert_array_equal(again.distance(new), dom.distance(new))
    np.testing.assert_array_equal(again.contains(new), dom.contains(new))


def test_domain_needs_three_samples():
    with pytest.raises(ValueError, match="at least three samples"):
        TrainingDomain.from_training(Profile.from_oils(["rapeseed", "palm"]).wt_pct)
