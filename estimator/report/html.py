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
    #: Sections sharing a group are shown together under one collapsible heading;
    #: a section without a group is shown open (the summary).
    group: str = field(default="")

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
    from estimator.report.labels import format_value

    if value is None:
        return ""
    if isinstance(value, (bool, np.bool_)):
        return "yes" if value else "no"
    if isinstance(value, (float, np.floating)):
        if math.isnan(value):
            return "–"
        if abs(value) >= 10 ** digits:
            return f"{value:,.0f}"
        return format_value(float(value), digits)
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


def figure_html(fig, *, alt: str, caption: str | None = None, dpi: int | None = None) -> str:
    """A figure embedded as a base64 PNG ``<img>`` with alt text and caption.

    The PNG is the one :func:`estimator.report.plots.save_figure` writes (drawn once).
    """
    from estimator.report.plots import PNG_DPI, figure_png_base64

    data = figure_png_base64(fig, dpi=dpi or PNG_DPI)
    cap = f"<figcaption>{html.escape(caption)}</figcaption>" if caption else ""
    return (f'<figure><img src="data:image/png;base64,{data}" alt="{html.escape(alt)}">'
            f"{cap}</figure>")


_CSS = """
body{font-family:system-ui,-apple-system,"Segoe UI",Roboto,Arial,sans-serif;margin:0;
color:#222;line-height:1.45;background:#fff}
main{max-width:1180px;margin:0 auto;padding:1.2rem 1.5rem 3rem}
h1{font-size:1.6rem;margin:.2rem 0}h2{font-size:1.25rem;margin:1.6rem 0 .5rem;
border-bottom:2px solid #ddd;padding-bottom:.2rem}h3{font-size:1.05rem;margin:1.2rem 0 .4rem}
.subtitle{color:#555;margin-top:0}
.caution{border-left:6px solid #CC6677;background:#fbeff1;padding:.5rem 1rem;margin:.8rem 0}
.scroll{overflow-x:auto;max-width:100%;margin:.5rem 0}
table{border-collapse:collapse;font-size:.86rem}
caption{text-align:left;font-weight:600;padding:.3rem 0}
th,td{border:1px solid #ccc;padding:.22rem .45rem;vertical-align:top;text-align:left;
overflow-wrap:break-word}
th{background:#f2f2f2}
td.num{text-align:right;font-variant-numeric:tabular-nums}td.nw{white-space:nowrap}
td.v-meets{background:#e3f1e6}td.v-too-close-to-call{background:#f7f1d9}
td.v-fails{background:#f6e0e4}td.v-not-estimated{background:#eee}
figure{margin:1rem 0;break-inside:avoid}figure img{max-width:100%;height:auto;
border:1px solid #eee}
figcaption{font-size:.9rem;color:#444;margin-top:.3rem}
details{border-top:1px solid #ddd;margin:0}details>summary{cursor:pointer;padding:.55rem 0;
font-size:1.15rem;font-weight:600}details>summary span{font-weight:400;color:#666;
font-size:.9rem}details[open]>summary{border-bottom:2px solid #ddd;margin-bottom:.4rem}
.lead h2{margin-top:.8rem}.lead h3{margin:.9rem 0 .3rem}.lead ul{margin:.3rem 0;
padding-left:1.3rem}.lead p{margin:.3rem 0}
.more{color:#555;font-size:.9rem;margin-top:1.4rem}
footer{color:#555;font-size:.85rem;margin-top:2rem}
@page{size:A4;margin:10mm 11mm}
@media print{body{font-size:8.5pt;line-height:1.28}main{max-width:none;padding:0}
h1{font-size:12pt}.subtitle{margin:0}h2{font-size:10.5pt;margin:.3rem 0 .15rem}
.lead h3{font-size:9pt;margin:.35rem 0 .1rem}.lead p{margin:.1rem 0}.lead ul{margin:.1rem 0}
table{font-size:7.4pt}th,td{padding:.02rem .25rem;line-height:1.2}.scroll{margin:.2rem 0;
overflow:visible}.caution{padding:.2rem .5rem;margin:.3rem 0;font-size:7.5pt}
.lead{break-after:page}.more,footer .caution{display:none}
details>summary{font-size:10pt;padding:.2rem 0}h2,h3{break-after:avoid}
td.v-meets,td.v-too-close-to-call,td.v-fails{print-color-adjust:exact;
-webkit-print-color-adjust:exact}}
"""


