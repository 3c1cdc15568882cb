"""The ``fame-estimator`` command line: thin commands over the layers below.

Commands parse options, call the science layers, format, and write files
atomically. Any :class:`~estimator.errors.EstimatorError` becomes one line on
stderr and exit status 1 (bad data) or 2 (bad usage). matplotlib and
scikit-learn are imported only inside the commands that draw or fit.
"""

from __future__ import annotations

import sys
from pathlib import Path

import click

from estimator import __version__
from estimator.cliutil import CONTEXT, emit, input_options, load_inputs
from estimator.errors import EstimatorError


class _Group(click.Group):
    """A click group that reports our errors as one line instead of a traceback."""

    def invoke(self, ctx: click.Context):  # noqa: D102
        try:
            return super().invoke(ctx)
        except EstimatorError as exc:
            click.echo(f"fame-estimator: error: {exc}", err=True)
            ctx.exit(exc.exit_code)
        except OSError as exc:
            name = Path(exc.filename).name if getattr(exc, "filename", None) else ""
            where = f"{name}: " if name else ""
            click.echo(f"fame-estimator: error: {where}{exc.strerror or exc}", err=True)
            ctx.exit(1)


@click.group(cls=_Group, context_settings=CONTEXT)
@click.version_option(__version__, prog_name="fame-estimator")
def cli() -> None:
    """Estimate what fuel an oil or fat will make, from its fatty-acid profile.

    Estimates are not certification: fuel is accepted on the standard test methods
    in a qualified laboratory. Making biodiesel involves methanol and caustic;
    follow local codes and licensed practice.
    """


def main() -> None:
    """Console-script entry point."""
    cli(prog_name="fame-estimator")


# ---------------------------------------------------------------- commands
@cli.command(context_settings=CONTEXT)
@click.argument("inputs", nargs=-1, type=click.Path(dir_okay=False))
@click.option("--oil", "oils", multiple=True, metavar="NAME",
              help="A built-in typical profile (repeatable); see 'fame-estimator oils'.")
@input_options
@click.option("-o", "--output", metavar="FILE", help="Write the table (.csv, .xlsx or .json).")
def predict(inputs, oils, basis, sum_tolerance, output) -> None:
    """Composition descriptors and fuel-property estimates for each sample.

    \b
    Examples:
      fame-estimator predict --oil rapeseed --oil soybean
      fame-estimator predict lots.csv -o estimates.xlsx
      fame-estimator predict gc_report.csv --basis oil --sum-tolerance 3
    """
    from estimator.workflows import predict_table

    profile = load_inputs(inputs, oils, basis, sum_tolerance)
    table = predict_table(profile)
    emit(table, output)


@cli.command(context_settings=CONTEXT)
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
    shown = table[["oil", *species, "other"]].fillna(0.0)
    if output:
        emit(table, output)
        return
    click.echo(
        "Typical fatty-acid profiles (wt % of total fatty acids; 'other' = acids the source\n"
        "does not list). Sources: 'fame-estimator oils -o oils.csv' writes them per row.\n"
    )
    click.echo(_format_plain(shown))


def _format_plain(frame) -> str:
    from estimator.report.tables import format_table

    return format_table(frame, transpose=False, digits=3)


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
