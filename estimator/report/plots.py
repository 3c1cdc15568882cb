"""Figures for the reports: pure functions of data that return a matplotlib Figure.

Every function takes plain data (sequences, arrays, frames) and an optional
``ax`` to draw into; without one it makes its own :class:`matplotlib.figure.Figure`
(no pyplot, no global state, Agg rendering). matplotlib is imported inside the
functions so importing this module costs nothing.

Readability rules kept by every figure: axis labels carry units in brackets, lot
names are tick labels (never rotated), limits are labelled in the legend, colours
come from Paul Tol's colour-blind-safe "muted" scheme, and verdict groups differ by
marker shape or hatch as well as by colour, so the figures survive greyscale print.
"""

from __future__ import annotations

import base64
import io
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from functools import wraps
from pathlib import Path

import numpy as np
import pandas as pd

__all__ = [
    "PALETTE",
    "VERDICT_STYLE",
    "Plot",
    "axis_label",
    "cold_flow_stability_map",
    "comparison_figures",
    "composition_bars",
    "cost_per_tonne",
    "PNG_DPI",
    "prerender",
    "figure_png",
    "figure_png_base64",
    "plain_text",
    "pretty_unit",
    "property_by_lot",
    "save_figure",
    "save_png",
]

#: Paul Tol's "muted" qualitative scheme (colour-blind safe), then his pale grey.
PALETTE = ("#332288", "#88CCEE", "#44AA99", "#117733", "#999933", "#DDCC77", "#CC6677",
           "#882255", "#AA4499", "#DDDDDD")

#: Colour, marker and hatch per verdict group (shape and hatch also carry the meaning).
VERDICT_STYLE = {
    "meets": {"color": "#117733", "edge": "#117733", "marker": "o", "hatch": "",
              "text": "meets"},
    "too close to call": {"color": "#DDCC77", "edge": "#999933", "marker": "D", "hatch": "///",
                          "text": "too close to call"},
    "fails": {"color": "#CC6677", "edge": "#882255", "marker": "X", "hatch": "xx",
              "text": "fails"},
    "not estimated": {"color": "#BBBBBB", "edge": "#777777", "marker": "s", "hatch": "..",
                      "text": "not estimated"},
}

_PROPERTY_LEGEND = {
    "meets": "meets every limit drawn",
    "too close to call": "too close to call",
    "fails": "fails a limit drawn",
    "not estimated": "not estimated",
}
_COST_LEGEND = {
    "meets": "fuel meets every spec checked",
    "too close to call": "too close to call (nothing fails)",
    "fails": "fuel fails a spec checked",
    "not estimated": "some limit not estimated",
}

#: One colour per group of limits (e.g. per specification); dashes tell min from max.
_GROUP_COLOURS = ("#332288", "#44AA99", "#882255", "#999933")
_GROUP_DASHES = ("--", ":", "-.", (0, (6, 2, 1, 2)))


def _limit_styles(limits: Sequence[tuple]) -> list[tuple[str, float, str, object]]:
    """(text, value, colour, dash) per limit; a third tuple item groups limits by colour."""
    groups: dict[str, int] = {}
    count: dict[str, int] = {}
    out = []
    for i, item in enumerate(limits):
        text, value = item[0], float(item[1])
        key = str(item[2]) if len(item) > 2 else str(i)
        g = groups.setdefault(key, len(groups))
        k = count.get(key, 0)
        count[key] = k + 1
        out.append((text, value, _GROUP_COLOURS[g % len(_GROUP_COLOURS)],
                    _GROUP_DASHES[k % len(_GROUP_DASHES)]))
    return out

_STYLE = {
    "font.size": 10,
    "axes.titlesize": 12,
    "axes.titleweight": "bold",
    "axes.labelsize": 11,
    "xtick.labelsize": 10,
    "ytick.labelsize": 10,
    "legend.fontsize": 9,
    "axes.spines.top": False,
    "axes.spines.right": False,
    "axes.grid": True,
    "grid.alpha": 0.3,
    "grid.linewidth": 0.6,
    "svg.fonttype": "none",
    "hatch.linewidth": 0.8,
    # lot and sample names are data: never parse them as math markup ($...$)
    "text.parse_math": False,
}


