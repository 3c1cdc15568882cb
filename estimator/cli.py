"""The ``fame-estimator`` command line: thin commands over the layers below.

Commands parse options, call the science layers, format, and write files
atomically. Any :class:`~estimator.errors.EstimatorError` becomes one line on
stderr and exit status 1 (bad data) or 2 (bad usage). matplotlib and
scikit-learn are imported only inside the commands that draw or fit.
"""

from __future__ import annotations

import sys

import click

from estimator import __version__
from estimator.cliutil import (
    CONTEXT,
    ReportingCommand,
    ReportingGroup,
    echo_text_columns,
    emit,
    fractions_requested,
    input_options,
    load_inputs,
    peak_options,
)


@click.group(cls=ReportingGroup, context_settings=CONTEXT)
@click.version_option(__version__, prog_name="fame-estimator")
def cli() -> None:
    """Estimate what fuel an oil or fat will make, from its fatty-acid profile.

    Estimates are not certification: fuel is accepted on the standard test methods
    in a qualified laboratory. Making biodiesel involves methanol and caustic;
    follow local codes and licensed practice.
    """


def main() -> None:
    """Console-script entry point."""
    try:
        cli(prog_name="fame-estimator")
    finally:
        # The process ends here: freezing the objects spares the interpreter's closing
        # garbage collections over every module's objects (0.1-0.2 s with pandas
        # loaded); files are closed and atexit hooks run as before.
        import gc

        gc.freeze()


# ---------------------------------------------------------------- commands
def _temperatures(ctx, param, value: str | None) -> tuple[float, ...]:
    if not value:
        return ()
    try:
        temps = tuple(float(t) for t in value.replace(";", ",").split(",") if t.strip())
    except ValueError:
        raise click.BadParameter(f"{value!r} is not a comma-separated list of numbers") from None
    if any(t < -60 or t > 150 for t in temps):
        raise click.BadParameter("temperatures must lie between -60 and 150 degC")
    return temps


@cli.command(cls=ReportingCommand, context_settings=CONTEXT)
@click.argument("inputs", nargs=-1, type=click.Path(dir_okay=False))
@click.option("--oil", "oils", multiple=True, metavar="NAME",
              help="A built-in typical profile (repeatable); see 'fame-estimator oils'.")
@input_options
@peak_options
@click.option("--methods", "methods", type=click.Choice(["default", "all"]), default="default",
              show_default=True,
              help="'all' gives every published method per property as a long table.")
@click.option("--temperatures", callback=_temperatures, metavar="T1,T2,...",
              help="Also estimate density and viscosity at these temperatures [degC].")
@click.option("--model", "models", multiple=True, type=click.Path(dir_okay=False),
              metavar="MODEL.json", help="Use a model fitted with 'fame-estimator fit' "
              "(repeatable).")
@click.option("--descriptors", "show_descriptors", is_flag=True,
              help="Also show the composition descriptors on the terminal (files always "
              "hold them).")
@click.option("--quiet", "-q", is_flag=True,
              help="With -o, print no answer on stdout (the file written is still named).")
@click.option("-o", "--output", metavar="FILE", help="Write the table (.csv, .xlsx or .json); "
              "a one-line answer is still printed.")
def predict(inputs, oils, basis, sum_tolerance, reference, sample_sheet, internal_standard,
            methods, temperatures, models, show_descriptors, quiet, output) -> None:
    """Fuel-property estimates and composition descriptors for each sample.

    Each estimate comes from a published correlation (see 'fame-estimator methods');
    its ± (the '_error' column) is one standard uncertainty: the method's band from
    published validation or from the project's validation tables, widened outside
    the method's fitted range, combined with the GC repeatability of the profile.
    Estimates outside the range a method was fitted on are listed under 'flags'.

    \b
    Examples:
      fame-estimator predict --oil rapeseed --oil soybean
      fame-estimator predict --oil rapeseed --descriptors
      fame-estimator predict lots.csv -o estimates.xlsx
      fame-estimator predict --oil palm --methods all --temperatures 0,20,40,60
      fame-estimator predict gc_report.csv --basis oil --sum-tolerance 3
      fame-estimator predict peaks.csv --reference mix.csv
    """
    from estimator.workflows import predict as run_predict

    if output and methods == "default" and reference is None and sample_sheet is None:
        _predict_to_file(inputs, oils, basis, sum_tolerance, temperatures, models, output)
        return
    profile = load_inputs(inputs, oils, basis, sum_tolerance, reference, sample_sheet,
                          internal_standard)
    result = run_predict(profile, methods=methods, temperatures_C=temperatures, models=models)
    if methods == "all":
        if output:
            emit(result.long, output)
        else:
            # one line per estimate, the method's name last (never in a block of its own)
            _print_columns(_long_for_terminal(result.long), footer=_methods_footer(),
                           last_runs_on=True)
        return
    footer = _methods_footer()
    if models:
        from estimator.report.labels import column_label

        method = result.long["method"].astype(str)
        fitted = result.long.loc[method.str.startswith("fit:"), "property"].astype(str)
        names = ", ".join(column_label(p, unit=False) for p in dict.fromkeys(fitted))
        footer = f"From the fitted model file(s): {names}.\n" + footer
    if output:
        from estimator.cli_compare import refuse_unwritable_table

        refuse_unwritable_table(output)
        if not quiet:
            outside = int((~result.long["in_domain"].astype(bool)).sum())
            click.echo(f"estimated {result.long['property'].nunique()} properties for "
                       f"{len(result.wide)} samples; {outside} estimates outside their "
                       "method's fitted domain (see the 'flags' column)")
        emit(result.wide, output)
    else:
        _print_columns(_wide_for_terminal(result.wide, descriptors=show_descriptors),
                       footer=footer)


