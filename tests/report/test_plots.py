"""Figures: structure a reader relies on (labelled axes with units, limits, lots), on
synthetic data unless a test says otherwise."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import pytest

pytest.importorskip("matplotlib")

from estimator.comparison import compare_lots  # noqa: E402
from estimator.profiles.io import read_profile  # noqa: E402
from estimator.report import plots  # noqa: E402

ROOT = Path(__file__).resolve().parents[2]
LOTS = ROOT / "data" / "demo" / "lots.csv"
UNIT_MARK = "["  # axis labels carry their unit in brackets


def _limit_lines(ax) -> list:
    """The labelled lines (limits); error-bar caps carry private '_' labels."""
    return [ln for ln in ax.get_lines() if not ln.get_label().startswith("_")]


def _legend_texts(fig) -> list[str]:
    legends = list(fig.legends) + [ax.get_legend() for ax in fig.axes if ax.get_legend()]
    return [t.get_text() for leg in legends for t in leg.get_texts()]


def test_property_chart_has_units_lots_limits_and_error_bars():
    lots = ["A", "B", "C"]  # synthetic
    fig = plots.property_by_lot(
        lots, [55.0, 49.0, np.nan], [3.0, 3.0, np.nan], label="cetane number", unit="1",
        limits=[("EN 14214 min 51", 51.0, "en14214"), ("ASTM D6751 min 47", 47.0, "astm")],
        verdicts=["meets", "too close to call", "not estimated"])
    ax = fig.axes[0]
    assert ax.get_xlabel() == "cetane number [dimensionless]"
    assert [t.get_text() for t in ax.get_yticklabels()] == lots  # listed top to bottom
    assert ax.get_yticks()[0] > ax.get_yticks()[-1]
    assert {"EN 14214 min 51", "ASTM D6751 min 47"} <= set(_legend_texts(fig))
    assert [ln.get_xdata()[0] for ln in _limit_lines(ax)] == [51.0, 47.0]
    assert any(t.get_text() == "not estimated" for t in ax.texts)
    assert ax.get_title()


def test_limits_of_one_specification_share_a_colour_and_differ_in_dashes():
    fig = plots.property_by_lot(
        ["A"], [880.0], [2.0], label="density at 15 °C", unit="kg/m3",
        limits=[("EN 14214 min 860", 860.0, "en"), ("EN 14214 max 900", 900.0, "en")])
    first, second = _limit_lines(fig.axes[0])
    assert first.get_color() == second.get_color()
    assert first.get_linestyle() != second.get_linestyle()
    assert fig.axes[0].get_xlabel() == "density at 15 °C [kg/m³]"


def test_composition_bars_stack_to_one_hundred_per_lot():
    comp = pd.DataFrame({"C16:0": [10.0, 45.0], "C18:1": [60.0, 40.0], "C18:2": [29.0, 14.0],
                         "C20:0": [1.0, 1.0]}, index=["lot 1", "lot 2"])  # synthetic
    fig = plots.composition_bars(comp)
    ax = fig.axes[0]
    widths = np.zeros(2)
    for patch in ax.patches:
        y = patch.get_y() + patch.get_height() / 2
        widths[0 if y > 0.5 else 1] += patch.get_width()
    np.testing.assert_allclose(widths, [100.0, 100.0])
    assert ax.get_xlabel() == "share of the esters [wt %]"
    labels = _legend_texts(fig)
    assert "C18:1 oleic" in labels and "other (each < 2 wt %)" in labels


def test_cold_flow_map_shades_the_corner_and_labels_every_lot():
    lots = ["north", "south", "east"]  # synthetic
    fig = plots.cold_flow_stability_map(
        lots, [-10.0, 5.0, -2.0], [12.0, 4.0, 9.0], cfpp_error_C=[2, 2, 2],
        oxidation_error_h=[1, 1, 1], cfpp_limits=[("EN 14214 grade C max -5 °C", -5.0, "en")],
        oxidation_limits=[("EN 14214 min 8 h", 8.0, "en")], cfpp_grades={"A": 5, "B": 0},
        verdicts=["meets", "fails", "fails"])
    ax = fig.axes[0]
    assert UNIT_MARK in ax.get_xlabel() and "°C" in ax.get_xlabel()
    assert ax.get_ylabel() == "oxidation stability at 110 °C [h]"
    shaded = [c for c in ax.collections if c.get_label().startswith("region that meets")]
    assert len(shaded) == 1
    x0, y0 = shaded[0].get_paths()[0].vertices.min(axis=0)
    x1, _ = shaded[0].get_paths()[0].vertices.max(axis=0)
    assert x1 == pytest.approx(-5.0) and y0 == pytest.approx(8.0)
    annotated = {t.get_text() for t in ax.texts}
    assert set(lots) <= annotated


def test_cold_flow_map_labels_do_not_overlap():
    lots = [f"LOT-{i}" for i in range(6)]  # synthetic, deliberately crowded
    fig = plots.cold_flow_stability_map(lots, [0, 0.2, 0.4, 0.1, 0.3, 0.5],
                                        [5, 5.1, 5.2, 5.05, 5.15, 5.25])
    renderer = fig.canvas.get_renderer()
    boxes = [t.get_window_extent(renderer) for t in fig.axes[0].texts if t.get_text() in lots]
    assert len(boxes) == len(lots)
    for i, a in enumerate(boxes):
        for b in boxes[i + 1:]:
            assert not a.overlaps(b)


def test_cost_chart_bars_are_the_costs_and_a_missing_price_is_marked():
    fig = plots.cost_per_tonne(["a", "b", "c"], [900.0, np.nan, 750.0],
                               verdicts=["meets", "fails", "fails"], currency="EUR")
    ax = fig.axes[0]
    assert sorted(p.get_width() for p in ax.patches) == [750.0, 900.0]
    assert any(t.get_text() == "no price given" for t in ax.texts)
    # the bars are the whole cost (comparison's cost_per_t_fuel), not the feedstock alone
    assert ax.get_xlabel() == "cost of the fuel: feedstock plus processing [EUR per t of fuel]"
    assert ax.get_title() == "Total cost of a tonne of fuel"


def test_a_plot_draws_into_a_given_axes():
    from matplotlib.figure import Figure

    fig = Figure()
    ax = fig.add_subplot()
    out = plots.cost_per_tonne(["a"], [800.0], ax=ax)
    assert out is fig and len(ax.patches) == 1


def test_save_figure_writes_png_and_svg_only_on_request(tmp_path):
    fig = plots.cost_per_tonne(["a"], [800.0])
    assert [p.suffix for p in plots.save_figure(fig, tmp_path / "only")] == [".png"]
    png, svg = plots.save_figure(fig, tmp_path / "cost", svg=True)
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert "<svg" in svg.read_text(encoding="utf-8")


def test_every_comparison_figure_has_labelled_axes_with_units():
    # the invented demo lots (data/demo/README.md)
    c = compare_lots(read_profile(LOTS, basis="fatty-acid"), climate_class="C")
    figures = plots.comparison_figures(c)
    names = [p.name for p in figures]
    assert {"composition", "cold_flow_vs_stability", "cost_per_t_fuel",
            "property_iodine_value_gI2_100g", "property_cfpp_C"} <= set(names)
    assert "property_pufa4_wt_pct" not in names  # zero in every lot
    for p in figures:
        ax = p.figure.axes[0]
        assert UNIT_MARK in ax.get_xlabel(), p.name
        assert ax.get_title(), p.name
        if p.name == "cold_flow_vs_stability":
            assert UNIT_MARK in ax.get_ylabel()
        assert p.caption


def test_an_estimate_outside_its_fitted_domain_gets_a_dotted_ring_not_an_open_verdict_marker():
    fig = plots.property_by_lot(["in", "out"], [10.0, 12.0], [1.0, 1.0], label="x", unit="h",
                                verdicts=["meets", "meets"], in_domain=[True, False])
    from matplotlib.collections import PathCollection

    sets = [c for c in fig.axes[0].collections
            if isinstance(c, PathCollection) and len(c.get_offsets())]
    verdict = next(c for c in sets if c.get_label() == "meets every limit drawn")
    ring = next(c for c in sets if c.get_label() == plots.DOMAIN_RING["text"])
    # both lots carry the same filled 'meets' marker: the verdict looks the same in or out
    assert sorted(map(tuple, verdict.get_offsets())) == [(10.0, 1.0), (12.0, 0.0)]
    assert all(face[3] > 0 and tuple(face) != (1.0, 1.0, 1.0, 1.0)
               for face in verdict.get_facecolor())
    # only the 'out' lot is ringed, by an unfilled dotted marker larger than the verdict's
    assert [tuple(o) for o in ring.get_offsets()] == [(12.0, 0.0)]
    assert len(ring.get_facecolor()) == 0 or ring.get_facecolor()[0][3] == 0
    assert ring.get_sizes()[0] > verdict.get_sizes()[0]
    assert ring.get_linestyle()[0][1] is not None  # dashed/dotted, never a solid edge
    legend = _legend_texts(fig)
    assert plots.DOMAIN_RING["text"] in legend
    assert not any("open marker" in text for text in legend)


def test_the_ring_follows_the_estimate_that_decides_not_the_published_one_a_lab_model_replaced():
    long = pd.DataFrame({
        "sample": ["A", "A", "B", "B"],
        "property": "oxidation_stability_110C_h",
        "method": ["park2008_bape", "fit:gp:descriptors"] * 2,
        "in_domain": [False, True, True, False],
    })
    assert plots._in_domain(long, ["A", "B"], ["oxidation_stability_110C_h"]) == [True, False]


def test_figures_drawn_side_by_side_give_the_same_pngs_as_drawn_here(monkeypatch):
    # regression test: forked workers draw the same pixels
    import matplotlib.pyplot as plt

    def figures():
        out = []
        for k in range(3):
            fig, ax = plt.subplots(figsize=(4, 3))
            ax.plot([0, 1, 2], [k, k + 1, k * 2])
            ax.set_title(f"figure {k}")
            out.append(fig)
        return out

    here = figures()
    monkeypatch.setenv("FAME_ESTIMATOR_WORKERS", "1")
    expected = [plots.figure_png(f) for f in here]
    forked = figures()
    monkeypatch.setenv("FAME_ESTIMATOR_WORKERS", "2")
    plots.prerender(forked)
    assert [f.__dict__["_fame_png"][plots.PNG_DPI] for f in forked] == expected
    for f in here + forked:
        plt.close(f)
