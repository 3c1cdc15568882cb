"""The one-page summary that opens a report: the decisions before any detail.

In order: the lots ranked with the reason each fails or is in doubt, the
recommended mix and its cost per tonne of fuel, the highest blend level per
target, what the lab's model changed, and the cautions. Each part is a plain
HTML fragment built from the job results; parts whose job did not run are left
out. The rest of the report follows under collapsible sections in this order.
"""

from __future__ import annotations

import html
from collections.abc import Sequence

import numpy as np
import pandas as pd

from estimator.report.html import Section, bullet_list, paragraph, table_html
from estimator.report.labels import (
    candidate_name,
    column_label,
    for_readers,
    format_value,
    plus_minus,
    pretty_unit,
    spec_name,
)

__all__ = ["decision_summary", "lab_changes", "lot_reasons", "lots_table"]

_BOUND_WORD = {"min": "min", "max": "max"}


def _verdict_word(verdict: str) -> str:
    return str(verdict).split(" (")[0].split(";")[0].strip()


def lot_reasons(verdicts: pd.DataFrame) -> dict[str, tuple[list[str], list[str]]]:
    """Per lot: (what fails, what is too close to call), one phrase per property.

    A phrase reads ``oxidation stability 110 °C 6.7 ± 0.4 h (EN 14214 min 8)``; a
    ``probability_meets`` column, where present, adds the chance of meeting the limit.
    """
    out: dict[str, tuple[list[str], list[str]]] = {}
    if verdicts is None or verdicts.empty:
        return out
    has_p = "probability_meets" in verdicts.columns
    for lot in verdicts["sample"].astype(str).unique():
        out[lot] = ([], [])
    words = verdicts["verdict"].astype(str).str.split(" (", n=1, regex=False).str[0]
    words = words.str.split(";", n=1, regex=False).str[0].str.strip()
    mask = words.isin(["fails", "too close to call"]).to_numpy()
    if not mask.any():
        return out
    # the rows of one lot, verdict word and property, in the order they come (one pass;
    # a groupby per lot is quadratic in thousands of lots); positions, not index labels
    groups: dict[tuple[str, str, str], list[dict]] = {}
    records = verdicts[mask].assign(_word=words.to_numpy()[mask]).to_dict("records")
    for row in records:
        groups.setdefault((str(row["sample"]), row["_word"], row["property"]), []).append(row)
    for word, slot in (("fails", 0), ("too close to call", 1)):
        for (lot, w, prop), group in groups.items():
            if w != word:
                continue
            first = group[0]
            unit = pretty_unit(str(first.get("unit", "")))
            value = plus_minus(first["estimate"], first.get("error", np.nan))
            limits = "; ".join(
                f"{spec_name(g['spec'])} {_BOUND_WORD.get(g['bound'], g['bound'])} "
                f"{float(g['limit']):g}" for g in group)
            phrase = (f"{column_label(prop, unit=False)} {value}"
                      f"{' ' + unit if unit else ''} ({limits})")
            if has_p and pd.notna(first["probability_meets"]):
                phrase += f", {100 * float(first['probability_meets']):.0f} % chance it meets"
            out[lot][slot].append(phrase)
    return out


def lots_table(comparison) -> pd.DataFrame:
    """The ranked lots for the summary: rank, lot, verdict, cost and the reasons."""
    r = comparison.ranked
    reasons = lot_reasons(comparison.verdicts)
    lot = r["sample"].astype(str)
    if "feedstock" in r.columns:
        lot = lot + " (" + r["feedstock"].astype(str) + ")"
    why = []
    for name in r["sample"].astype(str):
        fails, doubts = reasons.get(name, ([], []))
        parts = []
        if fails:
            parts.append("fails: " + "; ".join(fails))
        if doubts:
            parts.append("in doubt: " + "; ".join(doubts))
        why.append(". ".join(parts) if parts else "meets every limit checked")
    if "fixable_failures" in r.columns:
        why = [w + (f". Fixable: {fix}" if isinstance(fix, str) and fix else "")
               for w, fix in zip(why, r["fixable_failures"])]
    verdict = r["decision"] if "decision" in r.columns else r["overall"]
    cost_label = ("cost [per t fuel]" if "feedstock_cost_per_t_fuel" in r.columns
                  else "feedstock cost [per t fuel]")
    table = pd.DataFrame({
        "rank": r["rank"].to_numpy(),
        "lot": lot.to_numpy(),
        "verdict": verdict.astype(str).to_numpy(),
        cost_label: r["cost_per_t_fuel"].to_numpy(dtype=float),
        "why it fails or is in doubt": why,
    })
    return table


