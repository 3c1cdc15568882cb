"""Apply fitted model files to estimates: what ``predict --model`` does.

A fitted property appears in the long table as its own method (``fit:<candidate>``)
with its band (one standard uncertainty, cross-validated) as ``error`` and the lab
training domain as
``in_domain``; :func:`wide_with_models` makes it replace the default method in the
wide table.
"""

from __future__ import annotations

from collections.abc import Sequence
from pathlib import Path

import pandas as pd

from estimator.errors import ModelFileError, UsageError

__all__ = ["FIT_METHOD_PREFIX", "apply_models", "wide_with_models"]

FIT_METHOD_PREFIX = "fit:"


def apply_models(profile, model_paths: Sequence[str | Path],
                 long_estimates: pd.DataFrame) -> pd.DataFrame:
    """Add the predictions of fitted model files to a long estimate table.

    Parameters
    ----------
    profile : Profile
        The samples the long table was estimated for.
    model_paths : sequence of path
        Model files written by ``fame-estimator fit -o`` (one property may appear in only
        one of them).
    long_estimates : DataFrame
        The long table of :func:`estimator.properties.predict.estimate` for ``profile``.

    Returns
    -------
    DataFrame
        The same rows plus one row per sample and fitted property, with ``method``
        ``fit:<candidate>`` (e.g. ``fit:ridge:composition``), ``error`` one standard
        uncertainty of a new measurement (the model's cross-validated RMSE, or a Gaussian
        process's own sd calibrated by cross-validation; the same meaning as every other
        error of the tool), ``in_domain`` from the lab training domain, and a
        ``note`` naming the model file, the training file and the CV RMSE. The input table
        is not modified. :func:`wide_with_models` makes the fitted method the one the
        wide table shows.
    """
    from estimator.properties.predict import DOMAIN_MARK, LONG_COLUMNS
    from estimator.refit.model_file import read_model_file

    missing = [c for c in LONG_COLUMNS if c not in long_estimates.columns]
    if missing:
        raise UsageError(f"not a long estimate table; missing columns: {', '.join(missing)}")
    samples = [str(s) for s in profile.samples]
    have = set(long_estimates["sample"].astype(str))
    if have != set(samples):
        raise UsageError("the long estimate table is not for the samples of this profile")
    owner: dict[str, str] = {}
    blocks = []
    w = profile.wt_pct
    for raw in model_paths:
        path = Path(raw)
        contents = read_model_file(path)
        doc_training = contents.training["file"]
        for model in contents.models:
            if model.property in owner:
                raise ModelFileError(
                    f"{path.name}: {model.property} also has a model in {owner[model.property]}; "
                    "give one --model file per property"
                )
            owner[model.property] = path.name
            pred = model.predict(w)
            reasons = model.domain.reasons(w)
            rmse = _cv_rmse(model)
            base = (
                f"fitted {model.candidate} from model file {path.name} (training file "
                f"{doc_training}, {model.n_samples} samples, CV RMSE {rmse:.3g}); error: one "
                f"standard uncertainty ({model.band_source})"
            )
            notes = [base if not r else f"{base}; {DOMAIN_MARK}{r}" for r in reasons]
            blocks.append(pd.DataFrame({
                "sample": samples,
                "property": model.property,
                "method": f"{FIT_METHOD_PREFIX}{model.candidate}",
                "value": pred.value,
                "unit": model.unit,
                "error": pred.error,
                "in_domain": pred.in_domain,
                "note": notes,
            }))
    if not blocks:
        return long_estimates.copy()
    plain = long_estimates.copy()
    for col in ("property", "method", "unit", "note"):
        plain[col] = plain[col].astype(object)
    out = pd.concat([plain, *blocks], ignore_index=True)[list(LONG_COLUMNS)]
    for col in ("property", "method", "unit", "note"):
        out[col] = pd.Categorical(out[col], categories=list(dict.fromkeys(out[col])))
    out["in_domain"] = out["in_domain"].astype(bool)
    return out


def wide_with_models(long_estimates: pd.DataFrame) -> pd.DataFrame:
    """The wide table with each fitted property shown by its ``fit:`` method.

    For a property with a fitted method, the other methods' rows are left out before
    :func:`estimator.properties.predict.wide`, so the fitted model replaces the default.
    """
    from estimator.properties.predict import wide

    method = long_estimates["method"].astype(str)
    prop = long_estimates["property"].astype(str)
    fitted = set(prop[method.str.startswith(FIT_METHOD_PREFIX)])
    keep = ~prop.isin(fitted) | method.str.startswith(FIT_METHOD_PREFIX)
    return wide(long_estimates[keep.to_numpy()].reset_index(drop=True))


def _cv_rmse(model) -> float:
    for row in model.cv.get("scores", []):
        if row.get("candidate") == model.candidate:
            return float(row["rmse"])
    return float("nan")
