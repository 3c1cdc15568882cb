"""The ``blend`` and ``mix`` commands: FAME in diesel for winter planning, least-cost lot mixes.

Plain click commands; ``estimator.cli`` registers them in the ``fame-estimator``
group. They parse options, call :mod:`estimator.blending` and
:mod:`estimator.mixing`, format and write. Run on their own (as the tests may) they
report an :class:`~estimator.errors.EstimatorError` as one stderr line, as the group
does.

Exit status: 0 on success (a blend level that misses a target, or a spec verdict
that fails, is a result, not an error); 1 on bad data and when no mix of the lots
meets the limits (``mix`` then prints an infeasibility report: each limit, how far
the least-violating mix misses it and which limits conflict); 2 on bad usage.
"""

from __future__ import annotations

from pathlib import Path

import click

from estimator.cli_compare import model_line, model_option, quiet_option
from estimator.cliutil import CONTEXT, ReportingCommand, emit, input_options, load_inputs
from estimator.errors import UsageError

__all__ = ["INFEASIBLE_EXIT_CODE", "blend", "mix", "summary_blocks"]

#: Exit status of ``mix`` when no mix of the lots meets every limit.
INFEASIBLE_EXIT_CODE = 1
#: Default of ``mix --margin``: stated errors ("bands") the mix must stay inside each limit.
#: 1.3 is just beyond the 1.28 standard uncertainties at which a verdict turns from
#: "too close to call" to "meets" (probability 0.9, :data:`estimator.specs.MEETS_AT`).
DEFAULT_MARGIN_BANDS = 1.3
DEFAULT_LEVELS = "0,2,5,7,10,20,30,50,100"


def _cold_options(func):
    func = click.option(
        "--climate-class", metavar="CLASS",
        help="EN 590 CFPP grade A-F or arctic class 0-4: its CFPP (and arctic cloud point) "
             "become targets.",
    )(func)
    func = click.option("--max-cloud-point", type=float, metavar="DEGC",
                        help="Highest acceptable cloud point [°C].")(func)
    func = click.option("--max-cfpp", type=float, metavar="DEGC",
                        help="Highest acceptable cold filter plugging point [°C].")(func)
    return func


#: Output suffixes whose extra tables go to ``<stem>_<tag>`` sibling files.
_SIDECAR_SUFFIXES = (".csv", ".tsv", ".json")


def _sidecar(output: str, tag: str) -> Path:
    path = Path(output)
    return path.with_name(f"{path.stem}_{tag}{path.suffix}")


def _check_outputs(output: str | None, tags, *side_files: str | None) -> None:
    """Refuse, before anything is written, any planned file that is one of the inputs."""
    from estimator.files import check_outputs

    planned: list = list(side_files)
    if output:
        planned.append(output)
        if Path(output).suffix.lower() in _SIDECAR_SUFFIXES:
            planned += [_sidecar(output, tag) for tag in tags]
    check_outputs(planned)


def _write(frame, output: str, *, footer: str, extra: dict) -> None:
    """Write the main table; XLSX gets the extra tables as sheets, CSV/JSON as sibling files.

    CSV and JSON files carry the caution as a column; XLSX gets a cautions sheet.
    """
    import pandas as pd

    from estimator.cautions import CAUTION, CAUTION_SHORT
    from estimator.files import write_table

    suffix = Path(output).suffix.lower()
    if suffix == ".xlsx":
        sheets = dict(extra)
        sheets["cautions"] = pd.DataFrame({"caution": [CAUTION]})
        emit(frame, output, footer=footer, sheets=sheets)
        return
    emit(frame.assign(caution=CAUTION_SHORT), output, footer="", sheets=None)
    if suffix in _SIDECAR_SUFFIXES:
        for tag, table in extra.items():
            path = write_table(table.assign(caution=CAUTION_SHORT), _sidecar(output, tag))
            click.echo(f"wrote {path} ({len(table)} rows)", err=True)
    if footer:
        click.echo(footer, err=True)


def _check_side_files(plot: str | None, report_path: str | None) -> None:
    if plot and Path(plot).suffix.lower() != ".png":
        raise UsageError(f"--plot {plot!r}: give a file ending in .png")
    if report_path and Path(report_path).suffix.lower() not in (".html", ".htm"):
        raise UsageError(f"--report {report_path!r}: give a file ending in .html")


def _save_png(fig, path: str) -> None:
    from estimator.report.plots import save_png

    written = save_png(fig, path)
    click.echo(f"wrote {written}", err=True)


