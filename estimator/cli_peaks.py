"""The ``peaks`` command: a chromatograph's peak table to a profile and an ester content.

A plain click command; ``estimator.cli`` registers it in the ``fame-estimator`` group.
It parses options, calls :func:`estimator.profiles.peaks.read_peaks`, formats and
writes. The science lives in :mod:`estimator.profiles.peaks`.
"""

from __future__ import annotations

from pathlib import Path

import click

from estimator.cliutil import CONTEXT, ReportingCommand, emit

__all__ = ["peaks", "side_file"]

_UNSAFE_START = ("=", "+", "-", "@", "\t", "\r")


def side_file(output: str, tag: str) -> Path:
    """The side file beside ``output`` for a second table: ``out.csv`` -> ``out_peaks.csv``."""
    path = Path(output)
    return path.with_name(f"{path.stem}_{tag}{path.suffix}")


def _text_safe(frame):
    """Prefix text cells that a spreadsheet would read as a formula (sample ids, names)."""
    out = frame.copy()
    for col in out.columns:
        if out[col].dtype == object:
            out[col] = out[col].map(
                lambda v: f"'{v}" if isinstance(v, str) and v.startswith(_UNSAFE_START) else v)
    return out


def _refuse_inputs(paths: list[Path], inputs: list[str]) -> None:
    from estimator.errors import UsageError

    given = {Path(p).resolve() for p in inputs if p and Path(p).is_file()}
    for path in paths:
        if path.resolve() in given:
            raise UsageError(f"{path.name} is one of this command's inputs: refusing to "
                             "overwrite it; choose another output file")


@click.command(cls=ReportingCommand, context_settings=CONTEXT)
@click.argument("peak_files", metavar="PEAKS...", nargs=-1, required=True,
                type=click.Path(dir_okay=False))
@click.option("--reference", required=True, metavar="REF", type=click.Path(dir_okay=False),
              help="Reference run of the known FAME mixture: name, retention_time_min.")
@click.option("--samples", "sheet", metavar="SHEET", type=click.Path(dir_okay=False),
              help="sample, sample_mass_mg, internal_standard_mg; gives the ester content.")
@click.option("--internal-standard", type=click.Choice(["C19:0", "C17:0"]), default="C19:0",
              show_default=True,
              help="C19:0 methyl nonadecanoate (EN 14103:2011) or C17:0 methyl "
                   "heptadecanoate (the 2003 edition).")
@click.option("--window", "window_min", type=float, default=0.05, show_default=True,
              metavar="MIN", help="Retention-time window around each reference peak [min].")
@click.option("--solvent-cutoff", "solvent_cutoff_min", type=float, metavar="MIN",
              help="Drop peaks before this time as solvent [min]; default half the first "
                   "reference peak's time.")
@click.option("--calibration", metavar="FILE", type=click.Path(dir_okay=False),
              help="Measured response factors (name, response_factor) instead of the "
                   "theoretical FID factors.")
@click.option("--ecl", "ecl_method", type=click.Choice(["log", "linear"]), default="log",
              show_default=True,
              help="Chain-length interpolation: log (Miwa et al. 1960, isothermal) or linear "
                   "(van den Dool & Kratz 1963, temperature-programmed).")
@click.option("--dead-time", "dead_time_min", type=float, default=0.0, show_default=True,
              metavar="MIN", help="Column dead time for the log interpolation [min].")
@click.option("--ester-repeatability", type=float, default=1.0, show_default=True,
              metavar="PCT", help="Band given to the ester content in verdicts [% (m/m)].")
@click.option("-o", "--output", metavar="FILE",
              help="Write the table (.csv, .xlsx or .json); the peak-by-peak table goes "
                   "to a 'peaks' sheet, or to FILE_peaks.csv / .json beside it.")
