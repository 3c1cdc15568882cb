"""Refit figures: what a reader sees (panels, labels with units, RMSE, off-scale points).

Data are synthetic: measured values and predictions made up for the figure checks.
"""

from __future__ import annotations

import numpy as np
import pytest

pytest.importorskip("matplotlib")

from estimator.report.fit_plots import (  # noqa: E402
    RESIDUAL_DESCRIPTORS,
    parity_plot,
    property_label,
    residual_plot,
)

RNG = np.random.default_rng(0)
MEASURED = np.linspace(45, 65, 20)
MODEL = MEASURED + RNG.normal(0, 1.0, 20)
PUBLISHED = MEASURED + 3.0 + RNG.normal(0, 2.0, 20)


def test_parity_plot_puts_the_published_method_beside_the_chosen_model():
    fig = parity_plot(MEASURED, MODEL, model_name="ridge:composition", model_rmse=1.0,
                      property_name="cetane_number", unit="1", published=PUBLISHED,
                      published_name="bamgboye2008", published_rmse=3.6)
    left, right = fig.axes
    assert left.get_title(loc="left").startswith("published: bamgboye2008\nheld-out RMSE 3.6")
    assert right.get_title(loc="left").startswith("chosen: ridge:composition\nheld-out RMSE 1,")
    assert left.get_xlabel() == "measured cetane number [dimensionless]"
    assert right.get_ylabel() == "predicted cetane number [dimensionless]"
    assert left.get_xlim() == right.get_xlim() == right.get_ylim()  # same scale, equal axes
    labels = [t.get_text() for t in fig.legends[0].get_texts()]
    assert "1:1" in labels


def test_parity_plot_marks_published_estimates_beyond_the_axes_as_off_scale():
    wild = MEASURED + 0.5  # inside the axes ...
    wild[:3] = 200.0  # ... except three
    fig = parity_plot(MEASURED, MODEL, model_name="gp:descriptors", model_rmse=1.0,
                      property_name="oxidation_stability_110C_h", unit="h", published=wild,
                      published_name="park2008", published_rmse=80.0)
    texts = [t.get_text() for t in fig.axes[0].texts]
    assert texts == ["3 off scale (open markers at the edge; worst 200)"]
    assert fig.axes[0].get_ylim()[1] < 80  # the scale follows the measurements


def test_parity_plot_without_a_published_method_has_one_panel():
    fig = parity_plot(MEASURED, MODEL, model_name="ridge:descriptors", model_rmse=1.0,
                      property_name="cfpp_C", unit="°C")
    assert len(fig.axes) == 1
    assert fig.axes[0].get_xlabel() == "measured CFPP [°C]"


def test_parity_plot_groups_samples_by_marker_in_the_legend():
    groups = ["rapeseed"] * 10 + ["palm"] * 10
    fig = parity_plot(MEASURED, MODEL, model_name="m", model_rmse=1.0,
                      property_name="cetane_number", unit="1", groups=groups)
    labels = [t.get_text() for t in fig.legends[0].get_texts()]
    assert "rapeseed" in labels and "palm" in labels


def test_residual_plot_has_one_panel_per_descriptor_with_units_and_a_trend():
    x = {name: RNG.uniform(0, 100, 20) for name in RESIDUAL_DESCRIPTORS}
    fig = residual_plot(MODEL - MEASURED, x, model_name="ridge:composition",
                        property_name="cfpp_C", unit="°C")
    visible = [ax for ax in fig.axes if ax.get_visible()]
    assert len(visible) == len(RESIDUAL_DESCRIPTORS) == 4
    assert visible[0].get_xlabel() == "iodine value [g I₂/100 g]"
    assert visible[1].get_xlabel() == "long-chain saturated factor [wt %]"
    assert visible[0].get_ylabel() == "predicted − measured [°C]"
    labels = [t.get_text() for t in fig.legends[0].get_texts()]
    assert "least-squares trend" in labels


def test_residual_trend_line_follows_a_residual_that_depends_on_a_descriptor():
    # Synthetic: residual = 0.1 x descriptor exactly, so the drawn trend has slope 0.1.
    x = np.linspace(0, 50, 20)
    fig = residual_plot(0.1 * x, {"lcsf_wt_pct": x}, model_name="m", property_name="cfpp_C",
                        unit="°C")
    (trend,) = [ln for ln in fig.axes[0].lines if ln.get_label() == "least-squares trend"]
    xs, ys = trend.get_data()
    assert (ys[1] - ys[0]) / (xs[1] - xs[0]) == pytest.approx(0.1)


def test_property_labels_are_readable():
    assert property_label("oxidation_stability_110C_h") == "oxidation stability, 110 °C"
    assert property_label("something_new") == "something_new"
