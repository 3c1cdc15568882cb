"""HTML report sections of the blend and mix jobs, and one-call report writers.

Built with :mod:`estimator.report.html` (sections, tables, embedded figures); the
page carries the caution at the top and bottom, and each job's summary section
repeats the short caution beside its numbers.
"""

from __future__ import annotations

from collections.abc import Sequence
from pathlib import Path

import numpy as np
import pandas as pd

from estimator.report.html import Section, bullet_list, figure_html, paragraph, table_html
from estimator.report.labels import (
    column_label,
    for_readers,
    plus_minus,
    readable_cells,
    spec_name,
)

__all__ = [
    "blend_sections",
    "levels_matrix",
    "mix_sections",
    "write_blend_report",
    "write_mix_report",
]

_SHOWN = ("density_15C_kg_m3", "kin_viscosity_40C_mm2_s", "cetane_number", "hhv_MJ_kg",
          "lhv_MJ_kg", "lhv_MJ_L", "cloud_point_C", "cfpp_C")


def blend_sections(
    wide: pd.DataFrame,
    highest: pd.DataFrame | None,
    diesel,
    *,
    figure=None,
    levels: Sequence[float] | None = None,
) -> list[Section]:
    """Sections for a blend job: summary, curves, table, highest levels, methods.

    Parameters
    ----------
    wide : DataFrame
        From :func:`estimator.blending.blend_wide`.
    highest : DataFrame or None
        From :func:`estimator.blend_targets.highest_levels`.
    diesel : Diesel
        The diesel blended into.
    figure : matplotlib Figure, optional
        Usually :func:`estimator.report.blend_plots.blend_curves`.
    levels : sequence of float, optional
        Levels shown in the table (default: every level of ``wide``).
    """
    from estimator.blending import BLEND_METHODS, RULE_ERRORS
    from estimator.cautions import CAUTION_SHORT
    from estimator.report.labels import RULE_WORDS

    sections = []
    intro = paragraph(
        f"FAME blended into {diesel.name} ({diesel.origin}). B = % FAME by volume. "
        "Values are estimates with their stated errors. Each cell gives the highest blend "
        "level meeting the target (the root of the continuous blend curve) and, in "
        "brackets, the level with the stated error taken against the blend; a "
        "specification's level is capped at the FAME content it allows. EN 590 admits only "
        "FAME that meets EN 14214, ASTM D7467 only FAME that meets ASTM D6751: a FAME that "
        "fails its standard, or cannot be judged on it, gets no level there, and words beside "
        "a level say what it still depends on. " + CAUTION_SHORT
    )
    body = intro
    if highest is not None and len(highest):
        body += table_html(levels_matrix(highest))
    sections.append(Section("Blend summary", body))
    if figure is not None:
        sections.append(Section("Blend curves", figure_html(
            figure, alt="Blend properties against blend level with targets and limits",
            caption="Each property against blend level; targets solid black, specification "
                    "limits dashed (maximum) or dotted (minimum), bold over the FAME content "
                    "the specification allows.")))
    shown = wide if levels is None else wide[wide["level_pct_v"].isin(list(levels))]
    table = pd.DataFrame({"sample": shown["sample"],
                          "level": [f"B{v:g}" for v in shown["level_pct_v"]]})
    for prop in _SHOWN:
        if prop in shown.columns:
            table[column_label(prop)] = [plus_minus(v, e) for v, e in
                                         zip(shown[prop], shown[f"{prop}_error"])]
    sections.append(Section("Blend table", paragraph(
        "Each value to the precision its error supports.") + table_html(table)))
    if highest is not None:
        h = highest[["sample", "group", "target", "highest_level_pct_v",
                     "highest_level_with_error_pct_v", "how"]].copy()
        h["group"] = h["group"].map(spec_name)
        h["target"] = h["target"].map(for_readers)
        h["how"] = h["how"].map(for_readers)
        h = h.rename(columns={
            "group": "from",
            "highest_level_pct_v": "highest B [% v/v]",
            "highest_level_with_error_pct_v": "with the error against it [% v/v]",
        })
        sections.append(Section("Highest blend levels", table_html(h, digits=3)))
    rows = []
    for prop, methods in BLEND_METHODS.items():
        kind, size = RULE_ERRORS[prop]
        err = f"{100 * size:g} %" if kind == "relative" else f"{size:g}"
        for i, m in enumerate(methods):
            rows.append({"property": column_label(prop, unit=False),
                         "mixing rule": RULE_WORDS.get(m, for_readers(m.replace("_", " "))),
                         "default": i == 0, "rule error at B50": err})
    sections.append(Section("Blend methods", paragraph(
        "Component errors (the FAME's from its estimate, the diesel's from its description) "
        "are propagated through each rule and added in quadrature to a mixing-rule error "
        "that is zero at B0 and B100 and largest at B50. The default cloud point is the "
        "higher of the saturated esters' ideal-solubility liquidus and the linear rule by "
        "volume: ideal solubility alone would credit the FAME with diluting the diesel's "
        "wax, a cold-flow gain real blends do not show. CFPP is linear by volume, an "
        "approximation with a wide error."
    ) + table_html(pd.DataFrame(rows))))
    return sections


