"""Figures for the blend and mix jobs: blend curves with their limits, mix shares and limits.

Pure functions of data returning a matplotlib Figure (Agg canvas, no pyplot);
matplotlib is imported inside them. Readability rules as in
:mod:`estimator.report.plots`: units in brackets on every axis, limits named in the
legend, Paul Tol's colour-blind-safe colours, and line style or hatch carrying the
meaning as well as colour, so a greyscale print still reads.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np
import pandas as pd

from estimator.specs import SPEC_NAMES

#: Headroom, in stated errors, below which a verdict is 'too close to call' (p < 0.9).
_CLOSE_BANDS = 1.2816

__all__ = ["BLEND_PANELS", "LIMIT_COLOURS", "blend_curves", "mix_shares"]

#: The panels of :func:`blend_curves`: property, axis label, unit.
BLEND_PANELS = (
    ("cloud_point_C", "cloud point", "°C"),
    ("cfpp_C", "CFPP", "°C"),
    ("density_15C_kg_m3", "density at 15 °C", "kg/m3"),
    ("kin_viscosity_40C_mm2_s", "kinematic viscosity at 40 °C", "mm2/s"),
    ("cetane_number", "cetane number", "1"),
    ("lhv_MJ_L", "lower heating value per litre", "MJ/L"),
)
_LINE_STYLES = ("-", "--", "-.", ":", (0, (5, 1, 1, 1)), (0, (3, 1, 1, 1, 1, 1)))
_MARKERS = ("o", "s", "^", "D", "v", "P", "X", "*")
#: Lot curves: Paul Tol's colours minus those the specification lines and targets use,
#: so a lot curve never shares colour (hence colour and line style) with a limit line.
_SAMPLE_COLOURS = ("#332288", "#CC6677", "#117733", "#DDAA33", "#88CCEE", "#999933",
                   "#AA4499", "#661100")
_TARGET_COLOUR = "#000000"
_SPEC_COLOURS = {"en590": "#882255", "astm-d7467": "#44AA99"}
LIMIT_COLOURS = (_TARGET_COLOUR, *_SPEC_COLOURS.values(), "#555555")
_SPEC_NAMES = SPEC_NAMES
_STYLE = {
    "font.size": 10, "axes.titlesize": 11, "axes.titleweight": "bold", "axes.labelsize": 10,
    "xtick.labelsize": 9.5, "ytick.labelsize": 9.5, "legend.fontsize": 9,
    "axes.spines.top": False, "axes.spines.right": False, "axes.grid": True,
    "grid.alpha": 0.3, "grid.linewidth": 0.6, "svg.fonttype": "none", "hatch.linewidth": 0.8,
}
#: Most FAME samples drawn in one blend figure (the rest are named in the title).
MAX_CURVES = 8


def _new_figure(size):
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=size, layout="constrained")
    FigureCanvasAgg(fig)
    return fig


def blend_curves(
    wide: pd.DataFrame,
    *,
    targets: Sequence = (),
    diesel_name: str = "diesel",
    panels: Sequence[tuple[str, str, str]] = BLEND_PANELS,
    bands: bool | None = None,
    highest: pd.DataFrame | None = None,
):
    """Each property against blend level, one line per FAME, with targets and spec limits.

    Parameters
    ----------
    wide : DataFrame
        From :func:`estimator.blending.blend_wide` (sample, level_pct_v, properties,
        ``<property>_error``).
    targets : sequence of Target
        User targets are drawn as solid black lines; specification limits dashed, in
        the specification's colour, over the FAME content that specification allows.
    diesel_name : str
        Named in the title.
    panels : sequence of (property, label, unit)
        Which properties to draw.
    bands : bool, optional
        Shade value ± stated error around every curve (default: yes; the cautious
        levels in brackets come from these bands).
    highest : DataFrame, optional
        From :func:`estimator.blend_targets.highest_levels`: the highest level meeting each
        user target is marked on the target line with the sample's marker.

    Returns
    -------
    matplotlib.figure.Figure
    """
    import matplotlib
    from matplotlib.lines import Line2D

    from estimator.report.plots import axis_label

    samples = list(dict.fromkeys(wide["sample"]))
    drawn = samples[:MAX_CURVES]
    bands = True if bands is None else bands
    ncols = 2
    nrows = int(np.ceil(len(panels) / ncols))
    with matplotlib.rc_context(_STYLE):
        fig = _new_figure((8.3, 2.55 * nrows + 1.5))
        axes = fig.subplots(nrows, ncols, squeeze=False, sharex=True)
        for k, (prop, label, unit) in enumerate(panels):
            ax = axes[k // ncols][k % ncols]
            for i, sample in enumerate(drawn):
                part = wide[wide["sample"] == sample].sort_values("level_pct_v")
                x = part["level_pct_v"].to_numpy(dtype=float)
                y = part[prop].to_numpy(dtype=float)
                colour = _SAMPLE_COLOURS[i % len(_SAMPLE_COLOURS)]
                ax.plot(x, y, color=colour, linestyle=_LINE_STYLES[i % len(_LINE_STYLES)],
                        linewidth=1.8, marker=_MARKERS[i % len(_MARKERS)], markersize=3.5,
                        markevery=max(1, len(x) // 10))
                if bands:
                    e = part[f"{prop}_error"].to_numpy(dtype=float)
                    ax.fill_between(x, y - e, y + e, color=colour,
                                    alpha=0.16 if len(drawn) <= 3 else 0.08, linewidth=0)
            x_max = float(wide["level_pct_v"].max()) or 100.0
            _draw_limits(ax, prop, targets, x_max)
            if highest is not None:
                _mark_highest(ax, prop, highest, drawn)
            ax.margins(y=0.08)
            ax.set_title(label)
            ax.set_ylabel(axis_label(label.split(" at ")[0] if unit != "1" else label, unit))
            ax.set_xlim(0, x_max)
            if k // ncols == nrows - 1:
                ax.set_xlabel(axis_label("blend level (FAME by volume)", "% v/v"))
        for k in range(len(panels), nrows * ncols):
            axes[k // ncols][k % ncols].set_visible(False)
        handles = [
            Line2D([], [], color=_SAMPLE_COLOURS[i % len(_SAMPLE_COLOURS)],
                   linestyle=_LINE_STYLES[i % len(_LINE_STYLES)],
                   marker=_MARKERS[i % len(_MARKERS)], markersize=4, linewidth=1.8,
                   label=f"FAME {s}")
            for i, s in enumerate(drawn)
        ]
        handles += _limit_handles(targets, {p for p, _, _ in panels})
        if highest is not None and (highest["group"] == "target").any():
            handles.append(Line2D([], [], marker="o", markersize=7, color="#777777",
                                  markeredgecolor="#000000", linestyle="none",
                                  label="highest level meeting the target"))
        if bands:
            from matplotlib.patches import Patch

            handles.append(Patch(color="#777777", alpha=0.25, label="± stated error"))
        fig.legend(handles=handles, loc="outside lower center", ncol=3, frameon=False)
        more = f" (first {len(drawn)} of {len(samples)} FAMEs)" if len(samples) > len(drawn) \
            else ""
        fig.suptitle(f"FAME blended into {diesel_name}{more}", fontweight="bold", fontsize=12)
    return fig


def _draw_limits(ax, prop: str, targets: Sequence, x_max: float) -> None:
    """Targets solid black; spec limits bold over their FAME range, faint beyond it."""
    for t in targets:
        if t.property != prop:
            continue
        if t.group == "target":
            ax.axhline(t.limit, color=_TARGET_COLOUR, linewidth=1.4, linestyle="-", zorder=1)
            ax.annotate(f"target {t.limit:g}", (0.0, t.limit), xycoords=("axes fraction", "data"),
                        xytext=(3, 3), textcoords="offset points", ha="left", va="bottom",
                        fontsize=8.5, bbox={"facecolor": "white", "edgecolor": "none",
                                            "alpha": 0.8, "pad": 0.5})
            continue
        colour = _SPEC_COLOURS.get(t.group, "#555555")
        dash = "--" if t.kind == "max" else ":"
        ax.axhline(t.limit, color=colour, linestyle=dash, linewidth=0.8, alpha=0.45, zorder=1)
        hi = min(t.max_level_pct_v, x_max)
        ax.hlines(t.limit, t.min_level_pct_v, hi, colors=colour, linestyles=dash,
                  linewidth=2.6, zorder=1)
        name = _SPEC_NAMES.get(t.group, t.group)
        if any(u.group == "target" and u.property == prop and u.limit == t.limit
               for u in targets):
            continue  # the target line already carries this value
        # Label just past the bold segment, so labels of close limits do not collide; a
        # segment reaching the right edge is labelled inside, above (max) or below (min).
        box = {"facecolor": "white", "edgecolor": "none", "alpha": 0.8, "pad": 0.5}
        text = f"{name} {t.kind} {t.limit:g}"
        if hi <= 0.5 * x_max:  # room for the label to the right of the segment
            note = ax.annotate(text, (hi, t.limit), xytext=(3, 0), textcoords="offset points",
                               ha="left", va="center", fontsize=8, color=colour, bbox=box)
        else:
            up = t.kind == "max"
            note = ax.annotate(text, (x_max, t.limit), xytext=(-3, 3 if up else -3),
                               textcoords="offset points", ha="right",
                               va="bottom" if up else "top", fontsize=8, color=colour, bbox=box)
        note.set_in_layout(False)


def _mark_highest(ax, prop: str, highest: pd.DataFrame, drawn: Sequence[str]) -> None:
    rows = highest[(highest["group"] == "target") & (highest["property"] == prop)]
    for i, sample in enumerate(drawn):
        for row in rows[rows["sample"] == sample].itertuples(index=False):
            level = row.highest_level_pct_v
            if np.isfinite(level) and 0 < level < 100:
                ax.plot([level], [row.limit], marker=_MARKERS[i % len(_MARKERS)],
                        markersize=8, color=_SAMPLE_COLOURS[i % len(_SAMPLE_COLOURS)],
                        markeredgecolor="#000000", linestyle="none", zorder=5)


def _limit_handles(targets: Sequence, props: set[str]) -> list:
    from matplotlib.lines import Line2D

    handles, seen = [], set()
    for t in targets:
        if t.property not in props:
            continue
        if t.group == "target":
            key = "target"
            label = "your target (solid black)"
            style = dict(color=_TARGET_COLOUR, linestyle="-")
        else:
            key = (t.group, t.kind)
            lo, hi = t.min_level_pct_v, t.max_level_pct_v
            label = (f"{_SPEC_NAMES.get(t.group, t.group)} {t.kind} "
                     f"(bold over B{lo:g}-B{hi:g})")
            style = dict(color=_SPEC_COLOURS.get(t.group, "#555555"),
                         linestyle="--" if t.kind == "max" else ":")
        if key in seen:
            continue
        seen.add(key)
        handles.append(Line2D([], [], linewidth=1.6, label=label, **style))
    return handles


#: Headroom bars stop at this many stated errors (limits fixed exactly by the profile,
#: with no error band, are drawn at the cap).
HEADROOM_CAP = 10.0


def mix_shares(result, *, title: str | None = None):
    """The chosen shares of each lot and how close the mixed fuel is to each limit.

    Left: fuel-mass share per lot (with its cost per tonne of fuel). Right: margin of
    each limit in % of the limit (0 = binding; negative = missed), binding limits
    hatched, missed ones in red with a cross hatch.

    Parameters
    ----------
    result : MixResult
        From :func:`estimator.mixing.least_cost_mix`.
    title : str, optional
        Figure title.

    Returns
    -------
    matplotlib.figure.Figure
    """
    import matplotlib
    from matplotlib.patches import Patch

    from estimator.report.plots import axis_label

    lots = result.lots
    c = result.constraints
    n, m = len(lots), len(c)
    with matplotlib.rc_context(_STYLE):
        fig = _new_figure((10.5, 1.9 + 0.42 * max(n, m)))
        ax1, ax2 = fig.subplots(1, 2, width_ratios=[1.0, 1.25])
        y = np.arange(n)[::-1].astype(float)
        share = lots["share_mass_pct"].to_numpy(dtype=float)
        used = share > 0
        ax1.barh(y[used], share[used], height=0.62, color="#332288", edgecolor="#222222",
                 linewidth=0.6)
        ax1.barh(y[~used], np.zeros((~used).sum()), height=0.62)
        top = max(float(share.max()), 1.0)
        at_cap = (lots["at_availability_limit"].to_numpy(dtype=bool)
                  if "at_availability_limit" in lots.columns else np.zeros(n, dtype=bool))
        for yi, si, ci, cap in zip(y, share, lots["cost_per_t_fuel"], at_cap):
            text = f"{si:.1f} %  ({ci:,.0f}/t fuel)" if si > 0 else f"not used ({ci:,.0f}/t fuel)"
            text += ", all available" if cap else ""
            ax1.text(si + 0.015 * top, yi, text, va="center", ha="left", fontsize=9)
        ax1.set_yticks(y, lots["lot"].astype(str))
        ax1.set_xlim(0, top * 1.75)
        ax1.set_ylim(-0.6, n - 0.4)
        ax1.grid(axis="y", visible=False)
        ax1.set_xlabel(axis_label("share of the fuel", "% by mass"))
        ax1.set_title("Lots in the mix")

        y2 = np.arange(m)[::-1].astype(float)
        # headroom in multiples of the estimate's stated error (at the mix, by the method
        # or lab model that decided): below 1 the verdict is 'too close to call'; limits
        # fixed by the composition have no error band
        err = c["error"].to_numpy(dtype=float)
        headroom = c["headroom"].to_numpy(dtype=float)
        with np.errstate(divide="ignore", invalid="ignore"):
            rel = np.where(np.isfinite(err) & (err > 0), headroom / err,
                           np.where(headroom > 0, np.inf, np.where(headroom < 0, -np.inf, 0.0)))
        capped = np.abs(rel) > HEADROOM_CAP
        rel = np.clip(rel, -HEADROOM_CAP, HEADROOM_CAP)
        binding = c["binding"].to_numpy(dtype=bool)
        missed = ~c["meets"].to_numpy(dtype=bool)
        # an estimate outside its method's range cannot decide its limit, whatever the bar
        outside = (~c["in_domain"].to_numpy(dtype=bool) if "in_domain" in c.columns
                   else np.zeros(m, dtype=bool))
        plain = ~binding & ~missed & ~outside
        ax2.barh(y2[plain], rel[plain], height=0.62, color="#88CCEE", edgecolor="#222222",
                 linewidth=0.6)
        far = outside & ~binding & ~missed
        ax2.barh(y2[far], rel[far], height=0.62, color="#DDDDDD", hatch="..",
                 edgecolor="#555555", linewidth=0.6)
        shown = np.where(binding & ~missed & (np.abs(rel) < 0.15), 0.15, rel)
        ax2.barh(y2[binding & ~missed], shown[binding & ~missed],
                 height=0.62, color="#DDCC77", hatch="///", edgecolor="#222222", linewidth=0.6)
        ax2.barh(y2[missed], rel[missed], height=0.62, color="#CC6677", hatch="xx",
                 edgecolor="#222222", linewidth=0.6)
        ax2.axvline(0, color="#000000", linewidth=1.0)
        for yi, ri, v, b, miss, cap, out in zip(y2, shown, c["value"], binding, missed, capped,
                                                outside):
            tag = f"mix {v:.4g}" + ("  (missed)" if miss else "  (binding)" if b else "")
            tag += f"  (> {HEADROOM_CAP:g})" if cap and not b else ""
            tag += "  outside method range: cannot decide" if out else ""
            ax2.text(max(ri, 0) + 0.1, yi, tag, va="center", ha="left", fontsize=8.5)
        # the cut of 'too close to call': probability 0.9 of meeting, 1.28 standard
        # uncertainties (estimator.specs.MEETS_AT)
        ax2.axvline(_CLOSE_BANDS, color="#555555", linewidth=0.9, linestyle=":")
        required = float(getattr(result, "margin_bands", 0.0))
        if required > 0 and required != 1.0:
            ax2.axvline(required, color="#117733", linewidth=1.2, linestyle="--")
        ax2.set_yticks(y2, [t.replace(">=", "≥").replace("<=", "≤")
                            for t in c["constraint"].astype(str)])
        ax2.set_ylim(-0.6, m - 0.4)
        lo = float(np.nanmin(np.r_[rel, 0.0]))
        ax2.set_xlim(lo - 0.5 if lo < 0 else -0.2, HEADROOM_CAP * 1.6)
        ax2.grid(axis="y", visible=False)
        ax2.set_xlabel(axis_label("headroom to the limit", "stated errors"))
        ax2.set_title("Limits on the mixed fuel")
        from matplotlib.lines import Line2D

        handles = [Patch(facecolor="#88CCEE", edgecolor="#222222", label="met with headroom"),
                   Line2D([], [], color="#555555", linewidth=0.9, linestyle=":",
                          label=f"{_CLOSE_BANDS:.2f} stated errors (closer: too close to call)"),
                   Patch(facecolor="#DDCC77", hatch="///", edgecolor="#222222",
                         label="binding (at the limit or the margin)")]
        if required > 0 and required != 1.0:
            handles.append(Line2D([], [], color="#117733", linewidth=1.2, linestyle="--",
                                  label=f"required margin ({required:g} stated errors)"))
        if missed.any():
            handles.append(Patch(facecolor="#CC6677", hatch="xx", edgecolor="#222222",
                                 label="missed"))
        if far.any():
            handles.append(Patch(facecolor="#DDDDDD", hatch="..", edgecolor="#555555",
                                 label="estimate outside its method's range: a lab test decides"))
        fig.legend(handles=handles, loc="outside lower center", ncol=3, frameon=False)
        head = title or (f"Least-cost mix: {result.cost_per_t_fuel:,.0f} per t of fuel"
                         if result.feasible else "No mix meets every limit: least-violating mix")
        fig.suptitle(head, fontweight="bold", fontsize=12)
    return fig
