"""HTML sections of the fit report, and the report folder written beside a model file.

Built with the report builder of :mod:`estimator.report.html` (sections, tables and
embedded figures); the page carries the caution at the top and bottom.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from pathlib import Path

import pandas as pd

from estimator.report.html import Section, bullet_list, figure_html, paragraph, table_html
from estimator.report.labels import candidate_name, column_label, for_readers, pretty_unit

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

_KIND_TEXT = {
    "published": "published method as is",
    "recalibrated": "published method recalibrated, a + b x estimate",
    "pls": "partial least squares, 2 components",
    "ridge": "ridge regression, alpha by inner leave-one-out",
    "gp": "Gaussian process, constant x RBF + noise",
}


def report_folder(model_path: str | Path) -> Path:
    """The report folder of a model file: ``<stem>_fit_report`` beside it."""
    path = Path(model_path)
    return path.parent / f"{path.stem}{REPORT_SUFFIX}"


def summary_section(fits: Sequence, source: str = "") -> Section:
    """One line per property: the choice and whether it beats the published methods."""
    items = [f"{column_label(f.property, unit=False)}: {for_readers(f.statement)}"
             for f in fits]
    intro = paragraph(
        f"Lab samples from {source or 'the lab file'}. Every score below is on held-out "
        "samples: each candidate was fitted without the samples it is scored on "
        "(leave-one-out below 30 samples, else 5-fold cross-validation repeated 10 times "
        "with a fixed seed). Residual = predicted - measured; bias is its mean."
    )
    return Section("Summary", intro + bullet_list(items))


def _score_frame(fit) -> pd.DataFrame:
    table = fit.score_table()
    unit = "" if not pretty_unit(fit.unit) else f" [{pretty_unit(fit.unit)}]"
    frame = pd.DataFrame({
        "candidate": table["candidate"].map(candidate_name),
        "what it is": table["kind"].map(_KIND_TEXT),
        "complexity rank": table["complexity"],
        f"CV RMSE{unit}": table["cv_rmse"],
        f"CV MAE{unit}": table["cv_mae"],
        f"CV bias{unit}": table["cv_bias"],
        "CV R²": table["cv_r2"],
        "chosen": table["chosen"],
        "note": table["note"].map(for_readers),
    })
    return frame if (frame["note"] != "").any() else frame.drop(columns="note")


def property_section(fit, figures: Mapping | None = None) -> Section:
    """Scores of every candidate, the parity and residual plots, and the training domain."""
    from estimator.report.fit_plots import fit_figures, property_label

    figures = fit_figures(fit) if figures is None else figures
    dom = fit.model.domain
    body = paragraph(for_readers(fit.statement))
    body += paragraph(
        f"{len(fit.measured)} measured samples, {fit.scheme.name} (seed {fit.scheme.seed}). "
        "Candidates are listed best CV RMSE first; candidates within the tie tolerance of "
        "the best go to the lowest complexity rank (published 0, recalibrated 1, PLS 2-3, "
        "ridge 4-5, Gaussian process 6)."
    )
    body += table_html(_score_frame(fit), caption=f"{column_label(fit.property, unit=False)}: "
                       "scores on held-out samples")
    if fit.skipped:
        body += paragraph("Not evaluated: " + "; ".join(for_readers(x) for x in fit.skipped))
    label = property_label(fit.property)
    body += figure_html(
        figures["parity"], alt=f"parity plot of {label}",
        caption="Measured against held-out predicted (mean over the repeats): the best "
                "published method as is beside the chosen model. Dashed: 1:1; band: "
                "± 1.96 x that model's CV RMSE.",
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
        f"fame-estimator predict NEW_SAMPLES.csv --model {model_file} estimates each "
        "fitted property with the lab's model, a 95 % prediction interval as its error and "
        "a flag for samples outside the lab's training range. The model file is plain JSON "
        "with a checksum; it holds no code."
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
    from estimator.report.fit_plots import fit_figures
    from estimator.report.html import build_report
    from estimator.report.plots import save_figure
    from estimator.report.tables import write_table

    model_path = Path(model_path)
    folder = report_folder(model_path)
    folder.mkdir(parents=True, exist_ok=True)
    write_table(table.assign(caution=CAUTION_SHORT), folder / "scores.csv")
    figures = {}
    for f in fits:
        fit_groups = None if groups is None else [str(groups.get(s, "")) for s in f.samples]
        figs = fit_figures(f, groups=fit_groups)
        for kind, fig in figs.items():
            save_figure(fig, folder / f"{f.property}_{kind}", svg=svg)
        figures[f.property] = figs
    build_report(
        "Refit on lab samples", fit_sections(fits, figures, source=source,
                                             model_file=model_path.name),
        folder / "report.html",
        subtitle=f"{source or 'lab file'}: "
                 f"{', '.join(column_label(f.property, unit=False) for f in fits)}",
    )
    return folder