# ---------------------------------------------------------------- blend
@click.command(cls=ReportingCommand, context_settings=CONTEXT)
@click.argument("inputs", nargs=-1, type=click.Path(dir_okay=False))
@click.option("--oil", "oils", multiple=True, metavar="NAME",
              help="A built-in typical profile (repeatable); see 'fame-estimator oils'.")
@input_options
@click.option("--diesel", required=True, metavar="FILE|NAME",
              help="The diesel: a .json or one-row .csv of its properties, or a built-in "
                   "typical diesel (en590-summer, en590-winter).")
@click.option("--levels", default=DEFAULT_LEVELS, show_default=True, metavar="LIST",
              help="Blend levels, % FAME by volume, comma-separated (B20 or 20).")
@_cold_options
@click.option("--spec", "spec_names", default="en590,astm-d7467", show_default=True,
              metavar="LIST",
              help="Blend specifications whose highest level is reported, comma-separated "
                   "(en590 up to B7, astm-d7467 B6-B20), or 'none'.")
@click.option("--methods", type=click.Choice(["default", "all"]), default="default",
              show_default=True,
              help="all: write the long table with every mixing rule, one row per value "
                   "(with -o; the terminal shows the default rules).")
@model_option
@quiet_option
@click.option("--plot", metavar="PNG", help="Also draw the blend curves into this PNG file.")
@click.option("--report", "report_path", metavar="HTML",
              help="Also write a self-contained HTML report.")
@click.option("-o", "--output", metavar="FILE",
              help="Write the blend table (.csv, .xlsx or .json); the highest levels go to a "
                   "second sheet or a _levels sibling file. The highest levels are still "
                   "printed.")
def blend(inputs, oils, basis, sum_tolerance, diesel, levels, max_cfpp, max_cloud_point,
          climate_class, spec_names, methods, models, quiet, plot, report_path,
          output) -> None:
    """Properties of each FAME blended into a diesel at B0-B100, and the highest level
    that still meets each target.

    Density mixes by volume, viscosity by the logarithmic rule on mass fractions,
    cetane number linearly by volume (approximate), heating values by mass (and per
    litre), cloud point by ideal solubility of the saturated esters and the diesel's
    wax, CFPP linearly by volume with a wide error. The highest level meeting a
    target is found by bisection on the continuous blend curve, also with the
    stated error taken against the blend. A level that is none or B0 says why
    (the limiting limit, and whether the diesel alone misses it). EN 590 admits only
    FAME that meets EN 14214, ASTM D7467 only FAME that meets ASTM D6751: a FAME
    failing its standard, or not judged on it, gets no level there, and words beside
    a level say what it still depends on. The diesel file needs only the properties the
    question uses (the targets' properties, and density for mass fractions); the
    others are left empty in the table.

    \b
    Examples:
      fame-estimator blend --oil rapeseed --diesel en590-winter --max-cfpp -15
      fame-estimator blend lots.csv --basis fatty-acid --diesel my_diesel.json \\
          --levels 0,2,5,7,10,20,30 --climate-class F -o blends.xlsx
      fame-estimator blend --oil palm --diesel en590-summer --methods all -o palm.csv
    """
    import numpy as np

    from estimator import blend_targets, blending

    grid = blending.parse_levels(levels)
    specs = [] if spec_names.strip().lower() == "none" else [
        s.strip() for s in spec_names.split(",") if s.strip()]
    targets = blend_targets.blend_targets(max_cfpp_C=max_cfpp, max_cloud_point_C=max_cloud_point,
                                     climate_class=climate_class, specs=specs)
    fuel = blending.load_diesel(diesel, blending.needed_properties(t.property for t in targets))
    _check_side_files(plot, report_path)
    profile = load_inputs(inputs, oils, basis, sum_tolerance)
    long = None
    if models:
        from estimator.comparison import long_estimates

        long = long_estimates(profile, models=models)
    fame = blending.fame_component(profile.wt_pct, profile.samples, long=long,
                                   climate_class=climate_class)
    table = (blending.blend_table(fame, fuel, grid, methods="all") if methods == "all"
             else blending.blend_wide(fame, fuel, grid))
    highest = blend_targets.highest_levels(fame, fuel, targets) if targets else None
    summary = (_summary_text(blend_targets.summary_table(highest), climate_class)
               if highest is not None and not quiet else "")
    footer = _blend_footer(fuel)
    _check_outputs(output, ["levels"] if highest is not None else [], plot, report_path)
    if long is not None:
        from estimator.comparison import model_properties

        footer = model_line(model_properties(long)) + "\n" + footer
    if plot or report_path:
        from estimator.report.blend_plots import blend_curves

        top = float(grid.max()) if grid.max() > 0 else 100.0
        curve = blending.blend_wide(fame, fuel, np.union1d(grid, np.linspace(0, top, 51)))
        fig = blend_curves(curve, targets=targets, diesel_name=fuel.name, highest=highest)
        if plot:
            _save_png(fig, plot)
        if report_path:
            from estimator.report.blend_sections import write_blend_report

            wide = blending.blend_wide(fame, fuel, grid)
            path = write_blend_report(report_path, wide, highest, fuel, figure=fig)
            click.echo(f"wrote {path}", err=True)
    if output:
        if summary and not quiet:
            click.echo(summary)
        extra = {"levels": highest} if highest is not None else {}
        _write(table, output, footer="" if quiet else footer, extra=extra)
        return
    if quiet:
        return
    wide = table if methods == "default" else blending.blend_wide(fame, fuel, grid)
    _print_blend(wide, fuel, fame)
    if summary:
        click.echo("\n" + summary)
    click.echo("\n" + footer)