def lab_changes(fits: Sequence, long: pd.DataFrame, comparison) -> pd.DataFrame:
    """One row per refitted property: the lab's choice, its held-out error, what moved.

    ``long`` holds the lots estimated with the lab's models (methods ``fit:...``);
    a lot is named under *crosses a limit* when its lab estimate lies on the other
    side of a specification limit than the published estimate.
    """
    rows = []
    ranked = comparison.ranked.set_index("sample")
    if getattr(comparison, "model_properties", None):
        # the ranking already holds the lab's values: compare with the published ones
        from estimator.workflows import predict

        ranked = predict(comparison.profile).wide.set_index("sample")
    lim = comparison.limits
    fitted = long[long["method"].astype(str).str.startswith("fit:")]
    for f in fits:
        table = f.score_table()
        chosen = table[table["chosen"]].iloc[0]
        published = table[table["kind"] == "published"]
        best_pub = published.iloc[0] if len(published) else None
        unit = pretty_unit(f.unit)
        u = f" {unit}" if unit else ""
        err = f"{format_value(chosen['cv_rmse'], 2)}{u}"
        if best_pub is not None:
            err += f" (best published method as is: {format_value(best_pub['cv_rmse'], 2)}{u})"
        crossed, moved = [], []
        places = _decimals(float(chosen["cv_rmse"]))
        here = fitted[fitted["property"] == f.property]
        limits = lim[lim["property"] == f.property]
        for lot, new in zip(here["sample"].astype(str), here["value"].to_numpy(dtype=float)):
            if lot not in ranked.index or f.property not in ranked.columns:
                continue
            old = float(ranked.loc[lot, f.property])
            if not (np.isfinite(old) and np.isfinite(new)):
                continue
            moved.append((abs(new - old), lot))
            for spec, bound, value in zip(limits["spec"], limits["bound"], limits["limit"]):
                ok_old = old >= value if bound == "min" else old <= value
                ok_new = new >= value if bound == "min" else new <= value
                if ok_old != ok_new:
                    crossed.append(f"{lot} {old:.{places}f} → {new:.{places}f}"
                                   f" ({spec_name(spec)} {bound} {float(value):g})")
                    break
        biggest = max(moved) if moved else None
        rows.append({
            "property": column_label(f.property, unit=False),
            "lab's model": candidate_name(str(chosen["candidate"])),
            "held-out error (RMSE)": err,
            "largest change on a lot": (f"{biggest[0]:.{places}f}{u} ({biggest[1]})"
                                        if biggest else "–"),
            "crosses a limit": "; ".join(crossed) if crossed else "none",
        })
    return pd.DataFrame(rows)


def _decimals(error: float) -> int:
    """Decimals a number shows beside an error of this size (one ± formatter's rule)."""
    text = plus_minus(0.0, error)
    return len(text.split(" ± ")[-1].partition(".")[2]) if np.isfinite(error) else 1


def _mix_html(mix) -> str:
    if not mix.feasible:
        return paragraph(for_readers(mix.message) + ".")
    lots = mix.lots
    share = "share_mass_pct" if "share_mass_pct" in lots.columns else None
    parts = []
    if share is not None:
        used = lots[lots[share] > 0.05].sort_values(share, ascending=False)
        parts = [f"{lot} {format_value(s, 3)} %" for lot, s in zip(used["lot"], used[share])]
    binding = []
    c = mix.constraints
    if "binding" in c.columns:
        binding = [for_readers(str(x)) for x in c.loc[c["binding"].astype(bool), "constraint"]]
    text = (f"<p><strong>Cost {mix.cost_per_t_fuel:,.1f} per t of fuel</strong> "
            f"for the mix {html.escape(', '.join(parts))} (shares of the fuel's mass).")
    held = []
    if getattr(mix, "spec", None):
        held.append(f"every limit of {spec_name(mix.spec)}")
    if "source" in c.columns:
        own = [for_readers(str(x)) for x in c.loc[c["source"].astype(str) == "user",
                                                  "constraint"]]
        if own:
            held.append(f"your own targets ({'; '.join(own)})")
    if held:
        margin = getattr(mix, "margin_bands", 0.0)
        sentence = (f" It is held inside {' and '.join(held)}"
                    + (f", each by at least {margin:g} stated errors" if margin > 0 else "")
                    + ".")
        text += html.escape(sentence)
    if binding:
        text += f" Limits that set the mix: {html.escape('; '.join(binding))}."
    return text + "</p>"


