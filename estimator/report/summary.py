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
    and_list,
    candidate_name,
    column_label,
    for_readers,
    format_value,
    model_sources,
    plus_minus,
    pretty_unit,
    spec_name,
)

__all__ = ["decision_summary", "lab_changes", "lot_reasons", "lots_table", "mix_outside_range",
           "mix_undecided_text"]

_BOUND_WORD = {"min": "min", "max": "max"}
#: How a lot's row and the mix name estimates outside their method's range.
OUTSIDE_RANGE_WORDS = ("outside method range (the estimate cannot decide; a laboratory "
                       "test does)")


def _verdict_word(verdict: str) -> str:
    return str(verdict).split(" (")[0].split(";")[0].strip()


#: The verdicts a lot's reasons list, in the order of the slots :func:`lot_reasons` fills.
_REASON_VERDICTS = ("fails", "too close to call", "outside method range")


def lot_reasons(verdicts: pd.DataFrame) -> dict[str, tuple[list[str], list[str], list[str]]]:
    """Per lot: (what fails, what is too close to call, what lies outside its method's
    range), one phrase per property.

    A phrase reads ``oxidation stability 110 °C 6.7 ± 0.4 h (EN 14214 min 8)``; a
    ``probability_meets`` column, where present, adds the chance of meeting the limit
    (an estimate outside its method's range has none).
    """
    out: dict[str, tuple[list[str], list[str], list[str]]] = {}
    if verdicts is None or verdicts.empty:
        return out
    has_p = "probability_meets" in verdicts.columns
    for lot in verdicts["sample"].astype(str).unique():
        out[lot] = ([], [], [])
    words = verdicts["verdict"].astype(str).str.split(" (", n=1, regex=False).str[0]
    words = words.str.split(";", n=1, regex=False).str[0].str.strip()
    mask = words.isin(list(_REASON_VERDICTS)).to_numpy()
    if not mask.any():
        return out
    # the rows of one lot, verdict word and property, in the order they come (one pass;
    # a groupby per lot is quadratic in thousands of lots); positions, not index labels
    groups: dict[tuple[str, str, str], list[dict]] = {}
    records = verdicts[mask].assign(_word=words.to_numpy()[mask]).to_dict("records")
    for row in records:
        groups.setdefault((str(row["sample"]), row["_word"], row["property"]), []).append(row)
    for slot, word in enumerate(_REASON_VERDICTS):
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
        fails, doubts, outside = reasons.get(name, ([], [], []))
        parts = []
        if fails:
            parts.append("fails: " + "; ".join(fails))
        if doubts:
            parts.append("in doubt: " + "; ".join(doubts))
        if outside:
            parts.append(f"{OUTSIDE_RANGE_WORDS}: " + "; ".join(outside))
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


def mix_outside_range(mix) -> dict[str, list[str]]:
    """Per specification key of the mix's verdicts (``target`` for the user's own limits),
    the properties whose estimate for the mix lies outside its method's range."""
    v = getattr(mix, "verdicts", None)
    out: dict[str, list[str]] = {}
    if v is None or v.empty:
        return out
    rows = v[v["verdict"].astype(str) == "outside method range"]
    for spec, prop in zip(rows["spec"].astype(str), rows["property"].astype(str)):
        props = out.setdefault(spec, [])
        if prop not in props:
            props.append(prop)
    return out


def _own_targets(mix, props: Sequence[str] | None = None, *, keep: bool = True) -> list[str]:
    """The user's own limits of the mix in words; with ``props``, only (``keep``) or all
    but (not ``keep``) those on these properties."""
    c = mix.constraints
    if "source" not in c.columns:
        return []
    own = c[c["source"].astype(str) == "user"]
    if props is not None:
        inside = own["property"].astype(str).isin(list(props))
        own = own[inside if keep else ~inside]
    return [for_readers(str(x)) for x in own["constraint"]]


def mix_undecided_text(mix) -> str:
    """Plain text naming the limits of the mix its estimates cannot decide ('' if none):
    which properties lie outside their method's range, and that a lab test decides them.

    Examples
    --------
    >>> import pandas as pd
    >>> from types import SimpleNamespace
    >>> mix = SimpleNamespace(verdicts=pd.DataFrame({
    ...     "spec": ["astm-d6751", "astm-d6751"], "property": ["cetane_number", "cfpp_C"],
    ...     "verdict": ["outside method range", "meets"]}), constraints=pd.DataFrame())
    >>> mix_undecided_text(mix)  # doctest: +NORMALIZE_WHITESPACE
    'The estimate of cetane number for this mix lies outside the range its method was
    fitted on: it cannot decide whether the mix meets ASTM D6751 on cetane number; a
    laboratory test by the standard method decides that limit.'
    """
    out = mix_outside_range(mix)
    if not out:
        return ""
    props = list(dict.fromkeys(p for ps in out.values() for p in ps))
    where = []
    for spec, ps in out.items():
        if spec == "target":
            own = _own_targets(mix, ps) or [column_label(p, unit=False) for p in ps]
            where.append(f"your own target{'s' if len(own) > 1 else ''} ({'; '.join(own)})")
        else:
            names = and_list(column_label(p, unit=False) for p in ps)
            where.append(f"{spec_name(spec)} on {names}")
    one = len(props) == 1
    limits = sum(len(ps) for ps in out.values())
    return (f"The estimate{'' if one else 's'} of "
            f"{and_list(column_label(p, unit=False) for p in props)} for this mix "
            f"{'lies' if one else 'lie'} outside the range {'its' if one else 'their'} method "
            f"was fitted on: {'it' if one else 'they'} cannot decide whether the mix meets "
            f"{' or '.join(where)}; a laboratory test by the standard method decides "
            f"{'that limit' if limits == 1 else 'those limits'}.")


def _held_inside(mix) -> list[str]:
    """The limits the mix is held inside on estimates inside their methods' ranges."""
    out = mix_outside_range(mix)
    c = mix.constraints
    held = []
    spec = getattr(mix, "spec", None)
    if spec:
        undecided = out.get(str(spec), [])
        if not undecided:
            held.append(f"every {spec_name(spec)} limit on the properties estimated")
        elif "property" in c.columns:
            from_spec = c["source"].astype(str) != "user" if "source" in c.columns else \
                pd.Series(True, index=c.index)
            rest = [p for p in dict.fromkeys(c.loc[from_spec, "property"].astype(str))
                    if p not in undecided]
            if rest:
                held.append(f"the {spec_name(spec)} limits on "
                            f"{and_list(column_label(p, unit=False) for p in rest)}")
    own = _own_targets(mix, out.get("target", []), keep=False)
    if own:
        held.append(f"your own targets ({'; '.join(own)})")
    return held


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
    held = _held_inside(mix)
    if held:
        margin = getattr(mix, "margin_bands", 0.0)
        sentence = (f" It is held inside {' and '.join(held)}"
                    + (f", each by at least {margin:g} stated errors" if margin > 0 else "")
                    + ".")
        text += html.escape(sentence)
    undecided = mix_undecided_text(mix)
    if undecided:
        text += " <strong>Outside method range:</strong> " + html.escape(undecided)
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
                          "decision: " + model_sources(from_model) + ".")
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
