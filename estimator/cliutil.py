"""Options and helpers shared by the CLI commands (no science here)."""

from __future__ import annotations

import os
import sys
from pathlib import Path

import click

CONTEXT = {"help_option_names": ["-h", "--help"], "max_content_width": 100}


def invoke_reporting(ctx: click.Context, invoke):
    """Run ``invoke()``; turn our errors into one stderr line and an exit status.

    :class:`~estimator.errors.EstimatorError` exits with its own code (1 bad data,
    2 bad usage); an OSError (unreadable or unwritable file) exits 1; anything else
    is an internal error, reported in one line too unless ``FAME_ESTIMATOR_DEBUG``
    is set.
    """
    from estimator.errors import EstimatorError

    try:
        _refuse_overwriting_inputs(ctx)
        return invoke()
    except BrokenPipeError:
        # the reader went away (e.g. piped into head): stop quietly
        sys.stderr.close()
        ctx.exit(0)
    except EstimatorError as exc:
        click.echo(f"fame-estimator: error: {exc}", err=True)
        ctx.exit(exc.exit_code)
    except OSError as exc:
        name = Path(exc.filename).name if getattr(exc, "filename", None) else ""
        where = f"{name}: " if name else ""
        click.echo(f"fame-estimator: error: {where}{exc.strerror or exc}", err=True)
        ctx.exit(1)
    except (click.exceptions.Exit, click.ClickException, click.Abort):
        raise
    except Exception as exc:
        if os.environ.get("FAME_ESTIMATOR_DEBUG"):
            raise
        click.echo(
            f"fame-estimator: internal error: {type(exc).__name__}: {exc} (please report it; "
            "set FAME_ESTIMATOR_DEBUG=1 to see the traceback)",
            err=True,
        )
        ctx.exit(1)


#: Parameters that name files a command writes; all other path-like values are inputs.
OUTPUT_PARAMS = ("output", "outdir", "plot", "report_path")


def _refuse_overwriting_inputs(ctx: click.Context) -> None:
    """An output that is one of the command's own input files is a usage error."""
    from estimator.errors import UsageError

    def paths(value) -> list[Path]:
        values = value if isinstance(value, (tuple, list)) else (value,)
        return [Path(v) for v in values if isinstance(v, str) and v]

    inputs = {
        p.resolve() for name, value in ctx.params.items() if name not in OUTPUT_PARAMS
        for p in paths(value) if p.is_file()
    }
    for name in OUTPUT_PARAMS:
        for out in paths(ctx.params.get(name)):
            if out.resolve() in inputs:
                raise UsageError(
                    f"{out.name} is one of this command's inputs: refusing to overwrite it; "
                    "choose another output file"
                )


class ReportingCommand(click.Command):
    """A command that reports our errors as one line instead of a traceback."""

    def invoke(self, ctx: click.Context):  # noqa: D102
        return invoke_reporting(ctx, lambda: super(ReportingCommand, self).invoke(ctx))


class ReportingGroup(click.Group):
    """A command group that reports our errors as one line instead of a traceback."""

    def invoke(self, ctx: click.Context):  # noqa: D102
        return invoke_reporting(ctx, lambda: super(ReportingGroup, self).invoke(ctx))


def input_options(func):
    """Add --basis and --sum-tolerance to a command."""
    func = click.option(
        "--sum-tolerance", type=float, default=2.0, show_default=True, metavar="POINTS",
        help="Renormalise sums within this many points of 100; refuse beyond.",
    )(func)
    func = click.option(
        "--basis", type=click.Choice(["fame", "fatty-acid", "oil"]), default="fame",
        show_default=True, help="What the profile numbers are mass % of.",
    )(func)
    return func


def peak_options(func):
    """Add --reference, --samples and --internal-standard: read INPUTs as GC peak tables."""
    func = click.option(
        "--internal-standard", type=click.Choice(["C19:0", "C17:0"]), default="C19:0",
        show_default=True, help="With --reference: C19:0 (EN 14103:2011) or C17:0 (2003).",
    )(func)
    func = click.option(
        "--samples", "sample_sheet", metavar="SHEET", type=click.Path(dir_okay=False),
        help="With --reference: sample, sample_mass_mg, internal_standard_mg (ester content).",
    )(func)
    func = click.option(
        "--reference", metavar="REF", type=click.Path(dir_okay=False),
        help="Read the INPUT files as GC peak tables, identified against this reference "
             "run (see 'fame-estimator peaks').",
    )(func)
    return func


def load_inputs(
    inputs: tuple[str, ...], oils: tuple[str, ...], basis: str, sum_tolerance: float,
    reference: str | None = None, sample_sheet: str | None = None,
    internal_standard: str = "C19:0",
):
    """Read every INPUT file and --oil name into one Profile.

    With ``reference`` the INPUT files are GC peak tables, read by
    :func:`estimator.profiles.peaks.read_peaks` (FAME basis; ester content from
    ``sample_sheet`` rides along in the profile's metadata).
    """
    from estimator.errors import UsageError
    from estimator.profiles.io import read_profile
    from estimator.profiles.profile import Profile

    if not inputs and not oils:
        raise UsageError("give at least one INPUT file or --oil NAME (see --help)")
    if reference is None:
        if sample_sheet is not None:
            raise UsageError("--samples needs --reference (it belongs to GC peak tables)")
        parts = [read_profile(p, basis=basis, sum_tolerance=sum_tolerance) for p in inputs]
    elif not inputs:
        raise UsageError("--reference needs at least one INPUT peak table")
    elif basis != "fame":
        raise UsageError("--basis does not apply to peak tables (they give FAME mass %)")
    else:
        from estimator.profiles.peaks import read_peaks

        parts = [read_peaks(inputs, reference, samples=sample_sheet,
                            internal_standard=internal_standard).profile]
    if oils:
        parts.append(Profile.from_oils(oils))
    return Profile.concat(parts)


def emit(frame, output: str | None, *, title: str = "", footer: str = "", sheets=None) -> None:
    """Write ``frame`` to ``output`` by extension, or print it readably to the terminal.

    On the terminal, free-text columns (``notes``, ``flags``) are listed under the
    table, one line per sample, instead of widening it.
    """
    from estimator.report.tables import format_table, write_table

    if output:
        path = write_table(frame, output, sheets=sheets)
        click.echo(f"wrote {path} ({len(frame)} rows)", err=True)
        if footer:
            click.echo(footer, err=True)
        return
    if title:
        click.echo(title)
    text_cols = [c for c in ("flags", "notes") if c in frame.columns]
    click.echo(format_table(frame.drop(columns=text_cols)))
    for col in text_cols:
        lines = [(str(s), str(v)) for s, v in zip(frame.iloc[:, 0], frame[col]) if str(v)]
        if lines:
            click.echo(f"\n{col}:")
            for sample, text in lines:
                click.echo(f"  {sample}: {text}")
    if footer:
        click.echo("\n" + footer)