def _blend_html(blend) -> str:
    from estimator.report.blend_sections import levels_matrix

    highest = blend.get("highest")
    if highest is None or not len(highest):
        return paragraph("No blend target was set.")
    summary = blend.get("summary")
    if summary is not None and len(summary):
        # the blender's table: each cell says why when a level is none or B0
        matrix = summary.rename(columns=for_readers).rename(columns={"sample": "lot"})
    else:
        matrix = levels_matrix(highest).rename(columns={"sample": "lot"})
    return paragraph(
        f"Into {blend['diesel'].name}: the highest % FAME by volume meeting each target; "
        "in brackets, the level with the estimate's error taken against the blend (the "
        "safe level). A specification's level is capped at the FAME content it allows."
    ) + table_html(matrix)


def _cautions(comparison) -> list[str]:
    from estimator.cautions import CAUTION_SHORT

    items = [CAUTION_SHORT]
    v = comparison.verdicts
    os_fails = v[(v["property"] == "oxidation_stability_110C_h")
                 & (v["verdict"].astype(str).map(_verdict_word) == "fails")]
    if len(os_fails):
        lots = ", ".join(dict.fromkeys(os_fails["sample"].astype(str)))
        items.append(f"Oxidation stability ({lots}) is estimated for the esters alone; "
                     "producers commonly dose an antioxidant (common practice), and only the "
                     "laboratory test shows whether a dosed fuel passes.")
    flags = comparison.flags
    if len(flags):
        lots = ", ".join(dict.fromkeys(flags["sample"].astype(str)))
        items.append(f"Some estimates lie outside the range their method was fitted on "
                     f"({lots}); they are shown, not clamped, and deserve extra doubt.")
    cls = comparison.climate_class
    if not cls:
        items.append("No climate class chosen: CFPP is estimated but not judged.")
    return items


def decision_summary(comparison, *, mix=None, blend=None, fits: Sequence = (),
                     lab_long: pd.DataFrame | None = None) -> Section:
    """The opening section: every decision of the report on one page."""
    r = comparison.ranked
    counts = r["overall"].astype(str).value_counts()
    specs = " and ".join(spec_name(s) for s in comparison.specs)
    cls = f", climate class {comparison.climate_class}" if comparison.climate_class else ""
    outcome = ", ".join(f"{int(counts[k])} {k}" for k in ("meets", "too close to call",
                                                           "fails", "not estimated")
                        if counts.get(k, 0))
    order = ("Lots that meet every limit come first, then those too close to call (the "
             "chance of meeting a limit lies between 10 and 90 %, or an estimate lies outside "
             "its method's range), then those whose only failures a treatment fixes, then "
             "those with a failure no treatment fixes; closer to the limits, then cheaper "
             "fuel, first within each group. Cost per tonne of fuel includes processing.")
    body = (f"<h3>Lots, best first</h3>"
            f"{paragraph(f'{len(r)} lots against {specs}{cls}: {outcome}. {order}')}")
    from_model = getattr(comparison, "model_properties", None) or {}
    if from_model:
        body += paragraph("From the lab's model, replacing the published estimates in every "
                          "decision: " + "; ".join(
                              f"{column_label(p, unit=False)} ({for_readers(how)})"
                              for p, how in from_model.items()) + ".")
    body += table_html(lots_table(comparison), verdict_columns=["verdict"],
                       formats={"feedstock cost [per t fuel]": ",.0f",
                                "cost [per t fuel]": ",.0f"})
    if mix is not None:
        body += "<h3>Least-cost mix</h3>" + _mix_html(mix)
    if blend is not None:
        body += "<h3>Highest blend level per target</h3>" + _blend_html(blend)
    if fits and lab_long is not None:
        body += ("<h3>What the lab's model changed</h3>" + paragraph(
            ("These lab models replace the published estimates in the verdicts, ranking, "
             "blend and mix above" if getattr(comparison, "model_properties", None) else
             "The verdicts above use the published methods") + "; the lab's own models "
            "are scored on samples held out of each fit, and compared here with the "
            "published estimates.")
            + table_html(lab_changes(fits, lab_long, comparison)))
    body += "<h3>Cautions</h3>" + bullet_list(_cautions(comparison))
    return Section("Summary", body, id="summary")
