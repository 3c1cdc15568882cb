"""One self-contained HTML report, built from composable sections.

A report is a title and a list of :class:`Section` objects (a title and an HTML
fragment). :func:`build_report` wraps them in one page with a table of contents,
inline CSS and the caution at the top and bottom, and writes it atomically; images
are embedded as base64 PNG, so the file needs nothing beside it. Each job adds its
own sections: the buyer's comparison uses :func:`comparison_sections`; the blend,
mix and refit jobs can build theirs with the same helpers (:func:`table_html`,
:func:`figure_html`, :func:`paragraph`, :func:`bullet_list`).
"""

from __future__ import annotations

import html
import math
import re
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from estimator.cautions import CAUTION

__all__ = [
    "Section",
    "assumptions_section",
    "bullet_list",
    "build_report",
    "cautions_section",
    "comparison_sections",
    "figure_html",
    "figures_section",
    "flags_section",
    "limits_section",
    "methods_section",
    "paragraph",
    "plus_minus",
    "ranking_section",
    "render_report",
    "summary_section",
    "table_html",
    "valuation_section",
    "verdicts_section",
    "write_comparison",
]


@dataclass(frozen=True)
class Section:
    """One titled part of a report; ``html`` is a trusted fragment built by the helpers."""

    title: str
    html: str
    id: str = field(default="")

    @property
    def anchor(self) -> str:
        """The id used for links from the table of contents."""
        if self.id:
            return self.id
        slug = re.sub(r"[^a-z0-9]+", "-", self.title.lower()).strip("-")
        return slug or "section"


# ------------------------------------------------------------------ fragments
def paragraph(text: str) -> str:
    """A paragraph of plain text (escaped)."""
    return f"<p>{html.escape(text)}</p>"


def bullet_list(items: Iterable[str]) -> str:
    """An unordered list of plain-text items (escaped)."""
    body = "".join(f"<li>{html.escape(str(i))}</li>" for i in items)
    return f"<ul>{body}</ul>"


def _cell(value: object, digits: int) -> str:
    if value is None:
        return ""
    if isinstance(value, (bool, np.bool_)):
        return "yes" if value else "no"
    if isinstance(value, (float, np.floating)):
        if math.isnan(value):
            return "–"
        if value == 0:
            return "0"
        mag = abs(float(value))
        if mag >= 10 ** digits:
            return f"{value:,.0f}"
        decimals = max(0, digits - 1 - int(math.floor(math.log10(mag))))
        return f"{value:.{decimals}f}"
    if isinstance(value, (int, np.integer)):
        return str(value)
    return str(value)


def table_html(
    frame: pd.DataFrame, *, caption: str | None = None, digits: int = 4,
    verdict_columns: Sequence[str] = (), formats: dict[str, str] | None = None,
) -> str:
    """An HTML table of a frame (no index); numbers to ``digits`` significant figures.

    ``formats`` maps a column to a format spec for its numbers (e.g. ``",.0f"``).
    Cells of ``verdict_columns`` get a CSS class from their leading verdict, so
    *meets*, *too close to call* and *fails* are shaded (and keep their words).
    """
    formats = formats or {}
    head = "".join(f"<th>{html.escape(str(c))}</th>" for c in frame.columns)
    rows = []
    numeric = {c: pd.api.types.is_numeric_dtype(frame[c]) for c in frame.columns}
    for record in frame.itertuples(index=False, name=None):
        cells = []
        for col, value in zip(frame.columns, record):
            if col in formats and isinstance(value, (int, float, np.number)) and \
                    np.isfinite(value):
                raw = format(value, formats[col])
            else:
                raw = _cell(value, digits)
            text = html.escape(raw)
            cls = []
            if len(raw) <= 18:
                cls.append("nw")
            if numeric[col]:
                cls.append("num")
            if col in verdict_columns:
                lead = str(value).split(" (")[0].split(";")[0].strip().replace(" ", "-")
                cls.append(f"v-{lead}")
            attr = f' class="{" ".join(cls)}"' if cls else ""
            cells.append(f"<td{attr}>{text}</td>")
        rows.append("<tr>" + "".join(cells) + "</tr>")
    cap = f"<caption>{html.escape(caption)}</caption>" if caption else ""
    return (f'<div class="scroll"><table>{cap}<thead><tr>{head}</tr></thead>'
            f"<tbody>{''.join(rows)}</tbody></table></div>")


