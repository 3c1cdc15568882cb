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
    import warnings

    from estimator.errors import EstimatorError
    from estimator.files import guard_inputs

    try:
        with guard_inputs(_input_paths(ctx)), warnings.catch_warnings():
            # numpy, pandas and openpyxl warnings are for developers: the terminal shows
            # results and one-line errors only
            warnings.simplefilter("ignore")
            _refuse_overwriting_inputs(ctx)
            return invoke()
    except BrokenPipeError:
        # the reader went away (e.g. piped into head): stop quietly
        sys.stderr.close()
        ctx.exit(0)
    except RecursionError:
        click.echo("fame-estimator: error: input nested too deeply to read", err=True)
        ctx.exit(1)
    except MemoryError:
        click.echo("fame-estimator: error: not enough memory for this input; split it into "
                   "smaller files", err=True)
        ctx.exit(1)
    except EstimatorError as exc:
        click.echo(f"fame-estimator: error: {one_line(str(exc))}", err=True)
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


def one_line(text: str) -> str:
    """A message on one line: line breaks (e.g. from a cell's text) become spaces."""
    return " ".join(text.replace("\r", "\n").split("\n")).strip()


#: Parameters that name files a command writes; all other path-like values are inputs.
OUTPUT_PARAMS = ("output", "outdir", "plot", "report_path")


def _paths(value) -> list[Path]:
    values = value if isinstance(value, (tuple, list)) else (value,)
    return [Path(v) for v in values if isinstance(v, str) and v]


def _input_paths(ctx: click.Context) -> list[Path]:
    """Every existing file named by a parameter that is not an output."""
    return [p for name, value in ctx.params.items() if name not in OUTPUT_PARAMS
            for p in _paths(value) if p.is_file()]


def _refuse_overwriting_inputs(ctx: click.Context) -> None:
    """An output file named on the command line that is one of its inputs is a usage error.

    Side files and folder contents are checked by each command before it writes
    (:func:`estimator.files.check_outputs`), and every atomic write checks again.
    """
    from estimator.files import check_outputs

    check_outputs(p for name in OUTPUT_PARAMS for p in _paths(ctx.params.get(name)))


class ReportingCommand(click.Command):
    """A command that reports our errors as one line instead of a traceback."""

    def invoke(self, ctx: click.Context):  # noqa: D102
        return invoke_reporting(ctx, lambda: super(ReportingCommand, self).invoke(ctx))


class ReportingGroup(click.Group):
    """A command group that reports our errors as one line instead of a traceback."""

    def invoke(self, ctx: click.Context):  # noqa: D102
        return invoke_reporting(ctx, lambda: super(ReportingGroup, self).invoke(ctx))


def finite(ctx: click.Context, param, value):
    """A click callback refusing NaN and infinite numbers (click's ranges let NaN through)."""
    import math

    if value is not None and not math.isfinite(value):
        raise click.BadParameter(f"{value} is not a finite number")
    return value


def _remember_fractions(ctx: click.Context, param, value: bool) -> bool:
    ctx.meta["fame_estimator.fractions"] = bool(value)
    return value


def input_options(func):
    """Add --basis, --sum-tolerance and --fractions to a command.

    ``--fractions`` is not passed to the command function; :func:`load_inputs` reads it
    from the click context.
    """
    func = click.option(
        "--fractions", is_flag=True, expose_value=False, callback=_remember_fractions,
        help="The profile numbers are mass fractions (summing to 1), not mass %.",
    )(func)
    func = click.option(
        "--sum-tolerance", type=click.FloatRange(0, 100), default=2.0, show_default=True,
        metavar="POINTS", callback=finite,
        help="Renormalise sums within this many points of 100; refuse beyond.",
    )(func)
    func = click.option(
        "--basis", type=click.Choice(["fame", "fatty-acid", "oil"]), default="fame",
        show_default=True, help="What the profile numbers are mass % of.",
    )(func)
    return func


def fractions_requested() -> bool:
    """True when the running command was given ``--fractions``."""
    ctx = click.get_current_context(silent=True)
    return bool(ctx.meta.get("fame_estimator.fractions")) if ctx is not None else False


def show_file_notes(profile) -> None:
    """Echo the notes about the files read (e.g. the header row found) to stderr."""
    for note in profile.file_notes:
        click.echo(f"note: {note}", err=True)


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
        fractions = fractions_requested()
        parts = [read_profile(p, basis=basis, sum_tolerance=sum_tolerance,
                              fractions=fractions) for p in inputs]
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
    for part in parts:
        show_file_notes(part)
    return Profile.concat(parts)


def emit(frame, output: str | None, *, title: str = "", footer: str = "", sheets=None) -> None:
    """Write ``frame`` to ``output`` by extension, or print it readably to the terminal.

    On the terminal, free-text columns (``notes``, ``flags``) are listed under the
    table, one line per sample, instead of widening it.
    """
    from estimator.files import write_table
    from estimator.report.tables import format_table

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
    echo_text_columns(frame, text_cols, footer=footer)


def echo_text_columns(frame, text_cols, *, footer: str = "", words=str) -> None:
    """List the ``flags`` / ``notes`` cells under a table (``sample: text``), then the footer."""
    for col in text_cols:
        lines = [(str(s), words(v)) for s, v in zip(frame.iloc[:, 0], frame[col]) if str(v)]
        if lines:
            click.echo(f"\n{col}:")
            for sample, text in lines:
                click.echo(f"  {sample}: {text}")
    if footer:
        click.echo("\n" + footer)
