"""The ``check`` and ``compare`` commands: specification verdicts and the buyer's comparison.

Plain click commands; ``estimator.cli`` registers them in the ``fame-estimator``
group. They parse options, call :mod:`estimator.comparison`, format and write.
Run on their own (as the tests do) they report an
:class:`~estimator.errors.EstimatorError` as one stderr line, as the group does.
"""

from __future__ import annotations

from pathlib import Path

import click

from estimator.cliutil import (
    CONTEXT,
    ReportingCommand,
    emit,
    input_options,
    load_inputs,
    peak_options,
)

__all__ = ["STRICT_EXIT_CODE", "check", "compare", "model_option", "quiet_option"]

#: Exit status of ``check --strict`` when any verdict is ``fails``.
STRICT_EXIT_CODE = 3
DEFAULT_SPECS = ("en14214", "astm-d6751")


def _spec_options(func):
    func = click.option(
        "--climate-class", metavar="CLASS",
        help="CFPP grade A-F or arctic class 0-4 (EN 14214 / EN 590); without it CFPP is "
             "estimated but not judged.",
    )(func)
    func = click.option(
        "--spec", "spec_names", multiple=True, metavar="NAME",
        help="Specification to check against (repeatable): en14214, astm-d6751, en590, "
             "astm-d7467. Default: en14214 and astm-d6751.",
    )(func)
    return func


def model_option(func):
    """``--model MODEL.json`` (repeatable): a lab model's values replace the estimates."""
    return click.option(
        "--model", "models", multiple=True, type=click.Path(dir_okay=False),
        metavar="MODEL.json",
        help="A model fitted with 'fame-estimator fit' (repeatable): its properties replace "
             "the published estimates in verdicts, ranking and limits.")(func)


def quiet_option(func):
    """``--quiet``: no short answer on stdout (files written are still named on stderr)."""
    return click.option("--quiet", "-q", is_flag=True,
                        help="Print no answer on stdout; files written are still named on "
                             "stderr.")(func)


def refuse_unwritable_table(output: str | None) -> None:
    """Refuse an output table suffix before any answer is printed (same words as the writer)."""
    from estimator.report.tables import TABLE_SUFFIXES

    if output and Path(output).suffix.lower() not in TABLE_SUFFIXES:
        from estimator.errors import UsageError

        raise UsageError(f"cannot write {Path(output).name!r}: use an output file ending in "
                         f"{', '.join(TABLE_SUFFIXES)}")


def model_line(model_props: dict | None) -> str:
    """One line naming the properties a lab model gave ('' without models)."""
    if not model_props:
        return ""
    from estimator.report.labels import model_sources

    return ("From the lab's model file(s), replacing the published estimates: "
            + model_sources(model_props) + ".")


def _inputs(func):
    func = peak_options(func)
    func = input_options(func)
    func = click.option(
        "--oil", "oils", multiple=True, metavar="NAME",
        help="A built-in typical profile (repeatable); see 'fame-estimator oils'.",
    )(func)
    return click.argument("inputs", nargs=-1, type=click.Path(dir_okay=False))(func)


def _footer(climate_class: str | None, spec_names, verdicts=None) -> str:
    from estimator.cautions import CAUTION_SHORT

    lines = []
    if verdicts is not None:
        os_fail = (verdicts["property"] == "oxidation_stability_110C_h") & (
            verdicts["verdict"] == "fails")
        if os_fail.any():
            lines.append("Oxidation stability is the esters' own, without antioxidant; "
                         "producers commonly dose one to reach the limit (common practice).")
        if (verdicts["property"] == "ester_content_wt_pct").any():
            lines.append("Ester content: measured by EN 14103 on the peak tables; its band is "
                         "the method's repeatability, about 1 % (m/m) (recalled, not checked "
                         "against the standard's text).")
    if climate_class is None and any(s in ("en14214", "en590") for s in spec_names):
        lines.append("CFPP not judged: give --climate-class (A-F, or arctic 0-4) to check it.")
    lines.append(CAUTION_SHORT)
    return "\n".join(lines)