def figure_html(fig, *, alt: str, caption: str | None = None, dpi: int = 110) -> str:
    """A figure embedded as a base64 PNG ``<img>`` with alt text and caption."""
    from estimator.report.plots import figure_png_base64

    data = figure_png_base64(fig, dpi=dpi)
    cap = f"<figcaption>{html.escape(caption)}</figcaption>" if caption else ""
    return (f'<figure><img src="data:image/png;base64,{data}" alt="{html.escape(alt)}">'
            f"{cap}</figure>")


_CSS = """
body{font-family:system-ui,-apple-system,"Segoe UI",Roboto,Arial,sans-serif;margin:0;
color:#222;line-height:1.45;background:#fff}
main{max-width:1100px;margin:0 auto;padding:1.5rem 1.5rem 3rem}
h1{font-size:1.7rem;margin:.2rem 0}h2{font-size:1.3rem;margin-top:2.2rem;
border-bottom:2px solid #ddd;padding-bottom:.2rem}
.subtitle{color:#555;margin-top:0}
.caution{border-left:6px solid #CC6677;background:#fbeff1;padding:.7rem 1rem;margin:1rem 0}
nav ol{columns:2;font-size:.95rem}
.scroll{overflow-x:auto;margin:.6rem 0}
table{border-collapse:collapse;font-size:.86rem}
caption{text-align:left;font-weight:600;padding:.3rem 0}
th,td{border:1px solid #ccc;padding:.25rem .45rem;vertical-align:top;text-align:left;
overflow-wrap:break-word}
th{background:#f2f2f2;position:sticky;top:0}
td.num{text-align:right;font-variant-numeric:tabular-nums}td.nw{white-space:nowrap}
td.v-meets{background:#e3f1e6}td.v-too-close-to-call{background:#f7f1d9}
td.v-fails{background:#f6e0e4}td.v-not-estimated{background:#eee}
figure{margin:1rem 0;break-inside:avoid}figure img{max-width:100%;height:auto;
border:1px solid #eee}
figcaption{font-size:.9rem;color:#444;margin-top:.3rem}
footer{color:#555;font-size:.85rem;margin-top:3rem}
@media print{nav{display:none}h2{break-after:avoid}th{position:static}}
"""


def render_report(
    title: str, sections: Sequence[Section], *, subtitle: str = "", caution: str = CAUTION
) -> str:
    """The whole report page as a string (see :func:`build_report`)."""
    seen: set[str] = set()
    parts, toc = [], []
    for section in sections:
        anchor = section.anchor
        while anchor in seen:
            anchor += "-x"
        seen.add(anchor)
        toc.append(f'<li><a href="#{anchor}">{html.escape(section.title)}</a></li>')
        parts.append(f'<section id="{anchor}"><h2>{html.escape(section.title)}</h2>'
                     f"{section.html}</section>")
    sub = f'<p class="subtitle">{html.escape(subtitle)}</p>' if subtitle else ""
    warn = f'<div class="caution"><strong>Caution.</strong> {html.escape(caution)}</div>'
    return (
        "<!DOCTYPE html>\n"
        f'<html lang="en"><head><meta charset="utf-8">'
        f'<meta name="viewport" content="width=device-width, initial-scale=1">'
        f"<title>{html.escape(title)}</title><style>{_CSS}</style></head>"
        f"<body><main><header><h1>{html.escape(title)}</h1>{sub}</header>{warn}"
        f"<nav><strong>Contents</strong><ol>{''.join(toc)}</ol></nav>"
        f"{''.join(parts)}"
        f"<footer>{warn}<p>Made with fame-estimator.</p></footer></main></body></html>\n"
    )