def _styled(func: Callable) -> Callable:
    """Run a plotting function inside the house style (fonts, grid, spines)."""

    @wraps(func)
    def wrapper(*args, **kwargs):
        import matplotlib

        with matplotlib.rc_context(_STYLE):
            return func(*args, **kwargs)

    return wrapper


def _figure_and_axes(ax, size: tuple[float, float]):
    if ax is not None:
        return ax.figure, ax
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=size, layout="constrained")
    FigureCanvasAgg(fig)
    return fig, fig.add_subplot()


def _legend(fig, ax, own_figure: bool, ncol: int) -> None:
    """Legend under the figure when we own it, else inside the caller's axes."""
    handles, labels = ax.get_legend_handles_labels()
    if not handles:
        return
    if own_figure:
        fig.legend(handles, labels, loc="outside lower center", ncol=min(ncol, len(handles)),
                   frameon=False)
    else:
        ax.legend(handles, labels, loc="best", fontsize=8)


def axis_label(label: str, unit: str) -> str:
    """An axis label with its unit in brackets; a unit of ``1`` reads *dimensionless*.

    Examples
    --------
    >>> axis_label("cetane number", "1")
    'cetane number [dimensionless]'
    >>> axis_label("density at 15 °C", "kg/m3")
    'density at 15 °C [kg/m³]'
    """
    return f"{label} [{pretty_unit(unit)}]"


def pretty_unit(unit: str) -> str:
    """A unit as printed on a figure (superscripts and subscripts; ``1``: dimensionless)."""
    return {"1": "dimensionless", "kg/m3": "kg/m³", "mm2/s": "mm²/s",
            "g I2/100 g": "g I₂/100 g"}.get(unit, unit)


def _lot_positions(n: int) -> np.ndarray:
    """y positions that list lots top to bottom in the order given."""
    return np.arange(n)[::-1].astype(float)


#: The ring drawn around the marker of an estimate outside its method's fitted domain:
#: larger, grey, dotted and unfilled, so no verdict marker (all filled) looks like it.
DOMAIN_RING = {"marker": "o", "facecolor": "none", "edgecolor": "#555555",
               "linestyle": ":", "linewidth": 1.4, "scale": 3.2,
               "text": "dotted ring: estimate outside its method's fitted domain"}


def _markers(ax, x, y, groups, in_domain, legends: Mapping[str, str], size: float) -> None:
    """Scatter one filled marker per lot, styled by verdict; a dotted ring around the
    marker says the estimate lies outside its method's fitted domain."""
    n = len(x)
    inside = np.ones(n, dtype=bool) if in_domain is None else np.asarray(in_domain, bool)
    finite = np.isfinite(x) & np.isfinite(y)
    for verdict, style in VERDICT_STYLE.items():
        mask = np.array([g == verdict for g in groups], dtype=bool) & finite
        if mask.any():
            ax.scatter(x[mask], y[mask], s=size, marker=style["marker"],
                       facecolor=style["color"], edgecolor="#222222", linewidth=0.7,
                       zorder=3, label=legends[verdict])
    out = ~inside & finite
    if out.any():
        ring = DOMAIN_RING
        ax.scatter(x[out], y[out], s=size * ring["scale"], marker=ring["marker"],
                   facecolor=ring["facecolor"], edgecolor=ring["edgecolor"],
                   linestyle=ring["linestyle"], linewidth=ring["linewidth"], zorder=4,
                   label=ring["text"])


