"""Structure tests for estimator/report/blend_plots.py (axes, labels with units, legends)."""

from __future__ import annotations

import dataclasses
from pathlib import Path

import numpy as np
import pytest

pytest.importorskip("matplotlib")

from estimator import blend_targets as bt  # noqa: E402
from estimator import blending as b  # noqa: E402
from estimator import mixing as m  # noqa: E402
from estimator.profiles.io import read_profile  # noqa: E402
from estimator.profiles.profile import Profile  # noqa: E402
from estimator.report.blend_plots import BLEND_PANELS, blend_curves, mix_shares  # noqa: E402

DEMO = Path(__file__).resolve().parents[2] / "data" / "demo"


def _curves(oils=("rapeseed", "palm"), **target_options):
    profile = Profile.from_oils(list(oils))
    fame = b.fame_component(profile.wt_pct, profile.samples)
    diesel = b.load_diesel(str(DEMO / "diesel_winter.json"))  # invented demo diesel
    targets = bt.blend_targets(**target_options)
    wide = b.blend_wide(fame, diesel, np.linspace(0, 30, 31))
    return wide, targets, bt.highest_levels(fame, diesel, targets), diesel


def _texts(fig) -> list[str]:
    out = [t.get_text() for t in fig.texts]
    for ax in fig.axes:
        out += [t.get_text() for t in ax.texts]
    return out


def test_blend_curves_draw_one_panel_per_property_with_units_on_the_axes():
    wide, targets, highest, diesel = _curves(climate_class="F")
    fig = blend_curves(wide, targets=targets, diesel_name=diesel.name, highest=highest)
    visible = [ax for ax in fig.axes if ax.get_visible()]
    assert len(visible) == len(BLEND_PANELS)
    for ax, (_, label, _) in zip(visible, BLEND_PANELS):
        assert ax.get_title() == label
        assert "[" in ax.get_ylabel() and "]" in ax.get_ylabel()
    assert visible[-1].get_xlabel() == "blend level (FAME by volume) [% v/v]"
    assert visible[0].get_xlim() == (0.0, 30.0)


def test_blend_curves_legend_names_each_fame_the_target_and_the_spec_limits():
    wide, targets, highest, diesel = _curves(climate_class="F")
    fig = blend_curves(wide, targets=targets, diesel_name=diesel.name, highest=highest)
    labels = [t.get_text() for t in fig.legends[0].get_texts()]
    assert "FAME rapeseed" in labels and "FAME palm" in labels
    assert "your target (solid black)" in labels
    assert "EN 590 max (bold over B0-B7)" in labels
    assert "ASTM D7467 min (bold over B6-B20)" in labels
    assert "highest level meeting the target" in labels
    assert "target -20" in _texts(fig)


def test_blend_curves_mark_the_highest_level_meeting_the_target():
    wide, targets, highest, diesel = _curves(max_cfpp_C=-20, specs=())
    fig = blend_curves(wide, targets=targets, diesel_name=diesel.name, highest=highest)
    cfpp_ax = [ax for ax in fig.axes if ax.get_title() == "CFPP"][0]
    palm = highest[(highest["sample"] == "palm") & (highest["group"] == "target")]
    level = float(palm["highest_level_pct_v"].iloc[0])
    marks = [ln for ln in cfpp_ax.lines if ln.get_linestyle() == "None"]
    assert any(np.isclose(ln.get_xdata()[0], level) for ln in marks)


def test_blend_curves_shade_the_error_band_around_every_curve_by_default():
    oils = ("rapeseed", "palm", "soybean", "sunflower", "beef-tallow")
    wide, targets, _, diesel = _curves(oils=oils)
    banded = blend_curves(wide, targets=targets, diesel_name=diesel.name)
    plain = blend_curves(wide, targets=targets, diesel_name=diesel.name, bands=False)
    assert len(banded.axes[0].collections) - len(plain.axes[0].collections) == len(oils)
    labels = [t.get_text() for t in banded.legends[0].get_texts()]
    assert "± stated error" in labels


def test_lot_curves_never_share_colour_and_line_style_with_a_limit_line():
    from matplotlib.collections import LineCollection
    from matplotlib.colors import to_hex

    oils = ("rapeseed", "palm", "soybean", "sunflower", "beef-tallow", "used-cooking-oil")
    wide, targets, highest, diesel = _curves(oils=oils, climate_class="F")
    fig = blend_curves(wide, targets=targets, diesel_name=diesel.name, highest=highest)
    for ax in fig.axes:
        if not ax.get_visible():
            continue
        lots = {to_hex(ln.get_color()) for ln in ax.lines if len(ln.get_xdata()) > 2}
        limits = {to_hex(col.get_color()[0]) for col in ax.collections
                  if isinstance(col, LineCollection)}  # spec segments (hlines)
        limits |= {to_hex(ln.get_color()) for ln in ax.lines
                   if len(ln.get_xdata()) == 2}  # full-width limit lines (axhline)
        assert lots and not lots & limits


def test_mix_shares_shows_every_lot_and_every_limit():
    lots = read_profile(DEMO / "lots.csv", basis="fatty-acid")
    # Park's linear Rancimat form: with the default (park2008_bape) the demo lots miss 8 h
    result = m.least_cost_mix(lots, m.mix_constraints("en14214", max_cfpp_C=-5), demand_t=1500,
                              methods={"oxidation_stability_110C_h": "park2008"})
    fig = mix_shares(result)
    left, right = fig.axes
    assert [t.get_text() for t in left.get_yticklabels()] == list(result.lots["lot"])
    assert [t.get_text() for t in right.get_yticklabels()] == [  # one symbol for "at least"
        c.replace(">=", "≥").replace("<=", "≤") for c in result.constraints["constraint"]]
    assert left.get_xlabel() == "share of the fuel [% by mass]"
    assert right.get_xlabel() == "headroom to the limit [stated errors]"
    assert "mix -5  (binding)" in _texts(fig)
    assert fig._suptitle.get_text().startswith("Least-cost mix: ")


def test_mix_shares_marks_missed_limits_of_an_infeasible_case():
    lots = read_profile(DEMO / "lots.csv", basis="fatty-acid")
    result = m.least_cost_mix(lots, m.mix_constraints("en14214", max_cfpp_C=-15))
    fig = mix_shares(result)
    labels = [t.get_text() for t in fig.legends[0].get_texts()]
    assert "missed" in labels
    assert fig._suptitle.get_text() == "No mix meets every limit: least-violating mix"


def test_mix_shares_greys_out_a_limit_its_estimate_cannot_decide():
    # a limit whose estimate lies outside its method's fitted range is no headroom to show
    lots = read_profile(DEMO / "lots.csv", basis="fatty-acid")
    result = m.least_cost_mix(lots, m.mix_constraints("en14214", max_cfpp_C=-5), demand_t=1500,
                              methods={"oxidation_stability_110C_h": "park2008"})
    constraints = result.constraints.copy()
    constraints["in_domain"] = constraints["property"] != "cetane_number"
    fig = mix_shares(dataclasses.replace(result, constraints=constraints))
    labels = [t.get_text() for t in fig.legends[0].get_texts()]
    assert "estimate outside its method's range: a lab test decides" in labels
    assert any("outside method range: cannot decide" in t for t in _texts(fig))