def render_report(
    title: str, sections: Sequence[Section], *, subtitle: str = "", caution: str = CAUTION
) -> str:
    """The whole report page as a string (see :func:`build_report`).

    Sections without a group are shown open at the top (the one-page summary); the
    others follow under one collapsible ``<details>`` per group (or per section,
    when it has no group of its own but comes after a grouped one), in the order
    given. No script: the page works and prints without one.
    """
    seen: set[str] = set()
    lead, blocks = [], []  # blocks: [group title, [section html]]
    for section in sections:
        anchor = section.anchor
        while anchor in seen:
            anchor += "-x"
        seen.add(anchor)
        if not section.group and not blocks:
            lead.append(f'<section id="{anchor}"><h2>{html.escape(section.title)}</h2>'
                        f"{section.html}</section>")
            continue
        group = section.group or section.title
        inner = (f'<section id="{anchor}"><h3>{html.escape(section.title)}</h3>'
                 f"{section.html}</section>") if section.group else \
            f'<section id="{anchor}">{section.html}</section>'
        if blocks and blocks[-1][0] == group and section.group:
            blocks[-1][1].append((section.title, inner))
        else:
            blocks.append((group, [(section.title, inner)]))
    parts = []
    for group, items in blocks:
        names = [t for t, _ in items if t != group]
        hint = f' <span>({html.escape(", ".join(names))})</span>' if len(names) > 1 else ""
        gid = re.sub(r"[^a-z0-9]+", "-", group.lower()).strip("-") or "part"
        while gid in seen:
            gid += "-x"
        seen.add(gid)
        parts.append(f'<details id="{gid}"><summary>{html.escape(group)}{hint}</summary>'
                     f"{''.join(h for _, h in items)}</details>")
    sub = f'<p class="subtitle">{html.escape(subtitle)}</p>' if subtitle else ""
    warn = f'<div class="caution"><strong>Caution.</strong> {html.escape(caution)}</div>'
    more = ('<p class="more">The details follow in the order of the decisions above; '
            "open a heading to read it.</p>") if parts else ""
    return (
        "<!DOCTYPE html>\n"
        f'<html lang="en"><head><meta charset="utf-8">'
        f'<meta name="viewport" content="width=device-width, initial-scale=1">'
        f"<title>{html.escape(title)}</title><style>{_CSS}</style></head>"
        f"<body><main><header><h1>{html.escape(title)}</h1>{sub}</header>{warn}"
        f'<div class="lead">{"".join(lead)}</div>{more}'
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
    from estimator.report.labels import spec_name

    return spec_name(spec)


def plus_minus(value: float, error: float) -> str:
    """``55.1 ± 3.3``: see :func:`estimator.report.labels.plus_minus` (the one formatter)."""
    from estimator.report.labels import plus_minus as pm

    return pm(value, error, missing="not estimated")


def summary_section(comparison) -> Section:
    """The decisions first: lots ranked with the reason each fails, and the cautions."""
    from estimator.report.summary import decision_summary

    return decision_summary(comparison)


_LOTS = "Lots: ranking, verdicts and costs"
_REFERENCE = "Methods, limits and sources"


def _readable_frame(frame: pd.DataFrame) -> pd.DataFrame:
    """Columns as readable labels, text cells in words (for columns others add)."""
    from estimator.report.labels import column_label, readable_cells

    out = frame.copy()
    for col in out.columns:
        out[col] = readable_cells(out[col])
    out.columns = [column_label(c) for c in out.columns]
    return out


_RANKING_KNOWN = {"rank", "sample", "supplier", "feedstock", "overall", "notes",
                  "fuel_yield_t_per_t_oil", "price_per_t", "cost_per_t_fuel", "available_t",
                  "decision", "fixable_failures", "unfixable_failures",
                  "feedstock_cost_per_t_fuel"}


def ranking_section(comparison) -> Section:
    """The ranked lots: verdict summaries, yield and cost; then key properties (± error)."""
    from estimator.comparison import KEY_PROPERTIES
    from estimator.report.labels import column_label, for_readers, readable_cells

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
    # columns other jobs add to the ranking (e.g. fixable failures), shown as they come
    shown = (*KEY_PROPERTIES, "ester_content_wt_pct")
    props = set(shown) | {f"{p}_error" for p in shown}
    for col in r.columns:
        if col not in _RANKING_KNOWN and col not in props and not col.startswith("verdict_"):
            out[column_label(col)] = readable_cells(r[col])
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
    table = pd.DataFrame({"rank": r["rank"], "lot": r["sample"]})
    for prop in shown:  # the ester content only when measured
        if prop in r.columns:
            table[column_label(prop)] = [
                plus_minus(v, e) for v, e in zip(r[prop], r[f"{prop}_error"])]
    body += "<h3>Key properties of each lot's fuel (estimate ± stated error)</h3>"
    body += table_html(table)
    notes = [f"{lot}: {for_readers(n)}" for lot, n in zip(r["sample"], r["notes"]) if n]
    if notes:
        body += "<h3>Notes on the lots</h3>" + bullet_list(notes)
    return Section("Ranking", body, group=_LOTS)


def figures_section(plots: Sequence) -> Section:
    """Every figure (``Plot`` objects from :func:`estimator.report.plots.comparison_figures`)."""
    body = "".join(figure_html(p.figure, alt=p.caption, caption=p.caption) for p in plots)
    return Section("Charts", body, group=_LOTS)


_VERDICT_KNOWN = {"sample", "spec", "property", "estimate", "error", "limit", "verdict",
                  "bound", "unit", "method", "in_domain", "climate_class", "edition", "mark"}


def verdicts_section(comparison) -> Section:
    """Every estimate against every limit, one row each."""
    from estimator.report.labels import column_label, method_name, pretty_unit

    v = comparison.verdicts.copy()
    rank = {lot: i for i, lot in enumerate(comparison.ranked["sample"])}
    v = v.assign(_r=v["sample"].map(rank)).sort_values("_r", kind="stable")
    units = v["unit"].astype(str).map(pretty_unit)
    table = pd.DataFrame({
        "lot": v["sample"].astype(str),
        "specification": v["spec"].map(_spec_label),
        "property": v["property"].map(lambda p: column_label(p, unit=False)),
        "limit": [f"{b} {lim:g} {u}".strip() for b, lim, u in
                  zip(v["bound"], v["limit"], units)],
        "estimate": [f"{plus_minus(e, s)} {u}".strip() for e, s, u in
                     zip(v["estimate"], v["error"], units)],
        "verdict": v["verdict"].astype(str),
        "method": v["method"].map(method_name),
        "inside fitted domain": v["in_domain"].map({True: "yes", False: "NO"}),
    })
    for col in v.columns:
        if col in _VERDICT_KNOWN or col.startswith("_"):
            continue
        values = v[col]
        if col == "probability_meets":
            values = values.map(lambda p: "–" if pd.isna(p) else f"{100 * float(p):.0f} %")
        table[column_label(col)] = values.to_numpy()
    return Section("Verdict details", paragraph("Lots in ranked order.") + table_html(
        table, verdict_columns=["verdict"]), group=_LOTS)


def valuation_section(comparison) -> Section:
    """Yield, by-products, reagents and cost of each lot."""
    from estimator.report.labels import column_label

    val = comparison.valuation.set_index("sample")
    lots = [lot for lot in comparison.ranked["sample"] if lot in val.index]
    table = val.loc[lots].drop(columns=[c for c in ("valuation_note", "pretreat")
                                        if c in val.columns]).T
    table.index = [column_label(c) for c in table.index]
    table.index.name = "quantity (per tonne of oil as offered)"
    table = table.reset_index()
    how = ("acid pretreatment: FFA esterified to fuel" if comparison.pretreat == "acid"
           else "base catalysis: FFA neutralised to soap")
    return Section("Lot valuation", paragraph(
        f"Theoretical yields (complete conversion), {how}; methanol : oil molar ratio "
        f"{comparison.methanol_ratio:g} : 1. Lots in ranked order; the notes on each lot "
        "are under 'Ranking'.") + table_html(table), group=_LOTS)


def assumptions_section(comparison) -> Section:
    """Every assumption of the valuation with its value and basis."""
    return Section("Assumptions", table_html(_readable_frame(comparison.assumptions)),
                   group=_LOTS)


def _stated_error(text: str) -> str:
    kind, _, value = str(text).partition(" ")
    words = {"aad_pct": ("average absolute deviation", " %"), "rmse": ("RMSE", ""),
             "r2": ("R²", ""), "sd": ("standard deviation", "")}
    if kind in words and value:
        name, unit = words[kind]
        return f"{name} {value}{unit}"
    return str(text)


def methods_section(comparison) -> Section:
    """Methods and citations used for the estimates."""
    from estimator.report.labels import column_label, for_readers, mark_text, method_name

    m = comparison.methods
    table = pd.DataFrame({
        "property": m["property"].map(lambda p: column_label(p, unit=False)),
        "method": m["method"].map(method_name),
        "stated error": m["stated_error"].map(_stated_error),
        "how sure": m["provenance"].map(mark_text),
        "citation, fitted domain and note": [
            for_readers(f"{c}. Fitted domain: {d}. {n}") for c, d, n in
            zip(m["citation"], m["fitted_domain"], m["note"])],
    })
    return Section("Methods and citations", paragraph(
        "The default method of each property. The stated error is the published one where "
        "there is one; otherwise the estimates use the spread of the property's methods or "
        "the fallback named in the note.") + table_html(table), group=_REFERENCE)


def flags_section(comparison) -> Section:
    """Estimates outside their method's fitted domain."""
    from estimator.report.labels import column_label, for_readers, method_name

    flags = comparison.flags
    if flags.empty:
        return Section("Out-of-domain flags", paragraph(
            "Every estimate lies inside its method's fitted domain."), group=_REFERENCE)
    table = pd.DataFrame({
        "lot": flags["sample"].astype(str),
        "property": flags["property"].map(lambda p: column_label(p, unit=False)),
        "method": flags["method"].map(method_name),
        "why": flags["reason"].map(for_readers),
    })
    return Section("Out-of-domain flags", paragraph(
        "These estimates lie outside the composition range their method was fitted on; "
        "they are reported, not clamped, and deserve extra doubt.") + table_html(table),
        group=_REFERENCE)


def limits_section(comparison) -> Section:
    """The specification limits applied, with edition, test method and how sure we are."""
    from estimator.report.labels import column_label, for_readers, mark_text, pretty_unit

    lim = comparison.limits
    table = pd.DataFrame({
        "specification": lim["spec"].map(_spec_label),
        "property": lim["property"].map(lambda p: column_label(p, unit=False)),
        "climate class": lim["climate_class"].fillna(""),
        "limit": [f"{b} {v:g} {pretty_unit(str(u))}".strip() for b, v, u in
                  zip(lim["bound"], lim["limit"], lim["unit"])],
        "how sure": lim["mark"].map(lambda m: mark_text(m, source="standard")),
        "edition, test method and note": [
            for_readers(f"{e}; {t}; {s}") for e, t, s in
            zip(lim["edition"], lim["test_method"], lim["source"])],
    })
    return Section("Specification limits", paragraph(
        "Limits as applied. 'Recalled, not yet checked against the standard' marks a "
        "number taken from memory of the standard: check it against your copy before "
        "relying on it.") + table_html(table), group=_REFERENCE)


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
    return Section("Cautions", bullet_list(items), group="Cautions")


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
    summary: Section | None = None,
    svg: bool = False,
) -> dict:
    """Write the whole comparison into ``outdir``; return ``{what: path or [paths]}``.

    ``comparison.csv`` (ranked table), ``comparison.xlsx`` (ranked table plus sheets
    verdicts, valuation, assumptions, methods, limits, flags, cautions), each figure as
    ``plots/<name>.png`` (and ``.svg`` with ``svg=True``), and the self-contained
    ``report.html``: ``summary`` (default: the lots' decisions) first, then the lots'
    details, ``extra_sections`` (e.g. mix, blend or refit sections), the methods and
    limits, and the cautions. Each figure is drawn once; the report embeds the PNG
    written to ``plots/``.
    """
    from estimator.cautions import CAUTION_SHORT
    from estimator.comparison import SPEC_LABELS
    from estimator.files import check_outputs, write_table
    from estimator.report.plots import comparison_figures, prerender, save_figure

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
    prerender([p.figure for p in plots])
    written["plots"] = [path for p in plots for path in save_figure(
        p.figure, outdir / "plots" / p.name, svg=svg)]
    specs_text = ", ".join(SPEC_LABELS.get(s, s) for s in comparison.specs)
    sections = comparison_sections(comparison, plots)
    if summary is not None:
        sections[0] = summary
    # after the lots' details (ranking to assumptions); methods, limits and cautions follow
    sections[6:6] = list(extra_sections)
    written["report"] = build_report(
        title, sections,
        outdir / "report.html",
        subtitle=f"{len(comparison.ranked)} lots against {specs_text}"
        + (f", climate class {comparison.climate_class}" if comparison.climate_class else ""),
    )
    return written
