"""The ``report`` command: a whole planning scenario into one folder and one HTML report."""

from __future__ import annotations

import click

from estimator.cliutil import CONTEXT, ReportingCommand, show_file_notes

__all__ = ["report"]


@click.command(cls=ReportingCommand, context_settings=CONTEXT)
@click.argument("scenario_file", type=click.Path(dir_okay=False))
@click.option("--model", "models", multiple=True, type=click.Path(dir_okay=False),
              metavar="MODEL.json",
              help="A model fitted with 'fame-estimator fit' (repeatable): its properties "
                   "replace the published estimates, as the scenario's \"model\" key does.")
@click.option("-o", "--output", "outdir", required=True, metavar="DIR",
              help="Folder for the tables, plots, model file and report.html.")
@click.option("--allow-outside", is_flag=True,
              help="Let the scenario read files outside its own folder (refused by default).")
@click.option("--svg", is_flag=True, help="Also write each figure as SVG beside its PNG.")
def report(scenario_file, models, outdir, allow_outside, svg) -> None:
    """Run a planning scenario (lots, diesel, targets, lab data) and write one report.

    SCENARIO_FILE is a JSON file naming the lots file and, optionally, a diesel with
    blend targets, a least-cost mix to find, and lab samples to refit on (see the
    README and data/demo/scenario.json). Paths in it are relative to the file and
    must lie in its folder unless --allow-outside is given.

    \b
    Examples:
      fame-estimator report data/demo/scenario.json -o out/demo
      fame-estimator report data/demo/scenario.json -o out/demo --svg
    """
    from estimator.cautions import CAUTION_SHORT
    from estimator.files import protect_inputs
    from estimator.report.labels import column_label, for_readers, model_sources
    from estimator.report.scenario_report import write_scenario
    from estimator.report.tables import format_table
    from estimator.scenario import read_scenario, run_scenario

    scenario = read_scenario(scenario_file, allow_outside=allow_outside)
    protect_inputs(scenario.input_files())
    result = run_scenario(scenario, progress=lambda text: click.echo(f"... {text}", err=True),
                          models=models)
    show_file_notes(result.profile)
    written = write_scenario(result, outdir, svg=svg)
    ranked = result.comparison.ranked
    cols = [c for c in ("rank", "sample", "decision", "cost_per_t_fuel") if c in ranked.columns]
    shown = ranked[cols].rename(columns={"sample": "lot"})
    if "cost_per_t_fuel" in shown.columns:  # to the whole currency unit, as compare prints
        shown["cost_per_t_fuel"] = [("-" if v != v else f"{v:.0f}")
                                    for v in shown["cost_per_t_fuel"]]
    shown = shown.rename(columns={c: column_label(c) for c in shown.columns})
    click.echo(f"{scenario.title}\n\nLots ranked (those meeting every limit first, then those "
               "in doubt, then failures a treatment fixes, then failures none fixes):")
    click.echo(format_table(shown, transpose=False))
    if result.blend is not None and result.blend["summary"] is not None:
        click.echo("\nHighest blend level (% v/v FAME; in brackets with the stated error "
                   f"taken against it), diesel {result.blend['diesel'].name}:")
        from estimator.cli_blend import summary_blocks

        click.echo(summary_blocks(result.blend["summary"].rename(columns=for_readers)))
    if result.mix is not None:
        m = result.mix
        line = (f"{m.cost_per_t_fuel:.1f} per t of fuel" if m.feasible
                else for_readers(m.message))
        click.echo(f"\nLeast-cost mix: {line}")
    for f in result.fits:
        click.echo(f"\nLab's model for {column_label(f.property, unit=False)}: "
                   f"{for_readers(f.statement)}")
    if result.model_properties:
        click.echo("\nFrom the lab's model, replacing the published estimates in every "
                   "decision: " + model_sources(result.model_properties))
    click.echo(f"\nwrote {written['report']} and the tables, plots and model beside it")
    click.echo(CAUTION_SHORT)