def build_report(
    title: str, sections: Sequence[Section], path: str | Path, *, subtitle: str = "",
    caution: str = CAUTION,
) -> Path:
    """Write one self-contained HTML report of ``sections`` to ``path`` (atomically)."""
    from estimator.files import atomic_write

    text = render_report(title, sections, subtitle=subtitle, caution=caution)
    return atomic_write(path, lambda tmp: tmp.write_text(text, encoding="utf-8"))


# ------------------------------------------------------ the buyer's comparison
def _spec_label(spec: str) -> str:
    from estimator.comparison import SPEC_LABELS

    return SPEC_LABELS.get(spec, spec)


def plus_minus(value: float, error: float) -> str:
    """``55.1 ± 3.3``: decimals by magnitude and error; no ± for a zero or unknown error."""
    import math

    if value != value:  # NaN
        return "not estimated"
    mag = abs(value)
    decimals = 0 if mag >= 100 else 1 if mag >= 1 else 2
    if error == error and error > 0:
        decimals = min(2, max(decimals, -math.floor(math.log10(error))))
        return f"{_no_minus_zero(value, decimals)} ± {error:.{decimals}f}"
    return _no_minus_zero(value, decimals)


def _no_minus_zero(value: float, decimals: int) -> str:
    """``-0.0`` prints as ``0.0``."""
    text = f"{value:.{decimals}f}"
    return text[1:] if text.startswith("-") and float(text) == 0 else text


def summary_section(comparison) -> Section:
    """What was compared, against what, and the headline outcome."""
    ranked = comparison.ranked
    specs_text = ", ".join(_spec_label(s) for s in comparison.specs)
    counts = ranked["overall"].value_counts()
    cls = comparison.climate_class
    ffa = ("acid pretreatment (esterified to fuel)" if comparison.pretreat == "acid"
           else "base catalysis (FFA lost to soap)")
    items = [
        f"{len(ranked)} lots from {comparison.profile.source or 'the input'}.",
        f"Specifications: {specs_text}; editions as listed under 'Specification limits'.",
        f"Climate class: {cls}." if cls else
        "No climate class chosen: CFPP is estimated but not judged (choose a grade A-F or "
        "an arctic class 0-4).",
        f"FFA handling: {ffa}; methanol : oil molar ratio {comparison.methanol_ratio:g} : 1.",
        "Processing costs: " + ("the stated defaults (assumptions; see 'Assumptions')"
                                if getattr(comparison, "costs", None) is None
                                or comparison.costs.source == "defaults" else
                                f"from {comparison.costs.source} (see 'Assumptions')") + ".",
        "Outcome: " + ", ".join(f"{int(counts.get(k, 0))} {k}" for k in
                                ("meets", "too close to call", "fails") if counts.get(k, 0))
        + " (worst verdict over every limit checked).",
    ]
    from_model = getattr(comparison, "model_properties", None) or {}
    if from_model:
        items.append("From the lab's model, replacing the published estimates in verdicts "
                     "and ranking: " + "; ".join(f"{p} ({how})" for p, how in
                                                 from_model.items()) + ".")
    best = ranked.iloc[0]
    if best["overall"] == "meets":
        items.append(f"First choice: {best['sample']} (meets every specification checked, "
                     f"feedstock cost {_cell(best['cost_per_t_fuel'], 4)} per t of fuel).")
    else:
        items.append("No lot meets every specification checked on these estimates; the "
                     "ranking puts the least doubtful and cheapest first.")
    v = comparison.verdicts
    os_fails = v[(v["property"] == "oxidation_stability_110C_h") & (v["verdict"] == "fails")]
    if len(os_fails):
        lots = ", ".join(dict.fromkeys(os_fails["sample"].astype(str)))
        items.append(
            f"Oxidation stability fails for {lots}: the Rancimat estimate is for the esters "
            "alone, without antioxidant. Producers commonly dose an antioxidant to reach "
            "the limit (common practice); whether a dosed fuel passes is for the laboratory "
            "test to show."
        )
    return Section("Summary", bullet_list(items))


