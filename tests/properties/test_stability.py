"""Oxidation stability: Park 2008, the oxidizability indicators, and their direction."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from estimator.properties import stability
from estimator.properties.descriptors import descriptors
from estimator.properties.methods import get_method, methods_for
from estimator.tables import species_keys

KEYS = species_keys()


def comp(mapping: dict[str, float]) -> np.ndarray:
    w = np.zeros((1, len(KEYS)))
    for k, v in mapping.items():
        w[0, KEYS.index(k)] = v
    return 100.0 * w / w.sum()


@pytest.mark.regression  # re-derives the code's own constants: a pin, not a validation
def test_park2008_worked_number_and_pole():
    # Park 2008 (MEMORY): 117.9295 / X + 2.5905; rapeseed X = 19.0 + 8.5 (our arithmetic)
    assert stability.park2008(27.5) == pytest.approx(117.9295 / 27.5 + 2.5905, abs=1e-12)
    out = stability.park2008(np.array([0.0, 10.0]))
    assert np.isnan(out[0]) and np.isfinite(out[1])  # NaN only at the pole X = 0


@pytest.mark.parametrize(("x", "inside"), [(5.0, False), (9.8, True), (61.1, True), (70.0, False)])
def test_park2008_flags_x_outside_its_range(x, inside):
    w = comp({"C18:1": 100.0 - x, "C18:2": x})
    method = get_method("oxidation_stability_110C_h", "park2008")
    assert method.in_domain(w, descriptors(w))[0] == inside


@pytest.mark.parametrize("key", ["C20:4", "C22:6"])
def test_highly_polyunsaturated_esters_are_nan_and_flagged(key):
    # neat C20:4 / C22:6 esters: Rancimat OSI < 0.1 h (Knothe 2012, VERIFIED [S13]); Park's X
    # ignores them, so the estimate is NaN (X = 0) and the sample is out of domain
    w = comp({key: 100.0})
    method = get_method("oxidation_stability_110C_h", "park2008")
    assert np.isnan(method.evaluate(w, descriptors(w))[0])
    assert not method.in_domain(w, descriptors(w))[0]
    # the BAPE indicator still ranks it as far less stable than linseed (standards.md 4.2, [S27])
    linseed = comp({"C16:0": 6, "C18:0": 3, "C18:1": 20, "C18:2": 17, "C18:3": 53})
    knothe = get_method("oxidizability_indicator_wt_pct", "knothe2002")
    assert knothe.evaluate(w, descriptors(w))[0] > knothe.evaluate(linseed,
                                                                   descriptors(linseed))[0]


def test_linseed_ester_fails_the_en14214_stability_limit():
    # EN 14214 oxidation stability >= 8.0 h (standards.md 1.1, VERIFIED); linseed methyl ester
    # (standards.md 4.2, [S27]) fails it without antioxidant (common practice)
    w = comp({"C16:0": 6, "C18:0": 3, "C18:1": 20, "C18:2": 17, "C18:3": 53})
    assert get_method("oxidation_stability_110C_h", "park2008").evaluate(w, descriptors(w))[0] < 8


def test_indicators_are_linoleate_equivalents():
    # pure methyl linoleate scores 100 on both (Knothe 2002 BAPE; McCormick 2007 OX, MEMORY)
    w = comp({"C18:2": 100.0})
    d = descriptors(w)
    for m in methods_for("oxidizability_indicator_wt_pct").values():
        assert m.evaluate(w, d)[0] == pytest.approx(100.0)
        assert "INDICATOR" in m.note and "not an induction period" in m.note


# transfers towards more bis-allylic positions
C18 = ["C18:0", "C18:1", "C18:2", "C18:3"]
compositions = st.lists(st.floats(0.0, 1.0), min_size=len(KEYS), max_size=len(KEYS)).filter(
    lambda xs: sum(xs) > 0.05
)


@settings(max_examples=80, deadline=None)
@given(compositions, st.integers(0, 2), st.integers(1, 3), st.floats(0.0, 1.0))
def test_more_bis_allylic_positions_never_raise_the_stability_estimate(xs, src, step, frac):
    dst = min(src + step, 3)
    if dst == src:
        return
    w0 = np.array(xs)[None, :]
    w0 = 100.0 * w0 / w0.sum()
    w1 = w0.copy()
    moved = frac * w1[0, KEYS.index(C18[src])]
    w1[0, KEYS.index(C18[src])] -= moved
    w1[0, KEYS.index(C18[dst])] += moved
    d0, d1 = descriptors(w0), descriptors(w1)
    park = get_method("oxidation_stability_110C_h", "park2008")
    before, after = park.evaluate(w0, d0)[0], park.evaluate(w1, d1)[0]
    if np.isfinite(before):
        assert after <= before + 1e-9
    # the indicators are oxidizabilities: they never fall
    for m in methods_for("oxidizability_indicator_wt_pct").values():
        assert m.evaluate(w1, d1)[0] >= m.evaluate(w0, d0)[0] - 1e-9


@settings(max_examples=60, deadline=None)
@given(compositions, st.sampled_from(["C18:2", "C18:3", "C18:4", "C20:4", "C20:5", "C22:6"]),
       st.floats(0.0, 1.0))
def test_bape_indicator_rises_with_any_polyene(xs, polyene, frac):
    w0 = np.array(xs)[None, :]
    w0 = 100.0 * w0 / w0.sum()
    w1 = w0.copy()
    moved = frac * w1[0, KEYS.index("C18:1")]
    w1[0, KEYS.index("C18:1")] -= moved
    w1[0, KEYS.index(polyene)] += moved
    knothe = get_method("oxidizability_indicator_wt_pct", "knothe2002")
    assert knothe.evaluate(w1, descriptors(w1))[0] >= knothe.evaluate(w0, descriptors(w0))[0]


def test_park2008_treats_a_vanishing_linoleate_content_as_zero():
    # found by hypothesis: X = 5.6e-307 wt % overflowed the quotient; X = 0 is the pole
    from estimator.properties.stability import park2008

    assert np.isnan(park2008([5.6e-307, 0.0])).all()