@_styled
def property_by_lot(
    lots: Sequence[str],
    values: Sequence[float],
    errors: Sequence[float] | None = None,
    *,
    label: str,
    unit: str,
    limits: Sequence[tuple[str, float]] = (),
    verdicts: Sequence[str] | None = None,
    in_domain: Sequence[bool] | None = None,
    title: str | None = None,
    ax=None,
):
    """One property for every lot: estimate with its error bar, and the limits as lines.

    Parameters
    ----------
    lots : sequence of str
        Lot names, listed top to bottom.
    values, errors : sequence of float
        Estimates and their +/- errors (NaN: not estimated / no error). [unit]
    label, unit : str
        Property name and unit for the axis label.
    limits : sequence of (text, value) or (text, value, group)
        Limits to draw, e.g. ``("EN 14214 min 51", 51.0, "en14214")``; the text goes in
        the legend; limits of one group share a colour and differ in dashes.
    verdicts : sequence of str, optional
        Verdict per lot (keys of :data:`VERDICT_STYLE`) setting marker colour and shape.
    in_domain : sequence of bool, optional
        False draws a dotted ring around the lot's marker: the estimate lies outside
        its method's fitted domain.
    """
    lots = [str(x) for x in lots]
    n = len(lots)
    own = ax is None
    fig, ax = _figure_and_axes(ax, (7.0, 1.6 + 0.42 * n + 0.2 * len(limits)))
    y = _lot_positions(n)
    v = np.asarray(values, dtype=float)
    e = np.zeros(n) if errors is None else np.nan_to_num(np.asarray(errors, dtype=float))
    groups = list(verdicts) if verdicts is not None else ["meets"] * n
    ax.errorbar(v, y, xerr=e, fmt="none", ecolor="#444444", elinewidth=1.2, capsize=4,
                zorder=2)
    legends = {k: _PROPERTY_LEGEND[k] for k in VERDICT_STYLE} if verdicts is not None else \
        dict.fromkeys(VERDICT_STYLE, "estimate ± stated error")
    _markers(ax, v, y, groups, in_domain, legends, size=60)
    for text, value, colour, dash in _limit_styles(limits):
        ax.axvline(value, color=colour, linestyle=dash, linewidth=1.6, zorder=1, label=text)
    finite = np.concatenate([v[np.isfinite(v)] - e[np.isfinite(v)],
                             v[np.isfinite(v)] + e[np.isfinite(v)],
                             np.array([t[1] for t in limits], dtype=float)])
    if finite.size:
        lo, hi = float(finite.min()), float(finite.max())
        pad = 0.08 * (hi - lo) if hi > lo else max(1.0, abs(hi) * 0.1)
        ax.set_xlim(lo - pad, hi + pad)
    for yi, vi in zip(y, v):
        if not np.isfinite(vi):
            ax.text(0.01, yi, "not estimated", transform=ax.get_yaxis_transform(),
                    va="center", ha="left", color="#555555", fontstyle="italic")
    ax.set_yticks(y, lots)
    ax.set_ylim(-0.7, n - 0.3)
    ax.grid(axis="y", visible=False)
    ax.set_xlabel(axis_label(label, unit))
    ax.set_title(title or f"{label[0].upper()}{label[1:]}, estimated per lot")
    _legend(fig, ax, own, 2)
    return fig


def _species_label(key: str) -> str:
    from estimator.tables import species_table

    table = species_table()
    name = table.loc[key, "common_name"] if key in table.index else ""
    return f"{key} {name}".strip() if isinstance(name, str) else key


@_styled
def composition_bars(
    composition: pd.DataFrame,
    *,
    min_share_wt_pct: float = 2.0,
    max_groups: int = 9,
    title: str | None = None,
    ax=None,
):
    """Stacked bars of each lot's ester composition, minor esters pooled as *other*.

    Parameters
    ----------
    composition : DataFrame
        Index: lot names (listed top to bottom); columns: species keys. [wt %]
    min_share_wt_pct : float
        An ester gets its own segment when it reaches this share in some lot. [wt %]
    max_groups : int
        At most this many named segments (the largest by mean share).
    """
    comp = composition.astype(float)
    peak = comp.max(axis=0)
    named = [c for c in comp.columns if peak[c] >= min_share_wt_pct]
    if len(named) > max_groups:
        keep = set(comp[named].mean().sort_values(ascending=False).index[:max_groups])
        named = [c for c in named if c in keep]
    other = comp.drop(columns=named).sum(axis=1)
    n = len(comp)
    own = ax is None
    fig, ax = _figure_and_axes(ax, (8.0, 2.0 + 0.45 * n))
    y = _lot_positions(n)
    left = np.zeros(n)
    segments = [(c, comp[c].to_numpy(), PALETTE[i % 9]) for i, c in enumerate(named)]
    segments.append((f"other (each < {min_share_wt_pct:g} wt %)", other.to_numpy(), PALETTE[9]))
    dark = {"#332288", "#117733", "#882255", "#AA4499", "#44AA99", "#999933", "#CC6677"}
    for key, width, colour in segments:
        label = key if key.startswith("other") else _species_label(key)
        ax.barh(y, width, left=left, color=colour, edgecolor="white", linewidth=0.6,
                height=0.7, label=label)
        for yi, li, wi in zip(y, left, width):
            if wi >= 8.0:
                ax.text(li + wi / 2, yi, f"{wi:.0f}", ha="center", va="center", fontsize=8.5,
                        color="white" if colour in dark else "#222222")
        left = left + width
    ax.set_yticks(y, [str(i) for i in comp.index])
    ax.set_xlim(0, 100)
    ax.set_ylim(-0.6, n - 0.4)
    ax.grid(axis="y", visible=False)
    ax.set_xlabel(axis_label("share of the esters", "wt %"))
    ax.set_title(title or "Ester composition of each lot")
    _legend(fig, ax, own, 4)
    return fig