def levels_matrix(highest: pd.DataFrame) -> pd.DataFrame:
    """Samples x targets: 'B12.3 (B8.1)' per cell, with the words that go with it: why a
    level is none or B0, why a specification gives none for a FAME that fails (or cannot
    be judged on) its FAME standard, what a level given on a condition depends on."""
    from estimator.blend_targets import summary_table

    table = summary_table(highest)
    table.columns = [for_readers(c) for c in table.columns]
    for col in table.columns[1:]:
        table[col] = [str(v).replace("<=", "≤").replace(">=", "≥") for v in table[col]]
    return table


def mix_sections(result, *, figure=None) -> list[Section]:
    """Sections for a least-cost mix: summary, shares, limits, verdicts, figure, diagnosis."""
    from estimator.cautions import CAUTION_SHORT
    from estimator.sourcing import assumptions

    sections = []
    if result.feasible:
        head = (f"Least-cost mix: {result.cost_per_t_fuel:,.1f} per t of fuel (oil, methanol, "
                "catalyst, pretreatment, less the glycerol credit). Shares are of the fuel's "
                "mass.")
        margin = float(getattr(result, "margin_bands", 0.0))
        head += (f" Every limit was moved {margin:g} stated error(s) inside (margin), so that "
                 "the mix's own verdict is not 'too close to call'." if margin > 0 else
                 " No margin was asked for: the mix may sit on its limits.")
        from estimator.report.summary import mix_undecided_text

        head += f" {mix_undecided_text(result)}".rstrip()
    else:
        head = f"{for_readers(result.message)}."
    from_model = getattr(result, "model_properties", None) or {}
    if from_model:
        head += " From the lab's model, replacing the published estimates: " + "; ".join(
            f"{column_label(p, unit=False)} ({for_readers(how)})"
            for p, how in from_model.items()) + "."
    sections.append(Section("Mix summary", paragraph(head + " " + CAUTION_SHORT)
                            + (bullet_list(for_readers(n) for n in result.notes)
                               if result.notes else "")))
    if figure is not None:
        sections.append(Section("Mix figure", figure_html(
            figure, alt="Shares of each lot and headroom to each limit",
            caption="Left: share of the fuel's mass per lot. Right: headroom to each limit "
                    "in stated errors; binding limits hatched, missed limits cross-hatched.")))
    cols = [c for c in ("lot", "share_mass_pct", "oil_share_mass_pct", "cost_per_t_fuel",
                        "fuel_t", "oil_t", "available_t", "valuation_note")
            if c in result.lots.columns]
    lots = result.lots[cols].copy()
    if "valuation_note" in lots.columns:
        lots["valuation_note"] = lots["valuation_note"].map(for_readers)
    lots.columns = ["note" if c == "valuation_note" else column_label(c) for c in cols]
    sections.append(Section("Lots and shares", table_html(lots)))
    c = result.constraints
    limits = pd.DataFrame({"limit": c["constraint"].map(for_readers)})
    for col, name in (("value", "value of the mix"), ("margin", "margin to the limit"),
                      ("binding", "sets the mix"), ("meets", "met by the estimate")):
        if col in c.columns:
            limits[name] = c[col].to_numpy()
    extra = [k for k in c.columns if k not in {"constraint", "property", "kind", "limit",
                                               "value", "margin", "binding", "meets",
                                               "linear_form"}]
    for k in extra:
        limits[column_label(k)] = readable_cells(c[k]).to_numpy()
    sections.append(Section("Limits on the mixed fuel", table_html(limits)))
    if result.verdicts is not None:
        v = result.verdicts
        table = pd.DataFrame({
            "specification": v["spec"].map(spec_name),
            "property": v["property"].map(lambda p: column_label(p, unit=False)),
            "estimate": [plus_minus(e, s) for e, s in zip(v["estimate"], v["error"])],
            "limit": v["limit"],
            "verdict": v["verdict"],
        })
        sections.append(Section("Verdicts with the stated errors",
                                table_html(table, verdict_columns=["verdict"])))
    if result.diagnosis is not None:
        d = result.diagnosis.copy()
        for k in d.columns:
            d[k] = readable_cells(d[k])
        d.columns = [column_label(k) for k in d.columns]
        sections.append(Section("Why no mix meets the limits", table_html(d)))
    comp = result.composition[result.composition > 0]
    sections.append(Section("Profile of the mixed fuel", table_html(pd.DataFrame({
        "species": comp.index, "wt %": np.round(comp.to_numpy(), 3)}))))
    a = assumptions(costs=getattr(result, "costs", None))
    sections.append(Section("Valuation assumptions", table_html(a.assign(
        basis=a["basis"].map(for_readers)))))
    return sections


def write_blend_report(path: str | Path, wide, highest, diesel, *, figure=None,
                       levels=None) -> Path:
    """Write a self-contained HTML report of a blend job."""
    from estimator.report.html import build_report

    return build_report("FAME blended into diesel", blend_sections(
        wide, highest, diesel, figure=figure, levels=levels), path,
        subtitle=f"diesel: {diesel.name}")


def write_mix_report(path: str | Path, result, *, figure=None) -> Path:
    """Write a self-contained HTML report of a least-cost mix."""
    from estimator.report.html import build_report

    return build_report("Least-cost mix of lots", mix_sections(result, figure=figure), path)
