"""The report's one-page summary (estimator/report/summary.py): lot reasons and the mix."""

from __future__ import annotations

from pathlib import Path
from types import SimpleNamespace

import pandas as pd
import pytest

from estimator import mixing
from estimator.comparison import compare_lots
from estimator.profiles.io import read_profile
from estimator.report import summary

LOTS = Path(__file__).resolve().parents[2] / "data" / "demo" / "lots.csv"  # invented lots


@pytest.fixture(scope="module")
def lots():
    return read_profile(LOTS, basis="fatty-acid")


@pytest.fixture(scope="module")
def outside_mix(lots):
    # palm and tallow esters lie beyond the Rancimat method's fitted domain (see
    # tests/test_mixing.py): the mix's oxidation stability verdict is outside method range
    return mixing.least_cost_mix(lots.subset(["LOT-P1", "LOT-T1"]),
                                 mixing.mix_constraints("astm-d6751"),
                                 spec="astm-d6751", margin_bands=1.3)


def test_a_mix_outside_a_methods_range_never_gets_the_held_inside_every_limit_sentence(
        outside_mix):
    assert (outside_mix.verdicts["verdict"] == "outside method range").any()
    text = summary._mix_html(outside_mix)
    assert "held inside every" not in text
    held = text.split("It is held inside ", 1)[1].split(" errors.", 1)[0]
    assert "oxidation" not in held and "viscosity 40 °C" in held
    assert held.endswith("each by at least 1.3 stated")
    # said plainly: which property, that the estimate cannot decide, that a lab test does
    undecided = summary.mix_undecided_text(outside_mix)
    assert undecided in text.replace("&#x27;", "'")
    assert "oxidation stability 110 °C" in undecided
    assert "cannot decide whether the mix meets ASTM D6751" in undecided
    assert "a laboratory test by the standard method decides" in undecided


def test_a_users_target_outside_its_methods_range_is_not_claimed_held():
    c = pd.DataFrame({"constraint": ["viscosity >= 1.9 mm2/s", "CFPP <= 0 °C"],
                      "property": ["kin_viscosity_40C_mm2_s", "cfpp_C"],
                      "binding": [False, True], "source": ["ASTM D6751", "user"]})
    v = pd.DataFrame({"sample": "mix", "spec": ["astm-d6751", "target"],
                      "property": ["kin_viscosity_40C_mm2_s", "cfpp_C"],
                      "verdict": ["meets", "outside method range"]})
    mix = SimpleNamespace(feasible=True, lots=pd.DataFrame({"lot": ["A"],
                                                            "share_mass_pct": [100.0]}),
                          cost_per_t_fuel=900.0, constraints=c, verdicts=v,
                          spec="astm-d6751", margin_bands=1.3)
    text = summary._mix_html(mix)
    assert ("It is held inside every ASTM D6751 limit on the properties estimated, each by "
            "at least 1.3") in text
    assert "your own targets" not in text  # the only target cannot be decided
    assert "your own target (CFPP ≤ 0 °C)" in summary.mix_undecided_text(mix)


def test_a_mix_inside_every_methods_range_keeps_the_held_inside_every_limit_sentence(lots):
    mix = mixing.least_cost_mix(lots.subset(["LOT-R1", "LOT-U1"]),
                                mixing.mix_constraints("astm-d6751"), spec="astm-d6751",
                                margin_bands=1.3)
    assert not (mix.verdicts["verdict"] == "outside method range").any()
    text = summary._mix_html(mix)
    assert ("It is held inside every ASTM D6751 limit on the properties estimated, each by "
            "at least 1.3 stated errors.") in text
    assert summary.mix_undecided_text(mix) == ""


def test_the_mix_section_says_which_limits_its_estimates_cannot_decide(outside_mix):
    from estimator.report.blend_sections import mix_sections

    head = mix_sections(outside_mix)[0].html.replace("&#x27;", "'")
    assert summary.mix_undecided_text(outside_mix) in head
    assert "Estimates, not certification" in head


def test_a_lot_row_lists_the_properties_outside_their_methods_range(lots):
    comparison = compare_lots(lots, climate_class="C")
    table = summary.lots_table(comparison).set_index("rank")
    ranked = comparison.ranked.set_index("rank")
    for rank, row in table.iterrows():
        cells = " ".join(str(ranked.loc[rank, c]) for c in ranked.columns
                         if c.startswith("verdict_"))
        why = row["why it fails or is in doubt"]
        if "outside method range" in cells:
            assert summary.OUTSIDE_RANGE_WORDS in why, row["lot"]
        else:
            assert summary.OUTSIDE_RANGE_WORDS not in why, row["lot"]
    tallow = table[table["lot"].str.startswith("LOT-T1")].iloc[0]
    outside = tallow["why it fails or is in doubt"].split(summary.OUTSIDE_RANGE_WORDS)[1]
    assert "oxidation stability 110 °C" in outside and "chance it meets" not in outside