def _place_labels(ax, xs: np.ndarray, ys: np.ndarray, labels: Sequence[str]) -> None:
    """Write point labels beside the points, nudged apart so none overlap."""
    fig = ax.figure
    if not hasattr(fig.canvas, "get_renderer"):
        from matplotlib.backends.backend_agg import FigureCanvasAgg

        FigureCanvasAgg(fig)
    fig.draw_without_rendering()  # fixes the layout and the transforms, paints nothing
    renderer = fig.canvas.get_renderer()
    placed: list = []
    axes_box = ax.get_window_extent(renderer)
    order = np.argsort(-ys)
    offsets = [(dx, dy) for dy in (0, 12, -12, 24, -24, 36, -36, 48, -48) for dx in (8, -8)]
    for i in order:
        if not (np.isfinite(xs[i]) and np.isfinite(ys[i])):
            continue
        for k, (dx, dy) in enumerate(offsets):
            text = ax.annotate(
                labels[i], (xs[i], ys[i]), xytext=(dx, dy + 4), textcoords="offset points",
                ha="left" if dx > 0 else "right", va="bottom", fontsize=9.5, zorder=5,
                bbox={"boxstyle": "round,pad=0.15", "fc": "white", "ec": "none", "alpha": 0.8},
                arrowprops=None if dy == 0 else {"arrowstyle": "-", "color": "#777777",
                                                 "lw": 0.6},
            )
            box = text.get_window_extent(renderer).expanded(1.02, 1.1)
            inside = axes_box.contains(box.x0, box.y0) and axes_box.contains(box.x1, box.y1)
            last = k == len(offsets) - 1
            if last or (inside and not any(box.overlaps(b) for b in placed)):
                placed.append(box)
                break
            text.remove()