def _predict_to_file(inputs, oils, basis, sum_tolerance, temperatures, models, output) -> None:
    """Read, estimate and write in pieces (flat memory); a progress bar on a terminal."""
    import os

    from estimator.errors import UsageError
    from estimator.predict_files import predict_to_file

    if not inputs and not oils:
        raise UsageError("give at least one INPUT file or --oil NAME (see --help)")
    kwargs = {"oils": oils, "basis": basis, "sum_tolerance": sum_tolerance,
              "temperatures_C": temperatures, "models": models,
              "fractions": fractions_requested(),
              "notes": lambda note: click.echo(f"note: {note}", err=True)}
    size = sum(os.path.getsize(p) for p in inputs if os.path.isfile(p))
    if output.lower().endswith(".xlsx") and size > 40_000_000:
        from estimator.files import XLSX_MAX_ROWS

        lines = _count_lines(inputs)  # header lines included: a close upper bound
        if lines - len(inputs) >= XLSX_MAX_ROWS:
            raise UsageError(f"-o {output}: about {lines - len(inputs):,} rows do not fit in one "
                             f"XLSX sheet (at most {XLSX_MAX_ROWS - 1:,}); write a .csv file "
                             "instead")
    if sys.stderr.isatty() and size > 4_000_000:
        with click.progressbar(length=size, label="estimating", file=sys.stderr,
                               show_eta=True) as bar:
            per_row = size / max(1, _count_lines(inputs))
            rows = predict_to_file(inputs, output, progress=lambda n: bar.update(int(n * per_row)),
                                   **kwargs)
    else:
        rows = predict_to_file(inputs, output, **kwargs)
    click.echo(f"wrote {output} ({rows} rows)", err=True)


def _count_lines(paths) -> int:
    import os

    lines = 0
    for p in paths:
        if os.path.isfile(p):
            with open(p, "rb") as fh:
                lines += sum(block.count(b"\n") for block in iter(lambda: fh.read(1 << 20), b""))
    return lines


def _print_columns(table, *, footer: str = "", last_runs_on: bool = False) -> None:
    """One row per sample, wrapped to the terminal; flags and notes listed beneath."""
    import shutil

    from estimator.report.labels import for_readers
    from estimator.report.tables import format_columns

    width = max(60, shutil.get_terminal_size((100, 24)).columns)
    text_cols = [c for c in ("flags", "notes") if c in table.columns]
    click.echo(format_columns(table.drop(columns=text_cols), width=width,
                              last_runs_on=last_runs_on))
    echo_text_columns(table, text_cols, footer=footer, words=for_readers)


def _wide_for_terminal(table, *, descriptors: bool = False):
    """One row per sample; each property 'value ± error' under a label with its unit.

    The composition descriptors follow under spelled-out names only with
    ``descriptors``; ``flags`` and ``notes`` stay last (listed under the table).
    """
    import pandas as pd

    from estimator.report.labels import column_label, plus_minus

    out = pd.DataFrame({"sample": table["sample"].astype(str).to_numpy()})
    props = [c for c in table.columns if f"{c}_error" in table.columns]
    for col in props:
        out[column_label(col)] = [plus_minus(v, e, missing="-") for v, e in
                                  zip(table[col], table[f"{col}_error"])]
    if descriptors:
        skip = {"sample", "flags", "notes", *props, *(f"{c}_error" for c in props)}
        for col in table.columns:
            if col not in skip:
                out[column_label(col)] = table[col].to_numpy()
    for col in ("flags", "notes"):
        if col in table.columns:
            out[col] = table[col].to_numpy()
    return out


