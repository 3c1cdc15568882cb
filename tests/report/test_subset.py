"""Many lots: the charts and the report show a readable subset, the tables every lot."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from estimator.comparison import compare_lots
from estimator.profiles.profile import Profile
from estimator.report.subset import MAX_LOTS_SHOWN, readable_subset, subset_comparison


def test_few_lots_are_all_shown_without_a_note():
    positions, note = readable_subset(["meets", "fails", "fails"])
    assert positions.tolist() == [0, 1, 2]
    assert note == ""


def test_many_lots_show_the_best_and_the_first_failing_ones_and_count_the_rest():
    overall = ["meets"] * 1500 + ["too close to call"] * 300 + ["fails"] * 200
    positions, note = readable_subset(overall, limit=30)
    assert len(positions) == 30
    assert positions[:15].tolist() == list(range(15))
    assert positions[15:].tolist() == list(range(1800, 1815))
    assert note == ("30 of 2000 lots shown: the 15 best ranked and 15 of the 200 that fail; "
                    "the other 1970 are in the tables (comparison.csv, comparison.xlsx).")


def test_with_few_failing_lots_the_rest_of_the_places_go_to_the_next_best():
    positions, note = readable_subset(["meets"] * 100 + ["fails"] * 2, limit=10)
    assert positions.tolist() == [0, 1, 2, 3, 4, 5, 6, 7, 100, 101]
    assert "the 8 best ranked and 2 of the 2 that fail" in note


def _many_lots(n: int) -> Profile:
    rng = np.random.default_rng(3)
    oleic = rng.uniform(20, 80, n)
    comp = pd.DataFrame({"C16:0": 100 - oleic - 15, "C18:0": 5.0, "C18:1": oleic,
                         "C18:2": 10.0}, index=[f"L{i:03d}" for i in range(n)])
    meta = pd.DataFrame({"price_per_t": rng.uniform(800, 1000, n)}, index=comp.index)
    return Profile.from_frame(comp, metadata=meta, source="many.csv")


@pytest.mark.filterwarnings("ignore")
def test_charts_and_report_tables_of_many_lots_hold_the_subset_the_files_every_lot():
    pytest.importorskip("matplotlib")
    from estimator.report.html import comparison_sections
    from estimator.report.plots import comparison_figures

    comparison = compare_lots(_many_lots(MAX_LOTS_SHOWN + 25))
    view, note = subset_comparison(comparison)
    assert len(view.ranked) == MAX_LOTS_SHOWN
    assert set(view.verdicts["sample"]) == set(view.ranked["sample"])
    assert len(comparison.ranked) == MAX_LOTS_SHOWN + 25  # the full table is untouched
    plots = comparison_figures(comparison)
    cost = next(p for p in plots if p.name == "cost_per_t_fuel")
    assert len(cost.figure.axes[0].get_yticklabels()) == MAX_LOTS_SHOWN
    assert cost.caption.endswith(note)
    sections = comparison_sections(comparison, plots)
    ranking = next(s for s in sections if s.title == "Ranking")
    assert note in ranking.html
    assert f"{MAX_LOTS_SHOWN + 25} lots" in sections[0].html  # the summary counts every lot