@_styled
def cold_flow_stability_map(
    lots: Sequence[str],
    cfpp_C: Sequence[float],
    oxidation_stability_h: Sequence[float],
    *,
    cfpp_error_C: Sequence[float] | None = None,
    oxidation_error_h: Sequence[float] | None = None,
    cfpp_limits: Sequence[tuple[str, float]] = (),
    oxidation_limits: Sequence[tuple[str, float]] = (),
    cfpp_grades: Mapping[str, float] | None = None,
    verdicts: Sequence[str] | None = None,
    in_domain: Sequence[bool] | None = None,
    title: str | None = None,
    ax=None,
):
    """Cold-flow against storage stability: CFPP (x) and Rancimat induction period (y).

    The corner that meets the strictest CFPP maximum and the strictest stability
    minimum is shaded; without a CFPP limit the stability band alone is shaded.
    ``cfpp_grades`` (e.g. the A-F ladder) are drawn as faint reference lines.
    """
    lots = [str(x) for x in lots]
    x = np.asarray(cfpp_C, dtype=float)
    y = np.asarray(oxidation_stability_h, dtype=float)
    n = len(lots)
    xe = np.zeros(n) if cfpp_error_C is None else np.nan_to_num(np.asarray(cfpp_error_C, float))
    ye = np.zeros(n) if oxidation_error_h is None else np.nan_to_num(
        np.asarray(oxidation_error_h, float))
    own = ax is None
    fig, ax = _figure_and_axes(ax, (8.0, 6.5))
    ok = np.isfinite(x) & np.isfinite(y)
    xs = np.concatenate([x[ok] - xe[ok], x[ok] + xe[ok], [t[1] for t in cfpp_limits]])
    ys = np.concatenate([y[ok] - ye[ok], y[ok] + ye[ok], [t[1] for t in oxidation_limits]])
    x_lo, x_hi = (float(xs.min()), float(xs.max())) if xs.size else (-20.0, 20.0)
    y_lo, y_hi = (float(ys.min()), float(ys.max())) if ys.size else (0.0, 20.0)
    x_pad, y_pad = 0.1 * max(x_hi - x_lo, 5.0), 0.1 * max(y_hi - y_lo, 2.0)
    x_lo, x_hi = x_lo - x_pad, x_hi + x_pad
    y_lo, y_hi = 0.0, y_hi + 1.6 * y_pad  # an induction period starts at 0 h
    ax.set_xlim(x_lo, x_hi)
    ax.set_ylim(y_lo, y_hi)
    cfpp_max = min((float(t[1]) for t in cfpp_limits), default=None)
    os_min = max((float(t[1]) for t in oxidation_limits), default=None)
    if os_min is not None or cfpp_max is not None:
        right = cfpp_max if cfpp_max is not None else x_hi
        bottom = os_min if os_min is not None else y_lo
        what = "meets the limits drawn" if cfpp_max is not None else \
            "meets the stability limits (no CFPP limit: no climate class chosen)"
        ax.fill_between([x_lo, right], bottom, y_hi, color="#117733", alpha=0.10, zorder=0,
                        label=f"region that {what}")
    if cfpp_grades:
        seen = set()
        for grade, value in cfpp_grades.items():
            if value in seen or not (x_lo < value < x_hi):
                continue
            seen.add(value)
            ax.axvline(value, color="#AAAAAA", linewidth=0.7, zorder=0)
            ax.text(value, 0.985, f"grade {grade}", transform=ax.get_xaxis_transform(),
                    rotation=90, ha="right", va="top", fontsize=8, color="#666666")
    for text, value, colour, dash in _limit_styles(list(cfpp_limits) + list(oxidation_limits))[
            :len(cfpp_limits)]:
        ax.axvline(value, color=colour, linestyle=dash, linewidth=1.6, label=text)
    for text, value, colour, dash in _limit_styles(list(cfpp_limits) + list(oxidation_limits))[
            len(cfpp_limits):]:
        ax.axhline(value, color=colour, linestyle=dash, linewidth=1.6, label=text)
    ax.errorbar(x[ok], y[ok], xerr=xe[ok], yerr=ye[ok], fmt="none", ecolor="#666666",
                elinewidth=1.0, capsize=3, zorder=2)
    groups = list(verdicts) if verdicts is not None else ["meets"] * n
    legends = {k: f"lot {_PROPERTY_LEGEND[k]}" for k in VERDICT_STYLE} if verdicts is not None \
        else dict.fromkeys(VERDICT_STYLE, "lot")
    _markers(ax, x, y, groups, in_domain, legends, size=70)
    ax.set_xlabel(axis_label("cold filter plugging point (CFPP)", "°C"))
    ax.set_ylabel(axis_label("oxidation stability at 110 °C", "h"))
    ax.set_title(title or "Cold flow against storage stability")
    missing = [lot for lot, good in zip(lots, ok) if not good]
    if missing:
        ax.text(0.01, 0.01, "not plotted (no estimate): " + ", ".join(missing),
                transform=ax.transAxes, fontsize=8, color="#555555")
    _legend(fig, ax, own, 2)
    _place_labels(ax, x, y, lots)
    return fig


@_styled
def cost_per_tonne(
    lots: Sequence[str],
    cost_per_t_fuel: Sequence[float],
    *,
    verdicts: Sequence[str] | None = None,
    currency: str = "currency units",
    title: str | None = None,
    ax=None,
):
    """Total cost per tonne of fuel for each lot (feedstock plus processing), as
    horizontal bars in the order given.

    Bars are coloured and hatched by verdict group; a lot without a price is marked.
    """
    lots = [str(x) for x in lots]
    n = len(lots)
    cost = np.asarray(cost_per_t_fuel, dtype=float)
    own = ax is None
    fig, ax = _figure_and_axes(ax, (7.5, 1.8 + 0.45 * n))
    y = _lot_positions(n)
    groups = list(verdicts) if verdicts is not None else ["meets"] * n
    top = float(np.nanmax(cost)) if np.isfinite(cost).any() else 1.0
    for verdict, style in VERDICT_STYLE.items():
        mask = np.array([g == verdict for g in groups]) & np.isfinite(cost)
        if mask.any():
            ax.barh(y[mask], cost[mask], height=0.65, color=style["color"],
                    hatch=style["hatch"], edgecolor="#333333", linewidth=0.6,
                    label=_COST_LEGEND[verdict] if verdicts is not None else None)
    for yi, ci in zip(y, cost):
        if np.isfinite(ci):
            ax.text(ci + 0.01 * top, yi, f"{ci:,.0f}", va="center", ha="left", fontsize=9.5)
        else:
            ax.text(0.01 * top, yi, "no price given", va="center", ha="left",
                    fontstyle="italic", color="#555555")
    ax.set_xlim(0, top * 1.15)
    ax.set_yticks(y, lots)
    ax.set_ylim(-0.6, n - 0.4)
    ax.grid(axis="y", visible=False)
    ax.set_xlabel(axis_label("cost of the fuel: feedstock plus processing",
                             f"{currency} per t of fuel"))
    ax.set_title(title or "Total cost of a tonne of fuel")
    _legend(fig, ax, own, 3)
    return fig