_PROPERTY_HEADERS = {
    "cetane_number": "cetane number [-]",
    "iodine_value_gI2_100g": "iodine value [g I2/100 g]",
    "cfpp_C": "CFPP [°C]",
    "cloud_point_C": "cloud point [°C]",
    "oxidation_stability_110C_h": "oxidation stability 110 °C [h]",
    "density_15C_kg_m3": "density 15 °C [kg/m³]",
    "kin_viscosity_40C_mm2_s": "viscosity 40 °C [mm²/s]",
    "linolenic_wt_pct": "linolenic ester [wt %]",
    "pufa4_wt_pct": "esters with ≥ 4 double bonds [wt %]",
    "ester_content_wt_pct": "ester content, EN 14103 [% (m/m)]",
}


def ranking_section(comparison) -> Section:
    """The ranked lots: verdict summaries, yield and cost; then key properties (± error)."""
    from estimator.comparison import KEY_PROPERTIES

    r = comparison.ranked
    out = pd.DataFrame({"rank": r["rank"], "lot": r["sample"]})
    for col in ("supplier", "feedstock"):
        if col in r.columns:
            out[col] = r[col]
    verdict_cols = []
    for spec in comparison.specs:
        name = _spec_label(spec)
        out[name] = r[f"verdict_{spec}"]
        verdict_cols.append(name)
    if "decision" in r.columns:
        out["decision"] = r["decision"]
        out["fixable (treatment, assumed cost)"] = r["fixable_failures"]
        out["no treatment fixes"] = r["unfixable_failures"]
    out["fuel yield [t/t oil]"] = r["fuel_yield_t_per_t_oil"]
    out["price [per t oil]"] = r["price_per_t"]
    if "feedstock_cost_per_t_fuel" in r.columns:
        out["feedstock cost [per t fuel]"] = r["feedstock_cost_per_t_fuel"]
    out["cost [per t fuel]"] = r["cost_per_t_fuel"]
    if "available_t" in r.columns:
        out["available [t]"] = r["available_t"]
    body = paragraph(
        "Lots whose fuel meets every specification checked come first, then those too "
        "close to call, then those whose only failures a treatment fixes (oxidation "
        "stability, by an antioxidant dose), then those with a failure no treatment fixes. "
        "Failing lots closer to their limits, in stated errors, come first; then the "
        "cheaper fuel (cost: oil, methanol, catalyst, pretreatment and any antioxidant "
        "dose, less the glycerol credit). A verdict is 'too close to call' when the limit "
        "lies between 0.1 and 0.9 in probability of meeting it, and 'outside method range' "
        "when the estimate lies outside the range its method was fitted on. Every ± is one "
        "standard uncertainty."
    )
    body += table_html(out, verdict_columns=verdict_cols, formats={
        "fuel yield [t/t oil]": ".4f", "price [per t oil]": ",.0f",
        "feedstock cost [per t fuel]": ",.0f", "cost [per t fuel]": ",.0f",
        "available [t]": ",.0f"})
    props = pd.DataFrame({"rank": r["rank"], "lot": r["sample"]})
    for prop in (*KEY_PROPERTIES, "ester_content_wt_pct"):  # the last only when measured
        if prop in r.columns:
            props[_PROPERTY_HEADERS.get(prop, prop)] = [
                plus_minus(v, e) for v, e in zip(r[prop], r[f"{prop}_error"])]
    body += "<h3>Key properties of each lot's fuel (estimate ± stated error)</h3>"
    body += table_html(props)
    notes = [f"{lot}: {n}" for lot, n in zip(r["sample"], r["notes"]) if n]
    if notes:
        body += "<h3>Notes on the lots</h3>" + bullet_list(notes)
    return Section("Ranking", body)


