"""The ``fit`` command, and :func:`apply_models` for ``predict --model``.

No science here: the command reads the lab file, calls :mod:`estimator.refit`,
prints or writes what it returns, and draws the report. scikit-learn and matplotlib
are imported only when a fit runs.
"""

from __future__ import annotations

import math
import sys
from pathlib import Path

import click

from estimator.cliutil import (
    CONTEXT,
    ReportingCommand,
    fractions_requested,
    input_options,
    show_file_notes,
)
from estimator.errors import UsageError

__all__ = ["fit"]

#: Method names of fitted models in the long estimate table start with this.


@click.command("fit", cls=ReportingCommand, context_settings=CONTEXT)
@click.argument("lab_file", type=click.Path(dir_okay=False))
@click.option("--property", "properties", multiple=True, required=True, metavar="NAME",
              help="A measured property column to refit (repeatable), named as in predict's "
                   "output, e.g. cetane_number, cfpp_C, oxidation_stability_110C_h.")
@input_options
@click.option("--seed", type=int, default=0, show_default=True,
              help="Seed of the repeated k-fold shuffles and the Gaussian-process subsets "
                   "(0 to 4294967295).")
@click.option("--tie-tolerance", type=float, default=2.0, show_default=True,
              metavar="PCT", help="Candidates within PCT % of the best CV RMSE tie; a tie goes "
                                  "to the simpler model.")
@click.option("--no-report", is_flag=True,
              help="With -o: write only the model file, no report folder.")
@click.option("-o", "--output", metavar="FILE.json",
              help="Write the chosen models (one entry per property) to this JSON model file, "
                   "and the fit report to FILE_fit_report/ beside it.")
def fit(lab_file, properties, basis, sum_tolerance, seed, tie_tolerance, no_report,
        output) -> None:
    """Refit published correlations on your own lab samples, with cross-validation.

    LAB_FILE is any profile file predict reads, plus one column of measured values per
    --property (blank cell: not measured). Each property is compared by cross-validation
    (leave-one-out below 30 samples, else 5-fold x 10 repeats): every published method as
    is and recalibrated (a + b x estimate), PLS and ridge on composition and on
    descriptors, and a Gaussian process, beside a mean-only baseline. The lowest held-out
    RMSE wins; ties go to the simpler model. A model is said to beat a reference only
    with a CV RMSE at least 10 % lower. Its band (the ± of predict --model) is one
    standard uncertainty from cross-validation. Use the model file with
    'fame-estimator predict --model FILE.json'.

    \b
    Examples:
      fame-estimator fit data/demo/lab_samples.csv --property cetane_number
      fame-estimator fit lab.xlsx --property cfpp_C --property cetane_number -o lab_model.json
      fame-estimator predict new_lots.csv --model lab_model.json
    """
    from estimator.cautions import CAUTION_SHORT
    from estimator.profiles.io import read_profile
    from estimator.refit.crossval import check_property, fit_properties, total_fits
    from estimator.report.tables import format_table

    if output and Path(output).suffix.lower() != ".json":
        raise UsageError(f"-o {output}: a model file must end in .json")
    if not 0 <= seed <= 2**32 - 1:
        raise UsageError(f"--seed {seed}: must be a whole number from 0 to {2**32 - 1}")
    if not (math.isfinite(tie_tolerance) and 0.0 <= tie_tolerance <= 50.0):
        raise UsageError(f"--tie-tolerance {tie_tolerance}: must be a number from 0 to 50 "
                         "(per cent)")
    if output:
        from estimator.files import check_outputs
        from estimator.report.fit_sections import report_folder

        check_outputs([output], folders=[] if no_report else [report_folder(output)])
    for prop in properties:
        check_property(prop)
    profile = read_profile(lab_file, basis=basis, sum_tolerance=sum_tolerance,
                           extra_columns=tuple(properties), fractions=fractions_requested())
    show_file_notes(profile)
    kwargs = {"seed": seed, "tolerance": tie_tolerance / 100.0}
    if sys.stderr.isatty():
        total = total_fits(profile, properties)
        with click.progressbar(length=total, label="cross-validating", file=sys.stderr,
                               show_pos=True, show_eta=False) as bar:
            fits = fit_properties(profile, properties, progress=bar.update, **kwargs)
    else:
        fits = fit_properties(profile, properties, **kwargs)
    import pandas as pd

    from estimator.refit.wording import candidate_words

    table = pd.concat([f.score_table() for f in fits], ignore_index=True)
    shown = table[["property", "candidate", "cv_rmse", "cv_mae", "cv_bias", "cv_r2", "chosen"]]
    from estimator.report.labels import column_label

    shown = shown.assign(candidate=[candidate_words(c, p) for c, p in
                                    zip(shown["candidate"], shown["property"])],
                         property=[column_label(p, unit=False) for p in shown["property"]])
    shown = shown.rename(columns={"candidate": "model"})

    if not output:
        for f in fits:
            click.echo(f"{column_label(f.property)}: {len(f.measured)} samples, "
                       f"{f.scheme.name} (seed {seed})")
        click.echo(format_table(shown, transpose=False))
        click.echo("")
    for f in fits:
        click.echo(f"{column_label(f.property, unit=False)}: {f.statement}")
        for note in f.skipped:
            click.echo(f"  not evaluated: {note}")
        for note in f.notes:
            click.echo(f"  note: {note}")
    if output:
        from estimator.refit.model_file import file_provenance, save_models

        path = save_models([f.model for f in fits], output,
                           file_provenance(lab_file, len(profile)))
        click.echo(f"wrote {path} ({len(fits)} model{'s' if len(fits) > 1 else ''})", err=True)
        if not no_report:
            from estimator.report.fit_sections import write_fit_report

            if sys.stderr.isatty():
                click.echo("drawing the fit report ...", err=True)

            groups = _groups(profile)
            folder = write_fit_report(fits, path, table=table, groups=groups,
                                      source=Path(lab_file).name)
            click.echo(f"wrote the fit report to {folder}{Path('/')}", err=True)
    click.echo(CAUTION_SHORT, err=bool(output))


def _groups(profile) -> dict[str, str] | None:
    """Sample id -> feedstock for the plots, when the lab file has such a column."""
    for name in ("feedstock", "feedstock_type", "oil"):
        if name in profile.metadata.columns:
            return dict(zip(profile.samples, profile.metadata[name].astype(str)))
    return None