def plain_text(fig) -> None:
    """Make every text of ``fig`` plain: no math markup is parsed in names or labels.

    A lot named ``$\\frac{$`` would otherwise be read as (broken) mathtext and stop
    the drawing. The figures use no math markup of their own (units are written with
    Unicode super- and subscripts); tick labels made while drawing are covered by the
    ``text.parse_math`` setting the save functions draw under.
    """
    from matplotlib.text import Text

    for text in fig.findobj(Text):
        text.set_parse_math(False)


#: Resolution of every PNG the reports write or embed (one rendering serves both).
PNG_DPI = 130


def figure_png(fig, *, dpi: int = PNG_DPI) -> bytes:
    """The figure as PNG bytes, drawn once per resolution and kept on the figure.

    The report embeds the same bytes it writes to ``plots/``, so each figure is
    rasterised once however many places show it.
    """
    cache = fig.__dict__.setdefault("_fame_png", {})
    if dpi not in cache:
        cache[dpi] = _render_png(fig, dpi)
    return cache[dpi]


def prerender(figures: Sequence, *, dpi: int = PNG_DPI) -> None:
    """Draw the PNG of each figure not drawn yet, side by side where cores allow.

    The bytes are kept on each figure, so :func:`figure_png` and :func:`save_figure`
    then cost nothing. Figures are drawn in forked workers
    (:func:`estimator.parallel.run_jobs`); the pixels are the same as drawn here.
    """
    from estimator.parallel import run_jobs

    todo = [fig for fig in figures if dpi not in fig.__dict__.get("_fame_png", {})]
    if len(todo) < 2:
        return
    pngs = run_jobs(lambda fig, _tick: _render_png(fig, dpi), todo)
    for fig, data in zip(todo, pngs, strict=True):
        fig.__dict__.setdefault("_fame_png", {})[dpi] = data


def _render_png(fig, dpi: int) -> bytes:
    """One Agg draw at ``dpi`` (layout included), encoded by Pillow.

    ``savefig`` would draw twice (a layout pass, then the picture); one draw gives
    the same pixels.
    """
    import matplotlib
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from PIL import Image

    plain_text(fig)
    canvas = fig.canvas if isinstance(fig.canvas, FigureCanvasAgg) else FigureCanvasAgg(fig)
    original = fig.dpi
    try:
        fig.set_dpi(dpi)
        with matplotlib.rc_context({"text.parse_math": False}):
            canvas.draw()
        width, height = canvas.get_width_height(physical=True)
        image = Image.frombuffer("RGBA", (width, height), canvas.buffer_rgba(), "raw",
                                 "RGBA", 0, 1)
        buffer = io.BytesIO()
        image.save(buffer, format="png", dpi=(dpi, dpi), compress_level=3)
    finally:
        fig.set_dpi(original)
    return buffer.getvalue()


def save_figure(fig, stem: str | Path, *, dpi: int = PNG_DPI, svg: bool = False) -> list[Path]:
    """Write ``stem.png`` (and ``stem.svg`` when asked) atomically; return the paths."""
    from estimator.files import atomic_write

    stem = Path(stem)
    data = figure_png(fig, dpi=dpi)
    paths = [atomic_write(stem.with_suffix(".png"), lambda tmp: tmp.write_bytes(data))]
    if svg:
        import matplotlib

        def write(tmp: Path) -> None:
            with matplotlib.rc_context({"svg.fonttype": "none", "text.parse_math": False}):
                # no timestamp, so the same data give the same file
                fig.savefig(tmp, format="svg", metadata={"Date": None})

        paths.append(atomic_write(stem.with_suffix(".svg"), write))
    return paths