def figures_section(plots: Sequence) -> Section:
    """Every figure (``Plot`` objects from :func:`estimator.report.plots.comparison_figures`)."""
    body = "".join(figure_html(p.figure, alt=p.caption, caption=p.caption) for p in plots)
    return Section("Charts", body)


def verdicts_section(comparison) -> Section:
    """Every estimate against every limit, one row each."""
    v = comparison.verdicts.copy()
    rank = {lot: i for i, lot in enumerate(comparison.ranked["sample"])}
    v = v.assign(_r=v["sample"].map(rank)).sort_values("_r", kind="stable")
    v["spec"] = v["spec"].map(_spec_label)
    cols = ["sample", "spec", "property", "bound", "limit", "estimate", "error", "unit",
            "verdict", "method", "in_domain"]
    return Section("Verdict details", paragraph("Lots in ranked order.") + table_html(
        v[cols], verdict_columns=["verdict"], formats={"limit": "g"}))


def valuation_section(comparison) -> Section:
    """Yield, by-products, reagents and cost of each lot."""
    val = comparison.valuation.set_index("sample")
    lots = [lot for lot in comparison.ranked["sample"] if lot in val.index]
    table = val.loc[lots].drop(columns=["valuation_note", "pretreat"]).T
    table.index.name = "quantity (per tonne of oil as offered)"
    table = table.reset_index()
    how = ("acid pretreatment: FFA esterified to fuel" if comparison.pretreat == "acid"
           else "base catalysis: FFA neutralised to soap")
    return Section("Lot valuation", paragraph(
        f"Theoretical yields (complete conversion), {how}; methanol : oil molar ratio "
        f"{comparison.methanol_ratio:g} : 1. Yields in t per t of oil, side streams in kg "
        "per t of oil; lots in ranked order. The notes on each lot are under 'Ranking'.")
        + table_html(table))


def assumptions_section(comparison) -> Section:
    """Every assumption of the valuation with its value and basis."""
    return Section("Assumptions", table_html(comparison.assumptions))


def methods_section(comparison) -> Section:
    """Methods and citations used for the estimates."""
    m = comparison.methods
    table = pd.DataFrame({
        "property": m["property"],
        "method": m["method"],
        "unit": m["unit"],
        "stated error": m["stated_error"],
        "mark": m["provenance"],
        "citation, fitted domain and note": [
            f"{c}. Fitted domain: {d}. {n}" for c, d, n in
            zip(m["citation"], m["fitted_domain"], m["note"])],
    })
    return Section("Methods and citations", paragraph(
        "The default method of each property in the registry. The stated error is the "
        "published one where there is one; otherwise the estimates use the spread of the "
        "property's methods or the fallback named in the note.") + table_html(table))


def flags_section(comparison) -> Section:
    """Estimates outside their method's fitted domain."""
    flags = comparison.flags
    if flags.empty:
        return Section("Out-of-domain flags", paragraph(
            "Every estimate lies inside its method's fitted domain."))
    return Section("Out-of-domain flags", paragraph(
        "These estimates lie outside the composition range their method was fitted on; "
        "they are reported, not clamped, and deserve extra doubt.") + table_html(flags))


def limits_section(comparison) -> Section:
    """The specification limits applied, with edition, test method, mark and source."""
    lim = comparison.limits
    table = pd.DataFrame({
        "spec": lim["spec"].map(_spec_label),
        "property": lim["property"],
        "climate class": lim["climate_class"].fillna(""),
        "bound": lim["bound"],
        "limit": lim["limit"],
        "unit": lim["unit"],
        "mark": lim["mark"],
        "edition, test method and source": [
            f"{e}; {t}; {s.replace('shared/reference/', '')}" for e, t, s in
            zip(lim["edition"], lim["test_method"], lim["source"])],
    })
    return Section("Specification limits", paragraph(
        "MEMORY marks a number recalled, not seen in a source; check it before relying "
        "on it. Sources are the project's research notes on the standards (standards.md), "
        "which cite the public reproductions [S1]...") + table_html(
            table, formats={"limit": "g"}))


