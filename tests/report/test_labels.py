"""Words for readers: author-year names, readable column labels, marks, one ± formatter."""

from __future__ import annotations

import re

import pytest

from estimator.properties.descriptors import DESCRIPTOR_UNITS
from estimator.properties.methods import PROPERTIES, list_methods
from estimator.report import labels


@pytest.mark.parametrize(("value", "error", "shown"), [
    # Particle Data Group, Review of Particle Physics (2022), Introduction sec. 5.3, the
    # worked rounding examples (from memory): 0.827 ± 0.119 -> 0.83 ± 0.12 and
    # 0.827 ± 0.367 -> 0.8 ± 0.4
    (0.827, 0.119, "0.83 ± 0.12"),
    (0.827, 0.367, "0.8 ± 0.4"),
    # the issue's own example of a value at the precision its band supports
    (18.83444699852902, 1.2, "18.8 ± 1.2"),
])
def test_plus_minus_shows_the_value_to_the_precision_its_band_supports(value, error, shown):
    assert labels.plus_minus(value, error) == shown


def test_plus_minus_never_prints_a_signed_zero_or_a_zero_band():
    # found by review: tallow B20 cloud point printed as "-0.0 ± 5.5" (common practice: no -0)
    assert labels.plus_minus(-0.04, 5.5) == "0 ± 6"
    assert labels.plus_minus(-0.004, 0.25) == "0.00 ± 0.25"
    assert labels.plus_minus(2.26, 0.0) == "2.260"  # no band: four significant figures
    assert labels.plus_minus(float("nan"), 1.0, missing="not estimated") == "not estimated"


def test_the_terminal_html_and_blend_tables_share_one_formatter():
    # regression test: one ± formatter behind every surface
    import pandas as pd

    from estimator.report import html, tables

    assert html.plus_minus(55.123, 3.31) == labels.plus_minus(55.123, 3.31) == "55.1 ± 3.3"
    cells = tables.plus_minus(pd.Series([55.123]), pd.Series([3.31]))
    assert cells.iloc[0] == "55.1 ± 3.3"


def test_every_registry_method_reads_as_its_first_authors_surname_and_year():
    # the registry's own citations (regression test of the name table against them)
    for method, citation in zip(list_methods()["method"], list_methods()["citation"]):
        name = labels.method_name(method)
        assert "_" not in name and not re.fullmatch(r"[a-z0-9]+", name), method
        year = re.search(r"\b(1[89]\d\d|20\d\d)\b", name)
        if year:
            assert year.group(1) in citation, (method, citation)
            assert name.split()[0].rstrip(",") in citation, (method, citation)


def test_every_property_and_descriptor_has_a_spelled_out_label():
    for column in [*PROPERTIES, *DESCRIPTOR_UNITS]:
        text = labels.column_label(column)
        assert "_" not in text and text != column, column
    assert labels.column_label("lcsf_wt_pct") == "long-chain saturated factor [wt %]"
    assert labels.column_label("bape_wt_pct") == "bis-allylic position equivalents [wt %]"
    assert labels.column_label("kin_viscosity_60C_mm2_s") == "viscosity 60 °C [mm²/s]"
    assert labels.column_label("some_new_cost_per_t_fuel") == "some new cost [per t fuel]"


def test_marks_read_as_words():
    assert labels.mark_text("MEMORY") == "recalled, not yet checked against the paper"


def test_free_text_loses_keys_marks_and_note_file_names():
    text = labels.for_readers(
        "MEMORY: Ramos 2009 (from memory); see water_hydrolysis_max_loss_t_per_t_oil; "
        "gp:descriptors beats park2008; EN 14214; standards.md 1.1 [S1][S2]; C=C >= 4")
    for leak in ("MEMORY", "water_hydrolysis", "gp:", "park2008", "standards.md", "[S1]", ">="):
        assert leak not in text, leak
    assert "Park et al. 2008" in text and "Gaussian process on the descriptors" in text


def test_every_mixing_rule_has_words_for_readers():
    from estimator.blending import BLEND_METHODS
    from estimator.report.labels import RULE_WORDS

    rules = {m for methods in BLEND_METHODS.values() for m in methods}
    assert rules <= set(RULE_WORDS)
    assert all("-" not in RULE_WORDS[r].split(" (")[0].split()[0] for r in rules)


def test_every_way_a_limit_enters_the_mix_has_words_for_readers():
    from estimator import mixing

    forms = set(mixing._TRANSFORMS) | {
        "X = C18:2 + C18:3 (Park 2008)", "Y = bis-allylic oxidizability (on Park 2008's scale)",
        "per-ester mole-fraction bounds (ideal solubility)", "nonlinear (checked, SLSQP)"}
    assert forms <= set(labels.LINEAR_FORM_WORDS)
    for form in forms:
        words = labels.linear_form_words(form)
        assert words == labels.for_readers(words)  # nothing left for for_readers to translate
        assert not re.search(r"\b(identity|logarithm|reciprocal)\b", words)


def test_lab_model_sources_read_as_property_names_and_citations_not_keys():
    text = labels.model_sources({
        "cetane_number": "lab model recalibrated:bamgboye2008 from lab_model.json",
        "oxidation_stability_110C_h": "lab model gp:descriptors from lab_model.json"})
    assert text == ("cetane number (lab model Bamgboye & Hansen 2008, recalibrated to the lab "
                    "from lab_model.json); oxidation stability 110 °C (lab model Gaussian "
                    "process on the descriptors from lab_model.json)")
    assert not re.search(r"[a-z]+_[a-z]|\w+:\w+", text.replace("lab_model.json", ""))