def peaks(peak_files, reference, sheet, internal_standard, window_min, solvent_cutoff_min,
          calibration, ecl_method, dead_time_min, ester_repeatability, output) -> None:
    """Turn GC peak tables into profiles, ester content and linolenic ester.

    Each peak is identified by retention time against your reference run (drift is
    corrected through the saturated methyl esters found in both runs); peaks matching
    nothing are listed as unidentified, and a peak that could be two esters is listed
    as ambiguous, never assigned. Areas become mass % through FID correction factors;
    the internal standard is removed from the profile. With --samples the ester
    content is computed as EN 14103 does (areas as measured).

    \b
    Examples:
      fame-estimator peaks data/examples/peaks_runs.csv \\
          --reference data/examples/peaks_reference.csv \\
          --samples data/examples/peaks_samples.csv
      fame-estimator peaks run1.csv run2.csv --reference mix37.csv -o profiles.xlsx
    """
    from estimator.cautions import CAUTION_SHORT
    from estimator.profiles.peaks import read_peaks

    if output:
        from estimator.report.tables import TABLE_SUFFIXES

        if Path(output).suffix.lower() not in TABLE_SUFFIXES:
            from estimator.errors import UsageError

            raise UsageError(f"cannot write {Path(output).name!r}: use an output file ending "
                             f"in {', '.join(TABLE_SUFFIXES)}")
    result = read_peaks(
        peak_files, reference, samples=sheet, internal_standard=internal_standard,
        window_min=window_min, solvent_cutoff_min=solvent_cutoff_min, calibration=calibration,
        ecl_method={"log": "miwa1960", "linear": "vandendool1963"}[ecl_method],
        dead_time_min=dead_time_min, ester_repeatability_wt_pct=ester_repeatability,
    )
    table = result.table()
    footer = (f"Areas to mass: {result.response_factors}. Ester content and linolenic "
              "ester as EN 14103 computes them (areas as measured).\n" + CAUTION_SHORT)
    ident = result.identification
    if output:
        inputs = [*peak_files, reference, sheet or "", calibration or ""]
        if Path(output).suffix.lower() == ".xlsx":
            _refuse_inputs([Path(output)], inputs)
            emit(_text_safe(table), output, footer=footer,
                 sheets={"peaks": _text_safe(ident), "ester_content": _text_safe(result.content)})
            return
        extra = side_file(output, "peaks")
        _refuse_inputs([Path(output), extra], inputs)
        emit(_text_safe(table), output)
        emit(_text_safe(ident), str(extra), footer=footer)
        return
    comp_cols = [c for c in table.columns
                 if c not in ("sample", "ester_content_wt_pct", "linolenic_wt_pct",
                              "unidentified_area_pct", "notes")]
    click.echo("Profiles from the peak tables (wt % of esters, internal standard removed):\n")
    emit(table[["sample", *comp_cols]], None)
    click.echo("\nFrom the same runs (EN 14103, areas as measured):\n")
    content = result.content[["sample", "ester_content_wt_pct", "linolenic_wt_pct",
                              "unidentified_area_pct", "ambiguous_area_pct"]]
    emit(content.rename(columns={
        "ester_content_wt_pct": "ester content % (m/m)",
        "linolenic_wt_pct": "linolenic ester % (m/m)",
        "unidentified_area_pct": "unidentified area %",
        "ambiguous_area_pct": "ambiguous area %"}), None)
    counts = ident.groupby(["sample", "status"], sort=False).size().unstack(fill_value=0)
    click.echo("\npeaks per sample:")
    for sample, row in counts.iterrows():
        click.echo(f"  {sample}: " + ", ".join(f"{n} {s}" for s, n in row.items() if n))
    notes = [(s, n) for s, n in zip(table["sample"], table["notes"]) if n]
    if notes:
        from estimator.report.labels import for_readers

        click.echo("\nnotes:")
        for sample, text in notes:
            click.echo(f"  {sample}: {for_readers(text)}")
    click.echo("\n'-o FILE' writes the peak-by-peak identification table too.\n" + footer)