#: Width the highest-level summary wraps its words at.
_SUMMARY_WIDTH = 100


def summary_blocks(table) -> str:
    """The highest levels of :func:`estimator.blend_targets.summary_table`, one block per
    FAME: each target and its level, with the words beside the level wrapped under it."""
    import textwrap

    heads = [str(c) for c in table.columns[1:]]
    width = max(len(h) for h in heads) if heads else 0
    keep = ("EN 14214", "EN 590", "ASTM D6751", "ASTM D7467")  # never split across lines
    lines = []
    for _, row in table.iterrows():
        lines += [""] if lines else []
        lines.append(f"FAME {row['sample']}")
        for head in heads:
            text = str(row[head])
            for name in (*keep, "<= ", ">= "):
                text = text.replace(name, name.replace(" ", "\u00a0"))
            lines += [line.replace("\u00a0", " ") for line in textwrap.wrap(
                text, _SUMMARY_WIDTH, initial_indent=f"  {head.ljust(width)}  ",
                subsequent_indent=" " * (width + 4), break_on_hyphens=False)]
    return "\n".join(lines)


def _summary_text(table, climate_class: str | None = None) -> str:
    cold = ("The B100 CFPP\nis not counted: the blend's own CFPP is checked against the "
            "climate class.\n" if climate_class is not None else
            "No --climate-class\nwas given: neither the B100 CFPP nor the blend's CFPP is "
            "judged, so EN 590\nsays nothing about winter here.\n")
    return (
        "Highest blend level (% v/v FAME) meeting each target; in brackets, the highest\n"
        "level with the stated error taken against the blend (the cautious answer).\n"
        "A 'none' or B0 names the limiting limit and whether the diesel alone misses it.\n"
        "EN 590 admits only FAME that meets EN 14214, ASTM D7467 only FAME that meets\n"
        "ASTM D6751: a FAME that fails its standard, or cannot be judged on it, gets no\n"
        "level there; words beside a level give what it still depends on. " + cold +
        "EN 590 allows at most B7; ASTM D7467 covers B6-B20 and sets no cold-flow limit\n"
        "(by agreement between buyer and seller), so its column says nothing about winter.\n\n"
        + summary_blocks(table)
    )


def _blend_footer(fuel) -> str:
    from estimator.cautions import CAUTION_SHORT

    return (f"diesel: {fuel.name} ({fuel.origin}). Cloud point: the higher of the "
            "saturated-ester liquidus (ideal solubility) and the linear rule by volume; CFPP "
            "linear by volume; both with wide stated errors.\n" + CAUTION_SHORT)


#: Terminal rows of the blend table: property, short label, decimals.
_BLEND_ROWS = (
    ("density_15C_kg_m3", "density 15 °C [kg/m3]", 1),
    ("kin_viscosity_40C_mm2_s", "viscosity 40 °C [mm2/s]", 2),
    ("cetane_number", "cetane number", 1),
    ("hhv_MJ_kg", "HHV [MJ/kg]", 2),
    ("lhv_MJ_kg", "LHV [MJ/kg]", 2),
    ("lhv_MJ_L", "LHV [MJ/L]", 2),
    ("cloud_point_C", "cloud point [°C]", 1),
    ("cfpp_C", "CFPP [°C]", 1),
)