def save_png(fig, path: str | Path, *, dpi: int = 150) -> Path:
    """Write one PNG atomically, names and labels as plain text; return the path."""
    import matplotlib

    from estimator.report.tables import atomic_write

    plain_text(fig)

    def write(tmp: Path) -> None:
        with matplotlib.rc_context({"text.parse_math": False}):
            fig.savefig(tmp, format="png", dpi=dpi)

    return atomic_write(path, write)


def figure_png_base64(fig, *, dpi: int = PNG_DPI) -> str:
    """The figure as a base64-encoded PNG, for embedding in an HTML report."""
    return base64.b64encode(figure_png(fig, dpi=dpi)).decode("ascii")


# ------------------------------------------------------------ the buyer's comparison
#: The properties charted per lot when a specification limits them.
_CHARTED = ("cetane_number", "iodine_value_gI2_100g", "cfpp_C", "cloud_point_C",
            "oxidation_stability_110C_h", "density_15C_kg_m3", "kin_viscosity_40C_mm2_s",
            "linolenic_wt_pct", "pufa4_wt_pct")

_AXIS_NAMES = {
    "cetane_number": "cetane number",
    "iodine_value_gI2_100g": "iodine value",
    "cfpp_C": "cold filter plugging point (CFPP)",
    "cloud_point_C": "cloud point",
    "oxidation_stability_110C_h": "oxidation stability at 110 °C",
    "density_15C_kg_m3": "density at 15 °C",
    "kin_viscosity_40C_mm2_s": "kinematic viscosity at 40 °C",
    "linolenic_wt_pct": "linolenic acid methyl ester",
    "pufa4_wt_pct": "esters with four or more double bonds",
}


@dataclass(frozen=True)
class Plot:
    """A named figure with the caption a report shows under it."""

    name: str
    figure: object
    caption: str


def _limit_texts(limits: pd.DataFrame, prop: str) -> list[tuple[str, float]]:
    from estimator.comparison import SPEC_LABELS

    rows = limits[limits["property"] == prop]
    out = []
    for spec, bound, value, unit, cls in zip(rows["spec"], rows["bound"], rows["limit"],
                                             rows["unit"], rows["climate_class"]):
        grade = f" grade {cls}" if isinstance(cls, str) and cls.isalpha() else (
            f" arctic class {cls}" if isinstance(cls, str) else "")
        unit_text = "" if unit == "1" else f" {pretty_unit(unit)}"
        out.append((f"{SPEC_LABELS.get(spec, spec)}{grade} {bound} {value:g}{unit_text}",
                    float(value), spec))
    return out


def _worst(verdicts: pd.DataFrame, lots: Sequence[str], props: Sequence[str]) -> list[str]:
    # "outside method range" shows as "too close to call" (listed first, so the inverse
    # names rank 2 "too close to call")
    rank = {"meets": 0, "not estimated": 1, "outside method range": 2, "too close to call": 2,
            "fails": 3}
    names = {v: k for k, v in rank.items()}
    rows = verdicts[verdicts["property"].isin(list(props))]
    worst = rows.assign(_r=rows["verdict"].map(rank)).groupby("sample")["_r"].max()
    return [names[int(worst.get(lot, 0))] for lot in lots]


def _in_domain(estimates: pd.DataFrame, lots: Sequence[str], props: Sequence[str]) -> list[bool]:
    """Per lot: every estimate that decides (a lab model's, where one is given) lies inside
    its fitted domain; the published rows a lab model replaced do not count."""
    from estimator.comparison import decision_rows

    estimates = decision_rows(estimates)
    rows = estimates[estimates["property"].isin(list(props))]
    inside = rows.assign(_ok=rows["in_domain"].astype(bool)).groupby("sample")["_ok"].all()
    return [bool(inside.get(lot, True)) for lot in lots]


def _limiting_specs(limits: pd.DataFrame, prop: str) -> str:
    """The specifications that limit ``prop``, as printed (only those, none other)."""
    from estimator.comparison import SPEC_LABELS
    from estimator.report.labels import and_list

    specs = dict.fromkeys(limits.loc[limits["property"] == prop, "spec"])
    return and_list(SPEC_LABELS.get(s, s) for s in specs)


