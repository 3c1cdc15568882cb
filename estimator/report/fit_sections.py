"""HTML sections of the fit report, and the report folder written beside a model file.

Built with the report builder of :mod:`estimator.report.html` (sections, tables and
embedded figures); the page carries the caution at the top and bottom.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from pathlib import Path

import pandas as pd

from estimator.report.fit_plots import property_label
from estimator.report.html import Section, bullet_list, figure_html, paragraph, table_html
from estimator.report.labels import column_label, for_readers, pretty_unit

__all__ = [
    "REPORT_SUFFIX",
    "fit_sections",
    "property_section",
    "report_folder",
    "summary_section",
    "usage_section",
    "write_fit_report",
]

#: The report folder of ``model.json`` is ``model_fit_report/`` beside it.
REPORT_SUFFIX = "_fit_report"



def report_folder(model_path: str | Path) -> Path:
    """The report folder of a model file: ``<stem>_fit_report`` beside it."""
    path = Path(model_path)
    return path.parent / f"{path.stem}{REPORT_SUFFIX}"


def summary_section(fits: Sequence, source: str = "") -> Section:
    """One line per property: the choice, its band, and whether it beats the references."""
    from estimator.refit.crossval import BEAT_MARGIN

    items = [f"{column_label(f.property, unit=False)}: {for_readers(f.statement)}"
             for f in fits]
    intro = paragraph(
        f"Lab samples from {source or 'the lab file'}. Every score below is on held-out "
        "samples: each candidate was fitted without the samples it is scored on "
        "(leave-one-out below 30 samples, else 5-fold cross-validation repeated 10 times "
        "with a fixed seed). Residual = predicted - measured; bias is its mean."
    )
    intro += paragraph(
        "Two references stand beside the fitted models: the published methods as is, and "
        "a mean-only baseline that predicts the mean of the training samples whatever the "
        "composition (a model no better than it has learnt nothing from the composition). "
        f"A model is said to beat a reference only when its CV RMSE is at least "
        f"{100 * BEAT_MARGIN:.0f} % lower; otherwise the statement names the reference it "
        "does not beat. A fitted model replaces the best published method only if it beats "
        "it; otherwise the published method is kept, with the lab's band. The band of a "
        "chosen model, the ± that predict --model prints, is "
        "one standard uncertainty of a new measurement, the same meaning as every other ± "
        "of fame-estimator: its CV RMSE, or for a Gaussian process its own standard "
        "deviation times a factor that makes it match the held-out residuals."
    )
    notes = sorted({note for f in fits for note in f.notes})
    body = intro + bullet_list(items)
    if notes:
        body += paragraph("Note: " + " ".join(notes))
    return Section("Summary", body)


def _score_frame(fit) -> pd.DataFrame:
    from estimator.refit.wording import KIND_WORDS, candidate_words

    table = fit.score_table()
    unit = "" if not pretty_unit(fit.unit) else f" [{pretty_unit(fit.unit)}]"
    frame = pd.DataFrame({
        "candidate": [candidate_words(c, fit.property) for c in table["candidate"]],
        "what it is": table["kind"].map(KIND_WORDS),
        "complexity rank": table["complexity"],
        f"CV RMSE{unit}": table["cv_rmse"],
        f"CV MAE{unit}": table["cv_mae"],
        f"CV bias{unit}": table["cv_bias"],
        "CV R²": table["cv_r2"],
        "chosen": table["chosen"].map({True: "chosen", False: ""}),
        "note": table["note"].map(for_readers),
    })
    return frame if (frame["note"] != "").any() else frame.drop(columns="note")


def property_section(fit, figures: Mapping | None = None) -> Section:
    """Scores of every candidate, the parity and residual plots, and the training domain."""
    from estimator.report.fit_plots import fit_figures

    figures = fit_figures(fit) if figures is None else figures
    dom = fit.model.domain
    body = paragraph(for_readers(fit.statement))
    body += paragraph(
        f"{len(fit.measured)} measured samples, {fit.scheme.name} (seed {fit.scheme.seed}). "
        "Candidates are listed best CV RMSE first; candidates within the tie tolerance of "
        "the best go to the lowest complexity rank (published 0, recalibrated 1, PLS 2-3, "
        "ridge 4-5, Gaussian process 6). The mean-only baseline (rank -1) is a yardstick, "
        "never chosen."
    )
    body += table_html(_score_frame(fit), caption=f"{column_label(fit.property, unit=False)}: "
                       "scores on held-out samples")
    if fit.skipped:
        body += paragraph("Not evaluated: " + "; ".join(for_readers(x) for x in fit.skipped))
    for note in fit.notes:
        body += paragraph(f"Note: {for_readers(note)}")
    label = property_label(fit.property)
    body += figure_html(
        figures["parity"], alt=f"parity plot of {label}",
        caption="Measured against held-out predicted (mean over the repeats): the best "
                "published method as is beside the chosen model. Dashed: 1:1; shaded: ± one "
                "standard uncertainty (that model's CV RMSE); dotted: the mean-only "
                "baseline.",
    )
    body += figure_html(
        figures["residuals"], alt=f"residuals of {label} against descriptors",
        caption="Held-out residuals of the chosen model against the main descriptors; a "
                "trend line with a clear slope means the model misses that effect.",
    )
    body += paragraph(
        "Training domain of the model file: a new sample is flagged out of domain when "
        f"a main ester lies outside the lab's range (widened by 5 %) or it lies more than "
        f"{dom.threshold:.2f} standardized units from its nearest lab sample (the 95th "
        "percentile of the lab samples' leave-one-out nearest distances)."
    )
    return Section(label[0].upper() + label[1:], body, id=f"fit-{fit.property}",
                   group="Each property")


def usage_section(model_file: str) -> Section:
    """How to use the model file."""
    return Section("Using the model file", paragraph(
        f"fame-estimator predict NEW_SAMPLES.csv --model {model_file} shows each fitted "
        "property by its fitted model (method fit:<candidate>) with one standard "
        "uncertainty from cross-validation as its error (±) and an in-domain flag from the "
        "lab's training domain. The model file is plain JSON with a checksum; it holds no "
        "code, and files beyond its stated size and range bounds are refused."
    ), group="Using the model file")


def fit_sections(fits: Sequence, figures: Mapping | None = None, *, source: str = "",
                 model_file: str = "model.json") -> list[Section]:
    """All sections of the fit report, in reading order.

    ``figures`` maps each property to ``{"parity": Figure, "residuals": Figure}``
    (drawn when missing).
    """
    figures = figures or {}
    sections = [summary_section(fits, source)]
    sections += [property_section(f, figures.get(f.property)) for f in fits]
    sections.append(usage_section(model_file))
    return sections


def write_fit_report(fits: Sequence, model_path: str | Path, *, table: pd.DataFrame,
                     groups: Mapping[str, str] | None = None, source: str = "",
                     svg: bool = False) -> Path:
    """Write ``<stem>_fit_report/`` beside the model file: scores, plots and report.html.

    ``scores.csv`` (every candidate of every property, with the caution), each
    ``<property>_parity`` and ``<property>_residuals`` as PNG (drawn once, the same
    image the report embeds; SVG too with ``svg=True``), and the
    self-contained ``report.html``. ``groups`` (sample id -> e.g. its feedstock) colours
    the plots. Returns the folder.
    """
    from estimator.cautions import CAUTION_SHORT
    from estimator.files import write_table
    from estimator.report.fit_plots import fit_figures
    from estimator.report.html import build_report
    from estimator.report.plots import prerender, save_figure

    model_path = Path(model_path)
    folder = report_folder(model_path)
    folder.mkdir(parents=True, exist_ok=True)
    write_table(table.assign(caution=CAUTION_SHORT), folder / "scores.csv")
    figures = {}
    for f in fits:
        fit_groups = None if groups is None else [str(groups.get(s, "")) for s in f.samples]
        figures[f.property] = fit_figures(f, groups=fit_groups)
    prerender([fig for figs in figures.values() for fig in figs.values()])
    for prop, figs in figures.items():
        for kind, fig in figs.items():
            save_figure(fig, folder / f"{prop}_{kind}", svg=svg)
    build_report(
        "Refit on lab samples", fit_sections(fits, figures, source=source,
                                             model_file=model_path.name),
        folder / "report.html",
        subtitle=f"{source or 'lab file'}: "
                 f"{', '.join(column_label(f.property, unit=False) for f in fits)}",
    )
    return folder