def _with_caution(frame, output: str | None):
    """CSV and JSON files carry the caution as a column; XLSX gets a cautions sheet."""
    import pandas as pd

    from estimator.cautions import CAUTION, CAUTION_SHORT

    suffix = Path(output).suffix.lower() if output else ""
    if suffix in (".csv", ".json"):
        return frame.assign(caution=CAUTION_SHORT), None
    if suffix == ".xlsx":
        return frame, {"cautions": pd.DataFrame({"caution": [CAUTION]})}
    return frame, None


@click.command(cls=ReportingCommand, context_settings=CONTEXT)
@_inputs
@_spec_options
@click.option("--strict", is_flag=True,
              help=f"Exit with status {STRICT_EXIT_CODE} when any verdict is 'fails'.")
@model_option
@quiet_option
@click.option("-o", "--output", metavar="FILE",
              help="Write the verdict table (.csv, .xlsx or .json); the verdict counts are "
                   "still printed.")
def check(inputs, oils, basis, sum_tolerance, reference, sample_sheet, internal_standard,
          spec_names, climate_class, strict, models, quiet, output) -> None:
    """Check each sample's estimated fuel against specification limits.

    Every estimate (± one standard uncertainty) is compared with every limit and
    given the probability that the fuel meets it: 'meets' at 0.9 or more, 'fails'
    at 0.1 or less, 'too close to call' in between; 'outside method range' when the
    estimate lies outside its method's fitted range (it never meets). Limits the
    profile fixes exactly (linolenic ester, esters with four or more double bonds)
    have no error band. A failed verdict is not an error: the exit status is 0
    unless --strict is given.

    \b
    Examples:
      fame-estimator check --oil rapeseed --oil soybean
      fame-estimator check lots.csv --spec en14214 --climate-class C
      fame-estimator check lots.csv --spec astm-d6751 --strict -o verdicts.xlsx
      fame-estimator check lots.csv --model lab_model.json --climate-class C
      fame-estimator check peaks.csv --reference mix.csv --samples masses.csv
    """
    import pandas as pd

    from estimator.comparison import SPEC_LABELS, check_profile
    from estimator.report.html import plus_minus
    from estimator.report.labels import pretty_unit
    from estimator.specs import PROPERTY_LABELS, limits, normalise_climate_class

    names = spec_names or DEFAULT_SPECS
    climate_class = normalise_climate_class(climate_class)
    limits(names, climate_class)  # bad names fail before the inputs are read
    profile = load_inputs(inputs, oils, basis, sum_tolerance, reference, sample_sheet,
                          internal_standard)
    table = check_profile(profile, names, climate_class, models=models)
    failed = int((table["verdict"] == "fails").sum())
    footer = _footer(climate_class, names, table)
    method = table["method"].astype(str)
    fitted = table.loc[method.str.startswith("fit:"), ["property", "method"]].drop_duplicates(
        "property")
    from_model = model_line({p: f"lab model {m.removeprefix('fit:')}" for p, m in zip(
        fitted["property"], fitted["method"])})
    if from_model:
        footer = from_model + "\n" + footer
    if output:
        refuse_unwritable_table(output)
        if not quiet:
            _print_check_summary(table, failed)
        frame, sheets = _with_caution(table, output)
        emit(frame, output, footer="" if quiet else footer, sheets=sheets)
    elif not quiet:
        sign = {"min": "≥", "max": "≤"}
        shown = pd.DataFrame({
            "sample": table["sample"],
            "spec": table["spec"].map(lambda s: SPEC_LABELS.get(s, s)),
            "property": table["property"].map(lambda p: PROPERTY_LABELS.get(p, p)),
            "estimate": [plus_minus(v, e) for v, e in zip(table["estimate"], table["error"])],
            "limit": [f"{sign[b]} {v:g}" for b, v in zip(table["bound"], table["limit"])],
            "unit": [pretty_unit(str(u)) or "-" for u in table["unit"]],
            "verdict": table["verdict"],
            "probability_meets": [("" if pd.isna(p) else f"{p:.2f}")
                                  for p in table["probability_meets"]],
            "domain": table["in_domain"].map({True: "", False: "outside fitted domain"}),
        })
        from estimator.report.tables import format_table

        click.echo(format_table(shown, transpose=False))
        _print_check_summary(table, failed)
        click.echo(footer)
    if strict and failed:
        click.echo(f"--strict: {failed} verdicts fail; exit status {STRICT_EXIT_CODE}",
                   err=True)
        click.get_current_context().exit(STRICT_EXIT_CODE)