def comparison_figures(comparison) -> list[Plot]:
    """Every figure of the buyer's comparison, lots in ranked order.

    One chart per property that a chosen specification limits (skipping those that
    are zero in every lot), the stacked compositions, the cold-flow / stability map
    and the cost per tonne of fuel.
    """
    from estimator.report.subset import subset_comparison

    comparison, shown_note = subset_comparison(comparison)  # many lots: a readable subset
    ranked = comparison.ranked
    lots = list(ranked["sample"])
    lim = comparison.limits
    verdicts = comparison.verdicts
    plots: list[Plot] = []
    units = dict(zip(lim["property"], lim["unit"]))
    for prop in _CHARTED:
        if prop not in set(lim["property"]) or prop not in ranked.columns:
            continue
        values = ranked[prop].to_numpy(dtype=float)
        if np.nanmax(np.abs(values), initial=0.0) == 0.0:
            continue
        exact = prop in ("linolenic_wt_pct", "pufa4_wt_pct")
        name = _AXIS_NAMES[prop]
        fig = property_by_lot(
            lots, values, ranked[f"{prop}_error"].to_numpy(dtype=float),
            label=name, unit=units[prop], limits=_limit_texts(lim, prop),
            verdicts=_worst(verdicts, lots, [prop]),
            in_domain=_in_domain(comparison.estimates, lots, [prop]),
            title=f"{name[0].upper()}{name[1:]}, from each lot's profile" if exact else None,
        )
        plots.append(Plot(
            f"property_{prop}", fig,
            f"{_AXIS_NAMES[prop][0].upper()}{_AXIS_NAMES[prop][1:]} of each lot's fuel "
            + ("(read from the profile: exact)" if exact else
               "(estimate; bars: the method's stated error)")
            + f" against the {_limiting_specs(lim, prop)} limits.",
        ))
    comp = comparison.profile.composition.loc[lots]
    plots.append(Plot("composition", composition_bars(comp),
                      "Ester composition of each lot (wt % of the esters, FAME basis)."))
    if "cfpp_C" in ranked.columns and "oxidation_stability_110C_h" in ranked.columns:
        from estimator.specs import limits as spec_limits

        grades = {}
        for cls in "ABCDEF":
            rows = spec_limits("en590", cls)
            row = rows[rows["property"] == "cfpp_C"]
            if len(row):
                grades[cls] = float(row["limit"].iloc[0])
        fig = cold_flow_stability_map(
            lots, ranked["cfpp_C"], ranked["oxidation_stability_110C_h"],
            cfpp_error_C=ranked["cfpp_C_error"],
            oxidation_error_h=ranked["oxidation_stability_110C_h_error"],
            cfpp_limits=_limit_texts(lim, "cfpp_C"),
            oxidation_limits=_limit_texts(lim, "oxidation_stability_110C_h"),
            cfpp_grades=grades,
            verdicts=_worst(verdicts, lots, ["cfpp_C", "oxidation_stability_110C_h"]),
            in_domain=_in_domain(comparison.estimates, lots,
                                 ["cfpp_C", "oxidation_stability_110C_h"]),
        )
        where = ("climate class " + comparison.climate_class) if comparison.climate_class \
            else "no climate class chosen, so no CFPP limit"
        plots.append(Plot(
            "cold_flow_vs_stability", fig,
            "Cold filter plugging point against Rancimat induction period; the shaded "
            f"corner meets both limits ({where}). Grey lines: the CFPP grades A-F "
            "(EN 590 ladder).",
        ))
    ranked_names = [f"{rank}. {lot}" for rank, lot in zip(ranked["rank"], lots)]
    fig = cost_per_tonne(ranked_names, ranked["cost_per_t_fuel"],
                         verdicts=list(ranked["overall"]))
    plots.append(Plot(
        "cost_per_t_fuel", fig,
        "Total cost per tonne of fuel: the feedstock (price per tonne of oil divided by the "
        "theoretical fuel yield) plus processing (methanol, catalyst, any pretreatment or "
        "antioxidant dose, less the glycerol credit). Lots in ranked order.",
    ))
    if shown_note:
        plots = [Plot(p.name, p.figure, f"{p.caption} {shown_note}") for p in plots]
    return plots
