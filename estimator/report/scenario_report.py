"""Write every file of a planning scenario and one report that holds all of it.

The comparison's files (``comparison.csv``, ``comparison.xlsx``, ``plots/``) as
``compare`` writes them; ``blend.xlsx`` and ``plots/blend_curves.png``;
``mix.xlsx`` and ``plots/mix_shares.png``; the lab model ``lab_model.json`` with
its fit report folder; ``estimates_with_lab_model.csv``; and ``report.html`` with
the comparison, blend, mix and refit sections (the fit report is linked).
"""

from __future__ import annotations

import html
from pathlib import Path

import pandas as pd

from estimator.report.html import Section, bullet_list, paragraph, table_html

__all__ = ["lab_section", "scenario_outputs", "write_scenario"]


def write_scenario(result, outdir: str | Path, *, svg: bool = False) -> dict:
    """Write all outputs of a :class:`~estimator.scenario.ScenarioResult` into ``outdir``.

    The report opens with the one-page summary of the decisions; the details follow
    in the same order (lots, mix, blend, lab model). Each figure is drawn once and
    written as PNG (``svg=True`` adds SVG copies).
    """
    from dataclasses import replace

    from estimator.cautions import CAUTION
    from estimator.files import check_outputs, write_table
    from estimator.report.html import write_comparison
    from estimator.report.plots import save_figure
    from estimator.report.summary import decision_summary

    outdir = Path(outdir)
    files, folders = scenario_outputs(result, outdir)
    check_outputs(files, folders=folders)
    outdir.mkdir(parents=True, exist_ok=True)
    written: dict = {}
    extra: list[Section] = []
    cautions = pd.DataFrame({"caution": [CAUTION]})
    if result.mix is not None:
        from estimator.report.blend_plots import mix_shares
        from estimator.report.blend_sections import mix_sections

        m = result.mix
        fig = mix_shares(m)
        written["mix_plot"] = save_figure(fig, outdir / "plots" / "mix_shares", svg=svg)
        main = m.lots if m.feasible else (m.diagnosis if m.diagnosis is not None
                                          else m.constraints)
        written["mix"] = write_table(main, outdir / "mix.xlsx", sheet_name="mix",
                                     sheets={"limits": m.constraints, "cautions": cautions})
        extra += [replace(s, group="Least-cost mix") for s in mix_sections(m, figure=fig)]
    if result.blend is not None:
        from estimator.report.blend_plots import blend_curves
        from estimator.report.blend_sections import blend_sections

        b = result.blend
        fig = blend_curves(b["curve"], targets=b["targets"], diesel_name=b["diesel"].name,
                           highest=b["highest"])
        written["blend_plot"] = save_figure(fig, outdir / "plots" / "blend_curves", svg=svg)
        sheets = {"cautions": cautions}
        if b["highest"] is not None:
            sheets = {"highest_levels": b["highest"], **sheets}
        written["blend"] = write_table(b["wide"], outdir / "blend.xlsx", sheets=sheets,
                                       sheet_name="blend")
        extra += [replace(s, group="Blending with diesel") for s in blend_sections(
            b["wide"], b["highest"], b["diesel"], figure=fig, levels=b["grid"])]
    lab_long = None
    if result.fits:
        section, lab_long = _write_lab(result, outdir, written, svg=svg)
        extra.append(section)
    summary = decision_summary(result.comparison, mix=result.mix, blend=result.blend,
                               fits=result.fits, lab_long=lab_long)
    written.update(write_comparison(result.comparison, outdir, extra_sections=extra,
                                    title=result.scenario.title, summary=summary, svg=svg))
    return written


def scenario_outputs(result, outdir: str | Path) -> tuple[list[Path], list[Path]]:
    """The files and the folders :func:`write_scenario` writes, before it writes any."""
    from estimator.report.fit_sections import report_folder
    from estimator.report.html import COMPARISON_FILES

    outdir = Path(outdir)
    files = [outdir / name for name in COMPARISON_FILES]
    folders = [outdir / "plots"]
    if result.blend is not None:
        files.append(outdir / "blend.xlsx")
    if result.mix is not None:
        files.append(outdir / "mix.xlsx")
    if result.fits:
        files += [outdir / "lab_model.json", outdir / "estimates_with_lab_model.csv"]
        folders.append(report_folder(outdir / "lab_model.json"))
    return files, folders


def _write_lab(result, outdir: Path, written: dict, *, svg: bool = False):
    from estimator.files import write_table
    from estimator.refit import file_provenance, save_models
    from estimator.report.fit_sections import write_fit_report
    from estimator.workflows import predict

    lab = result.lab_profile
    lab_path = result.scenario.resolve(result.scenario.lab["file"])
    model_path = save_models(result.models, outdir / "lab_model.json",
                             file_provenance(lab_path, len(lab)))
    written["model"] = model_path
    scores = pd.concat([f.score_table() for f in result.fits], ignore_index=True)
    groups = None
    if "feedstock" in lab.metadata.columns:
        groups = dict(zip(lab.samples, lab.metadata["feedstock"].astype(str), strict=True))
    folder = write_fit_report(result.fits, model_path, table=scores, groups=groups,
                              source=lab_path.name, svg=svg)
    written["fit_report"] = folder / "report.html"
    with_model = predict(result.profile, models=[str(model_path)])
    written["estimates_with_model"] = write_table(
        with_model.wide, outdir / "estimates_with_lab_model.csv"
    )
    long = with_model.long
    return lab_section(result, long, f"{folder.name}/report.html"), long


def lab_section(result, long: pd.DataFrame, fit_report_href: str) -> Section:
    """The refit summary: one statement per property, the lots by the lab's models, a link."""
    from estimator.report.labels import candidate_name, column_label, for_readers, plus_minus

    fitted = long[long["method"].astype(str).str.startswith("fit:")].copy()
    lots = pd.DataFrame({
        "lot": fitted["sample"].astype(str),
        "property": fitted["property"].astype(str).map(lambda p: column_label(p, unit=False)),
        "lab's model": fitted["method"].astype(str).str.removeprefix("fit:").map(
            candidate_name),
        "estimate ± 95 % interval": [plus_minus(v, e) for v, e in
                                     zip(fitted["value"], fitted["error"])],
        "inside the lab's training range": fitted["in_domain"].map({True: "yes", False: "NO"}),
    })
    lab = result.scenario.lab
    names = ", ".join(column_label(p, unit=False) for p in lab["properties"])
    body = paragraph(
        f"The lab file {lab['file']} was used to refit {names}, comparing every published "
        "method (as is and recalibrated), ridge and partial-least-squares regressions and "
        "a Gaussian process on samples held out of each fit. What the comparison found:"
    )
    body += bullet_list(f"{column_label(f.property, unit=False)}: {for_readers(f.statement)}"
                        for f in result.fits)
    body += (
        f'<p>Scores, parity and residual plots: <a href="{html.escape(fit_report_href)}">the '
        "fit report</a>. The offered lots estimated with the lab&#x27;s models (a lot outside "
        "the range of the lab&#x27;s samples is an extrapolation; trust it less). "
        + ("These models replace the published estimates in the verdicts, the ranking, the "
           "blend and the mix above:</p>" if getattr(result, "model_properties", None) else
           "The specification verdicts above use the published methods, not these "
           "models:</p>")
    )
    body += table_html(lots)
    return Section("Refit on the lab's own samples", body, id="refit",
                   group="The lab's own model")