def _print_blend(wide, fuel, fame) -> None:
    import pandas as pd

    from estimator.report.labels import column_label
    from estimator.report.tables import format_table

    for sample in fame.samples:
        part = wide[wide["sample"] == sample]
        heads = [f"B{lv:g}" for lv in part["level_pct_v"]]
        rows = []
        for prop, label, dec in _BLEND_ROWS:
            if part[prop].isna().all():
                continue  # the diesel description does not give it
            rows.append({"property": label, **{
                h: f"{v:.{dec}f}" if v == v else "-" for h, v in zip(heads, part[prop])}})
            rows.append({"property": "  ± error", **{
                h: f"{e:.{dec}f}" if e == e else "-" for h, e in zip(heads,
                                                                    part[f"{prop}_error"])}})
        click.echo(f"FAME {sample} in diesel {fuel.name} (B = % FAME by volume)")
        click.echo(format_table(pd.DataFrame(rows), transpose=False))
        i = fame.samples.index(sample)
        outside = [column_label(p, unit=False) for p in fame.in_domain
                   if not fame.in_domain[p][i]]
        if len(outside) == 1:
            click.echo(f"  note: the neat FAME's estimate of {outside[0]} lies outside its "
                       "method's fitted range; blend values built on it deserve extra doubt")
        elif outside:
            names = f"{', '.join(outside[:-1])} and {outside[-1]}"
            click.echo(f"  note: the neat FAME's estimates of {names} lie outside their "
                       "methods' fitted ranges; blend values built on them deserve extra doubt")
        click.echo("")


# ---------------------------------------------------------------- mix
@click.command(cls=ReportingCommand, context_settings=CONTEXT)
@click.argument("input_file", metavar="INPUT", type=click.Path(dir_okay=False))
@input_options
@click.option("--spec", "spec", default="en14214", show_default=True, metavar="NAME",
              help="Specification the mixed fuel must meet: en14214 or astm-d6751.")
@_cold_options
@click.option("--available", "available", metavar="COLUMN",
              help="Column with the tonnes of oil each lot offers (default: available_t when "
                   "present); used with --demand-t.")
@click.option("--demand-t", type=float, metavar="T",
              help="Tonnes of fuel wanted: bounds each lot by its availability and gives "
                   "the tonnes of oil to buy.")
@click.option("--pretreat", type=click.Choice(["none", "acid"]), default="none",
              show_default=True,
              help="none: free fatty acid lost to soap; acid: esterified to fuel first.")
@click.option("--method", "method_overrides", multiple=True, metavar="PROPERTY=NAME",
              help="Use another estimation method for a property (repeatable), e.g. "
                   "cetane_number=bamgboye2008.")
@click.option("--margin", "margin_bands", type=float, default=DEFAULT_MARGIN_BANDS,
              show_default=True, metavar="BANDS",
              help="Stated errors the mix must stay inside each limit (0: it may sit on its "
                   "limits, and its verdict is then 'too close to call').")
@click.option("--costs", "costs_file", type=click.Path(dir_okay=False), metavar="COSTS.json",
              help="Processing prices (JSON, as for 'compare'); default: stated assumptions.")
@model_option
@quiet_option
@click.option("--plot", metavar="PNG", help="Also draw the shares and the limits into this PNG.")
@click.option("--report", "report_path", metavar="HTML",
              help="Also write a self-contained HTML report.")
@click.option("-o", "--output", metavar="FILE",
              help="Write lot, share_mass_pct, ... (.csv, .xlsx or .json); the mixed fuel's "
                   "properties, verdicts and limits go to extra sheets or sibling files. The "
                   "shares are still printed.")
