"""Options and helpers shared by the CLI commands (no science here)."""

from __future__ import annotations

import click

CONTEXT = {"help_option_names": ["-h", "--help"], "max_content_width": 100}


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


def load_inputs(
    inputs: tuple[str, ...], oils: tuple[str, ...], basis: str, sum_tolerance: float
):
    """Read every INPUT file and --oil name into one Profile."""
    from estimator.profiles.io import read_profile
    from estimator.profiles.profile import Profile

    if not inputs and not oils:
        raise click.UsageError("give at least one INPUT file or --oil NAME")
    parts = [read_profile(p, basis=basis, sum_tolerance=sum_tolerance) for p in inputs]
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