def _print_check_summary(table, failed: int) -> None:
    from estimator.comparison import SPEC_LABELS
    from estimator.specs import summarise

    summary = summarise(table)
    click.echo("\nsummary:")
    for sample, row in summary.iterrows():
        parts = "; ".join(f"{SPEC_LABELS.get(s, s)} {_meets_words(row[s])}"
                          for s in summary.columns)
        click.echo(f"  {sample}: {parts}")
    click.echo(f"\n{failed} of {len(table)} verdicts fail.")


def _meets_words(verdict) -> str:
    """A bare 'meets' says only what was estimated: the properties the tool estimates."""
    text = str(verdict)
    return "meets on the properties estimated" + text[len("meets"):] if (
        text == "meets" or text.startswith("meets;")) else text


@click.command(cls=ReportingCommand, context_settings=CONTEXT)
@_inputs
@_spec_options
@click.option("--pretreat", type=click.Choice(["none", "acid"]), default="none",
              show_default=True,
              help="none: base catalysis, free fatty acid lost to soap; acid: free fatty acid "
                   "esterified to fuel first.")
@click.option("--methanol-ratio", type=float, default=6.0, show_default=True, metavar="R",
              help="Methanol : oil (triglyceride) molar ratio charged; at least 3. The "
                   "unrecovered excess is costed.")
@click.option("--costs", "costs_file", type=click.Path(dir_okay=False), metavar="COSTS.json",
              help="Prices and uses of methanol, catalyst, acid pretreatment, antioxidant and "
                   "the glycerol credit (JSON; see the README). Default: stated assumptions.")
@model_option
@quiet_option
@click.option("-o", "--output", "outdir", metavar="DIR", type=click.Path(file_okay=False),
              help="Write comparison.csv, comparison.xlsx, plots/ (PNG and SVG) and "
                   "report.html into DIR; the ranking is still printed.")
def compare(inputs, oils, basis, sum_tolerance, reference, sample_sheet, internal_standard,
            spec_names, climate_class, pretreat, methanol_ratio, costs_file, models, quiet,
            outdir) -> None:
    """Compare offered lots: spec verdicts, fuel yield and cost per tonne of fuel, ranked.

    Reads each lot's profile and, when present, its price_per_t, ffa_wt_pct,
    water_wt_pct, supplier, feedstock and available_t columns. Lots whose fuel meets
    every specification checked rank first, then those too close to call, then
    those whose only failures a treatment fixes (oxidation stability, by an
    antioxidant dose), then those with a failure no treatment fixes. Failing lots
    closer to their limits (in stated errors) come first; then the cheapest fuel,
    counting methanol, catalyst, pretreatment, the glycerol credit and any
    antioxidant dose. A lot without a price keeps its verdicts; its cost is left
    empty.

    \b
    Examples:
      fame-estimator compare lots.csv --basis fatty-acid --climate-class C
      fame-estimator compare lots.csv --basis fatty-acid -o out/lots --pretreat acid
      fame-estimator compare --oil rapeseed --oil palm --spec en14214 --spec astm-d6751
      fame-estimator compare lots.csv --basis fatty-acid --costs costs.json \\
          --model lab_model.json --climate-class C
    """
    from estimator.comparison import compare_lots
    from estimator.specs import limits, normalise_climate_class

    names = spec_names or DEFAULT_SPECS
    climate_class = normalise_climate_class(climate_class)
    limits(names, climate_class)
    if outdir and Path(outdir).suffix.lower() in (".csv", ".xlsx", ".json", ".html"):
        from estimator.errors import UsageError

        raise UsageError(f"-o {outdir}: compare writes a folder of files; give a folder name "
                         "(e.g. -o out/lots), not a file")
    costs = None
    if costs_file:
        from estimator.sourcing import read_costs

        costs = read_costs(costs_file)
    profile = load_inputs(inputs, oils, basis, sum_tolerance, reference, sample_sheet,
                          internal_standard)
    result = compare_lots(profile, spec_names=names, climate_class=climate_class,
                          pretreat=pretreat, methanol_ratio=methanol_ratio, costs=costs,
                          models=models)
    footer = _footer(climate_class, names, result.verdicts)
    from_model = model_line(result.model_properties)
    if from_model:
        footer = from_model + "\n" + footer
    if outdir:  # refuse before the answer is printed, as before anything is written
        from estimator.files import check_outputs
        from estimator.report.html import COMPARISON_FILES

        check_outputs([Path(outdir) / name for name in COMPARISON_FILES],
                      folders=[Path(outdir) / "plots"])
    if not quiet:
        _print_ranking(result, short=bool(outdir))
    if outdir:
        from estimator.report.html import write_comparison

        written = write_comparison(result, outdir)
        for key in ("csv", "xlsx", "report"):
            click.echo(f"wrote {written[key]}", err=True)
        click.echo(f"wrote {len(written['plots'])} plot files into "
                   f"{Path(outdir) / 'plots'}", err=True)
        if not quiet:
            click.echo(footer, err=True)
        return
    if not quiet:
        click.echo("\n" + footer)