def cautions_section(comparison) -> Section:
    """The cautions: what these numbers are and are not."""
    items = [
        CAUTION,
        "Oxidation stability here is the fatty-acid contribution only; natural and added "
        "antioxidants change the induction period a lot.",
        "Yields are theoretical; unsaponifiable matter, washing and handling losses lower "
        "them.",
        "The lot data (prices, FFA, water) are taken as given.",
    ]
    return Section("Cautions", bullet_list(items))


def comparison_sections(comparison, plots: Sequence | None = None) -> list[Section]:
    """All sections of the buyer's comparison report, in reading order."""
    from estimator.report.subset import subset_comparison

    if plots is None:
        from estimator.report.plots import comparison_figures

        plots = comparison_figures(comparison)
    full = comparison
    comparison, note = subset_comparison(full)  # many lots: the best and the failing ones
    ranking = ranking_section(comparison)
    if note:
        ranking = Section(ranking.title, paragraph(note) + ranking.html, ranking.id)
    return [
        summary_section(full),
        ranking,
        figures_section(plots),
        verdicts_section(comparison),
        valuation_section(comparison),
        assumptions_section(comparison),
        methods_section(comparison),
        flags_section(comparison),
        limits_section(comparison),
        cautions_section(comparison),
    ]


#: The fixed files :func:`write_comparison` writes into its folder (besides ``plots/``).
COMPARISON_FILES = ("comparison.csv", "comparison.xlsx", "report.html")


def write_comparison(
    comparison,
    outdir: str | Path,
    *,
    plots: Sequence | None = None,
    extra_sections: Sequence[Section] = (),
    title: str = "Offered lots compared",
) -> dict:
    """Write the whole comparison into ``outdir``; return ``{what: path or [paths]}``.

    ``comparison.csv`` (ranked table), ``comparison.xlsx`` (ranked table plus sheets
    verdicts, valuation, assumptions, methods, limits, flags, cautions), each figure as
    ``plots/<name>.png`` and ``.svg``, and the self-contained ``report.html``, with
    ``extra_sections`` (e.g. blend, mix or refit sections) after the charts.
    """
    from estimator.cautions import CAUTION_SHORT
    from estimator.comparison import SPEC_LABELS
    from estimator.files import check_outputs, write_table
    from estimator.report.plots import comparison_figures, save_figure

    outdir = Path(outdir)
    if plots is None:
        plots = comparison_figures(comparison)
    check_outputs([*(outdir / name for name in COMPARISON_FILES),
                   *(outdir / "plots" / f"{p.name}.{ext}" for p in plots
                     for ext in ("png", "svg"))])
    outdir.mkdir(parents=True, exist_ok=True)
    written: dict = {}
    ranked = comparison.ranked.assign(caution=CAUTION_SHORT)
    written["csv"] = write_table(ranked, outdir / "comparison.csv")
    sheets = {
        "verdicts": comparison.verdicts,
        "valuation": comparison.valuation,
        "assumptions": comparison.assumptions,
        "methods": comparison.methods,
        "limits": comparison.limits,
        "flags": comparison.flags,
        "cautions": pd.DataFrame({"caution": [CAUTION]}),
    }
    written["xlsx"] = write_table(comparison.ranked, outdir / "comparison.xlsx", sheets=sheets)
    written["plots"] = [path for p in plots for path in save_figure(p.figure,
                                                                      outdir / "plots" / p.name)]
    specs_text = ", ".join(SPEC_LABELS.get(s, s) for s in comparison.specs)
    sections = comparison_sections(comparison, plots)
    # after the summary, ranking and charts; the detailed tables and the cautions follow
    sections[3:3] = list(extra_sections)
    written["report"] = build_report(
        title, sections,
        outdir / "report.html",
        subtitle=f"{len(comparison.ranked)} lots against {specs_text}"
        + (f", climate class {comparison.climate_class}" if comparison.climate_class else ""),
    )
    return written