def mix(input_file, basis, sum_tolerance, spec, max_cfpp, max_cloud_point, climate_class,
        available, demand_t, pretreat, method_overrides, margin_bands, costs_file, models, quiet,
        plot, report_path, output) -> None:
    """Cheapest mix of the offered lots whose fuel still meets the specification.

    The fuel of a mix has the mass-weighted profile of the lots' fuels. Limits that
    are linear in composition (iodine value, linolenic ester, cetane, CFPP by LCSF,
    the Park stability bound, density and viscosity by their mixing rules, the
    ideal-solubility cloud point as one bound per saturated ester) go into a linear
    programme; nonlinear ones (e.g. a --method override such as
    cfpp_C=from_cloud_point) are checked on its answer and refined with SLSQP.
    Shares are of the fuel's mass. By default the mix keeps 1.3 stated errors
    (--margin 1.3) inside every limit, so that its own verdict is 'meets' (a chance
    of at least 0.9 of meeting each limit) rather than 'too close to call'; the
    limits table shows each limit's headroom in stated errors.
    When no mix meets every limit, an infeasibility report names the limits that
    conflict and how far the best mix misses each, and the exit status is 1.

    \b
    Examples:
      fame-estimator mix lots.csv --basis fatty-acid --spec en14214 --climate-class C
      fame-estimator mix lots.csv --basis fatty-acid --max-cfpp -5 --demand-t 1500 \\
          -o mix.xlsx --plot mix.png
      fame-estimator mix lots.csv --basis fatty-acid --max-cloud-point 0 \\
          --method cetane_number=bamgboye2008 --margin 0
      fame-estimator mix lots.csv --basis fatty-acid --model lab_model.json --margin 2
    """
    from estimator import mixing
    from estimator.specs import normalise_climate_class

    methods = _parse_methods(method_overrides)
    climate_class = normalise_climate_class(climate_class)
    constraints = mixing.mix_constraints(spec, climate_class=climate_class,
                                         max_cfpp_C=max_cfpp, max_cloud_point_C=max_cloud_point)
    if demand_t is not None and not demand_t > 0:
        raise UsageError(f"--demand-t must be a positive number of tonnes, got {demand_t:g}")
    _check_side_files(plot, report_path)
    costs = None
    if costs_file:
        from estimator.sourcing import read_costs

        costs = read_costs(costs_file)
    profile = load_inputs((input_file,), (), basis, sum_tolerance)
    result = mixing.least_cost_mix(
        profile, constraints, demand_t=demand_t, available_column=available, pretreat=pretreat,
        methods=methods, spec=spec, climate_class=climate_class, margin_bands=margin_bands,
        models=models, costs=costs,
    )
    footer = _mix_footer(result)
    _check_outputs(output, list(_mix_extras(result)) if result.feasible else [], plot,
                   report_path)
    if plot or report_path:
        from estimator.report.blend_plots import mix_shares

        fig = mix_shares(result)
        if plot:
            _save_png(fig, plot)
        if report_path:
            from estimator.report.blend_sections import write_mix_report

            click.echo(f"wrote {write_mix_report(report_path, result, figure=fig)}", err=True)
    if not result.feasible:
        if not quiet:
            _print_infeasible(result)
        if output:
            _write(result.diagnosis if result.diagnosis is not None else result.constraints,
                   output, footer="" if quiet else footer, extra={})
        elif not quiet:
            click.echo("\n" + footer)
        click.echo(f"fame-estimator: {result.message}", err=True)
        click.get_current_context().exit(INFEASIBLE_EXIT_CODE)
    if output:
        if not quiet:
            _print_mix(result, short=True)
        _write(_lot_columns(result), output, footer="" if quiet else footer,
               extra=_mix_extras(result))
        return
    if not quiet:
        _print_mix(result)
        click.echo("\n" + footer)


def _parse_methods(items) -> dict[str, str]:
    out = {}
    for item in items:
        prop, sep, name = item.partition("=")
        if not sep or not prop.strip() or not name.strip():
            raise UsageError(f"--method {item!r}: write PROPERTY=NAME, e.g. "
                             "cetane_number=bamgboye2008")
        out[prop.strip()] = name.strip()
    if out:
        from estimator.properties.methods import get_method

        for prop, name in out.items():
            get_method(prop, name)  # unknown names raise with the valid ones
    return out


def _lot_columns(result):
    cols = ["lot", "share_mass_pct", "oil_share_mass_pct", "fuel_yield_t_per_t_oil",
            "price_per_t", "cost_per_t_fuel", "fuel_t", "oil_t", "available_t",
            "at_availability_limit", "valuation_note"]
    return result.lots[[c for c in cols if c in result.lots.columns]]


def _properties_table(result):
    est = result.estimates[["property", "method", "value", "unit", "error", "in_domain",
                            "note"]]
    if result.verdicts is None:
        return est
    v = result.verdicts[["property", "method", "spec", "bound", "limit", "verdict"]]
    merged = est.merge(v, on=["property", "method"], how="left")
    merged["verdict"] = merged["verdict"].fillna("no limit")
    return merged