def _long_for_terminal(long):
    from estimator.report.labels import column_label, method_name, plus_minus, pretty_unit

    out = long[["sample"]].astype(str).copy()
    out["property"] = long["property"].map(lambda p: column_label(p, unit=False))
    out["estimate"] = [f"{plus_minus(v, e, missing='-')} {pretty_unit(str(u))}".rstrip()
                       for v, e, u in zip(long["value"], long["error"], long["unit"])]
    out["inside fitted domain"] = long["in_domain"].map({True: "yes", False: "NO"})
    out["method"] = long["method"].map(method_name)
    return out


def _methods_footer() -> str:
    from estimator.cautions import CAUTION_SHORT

    return f"Defaults and citations: 'fame-estimator methods'. {CAUTION_SHORT}"


@cli.command(cls=ReportingCommand, context_settings=CONTEXT)
@click.option("--property", "prop", metavar="NAME", help="Only the methods for one property.")
@click.option("-o", "--output", metavar="FILE", help="Write the table (.csv, .xlsx or .json).")
def methods(prop, output) -> None:
    """List the published methods per property: default, stated error, domain, citation.

    \b
    Examples:
      fame-estimator methods
      fame-estimator methods --property cfpp_C
    """
    from estimator.errors import UnknownNameError
    from estimator.properties.methods import DEFAULT_REASONS, PROPERTIES, list_methods
    from estimator.properties.uncertainty import band_rows

    table = list_methods().merge(band_rows()[["property", "method", "n_validation",
                                              "band_evidence"]],
                                 on=["property", "method"], how="left")
    if prop:
        if prop not in PROPERTIES:
            raise UnknownNameError(
                f"unknown property {prop!r}; known: {', '.join(PROPERTIES)}"
            )
        table = table[table["property"] == prop]
    if output:
        emit(table.reset_index(drop=True), output)
        return
    click.echo("Every ± printed is one standard uncertainty (one standard deviation). The\n"
               "band of each method below comes from the evidence named; outside a method's\n"
               "fitted domain it is tripled, and the GC repeatability of the profile is added.")
    from estimator.report.labels import column_label, for_readers, mark_text, method_name

    click.echo("The key in brackets is what --method PROPERTY=KEY takes.")
    for name, group in table.groupby("property", sort=False):
        click.echo(f"\n{column_label(name)} ({name})")
        for _, row in group.iterrows():
            mark = "*" if row["default"] else " "
            err = _error_text(row["error"], row["error_kind"])
            click.echo(f"  {mark} {method_name(row['method'])} [{row['method']}]")
            click.echo(f"      {mark_text(row['provenance'])}; {err}")
            click.echo(f"      {for_readers(row['citation'])}")
            click.echo(f"      fitted domain: {row['domain'] or 'not stated'}")
            click.echo(f"      band (1 SD): {for_readers(row['band_evidence'])}")
        reason = DEFAULT_REASONS.get(name)
        if reason:
            click.echo(f"    default (*) because: {for_readers(reason)}")


def _error_text(error: float, kind: str) -> str:
    import math

    if kind == "none" or error is None or (isinstance(error, float) and math.isnan(error)):
        return "no published error"
    return f"stated error: {kind} {error:g}"


@cli.command(cls=ReportingCommand, context_settings=CONTEXT)
@click.option("--ranges", is_flag=True, help="Show the Codex composition ranges instead.")
@click.option("-o", "--output", metavar="FILE", help="Write the table (.csv, .xlsx or .json).")
def oils(ranges, output) -> None:
    """List the built-in typical feedstock profiles (mass % of total fatty acids).

    \b
    Examples:
      fame-estimator oils
      fame-estimator oils --ranges
    """
    from estimator.tables import load_table

    if ranges:
        table = load_table("feedstock_ranges").copy()
        emit(table, output)
        return
    table = load_table("feedstocks").copy()
    species = [c for c in table.columns if ":" in c]
    shown = table[["oil", *species, "other"]].copy()
    for col in [*species, "other"]:
        shown[col] = shown[col].map(lambda v: f"{v:.1f}" if v == v and v else "")
    if output:
        emit(table, output)
        return
    click.echo(
        "Typical fatty-acid profiles (wt % of total fatty acids; 'other' = acids the source\n"
        "does not list; blank = not listed). 'fame-estimator oils -o oils.csv' writes them\n"
        "with the source of every row. Use a name with 'predict --oil NAME'.\n"
    )
    click.echo(_format_plain(shown))


def _format_plain(frame) -> str:
    from estimator.report.tables import format_table

    return format_table(frame, transpose=False, digits=3)


def _register() -> None:
    """Add the job commands that live in their own modules."""
    from estimator.cli_blend import blend, mix
    from estimator.cli_compare import check, compare
    from estimator.cli_fit import fit
    from estimator.cli_peaks import peaks
    from estimator.cli_report import report

    for command in (check, compare, blend, mix, fit, report, peaks):
        cli.add_command(command)


_register()


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