def _print_ranking(result, *, short: bool) -> None:
    """The ranked table (and, unless ``short``, the verdicts and notes of every lot)."""
    import pandas as pd

    from estimator.comparison import SPEC_LABELS
    from estimator.report.html import plus_minus
    from estimator.report.tables import format_table

    r = result.ranked
    unjudged = result.climate_class is None and any(
        "CFPP not judged" in str(v) for s in result.specs for v in r[f"verdict_{s}"])
    shown = pd.DataFrame({
        "rank": r["rank"], "lot": r["sample"],
        "decision": r["decision"] + ("*" if unjudged else ""),
        "cetane": [plus_minus(v, e) for v, e in zip(r["cetane_number"], r["cetane_number_error"])],
        "IV": [plus_minus(v, e) for v, e in zip(r["iodine_value_gI2_100g"],
                                         r["iodine_value_gI2_100g_error"])],
        "CFPP °C": [plus_minus(v, e) for v, e in zip(r["cfpp_C"], r["cfpp_C_error"])],
        "OS 110 °C h": [plus_minus(v, e) for v, e in zip(r["oxidation_stability_110C_h"],
                                                  r["oxidation_stability_110C_h_error"])],
        # one precision per column: yields to 0.001 t/t, costs to the whole currency unit
        "yield t/t": [("-" if pd.isna(v) else f"{v:.3f}") for v in r["fuel_yield_t_per_t_oil"]],
        "cost per t fuel": [("-" if pd.isna(v) else f"{v:.0f}") for v in r["cost_per_t_fuel"]],
    })
    click.echo("Lots ranked: those meeting every limit first; then those in doubt (too close "
               "to call, or outside a method's range); then failures a treatment fixes; then "
               "failures none fixes. Within each: closer to the limits first, then cheaper "
               "fuel.\n")
    click.echo(format_table(shown, transpose=False))
    if unjudged:
        click.echo("* CFPP not judged: no --climate-class given; a lot that 'meets' may still "
                   "gel in winter.")
    failing = [(s, u, f) for s, u, f in zip(r["sample"], r["unfixable_failures"],
                                            r["fixable_failures"]) if u or f]
    if failing:
        click.echo("\nfailures (fixable: by which treatment, at what assumed cost):")
        for sample, unfix, fix in failing:
            parts = ([f"no treatment fixes {unfix}"] if unfix else []) + (
                [f"fixable: {fix}"] if fix else [])
            click.echo(f"  {sample}: {'; '.join(parts)}")
    if short:
        return
    click.echo("\nverdicts:")
    for _, row in r.iterrows():
        parts = "; ".join(f"{SPEC_LABELS.get(s, s)} {_meets_words(row[f'verdict_{s}'])}"
                          for s in result.specs)
        click.echo(f"  {row['sample']}: {parts}")
    notes = [(s, n) for s, n in zip(r["sample"], r["notes"]) if n]
    if notes:
        from estimator.report.labels import for_readers

        click.echo("\nnotes:")
        for sample, text in notes:
            click.echo(f"  {sample}: {for_readers(text)}")