def _mix_extras(result) -> dict:
    import pandas as pd

    profile = pd.DataFrame({"species": result.composition.index,
                            "wt_pct": result.composition.to_numpy()})
    profile = profile[profile["wt_pct"] > 0]
    return {"properties": _properties_table(result), "limits": result.constraints,
            "profile": profile}


def _cost_line(result) -> str:
    return (f"cost of the mixed fuel (oil, methanol, catalyst, pretreatment, less the glycerol "
            f"credit): {result.cost_per_t_fuel:,.1f} per t of fuel")


def _mix_footer(result) -> str:
    from estimator.cautions import CAUTION_SHORT

    lines = list(result.notes)
    if result.model_properties:
        lines.append(model_line(result.model_properties))
    lines.append("Shares are of the fuel's mass; theoretical yields (see 'compare' for the "
                 "valuation assumptions).")
    lines.append(CAUTION_SHORT)
    return "\n".join(lines)


def _print_mix(result, *, short: bool = False) -> None:
    import pandas as pd

    from estimator.report.tables import format_table

    lots = result.lots
    used = lots[lots["share_mass_pct"] > 0]
    cols = [c for c in ("lot", "share_mass_pct", "oil_share_mass_pct", "cost_per_t_fuel",
                        "fuel_t", "oil_t", "available_t") if c in used.columns]
    click.echo("Least-cost mix (shares of the fuel's mass; lots not listed are not used)")
    click.echo(format_table(used[cols], transpose=False))
    click.echo("\n" + _cost_line(result) + "\n")
    c = result.constraints
    shown = pd.DataFrame({
        "limit": c["constraint"],
        "mix value": [f"{v:.4g}" for v in c["value"]],
        "± error": [f"{e:.2g}" if e > 0 else "exact" for e in c["error"]],
        "headroom": [f"{v:.3g}" for v in c["headroom"]],
        "in errors": [_bands_text(b, e) for b, e in zip(c["headroom_bands"], c["error"])],
        "binding": c["binding"].map({True: "binding", False: ""}),
    })
    if "in_domain" in c.columns:
        shown["method range"] = c["in_domain"].map({True: "inside", False: "outside"})
    if not short:
        from estimator.report.labels import linear_form_words

        shown["how"] = c["linear_form"].map(linear_form_words)
    click.echo(f"Limits on the mixed fuel: headroom to each limit (>= 0 meets), also in stated "
               f"errors; required: {result.margin_bands:g} (--margin)")
    click.echo(format_table(shown, transpose=False))
    if result.verdicts is not None:
        from estimator.report.labels import spec_name
        from estimator.report.summary import mix_undecided_text
        from estimator.specs import summarise

        summary = summarise(result.verdicts)
        cells = {s: summary.loc["mix", s] for s in summary.columns}
        click.echo("\nverdict with the stated errors: " + "; ".join(
            f"{spec_name(s)} "
            + ("meets on the properties estimated" if cell == "meets" else cell)
            for s, cell in cells.items()))
        undecided = mix_undecided_text(result)
        if undecided:
            click.echo(undecided)


def _bands_text(bands: float, error: float) -> str:
    import math

    if not error > 0:
        return "exact"
    if not math.isfinite(bands):
        return "-"
    return f"{0.0 if abs(bands) < 0.005 else bands:.2f}"


def _print_infeasible(result) -> None:
    import pandas as pd

    from estimator.report.tables import format_table

    d = result.diagnosis
    if result.margin_bands > 0:
        click.echo(f"No mix of the lots stays {result.margin_bands:g} stated error(s) inside "
                   "every limit (--margin). Least-violating mix, against the limits moved "
                   "inside:")
    else:
        click.echo("No mix of the lots meets every limit. Least-violating mix:")
    if d is not None:
        shown = pd.DataFrame({
            "limit": d["constraint"],
            "with margin": [f"{v:.4g}" for v in d["limit"]],
            "best mix": [f"{v:.4g}" for v in d["best_value"]],
            "missed by": [("" if m == 0 else f"{m:.3g} {u}") for m, u in zip(d["miss"],
                                                                            d["unit"])],
            "any mix alone": d["reachable_alone"].map({True: "yes", False: "no"}),
            "conflicts with": d["conflicts_with"],
        })
        click.echo(format_table(shown, transpose=False))
    used = result.lots[result.lots["share_mass_pct"] > 0]
    click.echo("\nshares of that mix: " + ", ".join(
        f"{lot} {s:.1f} %" for lot, s in zip(used["lot"], used["share_mass_pct"])))
