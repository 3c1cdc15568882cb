"""Figures of a refit: held-out parity and residuals against the main descriptors.

Pure functions of data that return a matplotlib Figure (Agg canvas, no pyplot);
matplotlib is imported inside them. Held-out means every plotted prediction comes
from a model that did not see that sample (cross-validation), so the plots show
the error a new sample can expect, not the training fit.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence

import numpy as np

__all__ = [
    "PROPERTY_LABELS",
    "fit_figures",
    "RESIDUAL_DESCRIPTORS",
    "parity_plot",
    "property_label",
    "residual_plot",
]

#: Readable axis names of the properties (the unit is added by ``axis_label``).
PROPERTY_LABELS = {
    "cetane_number": "cetane number",
    "iodine_value_gI2_100g": "iodine value",
    "cfpp_C": "CFPP",
    "cloud_point_C": "cloud point",
    "pour_point_C": "pour point",
    "oxidation_stability_110C_h": "oxidation stability, 110 °C",
    "density_15C_kg_m3": "density at 15 °C",
    "kin_viscosity_40C_mm2_s": "kinematic viscosity at 40 °C",
    "hhv_MJ_kg": "higher heating value",
    "lhv_MJ_kg": "lower heating value",
}

#: Descriptors the residuals are drawn against: unsaturation, cold-flow saturates,
#: oxidation sites and chain length, with their axis names.
RESIDUAL_DESCRIPTORS = {
    "iodine_value_gI2_100g": "iodine value",
    "lcsf_wt_pct": "long-chain saturated factor",
    "bape_wt_pct": "bis-allylic position equivalents",
    "mean_chain_length_carbons": "mean chain length",
}

_INK = "#222222"
_MODEL_COLOUR = "#332288"   # Paul Tol muted indigo
_PUBLISHED_COLOUR = "#CC6677"  # Paul Tol muted rose
_GROUP_MARKERS = ("o", "s", "^", "D", "v", "P", "X", "h")
_GROUP_COLOURS = ("#332288", "#44AA99", "#CC6677", "#DDCC77", "#88CCEE", "#882255",
                  "#117733", "#AA4499")
_STYLE = {
    "font.size": 10,
    "axes.titlesize": 11,
    "axes.labelsize": 10,
    "legend.fontsize": 9,
    "axes.spines.top": False,
    "axes.spines.right": False,
    "axes.grid": True,
    "grid.alpha": 0.3,
    "grid.linewidth": 0.6,
}


def property_label(name: str) -> str:
    """A readable name of a property for axis labels (the name itself if unknown).

    Examples
    --------
    >>> property_label("cfpp_C")
    'CFPP'
    """
    return PROPERTY_LABELS.get(name, name)


def _new_figure(size: tuple[float, float]):
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=size, layout="constrained")
    FigureCanvasAgg(fig)
    return fig


#: Above this many samples the markers are smaller and drawn as a raster inside vector
#: output, so an SVG of thousands of samples stays small and quick to write.
MANY_POINTS = 500


def _marker_style(n: int, size: float) -> tuple[bool, float]:
    """(rasterize, marker area) for ``n`` points."""
    if n <= MANY_POINTS:
        return False, size
    return True, max(6.0, size * (MANY_POINTS / n) ** 0.5)


def _group_styles(groups: Sequence[str] | None, n: int) -> tuple[np.ndarray, dict]:
    labels = ["sample"] * n if groups is None else [str(g) for g in groups]
    order = list(dict.fromkeys(labels))
    labels = np.array(labels, dtype=object)
    styles = {
        g: (_GROUP_MARKERS[i % len(_GROUP_MARKERS)], _GROUP_COLOURS[i % len(_GROUP_COLOURS)])
        for i, g in enumerate(order)
    }
    return labels, styles


def parity_plot(
    measured: Sequence[float],
    predicted: Sequence[float],
    *,
    model_name: str,
    model_rmse: float,
    property_name: str,
    unit: str,
    published: Sequence[float] | None = None,
    published_name: str = "",
    published_rmse: float = float("nan"),
    groups: Sequence[str] | None = None,
    title: str | None = None,
    baseline_rmse: float = float("nan"),
):
    """Measured against held-out predicted: the best published method beside the model.

    Parameters
    ----------
    measured : sequence of float
        Lab measurements. [unit]
    predicted : sequence of float
        Held-out (cross-validated) predictions of the chosen model. [unit]
    model_name, model_rmse
        Name and cross-validated RMSE of the chosen model. [unit]
    property_name, unit : str
        Property key (``cetane_number``) and its unit, for the axis labels.
    published : sequence of float, optional
        Estimates of the best published method as is, drawn in a left-hand panel.
    published_name, published_rmse
        Its name and RMSE on the lab samples. [unit]
    groups : sequence of str, optional
        A group per sample (e.g. feedstock), shown by marker shape and colour.
    baseline_rmse : float, optional
        CV RMSE of the mean-only baseline; when given, its prediction (the mean of the
        measurements) is drawn as a dotted horizontal line in every panel. [unit]

    Returns
    -------
    matplotlib.figure.Figure
        One panel per model, equal axes, the 1:1 line and a band of ± one standard
        uncertainty (the panel model's RMSE).
    """
    import matplotlib

    from estimator.report.plots import axis_label

    y = np.asarray(measured, dtype=float)
    panels = []
    if published is not None:
        panels.append((f"published: {published_name}", np.asarray(published, dtype=float),
                       published_rmse, _PUBLISHED_COLOUR))
    panels.append((f"chosen: {model_name}", np.asarray(predicted, dtype=float), model_rmse,
                   _MODEL_COLOUR))
    labels, styles = _group_styles(groups, len(y))
    many, size = _marker_style(len(y), 38)
    with matplotlib.rc_context(_STYLE):
        fig = _new_figure((5.0 * len(panels) + 0.6, 5.0))
        axes = fig.subplots(1, len(panels), squeeze=False)[0]
        # Limits from the measurements and the chosen model, so its panel stays readable;
        # published estimates beyond them are drawn at the edge as open markers.
        every = np.concatenate([y, panels[-1][1]])
        every = every[np.isfinite(every)]
        lo, hi = float(every.min()), float(every.max())
        pad = 0.06 * (hi - lo) if hi > lo else 1.0
        lim = (lo - pad, hi + pad)
        for ax, (name, pred, rmse, colour) in zip(axes, panels):
            line = np.array(lim)
            if np.isfinite(rmse):
                ax.fill_between(line, line - rmse, line + rmse, color=colour, alpha=0.12,
                                linewidth=0, label="± 1 sd (the panel's RMSE)")
            ax.plot(line, line, color=_INK, linewidth=1.0, linestyle="--", label="1:1")
            if np.isfinite(baseline_rmse):
                ax.axhline(float(np.nanmean(y)), color="#777777", linewidth=1.0,
                           linestyle=":", label=f"mean-only baseline, RMSE "
                                                f"{baseline_rmse:.3g}")
            off = np.isfinite(pred) & ((pred < lim[0]) | (pred > lim[1]))
            shown = np.clip(pred, lim[0], lim[1])
            for g, (marker, gcolour) in styles.items():
                mask = (labels == g) & np.isfinite(pred)
                ax.scatter(y[mask & ~off], shown[mask & ~off], marker=marker, s=size,
                           color=gcolour, edgecolor=_INK, linewidth=0.5, zorder=3,
                           label=g if groups is not None else "sample", rasterized=many)
                if (mask & off).any():
                    ax.scatter(y[mask & off], shown[mask & off], marker=marker, s=size,
                               facecolor="none", edgecolor=gcolour, linewidth=1.2, zorder=3,
                               clip_on=False, rasterized=many)
            if off.any():
                worst = pred[off][np.argmax(np.abs(pred[off] - y[off]))]
                ax.text(0.98, 0.03, f"{int(off.sum())} off scale (open markers at the edge; "
                        f"worst {worst:.3g})", transform=ax.transAxes, ha="right",
                        va="bottom", fontsize=8, color=_INK)
            r2 = _r2(y, pred)
            band_text = f", band ± {rmse:.3g} (1 sd)" if np.isfinite(rmse) else ""
            ax.set_title(f"{name}\nheld-out RMSE {rmse:.3g}, R² {r2:.3f}{band_text}",
                         loc="left")
            ax.set_xlim(lim)
            ax.set_ylim(lim)
            ax.set_aspect("equal")
            ax.set_xlabel(axis_label(f"measured {property_label(property_name)}", unit))
            ax.set_ylabel(axis_label(f"predicted {property_label(property_name)}", unit))
        handles, texts = axes[-1].get_legend_handles_labels()
        fig.legend(handles, texts, loc="outside lower center", ncol=min(len(handles), 5),
                   frameon=False)
        fig.suptitle(title or f"{property_label(property_name)}: held-out predictions "
                     "against lab measurements", fontsize=12, fontweight="bold")
    return fig


def residual_plot(
    residuals: Sequence[float],
    descriptor_values: Mapping[str, Sequence[float]],
    *,
    model_name: str,
    property_name: str,
    unit: str,
    groups: Sequence[str] | None = None,
    title: str | None = None,
):
    """Held-out residuals (predicted - measured) against the main composition descriptors.

    Parameters
    ----------
    residuals : sequence of float
        Held-out predicted minus measured. [unit]
    descriptor_values : mapping
        Descriptor name -> values per sample; names of :data:`RESIDUAL_DESCRIPTORS`
        get readable axis names and their units.
    model_name, property_name, unit : str
        For the titles and the residual axis label.
    groups : sequence of str, optional
        A group per sample (e.g. feedstock), shown by marker shape and colour.

    Returns
    -------
    matplotlib.figure.Figure
        One panel per descriptor with the zero line and a least-squares trend line, so a
        residual that still depends on a descriptor shows up as a slope.
    """
    import matplotlib

    from estimator.properties.descriptors import DESCRIPTOR_UNITS
    from estimator.report.plots import axis_label

    r = np.asarray(residuals, dtype=float)
    names = list(descriptor_values)
    labels, styles = _group_styles(groups, len(r))
    many, size = _marker_style(len(r), 34)
    ncols = 2 if len(names) > 1 else 1
    nrows = int(np.ceil(len(names) / ncols))
    with matplotlib.rc_context(_STYLE):
        fig = _new_figure((5.2 * ncols, 3.4 * nrows + 0.8))
        axes = fig.subplots(nrows, ncols, squeeze=False).ravel()
        for ax, name in zip(axes, names):
            x = np.asarray(descriptor_values[name], dtype=float)
            ax.axhline(0.0, color=_INK, linewidth=1.0, linestyle="--")
            for g, (marker, colour) in styles.items():
                mask = labels == g
                ax.scatter(x[mask], r[mask], marker=marker, s=size, color=colour,
                           edgecolor=_INK, linewidth=0.5, zorder=3,
                           label=g if groups is not None else "sample", rasterized=many)
            ok = np.isfinite(x) & np.isfinite(r)
            if ok.sum() >= 3 and np.ptp(x[ok]) > 0:
                slope, intercept = np.polyfit(x[ok], r[ok], 1)
                xs = np.array([x[ok].min(), x[ok].max()])
                ax.plot(xs, intercept + slope * xs, color="#882255", linewidth=1.4,
                        label="least-squares trend")
            ax.set_xlabel(axis_label(RESIDUAL_DESCRIPTORS.get(name, name),
                                     DESCRIPTOR_UNITS.get(name, "")))
            ax.set_ylabel(axis_label("predicted − measured", unit))
        for ax in axes[len(names):]:
            ax.set_visible(False)
        handles, texts = axes[0].get_legend_handles_labels()
        fig.legend(handles, texts, loc="outside lower center", ncol=min(len(handles), 5),
                   frameon=False)
        fig.suptitle(title or f"{property_label(property_name)}: held-out residuals of "
                     f"{model_name}", fontsize=12, fontweight="bold")
    return fig


def _r2(y: np.ndarray, p: np.ndarray) -> float:
    ok = np.isfinite(y) & np.isfinite(p)
    sst = float(((y[ok] - y[ok].mean()) ** 2).sum())
    return float(1.0 - ((p[ok] - y[ok]) ** 2).sum() / sst) if sst > 0 else float("nan")


def fit_figures(fit, groups: Sequence[str] | None = None) -> dict:
    """The parity and residual figures of one :class:`~estimator.refit.PropertyFit`.

    Returns ``{"parity": Figure, "residuals": Figure}``; predictions are the held-out
    ones averaged over the cross-validation repeats.
    """
    from estimator.properties.descriptors import descriptors
    from estimator.refit.wording import candidate_words, method_words

    chosen = fit.chosen
    pub = fit.best_published
    parity = parity_plot(
        fit.measured, chosen.heldout_mean,
        model_name=candidate_words(chosen.candidate.name, fit.property),
        model_rmse=chosen.rmse, property_name=fit.property, unit=fit.unit,
        published=None if pub is None or pub is chosen else pub.heldout_mean,
        published_name="" if pub is None else method_words(fit.property, pub.candidate.method),
        published_rmse=float("nan") if pub is None else pub.rmse,
        groups=groups,
        baseline_rmse=float("nan") if fit.baseline is None else fit.baseline.rmse,
    )
    desc = descriptors(fit.wt_pct)
    residuals = residual_plot(
        chosen.heldout_mean - fit.measured,
        {name: desc[name] for name in RESIDUAL_DESCRIPTORS},
        model_name=candidate_words(chosen.candidate.name, fit.property),
        property_name=fit.property, unit=fit.unit, groups=groups,
    )
    return {"parity": parity, "residuals": residuals}
