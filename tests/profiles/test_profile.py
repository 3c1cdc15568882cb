"""Profile validation: sums, renormalisation, unidentified mass, basis, built-in oils."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from estimator.errors import ProfileError, UnknownNameError
from estimator.profiles.profile import Profile, oil_names
from estimator.tables import species_keys


def frame(rows: dict[str, dict[str, float]]) -> pd.DataFrame:
    return pd.DataFrame.from_dict(rows, orient="index").fillna(0.0)


def test_sum_within_tolerance_is_renormalised_with_a_note():
    p = Profile.from_frame(frame({"a": {"C16:0": 10, "C18:1": 89}}))
    assert p.wt_pct.sum() == pytest.approx(100)
    assert p.notes["a"] == "sum 99.00 renormalised to 100"


def test_sum_beyond_tolerance_is_refused_with_sample_and_sum():
    with pytest.raises(ProfileError) as err:
        Profile.from_frame(frame({"lot-9": {"C16:0": 10, "C18:1": 80}}), source="x.csv")
    assert str(err.value) == (
        "x.csv: row 1 (sample 'lot-9'): composition sums to 90.00 wt%, more than 2 points "
        "from 100; add an 'other' column for unidentified peaks or raise --sum-tolerance"
    )


def test_unidentified_mass_counts_in_the_sum_then_is_excluded():
    p = Profile.from_frame(frame({"a": {"C16:0": 10, "C18:1": 85}}),
                           other=pd.Series({"a": 5.0}))
    i = species_keys().index("C16:0")
    assert p.wt_pct[0, i] == pytest.approx(100 * 10 / 95)
    assert p.notes["a"] == "5.00 wt% unidentified excluded, rest renormalised to 100"


def test_negative_value_is_refused():
    with pytest.raises(ProfileError, match="negative value -1"):
        Profile.from_frame(frame({"a": {"C16:0": -1, "C18:1": 101}}))


def test_duplicate_sample_ids_are_refused():
    comp = pd.DataFrame({"C18:1": [100.0, 100.0]}, index=["a", "a"])
    with pytest.raises(ProfileError) as err:
        Profile.from_frame(comp, source="f.csv", rows=[2, 3])
    assert str(err.value) == "f.csv: duplicate sample id 'a' (row 2, row 3)"


def test_all_zero_composition_is_refused():
    comp = pd.DataFrame({"C18:1": [0.0]}, index=["a"])
    with pytest.raises(ProfileError, match="sums to 0.00"):
        Profile.from_frame(comp)


def test_oil_basis_converts_to_fame_basis_exactly():
    # triglyceride of lauric acid vs triolein: per-chain masses 213.00 vs 295.15 g/mol,
    # FAME 214.35 vs 296.50 g/mol (stoichiometry, common practice)
    p = Profile.from_frame(frame({"a": {"C12:0": 50, "C18:1": 50}}), basis="oil")
    i = species_keys().index("C12:0")
    m12 = 50 / 213.004 * 214.349
    m18 = 50 / 295.150 * 296.495
    assert p.wt_pct[0, i] == pytest.approx(100 * m12 / (m12 + m18), rel=1e-5)
    assert p.notes["a"] == "converted from oil basis"


def test_unknown_oil_lists_close_matches():
    with pytest.raises(UnknownNameError) as err:
        Profile.from_oils(["soyabean"])
    assert str(err.value) == (
        "unknown oil 'soyabean'; close matches: soybean; "
        "'fame-estimator oils' lists the built-in oils"
    )


@pytest.mark.parametrize("oil", oil_names())
def test_every_library_oil_builds_a_valid_profile(oil):
    p = Profile.from_oils([oil])
    assert p.wt_pct.sum() == pytest.approx(100)
    assert (p.wt_pct >= 0).all()


profiles = st.dictionaries(
    st.sampled_from(species_keys()), st.floats(min_value=0.01, max_value=50),
    min_size=2, max_size=8,
)


@settings(max_examples=50, deadline=None)
@given(profiles, st.randoms(use_true_random=False))
def test_column_order_does_not_matter(values, rnd):
    total = sum(values.values())
    values = {k: 100 * v / total for k, v in values.items()}
    keys = list(values)
    shuffled = keys[:]
    rnd.shuffle(shuffled)
    a = Profile.from_frame(pd.DataFrame([values], index=["s"])[keys])
    b = Profile.from_frame(pd.DataFrame([values], index=["s"])[shuffled])
    np.testing.assert_allclose(a.wt_pct, b.wt_pct)


@settings(max_examples=50, deadline=None)
@given(profiles)
def test_renormalising_twice_changes_nothing(values):
    total = sum(values.values())
    scaled = {k: 99.0 * v / total for k, v in values.items()}  # within the tolerance
    once = Profile.from_frame(pd.DataFrame([scaled], index=["s"]))
    twice = Profile.from_frame(once.composition)
    np.testing.assert_allclose(once.wt_pct, twice.wt_pct, atol=1e-12)
    assert twice.notes["s"] == ""


def test_profile_subset_and_concat_keep_ids_unique():
    a = Profile.from_oils(["soybean", "palm"])
    with pytest.raises(ProfileError, match="appears in more than one input"):
        Profile.concat([a, a.subset(["palm"])])


# ---------------------------------------------------------------- oil names people type
@pytest.mark.parametrize(("typed", "oil"), [
    ("canola", "rapeseed"),  # canola: the low-erucic rapeseed (common practice)
    ("Canola oil", "rapeseed"), ("tallow", "beef-tallow"), ("UCO", "used-cooking-oil"),
    ("yellow grease", "used-cooking-oil"), ("soya", "soybean"), ("maize", "corn"),
    ("HEAR", "rapeseed-high-erucic"), ("palm oil", "palm"),
])
def test_oil_aliases_resolve(typed, oil):
    from estimator.profiles.profile import resolve_oil

    assert resolve_oil(typed) == oil


@pytest.mark.parametrize(("typed", "allowed"), [
    ("canolla", set()), ("grapeseed", set()), ("soyabean", {"soybean"}),
    ("rapeseed-winter", {"rapeseed", "rapeseed-high-erucic"}),
    ("saflower-high-oleic", {"safflower-high-oleic"}),
])
def test_a_suggestion_never_offers_another_crop(typed, allowed):
    from estimator.errors import UnknownNameError
    from estimator.profiles.profile import resolve_oil

    with pytest.raises(UnknownNameError) as err:
        resolve_oil(typed)
    text = str(err.value)
    offered = set(text.split("close matches: ")[1].split(";")[0].split(", ")) \
        if "close matches" in text else set()
    assert offered == allowed
